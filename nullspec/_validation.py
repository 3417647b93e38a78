"""Input checks: the one place where nullspec words the errors a user can cause.

Every message names the argument, states the rule, shows the value received (a shortened repr, or
the shape and dtype of an array) and says how to fix it.  Bad values raise ``ValueError``, bad types
``TypeError``.  The range rules for probabilities and the option rule are owned by
:mod:`nullspec.ginibre._checks` (the layer below, which cannot import this module); the functions
here add the type checks in front of them.
"""

import collections.abc
import math
import numbers
import reprlib
import sys

import numpy as np
from scipy import sparse

from .ginibre import _checks

__all__ = [
    "MIN_SIZE",
    "ALTERNATIVES",
    "as_square_matrix",
    "check_square_matrix",
    "check_flattened_square_width",
    "check_bool",
    "check_null_name",
    "check_option",
    "check_option_or_real",
    "check_names",
    "check_probability",
    "check_positive_int",
    "check_positive_real",
    "check_alternative",
    "check_scale_estimate",
    "check_eigen_residual",
]

MIN_SIZE = 3
ALTERNATIVES = ("two-sided", "greater", "less")

# The attributes that make an object a labelled matrix (nullspec.io.MatrixFile, or any look-alike).
_LABELLED = ("values", "row_labels", "col_labels")

_REPR = reprlib.Repr()
_REPR.maxstring = 40
_REPR.maxother = 40
_NUMERIC_KINDS = "biuf"


def _shown(value):
    """A shortened repr of ``value`` followed by its type name, for error messages."""
    return f"{_REPR.repr(value)} ({type(value).__name__})"


def _first_position(bad):
    """``(row, column)`` of the first True entry of a 2-D boolean mask, as Python ints."""
    i, j = np.argwhere(bad)[0]
    return int(i), int(j)


def _frame_parts(a, name):
    """Split a pandas DataFrame into float values and string labels; pass anything else through.

    pandas is not a dependency: if it has not been imported, ``a`` cannot be a DataFrame.
    """
    pd = sys.modules.get("pandas")
    if pd is None or not isinstance(a, pd.DataFrame):
        return a, None, None
    kinds = [dtype.kind for dtype in a.dtypes]
    if "c" in kinds:
        _raise_complex(name)
    bad = [str(col) for col, kind in zip(a.columns, kinds) if kind not in _NUMERIC_KINDS]
    if bad:
        raise TypeError(
            f"`{name}` must hold numbers only; got a DataFrame with non-numeric columns "
            f"{_REPR.repr(bad)}. Convert them first, e.g. `{name}.astype(float)`, or drop label columns "
            "(use them as the index instead)."
        )
    values = a.to_numpy(dtype=np.float64, na_value=np.nan)
    return values, tuple(str(r) for r in a.index), tuple(str(c) for c in a.columns)


def _labelled_parts(a, name):
    """Split a DataFrame, or an object with ``values``, ``row_labels`` and ``col_labels`` (such as a
    :class:`nullspec.io.MatrixFile`), into values and string labels; pass anything else through.

    Duck typing: this module sits below :mod:`nullspec.io` and does not import it.
    """
    if all(hasattr(a, attribute) for attribute in _LABELLED):
        return a.values, _label_tuple(a.row_labels), _label_tuple(a.col_labels)
    return _frame_parts(a, name)


def _label_tuple(labels):
    """Labels as a tuple of str (None stays None)."""
    return None if labels is None else tuple(str(label) for label in labels)


def _check_label_counts(rows, cols, n, name):
    """Labels, when given, must name each of the N rows (columns)."""
    for labels, attribute, what in ((rows, "row_labels", "row"), (cols, "col_labels", "column")):
        if labels is not None and len(labels) != n:
            raise ValueError(
                f"`{name}.{attribute}` must hold one label per {what} of the {n} x {n} matrix; got "
                f"{len(labels)} labels. Pass {n} labels, or None."
            )


