"""Tests of nullspec.ginibre.edge: the spectral-radius law of a real Ginibre matrix.

References: THEORY.md section 6 (the Poisson-G* quantile column, computed there with mpmath
quadrature, and Monte Carlo quantiles with order-statistic CIs), mpmath values stored by
tests/reference/ginibre_radial_mpmath.py, and seeded Monte Carlo judged with scipy.stats.binomtest.
"""

import functools
import json
import pathlib
import re

import mpmath as mp
import numpy as np
import pytest
from scipy import stats

from nullspec.ginibre import expected_outside, spectral_radius_bound, spectral_radius_isf, spectral_radius_sf

REFERENCE = pathlib.Path(__file__).parents[1] / "reference"
JSON = json.loads((REFERENCE / "ginibre_radial_mpmath.json").read_text())
LEVELS = np.array([0.95, 0.99, 0.999])

# THEORY.md section 6, column "Poisson-G*": quantiles of rho/sqrt(N) at levels .95/.99/.999, i.e.
# 1 - exp(-G*_N(r)) = 1 - level (the rows N >= 1000 are the "predictions for larger N").
POISSON_QUANTILES = {
    20: (1.2605, 1.3718, 1.5053),
    50: (1.1694, 1.2356, 1.3166),
    100: (1.1223, 1.1668, 1.2226),
    200: (1.0883, 1.1182, 1.1567),
    500: (1.0575, 1.0752, 1.0987),
    1000: (1.0416, 1.0534, 1.0697),
    10**4: (1.0143, 1.0174, 1.0220),
    10**5: (1.0049, 1.0058, 1.0070),
}


class TestQuantiles:
    @pytest.mark.parametrize("n", sorted(POISSON_QUANTILES))
    def test_theory_poisson_quantile_table(self, n):
        # Four printed digits: agreement within half a unit of the last digit (plus rounding slack).
        got = spectral_radius_isf(1.0 - LEVELS, n) / np.sqrt(n)
        np.testing.assert_allclose(got, POISSON_QUANTILES[n], atol=0.5e-4 + 1e-9)

    @pytest.mark.parametrize("n", [1, 2, 10, 100, 1000, 10**5])
    def test_round_trip(self, n):
        p = np.logspace(-300, -0.05, 60)
        r = spectral_radius_isf(p, n)
        solved = r > 0
        np.testing.assert_allclose(spectral_radius_sf(r[solved], n), p[solved], rtol=1e-11)
        # Radii in the tail: near and inside the bulk sf is close to 1 and flat, so r is ill-determined.
        radii = np.sqrt(n) + np.array([1.0, 2.0, 4.0, 6.0])
        np.testing.assert_allclose(spectral_radius_isf(spectral_radius_sf(radii, n), n), radii, rtol=1e-13)

    def test_large_p_gives_radius_zero_for_tiny_matrices(self):
        # For N = 1, sf(0) = 1 - exp(-G*(0)) = 1 - exp(-1): no radius has a larger exceedance chance.
        sf0 = spectral_radius_sf(0.0, 1)
        assert sf0 == pytest.approx(-np.expm1(-1.0), rel=1e-14)
        np.testing.assert_array_equal(spectral_radius_isf([0.7, 0.99], 1), 0.0)
        assert spectral_radius_isf(0.6, 1) > 0
        assert np.ndim(spectral_radius_isf(0.05, 10)) == 0


class TestSurvivalAndBound:
    @pytest.mark.parametrize("record", JSON["tail_outside"], ids=lambda r: f"n{r['n']}-r{r['r']}")
    def test_far_tail_against_mpmath(self, record):
        # G* ~ 1e-20 .. 1e-25 from tests/reference/ginibre_radial_mpmath.json (mpmath, 50 digits); the sf
        # is 1 - exp(-G*) evaluated in mpmath from the stored G*.
        g_star = mp.mpf(record["upper"])
        sf = float(-mp.expm1(-g_star))
        assert spectral_radius_sf(record["r"], record["n"]) == pytest.approx(sf, rel=2e-13)
        assert spectral_radius_bound(record["r"], record["n"]) == pytest.approx(float(g_star), rel=2e-13)

    def test_theory_check_values(self):
        # THEORY.md mpmath check values, section 5: G*(11; 100) and G*(13; 100).
        assert spectral_radius_bound(11.0, 100) == pytest.approx(0.111700796061578, rel=1e-13)
        assert spectral_radius_sf(13.0, 100) == pytest.approx(-np.expm1(-1.97627637406427e-5), rel=1e-13)

    @pytest.mark.parametrize("n", [1, 5, 100])
    def test_bound_dominates_sf_and_is_clipped(self, n):
        r = np.linspace(0.0, np.sqrt(n) + 8.0, 200)
        bound = spectral_radius_bound(r, n)
        assert np.all(bound >= spectral_radius_sf(r, n))
        assert np.all(bound <= 1.0)
        assert bound[0] == 1.0
        np.testing.assert_array_equal(bound, np.minimum(expected_outside(r, n, part="upper"), 1.0))


