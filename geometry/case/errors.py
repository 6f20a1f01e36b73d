"""The one error type for bad input: it prints as a single line."""

from __future__ import annotations


MAX_PART = 400  #: characters of the key or the problem kept in the line (a case may hold huge texts)


class CaseError(Exception):
    """Bad input in a case file.

    ``str(error)`` is one line: ``FILE: KEY: what is wrong; how to fix it``.
    """

    def __init__(self, key: str, problem: str, fix: str, file: str = "") -> None:
        self.key = key
        self.problem = problem
        self.fix = fix
        self.file = file
        super().__init__(self.line())

    def line(self) -> str:
        where = f"{self.file}: " if self.file else ""
        key = f"{self.key}: " if self.key else ""
        # any line break (also \r, \v, \f, \x85, \u2028 ... from case-file text) becomes a space;
        # every other unprintable character is escaped, so that nothing drives the terminal
        text = " ".join(f"{where}{_cut(key)}{_cut(self.problem)}; {self.fix}".splitlines())
        return printable(text)

    def in_file(self, file: str) -> "CaseError":
        """The same error, naming ``file``."""
        return CaseError(self.key, self.problem, self.fix, file)

    def __str__(self) -> str:
        return self.line()


def _cut(text: str) -> str:
    return text if len(text) <= MAX_PART else text[: MAX_PART - 20] + f"... ({len(text)} characters)"


def unprintable(text: str) -> str | None:
    """The first character of ``text`` that is not printable (control, format,
    surrogate, unassigned, any separator but the plain space: ``str.isprintable``), else None."""
    if text.isprintable():
        return None
    return next(ch for ch in text if not ch.isprintable())


def printable(text: str) -> str:
    """``text`` with every unprintable character written as an escape (``\\x1b``),
    so that nothing from a case file can drive the terminal."""
    if unprintable(text) is None:
        return text
    return "".join(ch.encode("unicode_escape").decode("ascii") if unprintable(ch) else ch for ch in text)
