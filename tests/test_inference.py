"""End-to-end spectral tests: validation, size and power on the Gaussian null, drawn nulls, screen."""

import json
import math
import warnings

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.multitest import multipletests

from nullspec import calibration
from nullspec.exceptions import NonGaussianEntriesWarning, NullspecWarning, ResolutionWarning, SmallMatrixWarning
from nullspec.ginibre import real_count_pmf
from nullspec.inference import edge_test, radial_test, real_count_test, screen, spectral_test
from nullspec.nulls import Permutation

ALPHA = 0.05


def _band(r, p, level=0.99):
    """Central binomial band for a rejection rate over r independent replicates with true rate p."""
    lo, hi = stats.binom.ppf([(1 - level) / 2, (1 + level) / 2], r, p)
    return lo / r, hi / r


def _quiet(fn, *args, **kwargs):
    """Run fn with nullspec's own warnings silenced (they are tested separately)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NullspecWarning)
        return fn(*args, **kwargs)


# --------------------------------------------------------------------------- validation


@pytest.mark.parametrize(
    ("kwargs", "error", "match"),
    [
        ({"null": "bogus"}, ValueError, r"`null` must be one of 'auto', 'gaussian', 'permutation', 'bootstrap'; got 'bogus'"),
        ({"null": 3}, TypeError, r"`null` must be one of the strings"),
        ({"null": "exact"}, ValueError, r"got 'exact'\. Pick one of those strings, or pass a null model object"),
        ({"sequential": 1}, TypeError, r"`sequential` must be True or False; got 1 \(int\)\. Pass a bool\."),
        ({"statistics": "edge"}, TypeError, r"`statistics` must be a sequence of names.*Wrap a single name"),
        ({"statistics": ("edge", "spread")}, ValueError, r"`statistics` must be one of 'real_count', 'radial', 'edge'; got 'spread'"),
        ({"statistics": ()}, ValueError, r"`statistics` must name at least one"),
        ({"n_resamples": 0}, ValueError, r"`n_resamples` must be an integer >= 1; got 0"),
        ({"n_resamples": 9.5}, ValueError, r"`n_resamples` must be an integer >= 1; got 9.5, which is not a whole number"),
        ({"alternative": "bigger"}, ValueError, r"`alternative` must be one of 'two-sided', 'greater', 'less'; got 'bigger'"),
        ({"center": "median"}, ValueError, r"`center` must be one of 'mean', 'none'; got 'median'"),
        ({"scale": -1.0}, ValueError, r"`scale` must be one of 'sd', 'mad' or a finite number > 0; got -1.0"),
        ({"diagonal": "zero"}, ValueError, r"`diagonal` must be one of 'include', 'shift'; got 'zero'"),
        ({"alpha": 1.5}, ValueError, r"`alpha` must lie strictly between 0 and 1; got 1.5"),
        ({"alpha": "0.05"}, TypeError, r"`alpha` must be a probability strictly between 0 and 1"),
        ({"sequential": "yes"}, TypeError, r"`sequential` must be True or False; got 'yes'"),
    ],
)
def test_option_errors(kwargs, error, match):
    a = np.random.default_rng(0).standard_normal((5, 5))
    with pytest.raises(error, match=match):
        spectral_test(a, **kwargs)


@pytest.mark.parametrize(
    ("matrix", "error", "match"),
    [
        (np.ones((3, 4)), ValueError, r"`A` must be square \(N x N.*got shape \(3, 4\)"),
        (np.ones(9), ValueError, r"`A` must be a square 2-D array \(N x N\); got a 1-D array"),
        (np.eye(2), ValueError, r"`A` must be at least 3 x 3; got shape \(2, 2\)"),
        (np.full((4, 4), 2.0), ValueError, r"`A` must not be constant; every entry equals 2.0"),
        (np.where(np.eye(4) > 0, np.nan, 1.0), ValueError, r"`A` must contain finite numbers only; got 4 NaN"),
        (np.eye(3) * 1j, ValueError, r"`A`"),
        ("matrix", TypeError, r"`A` must be a 2-D array-like of numbers"),
    ],
)
def test_matrix_errors(matrix, error, match):
    with pytest.raises(error, match=match):
        spectral_test(matrix, null="gaussian")


def test_screen_errors():
    with pytest.raises(ValueError, match=r"`fdr` must be one of 'bh', 'holm'; got 'by'"):
        screen([np.eye(3) + 1], fdr="by")
    with pytest.raises(ValueError, match=r"`matrices` must hold at least one matrix; got an empty collection"):
        screen([])


def test_input_not_modified():
    rng = np.random.default_rng(1)
    a = rng.standard_normal((30, 30)) + 2.0
    keep = a.copy()
    _quiet(spectral_test, a, null="gaussian")
    _quiet(spectral_test, a, null="permutation", n_resamples=19, rng=0)
    np.testing.assert_array_equal(a, keep)
    pd = pytest.importorskip("pandas")
    frame = pd.DataFrame(a)
    frame_copy = frame.copy()
    _quiet(spectral_test, frame, null="gaussian")
    pd.testing.assert_frame_equal(frame, frame_copy)


# --------------------------------------------------------------------------- size, Gaussian null


def _size_run(n, reps, seed):
    """Rejection rates at ALPHA of each statistic and the omnibus under i.i.d. N(mu, s^2) entries."""
    rng = np.random.default_rng(seed)
    rejected = {"real_count": 0, "radial": 0, "edge": 0, "omnibus": 0}
    for _ in range(reps):
        mu, s = rng.uniform(-5, 5), rng.uniform(0.1, 10)  # arbitrary mean and scale
        res = _quiet(spectral_test, mu + s * rng.standard_normal((n, n)), null="gaussian")
        for name, r in res.tests.items():
            rejected[name] += r.pvalue <= ALPHA
        rejected["omnibus"] += res.pvalue <= ALPHA
    return {k: v / reps for k, v in rejected.items()}


def _exact_size_real_count(n):
    """The exact size of the discrete two-sided real-count test at ALPHA (sum of the pmf where p <= ALPHA)."""
    pmf = real_count_pmf(n)
    p = calibration.discrete_pvalue(pmf, np.arange(n + 1), "two-sided")
    return pmf[p <= ALPHA].sum()


@pytest.mark.parametrize(("n", "reps", "sim_seed"), [(20, 1000, 101), (100, 400, 202)])
def test_size_gaussian_null(n, reps, sim_seed):
    # R replicates: a correct level-alpha test rejects at a rate inside the central binomial 99% band
    # (at R = 1000: 0.033-0.068; R = 400: 0.025-0.080).  The real count is discrete, so its size is the exact
    # attainable size (computed from the pmf), and the band is taken around that.  Holm's omnibus is
    # conservative by construction (it guards any dependence between the statistics): only the upper end
    # of the band at alpha applies to it.
    rates = _size_run(n, reps, sim_seed)
    for name in ("radial", "edge"):
        lo, hi = _band(reps, ALPHA)
        assert lo <= rates[name] <= hi, (name, rates)
    lo, hi = _band(reps, _exact_size_real_count(n))
    assert lo <= rates["real_count"] <= hi, rates
    assert rates["omnibus"] <= _band(reps, ALPHA)[1], rates


# --------------------------------------------------------------------------- power, Gaussian null


def _power(make, statistic, reps, seed, n=100):
    rng = np.random.default_rng(seed)
    hits = 0
    for _ in range(reps):
        res = _quiet(spectral_test, make(rng, n), null="gaussian")
        hits += res.tests[statistic].pvalue <= ALPHA
    return hits / reps


def _rank_one(rng, n, rows=10):
    u = np.zeros(n)
    u[:rows] = 1.0 / np.sqrt(rows)
    return rng.standard_normal((n, n)) + 2.0 * np.sqrt(n) * np.outer(u, u)  # strength 2 sigma sqrt(N), sigma = 1


def _elliptic(rng, n, tau=0.6):
    # THEORY.md section 7: A = sqrt((1+tau)/2) S + sqrt((1-tau)/2) K gives corr(A_ij, A_ji) = tau.
    g1, g2 = rng.standard_normal((2, n, n))
    s, k = (g1 + g1.T) / np.sqrt(2), (g2 - g2.T) / np.sqrt(2)
    return np.sqrt((1 + tau) / 2) * s + np.sqrt((1 - tau) / 2) * k


def _row_scales(rng, n):
    scales = np.where(np.arange(n) < n // 4, 3.0, 1.0)  # a quarter of the rows three times as noisy
    return scales[:, None] * rng.standard_normal((n, n))


@pytest.mark.parametrize(
    ("make", "statistic", "assumed_power"),
    # Measured with R = 40 and seed 303 (tests/test_inference.py helpers): edge 1.00, real_count 0.825,
    # radial 1.00 at N = 100.  The assertion: the rate is above the binomial 0.1% lower quantile for a true
    # power of 0.95 (edge, radial) or 0.75 (real count: E K = 16.3 against 8.4 under the null, THEORY.md
    # section 7, with sd about 3, so about 85% of the draws exceed the null's upper 2.5% point).
    [(_rank_one, "edge", 0.95), (_elliptic, "real_count", 0.75), (_row_scales, "radial", 0.95)],
)
def test_power_planted_structures(make, statistic, assumed_power):
    reps = 40
    floor = stats.binom.ppf(0.001, reps, assumed_power) / reps
    assert _power(make, statistic, reps=reps, seed=303) >= floor


def test_rank_one_signal_rows_found():
    rng = np.random.default_rng(7)
    res = _quiet(spectral_test, _rank_one(rng, 100), null="gaussian")
    top = res.outliers[0]
    assert abs(abs(top.eigenvalue) - 2.0) < 0.3  # about theta / (sigma sqrt N) = 2
    assert top.modulus_ratio > 1 and top.pvalue < 1e-6
    assert set(top.rows) <= set(range(10)) and set(top.columns) <= set(range(10)) and top.rows
    assert len(res.outliers) == 1 and res.significant


def test_outliers_use_labels_and_pair_once():
    pd = pytest.importorskip("pandas")
    rng = np.random.default_rng(8)
    n = 60
    a = rng.standard_normal((n, n))
    rot = 2.5 * np.sqrt(n) * np.array([[0.0, -1.0], [1.0, 0.0]])  # a complex pair at +-2.5i (in z units)
    a[:2, :2] += rot
    names = [f"g{i}" for i in range(n)]
    res = _quiet(spectral_test, pd.DataFrame(a, index=names, columns=names), null="gaussian")
    assert len(res.outliers) == 1  # one per conjugate pair
    o = res.outliers[0]
    assert o.eigenvalue.imag > 0 and set(o.rows) <= {"g0", "g1"} and set(o.columns) <= {"g0", "g1"}
    assert res.labels["rows"][0] == "g0"


# --------------------------------------------------------------------------- result content, warnings


def test_result_fields_and_json():
    rng = np.random.default_rng(9)
    res = _quiet(spectral_test, 3 + 2 * rng.standard_normal((40, 40)), null="gaussian")
    assert res.null == "gaussian" and res.n_resamples is None and res.entropy is None
    assert res.standardization["center_value"] == pytest.approx(3, abs=0.2)
    assert res.standardization["scale_value"] == pytest.approx(2, abs=0.2)
    assert "Holm" in res.omnibus_method
    assert res.pvalue == pytest.approx(min(r.details["pvalue_holm"] for r in res.tests.values()))
    lo, hi = res.reciprocity["interval"]
    assert lo < res.reciprocity["value"] < hi
    json.dumps(res.to_dict(), allow_nan=False)
    assert "How to read this" in res.summary()


def test_single_statistic_tests():
    rng = np.random.default_rng(10)
    a = rng.standard_normal((30, 30))
    for fn, name in ((real_count_test, "real_count"), (radial_test, "radial"), (edge_test, "edge")):
        res = _quiet(fn, a, null="gaussian")
        assert list(res.tests) == [name] and res.pvalue == res.tests[name].pvalue
    full = _quiet(spectral_test, a, null="gaussian")
    assert full.tests["edge"].pvalue == _quiet(edge_test, a, null="gaussian").pvalue


def test_alternative_applies_to_all():
    a = np.random.default_rng(12).standard_normal((30, 30))
    res = _quiet(spectral_test, a, null="gaussian", alternative="less")
    assert all(r.alternative == "less" for r in res.tests.values())
    natural = _quiet(spectral_test, a, null="gaussian")
    assert [r.alternative for r in natural.tests.values()] == ["two-sided", "greater", "greater"]


def test_small_matrix_warns_at_the_callers_line():
    a = np.random.default_rng(13).standard_normal((5, 5))
    with pytest.warns(SmallMatrixWarning) as caught:
        res = spectral_test(a, null="gaussian", statistics=("edge",))
    assert caught[0].filename == __file__
    assert any("only 5 x 5" in w for w in res.warnings)


def test_discrete_entries_warn_under_gaussian_null():
    a = np.where(np.random.default_rng(14).random((40, 40)) < 0.5, 1.0, -1.0)
    with pytest.warns(NonGaussianEntriesWarning, match="permutation null"):
        res = spectral_test(a, null="gaussian")
    assert any("miscalibrated" in w for w in res.warnings)


def test_alpha_below_resolution_warns():
    a = np.random.default_rng(15).standard_normal((40, 40))
    with pytest.warns(ResolutionWarning, match="radial") as caught:
        spectral_test(a, null="gaussian", statistics=("radial",), alpha=0.0005)
    assert caught[0].filename == __file__
    with pytest.warns(ResolutionWarning, match="n_resamples"):
        spectral_test(a, null="permutation", n_resamples=9, rng=1)


def test_non_default_policy_uses_on_demand_null(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))
    a = np.random.default_rng(16).standard_normal((6, 6))
    res = _quiet(radial_test, a, null="gaussian", diagonal="shift")
    assert "simulated Gaussian null" in res.tests["radial"].method
    assert list(tmp_path.glob("*.npz"))


def test_gaussian_null_at_n800_reads_the_table(tmp_path, monkeypatch):
    # N = 800 lies inside the shipped radial table (up to 1000): the first call simulates nothing and
    # writes nothing to an empty cache.
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))
    a = np.random.default_rng(40).standard_normal((800, 800))
    res = _quiet(spectral_test, a)
    assert res.null == "gaussian" and res.tests["radial"].method.startswith("shipped table")
    assert 0.0 < res.tests["radial"].pvalue <= 1.0
    assert not list(tmp_path.iterdir())


def test_matrix_file_labels_reach_the_result_and_the_outliers():
    from nullspec.io import MatrixFile

    n = 40
    rng = np.random.default_rng(41)
    u = np.zeros(n)
    u[:4] = 0.5
    a = rng.standard_normal((n, n)) + 3.0 * np.sqrt(n) * np.outer(u, u)  # rank-one signal on units 0-3
    rows = tuple(f"gene{i}" for i in range(n))
    cols = tuple(f"site{i}" for i in range(n))
    file = MatrixFile(a, rows, cols, "synthetic.csv", "csv")
    res = _quiet(spectral_test, file, null="gaussian")
    assert res.labels == {"rows": rows, "columns": cols}
    # the outlier's rows/columns are the fewest units carrying half its weight: some of the planted 0-3
    assert res.outliers and set(res.outliers[0].rows) <= {"gene0", "gene1", "gene2", "gene3"}
    assert res.outliers[0].columns and set(res.outliers[0].columns) <= {"site0", "site1", "site2", "site3"}
    screened = _quiet(screen, {"synthetic.csv": file}, null="gaussian")
    assert screened.results[0].labels == res.labels and screened.results[0].outliers[0].rows == res.outliers[0].rows


# --------------------------------------------------------------------------- drawn nulls


def test_auto_null_choice_and_reason():
    rng = np.random.default_rng(17)
    small = _quiet(spectral_test, rng.standard_normal((20, 20)), rng=1)
    assert small.null == "permutation" and "N = 20 <= 400" in small.null_reason
    assert small.n_resamples is not None and small.entropy is not None
    big = _quiet(spectral_test, rng.standard_normal((401, 401)), statistics=("real_count", "edge"))
    assert big.null == "gaussian" and "N = 401 > 400" in big.null_reason
    shifted = _quiet(spectral_test, rng.standard_normal((20, 20)), diagonal="shift", rng=1)
    assert "diagonal is fixed" in shifted.null_description


def test_drawn_null_reproducible_and_jobs_invariant():
    a = np.random.default_rng(18).standard_normal((25, 25))
    one = _quiet(spectral_test, a, null="permutation", n_resamples=99, rng=5, sequential=False)
    two = _quiet(spectral_test, a, null="permutation", n_resamples=99, rng=5, sequential=False, n_jobs=2)
    for name in one.tests:
        assert one.tests[name].pvalue == two.tests[name].pvalue
        np.testing.assert_array_equal(one.tests[name].null_distribution, two.tests[name].null_distribution)
    assert one.pvalue == two.pvalue and one.n_resamples == 99


def test_drawn_pvalues_follow_the_plus_one_rule():
    a = np.random.default_rng(19).standard_normal((15, 15))
    res = _quiet(spectral_test, a, null="bootstrap", n_resamples=49, rng=2, sequential=False)
    edge = res.tests["edge"]
    b = int((edge.null_distribution >= edge.statistic * (1 - 1e-13)).sum())
    assert edge.pvalue == pytest.approx((b + 1) / 50)
    assert edge.pvalue_interval[0] <= edge.pvalue <= edge.pvalue_interval[1] + 1 / 50
    assert "min-p" in res.omnibus_method


def test_sequential_stops_early_on_null_looking_matrix():
    # The engine asks the stopping rule after every batch (N = 100: 22 draws, N = 50: 159), so a
    # null-looking matrix stops well before 999 draws.
    for n in (50, 100):
        a = np.random.default_rng(20).standard_normal((n, n))
        res = _quiet(spectral_test, a, null="permutation", n_resamples=999, rng=3)
        assert res.n_resamples < 999 and not res.significant
        for r in res.tests.values():
            assert r.pvalue > ALPHA


def test_drawn_null_detects_signal_and_finds_outlier():
    rng = np.random.default_rng(21)
    res = _quiet(spectral_test, _rank_one(rng, 40, rows=5), null=Permutation(), n_resamples=199, rng=4)
    assert res.tests["edge"].pvalue == pytest.approx(1 / 200) and res.significant
    assert res.outliers and set(res.outliers[0].rows) <= set(range(5))


def test_drawn_omnibus_keeps_strong_radial_structure():
    # Heterogeneous row scales (log-normal, sd 1) at N = 50: under the permutation null the surrogates
    # are heavy-tailed too, so their Gaussian-reference p-values sit far in the tail; the omnibus must
    # still rank the data's radial statistic (beyond every draw) first instead of tying it at the
    # table's last level (it returned p = 1.0 here before the reference maps continued their tails).
    rng = np.random.default_rng(3)
    a = np.exp(rng.standard_normal(50))[:, None] * rng.standard_normal((50, 50))
    res = _quiet(spectral_test, a, null="permutation", n_resamples=99, rng=3, sequential=False)
    radial = res.tests["radial"]
    assert radial.statistic > radial.null_distribution.max() and radial.pvalue == pytest.approx(1 / 100)
    assert res.pvalue <= ALPHA and res.significant


@pytest.mark.slow
def test_size_permutation_null_heavy_tails():
    # Permutation null with t(3) entries at N = 20, R = 300 replicates of B = 99 (sequential): the omnibus
    # min-p is exact under exchangeability, so its rate lies in the 99% binomial band around
    # floor(alpha (B+1))/(B+1) = 0.05 (about 0.023-0.083 at R = 300).
    rng = np.random.default_rng(22)
    r, hits = 300, 0
    for i in range(r):
        res = _quiet(spectral_test, rng.standard_t(3, size=(20, 20)), null="permutation", n_resamples=99, rng=i)
        hits += res.pvalue <= ALPHA
    lo, hi = _band(r, ALPHA)
    assert lo <= hits / r <= hi


# --------------------------------------------------------------------------- screen


@pytest.mark.parametrize(("fdr", "method"), [("bh", "fdr_bh"), ("holm", "holm")])
def test_screen_matches_multipletests(fdr, method):
    rng = np.random.default_rng(23)
    mats = [rng.standard_normal((30, 30)) for _ in range(4)] + [_elliptic(rng, 30, 0.8)]
    out = _quiet(screen, mats, fdr=fdr, null="gaussian")
    p = np.array([r["pvalue"] for r in out.rows])
    reject, adjusted = multipletests(p, alpha=0.05, method=method)[:2]
    np.testing.assert_allclose([r["pvalue_adjusted"] for r in out.rows], adjusted)
    assert [r["significant"] for r in out.rows] == reject.tolist()
    assert out.rows[-1]["significant"]
    json.dumps(out.to_dict(), allow_nan=False)


def test_screen_seeds_per_matrix():
    rng = np.random.default_rng(24)
    mats = {"a": rng.standard_normal((12, 12)), "b": rng.standard_normal((12, 12))}
    one = _quiet(screen, mats, null="permutation", n_resamples=49, rng=7, sequential=False)
    two = _quiet(screen, mats, null="permutation", n_resamples=49, rng=7, sequential=False)
    assert [r["pvalue"] for r in one.rows] == [r["pvalue"] for r in two.rows]
    assert [r["name"] for r in one.rows] == ["a", "b"] and not math.isnan(one.rows[0]["p_edge"])


def test_import_does_not_load_statsmodels_or_pandas():
    # statsmodels (with pandas) was half of `import nullspec`; it is imported where it is used.
    import subprocess
    import sys

    code = "import sys, nullspec; print(sorted(m for m in ('statsmodels', 'pandas', 'sklearn') if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"
