"""racfield: AC winding resistance, losses and leakage of transformer and
inductor windows from a 2-D finite-element field solution.

The application layer: the Python API (:func:`load_case`, :func:`solve`,
:class:`Results`, :func:`variant_cases`, :class:`CaseError`; see
:mod:`racfield.api`), the command line (:mod:`racfield.cli`), run state and
study execution.  It sits on top of :mod:`racfield.geometry`,
:mod:`racfield.fem` and :mod:`racfield.postprocess`; none of them imports it.

The names are imported when first used (PEP 562), so that ``import racfield``
and ``racfield --help`` import neither the solver nor gmsh nor matplotlib.
"""

from __future__ import annotations

#: exported name -> the module that defines it
_EXPORTS = {
    "load_case": "racfield.api",
    "solve": "racfield.api",
    "variant_cases": "racfield.api",
    "Results": "racfield.results",
    "CaseError": "racfield.geometry.case.errors",
}

__all__ = ["CaseError", "Results", "__version__", "load_case", "solve", "variant_cases"]


def __getattr__(name: str):
    if name == "__version__":
        from importlib.metadata import PackageNotFoundError, version

        try:
            return version("racfield")
        except PackageNotFoundError:  # run from a checkout that was never installed
            return "0+unknown"
    if name in _EXPORTS:
        from importlib import import_module

        return getattr(import_module(_EXPORTS[name]), name)
    raise AttributeError(f"module 'racfield' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
