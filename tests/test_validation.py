"""Input validation: accepted inputs, every error message, and inputs never modified."""

import numpy as np
import pandas as pd
import pytest
from scipy import sparse

from nullspec._validation import (
    ALTERNATIVES,
    as_square_matrix,
    check_alternative,
    check_bool,
    check_eigen_residual,
    check_flattened_square_width,
    check_names,
    check_null_name,
    check_option,
    check_option_or_real,
    check_positive_int,
    check_positive_real,
    check_probability,
    check_scale_estimate,
    check_square_matrix,
)


def _matrix(n=4):
    return np.arange(n * n, dtype=float).reshape(n, n) % 5


class TestAsSquareMatrixAccepts:
    def test_list_becomes_float64_copy_without_labels(self):
        data = [[1, 2, 3], [4, 5, 6], [7, 8, 10]]
        m, rows, cols = as_square_matrix(data)
        assert m.dtype == np.float64 and m.flags.c_contiguous and m.flags.writeable
        np.testing.assert_array_equal(m, np.array(data, dtype=float))
        assert rows is None and cols is None

    @pytest.mark.parametrize("dtype", [bool, np.int8, np.int64, np.uint16, np.float32, np.float64])
    def test_real_dtypes_are_converted(self, dtype):
        a = (np.eye(3) + np.tri(3, k=-1)).astype(dtype)
        m, _, _ = as_square_matrix(a)
        assert m.dtype == np.float64
        np.testing.assert_array_equal(m, a.astype(np.float64))

    @pytest.mark.filterwarnings("ignore:the matrix subclass:PendingDeprecationWarning")  # numpy's own warning
    def test_numpy_matrix_becomes_ndarray(self):
        a = np.matrix([[1.0, 2.0, 0.0], [0.0, 1.0, 2.0], [2.0, 0.0, 1.0]])
        m, _, _ = as_square_matrix(a)
        assert type(m) is np.ndarray and m.shape == (3, 3)
        np.testing.assert_array_equal(m, np.asarray(a))

    def test_dataframe_labels_are_strings(self):
        df = pd.DataFrame(_matrix(3), index=["a", "b", 7], columns=["x", "y", 2.5])
        m, rows, cols = as_square_matrix(df)
        np.testing.assert_array_equal(m, _matrix(3))
        assert rows == ("a", "b", "7") and cols == ("x", "y", "2.5")

    def test_dataframe_nullable_and_bool_columns(self):
        df = pd.DataFrame({"a": [1, 2, 3], "b": [True, False, True], "c": [0.5, 1.5, 2.5]})
        df["a"] = df["a"].astype("Int64")
        df["b"] = df["b"].astype("boolean")
        m, _, cols = as_square_matrix(df)
        np.testing.assert_array_equal(m, [[1, 1, 0.5], [2, 0, 1.5], [3, 1, 2.5]])
        assert cols == ("a", "b", "c")

    def test_object_array_of_numbers(self):
        a = np.array([[1, 2.5, 3], [4, 5, 6], [7, 8, 9]], dtype=object)
        m, _, _ = as_square_matrix(a)
        assert m.dtype == np.float64 and m[0, 1] == 2.5


class TestInputsNeverModified:
    def test_read_only_array(self):
        a = _matrix()
        a.flags.writeable = False
        before = a.copy()
        m, _, _ = as_square_matrix(a)
        m[0, 0] = 99.0  # the result is a writeable copy
        np.testing.assert_array_equal(a, before)
        assert not a.flags.writeable and not np.shares_memory(a, m)

    def test_float64_array_is_copied(self):
        a = _matrix()
        m, _, _ = as_square_matrix(a)
        assert not np.shares_memory(a, m)
        m += 1.0
        np.testing.assert_array_equal(a, _matrix())

    def test_dataframe(self):
        df = pd.DataFrame(_matrix(), index=list("abcd"), columns=list("wxyz"))
        before = df.copy(deep=True)
        m, _, _ = as_square_matrix(df)
        m[:] = -1.0
        pd.testing.assert_frame_equal(df, before)

    def test_list(self):
        data = [[1.0, 2.0, 3.0], [4.0, 5.0, 6.0], [7.0, 8.0, 10.0]]
        before = [row[:] for row in data]
        m, _, _ = as_square_matrix(data)
        m[1, 1] = 0.0
        assert data == before


