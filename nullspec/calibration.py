"""Calibration: p-values, their Monte Carlo error, effect sizes and the omnibus across statistics.

Two families of null are calibrated here.

*Gaussian null, exact or tabulated (no simulation at call time).*

- ``real_count``: the exact finite-N pmf of the number of real eigenvalues (:mod:`nullspec.ginibre`).
  A one-sided p-value is the tail ``P(K >= k)`` or ``P(K <= k)``; the two-sided p-value is twice the
  smaller tail, capped at 1 (scipy's convention for ``binomtest``-type discrete tests is the
  likelihood-ordering rule; the doubling rule used here is the other common convention and is
  valid: ``P(2 min(F(K), S(K)) <= a) <= P(F(K) <= a/2) + P(S(K) <= a/2) <= a``).
  Effect: ``(K - E_N) / sd_N`` and the ratio ``K / E_N``.
- ``edge``: ``P(rho >= r) = spectral_radius_sf(r sqrt(N), N)`` = ``1 - exp(-G*_N)`` (THEORY.md
  sections 5-6).  Effect: ``rho / q_0.99(rho)`` with the finite-N 99% quantile.
- ``radial``: its null has no closed form, so it is read from a table of null quantiles simulated
  once by ``validation/make_radial_table.py`` through exactly the default pipeline
  (``center="mean", scale="sd", diagonal="include"``), interpolated in N on the scaled statistic
  and between levels in log p.  Outside the table (larger N, or another standardisation policy) a
  null sample is simulated once per (N, policy) with a seed fixed by (N, policy) and cached on disk
  (:mod:`nullspec._cache`).  The classical i.i.d. Cramer-von Mises table is never used: eigenvalues
  repel each other, so their empirical distribution is far closer to its mean than an i.i.d.
  sample's.
- Omnibus: Holm across the marginal p-values (the statistics are dependent and only their marginal
  laws are known).

*Drawn nulls (permutation, bootstrap, Gaussian Monte Carlo).*

- p-value ``(b + 1) / (B + 1)`` with ``b`` the number of draws at least as extreme, ties judged with
  scipy's relative tolerance ``100 eps |observed|`` (Phipson & Smyth 2010; as in
  ``scipy.stats.permutation_test``); two-sided is twice the smaller one-sided p-value, capped at 1.
- Monte Carlo error: a 95% Clopper-Pearson interval (statsmodels ``proportion_confint``,
  ``method="beta"``).  Effect: ``(T - mean) / sd`` over the draws (``ddof=1``).
- Sequential stopping (Besag & Clifford 1991), see :func:`sequential_stop`.
- Omnibus: single-step min-p over fixed reference p-value maps, see :func:`minp_omnibus`.

References
----------
J. Besag and P. Clifford, "Sequential Monte Carlo p-values", Biometrika 78 (1991) 301-304.
B. Phipson and G. K. Smyth, "Permutation p-values should never be zero", Stat. Appl. Genet. Mol.
Biol. 9 (2010) 39.
S. Holm, "A simple sequentially rejective multiple test procedure", Scand. J. Statist. 6 (1979) 65-70.
C. J. Clopper and E. S. Pearson, Biometrika 26 (1934) 404-413.
"""

from fractions import Fraction
import functools
import importlib
import math
import warnings

import numpy as np

from . import _cache, statistics
from .exceptions import InterruptedNullWarning
from .ginibre import (
    expected_outside,
    real_count_mean,
    real_count_pmf,
    real_count_var,
    spectral_radius_isf,
    spectral_radius_sf,
)
from .nulls import Gaussian, draw_null
from .spectrum import compute_spectrum
from .standardize import standardize

__all__ = [
    "NATURAL_ALTERNATIVE",
    "discrete_pvalue",
    "real_count_calibration",
    "edge_calibration",
    "radial_calibration",
    "radial_table_pvalue",
    "surrogate_statistics",
    "simulate_radial_null",
    "radial_null_sample",
    "holm_omnibus",
    "mc_pvalues",
    "mc_calibration",
    "exceedance_threshold",
    "sequential_stop",
    "reference_log_pvalues",
    "reference_pvalues",
    "minp_statistic",
    "minp_omnibus",
    "edge_threshold",
]

#: The alternative each statistic is tested against when ``alternative=None``.
NATURAL_ALTERNATIVE = {"real_count": "two-sided", "radial": "greater", "edge": "greater"}

_TIE_EPS = 100 * np.finfo(float).eps  # scipy.stats.permutation_test's relative tie tolerance
_CONFIDENCE = 0.95
_EFFECT_QUANTILE = 0.01  # edge effect: rho over the finite-N 99% point of rho
_DEFAULT_POLICY = ("mean", "sd", "include")
_ON_DEMAND_SEED = 20240917  # with (n, policy) it fixes the seed of an on-demand radial null sample
# Names the random stream of on-demand samples (in the cache key and metadata): "perdraw", one seed per
# draw (simulate_radial_null); files of the earlier sequential stream are not reused.
_ON_DEMAND_STREAM = "perdraw"


def _table():
    """The shipped radial table, imported on first use (so its generating script can run without it)."""
    return importlib.import_module("._radial_table", __package__)


def _combine_sides(p_less, p_greater, alternative):
    """One-sided tail probabilities -> the p-value for ``alternative`` (two-sided: 2 min, capped at 1)."""
    if alternative == "less":
        return np.minimum(p_less, 1.0)
    if alternative == "greater":
        return np.minimum(p_greater, 1.0)
    return np.minimum(2.0 * np.minimum(p_less, p_greater), 1.0)


def _combine_log_sides(log_less, log_greater, alternative):
    """:func:`_combine_sides` on the log scale."""
    if alternative == "less":
        return np.minimum(log_less, 0.0)
    if alternative == "greater":
        return np.minimum(log_greater, 0.0)
    return np.minimum(math.log(2.0) + np.minimum(log_less, log_greater), 0.0)