def _raise_complex(name):
    raise ValueError(
        f"`{name}` must be real; got complex entries. nullspec tests real matrices; if the imaginary "
        f"parts are all zero, pass `{name}.real`."
    )


def _check_object_entries(arr, name):
    """Entries of an object array must be real numbers (no strings, None or complex values)."""
    for index, value in np.ndenumerate(arr):
        if isinstance(value, numbers.Real):
            continue
        if isinstance(value, numbers.Complex):
            _raise_complex(name)
        raise TypeError(
            f"`{name}` must hold real numbers only; got {_shown(value)} at position {index}. "
            "Fill missing values and convert text to numbers before testing."
        )


def _as_real_array(a, name):
    """``a`` as a numeric ndarray (bool, int or float; not copied when it already is one)."""
    if a is None or isinstance(a, (str, bytes, dict, set, frozenset)):
        raise TypeError(
            f"`{name}` must be a 2-D array-like of numbers (ndarray, nested list or DataFrame); "
            f"got {_shown(a)}. Pass the matrix itself; read a file with nullspec.io.read_matrix."
        )
    if sparse.issparse(a):
        raise TypeError(
            f"`{name}` must be a dense array; got a scipy.sparse {type(a).__name__}. The eigenvalue "
            f"solver needs every entry: pass `{name}.toarray()`."
        )
    try:
        arr = np.asarray(a)
    except ValueError as exc:
        raise ValueError(
            f"`{name}` must be a rectangular array of numbers; got {_shown(a)}, which numpy cannot "
            f"turn into one ({exc}). Give every row the same length."
        ) from None
    return _numeric_dtype(arr, name)


def _numeric_dtype(arr, name):
    """Check the dtype of ``arr``: real numeric passes, complex is a ValueError, the rest TypeError."""
    kind = arr.dtype.kind
    if kind in _NUMERIC_KINDS:
        return arr
    if kind == "c":
        _raise_complex(name)
    if kind == "O":
        _check_object_entries(arr, name)
        return arr.astype(np.float64)
    raise TypeError(
        f"`{name}` must hold real numbers; got an array of dtype {arr.dtype} ({_REPR.repr(arr)}). "
        f"Convert it first, e.g. `np.asarray({name}, dtype=float)`."
    )


def _check_square_shape(arr, name, minimum):
    if arr.ndim != 2:
        raise ValueError(
            f"`{name}` must be a square 2-D array (N x N); got a {arr.ndim}-D array of shape {arr.shape}. "
            "Pass one matrix (reshape a flattened one with `.reshape(N, N)`; use nullspec.screen for "
            "several matrices)."
        )
    if arr.shape[0] != arr.shape[1]:
        raise ValueError(
            f"`{name}` must be square (N x N, rows and columns indexing the same units); got shape "
            f"{arr.shape}. Pass the square matrix, not a rectangular block of it."
        )
    if arr.shape[0] < minimum:
        raise ValueError(
            f"`{name}` must be at least {minimum} x {minimum}; got shape {arr.shape}. A spectrum of fewer "
            f"than {minimum} eigenvalues cannot be compared with noise; pass a larger matrix."
        )


def _check_finite(arr, name):
    bad = ~np.isfinite(arr)
    if bad.any():
        i, j = _first_position(bad)
        count = int(bad.sum())
        entries = "entry" if count == 1 else "entries"
        raise ValueError(
            f"`{name}` must contain finite numbers only; got {count} NaN or infinite {entries}, the "
            f"first ({arr[i, j].item()!r}) at row {i}, column {j}. Remove, impute or replace missing "
            "values before testing."
        )


def _check_not_constant(arr, name):
    if arr.min() == arr.max():
        raise ValueError(
            f"`{name}` must not be constant; every entry equals {arr.flat[0].item()!r}. A constant "
            "matrix has no fluctuations to compare with noise; check that the intended matrix was passed."
        )


