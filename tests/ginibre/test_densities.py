"""Tests of nullspec.ginibre.densities: the mean real and non-real eigenvalue densities.

Reference values come from (i) THEORY.md's mpmath check values (quoted as such), (ii) mpmath
evaluations of the same formulas, recomputed here or stored by tests/reference/ginibre_radial_mpmath.py
in ginibre_radial_mpmath.json, (iii) the closed form of Edelman, Kostlan & Shub (1994) for the expected
number of real eigenvalues (quoted from memory; verified to 1e-11 in THEORY.md section 1), evaluated
with scipy.special.hyp2f1, and (iv) facts of the field, marked where used.
"""

import importlib.util
import json
import pathlib
import re

import mpmath as mp
import numpy as np
import pytest
from scipy import integrate, special, stats

from nullspec.ginibre import complex_density, real_density

REFERENCE = pathlib.Path(__file__).parents[1] / "reference"
JSON = json.loads((REFERENCE / "ginibre_radial_mpmath.json").read_text())


def _mpmath_reference():
    """The mpmath formulas of tests/reference/ginibre_radial_mpmath.py, loaded from its file."""
    spec = importlib.util.spec_from_file_location("ginibre_radial_mpmath", REFERENCE / "ginibre_radial_mpmath.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


MPREF = _mpmath_reference()


class TestRealDensity:
    # THEORY.md mpmath check values, section 3.
    @pytest.mark.parametrize(
        ("x", "n", "expected"),
        [
            (1.0, 2, 0.353798717196135),
            (np.sqrt(5.0), 5, 0.300221665881953),
            (np.sqrt(10.0) + 2.0, 10, 0.00553954235750874),
            (10.0, 100, 0.33232402687247),
        ],
    )
    def test_theory_check_values(self, x, n, expected):
        assert real_density(x, n) == pytest.approx(expected, rel=1e-13)

    @pytest.mark.parametrize("n", [2, 3, 10, 101, 10**4, 10**6])
    def test_value_at_origin_is_one_over_sqrt_2pi(self, n):
        # THEORY.md mpmath check value: rho_r(0; N) = 1/sqrt(2 pi) for every N >= 2.
        assert real_density(0.0, n) == pytest.approx(1.0 / np.sqrt(2.0 * np.pi), rel=1e-15)

    @pytest.mark.parametrize(("x", "n"), [(0.7, 3), (np.sqrt(5.0), 5), (4.5, 10), (12.0, 100), (14.0, 100)])
    def test_against_mpmath_recomputed_here(self, x, n):
        # mpmath evaluation of the same formula (THEORY.md section 3) at 30 digits.
        with mp.workdps(30):
            expected = float(MPREF.real_density(x, n))
        assert real_density(x, n) == pytest.approx(expected, rel=1e-13)

    @pytest.mark.parametrize("record", JSON["real_density"], ids=lambda r: f"n{r['n']}-x{r['x']}")
    def test_against_stored_mpmath_large_n(self, record):
        # tests/reference/ginibre_radial_mpmath.json (mpmath, 50 digits), up to n = 1e5.
        assert real_density(record["x"], record["n"]) == pytest.approx(float(record["value"]), rel=2e-13)

    def test_size_one_is_the_standard_normal_density(self):
        # A 1x1 matrix is its own eigenvalue, N(0, 1); scipy.stats as the reference.
        x = np.linspace(-6, 6, 25)
        np.testing.assert_allclose(real_density(x, 1), stats.norm.pdf(x), rtol=1e-14)

    @pytest.mark.parametrize("n", [1, 2, 3, 5, 10, 50, 100])
    def test_integrates_to_expected_real_count(self, n):
        # int rho_r = E K_n, with E K_n from the EKS (1994) closed form; the density is even.
        edge = np.sqrt(n)
        half, _ = integrate.quad(real_density, 0.0, edge + 20.0, args=(n,), points=[edge], epsabs=0, epsrel=1e-13)
        assert 2.0 * half == pytest.approx(MPREF.eks_mean(n), rel=1e-11)

    def test_plateau_inside_the_bulk(self):
        # Fact of the field (Edelman, Kostlan & Shub 1994, from memory): in raw units (entries of
        # variance 1) the real eigenvalues have density 1/sqrt(2 pi) on (-sqrt N, sqrt N), i.e.
        # E K_n ~ 2 sqrt(N)/sqrt(2 pi) = sqrt(2N/pi).  Away from the edge the finite-N corrections are
        # exponentially small, so the plateau holds to full precision.
        n = 1000
        x = np.array([-0.8, -0.5, 0.0, 0.3, 0.8]) * np.sqrt(n)
        np.testing.assert_allclose(real_density(x, n), 1.0 / np.sqrt(2.0 * np.pi), rtol=1e-12)

    def test_edge_limit_of_forrester_nagao(self):
        # Forrester & Nagao 2007 (from memory; THEORY.md section 3 item 4): rho_r(sqrt N + xi) ->
        # (1/sqrt(2 pi)) [erfc(sqrt 2 xi)/2 + exp(-xi^2)(1 + erf xi)/(2 sqrt 2)].  THEORY.md measured the
        # ratio at 1 +- 7e-4 for N = 1e6; we allow 2e-3.
        n = 10**6
        xi = np.array([-2.0, -1.0, 0.0, 0.5, 1.0, 2.0])
        bracket = 0.5 * special.erfc(np.sqrt(2) * xi) + np.exp(-(xi**2)) * (1 + special.erf(xi)) / (2 * np.sqrt(2))
        limit = bracket / np.sqrt(2 * np.pi)
        np.testing.assert_allclose(real_density(np.sqrt(n) + xi, n), limit, rtol=2e-3)

    def test_even_and_shape_preserving(self):
        x = np.array([[0.5, 1.5, 9.0], [2.0, 3.0, 4.0]])
        out = real_density(x, 7)
        assert out.shape == (2, 3)
        np.testing.assert_array_equal(out, real_density(-x, 7))
        assert np.ndim(real_density(1.0, 7)) == 0


class TestComplexDensity:
    # THEORY.md mpmath check values, section 4.
    @pytest.mark.parametrize(
        ("z", "n", "expected"),
        [
            (0.5j, 100, 0.208709280520368),
            (0.5j, 10, 0.208709280518615),
            (0.5j, 2, 0.162542951103532),
            (1 + 1j, 10, 0.26818828711544),
            (5 + 5j, 100, 0.315217812514922),
        ],
    )
    def test_theory_check_values(self, z, n, expected):
        assert complex_density(z, n) == pytest.approx(expected, rel=1e-13)

    @pytest.mark.parametrize(
        ("x", "y", "n"), [(0.3, 0.2, 2), (1.0, -2.0, 5), (1.0, 1.0, 10), (3.0, 0.1, 10), (9.0, 3.0, 100)]
    )
    def test_against_mpmath_recomputed_here(self, x, y, n):
        # mpmath evaluation of the same formula (THEORY.md section 4) at 30 digits.
        with mp.workdps(30):
            expected = float(MPREF.complex_density(x, y, n))
        assert complex_density(complex(x, y), n) == pytest.approx(expected, rel=1e-13)

    @pytest.mark.parametrize("record", JSON["complex_density"], ids=lambda r: f"n{r['n']}-x{r['x']}-y{r['y']}")
    def test_against_stored_mpmath_large_n(self, record):
        # tests/reference/ginibre_radial_mpmath.json (mpmath, 50 digits), up to n = 1e5.
        z = complex(record["x"], record["y"])
        assert complex_density(z, record["n"]) == pytest.approx(float(record["value"]), rel=2e-13)

    @pytest.mark.parametrize("n", [2, 3, 5, 8])
    def test_plane_mass_is_n_minus_expected_real_count(self, n):
        # A 2-D Cartesian quadrature over one quadrant (the density is symmetric in x and in y), against
        # n - E K_n from the EKS closed form.  This does not use the closed angular integral of radial.py.
        lim = np.sqrt(n) + 8.0

        def density(y, x):
            return complex_density(complex(x, y), n)

        quadrant, _ = integrate.dblquad(density, 0.0, lim, 0.0, lim, epsabs=1e-11, epsrel=1e-11)
        assert 4.0 * quadrant == pytest.approx(n - MPREF.eks_mean(n), rel=1e-10)

    def test_depleted_strip_near_the_real_axis(self):
        # THEORY.md section 4 table (N = 400): pi rho_c(i y) at y = 0.1 ... 15.
        y = np.array([0.1, 0.25, 0.5, 1.0, 2.0, 5.0, 10.0, 15.0])
        table = np.array([0.215, 0.438, 0.656, 0.843, 0.947, 0.990, 0.9975, 0.9989])
        np.testing.assert_allclose(np.pi * complex_density(1j * y, 400), table, atol=6e-4)

    def test_uniform_inside_the_disk_away_from_the_axis(self):
        # Fact of the field (circular law; Edelman 1997, from memory): in raw units the non-real
        # eigenvalues have density 1/pi inside the disk |z| < sqrt N, except in a strip around the real
        # axis where pi rho_c = sqrt(2 pi)|y| erfcx(sqrt 2 |y|) = 1 - 1/(4 y^2) + O(y^-4) (THEORY.md
        # section 4, derived for this project); the next term of the expansion is +3/(16 y^4).
        n = 10**4
        z = np.array([30 + 40j, -20 + 10j, 5 - 60j, 50j])
        strip = 1.0 - 1.0 / (4.0 * z.imag**2)
        next_term = 3.0 / (16 * np.min(np.abs(z.imag)) ** 4)
        np.testing.assert_allclose(np.pi * complex_density(z, n), strip, rtol=1.1 * next_term)

    def test_half_density_at_the_edge(self):
        # THEORY.md section 4: at |z| = sqrt N (off the axis) pi rho_c = 0.473 for N = 400, tending to 1/2
        # (common practice, no source: the circular-law edge is an erfc profile at half height).
        n = 400
        z = np.sqrt(n) * np.exp(1j * np.pi / 3)
        assert np.pi * complex_density(z, n) == pytest.approx(0.473, abs=1e-3)
        assert np.pi * complex_density(np.sqrt(10**6) * 1j, 10**6) == pytest.approx(0.5, abs=3e-3)

    def test_vanishes_on_the_real_axis_and_for_size_one(self):
        np.testing.assert_array_equal(complex_density(np.array([0.0, 1.0, -3.0]), 10), 0.0)
        np.testing.assert_array_equal(complex_density(np.array([0.5j, 1 + 1j]), 1), 0.0)

    def test_conjugate_symmetric_and_shape_preserving(self):
        z = np.array([[0.5 + 1j, 2 - 3j], [1j, 4 + 0.5j]])
        out = complex_density(z, 12)
        assert out.shape == (2, 2)
        np.testing.assert_array_equal(out, complex_density(np.conj(z), 12))
        np.testing.assert_array_equal(out, complex_density(-z, 12))


class TestExtremeArguments:
    def test_huge_arguments_give_exact_limits_without_warnings(self):
        # Warnings are errors under pytest: no overflow may escape for arguments up to the largest float.
        big = np.array([1e3, 1e100, np.finfo(float).max])
        np.testing.assert_array_equal(real_density(big, 10), 0.0)
        np.testing.assert_array_equal(real_density(-big, 1), 0.0)
        np.testing.assert_array_equal(complex_density(big * 1j, 10), 0.0)
        np.testing.assert_array_equal(complex_density(big * (1 + 1j), 10**6), 0.0)
        # Inside the disk of the largest allowed size, the strip formula of TestComplexDensity holds.
        assert np.pi * complex_density(1e4j, 10**9) == pytest.approx(1.0 - 1.0 / (4e8), rel=1e-14)


class TestArgumentErrors:
    @pytest.mark.parametrize("n", [0, -3, 3.5, 10.0, True, "10", None])
    @pytest.mark.parametrize("func", [real_density, complex_density])
    def test_bad_size(self, func, n):
        message = f"`n` must be an integer >= 1 (the matrix size); got {n!r}. Pass a positive whole number."
        with pytest.raises(ValueError, match=re.escape(message)):
            func(1.0, n)

    @pytest.mark.parametrize("bad", [np.nan, np.inf, -np.inf])
    def test_non_finite_x(self, bad):
        with pytest.raises(ValueError, match=re.escape(f"`x` must be finite; got {bad!r}. Remove NaN and infinite")):
            real_density([0.0, bad], 5)

    def test_complex_x(self):
        with pytest.raises(ValueError, match=re.escape("`x` must be real; got a complex array. Pass the real parts")):
            real_density(1 + 1j, 5)

    @pytest.mark.parametrize("func", [real_density, complex_density])
    def test_not_numbers(self, func):
        name = "x" if func is real_density else "z"
        message = f"`{name}` must hold numbers; got ['a', 1]. Pass a number or an array of numbers."
        with pytest.raises(ValueError, match=re.escape(message)):
            func(["a", 1], 5)

    def test_non_finite_z(self):
        with pytest.raises(ValueError, match=re.escape("`z` must be finite; got (nan+1j). Remove NaN and infinite")):
            complex_density([1j, complex(np.nan, 1.0)], 5)