# --------------------------------------------------------------------------- Gaussian null, exact


def discrete_pvalue(pmf, k, alternative="two-sided"):
    """P-value of observed counts ``k`` against the law ``pmf`` of a count.

    Parameters
    ----------
    pmf : array_like
        ``pmf[j] = P(K = j)``, ``j = 0..len(pmf) - 1``.
    k : int or array_like of int
        Observed counts, ``0 <= k < len(pmf)``.
    alternative : {"two-sided", "greater", "less"}, default="two-sided"
        ``"greater"``: ``P(K >= k)``; ``"less"``: ``P(K <= k)``; ``"two-sided"``: twice the smaller of
        the two, capped at 1.

    Returns
    -------
    float or ndarray
        The p-value(s).  Each is valid: ``P(p(K) <= a) <= a`` for every level ``a`` (module docstring).

    Examples
    --------
    >>> from nullspec.calibration import discrete_pvalue
    >>> pmf = [0.25, 0.5, 0.25]
    >>> [float(discrete_pvalue(pmf, k)) for k in (0, 1, 2)]
    [0.5, 1.0, 0.5]
    >>> float(discrete_pvalue(pmf, 1, "greater"))
    0.75
    """
    pmf = np.asarray(pmf, dtype=float)
    # Each tail is summed on its own side (never 1 - the other), so small tails keep their accuracy.
    lower = np.cumsum(pmf)
    upper = np.cumsum(pmf[::-1])[::-1]
    k = np.asarray(k, dtype=int)
    p = _combine_sides(lower[k], upper[k], alternative)
    return float(p) if p.ndim == 0 else p


def real_count_calibration(k, n, alternative="two-sided"):
    """Calibrate the number of real eigenvalues against the exact real Ginibre pmf.

    Parameters
    ----------
    k : int
        Observed number of real eigenvalues.
    n : int
        Matrix size.
    alternative : {"two-sided", "greater", "less"}, default="two-sided"
        Direction (see :func:`discrete_pvalue`).

    Returns
    -------
    dict
        The fields of a :class:`nullspec.results.StatisticResult` except ``name``.  ``details`` has
        ``ratio`` = K/E_N, ``sd`` = sd_N and ``resolution``, the smallest p-value attainable at ``n``.

    Examples
    --------
    >>> from nullspec.calibration import real_count_calibration
    >>> c = real_count_calibration(4, 20)
    >>> round(c["expected"], 4), round(c["pvalue"], 3)
    (4.0011, 1.0)
    """
    pmf = real_count_pmf(n)
    mean, sd = real_count_mean(n), math.sqrt(real_count_var(n))
    attainable = discrete_pvalue(pmf, np.arange(n % 2, n + 1, 2), alternative)
    return {
        "statistic": int(k),
        "expected": mean,
        "pvalue": discrete_pvalue(pmf, k, alternative),
        "pvalue_interval": None,
        "effect_size": (k - mean) / sd,
        "effect_label": "(K - E_N) / sd_N (exact real Ginibre moments)",
        "alternative": alternative,
        "method": "exact finite-N pmf of the real count (real Ginibre); two-sided = twice the smaller tail, capped at 1",
        "null_distribution": None,
        "details": {"ratio": k / mean, "sd": sd, "resolution": float(attainable.min())},
    }


def edge_calibration(rho, n, alternative="greater"):
    """Calibrate the spectral radius rho = max |z| against the finite-N real Ginibre law.

    Parameters
    ----------
    rho : float
        Observed spectral radius in units of ``sqrt(n)`` (the bulk edge is at 1).
    n : int
        Matrix size.
    alternative : {"greater", "less", "two-sided"}, default="greater"
        ``"greater"``: ``P(rho' >= rho)``.

    Returns
    -------
    dict
        The fields of a :class:`nullspec.results.StatisticResult` except ``name``; ``expected`` is
        the null median of rho, ``details`` has the null ``q99`` and ``q95``.

    Examples
    --------
    >>> from nullspec.calibration import edge_calibration
    >>> c = edge_calibration(1.3718, 20)
    >>> round(c["pvalue"], 3)
    0.01
    """
    root = math.sqrt(n)
    p_greater = float(spectral_radius_sf(rho * root, n))
    q99 = _edge_quantile(_EFFECT_QUANTILE, int(n))
    return {
        "statistic": float(rho),
        "expected": _edge_quantile(0.5, int(n)),
        "pvalue": float(_combine_sides(1.0 - p_greater, p_greater, alternative)),
        "pvalue_interval": None,
        "effect_size": rho / q99,
        "effect_label": "rho / finite-N 99% quantile of rho",
        "alternative": alternative,
        "method": "finite-N spectral-radius law of the real Ginibre ensemble, P(rho >= r) = 1 - exp(-G*_N(r))",
        "null_distribution": None,
        "details": {"q99": q99, "q95": edge_threshold(0.05, n)},
    }


@functools.lru_cache(maxsize=256)
def _edge_quantile(p, n):
    """``spectral_radius_isf(p, n) / sqrt(n)``, memoised: a root search that tests repeat per call."""
    return float(spectral_radius_isf(p, n)) / math.sqrt(n)


def edge_threshold(alpha, n):
    """The Gaussian null's (1 - alpha) quantile of the spectral radius, in units of ``sqrt(n)``.

    Parameters
    ----------
    alpha : float
        Upper-tail probability.
    n : int
        Matrix size.

    Returns
    -------
    float
        Eigenvalues with ``|z|`` above it are the outliers at level ``alpha``.

    Examples
    --------
    >>> from nullspec.calibration import edge_threshold
    >>> round(edge_threshold(0.05, 100), 3)
    1.122
    """
    return _edge_quantile(float(alpha), int(n))


