"""Read a square matrix from a file: text tables, NumPy files, Matrix Market, standard input.

:func:`read_matrix` picks the reader from the file's suffix (or ``format=``), keeps the labels a
text table carries, and returns a :class:`MatrixFile`.  The matrix rules themselves (square, real,
finite, at least 3 x 3, not constant) are those of :func:`nullspec._validation.as_square_matrix`; this
module only prefixes the file name to its messages.  The rules worded here are about files: their
type, their layout (ragged rows, cells that are not numbers, missing archive keys) and a memory guard.

Safety: files are opened read-only and never modified; NumPy files are read with
``allow_pickle=False`` (unpickling can run arbitrary code); a Matrix Market header is checked with
``scipy.io.mminfo`` before anything is densified, and no format may hold more than ``max_size**2``
entries (``MAX_SIZE = 16384``: 2 GiB of float64).  Text files are parsed with the ``csv`` module and
numpy; pandas is not needed.
"""

import csv
import gzip
import io
import math
import os
import sys
import zipfile
from dataclasses import dataclass

import numpy as np
import scipy.io
from scipy import sparse

from ._validation import as_square_matrix, check_option, check_positive_int

__all__ = ["FORMATS", "MAX_SIZE", "MatrixFile", "read_matrix"]

FORMATS = ("csv", "tsv", "txt", "npy", "npz", "mtx")
MAX_SIZE = 16384  # largest N by default: 16384**2 entries * 8 bytes = 2 GiB
_TEXT_FORMATS = ("csv", "tsv", "txt")
_SUFFIXES = {".csv": "csv", ".tsv": "tsv", ".txt": "txt", ".npy": "npy", ".npz": "npz", ".mtx": "mtx"}
_SUFFIX_LIST = ".csv, .tsv, .txt, .npy, .npz, .mtx, .mtx.gz"
_STDIN, _STDIN_NAME = "-", "<stdin>"
_MAGIC = ((b"\x93NUMPY", "npy"), (b"PK\x03\x04", "npz"), (b"PK\x05\x06", "npz"), (b"%%MatrixMarket", "mtx"))
_SNIFF_CHARS = 65536
_SNIFF_DELIMITERS = ",;\t |"
_SHOWN_CHARS = 30
_READ_ERRORS = (OSError, EOFError, zipfile.BadZipFile)  # damaged or truncated files and archives


@dataclass(frozen=True, slots=True)
class MatrixFile:
    """A square matrix read from a file, with the labels the file carried.

    Attributes
    ----------
    values : ndarray of float64, shape (N, N)
        The matrix (a read-only array; pass it on as it is, or copy it to change it).
    row_labels, col_labels : tuple of str or None
        Labels from a text table's index column and header row; None when the file had none.
    source : str
        Where the matrix came from: the path as given, ``"<stdin>"``, or ``"demo:<name>"``.
    format : str
        The format read, one of :data:`FORMATS` (``"npz"`` for the embedded demo).
    description : str or None
        What the matrix is (set for the embedded demo scenarios); None for files.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.io import MatrixFile
    >>> MatrixFile(np.eye(3), None, None, "example", "npy")
    MatrixFile(source='example', format='npy', shape=(3, 3), labels=False)
    """

    values: np.ndarray
    row_labels: tuple | None
    col_labels: tuple | None
    source: str
    format: str
    description: str | None = None

    def __repr__(self):
        labels = self.row_labels is not None or self.col_labels is not None
        return (f"MatrixFile(source={self.source!r}, format={self.format!r}, "
                f"shape={self.values.shape}, labels={labels})")


