"""The bootstrap null resamples the observed entries with replacement, uniformly."""

import numpy as np
import pytest
from scipy import stats

from nullspec.nulls import Bootstrap


@pytest.fixture
def matrix():
    return np.arange(1.0, 26.0).reshape(5, 5)


def test_entries_come_from_the_data_and_repeat(matrix):
    rng = np.random.default_rng(0)
    for _ in range(20):
        s = Bootstrap().draw(matrix, rng)
        assert s.shape == matrix.shape and np.isin(s, matrix).all()
        assert len(np.unique(s)) < matrix.size  # with replacement: 25 draws of 25 values repeat


def test_every_entry_equally_likely(matrix):
    # counts of each of the 25 values over 2000 draws x 25 picks: chi-square goodness of fit
    # (scipy.stats.chisquare); 1e-3 guards against a biased sampler
    rng = np.random.default_rng(1)
    picks = np.concatenate([Bootstrap().draw(matrix, rng).ravel() for _ in range(2000)])
    counts = np.bincount(picks.astype(int) - 1, minlength=25)
    assert stats.chisquare(counts).pvalue > 1e-3


def test_number_of_distinct_values_matches_the_occupancy_law(matrix):
    # M picks with replacement among M values: E[#distinct] = M (1 - (1 - 1/M)^M)
    # (classical occupancy result; common practice, no source). 4000 draws; the standard error of
    # the mean is sd/sqrt(4000) with the sample sd; allow 4 standard errors.
    rng = np.random.default_rng(2)
    distinct = np.array([len(np.unique(Bootstrap().draw(matrix, rng))) for _ in range(4000)])
    m = matrix.size
    expected = m * (1 - (1 - 1 / m) ** m)
    assert abs(distinct.mean() - expected) < 4 * distinct.std(ddof=1) / np.sqrt(len(distinct))


def test_input_untouched_and_memmap_works(matrix, tmp_path):
    copy = matrix.copy()
    np.save(tmp_path / "m.npy", matrix)
    mapped = np.load(tmp_path / "m.npy", mmap_mode="r")
    a = Bootstrap().draw(matrix, np.random.default_rng(3))
    b = Bootstrap().draw(mapped, np.random.default_rng(3))
    np.testing.assert_array_equal(a, b)
    assert type(b) is np.ndarray and b.dtype == np.float64
    np.testing.assert_array_equal(matrix, copy)


def test_description_and_repr():
    assert "with replacement" in Bootstrap().description
    assert repr(Bootstrap()) == "Bootstrap()" and Bootstrap().name == "bootstrap"