def holm_omnibus(pvalues):
    """Family-wise omnibus across marginal p-values: the smallest Holm-adjusted p-value.

    Parameters
    ----------
    pvalues : sequence of float
        Marginal p-values (none NaN).

    Returns
    -------
    tuple of (float, ndarray)
        The omnibus p-value and the Holm-adjusted p-values (in the input order).  The global null is
        rejected at ``alpha`` exactly when Holm rejects at least one hypothesis at ``alpha``, whatever
        the dependence between the statistics.

    Notes
    -----
    Holm's step-down adjustment, ``p~_(i) = max_{j <= i} min(1, (m - j + 1) p_(j))`` over the sorted
    p-values, is written out here (four lines) rather than called from statsmodels'
    ``multipletests(method="holm")``, which gives the same numbers (a test checks it) but runs a full
    ``gc.collect()`` on every call: 20-50 ms measured here, ten times the eigenvalue solve of a
    100 x 100 matrix.

    Examples
    --------
    >>> from nullspec.calibration import holm_omnibus
    >>> p, adjusted = holm_omnibus([0.01, 0.04, 0.5])
    >>> round(p, 3), [round(float(a), 3) for a in adjusted]
    (0.03, [0.03, 0.08, 0.5])
    """
    p = np.asarray(pvalues, dtype=float)
    order = np.argsort(p, kind="stable")
    stepped = np.maximum.accumulate(p[order] * np.arange(p.size, 0, -1))
    adjusted = np.empty_like(p)
    adjusted[order] = np.minimum(stepped, 1.0)
    return float(adjusted.min()), adjusted


# --------------------------------------------------------------------------- radial: table and on-demand


def _policy_kinds(center, scale, diagonal):
    """The policy as kinds: a given number becomes "given" (its null law does not depend on the value)."""
    c = center if isinstance(center, str) else "given"
    s = scale if isinstance(scale, str) else "given"
    return (c, s, diagonal)


def _in_table(n, kinds):
    """Does the shipped table cover size ``n`` under this policy?"""
    grid = _table().N_GRID
    return kinds == _DEFAULT_POLICY and grid[0] <= n <= grid[-1]


def _table_row(n, which="quantiles"):
    """Scaled null quantiles at size ``n``: interpolated linearly in log N between grid sizes."""
    grid = np.asarray(_table().N_GRID, dtype=float)
    table = np.asarray(getattr(_table(), which.upper()), dtype=float)
    n = min(max(float(n), grid[0]), grid[-1])
    return np.array([np.interp(np.log(n), np.log(grid), table[:, j]) for j in range(table.shape[1])])


def _log_tails(x, quantiles, continued=False):
    """``log P(X <= x)`` and ``log P(X >= x)`` from quantiles at the table's levels (interpolated in log p).

    Both are monotone in ``x``.  Beyond the outermost level on a tail's own side the tail is clamped at
    that level, or, with ``continued``, continued linearly in log p along the outermost segment
    (strictly monotone, for the omnibus's reference map; not a p-value there).  On the other side
    it is 0 (p = 1).
    """
    levels = np.asarray(_table().LEVELS)
    q = np.asarray(quantiles, dtype=float)
    x = np.asarray(x, dtype=float)
    log_lo, log_hi = np.log(levels), np.log1p(-levels)
    lower = np.where(x > q[-1], 0.0, np.interp(x, q, log_lo))
    upper = np.where(x < q[0], 0.0, np.interp(x, q, log_hi))
    if continued:
        lower = np.where(x < q[0], log_lo[0] + (x - q[0]) * (log_lo[1] - log_lo[0]) / (q[1] - q[0]), lower)
        upper = np.where(x > q[-1], log_hi[-1] - (x - q[-1]) * (log_hi[-2] - log_hi[-1]) / (q[-1] - q[-2]), upper)
    return lower, upper


def _table_scaled(w2, n):
    """Radial statistics in the table's units, ``N**SCALE_EXPONENT * W2``."""
    return np.asarray(w2, dtype=float) * float(n) ** _table().SCALE_EXPONENT


def _tail_from_quantiles(x, quantiles, alternative):
    """p-value of scaled statistics ``x`` from quantiles at the table's levels (interpolation in log p).

    Returns (p, bounded): ``bounded`` is True where ``x`` lies beyond the tabulated levels on the
    significant side, where ``p`` is then the bound ``1 - max level`` (or ``min level``).
    """
    x = np.asarray(x, dtype=float)
    lower, upper = _log_tails(x, quantiles)
    beyond_hi, beyond_lo = x > quantiles[-1], x < quantiles[0]
    bounded = {"greater": beyond_hi, "less": beyond_lo}.get(alternative, beyond_hi | beyond_lo)
    return _combine_sides(np.exp(lower), np.exp(upper), alternative), bounded


def radial_table_pvalue(w2, n, alternative="greater"):
    """p-value of the radial statistic from the shipped null table (default standardisation policy).

    Parameters
    ----------
    w2 : float or array_like
        Radial statistic(s) (:func:`nullspec.statistics.radial`).
    n : int
        Matrix size; outside the table's sizes the nearest tabulated size is used (as a fixed
        reference map only, see :func:`reference_pvalues`).
    alternative : {"greater", "less", "two-sided"}, default="greater"
        ``"greater"``: the moduli depart from the expected law more than under the null.

    Returns
    -------
    tuple of (ndarray, ndarray, ndarray)
        The p-values, a boolean array marking those beyond the last tabulated level (the p-value is
        then an upper bound), and a (2, ...) array with the p-values recomputed from the lower and
        upper 95% order-statistic bounds of the tabulated quantiles (the table's Monte Carlo error).

    Examples
    --------
    >>> from nullspec.calibration import radial_table_pvalue
    >>> from nullspec import _radial_table as t
    >>> q95 = t.QUANTILES[t.N_GRID.index(100)][t.LEVELS.index(0.95)] / 100 ** t.SCALE_EXPONENT
    >>> p, bounded, interval = radial_table_pvalue(q95, 100)
    >>> round(float(p), 4), bool(bounded)
    (0.05, False)
    """
    x = _table_scaled(w2, n)
    p, bounded = _tail_from_quantiles(x, _table_row(n), alternative)
    # The p-value moves monotonically with the quantiles, so recomputing it from their lower and upper
    # confidence bounds brackets the table's Monte Carlo error.
    both = np.stack([_tail_from_quantiles(x, _table_row(n, which), alternative)[0] for which in ("lower", "upper")])
    return p, bounded, np.stack([both.min(axis=0), both.max(axis=0)])


