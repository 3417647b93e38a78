"""scikit-learn transformers built on the spectral tests: features of many matrices, modes of one.

Both are adapters: every number comes from :mod:`nullspec.inference` (and, for the eigenvectors of
the modes, from :func:`nullspec.spectrum.outlier_vectors`, their one owner).

- :class:`SpectralFeatures` reads each row of ``X`` as one flattened N x N matrix (row-major, as
  ``A.ravel()`` gives it) and returns, per matrix, each statistic of :func:`~nullspec.inference.
  spectral_test` with its p-value and effect size, and the omnibus p-value.  Use it to feed the tests'
  outcomes to a classifier or a table.
- :class:`SignificantModes` fits on one square matrix (``X`` is N x N, scikit-learn's *pairwise*
  input), keeps the eigenvalues that the edge test finds outside the noise disk at level ``alpha``
  and embeds the N rows on their eigenvectors.

Read the features as test outcomes, with the cautions of :meth:`~nullspec.results.SpectralTestResult.
summary`: each p-value assumes the chosen null (i.i.d. entries), a p-value is not an effect size,
p-values of many matrices need a correction across them (:func:`~nullspec.inference.screen`), and a
departure from noise says nothing about the mechanism behind it.
"""

import hashlib
import math

import numpy as np
from sklearn.base import BaseEstimator, TransformerMixin
from sklearn.utils.parallel import Parallel, delayed
from sklearn.utils.validation import check_is_fitted, validate_data

from ._rng import as_seed_sequence
from ._validation import MIN_SIZE, as_square_matrix, check_flattened_square_width, check_positive_int
from .inference import _STATISTICS, _check_arguments, edge_test, spectral_test
from .spectrum import outlier_vectors
from .standardize import standardize

__all__ = ["SpectralFeatures", "SignificantModes"]

_DTYPES = [np.float64, np.float32]


def _check_input_features(estimator, input_features):
    """Refuse ``input_features`` that do not match the fitted input (scikit-learn's rule and wording)."""
    if input_features is None:
        return
    names = np.asarray(input_features, dtype=object)
    if len(names) != estimator.n_features_in_:
        raise ValueError(
            f"input_features should have length equal to n_features_in_ ({estimator.n_features_in_}); got "
            f"{len(names)} names. Pass one name per input column, or None."
        )
    fitted = getattr(estimator, "feature_names_in_", None)
    if fitted is not None and not np.array_equal(fitted, names):
        raise ValueError(
            "input_features is not equal to feature_names_in_, the column names seen in fit. Pass those "
            "names, or None."
        )


def _row_features(index, row, n, options, seed):
    """Statistic, p-value and effect of each statistic, then the omnibus p-value, for one matrix row."""
    try:
        res = spectral_test(row.reshape(n, n), **options, rng=seed, n_jobs=1, progress=False)
    except ValueError as exc:
        raise ValueError(f"row {index} of `X` cannot be tested: {exc}") from exc
    values = []
    for name in options["statistics"]:
        test = res.tests[name]
        values += [test.statistic, test.pvalue, test.effect_size]
    return values + [res.pvalue]


