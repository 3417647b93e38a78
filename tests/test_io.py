"""Tests of nullspec.io.read_matrix.

The files are written by general-purpose libraries (numpy.savetxt / numpy.save / numpy.savez,
scipy.io.mmwrite, pandas.DataFrame.to_csv, gzip), so each round trip checks the reader against an
independent writer.  Every error message is asserted with ``match=``.
"""

import dataclasses
import gzip
import io
import re
import sys

import numpy as np
import pytest
import scipy.io
from scipy import sparse

from nullspec.io import FORMATS, MAX_SIZE, MatrixFile, read_matrix


@pytest.fixture
def matrix():
    return np.random.default_rng(20).standard_normal((5, 5))


def _raises(path, pattern, error=ValueError, **options):
    """``read_matrix(path)`` raises ``error`` whose message starts with the file name, then ``pattern``."""
    with pytest.raises(error, match=re.escape(str(path)) + ": " + pattern):
        read_matrix(path, **options)


def _write(path, text):
    path.write_text(text, encoding="utf-8")
    return path


# ---- formats round-trip -----------------------------------------------------------------------

@pytest.mark.parametrize("suffix, delimiter", [(".csv", ","), (".tsv", "\t"), (".txt", " "), (".txt", ";"),
                                               (".csv", "|"), (".txt", "\t")])
def test_text_round_trip_with_sniffed_delimiter(tmp_path, matrix, suffix, delimiter):
    path = tmp_path / f"m{suffix}"
    np.savetxt(path, matrix, delimiter=delimiter)  # '%.18e' keeps every bit of a float64
    got = read_matrix(path)
    np.testing.assert_array_equal(got.values, matrix)
    assert (got.row_labels, got.col_labels, got.format, got.source) == (None, None, suffix[1:], str(path))


def test_text_comments_bom_blank_lines_and_aligned_spaces(tmp_path):
    text = "\ufeff# written by hand\n\n  1.0   2.0  -3.5\n\n  4.0  15.0   6.0\n# note\n  7.0   8.0   9.0\n"
    got = read_matrix(_write(tmp_path / "m.txt", text))
    np.testing.assert_array_equal(got.values, [[1, 2, -3.5], [4, 15, 6], [7, 8, 9]])


def test_savetxt_header_is_a_comment(tmp_path, matrix):
    path = tmp_path / "m.csv"
    np.savetxt(path, matrix, delimiter=",", header="a, b, c, d, e")  # written as '# a, b, ...'
    got = read_matrix(path)
    np.testing.assert_array_equal(got.values, matrix)
    assert got.col_labels is None


def test_explicit_delimiter(tmp_path):
    got = read_matrix(_write(tmp_path / "m.txt", "1:2:3\n4:5:6\n7:8:10\n"), delimiter=":")
    np.testing.assert_array_equal(got.values, [[1, 2, 3], [4, 5, 6], [7, 8, 10]])


def test_npy_and_npz_round_trip(tmp_path, matrix):
    np.save(tmp_path / "m.npy", matrix)
    np.savez(tmp_path / "one.npz", weights=matrix)
    np.savez_compressed(tmp_path / "two.npz", first=matrix, second=2 * matrix)
    np.testing.assert_array_equal(read_matrix(tmp_path / "m.npy").values, matrix)
    np.testing.assert_array_equal(read_matrix(tmp_path / "one.npz").values, matrix)
    np.testing.assert_array_equal(read_matrix(tmp_path / "two.npz", key="second").values, 2 * matrix)
    assert read_matrix(tmp_path / "two.npz", key="first").format == "npz"


def test_integer_and_bool_arrays_become_float64(tmp_path):
    np.save(tmp_path / "i.npy", np.array([[1, 0, 2], [0, 1, 3], [4, 0, 1]], dtype=np.int32))
    np.save(tmp_path / "b.npy", np.array([[True, False, False], [False, True, True], [True, False, True]]))
    for name in ("i.npy", "b.npy"):
        assert read_matrix(tmp_path / name).values.dtype == np.float64


@pytest.mark.parametrize("layout", ["dense", "coordinate", "gzip"])
def test_matrix_market_round_trip(tmp_path, matrix, layout):
    path = tmp_path / "m.mtx"
    scipy.io.mmwrite(path, matrix if layout == "dense" else sparse.coo_array(matrix))
    if layout == "gzip":
        gz = tmp_path / "m.mtx.gz"
        gz.write_bytes(gzip.compress(path.read_bytes()))
        path = gz
    got = read_matrix(path)
    np.testing.assert_array_equal(got.values, matrix)
    assert got.format == "mtx"


