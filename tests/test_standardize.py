"""standardize: the estimates, the spectral identity, invariances, purity and errors."""

import numpy as np
import pandas as pd
import pytest
import scipy.linalg
from scipy import stats
from scipy.optimize import linear_sum_assignment

from nullspec.standardize import Standardized, standardize


def _matched_gap(a, b):
    """Largest distance between two multisets of complex numbers under the best one-to-one matching."""
    cost = np.abs(a[:, None] - b[None, :])
    rows, cols = linear_sum_assignment(cost)
    return cost[rows, cols].max()


def _data(seed, n=30):
    rng = np.random.default_rng(seed)
    return 1.5 + 2.0 * rng.standard_normal((n, n)) + np.diag(rng.uniform(-6.0, -4.0, n))


def _offdiag(a):
    return a[~np.eye(a.shape[0], dtype=bool)]


class TestEstimates:
    def test_mean_and_sd(self, seed):
        a = _data(seed)
        s = standardize(a)
        assert s.center == pytest.approx(a.mean(), rel=1e-13)
        assert s.scale == pytest.approx(np.std(a, ddof=1), rel=1e-13)
        assert s.shift == 0.0
        np.testing.assert_allclose(s.matrix, (a - a.mean()) / np.std(a, ddof=1), rtol=1e-13, atol=1e-15)

    def test_known_center_uses_ddof_zero(self, seed):
        a = _data(seed)
        assert standardize(a, center="none").scale == pytest.approx(np.sqrt(np.mean(a**2)), rel=1e-13)
        s = standardize(a, center=2.5)
        assert s.center == 2.5
        assert s.scale == pytest.approx(np.sqrt(np.mean((a - 2.5) ** 2)), rel=1e-13)

    def test_mad_against_scipy_and_the_normal_constant(self, seed):
        a = _data(seed)
        s = standardize(a, scale="mad")
        x = a.ravel()
        assert s.scale == pytest.approx(stats.median_abs_deviation(x, scale="normal"), rel=1e-13)
        # 1 / Phi^{-1}(3/4) = 1.4826: the consistency constant of the MAD for normal data (common practice).
        by_hand = np.median(np.abs(x - np.median(x))) / stats.norm.ppf(0.75)
        assert s.scale == pytest.approx(by_hand, rel=1e-13)

    def test_mad_is_robust_to_a_few_huge_entries(self, seed):
        a = np.random.default_rng(seed).standard_normal((40, 40))
        a[0, :3] = 1e6
        assert standardize(a, scale="mad").scale == pytest.approx(1.0, abs=0.1)
        assert standardize(a, scale="sd").scale > 100

    def test_huge_entries_are_scaled_without_overflow(self, seed):
        a = _data(seed)
        np.testing.assert_allclose(standardize(1e200 * a).matrix, standardize(a).matrix, atol=1e-12)

    def test_known_scale(self, seed):
        s = standardize(_data(seed), scale=2.0)
        assert s.scale == 2.0

    def test_shift_policy_uses_off_diagonal_entries(self, seed):
        a = _data(seed)
        s = standardize(a, diagonal="shift")
        off = _offdiag(a)
        assert s.center == pytest.approx(off.mean(), rel=1e-13)
        assert s.scale == pytest.approx(np.std(off, ddof=1), rel=1e-13)
        assert s.shift == pytest.approx(np.mean(np.diag(a)) - off.mean(), rel=1e-13)
        expected = (a - off.mean() - s.shift * np.eye(a.shape[0])) / s.scale
        np.testing.assert_allclose(s.matrix, expected, rtol=1e-12, atol=1e-14)
        # The diagonal keeps its own spread: only its mean is removed.
        assert np.diag(s.matrix).mean() == pytest.approx(0.0, abs=1e-12)
        assert np.std(np.diag(s.matrix)) == pytest.approx(np.std(np.diag(a)) / s.scale, rel=1e-12)

    def test_policy_is_recorded(self, seed):
        s = standardize(_data(seed), center=np.float32(1.0), scale="mad", diagonal="shift")
        assert s.policy == {"center": 1.0, "scale": "mad", "diagonal": "shift"}
        assert type(s.policy["center"]) is float


