"""When to warn: entry diagnostics and the rules that issue nullspec's warnings.

The rules and their thresholds, with the evidence (THEORY.md §8 studied four mean-0, variance-1 entry
laws -- Rademacher, t5, sparse 0/+-sqrt(10) at density 0.1, centred Bernoulli with skewness 2.67 -- at
N = 10, 50 and 200, with the size of nominal 5 % Gaussian-exact tests):

- **Discrete entries**: more than ``TIE_LIMIT`` (10 %) of the entries share their value with another
  entry.  Continuous entries have no ties at all in float64, so any sizeable fraction signals
  rounding, counts or a two-valued law; §8 found the Gaussian null off for such laws at small N
  (real-count size 0.28 for the Bernoulli law at N = 10, 0.058 at N = 50) and the exact-zero
  real/complex rule unreliable (defective eigenvalues: the rule changed K in up to 54 % of samples).
- **Sparse entries**: more than ``ZERO_LIMIT`` (10 %) exact zeros (the sparse law: real-count size
  0.94 at N = 10, 0.084 at N = 50; zero rows give exact zero eigenvalues).
- **Skewed entries**: ``|skewness| > max(SKEW_LIMIT, MOMENT_Z * sqrt(6 / m))`` over the ``m`` entries.
- **Heavy tails**: ``excess kurtosis > max(KURTOSIS_LIMIT, MOMENT_Z * sqrt(24 / m))``.  t5 (excess
  kurtosis 6) inflated the size of the spectral-radius test to 6.2-6.6 % at N <= 50 and 6.1 % at
  N = 200 (scale estimated).  ``sqrt(6/m)`` and ``sqrt(24/m)`` are the large-sample standard errors of
  the sample skewness and excess kurtosis of Gaussian data (common practice, no source), so
  ``MOMENT_Z = 4`` standard errors keeps false alarms on Gaussian entries rare; the floors 0.5 and 1
  are far below the laws §8 found harmful (skewness 2.67, excess kurtosis 6).

Which statistics a reason affects, and up to which N (§8's recommendation):

- ``real_count``: discrete, sparse or skewed entries, for ``N < REAL_COUNT_SAFE_N`` (200): at
  N = 200 all four laws gave sizes 4.6-5.0 % and the exact-zero rule never changed K.  Heavy tails
  alone do not count (t5: size 0.051 already at N = 10);
- ``edge`` and ``radial``: any reason, for ``N <= EDGE_SAFE_N`` (500), the limit below which §8
  recommends a permutation null for the spectral radius with non-Gaussian entries.

A matrix smaller than ``SMALL_N`` (10) gets a :class:`~nullspec.exceptions.SmallMatrixWarning`: its
scale is estimated from fewer than 100 entries, the tests have little power, and §8's failures of
the Gaussian null are largest there.
"""

import math
import warnings

import numpy as np
from scipy import stats

from ._validation import check_names, check_option, check_positive_int, check_probability, check_square_matrix
from .exceptions import NonGaussianEntriesWarning, ResolutionWarning, SmallMatrixWarning

__all__ = [
    "TIE_LIMIT",
    "ZERO_LIMIT",
    "SKEW_LIMIT",
    "KURTOSIS_LIMIT",
    "MOMENT_Z",
    "REAL_COUNT_SAFE_N",
    "EDGE_SAFE_N",
    "SMALL_N",
    "entry_diagnostics",
    "non_gaussian_reasons",
    "gaussian_null_warnings",
    "warn_if_small",
    "warn_if_unresolvable",
]

TIE_LIMIT = 0.1
ZERO_LIMIT = 0.1
SKEW_LIMIT = 0.5
KURTOSIS_LIMIT = 1.0
MOMENT_Z = 4.0
REAL_COUNT_SAFE_N = 200
EDGE_SAFE_N = 500
SMALL_N = 10

_STATISTICS = ("real_count", "radial", "edge")
_DIAGONALS = ("include", "shift")
# The reasons that make the Gaussian real-count null unsafe (heavy tails alone do not, §8).
_REAL_COUNT_REASONS = ("ties", "zeros", "skewness")


