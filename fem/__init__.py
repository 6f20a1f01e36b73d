"""The time-harmonic magnetoquasistatic field solution of the winding window:
per-conductor currents, losses and impedances over frequency.

Imports from ``geometry`` only; nothing here imports ``postprocess``.
"""