def surrogate_statistics(matrix, *, names, policy):
    """The statistics ``names`` of one matrix through the test pipeline: standardise, spectrum, statistics.

    The one definition of what a test computes on a matrix, shared by the drawn nulls of
    :mod:`nullspec.inference` and the simulated radial null (module level, so it pickles for
    process backends).

    Parameters
    ----------
    matrix : ndarray, shape (n, n)
        The matrix; not modified.
    names : sequence of str
        Statistic names (:data:`nullspec.statistics.STATISTICS`).
    policy : dict
        ``center``, ``scale`` and ``diagonal`` for :func:`nullspec.standardize.standardize`.

    Returns
    -------
    ndarray, shape (len(names),)

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.calibration import surrogate_statistics
    >>> a = np.random.default_rng(0).standard_normal((20, 20))
    >>> policy = {"center": "mean", "scale": "sd", "diagonal": "include"}
    >>> surrogate_statistics(a, names=("real_count", "edge"), policy=policy).round(3).tolist()
    [6.0, 1.001]
    """
    std = standardize(matrix, **policy)
    return statistics.evaluate(compute_spectrum(std.matrix), names)


#: The radial null's entry law: i.i.d. N(0, 1), dense draws (the default pipeline centres by the mean).
_RADIAL_NULL_MODEL = Gaussian(loc=0.0, scale=1.0, hessenberg=False)


def simulate_radial_null(n, *, center="mean", scale="sd", diagonal="include", n_reps, seed, n_jobs=None,
                         progress=None):
    """Simulate the radial statistic under i.i.d. Gaussian entries through the standard pipeline.

    Each replicate is an ``n x n`` matrix of i.i.d. N(0, 1) entries drawn by the drawn-null engine
    (:func:`nullspec.nulls.draw_null` with :class:`nullspec.nulls.Gaussian`) and run through exactly
    what a test runs (:func:`surrogate_statistics`: standardisation with the given policy, spectrum,
    :func:`nullspec.statistics.radial`).  A given center or scale (a number) is replaced by 0 or 1:
    under the null the entries have that mean and scale, so the standardised matrix has the same law.
    Replicate ``j`` is the first matrix drawn from ``default_rng(batch_seed(root, j))``
    (:func:`nullspec._rng.batch_seed`): one draw per engine batch, so the stream depends on the
    seed, ``n`` and ``j`` only -- not on ``n_jobs``, nor on how the engine sizes its batches for
    other nulls.  BLAS is held to one thread while it runs.

    Parameters
    ----------
    n : int
        Matrix size.
    center, scale, diagonal
        The standardisation policy (see :func:`nullspec.standardize.standardize`).
    n_reps : int
        Number of replicates.
    seed : int, sequence of int or numpy.random.SeedSequence
        Root seed of the engine; the same seed gives the same sample.
    n_jobs : int, optional
        Parallel workers (joblib's meaning, as in :func:`nullspec.nulls.draw_null`).
    progress : bool, optional
        Progress bar on stderr (tqdm, if installed): None shows it when stderr is a terminal.

    Returns
    -------
    ndarray
        ``n_reps`` values of the radial statistic.

    Raises
    ------
    KeyboardInterrupt
        When interrupted: a partial sample is never returned (it would be cached as the null).

    Examples
    --------
    >>> from nullspec.calibration import simulate_radial_null
    >>> w = simulate_radial_null(10, n_reps=5, seed=1, progress=False)
    >>> w.shape, bool((w > 0).all())
    ((5,), True)
    """
    policy = {"center": center if isinstance(center, str) else 0.0,
              "scale": scale if isinstance(scale, str) else 1.0, "diagonal": diagonal}
    evaluate = functools.partial(surrogate_statistics, names=("radial",), policy=policy)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", InterruptedNullWarning)  # re-raised below as the interrupt it was
        draws = draw_null(np.zeros((n, n)), _RADIAL_NULL_MODEL, evaluate, n_resamples=n_reps, rng=seed,
                          n_jobs=n_jobs, progress=progress, batch_size=1)
    if not draws.complete:
        raise KeyboardInterrupt
    return np.array(draws.values[:, 0])


def _on_demand_reps(n):
    """Draws of an on-demand radial null: 2000 up to N = 200, 1000 up to 500, then 500 (cost ~ N^3).

    500 draws resolve p-values down to 1/501 and put a 95% Monte Carlo interval of about +-0.02 around
    a p-value of 0.05.  The shipped table covers the default policy up to its largest N, so these run
    only for another policy or beyond the table, once per (N, policy).
    """
    return 2000 if n <= 200 else 1000 if n <= 500 else 500