@functools.lru_cache(maxsize=None)
def _spectral_radii(n, n_matrices, seed):
    """Spectral radii of ``n_matrices`` seeded real Ginibre draws of size ``n``."""
    rng = np.random.default_rng(seed)
    return np.abs(np.linalg.eigvals(rng.standard_normal((n_matrices, n, n)))).max(axis=1)


# Matrices per size: ~2.5 s of eigen-solves in total on one core.
MC_SIZES = {20: 20000, 50: 4000}


class TestMonteCarlo:
    @pytest.mark.parametrize("n", sorted(MC_SIZES))
    def test_exceedance_at_poisson_quantiles(self, n, seed):
        # THEORY.md section 6: the Poisson-G* quantiles match simulated ones within their CIs for
        # N = 20 ... 500.  The number of the M matrices whose spectral radius exceeds isf(p) is
        # Binomial(M, p) if the law is right; the exact binomial test (scipy.stats) must not reject at
        # 1e-4 (false alarm 1e-4 per check, 6e-4 over the 6 here).  The model error of the Poisson form
        # at these levels (THEORY's simulated quantiles agree to <= 0.002 in rho/sqrt(N), about 1e-3 in
        # probability) is below the binomial SE sqrt(p(1-p)/M) for p >= 0.01 and M <= 20000.
        radii = _spectral_radii(n, MC_SIZES[n], seed)
        for p in (0.05, 0.01, 0.002):
            k = int(np.sum(radii >= spectral_radius_isf(p, n)))
            assert stats.binomtest(k, radii.size, p).pvalue > 1e-4, (p, k)

    @pytest.mark.parametrize("n", sorted(MC_SIZES))
    def test_bound_is_not_exceeded(self, n, seed):
        # P(rho >= r) <= G*(r) exactly: a one-sided binomial test of "exceedance rate > G*" must not
        # reject at 1e-4 anywhere on a grid of radii.
        radii = _spectral_radii(n, MC_SIZES[n], seed)
        for r in np.sqrt(n) * np.array([1.0, 1.1, 1.2, 1.3]):
            k = int(np.sum(radii >= r))
            bound = float(spectral_radius_bound(r, n))
            if bound < 1.0:
                assert stats.binomtest(k, radii.size, bound, alternative="greater").pvalue > 1e-4, (r, k, bound)


class TestArgumentErrors:
    @pytest.mark.parametrize("func", [spectral_radius_sf, spectral_radius_bound, spectral_radius_isf])
    @pytest.mark.parametrize("n", [0, 2.5])
    def test_bad_size(self, func, n):
        message = f"`n` must be an integer >= 1 (the matrix size); got {n!r}. Pass a positive whole number."
        with pytest.raises(ValueError, match=re.escape(message)):
            func(0.5, n)

    @pytest.mark.parametrize("func", [spectral_radius_sf, spectral_radius_bound])
    def test_bad_radius(self, func):
        with pytest.raises(ValueError, match=re.escape("`r` must be >= 0 (a modulus); got -2.0. Pass absolute values")):
            func([3.0, -2.0], 10)
        with pytest.raises(ValueError, match=re.escape("`r` must be finite; got nan. Remove NaN and infinite values.")):
            func(np.nan, 10)

    @pytest.mark.parametrize("p", [0.0, 1.0, 1.5, -0.1, np.nan])
    def test_bad_probability(self, p):
        if np.isnan(p):
            message = "`p` must be finite; got nan. Remove NaN and infinite values."
        else:
            message = f"`p` must lie strictly between 0 and 1; got {p!r}. Pass a tail probability such as 0.05."
        with pytest.raises(ValueError, match=re.escape(message)):
            spectral_radius_isf([0.5, p], 10)