class SpectralFeatures(TransformerMixin, BaseEstimator):
    """Spectral-test outcomes of many matrices, one flattened N x N matrix per row of ``X``.

    For each row, :func:`nullspec.inference.spectral_test` tests the matrix ``row.reshape(N, N)``;
    the output row holds, for each statistic, its value, its p-value and its effect size, then the
    omnibus p-value (see :meth:`get_feature_names_out`).

    Parameters
    ----------
    null : {"gaussian", "auto", "permutation", "bootstrap"} or NullModel, default="gaussian"
        The null (as in :func:`~nullspec.inference.spectral_test`).  The default exact Gaussian null
        is fast and draws nothing; a drawn null costs ``n_resamples`` eigenvalue solves per matrix.
    statistics : sequence of str, default=("real_count", "radial", "edge")
        The statistics to compute (duplicates are dropped).
    n_resamples : int, default=999
        Maximal number of null draws per matrix (drawn nulls only).
    alternative : {"two-sided", "greater", "less"} or None, default=None
        As in :func:`~nullspec.inference.spectral_test` (None: each statistic's natural one).
    center, scale, diagonal
        The standardisation policy (:func:`nullspec.standardize.standardize`).
    alpha : float, default=0.05
        Level of the sequential stopping of a drawn null (and of each test's decisions).
    sequential : bool, default=True
        Stop a drawn null early once the decision at ``alpha`` is settled (Besag-Clifford); False
        draws all ``n_resamples`` (finer p-values far from ``alpha``, at a higher cost).
    n_jobs : int, optional
        Matrices tested in parallel (joblib's meaning; each test itself runs in one job).
    random_state : None, int, numpy.random.RandomState or Generator, optional
        Root seed of the drawn nulls, fixed in :meth:`fit` (None: fresh entropy at each fit).

    Attributes
    ----------
    n_features_in_ : int
        N * N.
    feature_names_in_ : ndarray of str
        Column names of a DataFrame ``X`` seen in fit.
    matrix_size_ : int
        N.
    test_options_ : dict
        The validated keyword arguments passed to :func:`~nullspec.inference.spectral_test`.
    seed_sequence_ : numpy.random.SeedSequence
        Root seed of the drawn nulls; see :meth:`seed_for`.

    Notes
    -----
    *Determinism under a drawn null.*  A permutation or bootstrap null is conditional on the matrix
    it resamples (its surrogates are made of that matrix's entries), so it cannot be drawn once in
    :meth:`fit` and shared by the matrices seen later: a pooled null would test a different
    hypothesis.  Instead each matrix gets its own null, drawn from a seed that is a pure function of
    the fitted root seed and of the matrix's values (:meth:`seed_for`).  :meth:`transform` is
    therefore deterministic, independent of the order of the rows, of which other rows are present
    and of ``n_jobs``, and the same matrix gets the same features at training and at prediction time.
    The exact Gaussian null draws nothing per matrix; its only simulated part, the radial null outside
    the shipped table, has a seed fixed by (N, policy) and is cached by :mod:`nullspec.calibration`.

    The effect sizes are on the scale of each test's ``effect_label`` (exact null moments under the
    Gaussian null, null mean and sd of the draws under a drawn null), so keep one null per model.
    Warnings about the entries or the size of the matrices (:mod:`nullspec.exceptions`) are raised
    as the tests raise them; in process-based workers (``n_jobs`` > 1 with joblib's loky backend)
    they stay in the workers.

    The output is always float64: p-values can be far below float32's range.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.transformers import SpectralFeatures
    >>> rng = np.random.default_rng(0)
    >>> noise = rng.standard_normal((2, 40, 40))
    >>> coupled = noise[1] + 0.9 * noise[1].T          # reciprocal coupling: many real eigenvalues
    >>> X = np.stack([noise[0].ravel(), coupled.ravel()])
    >>> features = SpectralFeatures(statistics=("real_count",)).fit(X)
    >>> features.get_feature_names_out().tolist()
    ['real_count', 'real_count_pvalue', 'real_count_effect', 'omnibus_pvalue']
    >>> out = features.transform(X)
    >>> bool(out[0, 1] > 0.05), bool(out[1, 1] < 0.001)
    (True, True)
    """

    def __init__(
        self,
        *,
        null="gaussian",
        statistics=_STATISTICS,
        n_resamples=999,
        alternative=None,
        center="mean",
        scale="sd",
        diagonal="include",
        alpha=0.05,
        sequential=True,
        n_jobs=None,
        random_state=None,
    ):
        self.null = null
        self.statistics = statistics
        self.n_resamples = n_resamples
        self.alternative = alternative
        self.center = center
        self.scale = scale
        self.diagonal = diagonal
        self.alpha = alpha
        self.sequential = sequential
        self.n_jobs = n_jobs
        self.random_state = random_state

    def fit(self, X, y=None):
        """Check the options and the width of ``X`` and fix the root seed.

        Parameters
        ----------
        X : array_like or DataFrame, shape (n_matrices, N * N)
            Flattened N x N matrices (row-major), N >= 3.
        y : None
            Ignored.

        Returns
        -------
        self : SpectralFeatures

        Raises
        ------
        TypeError, ValueError
            If an option is invalid, or the width of ``X`` is not N * N with N >= 3.
        """
        X = validate_data(self, X, dtype=_DTYPES)
        self.matrix_size_ = check_flattened_square_width(X.shape[1], "X")
        checked = _check_arguments(self.null, self.statistics, self.n_resamples, self.alternative, self.center,
                                   self.scale, self.diagonal, self.alpha, self.sequential)
        self.test_options_ = {
            "null": checked["null"], "statistics": checked["names"], "n_resamples": checked["n_resamples"],
            "alternative": checked["alternative"], "center": checked["center"], "scale": checked["scale"],
            "diagonal": checked["diagonal"], "alpha": checked["alpha"], "sequential": checked["sequential"],
        }
        self.seed_sequence_ = as_seed_sequence(self.random_state, name="random_state")
        return self

    def seed_for(self, matrix):
        """The seed of the drawn null used for one matrix.

        ``spectral_test(matrix, rng=features.seed_for(matrix), **features.test_options_)`` repeats
        the test behind a row of :meth:`transform`.

        Parameters
        ----------
        matrix : array_like, shape (N, N) or (N * N,)
            The matrix, square or flattened row-major.

        Returns
        -------
        numpy.random.SeedSequence
            The root seed's entropy with a spawn key extended by 128 bits of the SHA-256 digest of the
            float64 values (so the seed depends on the values alone, not on their dtype or position).

        Examples
        --------
        >>> import numpy as np
        >>> from nullspec.transformers import SpectralFeatures
        >>> X = np.random.default_rng(1).standard_normal((3, 16))
        >>> f = SpectralFeatures(random_state=0).fit(X)
        >>> f.seed_for(X[0]).entropy, len(f.seed_for(X[0]).spawn_key)
        (0, 4)
        >>> f.seed_for(X[0]).spawn_key == f.seed_for(X[0].reshape(4, 4)).spawn_key
        True
        """
        check_is_fitted(self)
        values = np.asarray(matrix, dtype=np.float64).ravel() + 0.0  # + 0.0 turns -0.0 into 0.0
        if values.size != self.n_features_in_:
            raise ValueError(
                f"`matrix` must have {self.n_features_in_} entries (N = {self.matrix_size_}); got {values.size}. "
                "Pass one matrix of the fitted size, square or flattened."
            )
        words = np.frombuffer(hashlib.sha256(values.tobytes()).digest()[:16], dtype="<u4")
        root = self.seed_sequence_
        key = (*root.spawn_key, *(int(w) for w in words))
        return np.random.SeedSequence(root.entropy, spawn_key=key, pool_size=root.pool_size)

    def transform(self, X):
        """Test each matrix and return its statistics, p-values, effect sizes and omnibus p-value.

        Parameters
        ----------
        X : array_like or DataFrame, shape (n_matrices, N * N)
            Flattened N x N matrices of the fitted size.

        Returns
        -------
        ndarray of float64, shape (n_matrices, 3 * n_statistics + 1)
            Columns named by :meth:`get_feature_names_out`.

        Raises
        ------
        ValueError
            If ``X`` has another width than in fit, or a row is not a testable matrix (e.g. constant);
            the message names the row.
        """
        check_is_fitted(self)
        X = validate_data(self, X, dtype=_DTYPES, reset=False)
        n, options = self.matrix_size_, self.test_options_
        rows = Parallel(n_jobs=self.n_jobs)(
            delayed(_row_features)(i, row, n, options, self.seed_for(row)) for i, row in enumerate(X)
        )
        return np.asarray(rows, dtype=np.float64).reshape(X.shape[0], len(self.get_feature_names_out()))

    def get_feature_names_out(self, input_features=None):
        """Names of the output columns.

        Parameters
        ----------
        input_features : array_like of str or None, default=None
            Only checked against the input seen in fit (the names do not depend on it).

        Returns
        -------
        ndarray of str (object dtype)
            For each statistic ``s``: ``s``, ``s_pvalue``, ``s_effect``; then ``omnibus_pvalue``.
        """
        check_is_fitted(self)
        _check_input_features(self, input_features)
        names = [f"{s}{suffix}" for s in self.test_options_["statistics"] for suffix in ("", "_pvalue", "_effect")]
        return np.asarray(names + ["omnibus_pvalue"], dtype=object)

    def __sklearn_tags__(self):
        tags = super().__sklearn_tags__()
        tags.transformer_tags.preserves_dtype = ["float64"]
        return tags