def radial_null_sample(n, *, center="mean", scale="sd", diagonal="include", n_jobs=None, progress=None):
    """The simulated radial null sample for size ``n`` and a policy, from the on-disk cache or simulated.

    The seed is fixed by ``(n, policy)``, so the sample is the same with or without the cache and
    for any ``n_jobs``; the cache (:mod:`nullspec._cache`) only saves the time.

    Parameters
    ----------
    n : int
        Matrix size.
    center, scale, diagonal
        The standardisation policy.
    n_jobs : int, optional
        Parallel workers of a simulation (:func:`simulate_radial_null`).
    progress : bool, optional
        Progress bar on stderr while simulating (None: when stderr is a terminal).

    Returns
    -------
    tuple of (ndarray, dict)
        The sample and its provenance (``seed``, ``n_reps``, ``policy``, ``stream``).
    """
    kinds = _policy_kinds(center, scale, diagonal)
    codes = [sum(map(ord, k)) for k in kinds]
    seed = np.random.SeedSequence([_ON_DEMAND_SEED, int(n), *codes])
    reps = _on_demand_reps(n)
    meta = {"n": int(n), "policy": list(kinds), "n_reps": reps, "seed": [_ON_DEMAND_SEED, int(n), *codes],
            "stream": _ON_DEMAND_STREAM}
    key = f"radial-{_ON_DEMAND_STREAM}-n{n}-{'-'.join(kinds)}-r{reps}"

    def compute():
        return simulate_radial_null(n, center=center, scale=scale, diagonal=diagonal, n_reps=reps, seed=seed,
                                    n_jobs=n_jobs, progress=progress)

    return _cache.cached_array(key, meta, compute), meta


def radial_calibration(w2, shift, n, *, alternative="greater", center="mean", scale="sd", diagonal="include",
                       n_jobs=None, progress=None):
    """Calibrate the radial statistic under the Gaussian null (table, or cached simulation).

    Parameters
    ----------
    w2 : float
        The radial statistic (Cramer-von Mises distance of the moduli to their exact finite-N law).
    shift : float
        The signed summary (:func:`nullspec.statistics.radial_shift`), reported as the effect.
    n : int
        Matrix size.
    alternative : {"greater", "less", "two-sided"}, default="greater"
        ``"greater"``: farther from the expected law than the null.
    center, scale, diagonal
        The standardisation policy used on the data.
    n_jobs : int, optional
        Parallel workers when a null sample must be simulated (outside the table, not yet cached).
    progress : bool, optional
        Progress bar on stderr while simulating (None: when stderr is a terminal).

    Returns
    -------
    dict
        The fields of a :class:`nullspec.results.StatisticResult` except ``name``.  Beyond the last
        tabulated level the p-value is the bound (e.g. 0.001) with ``pvalue_interval = (0, bound)``.

    Examples
    --------
    >>> from nullspec.calibration import radial_calibration
    >>> c = radial_calibration(1e-6, 0.0, 50)
    >>> c["pvalue"], c["method"].startswith("shipped table")
    (1.0, True)
    """
    kinds = _policy_kinds(center, scale, diagonal)
    if _in_table(n, kinds):
        out = _radial_from_table(w2, n, alternative)
    else:
        policy = {"center": center, "scale": scale, "diagonal": diagonal}
        out = _radial_from_sample(w2, n, alternative, policy, {"n_jobs": n_jobs, "progress": progress})
    out.update(
        statistic=float(w2),
        effect_size=float(shift),
        effect_label="radial shift: mean PIT of |z| - 1/2 (< 0 concentrated, > 0 spread out)",
        alternative=alternative,
    )
    return out


def _radial_from_table(w2, n, alternative):
    """Table branch of :func:`radial_calibration`."""
    p, bounded, interval = radial_table_pvalue(w2, n, alternative)
    scale = float(n) ** -_table().SCALE_EXPONENT
    row = _table_row(n) * scale
    levels = _table().LEVELS
    method = f"shipped table of simulated Gaussian-null quantiles ({_table().SCRIPT}), interpolated in N and log p"
    interval = (float(interval[0]), float(interval[1]))
    if bool(bounded):
        interval = (0.0, float(p))
        method += f"; beyond the last tabulated level: p is the bound {float(p):g}"
    return {
        "expected": float(row[levels.index(0.5)]),
        "pvalue": float(p),
        "pvalue_interval": interval,
        "method": method,
        "null_distribution": None,
        "details": {"q99": float(row[levels.index(0.99)]), "resolution": _table_resolution(alternative)},
    }


def _table_resolution(alternative):
    """Smallest p-value the table can report for ``alternative``."""
    levels = _table().LEVELS
    tail = min(levels[0], 1 - levels[-1])
    return 2 * tail if alternative == "two-sided" else tail


def _radial_from_sample(w2, n, alternative, policy, run):
    """Simulated branch of :func:`radial_calibration` (beyond the table, or another policy)."""
    sample, meta = radial_null_sample(n, **policy, **run)
    mc = mc_calibration(np.array([w2]), sample[:, None], (alternative,))[0]
    return {
        "expected": float(np.median(sample)),
        "pvalue": mc["pvalue"],
        "pvalue_interval": mc["pvalue_interval"],
        "method": (
            f"simulated Gaussian null for this N and policy ({meta['n_reps']} draws, seed {meta['seed']}, "
            "simulated once and cached); p = (b+1)/(B+1)"
        ),
        "null_distribution": sample,
        "details": {"q99": float(np.quantile(sample, 0.99)), "resolution": 1.0 / (len(sample) + 1)},
    }


# --------------------------------------------------------------------------- drawn nulls


def _exceeds(observed, values, side):
    """Boolean array: draw at least as extreme as ``observed`` on ``side`` (scipy's tie tolerance)."""
    gamma = _TIE_EPS * np.abs(observed)
    if side == "greater":
        return values >= observed - gamma
    return values <= observed + gamma


def _counts(observed, values, alternative):
    """Exceedance counts (less, greater) of one statistic over the draws."""
    less = int(_exceeds(observed, values, "less").sum())
    greater = int(_exceeds(observed, values, "greater").sum())
    return less, greater