def check_square_matrix(a, name="matrix", *, minimum=1):
    """Check that ``a`` is a finite, real, square 2-D array and return it as float64.

    The light check used on already-numeric matrices (no labels, no copy when ``a`` is already a
    float64 ndarray).  :func:`as_square_matrix` is the full check for user input.

    Parameters
    ----------
    a : array_like
        Candidate matrix.
    name : str, default="matrix"
        Argument name used in error messages.
    minimum : int, default=1
        Smallest allowed size N.

    Returns
    -------
    ndarray
        ``a`` as a float64 array of shape (N, N); not a copy when ``a`` is already float64.

    Raises
    ------
    TypeError
        If ``a`` is not an array-like of numbers.
    ValueError
        If ``a`` is complex, not 2-D, not square, smaller than ``minimum`` or not finite.

    Examples
    --------
    >>> from nullspec._validation import check_square_matrix
    >>> check_square_matrix([[1, 0], [0, 1]]).dtype
    dtype('float64')
    """
    arr = _as_real_array(a, name)
    _check_square_shape(arr, name, minimum)
    _check_finite(arr, name)
    return arr.astype(np.float64, copy=False)


def as_square_matrix(a, name="A"):
    """Validate a user's matrix and return a float64 copy with its row and column labels.

    Parameters
    ----------
    a : array_like, pandas.DataFrame, numpy.matrix or labelled matrix
        The matrix to test: real (bool and integer entries are converted to float), finite, square,
        at least 3 x 3 and not constant.  It is never modified.  A labelled matrix is any object with
        ``values``, ``row_labels`` and ``col_labels`` attributes, such as a
        :class:`nullspec.io.MatrixFile` (labels None or one per row / column).
    name : str, default="A"
        Argument name used in error messages.

    Returns
    -------
    matrix : ndarray
        A C-ordered float64 copy of shape (N, N).
    row_labels, col_labels : tuple of str or None
        The DataFrame's index and columns, or the labelled matrix's labels, as strings; None for other
        inputs.

    Raises
    ------
    TypeError
        If ``a`` is not an array-like of real numbers (e.g. a string, a dict, a sparse matrix, text
        columns in a DataFrame).
    ValueError
        If ``a`` is complex, ragged, not 2-D, not square, smaller than 3 x 3, contains NaN or
        infinite values, or is constant, or a labelled matrix has the wrong number of labels.

    Examples
    --------
    >>> from nullspec._validation import as_square_matrix
    >>> m, rows, cols = as_square_matrix([[1, 2, 0], [0, 1, 2], [2, 0, 1]])
    >>> m.dtype, m.shape, rows
    (dtype('float64'), (3, 3), None)
    >>> from types import SimpleNamespace
    >>> labelled = SimpleNamespace(values=m, row_labels=("a", "b", "c"), col_labels=None)
    >>> as_square_matrix(labelled)[1:]
    (('a', 'b', 'c'), None)
    """
    values, rows, cols = _labelled_parts(a, name)
    arr = check_square_matrix(values, name, minimum=MIN_SIZE)
    _check_label_counts(rows, cols, arr.shape[0], name)
    _check_not_constant(arr, name)
    return np.array(arr, dtype=np.float64, order="C", copy=True), rows, cols


def check_flattened_square_width(n_features, name="X"):
    """Return N for rows of ``n_features = N * N`` entries (one flattened square matrix per row).

    Parameters
    ----------
    n_features : int
        The number of columns of ``name``.
    name : str, default="X"
        Argument name used in the message.

    Returns
    -------
    int
        N, at least :data:`MIN_SIZE`.

    Raises
    ------
    ValueError
        If ``n_features`` is not a perfect square, or its root is below :data:`MIN_SIZE`.

    Examples
    --------
    >>> from nullspec._validation import check_flattened_square_width
    >>> check_flattened_square_width(16)
    4
    """
    n = math.isqrt(n_features)
    if n * n != n_features or n < MIN_SIZE:
        rule = "is not a perfect square" if n * n != n_features else f"gives N = {n} < {MIN_SIZE}"
        raise ValueError(
            f"`{name}` must hold one flattened N x N matrix per row, i.e. N * N columns with N >= {MIN_SIZE}; "
            f"got {n_features} column{'s' if n_features != 1 else ''}, which {rule}. Flatten each square matrix "
            f"row-major, e.g. `{name} = np.stack([A.ravel() for A in matrices])`; for one matrix use "
            "SignificantModes or spectral_test."
        )
    return n