def _significant_modes(outliers, alpha, max_components):
    """The outliers with p <= alpha, largest first, while their columns fit under ``max_components``."""
    kept, width = [], 0
    for outlier in outliers:
        if outlier.pvalue > alpha:
            continue
        step = 1 if outlier.eigenvalue.imag == 0 else 2
        if max_components is not None and width + step > max_components:
            break
        kept.append(outlier)
        width += step
    return kept


def _mode_components(std, modes):
    """Rows ``v / mu`` (real part, then imaginary part for a complex pair) of the modes' right eigenvectors.

    ``mu`` is the mode's eigenvalue of the centred, scaled matrix ``(A - c) / sigma``, which the
    diagonal shift leaves out, so ``((A - c) / sigma) @ (v / mu) = v`` on the fitted rows.
    """
    n = std.matrix.shape[0]
    if not modes:
        return np.empty((0, n))
    eigenvalues = np.array([m.eigenvalue for m in modes]) * math.sqrt(n)  # of the standardised matrix
    right, _ = outlier_vectors(std.matrix, eigenvalues)
    weights = right / (eigenvalues + std.shift / std.scale)
    rows = []
    for j, mode in enumerate(modes):
        rows.append(weights[:, j].real)
        if mode.eigenvalue.imag != 0:
            rows.append(weights[:, j].imag)
    return np.array(rows)


