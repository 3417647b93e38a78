"""Each permutation scheme keeps its invariant, changes the matrix, and is uniform over its group."""

import numpy as np
import pytest
from scipy import stats

from nullspec.nulls import Permutation

SCHEMES = ("all", "offdiagonal", "rows", "columns", "pairs")


@pytest.fixture
def matrix():
    # distinct values, so positions can be traced back
    return np.random.default_rng(7).permutation(100).reshape(10, 10).astype(float) + 0.5


def _unordered_pairs(a):
    i, j = np.triu_indices(a.shape[0], 1)
    return np.sort(np.stack([a[i, j], a[j, i]], axis=1), axis=1)


def _pair_multiset(a):
    pairs = _unordered_pairs(a)
    return pairs[np.lexsort(pairs.T[::-1])]


INVARIANTS = {
    "all": lambda a, s: np.array_equal(np.sort(a, axis=None), np.sort(s, axis=None)),
    "offdiagonal": lambda a, s: np.array_equal(np.diag(a), np.diag(s))
    and np.array_equal(np.sort(a[~np.eye(len(a), dtype=bool)]), np.sort(s[~np.eye(len(a), dtype=bool)])),
    "rows": lambda a, s: np.array_equal(np.sort(a, axis=1), np.sort(s, axis=1)),
    "columns": lambda a, s: np.array_equal(np.sort(a, axis=0), np.sort(s, axis=0)),
    "pairs": lambda a, s: np.array_equal(np.diag(a), np.diag(s))
    and np.array_equal(_pair_multiset(a), _pair_multiset(s)),
}


@pytest.mark.parametrize("within", SCHEMES)
def test_invariant_kept_and_matrix_changed(matrix, within):
    rng = np.random.default_rng(1)
    for _ in range(20):
        s = Permutation(within).draw(matrix, rng)
        assert INVARIANTS[within](matrix, s)
        assert not np.array_equal(s, matrix)


@pytest.mark.parametrize("within", SCHEMES)
def test_spectrum_changes(matrix, within):
    # a simultaneous row/column relabelling (P A P^T) would keep the spectrum exactly
    s = Permutation(within).draw(matrix, np.random.default_rng(2))
    assert not np.allclose(np.sort_complex(np.linalg.eigvals(s)), np.sort_complex(np.linalg.eigvals(matrix)))


def test_schemes_break_what_they_do_not_keep(matrix):
    rng = np.random.default_rng(3)
    assert not INVARIANTS["rows"](matrix, Permutation("columns").draw(matrix, rng))
    assert not INVARIANTS["columns"](matrix, Permutation("rows").draw(matrix, rng))
    assert not INVARIANTS["pairs"](matrix, Permutation("offdiagonal").draw(matrix, rng))
    assert not np.array_equal(np.diag(matrix), np.diag(Permutation("all").draw(matrix, rng)))


@pytest.mark.parametrize("within", SCHEMES)
def test_input_untouched_output_plain_float64(matrix, within, tmp_path):
    copy = matrix.copy()
    np.save(tmp_path / "m.npy", matrix)
    mapped = np.load(tmp_path / "m.npy", mmap_mode="r")
    for source in (matrix, mapped):
        s = Permutation(within).draw(source, np.random.default_rng(4))
        assert type(s) is np.ndarray and s.dtype == np.float64 and s.shape == matrix.shape
        assert INVARIANTS[within](matrix, s)
    np.testing.assert_array_equal(matrix, copy)


@pytest.mark.parametrize("within", SCHEMES)
def test_same_generator_state_same_draw(matrix, within):
    a = Permutation(within).draw(matrix, np.random.default_rng(5))
    b = Permutation(within).draw(matrix, np.random.default_rng(5))
    np.testing.assert_array_equal(a, b)


def _landing_counts(within, n, draws, where):
    """How often the entry at `where` of an n x n matrix lands at each position."""
    a = np.arange(n * n, dtype=float).reshape(n, n)
    rng = np.random.default_rng(11)
    counts = np.zeros((n, n))
    target = a[where]
    for _ in range(draws):
        counts += Permutation(within).draw(a, rng) == target
    return counts