def test_matrix_market_symmetric_integer_is_expanded(tmp_path):
    text = "%%MatrixMarket matrix coordinate integer symmetric\n3 3 4\n1 1 1\n2 1 4\n3 2 -2\n3 3 2\n"
    got = read_matrix(_write(tmp_path / "s.mtx", text))
    np.testing.assert_array_equal(got.values, [[1, 4, 0], [4, 0, -2], [0, -2, 2]])


def test_format_overrides_the_suffix(tmp_path, matrix):
    with open(tmp_path / "weights.dat", "wb") as handle:  # a file name would get .npy appended
        np.save(handle, matrix)
    got = read_matrix(tmp_path / "weights.dat", format="npy")
    np.testing.assert_array_equal(got.values, matrix)
    assert got.format == "npy"
    table = read_matrix(_write(tmp_path / "table.dat", "1,2,3\n4,5,6\n7,8,10\n"), format="csv")
    assert table.values.shape == (3, 3) and table.format == "csv"


def test_result_is_frozen_read_only_float64(tmp_path, matrix):
    np.save(tmp_path / "m.npy", matrix)
    got = read_matrix(tmp_path / "m.npy")
    assert isinstance(got, MatrixFile) and got.description is None
    assert got.values.dtype == np.float64 and got.values.flags.c_contiguous
    with pytest.raises(ValueError, match="read-only"):
        got.values[0, 0] = 1.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        got.source = "elsewhere"
    assert repr(got) == f"MatrixFile(source={str(tmp_path / 'm.npy')!r}, format='npy', shape=(5, 5), labels=False)"


# ---- labels -----------------------------------------------------------------------------------

def test_labels_round_trip_through_pandas(tmp_path, matrix):
    pd = pytest.importorskip("pandas")
    rows = [f"site {i}" for i in range(5)]
    cols = ["a,1", 'b"2', "c", "d", "é"]  # a delimiter, a quote and a non-ASCII letter inside labels
    frame = pd.DataFrame(matrix, index=rows, columns=cols)
    for suffix, sep in ((".csv", ","), (".tsv", "\t")):
        path = tmp_path / f"m{suffix}"
        frame.to_csv(path, sep=sep)  # writes an empty corner cell above the index
        got = read_matrix(path)
        np.testing.assert_array_equal(got.values, matrix)
        assert got.row_labels == tuple(rows) and got.col_labels == tuple(cols)


def test_header_shorter_than_rows_labels_every_column(tmp_path):
    # the layout R's write.table writes by default: no corner cell above the row names
    got = read_matrix(_write(tmp_path / "r.txt", "x y z\nx 1 2 3\ny 4 5 6\nz 7 8 10\n"))
    assert got.row_labels == ("x", "y", "z") and got.col_labels == ("x", "y", "z")
    np.testing.assert_array_equal(got.values, [[1, 2, 3], [4, 5, 6], [7, 8, 10]])


def test_header_only_and_index_only(tmp_path):
    head = read_matrix(_write(tmp_path / "h.csv", "p,q,r\n1,2,3\n4,5,6\n7,8,10\n"))
    assert head.col_labels == ("p", "q", "r") and head.row_labels is None
    index = read_matrix(_write(tmp_path / "i.csv", "p,1,2,3\nq,4,5,6\nr,7,8,10\n"))
    assert index.row_labels == ("p", "q", "r") and index.col_labels is None


def test_numeric_labels_need_explicit_flags(tmp_path):
    path = _write(tmp_path / "n.csv", "id,10,20,30\n10,1,2,3\n20,4,5,6\n30,7,8,10\n")
    got = read_matrix(path, header=True, index_col=True)
    assert got.row_labels == ("10", "20", "30") and got.col_labels == ("10", "20", "30")
    np.testing.assert_array_equal(got.values, [[1, 2, 3], [4, 5, 6], [7, 8, 10]])
    # without the flags the first row reads as a data row labelled 'id': the shape rule says why
    _raises(path, r"`matrix` must be square .*got shape \(4, 3\).*read as a text table with no header row "
            r"and an index column; override with header= and index_col=")


def test_index_col_false_keeps_a_numeric_first_column(tmp_path):
    got = read_matrix(_write(tmp_path / "m.csv", "a,b,c\n1,2,3\n4,5,6\n7,8,10\n"), index_col=False)
    assert got.row_labels is None and got.values[0, 0] == 1


