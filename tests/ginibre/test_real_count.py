"""Tests of nullspec.ginibre.real_count: the number K of real eigenvalues of a real Ginibre matrix.

Where the reference values come from:
- Edelman, Kostlan & Shub (1994, J. Amer. Math. Soc.): the finite sums and the 2F1 closed form of E K
  (closed form quoted from memory; evaluated here with scipy.special.hyp2f1), and exact sums redone
  here with ``fractions``;
- Edelman (1997, J. Multivariate Anal.): P(K_n = n) = 2**(-n(n-1)/4);
- the exact small-n pmf table in Q(sqrt 2) and the check values of the project's theory sheet
  (THEORY.md, from its mpmath runs; the N = 10 and N = 100 values are recomputed here with mpmath);
- mpmath at 0.75 n + 40 digits from the defining matrices: the script
  tests/reference/real_count_mpmath.py wrote tests/reference/real_count_mpmath.json (n = 10, 11, 50,
  51, 200, 201); the same script's functions are also run here at small n;
- seeded Monte Carlo with numpy's eigvals, judged by a chi-square test;
- facts of the field, each marked where used.

Float tolerance of a pmf entry (derived, first order): a float symmetric eigen-solve moves each
Bernoulli parameter by at most about 1e-15 (the theory sheet measured <= 2e-15); we allow
``DMU = 1e-14``.  Entry ``P(k)`` then moves by at most ``DMU * S_k * P(k)``, with the sensitivity
``S_k = sum_i |P^(-i)(k-1) - P^(-i)(k)| / P(k)`` computed in mpmath (see the reference script), plus
1e-13 relative for the recursion and the assembly of the matrix.  Entries whose predicted error
``DMU * S_k`` exceeds 1 % are outside the first-order regime: float64 cannot resolve them (the module
docstring says so) and they are not compared.
"""

import importlib.util
import json
import math
import pathlib
import re
from fractions import Fraction

import mpmath as mp
import numpy as np
import pytest
from scipy import special, stats

from nullspec.ginibre import real_count as rc
from nullspec.ginibre import real_count_mean, real_count_pmf, real_count_var

REFERENCE = pathlib.Path(__file__).parents[1] / "reference"
SCRIPT = REFERENCE / "real_count_mpmath.py"
JSON = json.loads((REFERENCE / "real_count_mpmath.json").read_text())
DMU = 1e-14
SQRT2 = math.sqrt(2.0)


