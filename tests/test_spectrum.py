"""Spectrum: eigenvalues, the exact real mask, and eigenvectors of selected eigenvalues."""

import numpy as np
import pytest
import scipy.linalg
from scipy.optimize import linear_sum_assignment
from scipy.stats import ortho_group

from nullspec.spectrum import Spectrum, compute_spectrum, outlier_vectors

_EPS = np.finfo(float).eps


def _schur_real_count(m):
    """Number of 1 x 1 diagonal blocks of the real Schur form (an independent route to LAPACK's decision)."""
    t, _ = scipy.linalg.schur(m, output="real")
    n = m.shape[0]
    below = np.append(np.diag(t, -1), 0.0)  # below[k] = t[k+1, k]
    above = np.insert(np.diag(t, -1), 0, 0.0)  # above[k] = t[k, k-1]
    return int(np.sum((below == 0) & (above == 0)))


def _matched_gap(a, b):
    cost = np.abs(a[:, None] - b[None, :])
    rows, cols = linear_sum_assignment(cost)
    return cost[rows, cols].max()


class TestComputeSpectrum:
    def test_fields_and_scaling(self, seed):
        m = np.random.default_rng(seed).standard_normal((25, 25))
        spec = compute_spectrum(m)
        assert isinstance(spec, Spectrum) and spec.n == 25
        assert spec.eigenvalues.dtype == np.complex128 and spec.is_real.dtype == bool
        np.testing.assert_allclose(spec.z, spec.eigenvalues / 5.0, rtol=1e-15)
        np.testing.assert_allclose(spec.moduli, np.abs(spec.eigenvalues) / 5.0, rtol=1e-15)
        assert _matched_gap(spec.eigenvalues, scipy.linalg.eigvals(m)) < 1e-12 * np.abs(spec.eigenvalues).max()

    def test_real_mask_is_the_exact_zero_rule(self, seed):
        rng = np.random.default_rng(seed)
        for n in (3, 4, 7, 16, 40):
            spec = compute_spectrum(rng.standard_normal((n, n)))
            brute = np.array([complex(w).imag == 0.0 for w in spec.eigenvalues])
            np.testing.assert_array_equal(spec.is_real, brute)
            assert spec.real_count == sum(brute.tolist())

    def test_real_count_matches_schur_blocks_and_parity(self, seed):
        # LAPACK's dgees (scipy.linalg.schur) and dgeev reach the same real Schur decision for
        # continuous entries: THEORY.md section 1 found any tolerance in 1e-14..1e-6 changed K in 0
        # of 1.07 million Gaussian matrices, so a disagreement here would be a bug, not noise.
        rng = np.random.default_rng(seed)
        for _ in range(100):
            n = int(rng.integers(3, 30))
            m = rng.standard_normal((n, n))
            spec = compute_spectrum(m)
            assert spec.real_count == _schur_real_count(m)
            assert (n - spec.real_count) % 2 == 0

    def test_known_real_count_after_an_orthogonal_change_of_basis(self, seed):
        # Block diagonal: reals 3, -2, 0.5 and rotation-scaling blocks with eigenvalues 1 +- 2i, -1.5 +- 0.7i.
        blocks = [np.array([[3.0]]), np.array([[-2.0]]), np.array([[0.5]]),
                  np.array([[1.0, -2.0], [2.0, 1.0]]), np.array([[-1.5, 0.7], [-0.7, -1.5]])]
        d = scipy.linalg.block_diag(*blocks)
        q = ortho_group.rvs(7, random_state=np.random.default_rng(seed))
        spec = compute_spectrum(q @ d @ q.T)
        assert spec.real_count == 3
        np.testing.assert_allclose(np.sort(spec.eigenvalues[spec.is_real].real), [-2.0, 0.5, 3.0], atol=1e-12)
        assert np.all(np.abs(spec.eigenvalues[~spec.is_real].imag) > 0.5)

    def test_all_real_spectrum_keeps_complex_dtype(self, seed):
        t = np.triu(np.random.default_rng(seed).standard_normal((6, 6)))
        spec = compute_spectrum(t)
        assert spec.eigenvalues.dtype == np.complex128 and spec.real_count == 6
        np.testing.assert_allclose(np.sort(spec.eigenvalues.real), np.sort(np.diag(t)), rtol=1e-13)

    def test_results_are_read_only_and_input_untouched(self, seed):
        m = np.random.default_rng(seed).standard_normal((8, 8))
        m.flags.writeable = False
        before = m.copy()
        spec = compute_spectrum(m)
        np.testing.assert_array_equal(m, before)
        for field in (spec.eigenvalues, spec.z, spec.is_real):
            with pytest.raises(ValueError, match="read-only"):
                field[0] = 0
        with pytest.raises(AttributeError):
            spec.n = 3

    def test_integer_and_list_input(self):
        spec = compute_spectrum([[2, 0, 0], [0, 3, 0], [0, 0, -1]])
        assert spec.real_count == 3
        assert sorted(spec.eigenvalues.real.tolist()) == [-1.0, 2.0, 3.0]

    def test_errors(self):
        with pytest.raises(ValueError, match=r"`matrix` must be square .*got shape \(2, 3\)"):
            compute_spectrum(np.ones((2, 3)))
        with pytest.raises(ValueError, match=r"`matrix` must contain finite numbers only; got 1 NaN"):
            compute_spectrum(np.array([[1.0, np.nan], [0.0, 1.0]]))
        with pytest.raises(TypeError, match=r"`matrix` must be a 2-D array-like of numbers"):
            compute_spectrum("matrix")