def entry_diagnostics(matrix, *, diagonal="include"):
    """Summaries of the entry law that reveal discrete, sparse, skewed or heavy-tailed entries.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        Real, finite, square matrix.
    diagonal : {"include", "shift"}, default="include"
        Summarise all entries, or only the off-diagonal ones (the entries the ``"shift"`` policy of
        :func:`nullspec.standardize.standardize` treats as i.i.d.).

    Returns
    -------
    dict
        ``n`` (N), ``entries`` (number summarised), ``distinct_fraction`` (distinct values / entries),
        ``tie_fraction`` (fraction of entries whose value occurs more than once), ``zero_fraction``
        (fraction exactly 0), ``skewness`` and ``excess_kurtosis`` (scipy.stats ``skew`` and
        ``kurtosis``, biased estimators; NaN when the entries are constant).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec._diagnostics import entry_diagnostics
    >>> signs = np.where(np.arange(25).reshape(5, 5) % 2 == 0, 1.0, -1.0)
    >>> d = entry_diagnostics(signs)
    >>> d["tie_fraction"], d["zero_fraction"], round(d["excess_kurtosis"], 2)
    (1.0, 0.0, -2.0)
    """
    a = check_square_matrix(matrix, "matrix")
    check_option(diagonal, "diagonal", _DIAGONALS)
    x = a.ravel() if diagonal == "include" else a[~np.eye(a.shape[0], dtype=bool)]
    _, counts = np.unique(x, return_counts=True)
    constant = counts.size == 1
    return {
        "n": a.shape[0],
        "entries": x.size,
        "distinct_fraction": counts.size / x.size,
        "tie_fraction": float(counts[counts > 1].sum() / x.size),
        "zero_fraction": float(np.mean(x == 0)),
        "skewness": math.nan if constant else float(stats.skew(x)),
        "excess_kurtosis": math.nan if constant else float(stats.kurtosis(x)),
    }


def non_gaussian_reasons(diagnostics):
    """The reasons, among ties / zeros / skewness / kurtosis, why entries look non-Gaussian.

    Parameters
    ----------
    diagnostics : dict
        The output of :func:`entry_diagnostics`.

    Returns
    -------
    dict
        Reason name -> a plain-language description with the measured value; empty when the
        entries look continuous and Gaussian-like.  The thresholds are in the module docstring.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec._diagnostics import entry_diagnostics, non_gaussian_reasons
    >>> sparse = np.eye(20) + np.diag(np.arange(1.0, 20.0), 1)
    >>> sorted(non_gaussian_reasons(entry_diagnostics(sparse)))
    ['kurtosis', 'skewness', 'ties', 'zeros']
    """
    d, m = diagnostics, diagnostics["entries"]
    reasons = {}
    if d["tie_fraction"] > TIE_LIMIT:
        reasons["ties"] = f"{d['tie_fraction']:.0%} of the entries share their value with another entry (discrete)"
    if d["zero_fraction"] > ZERO_LIMIT:
        reasons["zeros"] = f"{d['zero_fraction']:.0%} of the entries are exactly zero (sparse)"
    if abs(d["skewness"]) > max(SKEW_LIMIT, MOMENT_Z * math.sqrt(6.0 / m)):
        reasons["skewness"] = f"the entries are skewed (skewness {d['skewness']:.2f})"
    if d["excess_kurtosis"] > max(KURTOSIS_LIMIT, MOMENT_Z * math.sqrt(24.0 / m)):
        reasons["kurtosis"] = f"the entries are heavy-tailed (excess kurtosis {d['excess_kurtosis']:.2f})"
    return reasons


def _affected(reasons, n, statistics):
    """The statistics whose Gaussian-null calibration the reasons put at risk at size ``n``."""
    out = []
    for name in statistics:
        if name == "real_count":
            risky = n < REAL_COUNT_SAFE_N and any(r in reasons for r in _REAL_COUNT_REASONS)
        else:
            risky = n <= EDGE_SAFE_N and bool(reasons)
        if risky:
            out.append(name)
    return out


