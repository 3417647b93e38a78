"""Calibration: discrete and Monte Carlo p-values, the radial table, sequential stopping, omnibus."""

import importlib.util
import json
import math
from pathlib import Path
import types

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.proportion import proportion_confint

from nullspec import _cache, _radial_table, calibration
from nullspec.ginibre import real_count_mean, real_count_pmf, real_count_var, spectral_radius_sf

ROOT = Path(__file__).resolve().parent.parent


def _binomial_band(r, p, level=0.99):
    """Central binomial band of a rejection count: the range of rates a correct test gives with prob ~level."""
    lo, hi = stats.binom.ppf([(1 - level) / 2, (1 + level) / 2], r, p)
    return lo / r, hi / r


# --------------------------------------------------------------------------- discrete p-values


@pytest.mark.parametrize("k", [0, 2, 3, 5, 9])
def test_discrete_pvalue_matches_scipy_binomial(k):
    # Reference: scipy.stats.binom tails; two-sided by the doubling rule 2 min(P(X<=k), P(X>=k)) capped at 1.
    pmf = stats.binom.pmf(np.arange(11), 10, 0.3)
    greater, less = stats.binom.sf(k - 1, 10, 0.3), stats.binom.cdf(k, 10, 0.3)
    assert calibration.discrete_pvalue(pmf, k, "greater") == pytest.approx(greater, rel=1e-12)
    assert calibration.discrete_pvalue(pmf, k, "less") == pytest.approx(less, rel=1e-12)
    assert calibration.discrete_pvalue(pmf, k, "two-sided") == pytest.approx(min(1, 2 * min(greater, less)), rel=1e-12)


def test_discrete_pvalue_small_tail_keeps_accuracy():
    # The tail is summed directly: P(X >= 30) for Binomial(30, 0.1) is 1e-30, lost in 1 - cdf.
    pmf = stats.binom.pmf(np.arange(31), 30, 0.1)
    assert calibration.discrete_pvalue(pmf, 30, "greater") == pytest.approx(1e-30, rel=1e-10)


@pytest.mark.parametrize("n", [5, 10, 20, 51, 100])
@pytest.mark.parametrize("alternative", ["two-sided", "greater", "less"])
def test_real_count_pvalue_is_valid_exactly(n, alternative):
    # Validity checked exactly, by summing the exact pmf: P(p(K) <= a) <= a for every level a.
    pmf = real_count_pmf(n)
    p = calibration.discrete_pvalue(pmf, np.arange(n + 1), alternative)
    for a in (0.001, 0.01, 0.05, 0.1, 0.25, 0.5):
        size = pmf[p <= a].sum()
        assert size <= a * (1 + 1e-12), (a, size)
    # ... and not trivially so (a test that never rejects is valid too): from N = 20 on it can reject at 5%.
    # (Its exact size at 5% is only 0.023-0.032 two-sided for N = 20-100: the count moves in steps of 2.)
    if n >= 20:
        assert pmf[p <= 0.05].sum() > 0


def test_real_count_calibration_fields():
    n, k = 100, 16
    c = calibration.real_count_calibration(k, n)
    mean, sd = real_count_mean(n), math.sqrt(real_count_var(n))
    assert c["expected"] == mean and c["effect_size"] == pytest.approx((k - mean) / sd)
    assert c["details"]["ratio"] == pytest.approx(k / mean)
    pmf = real_count_pmf(n)
    assert c["pvalue"] == pytest.approx(2 * pmf[k:].sum())  # the upper tail is the smaller one here
    # resolution = the smallest attainable two-sided p-value, at K = 100 or K = 0
    assert c["details"]["resolution"] == pytest.approx(min(2 * pmf[0], 2 * pmf[-1]), rel=1e-9)


# --------------------------------------------------------------------------- edge


@pytest.mark.parametrize(
    ("n", "quantiles"),
    # THEORY.md section 6, "Poisson-G*" column: the radii (units of sqrt(N)) with 1 - exp(-G*) = 5%, 1%, 0.1%
    # (the project's own derivation, checked there against 1e5 simulated matrices per N).
    [(20, (1.2605, 1.3718, 1.5053)), (100, (1.1223, 1.1668, 1.2226)), (500, (1.0575, 1.0752, 1.0987))],
)
def test_edge_pvalue_at_theory_quantiles(n, quantiles):
    for q, level in zip(quantiles, (0.05, 0.01, 0.001)):
        c = calibration.edge_calibration(q, n)
        # the quantiles are quoted to 4 decimals: allow the p-value change of +-5e-5 in rho
        lo = calibration.edge_calibration(q + 5e-5, n)["pvalue"]
        hi = calibration.edge_calibration(q - 5e-5, n)["pvalue"]
        assert lo <= level <= hi and lo <= c["pvalue"] <= hi