def read_matrix(path, *, format=None, delimiter=None, header="auto", index_col="auto", key=None,
                max_size=MAX_SIZE):
    """Read a real square matrix from a file, or from standard input with ``path="-"``.

    Parameters
    ----------
    path : str or os.PathLike
        The file to read; ``"-"`` reads standard input (bytes, so binary formats work too).
        Suffixes: ``.csv``, ``.tsv``, ``.txt`` (text tables), ``.npy``, ``.npz`` (NumPy),
        ``.mtx``, ``.mtx.gz`` (Matrix Market).  Gzip-compressed content is decompressed whatever
        the suffix.
    format : {"csv", "tsv", "txt", "npy", "npz", "mtx"}, optional
        Overrides the suffix.  For standard input the default is sniffed from the content (the
        NumPy and Matrix Market signatures; anything else is read as text).
    delimiter : str, optional
        Text only: the one-character field separator.  Default: a tab for ``tsv``, else sniffed
        with :class:`csv.Sniffer` among ``, ; tab space |``.  A space means runs of whitespace.
    header : bool or "auto", default="auto"
        Text only: whether the first row holds column labels.  ``"auto"``: yes when a cell of the
        first row other than its first one is not a number (so numeric labels need ``True``).
    index_col : bool or "auto", default="auto"
        Text only: whether the first column holds row labels.  ``"auto"``: yes when a cell of the
        first column below the header is not a number, when the header's first cell is empty, or
        when the header is one cell shorter than the rows (the layout R writes).
    key : str, optional
        ``.npz`` only: the array to read; may be omitted when the archive holds a single array.
    max_size : int, default=MAX_SIZE
        Memory guard: the largest N accepted (at most ``max_size**2`` entries; 16384 is 2 GiB of
        float64).  Checked on the header before a NumPy array is loaded or a sparse Matrix Market
        file is densified.

    Returns
    -------
    MatrixFile
        The float64 matrix with its labels, source and format.

    Raises
    ------
    TypeError
        If ``path`` or an option has the wrong type, or the matrix rules reject the values' type.
    ValueError
        If the file is missing, a directory, unreadable, empty or of an unknown type; if an option does
        not apply to the format; if a text table has ragged rows or cells that are not numbers; if an
        archive key is missing or ambiguous; if the memory guard is exceeded; or if the matrix is not
        square, real, finite, at least 3 x 3 and non-constant.  Messages about the file start with
        its name (``<stdin>`` for standard input).

    Notes
    -----
    The file is only read: it is opened in binary read-only mode and closed before returning.

    Examples
    --------
    >>> import pathlib, tempfile
    >>> from nullspec.io import read_matrix
    >>> with tempfile.TemporaryDirectory() as folder:
    ...     path = pathlib.Path(folder, "small.csv")
    ...     _ = path.write_text(",a,b,c\\na,0.5,-1,2\\nb,1,0,0.25\\nc,-2,1.5,1\\n")
    ...     m = read_matrix(path)
    >>> m.values.shape, m.row_labels, m.col_labels, m.format
    ((3, 3), ('a', 'b', 'c'), ('a', 'b', 'c'), 'csv')
    """
    source = _source_name(path)
    _check_options(format, delimiter, header, index_col)
    max_size = check_positive_int(max_size, "max_size")
    with _open_binary(path, source) as raw:
        stream = _maybe_gunzip(raw, source)
        fmt = format or (_sniff_format(stream) if path == _STDIN else _suffix_format(source))
        _check_applicable(fmt, source, delimiter, header, index_col, key)
        table = _read_table(stream, source, fmt, delimiter, header, index_col, key, max_size)
    return _matrix_file(*table, source=source, fmt=fmt)


# ---- sources, formats, options -----------------------------------------------------------------

def _source_name(path):
    """The name used in messages: the path as given, or ``"<stdin>"``."""
    if isinstance(path, str) and path == _STDIN:
        return _STDIN_NAME
    if not isinstance(path, (str, os.PathLike)):
        raise TypeError(
            f"`path` must be a file name (str or os.PathLike) or '-' for standard input; got "
            f"{type(path).__name__}. Pass the path of the matrix file."
        )
    return os.fsdecode(path)


def _check_flag(value, name):
    """``header`` and ``index_col`` are True, False or "auto"."""
    if not (isinstance(value, bool) or (isinstance(value, str) and value == "auto")):
        raise TypeError(f"`{name}` must be True, False or 'auto'; got {value!r}. Pass one of those.")


def _check_options(format, delimiter, header, index_col):
    if format is not None:
        check_option(format, "format", FORMATS)
    if delimiter is not None and not (isinstance(delimiter, str) and len(delimiter) == 1):
        raise TypeError(
            f"`delimiter` must be a single character such as ',' or '\\t'; got {delimiter!r}. "
            "Pass one character, or None to sniff it."
        )
    _check_flag(header, "header")
    _check_flag(index_col, "index_col")


def _check_applicable(fmt, source, delimiter, header, index_col, key):
    """Refuse options that the format would silently ignore."""
    text_given = [name for name, value, default in
                  (("delimiter", delimiter, None), ("header", header, "auto"), ("index_col", index_col, "auto"))
                  if value != default]
    if fmt not in _TEXT_FORMATS and text_given:
        raise ValueError(
            f"{source}: `{text_given[0]}` applies to text tables only; got it for a {fmt} file. Drop the option, "
            "or pass format='csv', 'tsv' or 'txt' if the file is text."
        )
    if fmt != "npz" and key is not None:
        raise ValueError(
            f"{source}: `key` applies to .npz archives only; got key={key!r} for a {fmt} file. Drop it, or pass "
            "format='npz' if the file is an archive."
        )