def mc_pvalues(observed, values, alternatives):
    """Monte Carlo p-values ``(b + 1) / (B + 1)`` of several statistics over shared null draws.

    Parameters
    ----------
    observed : array_like, shape (k,)
        The statistics on the data.
    values : array_like, shape (B, k)
        The statistics on each of ``B`` null draws.
    alternatives : sequence of str, length k
        ``"greater"``, ``"less"`` or ``"two-sided"`` per statistic.

    Returns
    -------
    ndarray, shape (k,)
        The p-values, never 0 (Phipson & Smyth 2010); two-sided = twice the smaller one-sided
        p-value, capped at 1.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.calibration import mc_pvalues
    >>> null = np.arange(99.0)[:, None]
    >>> mc_pvalues([97.5], null, ["greater"]).round(4).tolist()
    [0.02]
    """
    observed = np.asarray(observed, dtype=float)
    values = np.asarray(values, dtype=float)
    denom = values.shape[0] + 1
    out = np.empty(observed.shape[0])
    for j, alt in enumerate(alternatives):
        less, greater = _counts(observed[j], values[:, j], alt)
        out[j] = _combine_sides((less + 1) / denom, (greater + 1) / denom, alt)
    return out


def _cp_interval(count, trials, two_sided):
    """95% Clopper-Pearson interval for a tail probability (doubled and capped for two-sided)."""
    # Imported here: statsmodels (with pandas) is half of the package's import time, and only drawn
    # nulls and on-demand radial samples need this interval.
    from statsmodels.stats.proportion import proportion_confint

    lo, hi = proportion_confint(count, trials, alpha=1 - _CONFIDENCE, method="beta")
    factor = 2.0 if two_sided else 1.0
    return (min(float(lo) * factor, 1.0), min(float(hi) * factor, 1.0))


def exceedance_threshold(alpha, n_resamples, alternative):
    """The number ``h`` of exceedances after which the Besag-Clifford rule stops a statistic.

    With ``a = alpha`` (one-sided) or ``alpha / 2`` (each side of a two-sided test), ``h`` is the
    smallest integer with ``h > a B``.  Then (i) the sequential p-value ``h / l`` of a run stopped at
    the ``l``-th draw (``l <= B``) exceeds ``a``, and (ii) the fixed-``B`` p-value
    ``(b + 1) / (B + 1)`` would exceed ``a`` too, since ``b >= h > a B >= a (B + 1) - 1``: the
    decision at ``alpha`` is settled (not significant) either way.  ``a B`` is evaluated exactly
    (as fractions), so a level like 0.05 with B = 1000 gives h = 51, not 50.

    Parameters
    ----------
    alpha : float
        The level of the decision.
    n_resamples : int
        The maximal number of draws B.
    alternative : {"greater", "less", "two-sided"}
        The alternative of the statistic.

    Returns
    -------
    int

    Examples
    --------
    >>> from nullspec.calibration import exceedance_threshold
    >>> exceedance_threshold(0.05, 999, "greater"), exceedance_threshold(0.05, 1000, "greater")
    (50, 51)
    """
    level = Fraction(alpha) / (2 if alternative == "two-sided" else 1)
    return math.floor(level * n_resamples) + 1


def _sides(alternative):
    """The one-sided directions whose exceedances a statistic's p-value uses."""
    return ("less", "greater") if alternative == "two-sided" else (alternative,)


def _first_reach(hits, h):
    """1-based index of the draw at which the cumulative count of ``hits`` reaches ``h`` (None if never)."""
    if hits.sum() < h:
        return None
    return int(np.searchsorted(np.cumsum(hits), h)) + 1


def sequential_stop(observed, alternatives, *, alpha, n_resamples, reference=None):
    """The Besag-Clifford stopping rule over shared draws, as a ``stop`` callable for the engine.

    A statistic (each side of a two-sided one) is settled once ``h`` null draws
    (:func:`exceedance_threshold`) have been at least as extreme as the data: its decision at
    ``alpha`` is then "not significant" whatever the remaining draws, and its sequential p-value
    ``h / l`` (``l`` the draw of the ``h``-th exceedance) is valid (Besag & Clifford 1991).  The run
    stops when every statistic and the omnibus are settled.  There is no valid early stop on the
    significant side in this scheme: a statistic with few exceedances runs to the full ``B`` and gets
    the usual ``(b + 1) / (B + 1)``; stopping it early because its p-value looks small would make
    that p-value anti-conservative.

    Parameters
    ----------
    observed : array_like, shape (k,)
        The statistics on the data.
    alternatives : sequence of str, length k
        Their alternatives.
    alpha : float
        The level of the decision.
    n_resamples : int
        The maximal number of draws B.
    reference : callable or None
        ``reference(values) -> (rows,)`` the omnibus statistic of each row of statistics (smaller is
        more extreme), see :func:`minp_omnibus`; None when there is no omnibus.

    Returns
    -------
    callable
        ``stop(values_so_far) -> int | None``: the number ``L`` of leading draws to keep when all
        are settled (the last statistic's stopping draw), else None.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.calibration import sequential_stop
    >>> stop = sequential_stop([0.0], ["greater"], alpha=0.05, n_resamples=99)
    >>> stop(np.ones((10, 1))), stop(np.zeros((3, 1)) - 1)
    (5, None)
    """
    columns = _sequential_columns(observed, alternatives, alpha, n_resamples, reference)

    def stop(values):
        reaches = [_first_reach(hits, h) for hits, h in _column_hits(columns, values)]
        return None if any(r is None for r in reaches) else max(reaches)

    return stop


class _GrowingColumn:
    """``reference(values)`` over calls whose values extend the previous call's (the engine's calls).

    Rows already seen are not recomputed; a call whose rows do not extend the cached ones (checked on
    the last cached row) recomputes everything.
    """

    def __init__(self, reference):
        self.reference, self.last_row, self.column = reference, None, np.empty(0)

    def __call__(self, values):
        m = len(self.column)
        if len(values) < m or (m and not np.array_equal(values[m - 1], self.last_row)):
            m, self.column = 0, np.empty(0)
        if len(values) > m:
            self.column = np.concatenate([self.column, np.asarray(self.reference(values[m:]), dtype=float)])
            self.last_row = np.array(values[-1])
        return self.column