# ---- standard input ---------------------------------------------------------------------------

def _stdin(monkeypatch, data):
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(data)))


def _npz_bytes(**arrays):
    buffer = io.BytesIO()
    np.savez(buffer, **arrays)
    return buffer.getvalue()


def _mtx_bytes(matrix):
    buffer = io.BytesIO()
    scipy.io.mmwrite(buffer, sparse.coo_array(matrix))
    return buffer.getvalue()


def _npy_bytes(matrix):
    buffer = io.BytesIO()
    np.save(buffer, matrix)
    return buffer.getvalue()


@pytest.mark.parametrize("kind", ["text", "npy", "npz", "mtx", "mtx.gz"])
def test_stdin_format_is_sniffed(monkeypatch, matrix, kind):
    text = "\n".join(",".join(repr(float(x)) for x in row) for row in matrix).encode()
    data = {"text": text, "npy": _npy_bytes(matrix), "npz": _npz_bytes(m=matrix),
            "mtx": _mtx_bytes(matrix), "mtx.gz": gzip.compress(_mtx_bytes(matrix))}[kind]
    _stdin(monkeypatch, data)
    got = read_matrix("-")
    np.testing.assert_array_equal(got.values, matrix)
    assert got.source == "<stdin>" and got.format == {"text": "txt", "mtx.gz": "mtx"}.get(kind, kind)


def test_stdin_with_explicit_format_and_labels(monkeypatch):
    _stdin(monkeypatch, b"\tu\tv\tw\nu\t1\t2\t3\nv\t4\t5\t6\nw\t7\t8\t10\n")
    got = read_matrix("-", format="tsv")
    assert got.format == "tsv" and got.row_labels == ("u", "v", "w")


def test_empty_stdin(monkeypatch):
    _stdin(monkeypatch, b"")
    with pytest.raises(ValueError, match="<stdin>: the file is empty"):
        read_matrix("-")


# ---- files are only read ----------------------------------------------------------------------

def _examples(tmp_path, matrix):
    np.savetxt(tmp_path / "m.csv", matrix, delimiter=",")
    np.save(tmp_path / "m.npy", matrix)
    np.savez(tmp_path / "m.npz", m=matrix)
    scipy.io.mmwrite(tmp_path / "m.mtx", sparse.coo_array(matrix))
    (tmp_path / "m.mtx.gz").write_bytes(gzip.compress((tmp_path / "m.mtx").read_bytes()))
    return [tmp_path / name for name in ("m.csv", "m.npy", "m.npz", "m.mtx", "m.mtx.gz")]


def test_files_are_not_modified(tmp_path, matrix):
    for path in _examples(tmp_path, matrix):
        before = (path.stat().st_mtime_ns, path.stat().st_size, path.read_bytes())
        got = read_matrix(path)
        got_again = read_matrix(path)
        np.testing.assert_array_equal(got.values, got_again.values)
        assert (path.stat().st_mtime_ns, path.stat().st_size, path.read_bytes()) == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["m.csv", "m.mtx", "m.mtx.gz", "m.npy", "m.npz"]


# ---- bad files ----------------------------------------------------------------------------------

def test_missing_file_and_directory(tmp_path):
    _raises(tmp_path / "absent.csv", r"cannot open the file \(No such file or directory\)\. Check the path")
    _raises(tmp_path, "is a directory, not a matrix file")


def test_unreadable_file(tmp_path, monkeypatch):
    import nullspec.io

    path = _write(tmp_path / "m.csv", "1,2,3\n4,5,6\n7,8,10\n")

    def refuse(*args, **kwargs):  # what open() raises without the read permission (tests may run as root)
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr(nullspec.io, "open", refuse, raising=False)
    _raises(path, r"cannot open the file \(Permission denied\)\. Check the path, its spelling and the read permission")


def test_unknown_suffix(tmp_path):
    _raises(_write(tmp_path / "m.xls", "1"), r"unknown file type '\.xls'; read_matrix reads \.csv, .*\.mtx\.gz\. "
            "Rename the file or pass format=")
    _raises(_write(tmp_path / "matrix", "1"), r"unknown file type \(no suffix\)")


@pytest.mark.parametrize("text, what", [("", "the file is empty"),
                                        ("# only a comment\n\n   \n", "holds no data rows"),
                                        ("a,b,c\n", "holds a header row but no data rows")])
def test_empty_files(tmp_path, text, what):
    _raises(_write(tmp_path / "m.csv", text), what)