class TestAsSquareMatrixErrors:
    @pytest.mark.parametrize("bad", ["abc", b"abc", {"a": 1}, {1, 2}, None])
    def test_non_array_types(self, bad):
        with pytest.raises(TypeError, match=r"`A` must be a 2-D array-like of numbers .*got .*Pass the matrix itself"):
            as_square_matrix(bad)

    def test_sparse_matrix(self):
        with pytest.raises(TypeError, match=r"`A` must be a dense array; got a scipy.sparse .*`A.toarray\(\)`"):
            as_square_matrix(sparse.eye(4, format="csr"))

    def test_string_array(self):
        with pytest.raises(TypeError, match=r"`A` must hold real numbers; got an array of dtype <U1 .*dtype=float"):
            as_square_matrix(np.array([["a", "b", "c"]] * 3))

    def test_object_array_with_text(self):
        a = np.array([[1, "x", 2]] * 3, dtype=object)
        with pytest.raises(TypeError, match=r"got 'x' \(str\) at position \(0, 1\)\. Fill missing values"):
            as_square_matrix(a)

    def test_object_array_with_none(self):
        with pytest.raises(TypeError, match=r"got None \(NoneType\) at position \(1, 2\)"):
            as_square_matrix([[1, 2, 3], [4, 5, None], [7, 8, 9]])

    def test_dataframe_text_column(self):
        df = pd.DataFrame({"a": [1.0, 2.0, 3.0], "b": ["u", "v", "w"], "c": [1.0, 2.0, 4.0]})
        with pytest.raises(TypeError, match=r"non-numeric columns \['b'\]\. Convert them first"):
            as_square_matrix(df)

    @pytest.mark.parametrize(
        "bad",
        [
            np.eye(3) * (1 + 1j),
            pd.DataFrame(np.eye(3) * 1j),
            np.array([[1, 2, 3], [1j, 2, 3], [1, 2, 3]], dtype=object),
        ],
    )
    def test_complex(self, bad):
        with pytest.raises(ValueError, match=r"`A` must be real; got complex entries\. .*pass `A\.real`"):
            as_square_matrix(bad)

    def test_ragged(self):
        with pytest.raises(ValueError, match=r"`A` must be a rectangular array of numbers; .*same length"):
            as_square_matrix([[1, 2, 3], [4, 5], [6, 7, 8]])

    @pytest.mark.parametrize(
        ("bad", "shape"), [(3.0, r"0-D array of shape \(\)"), (np.ones(9), r"1-D array of shape \(9,\)"),
                           (np.ones((2, 3, 3)), r"3-D array of shape \(2, 3, 3\)")]
    )
    def test_not_2d(self, bad, shape):
        with pytest.raises(ValueError, match=rf"`A` must be a square 2-D array \(N x N\); got a {shape}\. "):
            as_square_matrix(bad)

    def test_not_square(self):
        with pytest.raises(ValueError, match=r"`A` must be square .*got shape \(3, 4\)\. Pass the square matrix"):
            as_square_matrix(np.arange(12.0).reshape(3, 4))

    @pytest.mark.parametrize("n", [0, 1, 2])
    def test_too_small(self, n):
        with pytest.raises(ValueError, match=rf"`A` must be at least 3 x 3; got shape \({n}, {n}\)\."):
            as_square_matrix(np.arange(n * n, dtype=float).reshape(n, n))

    def test_non_finite_names_count_and_position(self):
        a = _matrix()
        a[1, 2], a[3, 0] = np.nan, np.inf
        with pytest.raises(ValueError, match=r"got 2 NaN or infinite entries, the first \(nan\) at row 1, column 2\."):
            as_square_matrix(a)

    def test_dataframe_missing_value(self):
        df = pd.DataFrame({"a": [1, None, 3], "b": [1.0, 2.0, 3.0], "c": [3.0, 2.0, 1.0]})
        df["a"] = df["a"].astype("Int64")
        with pytest.raises(ValueError, match=r"got 1 NaN or infinite entry, the first \(nan\) at row 1, column 0"):
            as_square_matrix(df)

    def test_constant(self):
        with pytest.raises(ValueError, match=r"`A` must not be constant; every entry equals 2\.0\."):
            as_square_matrix(np.full((4, 4), 2.0))

    def test_name_is_used(self):
        with pytest.raises(ValueError, match=r"^`weights` must be square"):
            as_square_matrix(np.ones((3, 4)), name="weights")


class TestCheckSquareMatrix:
    def test_no_copy_for_float64(self):
        a = np.eye(3)
        assert check_square_matrix(a) is a

    def test_minimum_and_constant_allowed(self):
        np.testing.assert_array_equal(check_square_matrix(np.ones((2, 2))), np.ones((2, 2)))
        with pytest.raises(ValueError, match=r"`M` must be at least 3 x 3; got shape \(2, 2\)"):
            check_square_matrix(np.ones((2, 2)), "M", minimum=3)