def test_edge_effect_and_alternatives():
    n = 50
    q99 = calibration.edge_calibration(1.0, n)["details"]["q99"]
    assert calibration.edge_calibration(q99, n)["effect_size"] == pytest.approx(1.0)
    g = calibration.edge_calibration(1.1, n, "greater")["pvalue"]
    le = calibration.edge_calibration(1.1, n, "less")["pvalue"]
    two = calibration.edge_calibration(1.1, n, "two-sided")["pvalue"]
    assert g + le == pytest.approx(1.0) and two == pytest.approx(min(1, 2 * min(g, le)))
    assert calibration.edge_threshold(0.05, n) == pytest.approx(calibration.edge_calibration(1, n)["details"]["q95"])


# --------------------------------------------------------------------------- Holm


def test_holm_omnibus_matches_definition():
    # Holm (1979): adjusted p_(i) = max_{j<=i} (m - j + 1) p_(j), capped at 1 (common practice, no source).
    p = np.array([0.04, 0.001, 0.3])
    omni, adjusted = calibration.holm_omnibus(p)
    assert adjusted.tolist() == pytest.approx([0.08, 0.003, 0.3])
    assert omni == pytest.approx(0.003)


@pytest.mark.parametrize("m", [1, 2, 3, 7])
def test_holm_omnibus_matches_statsmodels(m):
    # Reference: statsmodels multipletests(method="holm"), on random p-values with ties and values near 1.
    rng = np.random.default_rng(m)
    for _ in range(10):
        p = np.round(rng.uniform(0, 1, m) ** 3, 2)
        omni, adjusted = calibration.holm_omnibus(p)
        reference = multipletests(p, method="holm")[1]
        np.testing.assert_allclose(adjusted, reference, rtol=1e-14)
        assert omni == reference.min()


# --------------------------------------------------------------------------- Monte Carlo p-values


@pytest.mark.parametrize("alternative", ["greater", "less", "two-sided"])
def test_mc_pvalues_match_scipy_monte_carlo_test(alternative):
    # scipy.stats.monte_carlo_test computes (b + 1)/(B + 1) with the same tie rule; feed it the same draws.
    rng = np.random.default_rng(5)
    null = rng.standard_normal(499)
    observed = 1.7
    draws = iter([null])

    def rvs(size):
        return next(draws).reshape(size)

    ref = stats.monte_carlo_test([observed], rvs, lambda x, axis=-1: x[..., 0], n_resamples=499,
                                 batch=499, alternative=alternative, vectorized=True)
    np.testing.assert_array_equal(ref.null_distribution, null)
    got = calibration.mc_pvalues([observed], null[:, None], [alternative])[0]
    assert got == pytest.approx(ref.pvalue, rel=1e-12)


def test_mc_pvalue_never_zero_and_ties_count():
    null = np.zeros((99, 1))
    assert calibration.mc_pvalues([10.0], null, ["greater"])[0] == pytest.approx(1 / 100)
    # a draw equal to the observation up to rounding (relative 1e-15) counts as at least as extreme
    obs = 0.3
    null = np.full((9, 1), 0.1 + 0.2)  # 0.30000000000000004
    assert calibration.mc_pvalues([obs], null, ["greater"])[0] == 1.0


def test_mc_calibration_interval_and_effect():
    rng = np.random.default_rng(11)
    null = rng.standard_normal((999, 2))
    out = calibration.mc_calibration([2.0, -0.5], null, ["greater", "two-sided"])
    b = int((null[:, 0] >= 2.0).sum())
    lo, hi = proportion_confint(b, 999, alpha=0.05, method="beta")
    assert out[0]["pvalue"] == pytest.approx((b + 1) / 1000)
    assert out[0]["pvalue_interval"] == pytest.approx((lo, hi))
    assert out[0]["effect_size"] == pytest.approx((2.0 - null[:, 0].mean()) / null[:, 0].std(ddof=1))
    b_less = int((null[:, 1] <= -0.5).sum())
    lo, hi = proportion_confint(b_less, 999, alpha=0.05, method="beta")
    assert out[1]["pvalue"] == pytest.approx(2 * (b_less + 1) / 1000)
    assert out[1]["pvalue_interval"] == pytest.approx((2 * lo, 2 * hi))


