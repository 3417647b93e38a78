"""The spectral tests: validate, standardise, compute the spectrum once, calibrate, report.

:func:`spectral_test` wires the layers in one direction and computes nothing of its own:
``_validation`` -> ``standardize`` -> ``spectrum`` -> ``statistics`` -> ``calibration`` (exact
Gaussian formulas and table, or a drawn null through :func:`nullspec.nulls.draw_null`) ->
``results``.  :func:`real_count_test`, :func:`radial_test` and :func:`edge_test` test one statistic
each; :func:`screen` tests many matrices and corrects across them.

Choosing the null (``null=``):

- ``"auto"`` (default): the permutation null (all entries exchangeable; off-diagonal entries only
  when ``diagonal="shift"``), which is exact under i.i.d. entries whatever their law, when
  N <= 400, where it is affordable; the exact Gaussian null above (THEORY.md section 8: the
  Gaussian null is adequate there for continuous entries).  The result says which and why.
- ``"gaussian"``: exact finite-N real Ginibre results (real count, spectral radius) and the shipped
  radial table, with no simulation at call time.
- ``"permutation"``, ``"bootstrap"`` or a null model object (:mod:`nullspec.nulls`): drawn nulls,
  with the min-p omnibus on the shared draws.
"""

import functools
import math
import warnings

import numpy as np

from . import _diagnostics, calibration, statistics
from ._rng import as_seed_sequence
from ._validation import (
    as_square_matrix,
    check_alternative,
    check_bool,
    check_names,
    check_null_name,
    check_option,
    check_option_or_real,
    check_positive_int,
    check_probability,
)
from .exceptions import ResolutionWarning
from .nulls import Gaussian, NullModel, Permutation, draw_null, resolve_null
from .results import Outlier, ScreenResult, SpectralTestResult, StatisticResult
from .spectrum import compute_spectrum, outlier_vectors
from .standardize import CENTERS, DIAGONALS, SCALES, standardize

__all__ = ["spectral_test", "real_count_test", "radial_test", "edge_test", "screen", "AUTO_PERMUTATION_MAX_N"]

#: ``null="auto"`` uses the permutation null up to this N and the exact Gaussian null above.
AUTO_PERMUTATION_MAX_N = 400
_STATISTICS = ("real_count", "radial", "edge")
_NULL_STRINGS = ("auto", "gaussian", "permutation", "bootstrap")
_FDR = {"bh": "fdr_bh", "holm": "holm"}
_GAUSSIAN_DESCRIPTION = (
    "the entries are i.i.d. normal with a common mean and scale (after standardisation: the real "
    "Ginibre ensemble)."
)


def _check_arguments(null, statistics_, n_resamples, alternative, center, scale, diagonal, alpha, sequential):
    """Validate every option (the matrix is validated separately); return the normalised values."""
    if not isinstance(null, NullModel):
        check_null_name(null, _NULL_STRINGS)
    names = check_names(statistics_, "statistics", _STATISTICS)
    return {
        "null": null,
        "names": tuple(dict.fromkeys(names)),
        "n_resamples": check_positive_int(n_resamples, "n_resamples"),
        "alternative": check_alternative(alternative, allow_none=True),
        "center": check_option_or_real(center, "center", CENTERS),
        "scale": check_option_or_real(scale, "scale", SCALES, positive=True),
        "diagonal": check_option(diagonal, "diagonal", DIAGONALS),
        "alpha": check_probability(alpha, "alpha"),
        "sequential": check_bool(sequential, "sequential"),
    }


def _choose_null(null, n, diagonal):
    """(model or None for the exact Gaussian null, name, description, reason)."""
    if isinstance(null, NullModel):
        return null, null.name, null.description, "requested: a null model object was passed"
    if null == "gaussian":
        return None, "gaussian", _GAUSSIAN_DESCRIPTION, "requested (null='gaussian'): exact finite-N results"
    if null == "auto" and n > AUTO_PERMUTATION_MAX_N:
        reason = (
            f"null='auto': N = {n} > {AUTO_PERMUTATION_MAX_N}, where a permutation null is costly; the exact "
            "Gaussian null is used (adequate at this size for continuous entries; pass null='permutation' "
            "for discrete, sparse or heavy-tailed entries)"
        )
        return None, "gaussian", _GAUSSIAN_DESCRIPTION, reason
    if null == "bootstrap":
        model = resolve_null("bootstrap")
        return model, model.name, model.description, "requested (null='bootstrap')"
    model = Permutation("offdiagonal" if diagonal == "shift" else "all")
    if null == "auto":
        reason = (
            f"null='auto': N = {n} <= {AUTO_PERMUTATION_MAX_N}, so the permutation null is affordable; it is "
            "exact under i.i.d. entries whatever their law"
        )
    else:
        reason = "requested (null='permutation')"
    if diagonal == "shift":
        reason += "; diagonal='shift' keeps the diagonal in place"
    return model, model.name, model.description, reason


