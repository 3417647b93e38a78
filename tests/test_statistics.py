"""Statistics: against slow loop implementations, scipy.stats, and Monte Carlo under the real Ginibre null."""

import math

import numpy as np
import pytest
from scipy import stats

from nullspec.ginibre import modulus_cdf
from nullspec.spectrum import compute_spectrum
from nullspec.standardize import standardize
from nullspec.statistics import (
    STATISTICS,
    edge,
    evaluate,
    radial,
    radial_shift,
    real_count,
    reciprocity,
    reciprocity_interval,
)


def _ginibre(rng, n):
    return rng.standard_normal((n, n))


def _elliptic(rng, n, tau):
    """Real elliptic matrix with corr(A_ij, A_ji) = tau and unit off-diagonal variance (THEORY.md §7)."""
    g1, g2 = rng.standard_normal((2, n, n))
    sym, skew = (g1 + g1.T) / np.sqrt(2.0), (g2 - g2.T) / np.sqrt(2.0)
    return np.sqrt((1 + tau) / 2) * sym + np.sqrt((1 - tau) / 2) * skew


def _pit_loop(spec):
    return [float(modulus_cdf(abs(complex(z)), spec.n)) for z in spec.z]


class TestAgainstLoops:
    def test_real_count_and_edge(self, seed):
        spec = compute_spectrum(_ginibre(np.random.default_rng(seed), 30))
        assert real_count(spec) == sum(1 for w in spec.eigenvalues if complex(w).imag == 0.0)
        assert isinstance(real_count(spec), int)
        assert edge(spec) == pytest.approx(max(abs(complex(w)) for w in spec.eigenvalues) / math.sqrt(30), rel=1e-14)

    def test_radial_against_the_formula_and_scipy(self, seed):
        spec = compute_spectrum(_ginibre(np.random.default_rng(seed), 40))
        u = sorted(_pit_loop(spec))
        n = len(u)
        w2 = sum((u[i] - (2 * (i + 1) - 1) / (2 * n)) ** 2 for i in range(n)) + 1 / (12 * n)
        assert radial(spec) == pytest.approx(w2, rel=1e-12)
        # scipy.stats is the reference for the statistic only: its p-value assumes independent
        # observations, which eigenvalues are not, and is never used.
        assert radial(spec) == pytest.approx(stats.cramervonmises(u, "uniform").statistic, rel=1e-12)

    def test_radial_shift_against_the_mean_pit(self, seed):
        spec = compute_spectrum(_ginibre(np.random.default_rng(seed), 25))
        assert radial_shift(spec) == pytest.approx(sum(_pit_loop(spec)) / 25 - 0.5, abs=1e-14)

    def test_radial_shift_sign(self, seed):
        g = _ginibre(np.random.default_rng(seed), 80)
        assert radial_shift(compute_spectrum(0.6 * g)) < -0.1  # concentrated towards the centre
        assert radial_shift(compute_spectrum(1.5 * g)) > 0.1  # spread out beyond the edge


class TestUnderTheGinibreNull:
    @pytest.mark.parametrize(("n", "draws"), [(20, 1500), (61, 300)])
    def test_pit_is_uniform_on_average(self, seed, n, draws):
        # F = modulus_cdf is the exact mean law of a modulus, so for N(0, 1) entries (no scale
        # estimated) E[mean_i F(|z_i|)] = 1/2 and E[fraction of u_i in each tenth] = 1/10 exactly.
        # The eigenvalues of one matrix are dependent, so the standard error of each average is
        # estimated across the independent matrices: sd / sqrt(draws).  A 4-SE band has a two-sided
        # false-alarm probability of 6e-5 per check (11 checks per case).
        rng = np.random.default_rng(seed)
        shifts = np.empty(draws)
        fractions = np.empty((draws, 10))
        for b in range(draws):
            spec = compute_spectrum(_ginibre(rng, n))
            shifts[b] = radial_shift(spec)
            u = modulus_cdf(spec.moduli, n)
            fractions[b] = np.histogram(u, bins=10, range=(0.0, 1.0))[0] / n
        se = shifts.std(ddof=1) / np.sqrt(draws)
        assert abs(shifts.mean()) < 4 * se
        se_bins = fractions.std(axis=0, ddof=1) / np.sqrt(draws)
        np.testing.assert_array_less(np.abs(fractions.mean(axis=0) - 0.1), 4 * se_bins)

    def test_radial_detects_heterogeneous_column_scales(self, seed):
        rng = np.random.default_rng(seed)
        n = 100
        null = [radial(compute_spectrum(standardize(_ginibre(rng, n)).matrix)) for _ in range(10)]
        uneven = radial(compute_spectrum(standardize(_ginibre(rng, n) * np.linspace(0.1, 3.0, n)).matrix))
        assert uneven > max(null)