# Uniformity: chi-square goodness of fit (scipy.stats.chisquare) of where one entry lands, over the
# positions the scheme allows; with a fixed seed the p-value is deterministic, and 1e-3 guards
# against a biased shuffle (a correct one fails with probability 1e-3 on a fresh seed).
def test_all_is_uniform_over_every_position():
    counts = _landing_counts("all", 3, 4500, (0, 1))
    assert stats.chisquare(counts.ravel()).pvalue > 1e-3


def test_offdiagonal_is_uniform_over_offdiagonal_positions():
    counts = _landing_counts("offdiagonal", 3, 3000, (0, 1))
    off = ~np.eye(3, dtype=bool)
    assert np.all(counts[~off] == 0)
    assert stats.chisquare(counts[off]).pvalue > 1e-3


def test_rows_is_uniform_within_the_row():
    counts = _landing_counts("rows", 4, 4000, (2, 1))
    assert np.all(np.delete(counts, 2, axis=0) == 0)
    assert stats.chisquare(counts[2]).pvalue > 1e-3


def test_columns_is_uniform_within_the_column():
    counts = _landing_counts("columns", 4, 4000, (1, 3))
    assert np.all(np.delete(counts, 3, axis=1) == 0)
    assert stats.chisquare(counts[:, 3]).pvalue > 1e-3


def test_pairs_move_together_uniformly_and_flip_with_probability_half():
    n, draws = 4, 3000
    a = np.arange(n * n, dtype=float).reshape(n, n)
    rng = np.random.default_rng(12)
    upper = np.triu_indices(n, 1)
    landing, kept_orientation = np.zeros(len(upper[0])), 0
    for _ in range(draws):
        s = Permutation("pairs").draw(a, rng)
        # where did the pair {a[0, 1], a[1, 0]} = {1, 4} go, and in which orientation?
        at = np.flatnonzero((s[upper] == 1.0) | (s.T[upper] == 1.0))
        assert len(at) == 1 and {s[upper][at[0]], s.T[upper][at[0]]} == {1.0, 4.0}
        landing[at[0]] += 1
        kept_orientation += s[upper][at[0]] == 1.0
    assert stats.chisquare(landing).pvalue > 1e-3
    # orientation ~ Binomial(3000, 1/2): scipy's exact binomial test
    assert stats.binomtest(int(kept_orientation), draws, 0.5).pvalue > 1e-3


def test_pairs_keep_the_symmetrised_reciprocity(matrix):
    # corr over both orientations of every pair is a function of the pair multiset only
    def sym_corr(a):
        p = _unordered_pairs(a)
        return np.corrcoef(np.r_[p[:, 0], p[:, 1]], np.r_[p[:, 1], p[:, 0]])[0, 1]

    recip = matrix + 0.9 * matrix.T  # strongly reciprocal
    s = Permutation("pairs").draw(recip, np.random.default_rng(6))
    assert sym_corr(s) == pytest.approx(sym_corr(recip), abs=1e-12)
    assert sym_corr(Permutation("all").draw(recip, np.random.default_rng(6))) < 0.5 * sym_corr(recip)


def test_description_and_repr():
    texts = {w: Permutation(w).description for w in SCHEMES}
    assert len(set(texts.values())) == len(SCHEMES) and all(texts.values())
    assert "reciprocity kept" in texts["pairs"]
    assert repr(Permutation()) == "Permutation(within='all')"
    assert Permutation().name == "permutation"


def test_bad_within_is_rejected():
    with pytest.raises(ValueError, match=r"`within` must be one of 'all', 'offdiagonal', 'rows', 'columns', 'pairs'; got 'diagonal'"):
        Permutation("diagonal")
    with pytest.raises(TypeError, match=r"`within` must be one of the strings"):
        Permutation(1)