def _alternatives(names, alternative):
    """Each statistic's alternative: the one given, or its natural one."""
    return tuple(alternative or calibration.NATURAL_ALTERNATIVE[name] for name in names)


def _policy(opts):
    return {"center": opts["center"], "scale": opts["scale"], "diagonal": opts["diagonal"]}


# --------------------------------------------------------------------------- the exact Gaussian null


def _gaussian_tests(spec, names, alts, policy, run):
    """StatisticResults of the exact Gaussian null, and the Holm omnibus over them.

    ``run`` (``n_jobs``, ``progress``) reaches the radial calibration, which simulates its null
    sample when the table does not cover this N and policy.
    """
    n = spec.n
    cals = {}
    for name, alt in zip(names, alts):
        if name == "real_count":
            cals[name] = calibration.real_count_calibration(statistics.real_count(spec), n, alt)
        elif name == "edge":
            cals[name] = calibration.edge_calibration(statistics.edge(spec), n, alt)
        else:
            shift = statistics.radial_shift(spec)
            cals[name] = calibration.radial_calibration(statistics.radial(spec), shift, n, alternative=alt, **policy,
                                                        **run)
            cals[name]["details"] = {**cals[name]["details"], "radial_shift": shift}
    pvalue, adjusted = calibration.holm_omnibus([cals[name]["pvalue"] for name in names])
    tests = {}
    for name, holm in zip(names, adjusted):
        cal = cals[name]
        cal["details"] = {**cal["details"], "pvalue_holm": float(holm)}
        tests[name] = StatisticResult(name=name, **cal)
    method = f"Holm's step-down adjustment across the {len(names)} marginal p-values (the smallest adjusted one)"
    return tests, pvalue, method


def _gaussian_outliers(std, spec, alpha, labels):
    """Outliers beyond the exact (1 - alpha) quantile of the spectral radius."""
    threshold = calibration.edge_threshold(alpha, spec.n)

    def pvalue(modulus):
        return calibration.edge_calibration(modulus, spec.n)["pvalue"]

    return _outliers(std, spec, threshold, pvalue, labels)


def _outliers(std, spec, threshold, pvalue, labels):
    """One Outlier per conjugate pair (Im >= 0) with |z| > threshold, largest first."""
    moduli = spec.moduli
    picked = np.flatnonzero((moduli > threshold) & (spec.z.imag >= 0))
    picked = picked[np.argsort(-moduli[picked], kind="stable")]
    if picked.size == 0:
        return ()
    right, left = outlier_vectors(std.matrix, spec.eigenvalues[picked])
    return tuple(
        Outlier.from_vectors(spec.z[i], moduli[i] / threshold, pvalue(moduli[i]), right[:, j], left[:, j], *labels)
        for j, i in enumerate(picked)
    )


def _resolution_warnings(tests, alpha, stacklevel):
    """Warn when alpha is below the smallest p-value an exact or tabulated calibration can give."""
    messages = []
    for result in tests.values():
        floor = result.details.get("resolution")
        if floor is not None and floor > alpha:
            message = (
                f"alpha = {alpha:g} is below {floor:.3g}, the smallest p-value the {result.name} calibration "
                f"can give at this size ({result.method}), so {result.name} cannot be significant at this level."
            )
            warnings.warn(message, ResolutionWarning, stacklevel=stacklevel + 1)
            messages.append(message)
    return tuple(messages)


# --------------------------------------------------------------------------- drawn nulls