# --------------------------------------------------------------------------- sequential stopping


@pytest.mark.parametrize("alpha", [0.01, 0.05, 0.1, 0.2])
@pytest.mark.parametrize("b", [19, 99, 100, 999, 1000])
@pytest.mark.parametrize("alternative", ["greater", "two-sided"])
def test_exceedance_threshold_is_the_smallest_settling_count(alpha, b, alternative):
    a = alpha / 2 if alternative == "two-sided" else alpha
    h = calibration.exceedance_threshold(alpha, b, alternative)
    assert h / b > a  # the sequential p-value h/l (l <= B) exceeds the level ...
    assert (h + 1) / (b + 1) > a  # ... and so does the full-run p-value once b >= h
    assert (h - 1) / b <= a + 1e-15  # and h is the smallest such count


def test_sequential_decision_agrees_with_full_run():
    # Whenever the rule stops, the full run (all B draws) is also not significant: the decision is settled.
    rng = np.random.default_rng(2)
    b, alpha, stopped = 199, 0.05, 0
    for _ in range(300):
        obs = rng.standard_normal(2) + np.array([rng.uniform(0, 3), 0.0])
        draws = rng.standard_normal((b, 2))
        alts = ("greater", "two-sided")
        stop = calibration.sequential_stop(obs, alts, alpha=alpha, n_resamples=b)
        full = calibration.mc_calibration(obs, draws, alts)
        L = stop(draws)
        if L is None:
            continue
        stopped += 1
        seq = calibration.mc_calibration(obs, draws[:L], alts, alpha=alpha, n_resamples=b, sequential=True)
        for f, s in zip(full, seq):
            assert f["pvalue"] > alpha and s["pvalue"] > alpha
    assert stopped > 100  # the check was exercised


def test_sequential_pvalues_valid_under_the_null():
    # Exchangeable data and draws: P(p <= u) <= u for the Besag-Clifford p-values.  R = 20000 replicates;
    # the rate at u is compared with the upper end of the binomial 99% band around u.
    rng = np.random.default_rng(3)
    b, alpha, r = 99, 0.1, 20000
    ps = []
    for _ in range(r):
        x = rng.standard_normal(b + 1)
        stop = calibration.sequential_stop(x[:1], ("greater",), alpha=alpha, n_resamples=b)
        draws = x[1:, None]
        L = stop(draws) or b
        ps.append(calibration.mc_calibration(x[:1], draws[:L], ("greater",), alpha=alpha, n_resamples=b,
                                             sequential=True)[0]["pvalue"])
    ps = np.array(ps)
    for u in (0.01, 0.05, 0.1, 0.3, 0.6):
        assert (ps <= u).mean() <= _binomial_band(r, u)[1]


def test_sequential_pvalues_valid_quick():
    # As above with R = 3000 at u = alpha = 0.1: the binomial 99% band's upper end is about 0.114.
    rng = np.random.default_rng(4)
    b, alpha, r = 49, 0.1, 3000
    rejections = 0
    for _ in range(r):
        x = rng.standard_normal(b + 1)
        draws = x[1:, None]
        L = calibration.sequential_stop(x[:1], ("greater",), alpha=alpha, n_resamples=b)(draws) or b
        p = calibration.mc_calibration(x[:1], draws[:L], ("greater",), alpha=alpha, n_resamples=b,
                                       sequential=True)[0]["pvalue"]
        rejections += p <= alpha
    lo, hi = _binomial_band(r, math.floor(alpha * (b + 1)) / (b + 1))
    assert lo <= rejections / r <= hi


# --------------------------------------------------------------------------- min-p omnibus


def test_minp_omnibus_is_exact_under_exchangeability():
    # Data and draws i.i.d. from a skewed law that is not the reference law: the rank of T is uniform,
    # so the rejection rate equals floor(alpha (B+1))/(B+1) = 0.05 up to Monte Carlo error.  R = 1000:
    # 99% binomial band about +-0.018.
    rng = np.random.default_rng(6)
    b, r, n = 99, 1000, 30
    rejections = 0
    for _ in range(r):
        rows = np.column_stack([1.0 + rng.exponential(0.1, b + 1), rng.exponential(0.05, b + 1)])
        out = calibration.minp_omnibus(rows[0], rows[1:], ("edge", "radial"), ("greater", "greater"), n)
        rejections += out["pvalue"] <= 0.05
    lo, hi = _binomial_band(r, 0.05)
    assert lo <= rejections / r <= hi


