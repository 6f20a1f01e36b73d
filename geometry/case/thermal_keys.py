"""The ``[thermal]`` table: the boundary that takes the heat away, the fill and
insulation conductivities, the operating point and the coupling settings."""

from __future__ import annotations

from .errors import CaseError
from .model import FILLS, Thermal, Window
from .table import Table

_CONDUCTIVITY = (1e-3, 1e4)   #: W/(m K): from still gases to beyond diamond
_TEMPERATURE = (-200.0, 400.0)  #: degC, as [model] temperature


def _conductivity(table: Table, name: str, default: float) -> float:
    return table.within(name, "thermal conductivity", default, *_CONDUCTIVITY,
                        'give a thermal conductivity such as "0.2 W/(m K)"', " W/(m K)")


def _temperature(table: Table, name: str, default: float | None = None) -> float | None:
    if not table.has(name) and default is None:
        table.raw(name)
        return None
    t = table.quantity(name, "temperature", default)
    if not _TEMPERATURE[0] <= t <= _TEMPERATURE[1]:
        raise CaseError(table.key(name), f"{t:g} degC is outside -200..400 degC", 'give a temperature such as "80 degC"')
    return t


def _boundary(table: Table, window: Window) -> tuple[float | None, float | None, float | None]:
    """core_temperature, h and ambient, checked against the window's boundary."""
    core = _temperature(table, "core_temperature")
    h = table.quantity("h", "heat transfer coefficient", positive=True) if table.has("h") else None
    if h is None:
        table.raw("h")
    elif h > 1e6:
        raise CaseError(table.key("h"), f"{h:g} W/(m2 K) is more than 1e6", 'give h such as "10 W/(m2 K)"')
    ambient = _temperature(table, "ambient")
    if (h is None) != (ambient is None):
        given, missing = ("h", "ambient") if ambient is None else ("ambient", "h")
        raise CaseError(table.key(missing), f"missing: {given} is given",
                        'give both h and ambient, such as h = "10 W/(m2 K)" and ambient = "40 degC"')
    boundary = window.boundary
    if boundary == "ideal-core":
        if h is not None:
            raise CaseError(table.key("h"), "an ideal-core window has no far boundary",
                            "remove h and ambient; give core_temperature, the walls' temperature")
        if core is None:
            raise CaseError(table.key("core_temperature"), "missing: the core walls take the heat away",
                            'add core_temperature = "80 degC" to [thermal]')
    elif boundary == "open":
        if core is not None:
            raise CaseError(table.key("core_temperature"), "an open model has no core",
                            'remove it; give h and ambient for the far boundary, such as h = "10 W/(m2 K)"')
        if h is None:
            raise CaseError(table.key("h"), "missing: the far boundary takes the heat away",
                            'add h = "10 W/(m2 K)" and ambient = "40 degC" to [thermal]')
    elif core is None and h is None:
        raise CaseError(table.key("core_temperature"), "missing: nothing takes the heat away",
                        'give core_temperature = "80 degC" (the core), or h and ambient (the far boundary)')
    return core, h, ambient


def read_thermal(top: Table, window: Window, frequencies: tuple[float, ...],
                 waveforms: bool) -> Thermal | None:
    """[thermal] (None when absent); see :class:`~racfield.geometry.case.model.Thermal`."""
    if not top.has("thermal"):
        top.raw("thermal")
        return None
    table = Table(top.raw("thermal"), "thermal")
    core, h, ambient = _boundary(table, window)
    fill = table.text("fill", "air", tuple(FILLS))
    if table.has("conductivity") and table.has("fill"):
        raise CaseError(table.key("conductivity"), "given together with fill",
                        'give either fill = "varnish" or conductivity = "0.3 W/(m K)", not both')
    fill_k = _conductivity(table, "conductivity", FILLS[fill])
    insulation = _conductivity(table, "insulation_conductivity", 0.2)
    layer = _conductivity(table, "layer_insulation_conductivity", 0.2)
    core_k = _conductivity(table, "core_conductivity", 4.0)
    frequency = _operating_frequency(table, frequencies, waveforms)
    coupled = table.raw("coupled", True)
    if not isinstance(coupled, bool):
        raise CaseError(table.key("coupled"), f"expected true or false, got {coupled!r}",
                        "write coupled = true or coupled = false")
    tolerance = table.quantity("tolerance", "number", 1e-5, positive=True)
    if not 1e-12 <= tolerance <= 0.1:
        raise CaseError(table.key("tolerance"), f"{tolerance:g} is outside 1e-12..0.1",
                        "give the relative change of the total loss that ends the iteration, such as 1e-5")
    iterations = table.integer("max_iterations", 50, maximum=1000)
    ceiling = _temperature(table, "max_temperature", 400.0)
    floor = min(t for t in (core, ambient) if t is not None)
    if ceiling <= floor:
        raise CaseError(table.key("max_temperature"), f"{ceiling:g} degC is not above the boundary's {floor:g} degC",
                        "give the highest temperature a steady state may reach, such as \"400 degC\"")
    table.close()
    return Thermal(core, h, ambient, fill, fill_k, insulation, layer, core_k, frequency, coupled, tolerance,
                   iterations, ceiling)


def _operating_frequency(table: Table, frequencies: tuple[float, ...], waveforms: bool) -> float | None:
    """The operating frequency: the waveforms' harmonics (None), the one frequency of the sweep, or
    ``frequency``."""
    if waveforms:
        if table.has("frequency"):
            raise CaseError(table.key("frequency"), "the waveforms set the operating point",
                            "remove it: the heat is the sum of the waveforms' harmonic losses")
        table.raw("frequency")
        return None
    if table.has("frequency"):
        return table.quantity("frequency", "frequency", nonnegative=True)
    table.raw("frequency")
    if len(frequencies) == 1:
        return frequencies[0]
    raise CaseError(table.key("frequency"), "missing: the sweep has several frequencies",
                    'add frequency = "200 kHz" to [thermal], the operating frequency')