def _run_draws(matrix, model, names, observed, alts, opts, rng, n_jobs, progress):
    """Draw the null (Besag-Clifford stopping when sequential); returns the NullDraws."""
    k = len(alts)
    n = matrix.shape[0]

    def reference(values):
        return calibration.minp_statistic(values[:, :k], names[:k], alts, n)

    stop = None
    if opts["sequential"]:
        stop = calibration.sequential_stop(
            observed[:k], alts, alpha=opts["alpha"], n_resamples=opts["n_resamples"], reference=reference
        )
    evaluate = functools.partial(calibration.surrogate_statistics, names=names, policy=_policy(opts))
    return draw_null(matrix, model, evaluate, n_resamples=opts["n_resamples"], rng=rng, n_jobs=n_jobs,
                     progress=progress, stop=stop)


def _drawn_tests(spec, observed, values, names, alts, opts, method):
    """StatisticResults and the min-p omnibus on the kept draws."""
    k, n = len(alts), spec.n
    settings = {"alpha": opts["alpha"], "n_resamples": opts["n_resamples"], "sequential": opts["sequential"]}
    cals = calibration.mc_calibration(observed[:k], values[:, :k], alts, **settings)
    for name, cal in zip(names, cals):
        if name == "radial":  # the signed direction, as under the Gaussian null
            cal["details"] = {**cal["details"], "radial_shift": statistics.radial_shift(spec)}
    tests = {name: StatisticResult(name=name, method=method, **cal) for name, cal in zip(names, cals)}
    omni = calibration.minp_omnibus(observed[:k], values[:, :k], names[:k], alts, n, **settings)
    omnibus_method = (
        "single-step min-p over the statistics on the same draws (reference maps: the Gaussian-null "
        "p-values, tails continued where unresolved), p = (b+1)/(B+1)"
    )
    return tests, omni["pvalue"], omnibus_method


def _drawn_method(model, draws, opts):
    """Method text for a drawn-null p-value."""
    rule = "Besag-Clifford sequential stopping (h/l when settled, else (b+1)/(B+1))" if opts["sequential"] \
        else "p = (b+1)/(B+1)"
    return f"{model!r} null, {draws.n_used} of at most {opts['n_resamples']} draws; {rule}"


def _drawn_outliers(std, spec, edge_null, alpha, labels):
    """Outliers beyond the drawn null's (1 - alpha) quantile of the spectral radius."""
    threshold = float(np.quantile(edge_null, 1.0 - alpha))

    def pvalue(modulus):
        return float(calibration.mc_pvalues([modulus], edge_null[:, None], ("greater",))[0])

    return _outliers(std, spec, threshold, pvalue, labels)


# --------------------------------------------------------------------------- assembly


def _standardization(std):
    return {**std.policy, "center_value": std.center, "scale_value": std.scale, "shift": std.shift}


def _reciprocity(matrix):
    return {"value": statistics.reciprocity(matrix), "interval": statistics.reciprocity_interval(matrix)}


def _gaussian_branch(std, spec, names, alts, opts, run, labels, stacklevel):
    """Tests, omnibus and outliers under the exact Gaussian null (``run`` = (n_jobs, progress))."""
    tests, pvalue, omnibus_method = _gaussian_tests(spec, names, alts, _policy(opts),
                                                    {"n_jobs": run[0], "progress": run[1]})
    return {
        "tests": tests, "pvalue": pvalue, "omnibus_method": omnibus_method,
        "outliers": _gaussian_outliers(std, spec, opts["alpha"], labels),
        "n_resamples": None, "entropy": None,
        "warnings": _resolution_warnings(tests, opts["alpha"], stacklevel + 1),
    }


def _drawn_branch(matrix, std, spec, model, names, alts, opts, run, labels, stacklevel):
    """Tests, omnibus and outliers under a drawn null (``run`` = (rng, n_jobs, progress))."""
    messages = _diagnostics.warn_if_unresolvable(opts["alpha"], opts["n_resamples"], stacklevel=stacklevel + 1)
    eval_names = names + (() if "edge" in names else ("edge",))  # edge is always drawn: the outliers need it
    observed = statistics.evaluate(spec, eval_names)
    draws = _run_draws(matrix, model, eval_names, observed, alts, opts, *run)
    values = draws.values[: draws.n_used]
    tests, pvalue, omnibus_method = _drawn_tests(spec, observed, values, names, alts, opts,
                                                 _drawn_method(model, draws, opts))
    if not draws.complete:
        messages += (f"the null was interrupted after {draws.n_used} draws; the p-values rest on those",)
    return {
        "tests": tests, "pvalue": pvalue, "omnibus_method": omnibus_method,
        "outliers": _drawn_outliers(std, spec, values[:, eval_names.index("edge")], opts["alpha"], labels),
        "n_resamples": draws.n_used, "entropy": draws.entropy, "warnings": messages,
    }


