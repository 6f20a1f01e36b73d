"""Checks of a whole arrangement: every winding has turns, parallel counts
divide, litz windings are consistent, and an ideal-core window balances its
ampere-turns at DC and every harmonic (Ampere's law around the core)."""

from __future__ import annotations

import cmath
import math

import numpy as np

from .errors import CaseError
from .model import Case, conductor_specs, winding_conductors, winding_turns


def check_arrangement(case: Case) -> None:
    """Every winding has turns; an ideal-core window balances its ampere-turns."""
    where = f"variant[{case.variant_index}]." if case.variant_index else ""
    names = [w.name for w in case.windings]
    check_litz(case, where)
    for p in case.parallel:
        count = winding_conductors(case, p.winding)
        if count % p.conductors:
            raise CaseError(f"{where}{p.key}.conductors",
                            f'winding "{p.winding}" has {count} conductors, not a multiple of {p.conductors}',
                            "give every turn the same number of parallel conductors")
    for w in case.windings:
        if winding_turns(case, w.name) == 0:
            raise CaseError(f"{where}winding[{names.index(w.name) + 1}]" if not where else f"{where}layer",
                            f'winding "{w.name}" has no turns' + (f" in variant {case.variant}" if where else ""),
                            "add a [[layer]] or [[conductor]] with this winding, or remove the winding")
    if case.window.boundary == "ideal-core":
        check_balance(case, where)


def check_litz(case: Case, where: str) -> None:
    """A litz winding is all litz of one strand count and representation, and
    takes no [[parallel]] (its strands are transposed parallel conductors)."""
    for w in case.windings:
        specs = conductor_specs(case, w.name)
        litz = [(k, s) for k, s in specs if s.shape == "litz"]
        if not litz:
            continue
        other = next(((k, s) for k, s in specs if s.shape != "litz"), None)
        if other:
            raise CaseError(f"{where}{other[0]}.conductor", f'winding "{w.name}" mixes litz and {other[1].shape} conductors',
                            "wind each winding from one kind of conductor")
        first = litz[0][1]
        for k, s in litz[1:]:
            if (s.strands, s.representation) != (first.strands, first.representation):
                raise CaseError(f"{where}{k}.conductor", f'winding "{w.name}" mixes litz of {first.strands} and '
                                f"{s.strands} strands (or strands and bundle representations)",
                                "give every turn of a winding the same litz wire")
        p = next((p for p in case.parallel if p.winding == w.name), None)
        if p:
            raise CaseError(f"{where}{p.key}.winding", f'winding "{w.name}" is litz: its strands are already '
                            "transposed parallel conductors", "remove the [[parallel]] table for it")
        if first.representation == "bundle" and case.model.axisymmetric:
            raise CaseError(f"{where}{litz[0][0]}.conductor.representation",
                            "the homogenized bundle is available in planar models only",
                            'use representation = "strands" in an axisymmetric model')


def check_balance(case: Case, where: str = "") -> None:
    if case.waveform is not None:
        check_waveform_balance(case, where)
        return
    mmf = [winding_turns(case, w.name) * w.phasor for w in case.windings]
    net = sum(mmf)
    scale = sum(abs(m) for m in mmf)
    if scale > 0 and abs(net) > 1e-6 * scale:
        parts = ", ".join(f"{w.name} {winding_turns(case, w.name)} x {w.current:g} A at {w.phase_deg:g} deg"
                          for w in case.windings)
        raise CaseError(f"{where}winding", f"ampere-turns do not sum to zero in an ideal-core window "
                        f"({parts}; net {abs(net):.4g} A)",
                        "set currents and phases so that the sum of N*I is zero; an inductor or a flyback "
                        'needs window.boundary = "core" with a [core] table and a [[gap]], or "open" for no core')


def check_waveform_balance(case: Case, where: str = "") -> None:
    """Ideal-core window with waveforms: sum N i(t) = 0 at every instant, so at
    DC and at every harmonic (Ampere's law around the core)."""
    turns = [winding_turns(case, w.name) for w in case.windings]
    spectra = [w.spectrum for w in case.windings]
    scale = sum(n * s.rms for n, s in zip(turns, spectra))
    if scale <= 0.0:
        return

    def fail(what: str, values: list, net: float) -> None:
        parts = ", ".join(f"{w.name} {n} x {v}" for w, n, v in zip(case.windings, turns, values))
        raise CaseError(f"{where}winding", f"ampere-turns do not sum to zero in an ideal-core window {what} "
                        f"({parts}; net {net:.4g} A)",
                        "make sum N*i(t) zero at every instant (DC and every harmonic); an inductor or a "
                        'flyback needs window.boundary = "core" with a [core] table and a [[gap]], or "open"')

    net_dc = sum(n * s.dc for n, s in zip(turns, spectra))
    if abs(net_dc) > 1e-6 * scale:
        fail("at DC", [f"{s.dc:.4g} A" for s in spectra], abs(net_dc))
    h = np.array([s.harmonics for s in spectra], dtype=complex)          # (Nw, max_harmonic)
    n_w = np.array(turns, dtype=float)[:, None]
    net = np.abs((n_w * h).sum(axis=0))
    bad = np.nonzero(net > 1e-6 * (n_w * np.abs(h)).sum(axis=0) + 1e-9 * scale)[0]
    if len(bad):
        k = int(bad[0])
        fail(f"at harmonic {k + 1} ({(k + 1) * case.waveform.fundamental / 1e3:.6g} kHz)",
             [f"{abs(v):.4g} A at {math.degrees(cmath.phase(v)):.4g} deg" for v in h[:, k]], float(net[k]))
