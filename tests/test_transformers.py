"""scikit-learn transformers: estimator checks, what the inapplicable checks cover re-tested on square
data, agreement with the inference layer, Pipeline/GridSearchCV, and planted signals."""

import pickle

import numpy as np
import pytest
import scipy.linalg
from joblib import parallel_config
from sklearn.base import clone
from sklearn.exceptions import NotFittedError
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import GridSearchCV, KFold
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from sklearn.utils.estimator_checks import parametrize_with_checks

from nullspec.exceptions import NonGaussianEntriesWarning
from nullspec.inference import spectral_test
from nullspec.transformers import SignificantModes, SpectralFeatures

pd = pytest.importorskip("pandas")

N = 12  # matrices of the SpectralFeatures tests: N >= 10 avoids the small-matrix warning
FAST = {"null": "permutation", "n_resamples": 49, "random_state": 0}  # a cheap drawn null

# --------------------------------------------------------------------------- scikit-learn's own checks

# SignificantModes takes one square matrix (pairwise input), so every check applies.
@parametrize_with_checks([SignificantModes()])
def test_significant_modes_sklearn_checks(estimator, check):
    check(estimator)


_WIDTH = (
    "feeds X with {}; a row must be a flattened N x N matrix (N * N columns, N >= 3), so fit "
    "raises the width error. Re-tested on square data: {}."
)
XFAILS = {
    "check_fit_score_takes_y": _WIDTH.format("3 columns", "test_fit_accepts_y_and_returns_self"),
    "check_estimators_overwrite_params": _WIDTH.format("2 columns", "test_fit_leaves_parameters_alone"),
    "check_dont_overwrite_parameters": _WIDTH.format("3 columns", "test_fit_leaves_parameters_alone"),
    "check_estimators_fit_returns_self": _WIDTH.format("2 columns", "test_fit_accepts_y_and_returns_self"),
    "check_readonly_memmap_input": _WIDTH.format("2 columns", "test_read_only_and_memmap_input"),
    "check_n_features_in_after_fitting": _WIDTH.format("4 columns (N = 2)", "test_width_mismatch_in_transform"),
    "check_positive_only_tag_during_fit": _WIDTH.format("3 columns", "every square-data test uses negative entries"),
    "check_estimators_dtypes": _WIDTH.format("5 columns", "test_dtypes"),
    "check_dtype_object": _WIDTH.format("10 columns", "test_dtypes"),
    "check_pipeline_consistency": _WIDTH.format("3 columns", "test_pipeline_and_grid_search"),
    "check_estimators_nan_inf": _WIDTH.format("3 columns", "test_non_finite_input"),
    "check_estimators_pickle": _WIDTH.format("3 columns", "test_clone_and_pickle_round_trips"),
    "check_f_contiguous_array_estimator": _WIDTH.format("3 columns", "test_layouts_and_containers"),
    "check_transformer_data_not_an_array": _WIDTH.format("3 columns", "test_layouts_and_containers"),
    "check_transformer_general": _WIDTH.format("3 columns", "test_fit_transform_equals_fit_then_transform"),
    "check_transformer_preserve_dtypes": _WIDTH.format("3 columns", "test_dtypes"),
    "check_methods_sample_order_invariance": _WIDTH.format("3 columns", "test_row_order_subset_and_n_jobs_invariance"),
    "check_methods_subset_invariance": _WIDTH.format("3 columns", "test_row_order_subset_and_n_jobs_invariance"),
    "check_fit2d_1sample": _WIDTH.format("10 columns", "test_single_matrix"),
    "check_fit2d_1feature": _WIDTH.format("1 column", "test_width_errors (the message names the width rule)"),
    "check_dict_unchanged": _WIDTH.format("3 columns", "test_transform_leaves_state_alone"),
    "check_fit_idempotent": _WIDTH.format("2 columns", "test_fit_idempotent"),
    "check_fit_check_is_fitted": _WIDTH.format("2 columns", "test_not_fitted"),
    "check_n_features_in": _WIDTH.format("2 columns", "test_fitted_attributes"),
    "check_fit2d_predict1d": _WIDTH.format("3 columns", "test_one_dimensional_input"),
}