def _open_binary(path, source):
    """A binary, read-only, seekable stream of the file (standard input is read into memory)."""
    if path == _STDIN:
        return io.BytesIO(sys.stdin.buffer.read())
    if os.path.isdir(path):
        raise ValueError(f"{source}: is a directory, not a matrix file. Pass the path of a file inside it.")
    try:
        return open(path, "rb")
    except OSError as exc:
        raise ValueError(
            f"{source}: cannot open the file ({exc.strerror}). Check the path, its spelling and the "
            "read permission."
        ) from None


def _maybe_gunzip(stream, source):
    """``stream`` itself, or a decompressing view when it starts with the gzip signature."""
    start = _peek(stream, 2)
    if not start:
        raise ValueError(f"{source}: the file is empty; it must hold an N x N matrix. Check that it was written.")
    return gzip.GzipFile(fileobj=stream, mode="rb") if start == b"\x1f\x8b" else stream


def _peek(stream, size):
    start = stream.read(size)
    stream.seek(0)
    return start


def _sniff_format(stream):
    """The format of standard input, from the first bytes: NumPy, Matrix Market, else text."""
    start = _peek(stream, 16)
    return next((fmt for magic, fmt in _MAGIC if start.startswith(magic)), "txt")


def _suffix_format(source):
    lowered = source.lower()
    suffix = ".mtx" if lowered.endswith(".mtx.gz") else os.path.splitext(lowered)[1]
    if suffix not in _SUFFIXES:
        shown = repr(suffix) if suffix else "(no suffix)"
        raise ValueError(
            f"{source}: unknown file type {shown}; read_matrix reads {_SUFFIX_LIST}. "
            f"Rename the file or pass format= one of {', '.join(FORMATS)}."
        )
    return _SUFFIXES[suffix]


def _read_table(stream, source, fmt, delimiter, header, index_col, key, max_size):
    """``(values, row_labels, col_labels, note)`` from the reader of ``fmt``."""
    try:
        if fmt in _TEXT_FORMATS:
            return _read_text(stream, source, fmt, delimiter, header, index_col, max_size)
        if fmt == "npy":
            return _read_npy(stream, source, max_size), None, None, ""
        if fmt == "npz":
            return _read_npz(stream, source, key, max_size), None, None, ""
        return _read_mtx(stream, source, max_size), None, None, ""
    except _READ_ERRORS as exc:
        raise _unreadable(source, fmt, exc) from None


def _unreadable(source, fmt, exc):
    return ValueError(f"{source}: cannot read it as {fmt} ({exc}). Check that the file is complete and of that format.")


def _load(load, stream, source, fmt):
    """``load(stream)``, with a reader's ValueError (truncated data, a bad entry) naming the file."""
    try:
        return load(stream)
    except ValueError as exc:
        raise _unreadable(source, fmt, exc) from None


def _matrix_file(values, row_labels, col_labels, note="", *, source, fmt, description=None):
    """Apply the package's matrix rules (file name prefixed to their messages) and wrap the result."""
    try:
        matrix, _, _ = as_square_matrix(values, name="matrix")
    except (TypeError, ValueError) as exc:
        raise type(exc)(f"{source}: {exc}{note}") from None
    matrix.setflags(write=False)
    return MatrixFile(matrix, row_labels, col_labels, source, fmt, description)


def _check_dense_size(shape, source, max_size):
    """The memory guard: at most ``max_size**2`` entries once dense."""
    entries = math.prod(shape)
    if entries > max_size**2:
        raise ValueError(
            f"{source}: a {' x '.join(map(str, shape))} array needs {entries * 8 / 2**30:.3g} GiB as float64, "
            f"beyond the memory guard max_size={max_size} (at most {max_size} x {max_size}, "
            f"{max_size**2 * 8 / 2**30:.3g} GiB). Pass a larger max_size= if the machine has the memory."
        )


# ---- text tables --------------------------------------------------------------------------------