def _run(A, opts, rng, n_jobs, progress, stacklevel):
    """The whole test of one matrix (``stacklevel`` points warnings at the user's call)."""
    matrix, rows, cols = as_square_matrix(A, "A")
    n = matrix.shape[0]
    std = standardize(matrix, **_policy(opts))
    spec = compute_spectrum(std.matrix)
    names, alts = opts["names"], _alternatives(opts["names"], opts["alternative"])
    model, null_name, description, reason = _choose_null(opts["null"], n, opts["diagonal"])
    messages = _diagnostics.warn_if_small(n, stacklevel=stacklevel + 1)
    if model is None or isinstance(model, Gaussian):
        messages += _diagnostics.gaussian_null_warnings(matrix, statistics=names, diagonal=opts["diagonal"],
                                                        stacklevel=stacklevel + 1)
    if model is None:
        branch = _gaussian_branch(std, spec, names, alts, opts, (n_jobs, progress), (rows, cols), stacklevel + 1)
    else:
        branch = _drawn_branch(matrix, std, spec, model, names, alts, opts, (rng, n_jobs, progress), (rows, cols),
                               stacklevel + 1)
    branch["warnings"] = messages + branch["warnings"]
    return SpectralTestResult(
        **branch, alpha=opts["alpha"], significant=bool(branch["pvalue"] <= opts["alpha"]), n=n, null=null_name,
        null_description=description, null_reason=reason, standardization=_standardization(std),
        reciprocity=_reciprocity(matrix), labels={"rows": rows, "columns": cols}, eigenvalues=spec.z,
    )


def spectral_test(
    A,
    *,
    null="auto",
    statistics=_STATISTICS,
    n_resamples=999,
    alternative=None,
    center="mean",
    scale="sd",
    diagonal="include",
    alpha=0.05,
    rng=None,
    n_jobs=None,
    progress=None,
    sequential=True,
):
    """Test whether the spectrum of a real square matrix departs from that of i.i.d. noise.

    Parameters
    ----------
    A : array_like, pandas.DataFrame, numpy.matrix or nullspec.io.MatrixFile, shape (N, N)
        Real, finite, square matrix, N >= 3, not constant; never modified.  A DataFrame's index and
        columns, or a MatrixFile's labels (any object with ``values``, ``row_labels`` and
        ``col_labels``), label the outliers' rows and columns.
    null : {"auto", "gaussian", "permutation", "bootstrap"} or NullModel, default="auto"
        The null hypothesis (module docstring): "auto" is the permutation null for N <= 400 and the
        exact Gaussian null above.
    statistics : sequence of str, default=("real_count", "radial", "edge")
        The statistics to test.
    n_resamples : int, default=999
        Maximal number of null draws (drawn nulls only).
    alternative : {"two-sided", "greater", "less"} or None, default=None
        None takes each statistic's natural alternative: two-sided for ``real_count``, greater for
        ``radial`` and ``edge``.
    center, scale, diagonal
        The standardisation policy (:func:`nullspec.standardize.standardize`).
    alpha : float, default=0.05
        Level of the omnibus decision, of the outliers' threshold and of sequential stopping.
    rng : None, int, SeedSequence or Generator, optional
        Seed of a drawn null (same seed, same numbers, for any ``n_jobs``).
    n_jobs : int, optional
        Parallel workers for a drawn null, or for the one-off simulation of a radial null sample that
        the shipped table does not cover (a non-default policy, or N beyond the table) (joblib's
        meaning).
    progress : bool, optional
        Progress bar on stderr for a drawn null or that simulation (None: when stderr is a terminal).
    sequential : bool, default=True
        Stop a drawn null early by the Besag-Clifford rule once no statistic can be significant at
        ``alpha`` (:func:`nullspec.calibration.sequential_stop`); False runs all ``n_resamples``.

    Returns
    -------
    SpectralTestResult
        Per-statistic p-values and effect sizes, the omnibus, the outliers with their rows and
        columns, the null used and why, and the warnings.

    Raises
    ------
    TypeError, ValueError
        If ``A`` or an option is invalid (the message names the argument and the fix).

    Warns
    -----
    SmallMatrixWarning, NonGaussianEntriesWarning, ResolutionWarning
        Small N; entries that look discrete, sparse, skewed or heavy-tailed under the Gaussian null;
        ``alpha`` below what the null can resolve.

    Examples
    --------
    >>> import numpy as np
    >>> import nullspec.inference as inf
    >>> rng = np.random.default_rng(0)
    >>> noise = rng.standard_normal((60, 60))
    >>> res = inf.spectral_test(noise, null="gaussian")
    >>> res.null, sorted(res.tests), res.significant
    ('gaussian', ['edge', 'radial', 'real_count'], False)
    >>> u = np.zeros(60); u[:5] = 1 / np.sqrt(5)
    >>> planted = noise + 2.0 * np.sqrt(60) * np.outer(u, u)   # a rank-one signal
    >>> res = inf.spectral_test(planted, null="gaussian")
    >>> bool(res.tests["edge"].pvalue < 1e-6), len(res.outliers) >= 1
    (True, True)
    """
    opts = _check_arguments(null, statistics, n_resamples, alternative, center, scale, diagonal, alpha, sequential)
    return _run(A, opts, rng, n_jobs, progress, stacklevel=2)


