"""The window cross-section: the case (:mod:`.case`), the placement of every
turn (:mod:`.layout`), the DC resistance of conductors and windings
(:mod:`.resistance`) and the gmsh mesh (:mod:`.mesher`).

The lowest layer of racfield: nothing here imports ``fem`` or ``postprocess``.
"""
