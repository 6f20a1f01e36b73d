"""Winding impedance matrix, short-circuit (leakage) impedance, magnetizing
inductance and losses at any set of winding currents, from the per-conductor
sweep results.  Impedances in ohm, inductances in H (whole turns: every
conductor scaled by its turn length, :mod:`racfield.geometry.turn_length`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from racfield.fem.parallel import basis_impedance, sharing, winding_impedance
from racfield.geometry.turn_length import TurnLengths

if TYPE_CHECKING:   # a type only: reading results needs no solver
    from racfield.fem.sweep import SweepResult


def winding_matrices(sweep: SweepResult, lengths: TurnLengths) -> tuple[np.ndarray, np.ndarray]:
    """Winding impedance Z (Nf, Nw, Nw) in ohm and inductance L (Nf, Nw, Nw) in H:
    turns in series, parallel conductors sharing as the field decides
    (Z_w = (P^T Z_e^-1 P)^-1 with Z_e = E^T Z_c E, :mod:`fem.parallel`), with
    the conductor matrices Z_c and L_c (per metre) scaled to whole turns by
    :meth:`racfield.geometry.turn_length.TurnLengths.impedance` (resistance
    per conductor pair, stored energy by the mean turn length).  At 0 Hz,
    L is the derivative of Z_w with respect to j omega: W P^T R^-1 L_e R^-1 P W
    with R = Z_e and W = Z_w at 0 Hz."""
    e, p = sweep.excitation.basis, sweep.excitation.windings
    z_e = basis_impedance(lengths.impedance(sweep.impedance_per_m), e)
    l_e = basis_impedance(lengths.inductance(sweep.inductance_per_m), e)
    z = winding_impedance(z_e, p)
    l = np.empty(z.shape)
    for i, f in enumerate(sweep.frequencies):
        if f > 0:
            l[i] = z[i].imag / (2 * np.pi * f)
        else:
            left = np.linalg.solve(z_e[i], p) @ z[i]          # R^-1 P W
            l[i] = (left.T @ l_e[i] @ left).real
    return z * lengths.scale, l * lengths.scale


def short_circuit(matrix: np.ndarray, turns: np.ndarray, balanced: bool) -> complex:
    """Impedance (or inductance, given an inductance matrix) seen from winding 0
    with every other winding shorted.

    ``balanced``: in a closed ideal-core window only ampere-turn-balanced
    currents exist and the winding voltages carry an arbitrary common term
    N_w c (the reference of the potential); the shorted windings then take the
    currents that keep sum N I = 0 with zero voltage up to that term.
    """
    n = len(turns)
    if n < 2:
        raise ValueError("a short circuit needs two or more windings")
    z = np.asarray(matrix, dtype=complex)
    o = slice(1, n)
    if not balanced:
        return complex(z[0, 0] - z[0, o] @ np.linalg.solve(z[o, o], z[o, 0]))
    # unknowns: other winding currents x (per unit current in winding 0) and c
    system = np.zeros((n, n), dtype=complex)
    system[: n - 1, : n - 1] = z[o, o]
    system[: n - 1, n - 1] = turns[1:]
    system[n - 1, : n - 1] = turns[1:]
    rhs = np.concatenate([-z[o, 0], [-turns[0]]])
    solution = np.linalg.solve(system, rhs)
    x, c = solution[: n - 1], solution[n - 1]
    return complex(z[0, 0] + z[0, o] @ x + turns[0] * c)


def leakage(frequencies: np.ndarray, z: np.ndarray, l: np.ndarray, turns: np.ndarray,
            balanced: bool) -> tuple[list[float], list[float]]:
    """Short-circuit inductance (H) and resistance (ohm) seen from winding 0 per
    frequency.  At 0 Hz the inductance is the inductive limit (from the
    inductance matrix alone)."""
    l_sc, r_sc = [], []
    for i, f in enumerate(frequencies):
        zsc = short_circuit(z[i], turns, balanced)
        r_sc.append(zsc.real)
        if f > 0:
            l_sc.append(zsc.imag / (2 * np.pi * f))
        else:
            l_sc.append(short_circuit(l[i], turns, balanced).real)
    return l_sc, r_sc


def magnetizing(l: np.ndarray, turns: np.ndarray) -> list[float]:
    """Magnetizing inductance referred to winding 0 (H): (N0/N1) M01 with two or
    more windings, the self inductance with one."""
    if len(turns) == 1:
        return [float(x) for x in l[:, 0, 0]]
    return [float(x) for x in l[:, 0, 1] * turns[0] / turns[1]]


def winding_loss_matrices(sweep: SweepResult, lengths: TurnLengths) -> np.ndarray:
    """Q (Nf, Nw, Nw, Nw): the loss of winding w at winding currents i is
    Re(i^H Q[f, w] i) in W (A RMS phasors); each conductor's loss (local to
    it) times its own turn length; parallel strands share as the field
    decides (x = T i, :func:`fem.parallel.sharing`, from the whole-turn
    impedances of :func:`winding_matrices`)."""
    e, p = sweep.excitation.basis, sweep.excitation.windings
    weighted = sweep.excitation.membership * lengths.weights[:, None]
    per_winding = np.einsum("kw,fkab->fwab", weighted, sweep.loss_matrix_per_m)
    t = np.array([sharing(z_e, p) for z_e in basis_impedance(lengths.impedance(sweep.impedance_per_m), e)])
    return np.einsum("fai,fwab,fbj->fwij", t.conj(), per_winding, t) * lengths.scale


def losses_at(q: np.ndarray, currents: np.ndarray) -> np.ndarray:
    """Loss (Nf, Nw) in W of every winding at winding ``currents`` (A RMS phasors),
    from the loss matrices ``q`` of :func:`winding_loss_matrices`: no new solve."""
    i = np.asarray(currents, dtype=complex)
    return np.einsum("i,fwij,j->fw", i.conj(), q, i).real


def losses_from_document(doc: dict, currents: dict[str, complex]) -> np.ndarray:
    """Winding losses (Nf, Nw) in W at ``currents`` (winding name -> A RMS
    phasor; windings not named carry no current), from a results.json
    document's loss matrices.  Raises ValueError for an unknown winding, or
    for unbalanced ampere-turns where the document allows balanced currents only."""
    matrices = doc["loss_matrix"]
    order = matrices["order"]
    unknown = sorted(set(currents) - set(order))
    if unknown:
        raise ValueError(f"unknown winding {unknown[0]!r}; the windings are {', '.join(order)}")
    i = np.array([currents.get(name, 0.0) for name in order], dtype=complex)
    if matrices.get("balanced_only"):
        turns = np.array([doc["windings"][name]["turns"] for name in order])
        net = turns @ i
        if abs(net) > 1e-6 * max(np.abs(turns * i).sum(), 1e-30):
            raise ValueError(f"the ampere-turns do not sum to zero (net {abs(net):.4g} A): "
                             "an ideal-core window allows balanced currents only")
    q = np.array(matrices["re_w_per_a2"]) + 1j * np.array(matrices["im_w_per_a2"])
    return losses_at(q, i)