class SignificantModes(TransformerMixin, BaseEstimator):
    """Embed the rows of one square matrix on the eigenvectors the edge test finds significant.

    :meth:`fit` runs :func:`nullspec.inference.edge_test` on the N x N matrix ``X`` and keeps its
    outliers (eigenvalues beyond the null's ``1 - alpha`` quantile of the spectral radius) whose
    p-value is at most ``alpha``, largest first; the test, not the user, chooses how many.
    :meth:`transform` gives each row its coordinates on those modes: one column per real eigenvalue,
    two (real and imaginary part) per complex-conjugate pair.

    Parameters
    ----------
    null : {"auto", "gaussian", "permutation", "bootstrap"} or NullModel, default="auto"
        The null of the edge test (as in :func:`~nullspec.inference.edge_test`: "auto" is the
        permutation null up to N = 400, robust to the entry law, and the exact Gaussian null above).
    n_resamples : int, default=999
        Maximal number of null draws (drawn nulls only); a mode cannot reach p < 1 / (n_resamples + 1).
    center, scale, diagonal
        The standardisation policy (:func:`nullspec.standardize.standardize`).
    alpha : float, default=0.05
        Level at which a mode is kept.
    max_components : int or None, default=None
        Largest number of output columns.  Modes are added largest first while they fit whole: a
        complex pair needs two columns and is never split, and no weaker mode replaces one that does
        not fit.
    n_jobs : int, optional
        Parallel workers for a drawn null (joblib's meaning).
    random_state : None, int, numpy.random.RandomState or Generator, optional
        Seed of a drawn null (None: fresh entropy at each fit).

    Attributes
    ----------
    n_features_in_ : int
        N.
    feature_names_in_ : ndarray of str
        Column names of a DataFrame ``X`` seen in fit.
    test_result_ : SpectralTestResult
        The edge test (its ``summary()`` is the report, with the null's assumptions and cautions).
    eigenvalues_ : ndarray of complex, shape (n_modes,)
        Scaled eigenvalues ``z`` of the kept modes (one per conjugate pair, Im >= 0), largest first.
    pvalues_ : ndarray of float, shape (n_modes,)
        Their p-values (exact for the largest, conservative for the others: see
        :class:`~nullspec.results.Outlier`).
    components_ : ndarray of float, shape (n_components_, N)
        ``transform(X) = ((X - center_) / scale_) @ components_.T``.
    n_components_ : int
        Number of output columns (0 when no mode is significant).
    center_, scale_ : float
        The centre and the entry scale of the fitted matrix (:class:`~nullspec.standardize.Standardized`).

    Notes
    -----
    *What transform means.*  Let ``C = (A - c) / sigma`` be the fitted matrix centred and scaled, and
    ``C v = mu v`` a kept mode (``v`` the unit right eigenvector with its largest entry real and
    positive).  A row ``x`` of length N, read as a row of outgoing couplings to the N fitted units, gets
    the coordinate ``((x - c) / sigma) . v / mu``: the Nystrom extension of the eigenvector.  For the
    fitted rows it returns ``v`` itself, so ``fit_transform(A)`` is the matrix of eigenvector
    components; for a new row it is the component ``v_i`` that row would have if it joined the matrix
    and coupled to it as ``x`` does.  ``diagonal="shift"`` removes a multiple of the identity, which
    leaves ``v`` unchanged and moves ``mu`` only; a mode with ``mu = 0`` has no such extension.

    Each coordinate is the share of the row in one departure from noise; it says nothing about what
    produced the mode, and a mode that is significant under the null may still be an artefact of a
    null assumption that fails (e.g. heterogeneous row scales).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.transformers import SignificantModes
    >>> rng = np.random.default_rng(0)
    >>> n = 60
    >>> u = np.zeros(n); u[:6] = 1 / np.sqrt(6)                  # a module of rows 0-5
    >>> A = rng.standard_normal((n, n)) + 4 * np.sqrt(n) * np.outer(u, u)
    >>> modes = SignificantModes(random_state=0).fit(A)       # permutation null (N <= 400)
    >>> modes.n_components_, modes.get_feature_names_out().tolist()
    (1, ['mode0'])
    >>> coords = modes.transform(A)[:, 0]
    >>> sorted(np.argsort(-np.abs(coords))[:6].tolist())
    [0, 1, 2, 3, 4, 5]
    """

    def __init__(
        self,
        *,
        null="auto",
        n_resamples=999,
        center="mean",
        scale="sd",
        diagonal="include",
        alpha=0.05,
        max_components=None,
        n_jobs=None,
        random_state=None,
    ):
        self.null = null
        self.n_resamples = n_resamples
        self.center = center
        self.scale = scale
        self.diagonal = diagonal
        self.alpha = alpha
        self.max_components = max_components
        self.n_jobs = n_jobs
        self.random_state = random_state

    def fit(self, X, y=None):
        """Run the edge test on ``X`` and keep its significant modes.

        Parameters
        ----------
        X : array_like or DataFrame, shape (N, N)
            Real, finite, square matrix, N >= 3, not constant.
        y : None
            Ignored.

        Returns
        -------
        self : SignificantModes

        Raises
        ------
        TypeError, ValueError
            If ``X`` or an option is invalid.
        """
        X = validate_data(self, X, dtype=_DTYPES, ensure_min_samples=MIN_SIZE)
        matrix, _, _ = as_square_matrix(X, "X")
        cap = None if self.max_components is None else check_positive_int(self.max_components, "max_components")
        policy = {"center": self.center, "scale": self.scale, "diagonal": self.diagonal}
        self.test_result_ = edge_test(matrix, null=self.null, n_resamples=self.n_resamples, alpha=self.alpha,
                                      rng=as_seed_sequence(self.random_state, name="random_state"), n_jobs=self.n_jobs, progress=False,
                                      **policy)
        std = standardize(matrix, **policy)
        modes = _significant_modes(self.test_result_.outliers, self.test_result_.alpha, cap)
        self.eigenvalues_ = np.array([m.eigenvalue for m in modes], dtype=complex)
        self.pvalues_ = np.array([m.pvalue for m in modes], dtype=float)
        self.components_ = _mode_components(std, modes)
        self.n_components_ = self.components_.shape[0]
        self.center_, self.scale_ = std.center, std.scale
        return self

    def transform(self, X):
        """Coordinates of the rows of ``X`` on the fitted modes.

        Parameters
        ----------
        X : array_like or DataFrame, shape (n_rows, N)
            Rows of couplings to the N fitted units; the fitted matrix itself gives its eigenvectors.

        Returns
        -------
        ndarray, shape (n_rows, n_components_)
            In the dtype of ``X`` (float64 or float32); see the class Notes.
        """
        check_is_fitted(self)
        X = validate_data(self, X, dtype=_DTYPES, reset=False)
        coords = ((np.asarray(X, dtype=np.float64) - self.center_) / self.scale_) @ self.components_.T
        return coords.astype(X.dtype, copy=False)

    def get_feature_names_out(self, input_features=None):
        """Names of the output columns.

        Parameters
        ----------
        input_features : array_like of str or None, default=None
            Only checked against the input seen in fit.

        Returns
        -------
        ndarray of str (object dtype)
            ``mode<k>`` for a real eigenvalue, ``mode<k>_re`` and ``mode<k>_im`` for a complex pair,
            ``k`` counting the kept modes from 0, largest first.
        """
        check_is_fitted(self)
        _check_input_features(self, input_features)
        names = []
        for k, z in enumerate(self.eigenvalues_):
            names += [f"mode{k}"] if z.imag == 0 else [f"mode{k}_re", f"mode{k}_im"]
        return np.asarray(names, dtype=object)

    def __sklearn_tags__(self):
        tags = super().__sklearn_tags__()
        tags.input_tags.pairwise = True
        tags.transformer_tags.preserves_dtype = ["float64", "float32"]
        return tags
