"""From per-conductor field results to what a designer reads: winding Rdc,
Rac, Rac/Rdc and losses, impedance and leakage, hand estimates, harmonics,
result files (``writers``) and the HTML report.

Imports ``geometry`` and ``fem``; nothing here imports the application layer
(``app/``, installed as the top-level ``racfield`` package).
"""