class TestScalarCheckers:
    def test_check_option(self):
        assert check_option("mad", "scale", ("sd", "mad")) == "mad"
        with pytest.raises(ValueError, match=r"`scale` must be one of 'sd', 'mad'; got 'MAD'\. Pick one"):
            check_option("MAD", "scale", ("sd", "mad"))
        with pytest.raises(TypeError, match=r"`scale` must be one of the strings 'sd', 'mad'; got 1 \(int\)"):
            check_option(1, "scale", ("sd", "mad"))

    def test_check_option_or_real(self):
        assert check_option_or_real("sd", "scale", ("sd", "mad"), positive=True) == "sd"
        assert check_option_or_real(np.float32(0.5), "center", ("mean", "none")) == 0.5
        assert check_option_or_real(-3, "center", ("mean", "none")) == -3.0
        with pytest.raises(ValueError, match=r"`scale` must be one of 'sd', 'mad' or a finite number > 0; got -1\."):
            check_option_or_real(-1, "scale", ("sd", "mad"), positive=True)
        with pytest.raises(ValueError, match=r"`center` must be .* or a finite real number; got nan\."):
            check_option_or_real(float("nan"), "center", ("mean", "none"))
        with pytest.raises(TypeError, match=r"`center` must be one of 'mean', 'none' or .*; got True \(bool\)"):
            check_option_or_real(True, "center", ("mean", "none"))
        with pytest.raises(TypeError, match=r"got \[1\] \(list\)\. Pass a plain number"):
            check_option_or_real([1], "center", ("mean", "none"))

    def test_check_names(self):
        allowed = ("real_count", "radial", "edge")
        assert check_names(["edge", "real_count"], "statistics", allowed) == ("edge", "real_count")
        with pytest.raises(TypeError, match=r"`statistics` must be a sequence of names .*got 'edge' \(str\)\. Wrap"):
            check_names("edge", "statistics", allowed)
        with pytest.raises(TypeError, match=r"got 3 \(int\)"):
            check_names(3, "statistics", allowed)
        with pytest.raises(ValueError, match=r"`statistics` must name at least one of .*got an empty sequence"):
            check_names([], "statistics", allowed)
        with pytest.raises(ValueError, match=r"`statistics` must be one of 'real_count', 'radial', 'edge'; got 'rho'"):
            check_names(["edge", "rho"], "statistics", allowed)

    @pytest.mark.parametrize("p", [0.05, 0.5, np.float64(0.999), 1e-300])
    def test_check_probability_accepts(self, p):
        assert check_probability(p, "alpha") == float(p)

    @pytest.mark.parametrize("p", [0, 1, 1.5, -0.1])
    def test_check_probability_range(self, p):
        with pytest.raises(ValueError, match=rf"`alpha` must lie strictly between 0 and 1; got {p!r}"):
            check_probability(p, "alpha")

    def test_check_probability_nan_and_types(self):
        with pytest.raises(ValueError, match=r"`alpha` must be finite; got nan"):
            check_probability(float("nan"), "alpha")
        with pytest.raises(TypeError, match=r"`alpha` must be a probability strictly between 0 and 1; got '0.05'"):
            check_probability("0.05", "alpha")
        with pytest.raises(TypeError, match=r"got True \(bool\)"):
            check_probability(True, "alpha")

    @pytest.mark.parametrize(("n", "expected"), [(5, 5), (np.int32(7), 7), (1e3, 1000), (np.float64(4.0), 4)])
    def test_check_positive_int_accepts(self, n, expected):
        got = check_positive_int(n, "n_resamples")
        assert got == expected and type(got) is int

    def test_check_positive_int_errors(self):
        with pytest.raises(ValueError, match=r"`n_resamples` must be an integer >= 1; got 2\.5, which is not a whole"):
            check_positive_int(2.5, "n_resamples")
        with pytest.raises(ValueError, match=r"got inf, which is not a whole number"):
            check_positive_int(float("inf"), "n_resamples")
        with pytest.raises(ValueError, match=r"`n_resamples` must be an integer >= 1; got 0\. Pass a whole number >= 1"):
            check_positive_int(0, "n_resamples")
        with pytest.raises(ValueError, match=r"`batch` must be an integer >= 10; got 9\."):
            check_positive_int(9, "batch", minimum=10)
        for bad in (True, np.True_):
            with pytest.raises(TypeError, match=r"`n_resamples` must be an integer >= 1; got (np\.)?True"):
                check_positive_int(bad, "n_resamples")
        with pytest.raises(TypeError, match=r"got '10' \(str\)"):
            check_positive_int("10", "n_resamples")

    def test_check_positive_real(self):
        assert check_positive_real(3, "scale") == 3.0
        for bad in (0, -1.0, float("inf"), float("nan")):
            with pytest.raises(ValueError, match=r"`scale` must be a finite number > 0; got"):
                check_positive_real(bad, "scale")
        with pytest.raises(TypeError, match=r"`scale` must be a finite number > 0; got None \(NoneType\)"):
            check_positive_real(None, "scale")

    def test_check_alternative(self):
        assert ALTERNATIVES == ("two-sided", "greater", "less")
        for alt in ALTERNATIVES:
            assert check_alternative(alt) == alt
        assert check_alternative(None, allow_none=True) is None
        with pytest.raises(TypeError, match=r"`alternative` must be one of the strings 'two-sided', 'greater', 'less'"):
            check_alternative(None)
        with pytest.raises(ValueError, match=r"`alternative` must be one of .*; got 'two_sided'"):
            check_alternative("two_sided")

    def test_check_scale_estimate(self):
        assert check_scale_estimate(np.float64(0.25), "sd") == 0.25
        with pytest.raises(ValueError, match=r"`scale='mad'` gave an entry scale of 0\.0; .*At least half .*scale='sd'"):
            check_scale_estimate(0.0, "mad")
        with pytest.raises(ValueError, match=r"`scale='sd'` gave an entry scale of 0\.0; .*are all equal"):
            check_scale_estimate(0.0, "sd")
        with pytest.raises(ValueError, match=r"gave an entry scale of inf; .*too large to square in float64"):
            check_scale_estimate(np.inf, "sd")

    def test_check_eigen_residual(self):
        assert check_eigen_residual(1e-12, 1e-8, 1.0) is None
        with pytest.raises(ValueError, match=r"`eigenvalues` must hold eigenvalues of `matrix`; got \(3\+1j\), whose"):
            check_eigen_residual(0.5, 1e-8, 3 + 1j)

    @pytest.mark.parametrize("value", [True, False, np.True_, np.False_])
    def test_check_bool_accepts(self, value):
        out = check_bool(value, "sequential")
        assert type(out) is bool and out == bool(value)

    @pytest.mark.parametrize("bad", [1, 0, "yes", None, 1.0])
    def test_check_bool_errors(self, bad):
        with pytest.raises(TypeError, match=r"`sequential` must be True or False; got .*\. Pass a bool\."):
            check_bool(bad, "sequential")

    def test_check_null_name(self):
        allowed = ("auto", "gaussian")
        assert check_null_name("auto", allowed) == "auto"
        with pytest.raises(ValueError, match=r"`null` must be one of 'auto', 'gaussian'; got 'exact'\. Pick one of "
                                             r"those strings, or pass a null model object \(a nullspec\.nulls\.NullModel"):
            check_null_name("exact", allowed)
        with pytest.raises(TypeError, match=r"`null` must be one of the strings 'auto', 'gaussian' or a null model "
                                            r"object .*; got 3 \(int\)"):
            check_null_name(3, allowed)

    @pytest.mark.parametrize(("width", "n"), [(9, 3), (16, 4), (10000, 100)])
    def test_check_flattened_square_width_accepts(self, width, n):
        assert check_flattened_square_width(width) == n

    @pytest.mark.parametrize(
        ("width", "match"),
        [
            (10, r"`Z` must hold one flattened N x N matrix per row.*got 10 columns, which is not a perfect square"),
            (1, r"got 1 column, which gives N = 1 < 3"),
            (4, r"got 4 columns, which gives N = 2 < 3\. Flatten each square matrix row-major, e\.g\. `Z = "),
        ],
    )
    def test_check_flattened_square_width_errors(self, width, match):
        with pytest.raises(ValueError, match=match):
            check_flattened_square_width(width, "Z")