@parametrize_with_checks([SpectralFeatures()], expected_failed_checks=lambda est: XFAILS, xfail_strict=True)
def test_spectral_features_sklearn_checks(estimator, check):
    check(estimator)


# --------------------------------------------------------------------------- SpectralFeatures on square data


def _matrices(count, seed=0, n=N):
    """``count`` flattened n x n Gaussian matrices."""
    return np.random.default_rng(seed).standard_normal((count, n * n))


def test_fitted_attributes():
    X = _matrices(3)
    f = SpectralFeatures().fit(X)
    assert (f.n_features_in_, f.matrix_size_) == (N * N, N)
    assert f.test_options_["statistics"] == ("real_count", "radial", "edge")
    assert f.get_feature_names_out().tolist() == [
        "real_count", "real_count_pvalue", "real_count_effect", "radial", "radial_pvalue", "radial_effect",
        "edge", "edge_pvalue", "edge_effect", "omnibus_pvalue",
    ]


def test_not_fitted():
    f = SpectralFeatures()
    with pytest.raises(NotFittedError):
        f.transform(_matrices(2))
    with pytest.raises(NotFittedError):
        f.get_feature_names_out()


def test_fit_accepts_y_and_returns_self():
    X = _matrices(4)
    f = SpectralFeatures()
    assert f.fit(X, np.array([0, 1, 0, 1])) is f


def test_fit_leaves_parameters_alone():
    f = SpectralFeatures(**FAST)
    before = f.get_params()
    public_before = {k for k in vars(f) if not k.endswith("_")}
    f.fit(_matrices(3))
    assert f.get_params() == before
    assert {k for k in vars(f) if not k.endswith("_") and not k.startswith("_")} == public_before


def test_transform_leaves_state_alone():
    X = _matrices(3)
    f = SpectralFeatures(**FAST).fit(X)
    state = pickle.dumps(vars(f))
    f.transform(X)
    assert pickle.dumps(vars(f)) == state


def test_features_are_spectral_test_numbers():
    """Under the Gaussian null every column is the inference layer's number for that matrix."""
    X = _matrices(3, seed=1)
    out = SpectralFeatures().fit_transform(X)
    for row, x in zip(out, X):
        res = spectral_test(x.reshape(N, N), null="gaussian")
        expected = [v for name in ("real_count", "radial", "edge") for v in
                    (res.tests[name].statistic, res.tests[name].pvalue, res.tests[name].effect_size)]
        np.testing.assert_array_equal(row, expected + [res.pvalue])


def test_drawn_null_features_repeat_with_seed_for():
    """Under a drawn null each row is spectral_test with the seed that seed_for documents."""
    X = _matrices(3, seed=2)
    f = SpectralFeatures(statistics=("edge", "real_count"), **FAST).fit(X)
    out = f.transform(X)
    for row, x in zip(out, X):
        res = spectral_test(x.reshape(N, N), rng=f.seed_for(x), **f.test_options_)
        assert res.null == "permutation" and res.n_resamples <= 49
        expected = [v for name in ("edge", "real_count") for v in
                    (res.tests[name].statistic, res.tests[name].pvalue, res.tests[name].effect_size)]
        np.testing.assert_array_equal(row, expected + [res.pvalue])