def gaussian_null_warnings(matrix, *, statistics=_STATISTICS, diagonal="include", stacklevel=2):
    """Warn when the entries look too non-Gaussian for the Gaussian null at this matrix size.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        The matrix to be tested against the Gaussian null (raw or standardised: the diagnostics
        are invariant under centring and scaling).
    statistics : sequence of str, default=("real_count", "radial", "edge")
        The statistics that will be calibrated by the Gaussian null.
    diagonal : {"include", "shift"}, default="include"
        Which entries are treated as i.i.d. (see :func:`entry_diagnostics`).
    stacklevel : int, default=2
        As for :func:`warnings.warn`, counted from the function that calls this one: 1 points at
        that function, 2 (default) at its caller (the user's call of a public function).

    Returns
    -------
    tuple of str
        The warning messages issued (empty when none).

    Warns
    -----
    NonGaussianEntriesWarning
        When at least one statistic is at risk by the rules of the module docstring; the message
        names the statistics and the reasons and recommends the permutation null.

    Examples
    --------
    >>> import numpy as np, warnings
    >>> from nullspec._diagnostics import gaussian_null_warnings
    >>> rng = np.random.default_rng(1)
    >>> with warnings.catch_warnings(record=True) as caught:
    ...     warnings.simplefilter("always")
    ...     messages = gaussian_null_warnings(rng.standard_normal((30, 30)))
    >>> messages, len(caught)
    ((), 0)
    """
    a = check_square_matrix(matrix, "matrix")
    statistics = check_names(statistics, "statistics", _STATISTICS)
    level = check_positive_int(stacklevel, "stacklevel")
    reasons = non_gaussian_reasons(entry_diagnostics(a, diagonal=diagonal))
    affected = _affected(reasons, a.shape[0], statistics)
    if not affected:
        return ()
    message = (
        f"The Gaussian null may be miscalibrated for {', '.join(affected)} at N = {a.shape[0]}: "
        f"{'; '.join(reasons.values())}. For such entries the Gaussian null, and for discrete entries "
        "even the exact-zero rule that classifies eigenvalues as real, can fail; a permutation null "
        "(null='permutation') makes no assumption on the entry law and stays valid."
    )
    warnings.warn(message, NonGaussianEntriesWarning, stacklevel=level + 1)
    return (message,)


def warn_if_small(n, *, stacklevel=2):
    """Warn when the matrix is smaller than ``SMALL_N`` x ``SMALL_N``.

    Parameters
    ----------
    n : int
        Matrix size N.
    stacklevel : int, default=2
        As in :func:`gaussian_null_warnings`.

    Returns
    -------
    tuple of str
        The warning message issued (empty when none).

    Warns
    -----
    SmallMatrixWarning
        When ``n < SMALL_N``.

    Examples
    --------
    >>> from nullspec._diagnostics import warn_if_small
    >>> warn_if_small(50)
    ()
    """
    n = check_positive_int(n, "n")
    level = check_positive_int(stacklevel, "stacklevel")
    if n >= SMALL_N:
        return ()
    message = (
        f"The matrix is only {n} x {n}: its scale is estimated from {n * n} entries, the tests have "
        "little power, and the Gaussian null is most sensitive to the entry law at this size. Read "
        "the p-values with care and prefer a permutation null (null='permutation')."
    )
    warnings.warn(message, SmallMatrixWarning, stacklevel=level + 1)
    return (message,)


def warn_if_unresolvable(alpha, n_resamples, *, stacklevel=2):
    """Warn when ``alpha`` is below the smallest p-value a drawn null can give, ``1 / (B + 1)``.

    Parameters
    ----------
    alpha : float
        Significance level, in (0, 1).
    n_resamples : int
        Number of null draws ``B``.
    stacklevel : int, default=2
        As in :func:`gaussian_null_warnings`.

    Returns
    -------
    tuple of str
        The warning message issued (empty when none).

    Warns
    -----
    ResolutionWarning
        When ``1 / (n_resamples + 1) > alpha``: no outcome can then be significant.

    Examples
    --------
    >>> from nullspec._diagnostics import warn_if_unresolvable
    >>> warn_if_unresolvable(0.05, 999)
    ()
    """
    alpha = check_probability(alpha, "alpha")
    b = check_positive_int(n_resamples, "n_resamples")
    level = check_positive_int(stacklevel, "stacklevel")
    smallest = 1.0 / (b + 1)
    if smallest <= alpha:
        return ()
    needed = math.ceil(1.0 / alpha) - 1
    message = (
        f"alpha = {alpha:g} is below 1/(n_resamples + 1) = {smallest:.3g}, the smallest p-value a null "
        f"of {b} draws can give, so nothing can be significant at this level. Use n_resamples >= "
        f"{needed} (many more for a stable p-value)."
    )
    warnings.warn(message, ResolutionWarning, stacklevel=level + 1)
    return (message,)