class _Labelled:
    """A stand-in for nullspec.io.MatrixFile: only the three attributes as_square_matrix reads."""

    def __init__(self, values, row_labels, col_labels):
        self.values, self.row_labels, self.col_labels = values, row_labels, col_labels


class TestLabelledMatrices:
    def test_labels_are_kept_as_strings(self):
        m, rows, cols = as_square_matrix(_Labelled(_matrix(3), ["a", "b", 3], None))
        np.testing.assert_array_equal(m, _matrix(3))
        assert rows == ("a", "b", "3") and cols is None

    def test_matrix_file_is_accepted(self):
        from nullspec.io import MatrixFile

        values = _matrix(3)
        values.flags.writeable = False  # as read_matrix returns it
        m, rows, cols = as_square_matrix(MatrixFile(values, ("r1", "r2", "r3"), ("c1", "c2", "c3"), "x.csv", "csv"))
        assert m.flags.writeable and rows == ("r1", "r2", "r3") and cols == ("c1", "c2", "c3")

    def test_label_count_must_match(self):
        with pytest.raises(ValueError, match=r"`A\.col_labels` must hold one label per column of the 3 x 3 matrix; "
                                             r"got 2 labels\. Pass 3 labels, or None\."):
            as_square_matrix(_Labelled(_matrix(3), None, ["x", "y"]))

    def test_values_are_validated(self):
        with pytest.raises(ValueError, match=r"`A` must be square"):
            as_square_matrix(_Labelled(np.ones((3, 4)), None, None))