def test_minp_statistic_is_min_of_reference_pvalues():
    vals = np.array([[4, 1.3718, 0.01], [8, 1.0, 0.2]])
    names, alts = ("real_count", "edge", "radial"), ("two-sided", "greater", "greater")
    ref = calibration.reference_pvalues(vals, names, alts, 20)
    assert ref[0, 0] == pytest.approx(calibration.real_count_calibration(4, 20)["pvalue"])
    assert ref[0, 1] == pytest.approx(calibration.edge_calibration(1.3718, 20)["pvalue"])
    np.testing.assert_allclose(np.exp(calibration.minp_statistic(vals, names, alts, 20)), ref.min(axis=1))


def test_reference_maps_stay_strictly_monotone_in_the_far_tail():
    # Beyond the radial table's 0.999 level and where the edge law's tail is no longer resolved the
    # maps continue (weights, not p-values): strictly decreasing, continuous at the knot, and equal
    # to the calibrated p-values inside the resolved range.
    n = 100
    w2 = np.linspace(0.0, 50.0, 400) / n ** calibration._table().SCALE_EXPONENT
    radial = calibration.reference_log_pvalues(w2[:, None], ["radial"], ["greater"], n)[:, 0]
    table_p, beyond = calibration.radial_table_pvalue(w2, n)[:2]
    assert beyond.sum() > 100 and np.isfinite(radial).all()
    assert np.all(np.diff(radial[np.flatnonzero(beyond)[0] - 1 :]) < 0)
    np.testing.assert_allclose(np.exp(radial[~beyond]), table_p[~beyond], rtol=1e-12)
    rho = np.linspace(1.0, 10.0, 500)
    edge = calibration.reference_log_pvalues(rho[:, None], ["edge"], ["greater"], n)[:, 0]
    assert np.all(np.diff(edge) < 0) and np.isfinite(edge).all()
    knot = calibration._edge_knot(n)[0] / np.sqrt(n)
    resolved = rho < knot
    np.testing.assert_allclose(np.exp(edge[resolved]), spectral_radius_sf(rho[resolved] * np.sqrt(n), n), rtol=1e-12)
    around = calibration.reference_log_pvalues([[knot - 1e-9], [knot + 1e-9]], ["edge"], ["greater"], n)
    assert around[0, 0] == pytest.approx(around[1, 0], abs=1e-6)


# --------------------------------------------------------------------------- radial table


def test_radial_table_provenance():
    script = ROOT / _radial_table.SCRIPT
    assert script.is_file()  # the header names a script that exists under that exact path
    text = (ROOT / "nullspec" / "_radial_table.py").read_text()
    assert _radial_table.SCRIPT in text and str(_radial_table.SEED) in text and "do not edit" in text
    assert len(_radial_table.REPLICATIONS) == len(_radial_table.N_GRID)


def _table_script():
    """validation/make_radial_table.py, imported from its path."""
    spec = importlib.util.spec_from_file_location("make_radial_table", ROOT / _radial_table.SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_radial_table_records_streams_and_runs():
    t = _radial_table
    assert len(t.STREAMS) == len(t.N_GRID) and set(t.STREAMS) <= {1, 2}
    covered = [n for run in t.RUNS for n in run["sizes"]]
    assert sorted(covered) == list(t.N_GRID)  # every row comes from exactly one recorded run
    for run in t.RUNS:
        assert {t.STREAMS[t.N_GRID.index(n)] for n in run["sizes"]} == {run["stream"]}
        assert f"stream {run['stream']}" in t.__doc__


def test_table_script_add_keeps_existing_rows(tmp_path):
    script = _table_script()
    target = tmp_path / "table.py"
    script.add_rows([11], n_jobs=1, target=target, reps=lambda n: 200)
    rows, runs, exponent = script.load_table(target)
    old, old_runs, _ = script.load_table()
    assert all(rows[n] == old[n] for n in old)  # merged, not recomputed
    assert rows[11]["stream"] == script.STREAM and rows[11]["replications"] == 200
    assert runs[:-1] == old_runs and runs[-1]["sizes"] == (11,) and exponent == _radial_table.SCALE_EXPONENT
    assert "N in (11,)" in target.read_text()
    with pytest.raises(SystemExit, match=r"sizes \[11\] are already in the table"):
        script.add_rows([11, 13], n_jobs=1, source=target, target=target, reps=lambda n: 10)


def test_radial_table_covers_sizes_up_to_1000(tmp_path, monkeypatch):
    # Between 500 and 1000 the p-value is interpolated in the table: no simulation; beyond 1000, a simulation.
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))
    monkeypatch.setattr(calibration, "simulate_radial_null", lambda n, **kw: np.linspace(0.01, 0.05, kw["n_reps"]))
    for n in (650, 800, 999, 1000):
        assert calibration.radial_calibration(0.02, 0.0, n)["method"].startswith("shipped table")
    assert not list(tmp_path.glob("*.npz"))
    assert calibration.radial_calibration(0.02, 0.0, 1001)["method"].startswith("simulated Gaussian null")


