"""From per-conductor field results to what a designer reads: Rac, Rac/Rdc,
losses, tables, plots and field files.  The command line (``cli``) sits on
top of everything; nothing imports it.
"""