def _sequential_columns(observed, alternatives, alpha, n_resamples, reference):
    """(getter, side, observed, h) for every one-sided column the stopping rule watches."""
    observed = np.asarray(observed, dtype=float)
    cols = []
    for j, alt in enumerate(alternatives):
        h = exceedance_threshold(alpha, n_resamples, alt)
        cols += [(j, side, observed[j], h) for side in _sides(alt)]
    if reference is not None:
        t_obs = float(reference(observed[None, :])[0])
        # each draw's omnibus statistic is computed once, on the first call that sees it
        cols.append((_GrowingColumn(reference), "less", t_obs, exceedance_threshold(alpha, n_resamples, "less")))
    return cols


def _column_hits(columns, values):
    """Yield (exceedance booleans over the draws, h) for each watched column."""
    values = np.asarray(values, dtype=float)
    for getter, side, obs, h in columns:
        col = getter(values) if callable(getter) else values[:, getter]
        yield _exceeds(obs, col, side), h


def _one_pvalue(observed, column, alternative, alpha, n_max, sequential):
    """p-value, interval and count of one statistic over the kept draws (fixed-B or Besag-Clifford)."""
    n_used = column.shape[0]
    parts = []
    for side in _sides(alternative):
        hits = _exceeds(observed, column, side)
        h = exceedance_threshold(alpha, n_max, alternative)
        reach = _first_reach(hits, h) if sequential else None
        if reach is not None:
            parts.append((h / reach, h, reach))
        else:
            parts.append(((int(hits.sum()) + 1) / (n_used + 1), int(hits.sum()), n_used))
    p_side, count, trials = min(parts)
    factor = 2.0 if alternative == "two-sided" else 1.0
    return min(factor * p_side, 1.0), _cp_interval(count, trials, alternative == "two-sided"), count, trials


def mc_calibration(observed, values, alternatives, *, alpha=0.05, n_resamples=None, sequential=False):
    """Calibrate several statistics against shared null draws.

    Parameters
    ----------
    observed : array_like, shape (k,)
        The statistics on the data.
    values : array_like, shape (B, k)
        The statistics on the kept null draws.
    alternatives : sequence of str, length k
        Alternatives per statistic.
    alpha : float, default=0.05
        Level of the sequential rule (used only when ``sequential``).
    n_resamples : int or None
        The maximal number of draws the run was allowed (default: ``B``).
    sequential : bool, default=False
        True when the draws were cut by :func:`sequential_stop`: a settled statistic then gets the
        Besag-Clifford p-value ``h / l``, the others ``(b + 1) / (B + 1)``.

    Returns
    -------
    list of dict
        Per statistic, the fields of a :class:`nullspec.results.StatisticResult` except ``name`` and
        ``method`` (the caller names the null); ``details`` has the null ``sd``, ``ratio`` (to the
        null mean), ``exceedances`` and ``draws``.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.calibration import mc_calibration
    >>> null = np.random.default_rng(0).standard_normal((999, 1))
    >>> c = mc_calibration([3.0], null, ["greater"])[0]
    >>> c["pvalue"] < 0.01, round(c["effect_size"], 1)
    (True, 3.1)
    """
    observed = np.asarray(observed, dtype=float)
    values = np.asarray(values, dtype=float)
    n_max = values.shape[0] if n_resamples is None else n_resamples
    out = []
    for j, alt in enumerate(alternatives):
        column = values[:, j]
        p, interval, count, trials = _one_pvalue(observed[j], column, alt, alpha, n_max, sequential)
        mean = float(column.mean())
        sd = float(column.std(ddof=1)) if column.size > 1 else math.nan
        out.append(
            {
                "statistic": float(observed[j]),
                "expected": mean,
                "pvalue": p,
                "pvalue_interval": interval,
                "effect_size": float(observed[j] - mean) / sd if sd > 0 else math.nan,
                "effect_label": "(T - null mean) / null sd",
                "alternative": alt,
                "null_distribution": column,
                "details": {"sd": sd, "ratio": float(observed[j]) / mean if mean else math.nan,
                            "exceedances": count, "draws": trials},
            }
        )
    return out


def reference_log_pvalues(values, names, alternatives, n):
    """Fixed reference maps: the log Gaussian-null p-value of each statistic, as a function of it.

    They put the statistics on one scale for the min-p omnibus.  They are deterministic functions of
    the statistic's value; whether they are exact for the data's entry law affects only the omnibus's
    power, never its validity (:func:`minp_omnibus`).  Where the Gaussian-null calculation stops
    resolving the tail, each map continues strictly monotone, so that the omnibus still orders
    extreme values instead of tying them (a drawn null's surrogates are often far in the Gaussian
    tail too): the radial map beyond the table's outermost levels (0.001 and 0.999) continues
    linearly in log p along the table's outermost segment, and the edge map beyond
    ``spectral_radius_sf = 1e-20`` continues linearly in the radius with the slope of log sf there.
    Values there are weights, not p-values.

    Parameters
    ----------
    values : array_like, shape (rows, k)
        Statistic values (data or draws).
    names : sequence of str, length k
        Statistic names (``real_count``, ``radial``, ``edge``).
    alternatives : sequence of str, length k
        Their alternatives.
    n : int
        Matrix size.

    Returns
    -------
    ndarray, shape (rows, k)
        ``log p_ref`` (``-inf`` only where the real count's pmf underflows).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.calibration import reference_log_pvalues
    >>> np.exp(reference_log_pvalues([[4, 1.3718]], ["real_count", "edge"], ["two-sided", "greater"], 20)).round(2).tolist()
    [[1.0, 0.01]]
    >>> # beyond the edge law's resolved tail the map keeps decreasing
    >>> bool(np.diff(reference_log_pvalues([[8.0], [9.0]], ["edge"], ["greater"], 100)[:, 0])[0] < 0)
    True
    """
    values = np.atleast_2d(np.asarray(values, dtype=float))
    out = np.empty_like(values)
    for j, (name, alt) in enumerate(zip(names, alternatives)):
        out[:, j] = _REFERENCE[name](values[:, j], n, alt)
    return out


