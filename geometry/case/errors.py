"""The one error type for bad input: it prints as a single line."""

from __future__ import annotations


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
        # any line break (also \r, \v, \f, \x85, \u2028 ... from case-file text) becomes a space
        return " ".join(f"{where}{key}{self.problem}; {self.fix}".splitlines())

    def in_file(self, file: str) -> "CaseError":
        """The same error, naming ``file``."""
        return CaseError(self.key, self.problem, self.fix, file)

    def __str__(self) -> str:
        return self.line()