def test_radial_table_is_monotone_and_brackets():
    q = np.array(_radial_table.QUANTILES)
    lo, hi = np.array(_radial_table.LOWER), np.array(_radial_table.UPPER)
    assert np.all(np.diff(q, axis=1) > 0)
    assert np.all(lo <= q) and np.all(q <= hi)
    assert np.all(np.diff(_radial_table.N_GRID) > 0)


def test_radial_scaling_recorded():
    # sqrt(N) W2 was chosen as the scaled quantity: the fitted slope of log median(W2) on log N must be
    # near -1/2 (rigidity), not 0 as for an i.i.d. sample.
    assert _radial_table.SCALE_EXPONENT == 0.5
    assert -0.6 < _radial_table.FITTED_SLOPE < -0.3


def test_radial_table_pvalue_at_tabulated_points_and_bounds():
    t = _radial_table
    n = t.N_GRID[t.N_GRID.index(100)]
    row = np.array(t.QUANTILES[t.N_GRID.index(100)]) / np.sqrt(n)
    for level, x in zip(t.LEVELS, row):
        p, bounded, _ = calibration.radial_table_pvalue(x, n)
        assert float(p) == pytest.approx(1 - level, rel=1e-9) and not bounded
    p, bounded, _ = calibration.radial_table_pvalue(row[-1] * 2, n)
    assert float(p) == pytest.approx(1 - t.LEVELS[-1]) and bounded
    c = calibration.radial_calibration(row[-1] * 2, 0.1, n)
    assert c["pvalue_interval"] == (0.0, c["pvalue"]) and "bound" in c["method"]
    # monotone decreasing in the statistic, between the levels too
    xs = np.linspace(row[0] * 0.5, row[-1] * 1.5, 400)
    assert np.all(np.diff(calibration.radial_table_pvalue(xs, n)[0]) <= 0)
    assert np.all(np.diff(calibration.radial_table_pvalue(xs, 73)[0]) <= 0)


def test_radial_table_size_at_an_untabulated_n():
    # Fresh simulation (a seed the table did not use) at N = 45, between grid sizes 40 and 50: the size of
    # the 5% test must lie in the binomial 99% band for R = 2000 (about +-0.0126), which checks the table
    # and the interpolation in N together.
    r, n = 2000, 45
    w = calibration.simulate_radial_null(n, n_reps=r, seed=987654)
    p = calibration.radial_table_pvalue(w, n)[0]
    lo, hi = _binomial_band(r, 0.05)
    assert lo <= (p <= 0.05).mean() <= hi


@pytest.mark.slow
def test_radial_table_size_between_the_added_sizes():
    # As above, between the rows added by --add: a fresh simulation at N = 700 (between 650 and 800,
    # a seed the table did not use), R = 1000; the size of the 5% test must lie in the binomial 99% band
    # for R = 1000 (about +-0.018).  About 4 min of CPU.
    r, n = 1000, 700
    w = calibration.simulate_radial_null(n, n_reps=r, seed=424242, n_jobs=2, progress=False)
    p = calibration.radial_table_pvalue(w, n)[0]
    lo, hi = _binomial_band(r, 0.05)
    assert lo <= (p <= 0.05).mean() <= hi


# --------------------------------------------------------------------------- on-demand radial null and cache


def test_on_demand_radial_null_is_cached(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))
    first, meta = calibration.radial_null_sample(5, center="none", scale=1.0, diagonal="shift")
    files = list(tmp_path.glob("*.npz"))
    assert len(files) == 1 and meta["n_reps"] == len(first)

    def boom(*args, **kwargs):
        raise AssertionError("simulated again despite the cache")

    monkeypatch.setattr(calibration, "simulate_radial_null", boom)
    again, _ = calibration.radial_null_sample(5, center="none", scale=2.5, diagonal="shift")  # same kinds
    np.testing.assert_array_equal(first, again)


