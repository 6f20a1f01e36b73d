"""Conductors in parallel: the excitation basis of a sweep and the current sharing.

Every winding is driven through one or more basis columns of conductor
currents.  A winding with one conductor per turn, or with ideally transposed
parallel conductors (equal shares), has one column (1, or 1/N, on each of its
conductors).  A winding with N untransposed parallel conductors per turn has N
columns, one per strand (the conductors at the same position in every turn);
the strands share one voltage and the field decides their currents:

    Z_e x - P V = 0,   P^T x = I      (Z_e = E^T Z_c E, basis impedance)

so that V = Z_w I with Z_w = (P^T Z_e^-1 P)^-1, the winding impedance matrix.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from racfield.geometry.case import Case, parallel_of
from racfield.geometry.layout import Conductor


@dataclass(frozen=True)
class Excitation:
    """``basis`` (Nc, Ne) conductor currents per unit basis current;
    ``windings`` (Ne, Nw) which winding each column feeds; ``membership``
    (Nc, Nw) which winding each conductor belongs to; ``labels`` (winding,
    strand) per column (strand 0: the whole winding); ``turns`` (Nw,)."""

    basis: np.ndarray
    windings: np.ndarray
    membership: np.ndarray
    labels: list[tuple[str, int]]
    turns: np.ndarray


def excitation_basis(case: Case, conductors: list[Conductor]) -> Excitation:
    names = [w.name for w in case.windings]
    columns, feeds, labels = [], [], []
    membership = np.zeros((len(conductors), len(names)))
    for c in conductors:
        membership[c.index, names.index(c.winding)] = 1.0
    turns = np.zeros(len(names))
    for w, name in enumerate(names):
        setting = parallel_of(case, name)
        mine = [c for c in conductors if c.winding == name]
        turns[w] = len(mine) // setting.conductors
        if setting.conductors == 1 or setting.transposed:
            column = np.zeros(len(conductors))
            column[[c.index for c in mine]] = 1.0 / setting.conductors
            columns.append(column)
            feeds.append(w)
            labels.append((name, 0))
            continue
        for strand in range(1, setting.conductors + 1):
            column = np.zeros(len(conductors))
            column[[c.index for c in mine if c.strand == strand]] = 1.0
            columns.append(column)
            feeds.append(w)
            labels.append((name, strand))
    windings = np.zeros((len(columns), len(names)))
    windings[np.arange(len(columns)), feeds] = 1.0
    return Excitation(np.array(columns).T, windings, membership, labels, turns)


def basis_impedance(conductor_impedance: np.ndarray, basis: np.ndarray) -> np.ndarray:
    """Z_e = E^T Z_c E (stacks over leading axes allowed)."""
    return np.einsum("ka,...kl,lb->...ab", basis, conductor_impedance, basis)


def winding_impedance(z_basis: np.ndarray, windings: np.ndarray) -> np.ndarray:
    """Z_w = (P^T Z_e^-1 P)^-1 (stacks allowed)."""
    solved = np.linalg.solve(z_basis, np.broadcast_to(windings, z_basis.shape[:-2] + windings.shape))
    return np.linalg.inv(np.einsum("aw,...av->...wv", windings, solved))


def sharing(z_basis: np.ndarray, windings: np.ndarray) -> np.ndarray:
    """T (Ne, Nw): basis currents per unit winding current, x = T I
    (T = Z_e^-1 P Z_w; equal voltage across a winding's strands)."""
    z_w = winding_impedance(z_basis, windings)
    return np.linalg.solve(z_basis, windings) @ z_w