def test_ragged_rows(tmp_path):
    _raises(_write(tmp_path / "m.csv", "1,2,3\n4,5\n6,7,8\n"),
            "line 2 has 2 fields but line 1 has 3; every row must have the same number of fields")
    _raises(_write(tmp_path / "h.csv", "a,b,c,d,e\n1,2,3\n4,5,6\n7,8,9\n"),
            r"the header \(line 1\) has 5 fields but the data rows have 3")


@pytest.mark.parametrize("cell, shown", [("NA", "'NA', which is not a number"),
                                         ("", "an empty cell"),
                                         ("\x1b[31mred", r"'\\x1b\[31mred', which is not a number"),
                                         ("x" * 80, "'" + "x" * 30 + r"\.\.\.', which is not a number")])
def test_text_cells(tmp_path, cell, shown):
    path = _write(tmp_path / "m.csv", f"1,2,3\n4,{cell},6\n7,8,9\n")
    _raises(path, f"line 2, field 2 holds {shown}; every cell outside the header row and the index column "
            "must be a number")


def test_text_cell_position_counts_the_index_column(tmp_path):
    path = _write(tmp_path / "m.csv", ",a,b,c\na,1,2,3\nb,4,5,6\nc,7,8,?\n")
    _raises(path, "line 4, field 4 holds '\\?', which is not a number")


@pytest.mark.parametrize("value", ["nan", "inf", "-Infinity"])
def test_non_finite_values_are_located(tmp_path, value):
    _raises(_write(tmp_path / "m.csv", f"1,2,3\n4,5,6\n7,{value},9\n"),
            r"`matrix` must contain finite numbers only; got 1 NaN or infinite entry, .* at row 2, column 1")
    np.save(tmp_path / "m.npy", np.array([[1, 2, 3], [4, 5, 6], [7, float(value), 9]]))
    _raises(tmp_path / "m.npy", r"`matrix` must contain finite numbers only.* at row 2, column 1")


def test_non_square_and_wrong_dimensions(tmp_path):
    _raises(_write(tmp_path / "m.csv", "1,2,3\n4,5,6\n"), r"`matrix` must be square .*got shape \(2, 3\)")
    np.save(tmp_path / "cube.npy", np.zeros((2, 3, 3)))
    _raises(tmp_path / "cube.npy", r"`matrix` must be a square 2-D array \(N x N\); got a 3-D array")
    np.save(tmp_path / "small.npy", np.eye(2))
    _raises(tmp_path / "small.npy", r"`matrix` must be at least 3 x 3")


def test_complex_and_text_arrays_follow_the_matrix_rules(tmp_path):
    np.save(tmp_path / "c.npy", np.eye(3) * (1 + 1j))
    _raises(tmp_path / "c.npy", "`matrix` must be real")
    np.save(tmp_path / "s.npy", np.array([["a", "b", "c"]] * 3))
    _raises(tmp_path / "s.npy", "`matrix` must hold real numbers", error=TypeError)


def test_object_arrays_are_never_unpickled(tmp_path):
    np.save(tmp_path / "o.npy", np.array([[1, None, 2]] * 3, dtype=object), allow_pickle=True)
    _raises(tmp_path / "o.npy", r"holds Python objects \(dtype object\); NumPy files are read with allow_pickle=False")
    np.savez(tmp_path / "o.npz", m=np.array([[1, None, 2]] * 3, dtype=object))
    with pytest.raises(ValueError, match=re.escape(f"{tmp_path / 'o.npz'}['m']: holds Python objects")):
        read_matrix(tmp_path / "o.npz")


def test_npz_keys(tmp_path, matrix):
    np.savez(tmp_path / "two.npz", first=matrix, second=matrix)
    _raises(tmp_path / "two.npz", r"the archive holds 2 arrays \('first', 'second'\); read_matrix reads one\. "
            "Pass key= naming the matrix")
    _raises(tmp_path / "two.npz", r"the archive has no array 'third'; it holds 'first', 'second'", key="third")


