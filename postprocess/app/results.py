"""The results of one solved arrangement, as numbers (:class:`Results`).

Everything is taken from the results document (results.json, built by
:func:`racfield.postprocess.report.results_document` from one
:class:`~racfield.postprocess.report.Report`), so the arrays hold exactly
the numbers ``racfield run`` writes.  SI units throughout: Hz, ohm, H, W, A.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from racfield.postprocess.report import Report


def _array(values) -> np.ndarray:
    """Floats, None (a winding without current) as NaN."""
    return np.array([np.nan if v is None else v for v in values], dtype=float)


@dataclass
class Results:
    """One arrangement solved over its frequencies (Nf of them, Nw windings,
    Nc conductors).  Per-winding quantities are dicts keyed by winding name,
    in the case's order (``windings``); each value is an (Nf,) array.

    - ``frequencies_hz`` (Nf,) Hz
    - ``turns``, ``current_a_rms`` (A RMS), ``phase_deg`` (degrees), ``rdc_ohm``
      (ohm, whole turn length): one number per winding
    - ``rac_ohm`` (ohm), ``rac_over_rdc`` (1), ``loss_w`` (W) per winding;
      Rac is NaN for a winding that carries no current
    - ``total_loss_w`` (Nf,) W
    - ``conductors``: one dict per conductor (winding, turn, shape, position
      and size in m, Rdc in ohm, as in results.json); ``conductor_loss_w``
      (Nf, Nc) W in that order
    - ``impedance_r_ohm``, ``impedance_l_h`` (Nf, Nw, Nw): winding impedance
      matrix, resistance in ohm and inductance in H (None in an ideal-core
      window, where only the short-circuit impedance exists)
    - ``leakage_l_h``, ``leakage_r_ohm`` (Nf,): short-circuit inductance (H)
      and resistance (ohm) referred to the first winding, the others shorted
      (None with one winding)
    - ``loss_matrix_w_per_a2`` (Nf, Nw, Nw, Nw) complex, W/A^2: winding loss
      matrices (``racfield loss`` uses them for other currents)
    - ``document``: the whole results.json document (estimates, harmonics,
      MMF, warnings, mesh check, ...)
    - ``thermal``: results.json's ``thermal`` (hot spot, per-turn and per-winding
      temperatures in degC, the loss at temperature in W), None without ``[thermal]``
    """

    title: str
    windings: tuple[str, ...]
    frequencies_hz: np.ndarray
    turns: dict[str, int]
    current_a_rms: dict[str, float]
    phase_deg: dict[str, float]
    rdc_ohm: dict[str, float]
    rac_ohm: dict[str, np.ndarray]
    rac_over_rdc: dict[str, np.ndarray]
    loss_w: dict[str, np.ndarray]
    total_loss_w: np.ndarray
    conductors: list[dict]
    conductor_loss_w: np.ndarray
    impedance_r_ohm: np.ndarray | None
    impedance_l_h: np.ndarray | None
    leakage_l_h: np.ndarray | None
    leakage_r_ohm: np.ndarray | None
    loss_matrix_w_per_a2: np.ndarray
    document: dict = field(repr=False)
    report: "Report" = field(repr=False)

    @property
    def thermal(self) -> dict | None:
        """The thermal solution (``thermal`` of results.json), None without ``[thermal]``."""
        return self.document.get("thermal")

    @classmethod
    def from_report(cls, report: "Report") -> "Results":
        """The results of ``report``, read from its results document."""
        from racfield.postprocess.report import results_document

        doc = results_document(report)
        w = doc["windings"]
        impedance, leakage, q = doc.get("impedance"), doc.get("leakage"), doc["loss_matrix"]
        return cls(
            title=doc["title"], windings=tuple(w), frequencies_hz=np.array(doc["frequencies_hz"], dtype=float),
            turns={n: v["turns"] for n, v in w.items()},
            current_a_rms={n: v["current_a_rms"] for n, v in w.items()},
            phase_deg={n: v["phase_deg"] for n, v in w.items()},
            rdc_ohm={n: v["rdc_ohm"] for n, v in w.items()},
            rac_ohm={n: _array(v["rac_ohm"]) for n, v in w.items()},
            rac_over_rdc={n: _array(v["rac_over_rdc"]) for n, v in w.items()},
            loss_w={n: _array(v["loss_w"]) for n, v in w.items()},
            total_loss_w=_array(doc["total_loss_w"]),
            conductors=[{k: v for k, v in c.items() if k != "loss_w"} for c in doc["conductors"]],
            conductor_loss_w=np.array([c["loss_w"] for c in doc["conductors"]], dtype=float).T.reshape(
                len(doc["frequencies_hz"]), len(doc["conductors"])),
            impedance_r_ohm=None if impedance is None else np.array(impedance["r_ohm"], dtype=float),
            impedance_l_h=None if impedance is None else np.array(impedance["l_h"], dtype=float),
            leakage_l_h=None if leakage is None else _array(leakage["l_h"]),
            leakage_r_ohm=None if leakage is None else _array(leakage["r_ohm"]),
            loss_matrix_w_per_a2=np.array(q["re_w_per_a2"], dtype=float) + 1j * np.array(q["im_w_per_a2"],
                                                                                         dtype=float),
            document=doc, report=report)

    def write(self, folder: str | Path) -> list[Path]:
        """Write the result files ``racfield run`` writes for one arrangement
        (results.json, rac.csv, the plots, field.vtu ...) into ``folder``
        (made if missing; files of the same name are replaced); returns their paths."""
        from racfield.postprocess.writers import write_all

        return write_all(self.report, Path(folder))

    def plot_rac(self) -> "Figure":
        """Rac/Rdc of every winding against frequency (log axis, Hz), the
        hand estimates dashed: the figure of rac_over_rdc.png, for a notebook
        (a :class:`matplotlib.figure.Figure`; ``figure.savefig(path)`` saves it)."""
        from racfield.postprocess.writers.rac_plot import rac_figure

        figure = rac_figure(self.report)
        if figure is None:
            raise ValueError("no frequency above 0 Hz to plot Rac/Rdc against")
        return figure

    def table(self) -> list[dict]:
        """One row per frequency and winding (the rows of rac.csv), as plain
        dicts: ``frequency_hz``, ``winding``, ``current_a_rms``, ``rdc_ohm``,
        ``rac_ohm``, ``rac_over_rdc``, ``loss_w`` (Rac None for a winding
        without current)."""
        rows = []
        for i, f in enumerate(self.document["frequencies_hz"]):
            for name, w in self.document["windings"].items():
                rows.append({"frequency_hz": f, "winding": name, "current_a_rms": w["current_a_rms"],
                             "rdc_ohm": w["rdc_ohm"], "rac_ohm": w["rac_ohm"][i],
                             "rac_over_rdc": w["rac_over_rdc"][i], "loss_w": w["loss_w"][i]})
        return rows
