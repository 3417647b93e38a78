"""Tests of the embedded synthetic demo (nullspec.demo, nullspec/data/demo.npz, examples/make_demo_data.py).

The planted structures are checked with plain numpy, against facts of the field rather than against
nullspec's own tests, so the demo is known to carry what it claims before any test statistic sees it.
"""

import re
import subprocess
import sys
from importlib import resources
from pathlib import Path

import mpmath
import numpy as np
import pytest

from nullspec.demo import demo_names, load_demo
from nullspec.io import MatrixFile

SCRIPT = Path(__file__).resolve().parents[1] / "examples" / "make_demo_data.py"
NAMES = ("plain_noise", "hidden_module", "reciprocal_pairs", "uneven_rows")


def _centred(name):
    """The demo matrix minus its mean, its entry sd and N."""
    values = load_demo(name).values
    centred = values - values.mean()
    return centred, centred.std(), values.shape[0]


def _spectral_radius_ratio(name):
    """max |eigenvalue| over the circular-law radius sigma_hat * sqrt(N)."""
    centred, sigma, n = _centred(name)
    return np.abs(np.linalg.eigvals(centred)).max() / (sigma * np.sqrt(n))


def _pair_correlation(name):
    """Pearson correlation of (A_ij, A_ji) over the N(N-1)/2 pairs i < j, and the pair count."""
    centred, _, n = _centred(name)
    upper = np.triu_indices(n, 1)
    return np.corrcoef(centred[upper], centred.T[upper])[0, 1], len(upper[0])


def _fraction_inside_half_radius(name):
    centred, sigma, n = _centred(name)
    z = np.linalg.eigvals(centred) / (sigma * np.sqrt(n))
    return np.mean(np.abs(z) <= 0.5), n


def test_the_script_reproduces_the_shipped_file_bit_for_bit(tmp_path):
    out = tmp_path / "demo.npz"
    run = subprocess.run([sys.executable, str(SCRIPT), str(out)], capture_output=True, text=True, timeout=60)
    assert run.returncode == 0, run.stderr
    shipped = resources.files("nullspec").joinpath("data").joinpath("demo.npz").read_bytes()
    assert out.read_bytes() == shipped


def test_names_and_unknown_name():
    assert demo_names() == NAMES
    with pytest.raises(ValueError, match=re.escape("`name` must be one of 'plain_noise', 'hidden_module', "
                                                   "'reciprocal_pairs', 'uneven_rows'; got 'noise'")):
        load_demo("noise")


@pytest.mark.parametrize("name", NAMES)
def test_every_scenario_loads_labelled_and_marked_synthetic(name):
    demo = load_demo(name)
    n = demo.values.shape[0]
    assert isinstance(demo, MatrixFile) and demo.values.shape == (n, n) and 60 <= n <= 120
    assert demo.values.dtype == np.float64 and np.isfinite(demo.values).all()
    assert demo.row_labels == demo.col_labels == tuple(f"node_{i:03d}" for i in range(1, n + 1))
    assert demo.description.startswith("synthetic: ")
    assert (demo.source, demo.format) == (f"demo:{name}", "npz")
    assert not demo.values.flags.writeable


def test_loading_twice_gives_equal_independent_objects():
    first, second = load_demo("plain_noise"), load_demo("plain_noise")
    np.testing.assert_array_equal(first.values, second.values)
    assert first.values is not second.values


def test_module_gives_an_outlier_carried_by_the_listed_nodes():
    # Rank-one perturbation theta u u^T of i.i.d. noise (unit u): beyond the circular-law radius
    # sigma sqrt(N) an outlier sits near theta (Tao 2013, "Outliers in the spectrum of iid matrices with
    # bounded rank perturbations" [from memory]); the demo plants theta = 2.5 sigma sqrt(N).
    assert _spectral_radius_ratio("hidden_module") > 1.3
    centred, _, _ = _centred("hidden_module")
    values, vectors = np.linalg.eig(centred)
    top = np.abs(vectors[:, np.argmax(np.abs(values))])
    listed = set(re.findall(r"node_\d{3}", load_demo("hidden_module").description))
    assert len(listed) == 16
    labels = load_demo("hidden_module").row_labels
    assert {labels[i] for i in np.argsort(top)[-16:]} == listed


def test_reciprocal_pairs_are_correlated_and_give_excess_real_eigenvalues():
    r, pairs = _pair_correlation("reciprocal_pairs")
    # sd of a Pearson r from n bivariate-normal pairs ~ (1 - rho^2) / sqrt(n) (common practice, no
    # source); the band is 4 sd: 0.75 / sqrt(7140) * 4 = 0.036
    assert abs(r - 0.5) < 4 * (1 - 0.5**2) / np.sqrt(pairs)
    centred, _, n = _centred("reciprocal_pairs")
    real = int(np.sum(np.linalg.eigvals(centred).imag == 0))
    # null mean: Edelman, Kostlan & Shub (1994) closed form [from memory; THEORY.md section 1 checks it];
    # null variance ~ (2 - sqrt 2) E_N (Forrester & Nagao 2007 [from memory]).  One draw: we ask for
    # more than two null sd above the null mean (the elliptic law predicts ~15.6 at N=120, tau=0.5).
    mean = _real_count_mean(n)
    assert real > mean + 2 * np.sqrt((2 - np.sqrt(2)) * mean)


def _real_count_mean(n):
    """E_N of the real Ginibre ensemble, EKS closed form, evaluated with mpmath."""
    gamma_ratio = mpmath.gamma(n + 0.5) / (mpmath.gamma(n) * mpmath.sqrt(mpmath.pi))
    return float(0.5 + mpmath.sqrt(2) * gamma_ratio * mpmath.hyp2f1(1, -0.5, n, 0.5))


def test_real_count_mean_reference():
    # THEORY.md section 1 table (exact even-N sum): E_100 = 8.4489064481572756
    assert _real_count_mean(100) == pytest.approx(8.4489064481572756, rel=1e-12)


def test_uneven_rows_crowd_the_centre_and_noise_fills_the_disk():
    # circular law: a uniform disk puts a quarter of the eigenvalues within half the radius (common
    # practice, no source).  Eigenvalues repel, so the count inside a disk varies less than a binomial
    # count: a 4-sd binomial band, 4 * sqrt(0.25 * 0.75 / 80) = 0.19, is conservative.
    noise, n = _fraction_inside_half_radius("plain_noise")
    band = 4 * np.sqrt(0.25 * 0.75 / n)
    assert abs(noise - 0.25) < band
    uneven, n = _fraction_inside_half_radius("uneven_rows")
    assert uneven - 0.25 > 4 * np.sqrt(0.25 * 0.75 / n)


def test_noise_has_neither_outlier_nor_reciprocity():
    # the real Ginibre spectral radius exceeds 1.3 sqrt(N) with negligible probability at N=80 (the
    # edge fluctuates on the scale sqrt(log N / N) around 1; common practice, no source)
    assert _spectral_radius_ratio("plain_noise") < 1.3
    r, pairs = _pair_correlation("plain_noise")
    assert abs(r) < 4 / np.sqrt(pairs)  # sd of r under independence ~ 1/sqrt(n); 4 sd = 0.071
