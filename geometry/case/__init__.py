"""The case: its model (plain dataclasses), the reader of the TOML case file
with its checks, units, current waveforms and parameter-study expansion.

Nothing here imports the layout, the mesher, ``fem`` or ``postprocess``.
"""

from .errors import CaseError
from .loader import parse_case, parse_toml, point_case, read_document
from .model import (BASE_VARIANT, HEXAGONAL_PACKING, MAX_COUNT, OPEN_BOUNDARIES, SHAPES, Case, CentreLeg, ConductorSpec,
                    Core, Gap, Layer, MeshOptions, Model, Parallel, PlacedConductor, Variant, Window, Winding,
                    conductor_specs, parallel_of, strands_per_turn, variant_cases, winding_conductors,
                    winding_turns)
from .study import StudyPoint

__all__ = ["BASE_VARIANT", "HEXAGONAL_PACKING", "MAX_COUNT", "OPEN_BOUNDARIES", "SHAPES", "Case", "CaseError",
           "CentreLeg", "ConductorSpec", "Core", "Gap", "Layer", "MeshOptions", "Model", "Parallel", "PlacedConductor",
           "StudyPoint", "Variant", "Window", "Winding", "conductor_specs", "parallel_of", "parse_case",
           "parse_toml", "point_case", "read_document", "strands_per_turn", "variant_cases", "winding_conductors",
           "winding_turns"]