def test_statistics_against_numpy():
    """External anchor (numpy.linalg, a general-purpose library): the real count is the number of
    eigenvalues with an exactly zero imaginary part, and the edge is max |eigenvalue| / (sd sqrt(N)) of the
    centred matrix, sd with ddof = 1 (the default standardisation)."""
    X = _matrices(4, seed=3)
    out = SpectralFeatures(statistics=("real_count", "edge")).fit_transform(X)
    for row, x in zip(out, X):
        centred = x.reshape(N, N) - x.mean()
        eig = np.linalg.eigvals(centred)
        assert row[0] == np.count_nonzero(eig.imag == 0)
        np.testing.assert_allclose(row[3], np.abs(eig).max() / (x.std(ddof=1) * np.sqrt(N)), rtol=1e-10)


def test_reciprocal_matrices_stand_out():
    """A planted reciprocity (A + 0.9 A^T) is detected by the real-count feature; noise is not."""
    g = np.random.default_rng(4).standard_normal((2, 40, 40))
    X = np.stack([g[0].ravel(), (g[1] + 0.9 * g[1].T).ravel()])
    out = SpectralFeatures(statistics=("real_count",)).fit_transform(X)
    assert out[0, 1] > 0.01 and out[1, 1] < 1e-4
    assert out[1, 2] > 3  # the effect, (K - E_N) / sd_N, in null standard deviations


def test_clone_and_pickle_round_trips():
    X = _matrices(3)
    f = SpectralFeatures(**FAST).fit(X)
    out = f.transform(X)
    np.testing.assert_array_equal(pickle.loads(pickle.dumps(f)).transform(X), out)
    c = clone(f)
    assert not hasattr(c, "seed_sequence_") and c.get_params() == f.get_params()
    np.testing.assert_array_equal(c.fit(X).transform(X), out)


def test_fit_idempotent():
    X = _matrices(3)
    f = SpectralFeatures(**FAST)
    first = f.fit(X).transform(X)
    np.testing.assert_array_equal(f.fit(X).transform(X), first)
    np.testing.assert_array_equal(f.fit(X[:1]).transform(X), first)  # fit draws nothing from the data


def test_fit_transform_equals_fit_then_transform():
    X = _matrices(3)
    np.testing.assert_array_equal(SpectralFeatures(**FAST).fit_transform(X), SpectralFeatures(**FAST).fit(X).transform(X))


def test_row_order_subset_and_n_jobs_invariance():
    """Per-matrix seeds derived from the values: rows do not depend on their neighbours or on n_jobs."""
    X = _matrices(5, seed=5)
    f = SpectralFeatures(**FAST).fit(X)
    out = f.transform(X)
    order = np.array([3, 0, 4, 2, 1])
    np.testing.assert_array_equal(f.transform(X[order]), out[order])
    np.testing.assert_array_equal(np.vstack([f.transform(X[:2]), f.transform(X[2:])]), out)
    with parallel_config(backend="threading"):
        np.testing.assert_array_equal(clone(f).set_params(n_jobs=2).fit(X).transform(X), out)


def test_random_state_changes_only_drawn_nulls():
    X = _matrices(2)
    drawn = [SpectralFeatures(**{**FAST, "random_state": s}).fit(X).transform(X) for s in (0, 1)]
    assert not np.array_equal(drawn[0], drawn[1])
    exact = [SpectralFeatures(random_state=s).fit(X).transform(X) for s in (0, 1)]
    np.testing.assert_array_equal(exact[0], exact[1])


def test_dtypes():
    X = _matrices(2)
    f = SpectralFeatures(statistics=("real_count", "edge"))
    out64 = f.fit_transform(X)
    assert out64.dtype == np.float64
    X32 = X.astype(np.float32)
    out32 = f.fit_transform(X32)
    # float32 input gives float64 output (p-values can be below float32's range), equal to the
    # features of the same values in float64
    assert out32.dtype == np.float64
    np.testing.assert_array_equal(out32, f.fit_transform(X32.astype(np.float64)))
    ints = np.round(3 * X).astype(np.int64)
    with pytest.warns(NonGaussianEntriesWarning):  # integer entries are discrete: the Gaussian null warns
        assert f.fit_transform(ints).shape == (2, 7)
    objects = X.astype(object)
    np.testing.assert_array_equal(f.fit_transform(objects), out64)
    objects[0, 0] = {"not": "a number"}
    with pytest.raises(TypeError):
        f.fit(objects)


