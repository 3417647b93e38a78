"""Warning classes and the diagnostics that decide when they are issued."""

import collections
import inspect
import warnings

import numpy as np
import pytest

from nullspec import _diagnostics, exceptions
from nullspec._diagnostics import (
    entry_diagnostics,
    gaussian_null_warnings,
    non_gaussian_reasons,
    warn_if_small,
    warn_if_unresolvable,
)
from nullspec.exceptions import (
    InterruptedNullWarning,
    NonGaussianEntriesWarning,
    NullspecWarning,
    ResolutionWarning,
    SmallMatrixWarning,
)


def test_every_warning_class_is_exported_and_derives_from_the_base():
    members = inspect.getmembers(exceptions, inspect.isclass)
    classes = {name for name, obj in members if obj.__module__ == exceptions.__name__}
    assert classes == set(exceptions.__all__)
    assert issubclass(NullspecWarning, UserWarning)
    for cls in (SmallMatrixWarning, NonGaussianEntriesWarning, ResolutionWarning, InterruptedNullWarning):
        assert issubclass(cls, NullspecWarning)


def test_base_class_silences_them_all():
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("ignore", NullspecWarning)
        warn_if_small(4)
        warn_if_unresolvable(0.001, 99)
    assert caught == []


class TestEntryDiagnostics:
    def test_against_direct_counts_and_moment_formulas(self, seed):
        rng = np.random.default_rng(seed)
        a = np.round(rng.standard_normal((12, 12)), 1)  # rounding creates ties
        a[0, :5] = 0.0
        d = entry_diagnostics(a)
        x = a.ravel()
        counts = collections.Counter(x.tolist())
        assert d["n"] == 12 and d["entries"] == 144
        assert d["distinct_fraction"] == len(counts) / 144
        assert d["tie_fraction"] == sum(c for c in counts.values() if c > 1) / 144
        assert d["zero_fraction"] == sum(v == 0 for v in x.tolist()) / 144
        # Biased moment estimators m3 / m2^1.5 and m4 / m2^2 - 3 (common practice, no source).
        c = x - x.mean()
        m2, m3, m4 = (np.mean(c**k) for k in (2, 3, 4))
        assert d["skewness"] == pytest.approx(m3 / m2**1.5, rel=1e-12)
        assert d["excess_kurtosis"] == pytest.approx(m4 / m2**2 - 3.0, rel=1e-12)

    def test_sign_matrix(self):
        signs = np.where(np.add.outer(np.arange(6), np.arange(6)) % 2 == 0, 1.0, -1.0)
        d = entry_diagnostics(signs)
        assert d["tie_fraction"] == 1.0 and d["distinct_fraction"] == 2 / 36
        assert d["excess_kurtosis"] == pytest.approx(-2.0) and d["skewness"] == pytest.approx(0.0)

    def test_shift_policy_ignores_the_diagonal(self, seed):
        a = np.random.default_rng(seed).standard_normal((8, 8))
        np.fill_diagonal(a, -1.0)
        assert entry_diagnostics(a)["tie_fraction"] == 8 / 64
        d = entry_diagnostics(a, diagonal="shift")
        assert d["entries"] == 56 and d["tie_fraction"] == 0.0

    def test_constant_entries_give_nan_moments(self):
        d = entry_diagnostics(np.eye(4) + 1.0, diagonal="shift")
        assert np.isnan(d["skewness"]) and np.isnan(d["excess_kurtosis"]) and d["tie_fraction"] == 1.0

    def test_errors(self):
        with pytest.raises(ValueError, match=r"`diagonal` must be one of 'include', 'shift'; got 'off'"):
            entry_diagnostics(np.eye(3), diagonal="off")
        with pytest.raises(ValueError, match=r"`matrix` must be square"):
            entry_diagnostics(np.ones((3, 4)))