class TestOutlierVectors:
    @staticmethod
    def _check_pairs(m, values, right, left):
        norm = np.linalg.norm(m)
        tol = 100 * m.shape[0] * _EPS * norm
        for j, lam in enumerate(values):
            v, u = right[:, j], left[:, j]
            assert np.linalg.norm(v) == pytest.approx(1.0, abs=1e-13)
            assert np.linalg.norm(u) == pytest.approx(1.0, abs=1e-13)
            assert np.linalg.norm(m @ v - lam * v) < tol
            assert np.linalg.norm(u @ m - lam * u) < tol  # u^T M = lambda u^T
            k = np.argmax(np.abs(v))
            assert v[k].imag == 0 and v[k].real > 0

    def test_planted_outliers_against_scipy_eig(self, seed):
        rng = np.random.default_rng(seed)
        n = 60
        m = rng.standard_normal((n, n)) / np.sqrt(n) + 3.0 * np.outer(rng.standard_normal(n), rng.standard_normal(n)) / n
        spec = compute_spectrum(m)
        order = np.argsort(-np.abs(spec.eigenvalues))[:4]
        values = spec.eigenvalues[order]
        right, left = outlier_vectors(m, values)
        assert right.shape == left.shape == (n, 4) and right.dtype == np.complex128
        self._check_pairs(m, values, right, left)
        w, vl, vr = scipy.linalg.eig(m, left=True)
        for j, lam in enumerate(values):
            k = np.argmin(np.abs(w - lam))
            assert abs(np.vdot(vr[:, k] / np.linalg.norm(vr[:, k]), right[:, j])) == pytest.approx(1.0, abs=1e-9)
            ref_left = vl[:, k].conj() / np.linalg.norm(vl[:, k])  # scipy: vl^H M = lambda vl^H
            assert abs(np.vdot(ref_left, left[:, j])) == pytest.approx(1.0, abs=1e-9)

    def test_real_eigenvalue_gives_real_vectors(self, seed):
        m = np.random.default_rng(seed).standard_normal((12, 12)) + np.diag(np.r_[10.0, np.zeros(11)])
        spec = compute_spectrum(m)
        lam = spec.eigenvalues[np.argmax(np.abs(spec.eigenvalues))]
        assert lam.imag == 0
        right, left = outlier_vectors(m, [lam])
        assert np.all(right.imag == 0) and np.all(left.imag == 0)
        self._check_pairs(m, [lam], right, left)

    def test_all_eigenvalues_of_zero_row_sum_matrix(self, seed):
        # Row sums zero: 1 is a right eigenvector (eigenvalue 0) and every other left eigenvector is
        # orthogonal to 1, a structure that defeats an all-ones start vector.
        a = np.random.default_rng(seed).standard_normal((7, 7))
        a -= a.mean(axis=1, keepdims=True)
        spec = compute_spectrum(a)
        right, left = outlier_vectors(a, spec.eigenvalues)
        self._check_pairs(a, spec.eigenvalues, right, left)

    def test_exact_zero_pivot_and_defective_eigenvalue(self):
        m = np.array([[2.0, 1.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, -1.0]])
        right, left = outlier_vectors(m, [2.0, -1.0])
        np.testing.assert_allclose(right[:, 0], [1.0, 0.0, 0.0], atol=1e-15)
        np.testing.assert_allclose(left[:, 0], np.array([1.0, 1.0, 0.0]) / np.sqrt(2.0), atol=1e-15)
        jordan = np.array([[1.0, 1.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 3.0]])
        right, left = outlier_vectors(jordan, [1.0])
        np.testing.assert_allclose(np.abs(right[:, 0]), [1.0, 0.0, 0.0], atol=1e-7)
        np.testing.assert_allclose(np.abs(left[:, 0]), [0.0, 1.0, 0.0], atol=1e-7)

    def test_conjugate_pair_gives_conjugate_vectors(self, seed):
        m = np.random.default_rng(seed).standard_normal((10, 10))
        spec = compute_spectrum(m)
        lam = spec.eigenvalues[~spec.is_real][0]
        right, left = outlier_vectors(m, [lam, np.conj(lam)])
        np.testing.assert_allclose(right[:, 1], right[:, 0].conj(), atol=1e-10)
        np.testing.assert_allclose(left[:, 1], left[:, 0].conj(), atol=1e-10)

    def test_svd_fallback_gives_the_same_pairs(self, seed, monkeypatch):
        # No inverse-iteration step allowed: every pair then comes from the SVD fallback.
        m = np.random.default_rng(seed).standard_normal((15, 15))
        values = compute_spectrum(m).eigenvalues[:4]
        expected = outlier_vectors(m, values)
        monkeypatch.setattr("nullspec.spectrum._MAX_STEPS", 0)
        right, left = outlier_vectors(m, values)
        self._check_pairs(m, values, right, left)
        np.testing.assert_allclose(right, expected[0], atol=1e-9)
        np.testing.assert_allclose(left, expected[1], atol=1e-9)

    def test_empty_request_and_input_untouched(self, seed):
        m = np.random.default_rng(seed).standard_normal((5, 5))
        before = m.copy()
        right, left = outlier_vectors(m, [])
        assert right.shape == left.shape == (5, 0)
        outlier_vectors(m, compute_spectrum(m).eigenvalues[:1])
        np.testing.assert_array_equal(m, before)

    def test_errors(self, seed):
        m = np.random.default_rng(seed).standard_normal((6, 6))
        with pytest.raises(ValueError, match=r"`eigenvalues` must hold eigenvalues of `matrix`; got \(100\+0j\)"):
            outlier_vectors(m, [100.0])
        with pytest.raises(ValueError, match=r"`eigenvalues` must be finite; got \(nan\+0j\)"):
            outlier_vectors(m, [np.nan])
        with pytest.raises(ValueError, match=r"`matrix` must be square"):
            outlier_vectors(np.ones((3, 2)), [1.0])
