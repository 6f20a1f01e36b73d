"""The ``[dielectric]`` table: relative permittivities of the fill, the
conductors' insulation (per winding where given) and the layer tape, and the
core as an electrode."""

from __future__ import annotations

from .errors import CaseError
from .model import CORE_ELECTRODES, DIELECTRIC_FILLS, Dielectric
from .table import Table

_RANGE = (1.0, 1000.0)   #: relative permittivity: vacuum to ceramic fillers


def _permittivity(table: Table, name: str, default: float) -> float:
    return table.within(name, "number", default, *_RANGE, "give a relative permittivity, such as 3.5 for enamel")


def read_dielectric(top: Table, names: list[str]) -> Dielectric | None:
    """[dielectric] (None when absent); see :class:`~racfield.geometry.case.model.Dielectric`."""
    if not top.has("dielectric"):
        top.raw("dielectric")
        return None
    table = Table(top.raw("dielectric"), "dielectric")
    fill = table.text("fill", "air", tuple(DIELECTRIC_FILLS))
    if table.has("fill") and table.has("permittivity"):
        raise CaseError(table.key("permittivity"), "given together with fill",
                        'give either fill = "potting" or permittivity = 4.2, not both')
    fill_permittivity = _permittivity(table, "permittivity", DIELECTRIC_FILLS[fill])
    insulation = _permittivity(table, "insulation_permittivity", 3.5)
    layer = _permittivity(table, "layer_insulation_permittivity", 3.3)
    core = table.text("core", "grounded", CORE_ELECTRODES)
    overrides = []
    if table.has("windings"):
        windings = Table(table.raw("windings"), table.key("windings"))
        for name in list(windings.data):
            if name not in names:
                raise CaseError(windings.key(name), "no such winding",
                                "name a winding of the case: " + ", ".join(f'"{n}"' for n in names))
            entry = Table(windings.raw(name), windings.key(name))
            overrides.append((name, _permittivity(entry, "insulation_permittivity", insulation)))
            entry.close()
        windings.close()
    else:
        table.raw("windings")
    table.close()
    return Dielectric(fill, fill_permittivity, insulation, layer, tuple(overrides), core)
