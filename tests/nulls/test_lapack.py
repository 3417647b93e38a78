"""The GIL-free LAPACK wrappers agree with numpy's reference eigenvalue solver."""

import threading

import numpy as np
import pytest
import scipy.linalg
from scipy.optimize import linear_sum_assignment

from nullspec import _lapack
from nullspec._lapack import eigvals, hessenberg_eigvals

SIZES = [1, 2, 3, 7, 30, 76, 120]  # 76 > 75: dhseqr switches from dlahqr to dlaqr0 above NMIN=75


def _assert_same_spectrum(got, reference, scale):
    """Match eigenvalues one-to-one (optimal assignment) and compare within 1e-10 * scale."""
    cost = np.abs(got[:, None] - reference[None, :])
    rows, cols = linear_sum_assignment(cost)
    assert cost[rows, cols].max() <= 1e-10 * scale
    assert np.count_nonzero(got.imag == 0) == np.count_nonzero(reference.imag == 0)


@pytest.mark.parametrize("n", SIZES)
def test_eigvals_matches_numpy(n):
    # reference: numpy.linalg.eigvals (LAPACK geev through numpy's own wrapper)
    rng = np.random.default_rng(n)
    for _ in range(5):
        a = rng.standard_normal((n, n))
        got = eigvals(a)
        assert got.dtype == np.complex128 and got.shape == (n,)
        _assert_same_spectrum(got, np.linalg.eigvals(a), np.linalg.norm(a, 2))


def test_real_counts_equal_numpy_on_gaussian_matrices():
    # the exact-zero real/complex rule reads LAPACK's decision, the same in both routes
    rng = np.random.default_rng(11)
    for n in rng.integers(3, 60, size=40):
        a = rng.standard_normal((n, n))
        assert np.count_nonzero(eigvals(a).imag == 0) == np.count_nonzero(
            np.linalg.eigvals(a).imag == 0
        )


@pytest.mark.parametrize("n", SIZES)
def test_hessenberg_eigvals_matches_numpy(n):
    rng = np.random.default_rng(100 + n)
    a = rng.standard_normal((n, n))
    h = scipy.linalg.hessenberg(a)
    _assert_same_spectrum(hessenberg_eigvals(h), np.linalg.eigvals(a), np.linalg.norm(a, 2))


def test_hessenberg_ignores_entries_below_subdiagonal():
    rng = np.random.default_rng(5)
    h = np.triu(rng.standard_normal((6, 6)), -1)
    noisy = h + np.tril(rng.standard_normal((6, 6)), -2)
    np.testing.assert_array_equal(hessenberg_eigvals(noisy), hessenberg_eigvals(h))


@pytest.mark.parametrize("order", ["C", "F"])
def test_input_untouched_without_overwrite(order):
    rng = np.random.default_rng(1)
    a = np.array(rng.standard_normal((20, 20)), order=order)
    h = np.array(scipy.linalg.hessenberg(a), order=order)
    a0, h0 = a.copy(), h.copy()
    eigvals(a)
    hessenberg_eigvals(h)
    np.testing.assert_array_equal(a, a0)
    np.testing.assert_array_equal(h, h0)


def test_overwrite_works_in_place_on_the_documented_layouts():
    rng = np.random.default_rng(2)
    a = rng.standard_normal((40, 40))  # C-ordered: dgeev works on it in place
    h = np.asfortranarray(scipy.linalg.hessenberg(a))  # Fortran-ordered: dhseqr in place
    expected = np.linalg.eigvals(a)
    a_copy, h_copy = a.copy(), h.copy()
    _assert_same_spectrum(eigvals(a, overwrite_a=True), expected, np.linalg.norm(a_copy, 2))
    _assert_same_spectrum(hessenberg_eigvals(h, overwrite=True), expected, np.linalg.norm(a_copy, 2))
    assert not np.array_equal(a, a_copy)  # no copy was made: LAPACK overwrote the buffer
    assert not np.array_equal(h, h_copy)


