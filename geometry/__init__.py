"""Case reading, conductor layout and meshing of the winding window.

The lowest layer of racfield: nothing here imports ``fem`` or ``postprocess``.
"""
