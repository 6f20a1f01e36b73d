"""Time-harmonic magnetoquasistatic field solution of the winding window.

Imports from ``geometry`` only; nothing here imports ``postprocess``.
"""