class TestReciprocity:
    @staticmethod
    def _pairs(a):
        n = a.shape[0]
        x = [a[i, j] for i in range(n) for j in range(i + 1, n)]
        y = [a[j, i] for i in range(n) for j in range(i + 1, n)]
        return np.array(x), np.array(y)

    def test_against_corrcoef_and_a_loop(self, seed):
        a = _elliptic(np.random.default_rng(seed), 20, 0.3)
        x, y = self._pairs(a)
        assert reciprocity(a) == pytest.approx(np.corrcoef(x, y)[0, 1], rel=1e-12)
        mx, my = sum(x) / len(x), sum(y) / len(y)
        sxy = sum((xi - mx) * (yi - my) for xi, yi in zip(x, y))
        sxx, syy = sum((xi - mx) ** 2 for xi in x), sum((yi - my) ** 2 for yi in y)
        assert reciprocity(a) == pytest.approx(sxy / math.sqrt(sxx * syy), rel=1e-12)

    def test_same_value_for_raw_and_standardised(self, seed):
        a = 4.0 + 3.0 * _elliptic(np.random.default_rng(seed), 25, -0.4)
        for diagonal in ("include", "shift"):
            assert reciprocity(standardize(a, diagonal=diagonal).matrix) == pytest.approx(reciprocity(a), rel=1e-12)

    def test_extremes_and_undefined(self, seed):
        g = _ginibre(np.random.default_rng(seed), 10)
        assert reciprocity(g + g.T) == pytest.approx(1.0, abs=1e-14)
        assert reciprocity(g - g.T) == pytest.approx(-1.0, abs=1e-14)
        assert math.isnan(reciprocity(np.triu(g)))
        assert all(math.isnan(v) for v in reciprocity_interval(np.triu(g)))

    def test_estimates_the_elliptic_tau(self, seed):
        # Fisher z: atanh(r) ~ N(atanh(tau), 1 / (n_pairs - 3)) for independent bivariate normal pairs.
        tau, n = 0.5, 40
        r = reciprocity(_elliptic(np.random.default_rng(seed), n, tau))
        assert abs(np.arctanh(r) - np.arctanh(tau)) < 4 / math.sqrt(n * (n - 1) / 2 - 3)

    def test_interval_is_the_fisher_z_interval(self, seed):
        a = _elliptic(np.random.default_rng(seed), 30, 0.2)
        r, n_pairs = reciprocity(a), 30 * 29 / 2
        half = stats.norm.ppf(0.95) / math.sqrt(n_pairs - 3)  # 90 % two-sided
        low, high = reciprocity_interval(a, confidence=0.9)
        assert low == pytest.approx(math.tanh(math.atanh(r) - half), rel=1e-10)
        assert high == pytest.approx(math.tanh(math.atanh(r) + half), rel=1e-10)

    def test_interval_coverage(self, seed):
        # 400 independent elliptic matrices: the number of 95 % intervals covering tau is about
        # Binomial(400, 0.95), mean 380, sd 4.36; a 4-sd band is +-17.
        rng = np.random.default_rng(seed)
        covered = 0
        for _ in range(400):
            low, high = reciprocity_interval(_elliptic(rng, 15, 0.4))
            covered += low <= 0.4 <= high
        assert abs(covered - 380) <= 17

    def test_three_pairs_give_the_whole_range(self):
        assert reciprocity_interval(np.array([[0.0, 1, 2], [1.5, 0, 3], [2.5, 2, 0]])) == (-1.0, 1.0)

    def test_errors(self):
        with pytest.raises(ValueError, match=r"`confidence` must lie strictly between 0 and 1; got 95"):
            reciprocity_interval(np.eye(3), confidence=95)
        with pytest.raises(ValueError, match=r"`matrix` must be at least 3 x 3; got shape \(2, 2\)"):
            reciprocity(np.eye(2))


class TestRegistryAndEvaluate:
    def test_registry_is_read_only(self):
        assert tuple(STATISTICS) == ("real_count", "radial", "edge")
        assert STATISTICS["edge"] is edge
        with pytest.raises(TypeError):
            STATISTICS["edge"] = radial

    def test_evaluate_in_the_order_asked(self, seed):
        spec = compute_spectrum(_ginibre(np.random.default_rng(seed), 12))
        got = evaluate(spec, ["edge", "real_count", "radial"])
        assert got.dtype == np.float64 and got.shape == (3,)
        np.testing.assert_array_equal(got, [edge(spec), real_count(spec), radial(spec)])

    def test_evaluate_errors(self, seed):
        spec = compute_spectrum(_ginibre(np.random.default_rng(seed), 5))
        with pytest.raises(TypeError, match=r"`names` must be a sequence of names .*got 'edge' \(str\)"):
            evaluate(spec, "edge")
        with pytest.raises(ValueError, match=r"`names` must be one of 'real_count', 'radial', 'edge'; got 'rho'"):
            evaluate(spec, ("rho",))
        with pytest.raises(ValueError, match=r"`names` must name at least one of"):
            evaluate(spec, ())