def check_bool(value, name):
    """Return ``value`` as a Python bool if it is True or False (a numpy bool too).

    Parameters
    ----------
    value : bool
        The flag given.
    name : str
        Argument name used in the message.

    Returns
    -------
    bool

    Raises
    ------
    TypeError
        If ``value`` is not a bool (0, 1, "yes" and None are refused: they hide mistakes).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec._validation import check_bool
    >>> check_bool(np.True_, "sequential")
    True
    """
    if not isinstance(value, (bool, np.bool_)):
        raise TypeError(f"`{name}` must be True or False; got {_shown(value)}. Pass a bool.")
    return bool(value)


def check_null_name(value, allowed):
    """Return the name of a null hypothesis if it is one of ``allowed``.

    The caller accepts a null model object too and checks for it first; the message says so.

    Parameters
    ----------
    value : str
        The ``null`` given (not a null model object).
    allowed : tuple of str
        The valid names.

    Returns
    -------
    str
        ``value`` unchanged.

    Raises
    ------
    TypeError
        If ``value`` is not a string.
    ValueError
        If ``value`` is a string not in ``allowed``.

    Examples
    --------
    >>> from nullspec._validation import check_null_name
    >>> check_null_name("gaussian", ("auto", "gaussian"))
    'gaussian'
    """
    choices = ", ".join(repr(a) for a in allowed)
    model = "a null model object (a nullspec.nulls.NullModel, e.g. nullspec.nulls.Permutation('rows'))"
    if not isinstance(value, str):
        raise TypeError(f"`null` must be one of the strings {choices} or {model}; got {_shown(value)}. "
                        "Pass one of those.")
    if value not in allowed:
        raise ValueError(f"`null` must be one of {choices}; got {value!r}. Pick one of those strings, or pass "
                         f"{model}.")
    return value