def test_damaged_files(tmp_path, matrix):
    np.save(tmp_path / "m.npy", matrix)
    whole = (tmp_path / "m.npy").read_bytes()
    (tmp_path / "cut.npy").write_bytes(whole[:-20])
    _raises(tmp_path / "cut.npy", r"cannot read it as npy \(.*\)\. Check that the file is complete")
    (tmp_path / "head.npy").write_bytes(whole[:40])
    _raises(tmp_path / "head.npy", r"not a readable \.npy array")
    (tmp_path / "bad.npz").write_bytes(b"PK\x03\x04 not really an archive")
    _raises(tmp_path / "bad.npz", r"cannot read it as npz \(File is not a zip file\)")
    (tmp_path / "bad.mtx.gz").write_bytes(gzip.compress(b"%%MatrixMarket matrix array real general\n3 3\n1\n")[:-8])
    _raises(tmp_path / "bad.mtx.gz", "cannot read it as mtx")
    (tmp_path / "bin.csv").write_bytes(whole)
    _raises(tmp_path / "bin.csv", r"is not UTF-8 text \(byte 0: invalid start byte\)")


@pytest.mark.parametrize("text, pattern", [
    ("hello\n", r"not a Matrix Market file \(.*\)"),
    ("%%MatrixMarket matrix coordinate real general\n3 3 2\n1 1 abc\n2 2 1\n", r"cannot read it as mtx \(Line 3"),
    ("%%MatrixMarket matrix coordinate real general\n3 3 3\n1 1 1\n2 2 1\n", r"cannot read it as mtx \(Truncated"),
    ("%%MatrixMarket matrix coordinate complex general\n3 3 1\n1 1 1 2\n", r"the Matrix Market field is 'complex'"),
    ("%%MatrixMarket matrix coordinate pattern general\n3 3 1\n1 1\n", r"the Matrix Market field is 'pattern'"),
])
def test_bad_matrix_market(tmp_path, text, pattern):
    _raises(_write(tmp_path / "m.mtx", text), pattern)


def test_memory_guard_on_matrix_market_header(tmp_path):
    # a one-entry sparse file that would be 74.5 GiB dense: refused from the header, before densifying
    path = _write(tmp_path / "m.mtx", "%%MatrixMarket matrix coordinate real general\n100000 100000 1\n1 1 1.0\n")
    _raises(path, rf"a 100000 x 100000 array needs 74\.5 GiB as float64, beyond the memory guard max_size={MAX_SIZE} "
            r"\(at most 16384 x 16384, 2 GiB\)\. Pass a larger max_size=")


def test_memory_guard_on_npy_header(tmp_path):
    # a header announcing 20000 x 20000 with no data behind it: refused before any data is read
    with open(tmp_path / "big.npy", "wb") as handle:
        np.lib.format.write_array_header_1_0(handle, {"descr": "<f8", "fortran_order": False, "shape": (20000, 20000)})
    _raises(tmp_path / "big.npy", r"a 20000 x 20000 array needs 2\.98 GiB")
    _raises(_write(tmp_path / "m.csv", "1,2,3,4\n5,6,7,8\n9,1,2,3\n4,5,6,7\n"),
            r"a 4 x 4 array needs .* beyond the memory guard max_size=3", max_size=3)


# ---- bad options ------------------------------------------------------------------------------

def test_options_that_do_not_apply(tmp_path, matrix):
    np.save(tmp_path / "m.npy", matrix)
    _raises(tmp_path / "m.npy", "`header` applies to text tables only; got it for a npy file", header=True)
    _raises(tmp_path / "m.npy", "`delimiter` applies to text tables only", delimiter=",")
    path = _write(tmp_path / "m.csv", "1,2,3\n4,5,6\n7,8,10\n")
    _raises(path, "`key` applies to .npz archives only; got key='m' for a csv file", key="m")


def test_option_types():
    with pytest.raises(TypeError, match="`path` must be a file name .*; got int"):
        read_matrix(3)
    with pytest.raises(TypeError, match="`header` must be True, False or 'auto'; got 'yes'"):
        read_matrix("m.csv", header="yes")
    with pytest.raises(TypeError, match="`index_col` must be True, False or 'auto'; got 0"):
        read_matrix("m.csv", index_col=0)
    with pytest.raises(TypeError, match="`delimiter` must be a single character"):
        read_matrix("m.csv", delimiter=",,")
    with pytest.raises(ValueError, match="`format` must be one of 'csv', 'tsv', 'txt', 'npy', 'npz', 'mtx'; got 'xls'"):
        read_matrix("m.csv", format="xls")
    with pytest.raises(ValueError, match="`max_size` must be an integer >= 1; got 0"):
        read_matrix("m.csv", max_size=0)
    assert FORMATS == ("csv", "tsv", "txt", "npy", "npz", "mtx")


def test_constant_matrix_follows_the_matrix_rules(tmp_path):
    _raises(_write(tmp_path / "m.csv", "1,1,1\n1,1,1\n1,1,1\n"), "`matrix` must not be constant")