class TestSpectralIdentity:
    @pytest.mark.parametrize("diagonal", ["include", "shift"])
    @pytest.mark.parametrize("center", ["mean", "none", -0.75])
    def test_eigenvalues_are_shifted_scaled_eigenvalues_of_the_centred_matrix(self, seed, center, diagonal):
        a = _data(seed)
        s = standardize(a, center=center, diagonal=diagonal)
        n = a.shape[0]
        centred = a - s.center * np.ones((n, n))  # removes c 1 1^T: a rank-one change
        direct = (scipy.linalg.eigvals(centred) - s.shift) / s.scale
        assert _matched_gap(scipy.linalg.eigvals(s.matrix), direct) < 1e-10 * np.abs(direct).max()

    def test_centring_is_not_a_spectral_shift(self, seed):
        a = _data(seed)
        s = standardize(a)
        shifted = (scipy.linalg.eigvals(a) - s.center) / s.scale
        assert _matched_gap(scipy.linalg.eigvals(s.matrix), shifted) > 1.0


class TestInvariances:
    def test_affine_change_of_all_entries(self, seed):
        a = _data(seed)
        for scale in ("sd", "mad"):
            base = standardize(a, scale=scale).matrix
            np.testing.assert_allclose(standardize(3.0 * a - 7.0, scale=scale).matrix, base, atol=1e-12)

    def test_shift_policy_removes_a_constant_on_the_diagonal(self, seed):
        a = _data(seed)
        s0 = standardize(a, diagonal="shift")
        s1 = standardize(a + 5.0 * np.eye(a.shape[0]), diagonal="shift")
        np.testing.assert_allclose(s1.matrix, s0.matrix, atol=1e-12)
        assert s1.shift == pytest.approx(s0.shift + 5.0, rel=1e-12)
        assert (s1.center, s1.scale) == (s0.center, s0.scale)


class TestPurity:
    def test_input_not_modified_and_result_read_only(self, seed):
        a = _data(seed)
        a.flags.writeable = False
        before = a.copy()
        s = standardize(a, diagonal="shift")
        np.testing.assert_array_equal(a, before)
        assert not np.shares_memory(a, s.matrix)
        with pytest.raises(ValueError, match="read-only"):
            s.matrix[0, 0] = 1.0

    def test_dataframe_input(self, seed):
        a = _data(seed, n=5)
        df = pd.DataFrame(a, index=list("abcde"), columns=list("abcde"))
        before = df.copy(deep=True)
        s = standardize(df)
        pd.testing.assert_frame_equal(df, before)
        np.testing.assert_allclose(s.matrix, standardize(a).matrix)

    def test_frozen(self, seed):
        s = standardize(_data(seed))
        assert isinstance(s, Standardized)
        with pytest.raises(AttributeError):
            s.scale = 1.0


class TestErrors:
    def test_constant_off_diagonal_with_shift(self):
        a = np.ones((5, 5)) + np.diag(np.arange(5.0))
        with pytest.raises(ValueError, match=r"`scale='sd'` gave an entry scale of 0\.0; .*off-diagonal ones"):
            standardize(a, diagonal="shift")

    def test_mad_of_mostly_zero_entries(self):
        a = np.zeros((6, 6))
        a[0, :3] = [1.0, 2.0, 3.0]
        with pytest.raises(ValueError, match=r"`scale='mad'` gave an entry scale of 0\.0; .*At least half"):
            standardize(a, scale="mad")

    def test_overflowing_entries(self):
        a = np.diag([1.7e308, -1.7e308, 1.7e308, 0.0])
        with pytest.raises(ValueError, match=r"gave an entry scale of (inf|nan); .*rescale the matrix"):
            standardize(a)
        with pytest.raises(ValueError, match=r"`scale='mad'` gave an entry scale of (inf|nan)"):
            standardize(1.7e308 * np.sign(np.random.default_rng(0).standard_normal((4, 4))), scale="mad")

    def test_options(self):
        a = np.arange(9.0).reshape(3, 3)
        with pytest.raises(ValueError, match=r"`center` must be one of 'mean', 'none'; got 'median'"):
            standardize(a, center="median")
        with pytest.raises(ValueError, match=r"`scale` must be one of 'sd', 'mad' or a finite number > 0; got 0"):
            standardize(a, scale=0)
        with pytest.raises(TypeError, match=r"`center` must be one of 'mean', 'none' or a finite real number; got None"):
            standardize(a, center=None)
        with pytest.raises(ValueError, match=r"`diagonal` must be one of 'include', 'shift'; got 'drop'"):
            standardize(a, diagonal="drop")
        with pytest.raises(TypeError, match=r"standardize\(\) takes 1 positional argument"):
            standardize(a, "mean")

    def test_bad_matrix_is_named(self):
        with pytest.raises(ValueError, match=r"`matrix` must be square"):
            standardize(np.ones((3, 4)))