def _single(name, A, opts):
    """Shared body of the one-statistic tests (``opts``: their keyword arguments)."""
    checked = _check_arguments(opts["null"], (name,), opts["n_resamples"], opts["alternative"], opts["center"],
                               opts["scale"], opts["diagonal"], opts["alpha"], opts["sequential"])
    return _run(A, checked, opts["rng"], opts["n_jobs"], opts["progress"], stacklevel=3)


def real_count_test(A, *, null="auto", n_resamples=999, alternative=None, center="mean", scale="sd", diagonal="include",
                alpha=0.05, rng=None, n_jobs=None, progress=None, sequential=True):
    """Test the number of real eigenvalues alone (reciprocal or antagonistic coupling).

    Parameters
    ----------
    A : array_like, shape (N, N)
        The matrix (as in :func:`spectral_test`).
    null, n_resamples, alternative, center, scale, diagonal, alpha, rng, n_jobs, progress, sequential
        As in :func:`spectral_test`.

    Returns
    -------
    SpectralTestResult
        With ``tests == {"real_count": ...}``; the omnibus is that p-value.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.inference import real_count_test
    >>> g = np.random.default_rng(1).standard_normal((80, 80))
    >>> res = real_count_test(g + 0.8 * g.T, null="gaussian")   # reciprocal coupling
    >>> res.tests["real_count"].pvalue < 0.01
    True
    """
    return _single("real_count", A, locals())  # locals(): the keyword options above, by name


def radial_test(A, *, null="auto", n_resamples=999, alternative=None, center="mean", scale="sd", diagonal="include",
                alpha=0.05, rng=None, n_jobs=None, progress=None, sequential=True):
    """Test the radial profile of the eigenvalues alone (heterogeneous scales, heavy tails).

    Parameters
    ----------
    A : array_like, shape (N, N)
        The matrix (as in :func:`spectral_test`).
    null, n_resamples, alternative, center, scale, diagonal, alpha, rng, n_jobs, progress, sequential
        As in :func:`spectral_test`.

    Returns
    -------
    SpectralTestResult
        With ``tests == {"radial": ...}``.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.inference import radial_test
    >>> g = np.random.default_rng(2).standard_normal((100, 100))
    >>> rows = np.where(np.arange(100) < 20, 4.0, 1.0)[:, None]   # 20 rows four times as noisy
    >>> res = radial_test(rows * g, null="permutation", n_resamples=199, rng=0)
    >>> res.tests["radial"].pvalue < 0.01, res.n_resamples
    (True, 199)
    """
    return _single("radial", A, locals())  # locals(): the keyword options above, by name


def edge_test(A, *, null="auto", n_resamples=999, alternative=None, center="mean", scale="sd", diagonal="include",
                alpha=0.05, rng=None, n_jobs=None, progress=None, sequential=True):
    """Test the spectral radius alone (a low-rank signal, modules, a common mean).

    Parameters
    ----------
    A : array_like, shape (N, N)
        The matrix (as in :func:`spectral_test`).
    null, n_resamples, alternative, center, scale, diagonal, alpha, rng, n_jobs, progress, sequential
        As in :func:`spectral_test`.

    Returns
    -------
    SpectralTestResult
        With ``tests == {"edge": ...}`` and the outliers.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.inference import edge_test
    >>> g = np.random.default_rng(3).standard_normal((50, 50))
    >>> round(edge_test(g, null="gaussian").tests["edge"].pvalue, 2)
    0.35
    """
    return _single("edge", A, locals())  # locals(): the keyword options above, by name