def test_result_does_not_depend_on_memory_layout():
    a = np.random.default_rng(3).standard_normal((30, 30))
    np.testing.assert_array_equal(eigvals(a), eigvals(np.asfortranarray(a)))


def test_read_only_and_integer_inputs():
    a = np.arange(16, dtype=np.int64).reshape(4, 4) % 5
    ro = a.astype(float)
    ro.flags.writeable = False
    expected = np.linalg.eigvals(a.astype(float))
    _assert_same_spectrum(eigvals(a), expected, 10.0)
    _assert_same_spectrum(eigvals(ro, overwrite_a=True), expected, 10.0)


def test_empty_matrix():
    assert eigvals(np.empty((0, 0))).shape == (0,)
    assert hessenberg_eigvals(np.empty((0, 0))).shape == (0,)


def test_known_spectra():
    # rotation by 90 degrees: eigenvalues +-i, no real one (common practice, no source)
    ev = eigvals(np.array([[0.0, -1.0], [1.0, 0.0]]))
    assert np.count_nonzero(ev.imag == 0) == 0
    np.testing.assert_allclose(np.sort(ev.imag), [-1.0, 1.0], atol=1e-15)
    # triangular matrix: the diagonal, all exactly real
    t = np.triu(np.arange(1.0, 17.0).reshape(4, 4))
    ev = eigvals(t)
    assert np.all(ev.imag == 0)
    np.testing.assert_allclose(np.sort(ev.real), [1.0, 6.0, 11.0, 16.0], rtol=1e-14)


@pytest.mark.parametrize("func", [eigvals, hessenberg_eigvals])
def test_bad_shapes_and_values_are_rejected(func):
    with pytest.raises(ValueError, match=r"must be a square 2-D array; got shape \(2, 3\)"):
        func(np.zeros((2, 3)))
    with pytest.raises(ValueError, match=r"must be a square 2-D array; got shape \(4,\)"):
        func(np.zeros(4))
    bad = np.eye(3)
    bad[1, 2] = np.nan
    with pytest.raises(ValueError, match="must contain only finite values"):
        func(bad)


def test_lapack_info_codes_become_errors():
    _lapack._check_info(0, "dgeev")
    with pytest.raises(np.linalg.LinAlgError, match="dgeev: the QR algorithm failed to converge"):
        _lapack._check_info(3, "dgeev")
    with pytest.raises(RuntimeError, match="argument number 4 as illegal"):
        _lapack._check_info(-4, "dhseqr")


def test_convergence_failure_reported_from_a_call(monkeypatch):
    def failing(buffer, work, lwork):
        n = buffer.shape[0]
        return np.zeros(n), np.zeros(n), 2 if lwork > 0 else 0

    monkeypatch.setitem(_lapack._CALLS, "dgeev", failing)
    _lapack._optimal_lwork.cache_clear()
    try:
        with pytest.raises(np.linalg.LinAlgError, match="2 eigenvalues not computed"):
            eigvals(np.eye(3))
    finally:
        _lapack._optimal_lwork.cache_clear()


def test_fallback_without_capsules(monkeypatch):
    a = np.random.default_rng(4).standard_normal((25, 25))
    h = scipy.linalg.hessenberg(a)
    direct, direct_h = eigvals(a), hessenberg_eigvals(h)
    monkeypatch.setattr(_lapack, "_routine", lambda name: None)
    scale = np.linalg.norm(a, 2)
    _assert_same_spectrum(eigvals(a), direct, scale)
    _assert_same_spectrum(hessenberg_eigvals(h), direct_h, scale)
    assert eigvals(a).dtype == np.complex128


def test_threads_give_the_same_results():
    rng = np.random.default_rng(6)
    mats = [rng.standard_normal((60, 60)) for _ in range(8)]
    expected = [eigvals(m) for m in mats]
    got = [None] * len(mats)

    def work(i):
        got[i] = eigvals(mats[i])

    threads = [threading.Thread(target=work, args=(i,)) for i in range(len(mats))]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    for g, e in zip(got, expected):
        np.testing.assert_array_equal(g, e)