def test_layouts_and_containers():
    X = _matrices(2)
    f = SpectralFeatures(statistics=("edge",)).fit(X)
    out = f.transform(X)
    np.testing.assert_array_equal(f.transform(np.asfortranarray(X)), out)
    np.testing.assert_array_equal(f.transform(X.tolist()), out)


def test_read_only_and_memmap_input(tmp_path):
    X = _matrices(2)
    path = tmp_path / "x.dat"
    X.tofile(path)
    mapped = np.memmap(path, dtype=np.float64, mode="r", shape=X.shape)
    f = SpectralFeatures(**FAST)
    np.testing.assert_array_equal(f.fit(mapped).transform(mapped), f.fit(X).transform(X))


def test_non_finite_input():
    X = _matrices(2)
    X[1, 5] = np.nan
    with pytest.raises(ValueError, match="NaN"):
        SpectralFeatures().fit(X)
    f = SpectralFeatures().fit(_matrices(2))
    X[1, 5] = np.inf
    with pytest.raises(ValueError, match="infinity"):
        f.transform(X)


def test_one_dimensional_input():
    f = SpectralFeatures().fit(_matrices(2))
    with pytest.raises(ValueError, match="Expected 2D array, got 1D array instead"):
        f.transform(_matrices(1)[0])


def test_single_matrix():
    X = _matrices(1)
    assert SpectralFeatures(statistics=("edge",)).fit_transform(X).shape == (1, 4)


@pytest.mark.parametrize(
    ("width", "match"),
    [
        (10, r"`X` must hold one flattened N x N matrix per row.*got 10 columns, which is not a perfect square"),
        (1, r"got 1 column, which gives N = 1 < 3"),
        (4, r"got 4 columns, which gives N = 2 < 3\. Flatten each square matrix row-major"),
    ],
)
def test_width_errors(width, match):
    with pytest.raises(ValueError, match=match):
        SpectralFeatures().fit(np.random.default_rng(0).standard_normal((3, width)))


def test_width_mismatch_in_transform():
    f = SpectralFeatures().fit(_matrices(2, n=10))
    with pytest.raises(ValueError, match="X has 144 features, but SpectralFeatures is expecting 100 features"):
        f.transform(_matrices(2))


def test_row_errors_name_the_row():
    X = _matrices(3)
    X[2] = 1.0
    f = SpectralFeatures().fit(X)
    with pytest.raises(ValueError, match=r"row 2 of `X` cannot be tested: `A` must not be constant"):
        f.transform(X)


@pytest.mark.parametrize(
    ("params", "error", "match"),
    [
        ({"null": "bogus"}, ValueError, r"`null` must be one of 'auto', 'gaussian', 'permutation', 'bootstrap'"),
        ({"statistics": "edge"}, TypeError, r"`statistics` must be a sequence of names"),
        ({"n_resamples": 0}, ValueError, r"`n_resamples` must be an integer >= 1; got 0"),
        ({"alpha": 2.0}, ValueError, r"`alpha` must lie strictly between 0 and 1; got 2.0"),
    ],
)
def test_option_errors_at_fit(params, error, match):
    with pytest.raises(error, match=match):
        SpectralFeatures(**params).fit(_matrices(2))


@pytest.mark.parametrize("estimator", [SpectralFeatures, SignificantModes])
def test_bad_random_state_is_named_as_such(estimator):
    X = _matrices(2) if estimator is SpectralFeatures else np.random.default_rng(0).standard_normal((12, 12))
    with pytest.raises(TypeError, match=r"`random_state` must be None, an int, .*; got str\. Pass e\.g\. random_state="):
        estimator(random_state="seed").fit(X)