def _read_text(stream, source, fmt, delimiter, header, index_col, max_size):
    """Parse a text table into ``(values, row_labels, col_labels, note)``."""
    text = _decode(stream.read(), source)
    delimiter = delimiter or ("\t" if fmt == "tsv" else _sniff_delimiter(text, source))
    rows = _rows(text, delimiter)
    if not rows:
        raise ValueError(f"{source}: holds no data rows (only blank or '#' comment lines). Check the file.")
    head = rows[0] if (header is True or (header == "auto" and _looks_like_header(rows[0][1]))) else None
    body = rows[1:] if head else rows
    if not body:
        raise ValueError(f"{source}: holds a header row but no data rows. Check the file.")
    width = _check_widths(body, source)
    has_index = _has_index(index_col, head, body, width)
    _check_dense_size((len(body), width - int(has_index)), source, max_size)
    _check_header_width(head, width, has_index, source)
    values = np.array([_numbers(cells, line, source, int(has_index)) for line, cells in body])
    row_labels = tuple(cells[0] for _, cells in body) if has_index else None
    col_labels = tuple(head[1][len(head[1]) - width + int(has_index):]) if head else None
    note = (f" (read as a text table with {'a' if head else 'no'} header row and {'an' if has_index else 'no'} "
            "index column; override with header= and index_col=)")
    return values, row_labels, col_labels, note


def _decode(data, source):
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ValueError(
            f"{source}: is not UTF-8 text (byte {exc.start}: {exc.reason}); text tables must be UTF-8 or "
            "ASCII. Re-save it as UTF-8, or give a NumPy file the suffix .npy or .npz."
        ) from None


def _sniff_delimiter(text, source):
    lines = text[:_SNIFF_CHARS].splitlines(keepends=True)
    lines = lines[:-1] if len(text) > _SNIFF_CHARS else lines  # whole lines only
    sample = "".join(line for line in lines if not line.lstrip().startswith("#"))
    try:
        return csv.Sniffer().sniff(sample, delimiters=_SNIFF_DELIMITERS).delimiter
    except csv.Error:  # e.g. ragged rows: take the first candidate present, the reader reports the rest
        found = next((d for d in _SNIFF_DELIMITERS if d in sample), None)
    if found is None:
        raise ValueError(
            f"{source}: cannot tell which character separates the fields (tried , ; tab space |). "
            "Pass delimiter=, e.g. delimiter=','."
        )
    return found


def _rows(text, delimiter):
    """Non-blank, non-comment rows as ``(line_number, stripped_cells)``; a space splits on whitespace."""
    lines = io.StringIO(text, newline="")
    if delimiter == " ":
        split = ((n, line.split()) for n, line in enumerate(lines, start=1))
        return [(n, cells) for n, cells in split if cells and not cells[0].startswith("#")]
    kept = ("\n" if line.lstrip().startswith("#") else line for line in lines)
    reader = csv.reader(kept, delimiter=delimiter)
    rows = ((reader.line_num, [cell.strip() for cell in cells]) for cells in reader)
    return [(n, cells) for n, cells in rows if cells and any(cells)]


def _is_number(cell):
    try:
        float(cell)
    except ValueError:
        return False
    return True


def _looks_like_header(cells):
    """A first row is a header when a cell after its first is not a number, or its first is empty."""
    return cells[0] == "" or not all(_is_number(cell) for cell in cells[1:])


def _has_index(index_col, head, body, width):
    """Whether the first column holds row labels (see ``index_col`` in :func:`read_matrix`)."""
    if index_col != "auto":
        return index_col
    if head and (len(head[1]) == width - 1 or (len(head[1]) == width and head[1][0] == "")):
        return True
    return not all(_is_number(cells[0]) for _, cells in body)


def _check_widths(body, source):
    """All data rows have the width of the first one."""
    first_line, first = body[0]
    for line, cells in body:
        if len(cells) != len(first):
            raise ValueError(
                f"{source}: line {line} has {len(cells)} fields but line {first_line} has {len(first)}; "
                "every row must have the same number of fields. Fill the missing cells or remove the "
                "extra ones (check the delimiter too)."
            )
    return len(first)


def _check_header_width(head, width, has_index, source):
    """The header labels every data column (with or without a corner cell above the index)."""
    if head is None:
        return
    allowed = (width, width - 1) if has_index else (width,)
    if len(head[1]) not in allowed:
        raise ValueError(
            f"{source}: the header (line {head[0]}) has {len(head[1])} fields but the data rows have "
            f"{width}; every row must have the same number of fields. Give each data column one label "
            "(pass header=False if the first row is data)."
        )


