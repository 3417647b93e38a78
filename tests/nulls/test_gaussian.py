"""Gaussian surrogates: dense i.i.d. draws and the Hessenberg fast path (THEORY.md §9)."""

import numpy as np
import pytest
from scipy import special, stats

from nullspec._lapack import eigvals, hessenberg_eigvals
from nullspec.nulls import Gaussian


def expected_real_count(n):
    """E_N of Edelman, Kostlan & Shub (1994), J. Amer. Math. Soc. 7, formula quoted from memory.

    Even n: sqrt(2) * sum_{k=0}^{n/2-1} (4k-1)!!/(4k)!!; odd n: 1 + sqrt(2) * sum_{k=1}^{(n-1)/2}
    (4k-3)!!/(4k-2)!!, with (2m-1)!!/(2m)!! = Gamma(m + 1/2) / (sqrt(pi) Gamma(m + 1)).
    """
    def ratio(m):
        return np.exp(special.gammaln(m + 0.5) - special.gammaln(m + 1.0)) / np.sqrt(np.pi)

    if n % 2 == 0:
        return np.sqrt(2) * sum(ratio(2 * k) for k in range(n // 2))
    return 1 + np.sqrt(2) * sum(ratio(2 * k - 1) for k in range(1, (n - 1) // 2 + 1))


def test_expected_real_count_formula():
    # check values from THEORY.md §1 (exact rational forms: E_4 = 11 sqrt2 / 8, E_5 = 1 + 13 sqrt2 / 16)
    assert expected_real_count(4) == pytest.approx(11 * np.sqrt(2) / 8, rel=1e-14)
    assert expected_real_count(5) == pytest.approx(1 + 13 * np.sqrt(2) / 16, rel=1e-14)
    assert expected_real_count(50) == pytest.approx(6.0995299273911004, rel=1e-12)
    assert expected_real_count(100) == pytest.approx(8.4489064481572756, rel=1e-12)


def test_dense_draws_have_the_requested_law():
    g = Gaussian(loc=2.0, scale=3.0)
    s = g.draw(np.zeros((60, 60)), np.random.default_rng(0))
    # 3600 i.i.d. entries: Kolmogorov-Smirnov against N(2, 9) (scipy.stats)
    assert stats.kstest(s.ravel(), stats.norm(2.0, 3.0).cdf).pvalue > 1e-3
    assert type(s) is np.ndarray and s.dtype == np.float64


def test_plug_in_mean_and_scale():
    a = np.random.default_rng(1).normal(-1.5, 0.5, size=(80, 80))
    s = Gaussian().draw(a, np.random.default_rng(2))
    m, sigma = a.size, 0.5
    # mean of m = 6400 draws: standard error sigma/sqrt(m); allow 5 of them. A sample SD has
    # standard error ~ sigma/sqrt(2m); the difference of two independent ones ~ sigma/sqrt(m).
    assert abs(s.mean() - a.mean()) < 5 * sigma / np.sqrt(m)
    assert abs(s.std(ddof=1) - a.std(ddof=1)) < 5 * sigma / np.sqrt(m)
    # with loc given, the plug-in scale is the root mean square deviation from loc
    s0 = Gaussian(loc=0.0).draw(a, np.random.default_rng(3))
    rms = np.sqrt(np.mean(a**2))
    assert abs(s0.mean()) < 5 * rms / np.sqrt(m)
    assert abs(np.sqrt(np.mean(s0**2)) - rms) < 5 * rms / np.sqrt(2 * m)


def test_input_untouched():
    a = np.random.default_rng(3).standard_normal((10, 10))
    copy = a.copy()
    Gaussian().draw(a, np.random.default_rng(0))
    Gaussian(0.0, 1.0, hessenberg=True).draw(a, np.random.default_rng(0))
    np.testing.assert_array_equal(a, copy)


def test_hessenberg_structure_and_entry_laws():
    n, draws = 8, 3000
    g = Gaussian(loc=0.0, scale=1.0, hessenberg=True)
    rng = np.random.default_rng(4)
    hs = np.array([g.draw(np.zeros((n, n)), rng) for _ in range(draws)])
    h0 = g.draw(np.zeros((n, n)), rng)
    assert h0.flags.f_contiguous and np.all(np.tril(h0, -2) == 0)
    # on/above the diagonal N(0, 1); subdiagonal H[k+1, k] ~ chi with n-1-k degrees of freedom
    # (THEORY.md §9). KS tests (scipy.stats) on 3000 draws per position.
    assert stats.kstest(hs[:, 0, 5], stats.norm.cdf).pvalue > 1e-3
    assert stats.kstest(hs[:, 3, 3], stats.norm.cdf).pvalue > 1e-3
    for k in (0, 3, n - 2):
        assert stats.kstest(hs[:, k + 1, k], stats.chi(n - 1 - k).cdf).pvalue > 1e-3


def _real_counts_and_radii(null, n, draws, seed, solver):
    rng = np.random.default_rng(seed)
    out = np.empty((draws, 2))
    for i in range(draws):
        ev = solver(null.draw(np.zeros((n, n)), rng), True)
        out[i] = np.count_nonzero(ev.imag == 0), np.abs(ev).max()
    return out


@pytest.mark.parametrize("n", [30, 31])
def test_hessenberg_draws_match_dense_draws(n):
    draws = 3000
    dense = _real_counts_and_radii(Gaussian(0.0, 1.0, hessenberg=False), n, draws, 5, eigvals)
    hess = _real_counts_and_radii(Gaussian(0.0, 1.0, hessenberg=True), n, draws, 6, hessenberg_eigvals)
    e_n = expected_real_count(n)
    # mean real count vs the exact E_N: Var K ~ (2 - sqrt2) sqrt(2N/pi) + 1/pi (THEORY.md §2), so
    # the standard error of a mean of 3000 is ~0.033 at N = 30; 4 standard errors (sample sd)
    for sample in (dense, hess):
        se = sample[:, 0].std(ddof=1) / np.sqrt(draws)
        assert abs(sample[:, 0].mean() - e_n) < 4 * se
    assert np.all(hess[:, 0] % 2 == n % 2)
    # spectral radius: two-sample Kolmogorov-Smirnov (scipy.stats), independent seeds
    assert stats.ks_2samp(dense[:, 1], hess[:, 1]).pvalue > 1e-3


def test_for_pipeline_resolves_auto():
    assert Gaussian(0.0, 1.0).for_pipeline(similarity_invariant=True).draws_hessenberg
    assert not Gaussian(0.0, 1.0).for_pipeline(similarity_invariant=False).draws_hessenberg
    assert not Gaussian().for_pipeline(similarity_invariant=True).draws_hessenberg  # loc plug-in
    assert not Gaussian(0.0, hessenberg=False).for_pipeline(similarity_invariant=True).draws_hessenberg
    assert Gaussian(0.0, hessenberg=True).for_pipeline(similarity_invariant=True).draws_hessenberg
    assert not Gaussian(0.0, 1.0).draws_hessenberg  # "auto" draws dense until resolved
    resolved = Gaussian(0.0, 2.0).for_pipeline(similarity_invariant=True)
    assert repr(resolved) == "Gaussian(loc=0.0, scale=2.0, hessenberg=True)"


def test_bad_parameters():
    with pytest.raises(ValueError, match=r"`scale` must be a finite number > 0; got -1"):
        Gaussian(scale=-1)
    with pytest.raises(ValueError, match=r"`loc` must be finite"):
        Gaussian(loc=np.inf)
    with pytest.raises(ValueError, match=r"`hessenberg=True` needs `loc=0`.*got loc=None"):
        Gaussian(hessenberg=True)
    with pytest.raises(ValueError, match=r"`hessenberg` must be one of 'auto'; got 'yes'"):
        Gaussian(hessenberg="yes")
    with pytest.raises(ValueError, match=r"`hessenberg=True` needs a pipeline invariant"):
        Gaussian(0.0, hessenberg=True).for_pipeline(similarity_invariant=False)


def test_description_and_repr():
    assert Gaussian().description == "the entries are i.i.d. normal with the observed mean and the observed scale"
    assert "mean 0 and standard deviation 2" in Gaussian(0, 2).description
    assert repr(Gaussian()) == "Gaussian(loc=None, scale=None, hessenberg='auto')"