def test_seed_for_errors():
    f = SpectralFeatures().fit(_matrices(2))
    with pytest.raises(ValueError, match=r"`matrix` must have 144 entries \(N = 12\); got 100"):
        f.seed_for(np.zeros((10, 10)))


def test_feature_names_checks():
    X = pd.DataFrame(_matrices(2), columns=[f"a{i}" for i in range(N * N)], index=["m1", "m2"])
    f = SpectralFeatures(statistics=("edge",)).fit(X)
    assert f.feature_names_in_[0] == "a0"
    assert f.get_feature_names_out(X.columns).tolist() == ["edge", "edge_pvalue", "edge_effect", "omnibus_pvalue"]
    with pytest.raises(ValueError, match=r"input_features should have length equal to n_features_in_ \(144\); got 3"):
        f.get_feature_names_out(["a", "b", "c"])
    with pytest.raises(ValueError, match="input_features is not equal to feature_names_in_"):
        f.get_feature_names_out([f"b{i}" for i in range(N * N)])


def test_set_output_pandas_named_columns():
    X = pd.DataFrame(_matrices(2), index=["m1", "m2"])
    out = SpectralFeatures(statistics=("real_count", "edge")).set_output(transform="pandas").fit_transform(X)
    assert isinstance(out, pd.DataFrame)
    assert out.columns.tolist() == ["real_count", "real_count_pvalue", "real_count_effect", "edge", "edge_pvalue",
                                    "edge_effect", "omnibus_pvalue"]
    assert out.index.tolist() == ["m1", "m2"]


def test_pipeline_and_grid_search():
    """Noise against reciprocal matrices: the pipeline agrees with its steps and the search runs."""
    g = np.random.default_rng(6).standard_normal((12, 30, 30))
    g[6:] = g[6:] + 0.8 * np.transpose(g[6:], (0, 2, 1))
    X, y = g.reshape(12, -1), np.repeat([0, 1], 6)
    pipe = make_pipeline(SpectralFeatures(statistics=("real_count",)), LogisticRegression())
    pipe.fit(X, y)
    features = SpectralFeatures(statistics=("real_count",)).fit_transform(X)
    np.testing.assert_array_equal(pipe.predict(X), LogisticRegression().fit(features, y).predict(features))
    search = GridSearchCV(pipe, {"spectralfeatures__statistics": [("real_count",), ("edge",)]},
                          cv=KFold(3, shuffle=True, random_state=0))
    search.fit(X, y)
    # corr(A_ij, A_ji) = 1.6 / 1.64 here: both the real count and the spectral radius (the elliptic
    # law's long axis) separate the classes, so every candidate classifies the held-out matrices
    assert search.cv_results_["mean_test_score"].tolist() == [1.0, 1.0]


# --------------------------------------------------------------------------- SignificantModes


def _planted(n, rows, theta, seed):
    """Noise plus theta * sqrt(n) * u u^T with u uniform on ``rows`` (unit variance noise)."""
    u = np.zeros(n)
    u[rows] = 1 / np.sqrt(len(rows))
    return np.random.default_rng(seed).standard_normal((n, n)) + theta * np.sqrt(n) * np.outer(u, u)


def test_rank_one_outlier_location_and_rows(seed):
    """External anchor: the outlier law of Tao 2013 ("Outliers in the spectrum of iid matrices with
    bounded rank perturbations", from memory): X / sqrt(N) + theta u u^T with |theta| > 1 has one
    eigenvalue at theta + o(1).  Known centre and scale (center="none", scale=1.0) make z = lambda /
    sqrt(N) exactly.  Tolerance: to first order z - theta = sum_k u^T X^k u / (theta^(k-1) N^(k/2)),
    whose terms have sd N^(-1/2) theta^(1-k), so sd(z) ~ theta / sqrt(N (theta^2 - 1)) = 0.075 at
    N = 200 (a numpy simulation of 300 draws gave 0.072); 5 sd (two-sided 6e-7) is the band."""
    n, theta, module = 200, 3.0, np.arange(20, 40)
    a = _planted(n, module, theta, seed)
    modes = SignificantModes(null="gaussian", center="none", scale=1.0).fit(a)
    assert modes.n_components_ == 1 and modes.get_feature_names_out().tolist() == ["mode0"]
    z = modes.eigenvalues_[0]
    assert z.imag == 0 and abs(z.real - theta) < 5 * theta / np.sqrt(n * (theta**2 - 1))
    coords = modes.transform(a)[:, 0]
    assert set(np.argsort(-np.abs(coords))[: module.size].tolist()) == set(module.tolist())