def _numbers(cells, line, source, skip):
    """The cells after the first ``skip`` as floats; a cell that is not a number is an error."""
    try:
        return np.array([float(cell) for cell in cells[skip:]])
    except ValueError:
        field, cell = next((j, c) for j, c in enumerate(cells[skip:], start=skip + 1) if not _is_number(c))
    shown = "an empty cell" if cell == "" else f"{_shorten(cell)!r}, which is not a number"
    raise ValueError(
        f"{source}: line {line}, field {field} holds {shown}; every cell outside the header row and the "
        "index column must be a number. Fill missing values, correct the cell, or pass header= / "
        "index_col= if that row or column holds labels."
    )


def _shorten(cell):
    return cell if len(cell) <= _SHOWN_CHARS else cell[:_SHOWN_CHARS] + "..."


# ---- NumPy and Matrix Market --------------------------------------------------------------------

def _unsupported_npy(stream):
    raise ValueError("only .npy format versions 1.0 and 2.0 hold plain numeric arrays")


_NPY_HEADER_READERS = {(1, 0): np.lib.format.read_array_header_1_0, (2, 0): np.lib.format.read_array_header_2_0}


def _checked_npy_header(stream, where, max_size):
    """Read a .npy header; refuse object arrays and arrays beyond the memory guard before loading."""
    try:
        version = np.lib.format.read_magic(stream)
        shape, _, dtype = _NPY_HEADER_READERS.get(version, _unsupported_npy)(stream)
    except ValueError as exc:
        raise ValueError(
            f"{where}: not a readable .npy array ({exc}). Save the matrix as a float array with numpy.save."
        ) from None
    if dtype.hasobject:
        raise ValueError(
            f"{where}: holds Python objects (dtype {dtype}); NumPy files are read with allow_pickle=False "
            "because unpickling can run arbitrary code. Save a numeric array, e.g. "
            "np.save(path, np.asarray(A, dtype=float))."
        )
    _check_dense_size(shape, where, max_size)


def _read_array(stream):
    return np.lib.format.read_array(stream, allow_pickle=False)


def _read_npy(stream, source, max_size):
    _checked_npy_header(stream, source, max_size)
    stream.seek(0)
    return _load(_read_array, stream, source, "npy")


def _read_npz(stream, source, key, max_size):
    with zipfile.ZipFile(stream) as archive:
        members = {name.removesuffix(".npy"): name for name in archive.namelist()}
        chosen = _npz_key(members, key, source)
        with archive.open(members[chosen]) as member:
            _checked_npy_header(member, f"{source}[{chosen!r}]", max_size)
            member.seek(0)
            return _load(_read_array, member, source, "npz")


def _npz_key(members, key, source):
    """The archive member to read: ``key``, or the only one."""
    keys = ", ".join(repr(k) for k in members)
    if key is None and len(members) == 1:
        return next(iter(members))
    if key is None:
        raise ValueError(
            f"{source}: the archive holds {len(members)} arrays ({keys or 'none'}); read_matrix reads one. "
            "Pass key= naming the matrix."
        )
    if key not in members:
        raise ValueError(f"{source}: the archive has no array {key!r}; it holds {keys or 'none'}. Pass one of those as key=.")
    return key


class _ReadOnly:
    """A view of a binary stream that exposes ``read`` only.

    scipy 1.17's Matrix Market reader aborts the whole process (a C++ terminate, not an exception)
    when handed an open file object, which has ``fileno``; through this view it takes its plain
    Python-stream path, which works for files, gzip streams and standard input alike.
    """

    __slots__ = ("read",)

    def __init__(self, stream):
        self.read = stream.read


def _read_mtx(stream, source, max_size):
    """Densify a Matrix Market file after its header passed the field rule and the memory guard."""
    try:
        rows, cols, _, _, field, _ = scipy.io.mminfo(_ReadOnly(stream))
    except ValueError as exc:
        raise ValueError(f"{source}: not a Matrix Market file ({exc}). Check the file's first line.") from None
    if field in ("complex", "pattern"):
        raise ValueError(
            f"{source}: the Matrix Market field is {field!r}; nullspec needs real numbers ('real' or "
            "'integer'). Write the real matrix (for a pattern, the 0/1 values as a 'real' or 'integer' file)."
        )
    _check_dense_size((rows, cols), source, max_size)
    stream.seek(0)
    matrix = _load(scipy.io.mmread, _ReadOnly(stream), source, "mtx")
    return matrix.toarray() if sparse.issparse(matrix) else matrix