def _load_script():
    """The mpmath reference formulas of tests/reference/real_count_mpmath.py, loaded from its file."""
    spec = importlib.util.spec_from_file_location("real_count_mpmath", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


MPREF = _load_script()


def _assert_pmf_matches(pmf, reference):
    """Compare a float pmf with an mpmath reference dict (``pmf``, ``sensitivity``) entry by entry."""
    compared = 0
    for key, text in reference["pmf"].items():
        exact = mp.mpf(text)
        predicted = DMU * float(reference["sensitivity"][key])
        if exact < 1e-300 or predicted > 0.01:
            continue
        got = pmf[int(key)]
        assert abs(mp.mpf(got) - exact) <= (1e-13 + predicted) * exact, (key, got, exact)
        compared += 1
    assert compared >= min(len(reference["pmf"]), 5)


class TestMean:
    # Exact values of the theory sheet (section 1), E = a + b sqrt 2 (EKS 1994 sums).
    @pytest.mark.parametrize(
        ("n", "exact"),
        [(1, 1.0), (2, SQRT2), (3, 1 + SQRT2 / 2), (4, 11 * SQRT2 / 8), (5, 1 + 13 * SQRT2 / 16),
         (10, 67843 * SQRT2 / 32768)],
    )
    def test_exact_small_n(self, n, exact):
        assert real_count_mean(n) == pytest.approx(exact, rel=4e-16)

    # Theory sheet table (section 1), printed to 17 significant digits.
    @pytest.mark.parametrize(
        ("n", "value"),
        [(20, 4.0011465768101878), (50, 6.0995299273911004), (100, 8.4489064481572756),
         (1000, 25.721862882550503), (10**5, 252.81230602672889)],
    )
    def test_theory_table(self, n, value):
        assert real_count_mean(n) == pytest.approx(value, rel=1e-15)

    @staticmethod
    def _exact_sum(n):
        """EKS (1994) sums with exact rationals: E = a + b sqrt 2, evaluated in mpmath at 40 digits."""
        a, b, term = Fraction(n % 2), Fraction(0), Fraction(1)  # term = (2j-1)!!/(2j)!!
        for j in range(n):
            if j % 2 == n % 2:
                b += term
            term *= Fraction(2 * j + 1, 2 * j + 2)
        with mp.workdps(40):
            return float(mp.mpf(a.numerator) / a.denominator
                         + mp.sqrt(2) * mp.mpf(b.numerator) / b.denominator)

    @pytest.mark.parametrize("n", [6, 7, 31, 64, 65, 400, 401, 1201])
    def test_exact_rational_sum(self, n):
        assert real_count_mean(n) == pytest.approx(self._exact_sum(n), rel=1e-15)

    @pytest.mark.parametrize("n", [1, 2, 3, 4, 5, 10, 11, 50, 51, 1000, 1001, 10**4, 10**5])
    def test_eks_hypergeometric_closed_form(self, n):
        # EKS 1994 [from memory]: E = 1/2 + sqrt 2 Gamma(n + 1/2) / (Gamma(n) sqrt pi) 2F1(1, -1/2; n; 1/2).
        # scipy's poch/hyp2f1 evaluate it to ~2e-12 at n = 1e4 (measured), hence the tolerance.
        closed = 0.5 + SQRT2 * special.poch(n, 0.5) / math.sqrt(math.pi) * special.hyp2f1(1, -0.5, n, 0.5)
        assert real_count_mean(n) == pytest.approx(closed, rel=5e-12)

    def test_large_n_asymptotics(self):
        # EKS 1994 [from memory]: E = sqrt(2n/pi) (1 - 3/(8n) - 3/(128 n**2) + ...) + 1/2; the two
        # correction coefficients are the theory sheet's confirmation (section 1).
        for n in (10**4, 10**5, 10**6):
            scaled = (real_count_mean(n) - 0.5) / math.sqrt(2 * n / math.pi) - 1
            assert scaled == pytest.approx(-3 / (8 * n) - 3 / (128 * n**2), abs=1e-3 / n**2)


class TestPmfExact:
    @pytest.mark.parametrize("n", [1, 2, 3, 4, 9, 10, 11, 399, 400, 401, 402, 1000, 1001])
    def test_normalised_and_parity(self, n):
        pmf = real_count_pmf(n)
        assert pmf.shape == (n + 1,)
        assert np.all(pmf >= 0)
        assert math.fsum(pmf) == pytest.approx(1.0, abs=1e-14)
        assert np.all(pmf[1 - n % 2 :: 2] == 0.0)  # k of the wrong parity: exact zeros

    # Theory sheet, section 2.2: exact pmf for n = 2..8, entries a + b sqrt 2 (mpmath + identify).
    TABLE = {
        2: {2: (0, 1, 2), 0: (1, -1, 2)},
        3: {3: (0, 1, 4), 1: (1, -1, 4)},
        4: {4: (Fraction(1, 8), 0, 1), 2: (Fraction(-1, 4), 11, 16), 0: (Fraction(9, 8), -11, 16)},
        5: {5: (Fraction(1, 32), 0, 1), 3: (Fraction(-1, 16), 13, 32), 1: (Fraction(33, 32), -13, 32)},
        6: {6: (0, 1, 256), 4: (Fraction(271, 1024), -3, 256), 2: (Fraction(-271, 512), 107, 128),
            0: (Fraction(1295, 1024), -53, 64)},
        7: {7: (0, 1, 2048), 5: (Fraction(355, 4096), -3, 2048), 3: (Fraction(-355, 2048), 1087, 2048),
            1: (Fraction(4451, 4096), -1085, 2048)},
        8: {8: (Fraction(1, 16384), 0, 1), 6: (Fraction(-1, 4096), 3851, 262144),
            4: (Fraction(53519, 131072), -11553, 262144), 2: (Fraction(-53487, 65536), 257185, 262144),
            0: (Fraction(184551, 131072), -249483, 262144)},
    }

    @pytest.mark.parametrize("n", sorted(TABLE))
    def test_small_n_table(self, n):
        pmf = real_count_pmf(n)
        with mp.workdps(40):
            for k, (a, b_num, b_den) in self.TABLE[n].items():
                a = Fraction(a)
                exact = mp.mpf(a.numerator) / a.denominator + b_num * mp.sqrt(2) / b_den
                assert pmf[k] == pytest.approx(float(exact), rel=1e-13), k

    @pytest.mark.parametrize("n", range(1, 21))
    def test_all_real_probability_edelman(self, n):
        # Edelman 1997: P(K_n = n) = 2**(-n(n-1)/4).  The tolerance is the module-level first-order one;
        # for this entry S = sum 1/mu_i (mpmath parameters from the reference script's functions).
        with mp.workdps(int(0.75 * n) + 40):
            params = MPREF.even_params(n) if n % 2 == 0 else MPREF.odd_params(n) if n > 1 else []
            predicted = DMU * float(mp.fsum(1 / p for p in params))
        if predicted > 0.01:
            pytest.skip("beyond float64 resolution (first-order error above 1 %)")
        assert real_count_pmf(n)[n] == pytest.approx(2.0 ** (-n * (n - 1) / 4), rel=1e-13 + predicted)

    @pytest.mark.parametrize("n", [10, 11, 50, 51, 200, 201])
    def test_against_stored_mpmath_reference(self, n):
        # Values written by tests/reference/real_count_mpmath.py (mpmath, 0.75 n + 40 digits).
        reference = JSON[str(n)]
        _assert_pmf_matches(real_count_pmf(n), reference)
        assert real_count_var(n) == pytest.approx(float(reference["var"]), rel=1e-13)
        assert real_count_mean(n) == pytest.approx(float(reference["mean"]), rel=1e-15)

    @pytest.mark.parametrize("n", [12, 13, 24, 25])
    def test_against_mpmath_recomputed_here(self, n):
        # The reference script's own functions, run now (a few ms each at these n).
        _assert_pmf_matches(real_count_pmf(n), MPREF.reference(n))

    def test_theory_check_values_n10(self):
        # Theory sheet check values (its mpmath runs): N = 10.
        top = [0.912927410443, 0.439574898113, 0.100640871455]
        assert rc._bernoulli_params(10)[:3] == pytest.approx(top, abs=1e-12)
        assert real_count_var(10) == pytest.approx(1.708384645457134, rel=1e-14)
        assert real_count_pmf(10)[0] == pytest.approx(0.04341048218949929, rel=1e-14)
        # ... and recomputed here with mpmath at 47 digits.
        recomputed = MPREF.reference(10)
        assert float(recomputed["params"][0]) == pytest.approx(top[0], abs=1e-12)
        assert float(recomputed["var"]) == pytest.approx(1.708384645457134, rel=1e-15)
        assert float(recomputed["pmf"]["0"]) == pytest.approx(0.04341048218949929, rel=1e-15)

    def test_theory_check_values_n11(self):
        # Theory sheet check values (its mpmath runs): N = 11.
        assert real_count_var(11) == pytest.approx(1.785188496744276, rel=1e-14)
        assert real_count_pmf(11)[1] == pytest.approx(0.1997496887068814, rel=1e-14)

    def test_theory_check_value_n100(self):
        # Theory sheet check value: P(K_100 = 0) = 3.272944101562499e-5 ...
        assert real_count_pmf(100)[0] == pytest.approx(3.272944101562499e-5, rel=1e-13)
        # ... recomputed here with mpmath (0.75 n + 40 digits; about a second).
        with mp.workdps(115):
            exact = mp.fprod(1 - p for p in MPREF.even_params(100))
        assert float(exact) == pytest.approx(3.272944101562499e-5, rel=1e-15)


class TestRegimes:
    @pytest.mark.parametrize("n", [300, 301, 400, 401, 500, 601])
    def test_dense_and_nystrom_agree(self, n):
        # The two evaluations share nothing but the final eigen-solves; the theory sheet measured
        # <= 2e-15 on the top parameters.
        dense = np.sort(rc._dense_params(n))[::-1]
        nystrom = np.sort(rc._nystrom_params(n))[::-1]
        resolved = dense > 1e-13
        assert nystrom[: resolved.sum()] == pytest.approx(dense[resolved], abs=1e-14)
        for params in (dense, nystrom):
            mean = n % 2 + 2 * math.fsum(params[params > 0])
            assert mean == pytest.approx(real_count_mean(n), rel=1e-14)

    def test_upper_gamma_where_scipy_series_is_cut_short(self):
        # mpmath at 30 digits; n = 10**6, 4.6 to 9 standard deviations below the mean (module helper).
        a = 10.0**6
        t = a + np.array([-4.6, -6.0, -9.0]) * 1000.0
        with mp.workdps(30):
            exact = [float(mp.gammainc(a, x, mp.inf, regularized=True)) for x in t]
        np.testing.assert_allclose(rc._upper_gamma(a, t), exact, rtol=0, atol=2e-17)

    @pytest.mark.parametrize("n_even", [400, 10**4])
    def test_kernel_matches_its_definition(self, n_even):
        # T_N(x, y) = (2 pi)**-0.5 exp(-(x**2 + y**2)/2) sum_{j < N/2} (xy)**(2j)/(2j)!  summed in mpmath,
        # at nodes around the spectral edge sqrt(N) where the correction R_N matters.
        edge = round(math.sqrt(n_even) / rc._GRID_STEP)
        i = np.array([edge - 30.0, edge - 3.0, edge, edge + 4.0, 3.0, edge])
        j = np.array([edge - 28.0, edge, edge, edge + 1.0, 5.0, edge + 20.0])
        got = rc._kernel(float(n_even), i, j)
        with mp.workdps(40):
            h = mp.mpf(7) / 20
            for g, a, b in zip(got, i, j):
                x, y = h * int(a), h * int(b)
                series = mp.fsum((x * y) ** (2 * k) / mp.factorial(2 * k) for k in range(n_even // 2))
                exact = mp.exp(-(x * x + y * y) / 2) * series / mp.sqrt(2 * mp.pi)
                assert abs(g - exact) <= 1e-16 + 1e-13 * exact, (a, b)

    @pytest.mark.parametrize("n", [10**4, 10**4 + 1, 10**5, 10**5 + 1, 10**6])
    def test_large_n_pmf_mean_matches_mean(self, n):
        pmf = real_count_pmf(n)
        assert pmf @ np.arange(n + 1) == pytest.approx(real_count_mean(n), rel=1e-12)

    @pytest.mark.slow
    def test_large_odd_n(self):
        n = 10**6 + 1
        pmf = real_count_pmf(n)
        assert pmf @ np.arange(n + 1) == pytest.approx(real_count_mean(n), rel=1e-12)
        assert np.all(pmf[::2] == 0.0)

    # Theory sheet, large-N summary (its Nystrom runs): Var K and P(K = n mod 2), printed digits.
    @pytest.mark.parametrize(
        ("n", "var", "p_min"),
        [(100, 4.966779, 3.273e-5), (101, 4.990221, 4.661e-4), (1000, 15.09062, 5.232e-15),
         (10**4, 47.05484, 5.848e-46), (10**5, 148.1192, 7.904e-144)],
    )
    def test_theory_large_n_summary(self, n, var, p_min):
        assert real_count_var(n) == pytest.approx(var, abs=6e-7 * 10 ** math.floor(math.log10(var)))
        assert real_count_pmf(n)[n % 2] == pytest.approx(p_min, rel=2e-4)


class TestFactsOfTheField:
    def test_variance_to_mean_ratio(self):
        # Forrester & Nagao 2007 (PRL) [from memory]: Var K / E K -> 2 - sqrt 2.  The approach is slow
        # (about 0.1/sqrt n, theory sheet), so the bound shrinks with n.
        gaps = []
        for n in (10**3, 10**4, 10**5):
            gap = real_count_var(n) / real_count_mean(n) - (2 - SQRT2)
            assert 0 < gap < 0.1 / math.sqrt(n)
            gaps.append(gap)
        assert gaps == sorted(gaps, reverse=True)

    def test_probability_of_no_real_eigenvalue(self):
        # Kanzieper, Poplavskyi, Timm, Tribe & Zaboronski 2016 [from memory]:
        # log P(K_n = 0) / sqrt(n) -> -zeta(3/2) / sqrt(2 pi) = -1.0421869...
        n = 10**5
        rate = math.log(real_count_pmf(n)[0]) / math.sqrt(n)
        assert rate == pytest.approx(-special.zeta(1.5) / math.sqrt(2 * math.pi), abs=2e-3)

    def test_mean_grows_like_sqrt_2n_over_pi(self):
        # Common practice, no source: E K ~ sqrt(2n/pi) + 1/2, the error falling like n**-0.5.
        for n in (100, 10**4, 10**6):
            assert abs(real_count_mean(n) - math.sqrt(2 * n / math.pi) - 0.5) < 0.5 / math.sqrt(n)


class TestMonteCarlo:
    @pytest.mark.parametrize(("n", "draws"), [(5, 4000), (20, 3000), (50, 2000)])
    def test_pmf_matches_simulation(self, n, draws, seed):
        # K counted as numpy/LAPACK does it (Im == 0 exactly).  Chi-square goodness of fit on the cells
        # with expected count >= 5 (the rest pooled): under a correct pmf the p-value is uniform, so
        # p > 1e-3 fails with probability 1e-3 per seed.  The mean is checked at 4 standard errors
        # (sd from real_count_var / sqrt(draws); a two-sided miss probability of 6e-5).
        rng = np.random.default_rng(seed)
        eig = np.linalg.eigvals(rng.standard_normal((draws, n, n)))
        counts = np.bincount((eig.imag == 0).sum(axis=1), minlength=n + 1)
        pmf = real_count_pmf(n)
        expected = draws * pmf
        big = expected >= 5
        observed = np.append(counts[big], counts[~big].sum())
        expected_cells = np.append(expected[big], expected[~big].sum())
        keep = expected_cells > 0
        scaled = expected_cells[keep] * observed.sum() / expected_cells[keep].sum()
        result = stats.chisquare(observed[keep], scaled)
        assert result.pvalue > 1e-3
        mean = counts @ np.arange(n + 1) / draws
        assert abs(mean - real_count_mean(n)) < 4 * math.sqrt(real_count_var(n) / draws)


class TestValidation:
    @pytest.mark.parametrize("function", [real_count_mean, real_count_var, real_count_pmf])
    @pytest.mark.parametrize("bad", [0, -3, 3.5, 4.0, True, "5", None, np.float64(6.0), np.bool_(True)])
    def test_bad_size(self, function, bad):
        message = (r"`n` must be an integer >= 1 \(the matrix size\); got " + re.escape(repr(bad))
                   + r"\. Pass a positive whole number\.")
        with pytest.raises(ValueError, match=message):
            function(bad)

    @pytest.mark.parametrize("function", [real_count_mean, real_count_var, real_count_pmf])
    def test_size_beyond_the_shared_bound(self, function):
        # the ginibre layer's one size rule (ginibre._checks.check_size) bounds N at 10**9 for every formula
        with pytest.raises(ValueError, match=r"`n` must be at most 1e\+09 .*; got 1000000001\. Pass a realistic"):
            function(10**9 + 1)

    def test_numpy_integer_accepted(self):
        assert real_count_mean(np.int64(10)) == real_count_mean(10)
        np.testing.assert_array_equal(real_count_pmf(np.int32(11)), real_count_pmf(11))