def test_fitted_rows_get_the_eigenvector():
    """fit_transform(A) is the unit right eigenvector (scipy.linalg.eig as the reference, up to sign)."""
    n = 60
    a = _planted(n, np.arange(30), 4.0, seed=1)
    modes = SignificantModes(null="gaussian")
    coords = modes.fit_transform(a)[:, 0]
    centred = (a - modes.center_) / modes.scale_
    w, v = scipy.linalg.eig(centred)
    ref = v[:, np.argmax(np.abs(w))].real
    ref = ref * np.sign(ref[np.argmax(np.abs(ref))])
    np.testing.assert_allclose(coords, ref / np.linalg.norm(ref), atol=1e-10)
    # any subset of the fitted rows, fed back as new rows, gets the same coordinates (the Nystrom extension)
    np.testing.assert_allclose(modes.transform(a[[5, 2, 40]]), modes.fit_transform(a)[[5, 2, 40]], atol=1e-12)


def test_diagonal_shift_keeps_the_eigenvector():
    """diagonal="shift" centres and scales by the off-diagonal entries and removes a multiple of the
    identity, which moves the eigenvalue only: the coordinates are a unit eigenvector of A - c 1 1^T
    with c the off-diagonal mean (computed here with numpy)."""
    n = 60
    a = _planted(n, np.arange(30), 4.0, seed=2) + 5.0 * np.eye(n)
    modes = SignificantModes(null="gaussian", diagonal="shift")
    v = modes.fit_transform(a)[:, 0]
    c = a[~np.eye(n, dtype=bool)].mean()
    assert modes.center_ == pytest.approx(c, rel=1e-12)
    centred = a - c
    np.testing.assert_allclose(np.linalg.norm(v), 1.0, rtol=1e-12)
    np.testing.assert_allclose(centred @ v, (v @ centred @ v) * v, atol=1e-8)


def test_two_modules_and_the_cap():
    n = 80
    u = np.zeros((2, n))
    u[0, :10], u[1, 10:20] = 1 / np.sqrt(10), 1 / np.sqrt(10)
    g = np.random.default_rng(3).standard_normal((n, n))
    a = g + np.sqrt(n) * (5.0 * np.outer(u[0], u[0]) + 3.0 * np.outer(u[1], u[1]))
    modes = SignificantModes(random_state=0).fit(a)
    assert modes.n_components_ == 2 and modes.test_result_.null == "permutation"
    coords = np.abs(modes.transform(a))
    assert set(np.argsort(-coords[:, 0])[:10]) == set(range(10))
    assert set(np.argsort(-coords[:, 1])[:10]) == set(range(10, 20))
    assert np.all(modes.pvalues_ <= 0.05) and abs(modes.eigenvalues_[0]) > abs(modes.eigenvalues_[1])
    capped = SignificantModes(random_state=0, max_components=1).fit(a)
    np.testing.assert_allclose(capped.transform(a), modes.transform(a)[:, :1], atol=1e-12)


def _rotation_planted(n, seed):
    """Noise plus 4 sqrt(n) (u w^T - w u^T): a complex pair of outliers near +-4i."""
    u, w = np.zeros(n), np.zeros(n)
    u[:8], w[8:16] = 1 / np.sqrt(8), 1 / np.sqrt(8)
    return np.random.default_rng(seed).standard_normal((n, n)) + 4 * np.sqrt(n) * (np.outer(u, w) - np.outer(w, u))