def test_on_demand_radial_null_same_numbers_without_cache(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path / "a"))
    a, _ = calibration.radial_null_sample(4, scale="mad")
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path / "b"))
    b, _ = calibration.radial_null_sample(4, scale="mad")
    np.testing.assert_array_equal(a, b)  # the seed is fixed by (N, policy)
    c = calibration.radial_calibration(float(np.median(a)), 0.0, 4, scale="mad")
    assert 0.4 < c["pvalue"] < 0.6 and "cached" in c["method"]


def test_simulated_radial_null_is_the_same_for_any_n_jobs():
    # 24 draws at N = 200 are 24 one-draw batches, enough for the engine to use a pool with 2 workers.
    one = calibration.simulate_radial_null(200, n_reps=24, seed=11, n_jobs=1, progress=False)
    two = calibration.simulate_radial_null(200, n_reps=24, seed=11, n_jobs=2, progress=False)
    np.testing.assert_array_equal(one, two)
    assert one.shape == (24,) and np.all(one > 0) and len(np.unique(one)) == 24


def test_simulated_radial_null_runs_the_test_pipeline():
    # Draw j is the first standard-normal matrix of default_rng(batch_seed(root, j)) (one draw per batch, whatever
    # the engine's default batch size); the sample must equal the default pipeline (standardise, spectrum,
    # radial) applied to those matrices.
    from nullspec._rng import batch_seed
    from nullspec.spectrum import compute_spectrum
    from nullspec.standardize import standardize
    from nullspec.statistics import radial

    w = calibration.simulate_radial_null(12, n_reps=5, seed=3, progress=False)
    root = np.random.SeedSequence(3)
    matrices = [np.random.default_rng(batch_seed(root, j)).standard_normal((12, 12)) for j in range(5)]
    direct = [radial(compute_spectrum(standardize(m).matrix)) for m in matrices]
    np.testing.assert_allclose(w, direct, rtol=1e-12)


def test_on_demand_radial_null_records_its_stream(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))
    _, meta = calibration.radial_null_sample(4, diagonal="shift", n_jobs=1, progress=False)
    assert meta["stream"] == "perdraw" and meta["seed"][:2] == [20240917, 4] and meta["n_reps"] == 2000
    (stored,) = tmp_path.glob("*.npz")
    assert stored.name.startswith("radial-perdraw-n4-")  # a new key: samples of the older stream are not read
    assert json.loads(str(np.load(stored)["header"]))["meta"] == meta


def test_interrupted_radial_null_is_not_cached(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))

    def interrupted(*args, **kwargs):  # what draw_null returns after Ctrl-C: the finished batches only
        return types.SimpleNamespace(complete=False, values=np.ones((3, 1)))

    monkeypatch.setattr(calibration, "draw_null", interrupted)
    with pytest.raises(KeyboardInterrupt):
        calibration.radial_null_sample(7, diagonal="shift")
    assert not list(tmp_path.glob("*.npz"))


def test_radial_calibration_passes_jobs_and_progress_to_the_simulation(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path))
    seen = {}

    def record(n, **kwargs):
        seen.update(kwargs)
        return np.linspace(0.01, 1.0, kwargs["n_reps"])

    monkeypatch.setattr(calibration, "simulate_radial_null", record)
    calibration.radial_calibration(0.5, 0.0, 9, diagonal="shift", n_jobs=2, progress=False)
    assert seen["n_jobs"] == 2 and seen["progress"] is False


def test_cache_location_and_stale_entries(tmp_path, monkeypatch):
    monkeypatch.delenv("NULLSPEC_CACHE_DIR", raising=False)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    assert _cache.cache_dir() == tmp_path / "nullspec"
    _cache.cached_array("k", {"seed": 1}, lambda: np.arange(3.0))
    stored = np.load(tmp_path / "nullspec" / "k.npz")
    header = json.loads(str(stored["header"]))
    assert header["meta"] == {"seed": 1} and "version" in header
    # other metadata (a different seed, or a different package version) is a miss
    assert _cache.cached_array("k", {"seed": 2}, lambda: np.zeros(2)).tolist() == [0.0, 0.0]
    monkeypatch.setattr(_cache, "__version__", "0.0.0-other")
    assert _cache.cached_array("k", {"seed": 2}, lambda: np.ones(2)).tolist() == [1.0, 1.0]
    assert not list((tmp_path / "nullspec").glob(".tmp-*"))  # no temporary file left behind
