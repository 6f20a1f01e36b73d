"""racfield: AC winding resistance, losses and leakage of transformer and
inductor windows from a 2-D finite-element field solution.

The application layer: the Python API (:func:`load_case`, :func:`solve`), the
command line (:mod:`racfield.cli`), run state and study execution.  It sits on
top of :mod:`racfield.geometry`, :mod:`racfield.fem` and
:mod:`racfield.postprocess`; none of them imports it.
"""

from importlib.metadata import PackageNotFoundError, version as _version

try:
    __version__ = _version("racfield")
except PackageNotFoundError:  # run from a checkout that was never installed
    __version__ = "0+unknown"
