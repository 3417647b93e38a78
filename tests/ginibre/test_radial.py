"""Tests of nullspec.ginibre.radial: expected eigenvalue counts inside and outside a circle.

Reference values come from THEORY.md's mpmath check values (quoted as such), from mpmath quadrature of
the radial density (recomputed here, or stored by tests/reference/ginibre_radial_mpmath.py in
ginibre_radial_mpmath.json), from the closed form of Edelman, Kostlan & Shub (1994) for E K_n (quoted
from memory, scipy.special.hyp2f1), from facts of the field, and from seeded Monte Carlo.
"""

import functools
import importlib.util
import json
import pathlib
import re

import mpmath as mp
import numpy as np
import pytest
from scipy import special

from nullspec.ginibre import expected_outside, expected_within, modulus_cdf

REFERENCE = pathlib.Path(__file__).parents[1] / "reference"
JSON = json.loads((REFERENCE / "ginibre_radial_mpmath.json").read_text())
PARTS = ("real", "nonreal", "all", "upper")


def _mpmath_reference():
    """The formulas of tests/reference/ginibre_radial_mpmath.py, loaded from its file."""
    spec = importlib.util.spec_from_file_location("ginibre_radial_mpmath", REFERENCE / "ginibre_radial_mpmath.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


MPREF = _mpmath_reference()


def _record_id(record):
    return f"n{record['n']}-r{record['r']:.4g}"


def _tolerance(record, floor):
    """Relative tolerance: ``floor``, widened where mpmath's two quadrature rules disagree."""
    return floor + 10.0 * float(record["quad_rel_diff"])


class TestCheckValues:
    # THEORY.md mpmath check values, section 5.
    def test_n100_r11(self):
        assert expected_within(11.0, 100) == pytest.approx(99.8519915845277, rel=1e-14)
        assert expected_outside(11.0, 100) == pytest.approx(0.148008415472347, rel=1e-13)
        assert expected_outside(11.0, 100, part="upper") == pytest.approx(0.111700796061578, rel=1e-13)

    def test_n100_r13(self):
        assert expected_outside(13.0, 100) == pytest.approx(1.97651543648725e-5, rel=1e-13)
        assert expected_outside(13.0, 100, part="upper") == pytest.approx(1.97627637406427e-5, rel=1e-13)

    def test_n1000_at_the_edge(self):
        assert expected_within(np.sqrt(1000.0), 1000) == pytest.approx(987.506067938805, rel=1e-14)

    def test_recomputed_with_mpmath_here(self):
        # mpmath quadrature (30 digits, Gauss-Legendre and tanh-sinh) of the radial density, N = 20.
        with mp.workdps(30):
            tail, diff = MPREF.integrate(MPREF.radial_real, 7.5, 7.5 + 16, 20)
            head, _ = MPREF.integrate(MPREF.radial_nonreal, 0.0, 3.0, 20)
        assert diff < 1e-20
        assert expected_outside(7.5, 20, part="real") == pytest.approx(float(tail), rel=1e-13)
        assert expected_within(3.0, 20, part="nonreal") == pytest.approx(float(head), rel=1e-13)


class TestInsideAPanel:
    # F(r) between two grid points (panels of width 1/8) comes from the polynomial through the panel's
    # Gauss-Legendre nodes.  Reference: mpmath quadrature (30 digits) of the radial density from the
    # panel edge below r to r, against the increase of F over the same interval.  F at the edge is read
    # just below it (the last point of the panel before), so a wrong offset of the panel's polynomial
    # cannot cancel.  The subtraction of two values of F ~ n costs ~n eps: absolute tolerance 20 n eps.
    @pytest.mark.parametrize(("n", "panel"), [(3, 9), (20, 35), (400, 159)])
    @pytest.mark.parametrize("fraction", [0.003, 0.41, 0.97])
    def test_increase_from_the_panel_edge(self, n, panel, fraction):
        edge = panel * 0.125
        r = edge + 0.125 * fraction
        with mp.workdps(30):
            real, _ = MPREF.integrate(MPREF.radial_real, edge, r, n)
            nonreal, _ = MPREF.integrate(MPREF.radial_nonreal, edge, r, n)
        tol = 20 * n * np.finfo(float).eps
        for part, expected in (("real", real), ("nonreal", nonreal), ("all", real + nonreal)):
            got = expected_within(r, n, part=part) - expected_within(np.nextafter(edge, 0.0), n, part=part)
            assert got == pytest.approx(float(expected), abs=tol, rel=1e-13), part


class TestStoredMpmath:
    @pytest.mark.parametrize("record", JSON["tail_outside"], ids=_record_id)
    @pytest.mark.parametrize("part", PARTS)
    def test_far_tail_relative_accuracy(self, record, part):
        # G ~ 1e-20 .. 1e-25 (real, all, upper) and ~1e-40 .. 1e-50 (nonreal), N = 10 .. 1e4.
        expected = float(record[part])
        got = expected_outside(record["r"], record["n"], part=part)
        assert got == pytest.approx(expected, rel=_tolerance(record, 2e-13))

    @pytest.mark.parametrize("record", JSON["bulk_outside"], ids=_record_id)
    @pytest.mark.parametrize("part", PARTS)
    def test_outside_in_the_bulk(self, record, part):
        got = expected_outside(record["r"], record["n"], part=part)
        assert got == pytest.approx(float(record[part]), rel=_tolerance(record, 1e-13))

    @pytest.mark.parametrize("record", JSON["bulk_within"], ids=_record_id)
    @pytest.mark.parametrize("part", PARTS)
    def test_within_in_the_bulk(self, record, part):
        got = expected_within(record["r"], record["n"], part=part)
        assert got == pytest.approx(float(record[part]), rel=_tolerance(record, 1e-13))


class TestTotals:
    @pytest.mark.parametrize("n", [1, 2, 3, 10, 100, 10**4, 10**6])
    def test_all_eigenvalues_are_counted(self, n):
        # F_n(inf) = n and G_n(0) = n, each summed from its own end of the grid.
        far = np.sqrt(n) + 50.0
        assert expected_within(far, n) == pytest.approx(n, rel=1e-13)
        assert expected_outside(0.0, n) == pytest.approx(n, rel=1e-13)
        assert expected_outside(far, n) == 0.0

    @pytest.mark.parametrize("n", [1, 2, 5, 10, 100, 1000])
    def test_real_and_nonreal_masses(self, n):
        # The real part totals E K_n (EKS 1994 closed form) and the non-real part n - E K_n.
        e_n = MPREF.eks_mean(n)
        assert expected_outside(0.0, n, part="real") == pytest.approx(e_n, rel=1e-12)
        assert expected_within(1e3 + np.sqrt(n), n, part="nonreal") == pytest.approx(n - e_n, rel=1e-12)
        assert expected_outside(0.0, n, part="upper") == pytest.approx((n + e_n) / 2, rel=1e-12)

    @pytest.mark.parametrize("n", [1, 7, 100, 2500])
    def test_within_plus_outside_is_n(self, n):
        r = np.linspace(0.0, np.sqrt(n) + 25.0, 301)
        np.testing.assert_allclose(expected_within(r, n) + expected_outside(r, n), n, rtol=1e-13)
        assert np.all(np.diff(expected_within(r, n)) >= 0)
        assert np.all(np.diff(expected_outside(r, n)) <= 0)

    def test_parts_add_up(self):
        r = np.array([[0.0, 3.0], [9.5, 14.0]])
        real, nonreal = (expected_outside(r, 80, part=p) for p in ("real", "nonreal"))
        np.testing.assert_allclose(expected_outside(r, 80), real + nonreal, rtol=1e-15)
        np.testing.assert_allclose(expected_outside(r, 80, part="upper"), real + nonreal / 2, rtol=1e-15)
        assert expected_outside(r, 80).shape == (2, 2)

    def test_tail_near_and_beyond_the_grid_end(self):
        # The grid for N = 1 ends at 21; beyond it the tail is integrated on the window [r, r + 2], which
        # also seeds the tail sums on the grid.  N = 1: G = 2 P(Z > r) = erfc(r / sqrt 2) (scipy as
        # reference).  exp(-r^2/2) amplifies the rounding of r^2/2 (relative ~ r^2 eps/2, 1e-13 at r = 30).
        r = np.array([20.0, 20.9, 21.0, 21.1, 22.0, 30.0])
        rel_err = np.abs(expected_outside(r, 1) / special.erfc(r / np.sqrt(2)) - 1.0)
        assert np.all(rel_err <= r**2 * 2.2e-16), rel_err


class TestModulusLaw:
    def test_is_the_scaled_count(self):
        s = np.array([0.0, 0.3, 0.9, 1.0, 1.1, 3.0])
        np.testing.assert_allclose(modulus_cdf(s, 400), expected_within(s * 20.0, 400) / 400, rtol=1e-15)

    @pytest.mark.parametrize("n", [100, 10**4, 10**6])
    def test_approaches_the_circular_law(self, n):
        # Fact of the field (circular law; common practice, no source): |lambda|/sqrt(n) is asymptotically
        # distributed as sqrt(U), P(<= s) = min(s, 1)^2.  The finite-n corrections are O(n^-1/2) (the
        # real eigenvalues carry a fraction ~sqrt(2/(pi n)) and the edge is blurred over O(1)), so we
        # allow 1/sqrt(n) in the bulk and check the edge at s = 1 +- 10/sqrt(n).
        s = np.array([0.2, 0.5, 0.8])
        np.testing.assert_allclose(modulus_cdf(s, n), s**2, atol=1.0 / np.sqrt(n))
        assert modulus_cdf(1.0 + 10.0 / np.sqrt(n), n) == pytest.approx(1.0, abs=1e-12)
        assert modulus_cdf(1.0, n) == pytest.approx(1.0, abs=2.0 / np.sqrt(n))


@functools.lru_cache(maxsize=None)
def _moduli(n, n_matrices, seed):
    """Moduli and real mask of the eigenvalues of ``n_matrices`` seeded Ginibre draws."""
    rng = np.random.default_rng(seed)
    eig = np.linalg.eigvals(rng.standard_normal((n_matrices, n, n)))
    return np.abs(eig), eig.imag == 0


# Matrices per size: ~2 s of eigen-solves in total on one core.
MC_SIZES = {20: 20000, 50: 4000}


class TestMonteCarlo:
    @pytest.mark.parametrize("n", sorted(MC_SIZES))
    def test_mean_counts_beyond_r(self, n, seed):
        # Mean number of real / non-real eigenvalues beyond r over M independent matrices.  By the CLT
        # the mean has standard error sd/sqrt(M), sd estimated from the same M per-matrix counts; a
        # correct formula gives |z| < 4 with probability 1 - 6e-5 per comparison (5e-4 over the 9 here).
        moduli, real = _moduli(n, MC_SIZES[n], seed)
        for r in np.array([0.6, 1.0, 1.15]) * np.sqrt(n):
            for part, mask in (("real", real), ("nonreal", ~real), ("all", np.ones_like(real))):
                counts = np.sum((moduli > r) & mask, axis=1)
                se = counts.std(ddof=1) / np.sqrt(counts.size)
                z = (counts.mean() - expected_outside(r, n, part=part)) / se
                assert abs(z) < 4, (r, part, z)


class TestExtremeArguments:
    def test_huge_radii_give_exact_limits_without_warnings(self):
        # Warnings are errors under pytest: no overflow may escape for radii up to the largest float.
        r = np.array([1e3, 1e100, np.finfo(float).max])
        np.testing.assert_array_equal(expected_outside(r, 10), 0.0)
        np.testing.assert_allclose(expected_within(r, 10), 10.0, rtol=1e-15)
        np.testing.assert_allclose(modulus_cdf(r, 10), 1.0, rtol=1e-15)

    def test_largest_size(self):
        # Fact of the field (circular law, common practice): F_n(sqrt n) / n -> 1 as n grows.
        assert modulus_cdf(1.0, 10**9) == pytest.approx(1.0, abs=1e-3)


class TestArgumentErrors:
    @pytest.mark.parametrize("func", [expected_within, expected_outside, modulus_cdf])
    def test_bad_size(self, func):
        message = "`n` must be an integer >= 1 (the matrix size); got 3.5. Pass a positive whole number."
        with pytest.raises(ValueError, match=re.escape(message)):
            func(1.0, 3.5)

    def test_size_too_large(self):
        message = "`n` must be at most 1e+09 (the largest matrix size the formulas are evaluated for); got 10000000000."
        with pytest.raises(ValueError, match=re.escape(message)):
            expected_outside(1.0, 10**10)

    @pytest.mark.parametrize("func", [expected_within, expected_outside])
    @pytest.mark.parametrize(("bad", "shown"), [(-1.0, "-1.0"), (np.nan, "nan"), (np.inf, "inf")])
    def test_bad_radius(self, func, bad, shown):
        rule = "must be >= 0 (a modulus)" if bad == -1.0 else "must be finite"
        with pytest.raises(ValueError, match=re.escape(f"`r` {rule}; got {shown}.")):
            func([1.0, bad], 10)

    def test_bad_scaled_modulus(self):
        with pytest.raises(ValueError, match=re.escape("`s` must be >= 0 (a modulus); got -0.5. Pass absolute values")):
            modulus_cdf(-0.5, 10)

    def test_bad_part(self):
        message = "`part` must be one of 'all', 'real', 'nonreal', 'upper'; got 'imag'. Pick one of those strings."
        with pytest.raises(ValueError, match=re.escape(message)):
            expected_outside(1.0, 10, part="imag")