def _real_scalar(value, name, rule):
    """``value`` as a Python float if it is a real number (not bool), else TypeError citing ``rule``."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise TypeError(f"`{name}` must be {rule}; got {_shown(value)}. Pass a plain number.")
    return float(value)


def check_option(value, name, allowed):
    """Return ``value`` if it is one of the strings ``allowed``.

    Parameters
    ----------
    value : object
        The option given.
    name : str
        Argument name used in the message.
    allowed : tuple of str
        The valid choices.

    Returns
    -------
    str
        ``value`` unchanged.

    Raises
    ------
    TypeError
        If ``value`` is not a string.
    ValueError
        If ``value`` is a string not in ``allowed``.

    Examples
    --------
    >>> from nullspec._validation import check_option
    >>> check_option("mad", "scale", ("sd", "mad"))
    'mad'
    """
    if not isinstance(value, str):
        choices = ", ".join(repr(a) for a in allowed)
        raise TypeError(f"`{name}` must be one of the strings {choices}; got {_shown(value)}. Pass one of those.")
    return _checks.check_option(value, name, allowed)


def check_option_or_real(value, name, allowed, *, positive=False):
    """Return one of the strings ``allowed``, or a finite real number (> 0 when ``positive``) as float.

    Parameters
    ----------
    value : str or real
        The option or number given.
    name : str
        Argument name used in the message.
    allowed : tuple of str
        The valid string choices.
    positive : bool, default=False
        Whether a number must be > 0.

    Returns
    -------
    str or float
        The string unchanged, or the number as a Python float.

    Raises
    ------
    TypeError
        If ``value`` is neither a string nor a real number (bool counts as neither).
    ValueError
        If a string is not in ``allowed``, or a number is not finite (or not > 0 when ``positive``).

    Examples
    --------
    >>> from nullspec._validation import check_option_or_real
    >>> check_option_or_real(2, "scale", ("sd", "mad"), positive=True)
    2.0
    """
    if isinstance(value, str):
        return check_option(value, name, allowed)
    choices = ", ".join(repr(a) for a in allowed)
    number = "a finite number > 0" if positive else "a finite real number"
    x = _real_scalar(value, name, f"one of {choices} or {number}")
    if not np.isfinite(x) or (positive and x <= 0):
        raise ValueError(f"`{name}` must be one of {choices} or {number}; got {value!r}. Pass {number} or a string.")
    return x


def check_names(names, name, allowed):
    """Return ``names`` as a non-empty tuple of strings, each one of ``allowed``.

    Parameters
    ----------
    names : sequence of str
        Names given (a bare string is refused: wrap a single name in a tuple).
    name : str
        Argument name used in the message.
    allowed : tuple of str
        The valid names.

    Returns
    -------
    tuple of str
        The names in the order given.

    Raises
    ------
    TypeError
        If ``names`` is a string or not iterable, or an element is not a string.
    ValueError
        If ``names`` is empty or an element is not in ``allowed``.

    Examples
    --------
    >>> from nullspec._validation import check_names
    >>> check_names(["edge"], "statistics", ("real_count", "radial", "edge"))
    ('edge',)
    """
    if isinstance(names, str) or not isinstance(names, collections.abc.Iterable):
        raise TypeError(
            f"`{name}` must be a sequence of names such as {allowed!r}; got {_shown(names)}. "
            "Wrap a single name in a tuple, e.g. ('edge',)."
        )
    names = tuple(names)
    if not names:
        raise ValueError(f"`{name}` must name at least one of {allowed!r}; got an empty sequence. Pass one or more.")
    return tuple(check_option(n, name, allowed) for n in names)


def check_probability(p, name):
    """Return ``p`` as a float strictly between 0 and 1.

    Parameters
    ----------
    p : real
        A probability such as a significance level or a confidence level.
    name : str
        Argument name used in the message.

    Returns
    -------
    float
        ``p`` as a Python float.

    Raises
    ------
    TypeError
        If ``p`` is not a real number (bool counts as not).
    ValueError
        If ``p`` is NaN or outside the open interval (0, 1).

    Examples
    --------
    >>> from nullspec._validation import check_probability
    >>> check_probability(0.05, "alpha")
    0.05
    """
    x = _real_scalar(p, name, "a probability strictly between 0 and 1")
    return float(_checks.check_probability(x, name))


def check_positive_int(n, name, minimum=1):
    """Return ``n`` as a Python int >= ``minimum``.

    Integral floats such as ``1e3`` are accepted; bool and non-integral floats are not.

    Parameters
    ----------
    n : int
        The count given.
    name : str
        Argument name used in the message.
    minimum : int, default=1
        Smallest allowed value.

    Returns
    -------
    int
        ``n`` as a Python int.

    Raises
    ------
    TypeError
        If ``n`` is not a real number, or is a bool.
    ValueError
        If ``n`` is not a whole number or is below ``minimum``.

    Examples
    --------
    >>> from nullspec._validation import check_positive_int
    >>> check_positive_int(1e3, "n_resamples")
    1000
    """
    rule = f"an integer >= {minimum}"
    if isinstance(n, numbers.Integral) and not isinstance(n, bool):
        value = int(n)
    else:
        x = _real_scalar(n, name, rule)
        if not x.is_integer():
            raise ValueError(f"`{name}` must be {rule}; got {n!r}, which is not a whole number. Pass a whole number.")
        value = int(x)
    if value < minimum:
        raise ValueError(f"`{name}` must be {rule}; got {n!r}. Pass a whole number >= {minimum}.")
    return value


def check_positive_real(x, name):
    """Return ``x`` as a finite float > 0.

    Parameters
    ----------
    x : real
        The value given.
    name : str
        Argument name used in the message.

    Returns
    -------
    float
        ``x`` as a Python float.

    Raises
    ------
    TypeError
        If ``x`` is not a real number (bool counts as not).
    ValueError
        If ``x`` is NaN, infinite, zero or negative.

    Examples
    --------
    >>> from nullspec._validation import check_positive_real
    >>> check_positive_real(2, "scale")
    2.0
    """
    value = _real_scalar(x, name, "a finite number > 0")
    if not (np.isfinite(value) and value > 0):
        raise ValueError(f"`{name}` must be a finite number > 0; got {x!r}. Pass a positive value.")
    return value


def check_alternative(value, name="alternative", *, allow_none=False):
    """Return the alternative hypothesis: 'two-sided', 'greater' or 'less' (or None if allowed).

    Parameters
    ----------
    value : str or None
        The alternative given.
    name : str, default="alternative"
        Argument name used in the message.
    allow_none : bool, default=False
        Whether None (meaning: each statistic's own default) is accepted.

    Returns
    -------
    str or None
        ``value`` unchanged.

    Raises
    ------
    TypeError
        If ``value`` is not a string (nor an allowed None).
    ValueError
        If ``value`` is not one of the three alternatives.

    Examples
    --------
    >>> from nullspec._validation import check_alternative
    >>> check_alternative("greater")
    'greater'
    """
    if value is None and allow_none:
        return None
    return check_option(value, name, ALTERNATIVES)


def check_scale_estimate(sigma, scale):
    """Return the estimated entry scale if it is finite and > 0, else explain why it is not.

    Parameters
    ----------
    sigma : float
        The estimate.
    scale : str
        The ``scale`` option that produced it ('sd' or 'mad').

    Returns
    -------
    float
        ``sigma`` as a Python float.

    Raises
    ------
    ValueError
        If ``sigma`` is zero, negative or not finite.

    Examples
    --------
    >>> from nullspec._validation import check_scale_estimate
    >>> check_scale_estimate(0.5, "sd")
    0.5
    """
    sigma = float(sigma)
    if np.isfinite(sigma) and sigma > 0:
        return sigma
    if not np.isfinite(sigma):
        fix = (
            "The entries are too large to square in float64: rescale the matrix (e.g. divide it by its "
            "largest absolute entry)."
        )
    elif scale == "mad":
        fix = (
            "At least half of the entries equal their median (sparse or discrete data?): use scale='sd' "
            "or pass a known scale (a number > 0)."
        )
    else:
        fix = (
            "The entries used to estimate it (the off-diagonal ones when diagonal='shift') are all equal: "
            "check the matrix, or pass a known scale (a number > 0)."
        )
    raise ValueError(f"`scale={scale!r}` gave an entry scale of {sigma!r}; it must be finite and > 0. {fix}")


def check_eigen_residual(residual, tolerance, value, name="eigenvalues"):
    """Refuse a requested value that is not an eigenvalue of the matrix (its residual is too large).

    Parameters
    ----------
    residual : float
        Smallest ``||M v - value v||`` found over unit vectors ``v``.
    tolerance : float
        Largest residual accepted.
    value : complex
        The requested eigenvalue.
    name : str, default="eigenvalues"
        Argument name used in the message.

    Raises
    ------
    ValueError
        If ``residual > tolerance``.

    Examples
    --------
    >>> from nullspec._validation import check_eigen_residual
    >>> check_eigen_residual(1e-15, 1e-8, 2.0)
    """
    if residual > tolerance:
        raise ValueError(
            f"`{name}` must hold eigenvalues of `matrix`; got {complex(value)!r}, whose residual "
            f"|M v - value v| = {residual:.3g} exceeds {tolerance:.3g}. Pass values taken from "
            "compute_spectrum(matrix).eigenvalues."
        )