def reference_pvalues(values, names, alternatives, n):
    """The reference maps of :func:`reference_log_pvalues` on the p scale (underflows to 0 far out).

    Parameters
    ----------
    values, names, alternatives, n
        As in :func:`reference_log_pvalues`.

    Returns
    -------
    ndarray, shape (rows, k)

    Examples
    --------
    >>> from nullspec.calibration import reference_pvalues
    >>> reference_pvalues([[4, 1.3718]], ["real_count", "edge"], ["two-sided", "greater"], 20).round(2).tolist()
    [[1.0, 0.01]]
    """
    return np.exp(reference_log_pvalues(values, names, alternatives, n))


def _reference_real_count(k, n, alternative):
    with np.errstate(divide="ignore"):
        return np.log(discrete_pvalue(real_count_pmf(n), np.rint(k).astype(int), alternative))


# The edge map's tail knot: beyond the radius where spectral_radius_sf = _EDGE_KNOT_SF it continues
# linearly in the radius (G* loses accuracy below ~1e-25 and underflows near 1e-308).
_EDGE_KNOT_SF = 1e-20
_EDGE_KNOT_STEP = 1e-4


@functools.lru_cache(maxsize=256)
def _edge_knot(n):
    """Raw radius where the edge sf is _EDGE_KNOT_SF, and the slope of log sf there (negative)."""
    knot = float(spectral_radius_isf(_EDGE_KNOT_SF, n))
    inner = float(spectral_radius_sf(knot - _EDGE_KNOT_STEP, n))
    return knot, (math.log(_EDGE_KNOT_SF) - math.log(inner)) / _EDGE_KNOT_STEP


def _reference_edge(rho, n, alternative):
    r = np.asarray(rho, dtype=float) * math.sqrt(n)
    g = expected_outside(r, n, part="upper")
    knot, slope = _edge_knot(n)
    with np.errstate(divide="ignore"):
        upper = np.where(r > knot, math.log(_EDGE_KNOT_SF) + slope * (r - knot), np.log(-np.expm1(-g)))
    return _combine_log_sides(-g, upper, alternative)  # P(rho < r) = exp(-G*)


def _reference_radial(w2, n, alternative):
    x = _table_scaled(w2, n)
    return _combine_log_sides(*_log_tails(x, _table_row(n), continued=True), alternative)


_REFERENCE = {"real_count": _reference_real_count, "edge": _reference_edge, "radial": _reference_radial}


def minp_omnibus(observed, values, names, alternatives, n, *, alpha=0.05, n_resamples=None, sequential=False):
    """Single-step min-p omnibus over shared null draws.

    ``T = min_j log p_ref_j(stat_j)`` with the fixed maps of :func:`reference_log_pvalues` is computed on the
    data and on every null draw, and its p-value is ``(#{T_b <= T_obs} + 1) / (B + 1)``.  This is
    exactly valid (family-wise, across the statistics) whatever the entry law: under the null the data
    and the draws are exchangeable (exactly so for a permutation null of i.i.d. entries), and ``T`` is
    one fixed function applied to each, so the rank of ``T_obs`` among the ``T_b`` is uniform.  The
    reference maps need not be correct for the data's law; they only fix how the statistics are
    weighed against each other.

    Parameters
    ----------
    observed : array_like, shape (k,)
        The statistics on the data.
    values : array_like, shape (B, k)
        The statistics on the null draws.
    names, alternatives : sequence of str, length k
        Statistic names and alternatives.
    n : int
        Matrix size.
    alpha, n_resamples, sequential
        As in :func:`mc_calibration` (the omnibus is a one-sided column of the sequential rule).

    Returns
    -------
    dict
        ``pvalue``, ``pvalue_interval``, ``statistic`` (T on the data, a log reference p-value) and
        ``null_distribution``.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.calibration import minp_omnibus
    >>> draws = np.column_stack([np.full(99, 4.0), np.linspace(1.0, 1.3, 99)])
    >>> out = minp_omnibus([4, 1.5], draws, ["real_count", "edge"], ["two-sided", "greater"], 20)
    >>> round(out["pvalue"], 2)
    0.01
    """
    t_obs = minp_statistic(observed, names, alternatives, n)
    t_null = minp_statistic(values, names, alternatives, n)
    cal = mc_calibration(t_obs, t_null[:, None], ("less",), alpha=alpha, n_resamples=n_resamples, sequential=sequential)[0]
    return {"pvalue": cal["pvalue"], "pvalue_interval": cal["pvalue_interval"],
            "statistic": float(t_obs[0]), "null_distribution": t_null}


def minp_statistic(values, names, alternatives, n):
    """The omnibus statistic ``min_j log p_ref_j`` of each row of statistics (see :func:`minp_omnibus`).

    Parameters
    ----------
    values : array_like, shape (rows, k) or (k,)
        Statistic values.
    names, alternatives : sequence of str
        Statistic names and alternatives.
    n : int
        Matrix size.

    Returns
    -------
    ndarray, shape (rows,)

    Examples
    --------
    >>> from nullspec.calibration import minp_statistic
    >>> import numpy as np
    >>> t = minp_statistic([4, 1.3718], ["real_count", "edge"], ["two-sided", "greater"], 20)
    >>> np.exp(t).round(2).tolist()
    [0.01]
    """
    return reference_log_pvalues(values, names, alternatives, n).min(axis=1)

