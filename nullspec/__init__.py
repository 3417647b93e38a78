"""nullspec: does the spectrum of a real square matrix show structure beyond i.i.d. noise?

The main entry points:

- :func:`spectral_test` (and the one-statistic :func:`real_count_test`, :func:`radial_test`,
  :func:`edge_test`) test one matrix; :func:`screen` tests many with FDR or Holm control across them;
- :mod:`nullspec.ginibre` holds the exact finite-N real Ginibre results behind the Gaussian null;
- :mod:`nullspec.nulls` holds the drawn nulls (:class:`~nullspec.nulls.Permutation`,
  :class:`~nullspec.nulls.Bootstrap`, :class:`~nullspec.nulls.Gaussian`);
- :class:`SpectralFeatures` and :class:`SignificantModes` are scikit-learn transformers (imported on
  first use, so that ``import nullspec`` does not pay for scikit-learn);
- :func:`read_matrix` reads matrix files; ``nullspec`` on the command line writes reports.

See README.md for a tour and DEVELOPERS.md for the architecture.
"""

__version__ = "0.1.0"

from . import ginibre, nulls
from .exceptions import (
    InterruptedNullWarning,
    NonGaussianEntriesWarning,
    NullspecWarning,
    ResolutionWarning,
    SmallMatrixWarning,
)
from .inference import edge_test, radial_test, real_count_test, screen, spectral_test
from .io import MatrixFile, read_matrix
from .results import Outlier, ScreenResult, SpectralTestResult, StatisticResult

_LAZY = {"SpectralFeatures": "transformers", "SignificantModes": "transformers"}

__all__ = [
    "__version__",
    "ginibre",
    "nulls",
    "spectral_test",
    "real_count_test",
    "radial_test",
    "edge_test",
    "screen",
    "read_matrix",
    "MatrixFile",
    "StatisticResult",
    "Outlier",
    "SpectralTestResult",
    "ScreenResult",
    "SpectralFeatures",
    "SignificantModes",
    "NullspecWarning",
    "SmallMatrixWarning",
    "NonGaussianEntriesWarning",
    "ResolutionWarning",
    "InterruptedNullWarning",
]


def __getattr__(name):
    """Import the scikit-learn transformers on first use (PEP 562)."""
    if name in _LAZY:
        import importlib

        module = importlib.import_module(f".{_LAZY[name]}", __name__)
        return getattr(module, name)
    raise AttributeError(f"module 'nullspec' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(_LAZY))