class TestGaussianNullWarnings:
    def test_gaussian_entries_give_no_warning(self, seed):
        rng = np.random.default_rng(seed)
        # filterwarnings = error: any warning would fail the test.
        assert gaussian_null_warnings(rng.standard_normal((40, 40))) == ()

    def test_false_alarm_rate_on_gaussian_entries_is_small(self, seed):
        # 1000 Gaussian 10 x 10 matrices (the smallest N where the moment rules can fire).  If the
        # false-alarm rate were as high as 0.5 %, the count would be Binomial(1000, 0.005) with mean 5
        # and P(count > 15) < 1e-4; a measured rate of ~0.2 % was seen while writing this test.
        rng = np.random.default_rng(seed)
        hits = sum(bool(non_gaussian_reasons(entry_diagnostics(rng.standard_normal((10, 10))))) for _ in range(1000))
        assert hits <= 15

    def test_discrete_entries_warn_for_every_statistic(self, seed):
        signs = np.random.default_rng(seed).choice([-1.0, 1.0], size=(30, 30))
        with pytest.warns(NonGaussianEntriesWarning, match=r"for real_count, radial, edge at N = 30: 100% of the") as rec:
            messages = gaussian_null_warnings(signs)
        assert messages == (str(rec[0].message),)
        assert "null='permutation'" in messages[0] and "exact-zero rule" in messages[0]

    def test_sparse_entries(self, seed):
        rng = np.random.default_rng(seed)
        a = rng.standard_normal((50, 50)) * (rng.random((50, 50)) < 0.1)
        with pytest.warns(NonGaussianEntriesWarning, match=r"% of the entries are exactly zero \(sparse\)"):
            gaussian_null_warnings(a, statistics=("real_count",))

    def test_heavy_tails_matter_for_the_edge_not_the_real_count(self, seed):
        # Laplace entries: excess kurtosis 3 (common practice, no source); sample SE ~ 0.2 at m = 1e4.
        a = np.random.default_rng(seed).laplace(size=(100, 100))
        assert gaussian_null_warnings(a, statistics=("real_count",)) == ()
        with pytest.warns(NonGaussianEntriesWarning, match=r"for edge at N = 100: the entries are heavy-tailed"):
            gaussian_null_warnings(a, statistics=("real_count", "edge"))

    def test_skewed_entries(self, seed):
        a = np.random.default_rng(seed).exponential(size=(40, 40))  # skewness 2 (common practice)
        with pytest.warns(NonGaussianEntriesWarning, match=r"the entries are skewed \(skewness"):
            gaussian_null_warnings(a, statistics=("real_count",))

    def test_size_limits(self, seed):
        rng = np.random.default_rng(seed)
        signs = rng.choice([-1.0, 1.0], size=(_diagnostics.REAL_COUNT_SAFE_N, _diagnostics.REAL_COUNT_SAFE_N))
        assert gaussian_null_warnings(signs, statistics=("real_count",)) == ()
        with pytest.warns(NonGaussianEntriesWarning, match=r"for edge at N = 200"):
            gaussian_null_warnings(signs, statistics=("real_count", "edge"))
        big = rng.choice([-1.0, 1.0], size=(_diagnostics.EDGE_SAFE_N + 1,) * 2)
        assert gaussian_null_warnings(big) == ()

    def test_stacklevel_points_at_the_callers_caller(self):
        def public_function(matrix):
            return gaussian_null_warnings(matrix)

        signs = np.where(np.add.outer(np.arange(20), np.arange(20)) % 3 == 0, 1.0, -1.0)
        with pytest.warns(NonGaussianEntriesWarning) as rec:
            line = inspect.currentframe().f_lineno + 1
            public_function(signs)
        assert rec[0].filename == __file__ and rec[0].lineno == line

    def test_argument_errors(self):
        with pytest.raises(TypeError, match=r"`statistics` must be a sequence of names"):
            gaussian_null_warnings(np.eye(3), statistics="edge")
        with pytest.raises(ValueError, match=r"`stacklevel` must be an integer >= 1; got 0"):
            gaussian_null_warnings(np.eye(3), stacklevel=0)


class TestSmallAndResolution:
    def test_small_matrix(self):
        with pytest.warns(SmallMatrixWarning, match=r"The matrix is only 5 x 5: its scale is estimated from 25 entries"):
            warn_if_small(5)
        assert warn_if_small(_diagnostics.SMALL_N) == ()
        with pytest.raises(ValueError, match=r"`n` must be an integer >= 1; got 0"):
            warn_if_small(0)

    def test_resolution_boundary(self):
        # 1 / (19 + 1) = 0.05 exactly: the smallest p-value equals alpha, so the level is reachable.
        assert warn_if_unresolvable(0.05, 19) == ()
        with pytest.warns(ResolutionWarning, match=r"alpha = 0.05 is below 1/\(n_resamples \+ 1\) = 0.0526.*>= 19"):
            warn_if_unresolvable(0.05, 18)

    @pytest.mark.parametrize(("alpha", "needed"), [(0.01, 99), (0.001, 999), (0.003, 333)])
    def test_resolution_suggestion_is_the_smallest_sufficient_count(self, alpha, needed):
        with pytest.warns(ResolutionWarning, match=rf"Use n_resamples >= {needed} "):
            warn_if_unresolvable(alpha, 10)
        assert 1.0 / (needed + 1) <= alpha < 1.0 / needed

    def test_resolution_errors(self):
        with pytest.raises(ValueError, match=r"`alpha` must lie strictly between 0 and 1; got 1.5"):
            warn_if_unresolvable(1.5, 99)
        with pytest.raises(TypeError, match=r"`n_resamples` must be an integer >= 1; got None"):
            warn_if_unresolvable(0.05, None)