def test_complex_pair_gives_two_columns():
    n = 80
    a = _rotation_planted(n, seed=4)
    modes = SignificantModes(random_state=0).fit(a)
    assert modes.get_feature_names_out().tolist() == ["mode0_re", "mode0_im"]
    z = modes.eigenvalues_[0]
    # the planted pair +-4i sqrt(n) is in units of the noise sd; the estimated sd also counts the
    # planted entries, sd^2 ~ 1 + ||P||_F^2 / n^2 = 1 + 2 * 16 / n
    assert z.imag > 0 and abs(abs(z) - 4.0 / np.sqrt(1 + 32 / n)) < 0.5
    coords = modes.transform(a)
    v = coords[:, 0] + 1j * coords[:, 1]
    centred = (a - modes.center_) / modes.scale_
    np.testing.assert_allclose(centred @ v, z * np.sqrt(n) * v, atol=1e-8)  # an eigenvector of the pair
    assert set(np.argsort(-np.abs(v))[:16]) == set(range(16))
    # a cap of one column cannot hold the pair, which is never split
    capped = SignificantModes(random_state=0, max_components=1).fit(a)
    assert capped.n_components_ == 0 and capped.transform(a).shape == (n, 0)


def test_noise_has_no_modes():
    a = np.random.default_rng(5).standard_normal((40, 40))
    modes = SignificantModes(random_state=0).set_output(transform="pandas").fit(a)
    assert modes.n_components_ == 0 and modes.components_.shape == (0, 40)
    out = modes.transform(a)
    assert isinstance(out, pd.DataFrame) and out.shape == (40, 0)
    assert modes.test_result_.tests["edge"].pvalue > 0.05


def test_significant_modes_pandas_and_float32():
    a = _planted(40, np.arange(6), 4.0, seed=6)
    frame = pd.DataFrame(a, index=[f"r{i}" for i in range(40)], columns=[f"r{i}" for i in range(40)])
    modes = SignificantModes(random_state=0).set_output(transform="pandas").fit(frame)
    out = modes.transform(frame)
    assert out.columns.tolist() == ["mode0"] and out.index[0] == "r0"
    assert modes.set_output(transform="default").transform(frame.astype(np.float32)).dtype == np.float32


def test_significant_modes_in_pipeline_and_grid_search():
    """Pairwise cross-validation fits on the training block and embeds the held-out rows (Nystrom)."""
    n = 90
    module = np.arange(0, 90, 2)
    a = _planted(n, module, 5.0, seed=7)
    y = np.isin(np.arange(n), module).astype(int)
    pipe = make_pipeline(SignificantModes(null="gaussian", max_components=1), StandardScaler(), LogisticRegression())
    search = GridSearchCV(pipe, {"significantmodes__alpha": [0.01, 0.05]}, cv=KFold(3, shuffle=True, random_state=0))
    search.fit(a, y)
    assert search.best_score_ > 0.95


@pytest.mark.parametrize(
    ("params", "X", "error", "match"),
    [
        ({}, np.ones((5, 4)), ValueError, r"`X` must be square \(N x N.*got shape \(5, 4\)"),
        ({"max_components": 0}, None, ValueError, r"`max_components` must be an integer >= 1; got 0"),
        ({"null": "bogus"}, None, ValueError, r"`null` must be one of 'auto', 'gaussian'"),
        ({"alpha": 0.0}, None, ValueError, r"`alpha` must lie strictly between 0 and 1; got 0.0"),
    ],
)
def test_significant_modes_errors(params, X, error, match):
    X = np.random.default_rng(0).standard_normal((12, 12)) if X is None else X
    with pytest.raises(error, match=match):
        SignificantModes(**params).fit(X)
