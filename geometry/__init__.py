"""The window cross-section: the case (:mod:`.case`), the placement of every
turn (:mod:`.layout`) and the gmsh mesh (:mod:`.mesher`).

The lowest layer of racfield: nothing here imports ``fem`` or ``postprocess``.
"""
