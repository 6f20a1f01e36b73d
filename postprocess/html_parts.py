"""Building blocks of report.html: escaping, engineering numbers, the page
with its table of contents, tables of escaped texts and embedded PNG figures
(shared by :mod:`.html_report` and :mod:`.html_thermal`)."""

from __future__ import annotations

import base64
import html
import math
from pathlib import Path

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def esc(value: object) -> str:
    """HTML-escaped text (quotes too, safe in attributes)."""
    return html.escape(str(value), quote=True)


_PREFIXES = [(1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "\u00b5"), (1e-9, "n"), (1e-12, "p")]


def eng(value: float | None, unit: str, digits: int = 4) -> str:
    """``0.01234, "Ω"`` -> ``12.34 mΩ``; None or not finite -> an en dash."""
    if value is None or not isinstance(value, (int, float)) or not math.isfinite(value):
        return "\u2013"
    if value == 0:
        return f"0 {unit}"
    for scale, prefix in _PREFIXES:
        if abs(value) >= scale * 0.9995:
            return f"{value / scale:.{digits}g} {prefix}{unit}"
    scale, prefix = _PREFIXES[-1]
    return f"{value / scale:.{digits}g} {prefix}{unit}"


class Page:
    """Sections in order, with a table of contents."""

    def __init__(self) -> None:
        self.parts: list[str] = []
        self.toc: list[tuple[int, str, str]] = []

    def heading(self, level: int, anchor: str, title: str) -> None:
        self.toc.append((level, anchor, title))
        self.parts.append(f'<h{level} id="{esc(anchor)}">{esc(title)}</h{level}>')

    def add(self, text: str) -> None:
        self.parts.append(text)

    def nav(self) -> str:
        items = []
        for level, anchor, title in self.toc:
            if level == 2:
                items.append(f'<li><a href="#{esc(anchor)}">{esc(title)}</a></li>')
        return f'<nav aria-label="contents"><strong>Contents</strong><ol>{"".join(items)}</ol></nav>'


def image(folder: Path, name: str, alt: str, caption: str, absent: str) -> str:
    """The PNG ``folder/name`` as a data URI in a figure, or the ``absent`` sentence."""
    path = folder / name
    try:
        data = path.read_bytes()
    except OSError:
        data = b""
    if not data.startswith(PNG_SIGNATURE):
        return f'<p class="missing">{esc(absent)} ({esc(name)} is not in this results folder.)</p>'
    uri = "data:image/png;base64," + base64.b64encode(data).decode("ascii")
    return (f'<figure><img src="{uri}" alt="{esc(alt)}">'
            f"<figcaption>{esc(caption)} <code>{esc(name)}</code></figcaption></figure>")


def cell(tag: str, text: str, numeric: bool) -> str:
    """One escaped table cell."""
    return f'<{tag} class="num">{esc(text)}</{tag}>' if numeric else f"<{tag}>{esc(text)}</{tag}>"


def table(head: list[str], rows: list[list[str]], numeric: set[int] = frozenset()) -> str:
    """A table of plain texts (all escaped); columns in ``numeric`` right-aligned."""
    out = ['<div class="scroll"><table><thead><tr>' + "".join(cell("th", h, i in numeric) for i, h in enumerate(head))
           + "</tr></thead><tbody>"]
    for row in rows:
        out.append("<tr>" + "".join(cell("td", c, i in numeric) for i, c in enumerate(row)) + "</tr>")
    out.append("</tbody></table></div>")
    return "".join(out)