def _screen_row(index, name, res):
    row = {"index": index, "name": name, "n": res.n, "null": res.null, "pvalue": res.pvalue}
    for stat, r in res.tests.items():
        row[f"p_{stat}"] = r.pvalue
        row[f"effect_{stat}"] = r.effect_size
    row["n_outliers"] = len(res.outliers)
    return row


def screen(
    matrices,
    *,
    fdr="bh",
    null="auto",
    statistics=_STATISTICS,
    n_resamples=999,
    alternative=None,
    center="mean",
    scale="sd",
    diagonal="include",
    alpha=0.05,
    rng=None,
    n_jobs=None,
    progress=None,
    sequential=True,
):
    """Test many matrices and correct their omnibus p-values across matrices.

    Parameters
    ----------
    matrices : sequence of array_like, or mapping of name -> array_like
        The matrices (sizes may differ), each anything :func:`spectral_test` accepts (a
        :class:`nullspec.io.MatrixFile` keeps its labels).
    fdr : {"bh", "holm"}, default="bh"
        Benjamini-Hochberg (false discovery rate) or Holm (family-wise error) across the matrices,
        through statsmodels ``multipletests`` with the method given explicitly.
    null, statistics, n_resamples, alternative, center, scale, diagonal, n_jobs, progress, sequential
        As in :func:`spectral_test`, for every matrix.
    alpha : float, default=0.05
        Level of the correction (and of each test's own decisions).
    rng : None, int, SeedSequence or Generator, optional
        Root seed: matrix ``i`` gets the ``i``-th spawned child, so each row is reproducible.

    Returns
    -------
    ScreenResult
        One row per matrix (``rows``), the full results, and ``to_dict()``.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.inference import screen
    >>> rng = np.random.default_rng(4)
    >>> mats = {"noise": rng.standard_normal((40, 40)), "coupled": rng.standard_normal((40, 40))}
    >>> mats["coupled"] = mats["coupled"] + 0.9 * mats["coupled"].T
    >>> out = screen(mats, null="gaussian")
    >>> [(r["name"], r["significant"]) for r in out.rows]
    [('noise', False), ('coupled', True)]
    """
    method = _FDR[check_option(fdr, "fdr", tuple(_FDR))]
    opts = _check_arguments(null, statistics, n_resamples, alternative, center, scale, diagonal, alpha, sequential)
    items = _screen_items(matrices)
    seeds = as_seed_sequence(rng).spawn(len(items))
    results = [_run(a, opts, seed, n_jobs, progress, stacklevel=2) for (_, a), seed in zip(items, seeds)]
    adjusted, reject = _adjust(np.array([r.pvalue for r in results]), opts["alpha"], method)
    rows = [{**_screen_row(i, name, r), "pvalue_adjusted": float(adj), "significant": bool(rej)}
            for i, ((name, _), r, adj, rej) in enumerate(zip(items, results, adjusted, reject))]
    return ScreenResult(rows=rows, fdr=fdr, alpha=opts["alpha"], results=results)


def _screen_items(matrices):
    """(name, matrix) pairs: the mapping's items, or (index, matrix)."""
    items = list(matrices.items()) if hasattr(matrices, "items") else list(enumerate(matrices))
    if not items:
        raise ValueError("`matrices` must hold at least one matrix; got an empty collection. Pass one or more.")
    return items


def _adjust(pvalues, alpha, method):
    """Adjusted p-values and rejections across matrices; NaN p-values (if any) are left out, never passed in."""
    from statsmodels.stats.multitest import multipletests  # here: statsmodels is slow to import, screen() alone uses it

    adjusted = np.full(pvalues.shape, np.nan)
    reject = np.zeros(pvalues.shape, dtype=bool)
    finite = np.isfinite(pvalues)
    if finite.any():
        reject[finite], adjusted[finite] = multipletests(pvalues[finite], alpha=alpha, method=method)[:2]
    return adjusted, reject
