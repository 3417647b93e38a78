"""Argument checks for the exact real Ginibre formulas.

The ``ginibre`` layer sits below :mod:`nullspec._validation` in the import order, so it keeps its own
small checkers here.  Each message names the argument, states the rule, shows the value received and
says how to fix it, in the same style as the user-facing messages of ``nullspec._validation``.
"""

import numbers
import reprlib

import numpy as np

# Far beyond any matrix that can be stored (10**18 entries); the radial grid for it is still cheap.
MAX_SIZE = 10**9

__all__ = ["MAX_SIZE", "check_size", "check_real", "check_complex", "check_radius", "check_probability", "check_option"]


def _first_bad(values, good):
    """The first entry of ``values`` where the boolean array ``good`` is False, as a Python scalar."""
    return values[~good].flat[0].item()


def _as_numbers(x, name, dtype):
    """``x`` as an array of ``dtype``, or ValueError if its entries are not numbers."""
    try:
        return np.asarray(x).astype(dtype)
    except (TypeError, ValueError):
        raise ValueError(
            f"`{name}` must hold numbers; got {reprlib.repr(x)}. Pass a number or an array of numbers."
        ) from None


def check_size(n):
    """Return the matrix size ``n`` as a Python int, or raise ValueError.

    Parameters
    ----------
    n : int
        Matrix size; must be a whole number from 1 to ``MAX_SIZE`` (Python or numpy integer, not bool
        or float).

    Returns
    -------
    int
        ``n`` unchanged, as a Python int (hashable, so it can key a cache).

    Raises
    ------
    ValueError
        If ``n`` is not an integer, or is smaller than 1 or larger than ``MAX_SIZE``.

    Examples
    --------
    >>> from nullspec.ginibre._checks import check_size
    >>> check_size(10)
    10
    """
    if isinstance(n, bool) or not isinstance(n, numbers.Integral) or n < 1:
        raise ValueError(f"`n` must be an integer >= 1 (the matrix size); got {n!r}. Pass a positive whole number.")
    if n > MAX_SIZE:
        raise ValueError(
            f"`n` must be at most {MAX_SIZE:.0e} (the largest matrix size the formulas are evaluated for); "
            f"got {n!r}. Pass a realistic matrix size."
        )
    return int(n)


def check_real(x, name):
    """Return ``x`` as a float array of finite reals, or raise ValueError.

    Parameters
    ----------
    x : array_like
        Real values (any sign).
    name : str
        Argument name used in the message.

    Returns
    -------
    ndarray
        ``x`` as float64.

    Raises
    ------
    ValueError
        If an entry is not a number, or is complex, NaN or infinite.

    Examples
    --------
    >>> from nullspec.ginibre._checks import check_real
    >>> check_real([0, 1.5], "x").tolist()
    [0.0, 1.5]
    """
    if np.iscomplexobj(x):
        raise ValueError(f"`{name}` must be real; got a complex array. Pass the real parts, e.g. `{name}.real`.")
    arr = _as_numbers(x, name, float)
    good = np.isfinite(arr)
    if not good.all():
        raise ValueError(f"`{name}` must be finite; got {_first_bad(arr, good)!r}. Remove NaN and infinite values.")
    return arr


def check_complex(z, name):
    """Return ``z`` as a complex array of finite values, or raise ValueError.

    Parameters
    ----------
    z : array_like
        Real or complex values.
    name : str
        Argument name used in the message.

    Returns
    -------
    ndarray
        ``z`` as complex128.

    Raises
    ------
    ValueError
        If an entry is not a number, or a real or imaginary part is NaN or infinite.

    Examples
    --------
    >>> from nullspec.ginibre._checks import check_complex
    >>> check_complex(1j, "z").item()
    1j
    """
    arr = _as_numbers(z, name, complex)
    good = np.isfinite(arr)
    if not good.all():
        raise ValueError(f"`{name}` must be finite; got {_first_bad(arr, good)!r}. Remove NaN and infinite values.")
    return arr


def check_radius(r, name):
    """Return ``r`` as a float array of finite, non-negative radii, or raise ValueError.

    Parameters
    ----------
    r : array_like
        Radii (moduli of complex numbers).
    name : str
        Argument name used in the message.

    Returns
    -------
    ndarray
        ``r`` as float64.

    Raises
    ------
    ValueError
        If an entry is complex, NaN, infinite or negative.

    Examples
    --------
    >>> from nullspec.ginibre._checks import check_radius
    >>> check_radius(2, "r").item()
    2.0
    """
    arr = check_real(r, name)
    good = arr >= 0
    if not good.all():
        raise ValueError(
            f"`{name}` must be >= 0 (a modulus); got {_first_bad(arr, good)!r}. Pass absolute values, e.g. `abs(z)`."
        )
    return arr


def check_probability(p, name):
    """Return ``p`` as a float array of probabilities strictly between 0 and 1, or raise ValueError.

    Parameters
    ----------
    p : array_like
        Tail probabilities.
    name : str
        Argument name used in the message.

    Returns
    -------
    ndarray
        ``p`` as float64.

    Raises
    ------
    ValueError
        If an entry is NaN or outside the open interval (0, 1).

    Examples
    --------
    >>> from nullspec.ginibre._checks import check_probability
    >>> check_probability([0.05, 0.5], "p").tolist()
    [0.05, 0.5]
    """
    arr = check_real(p, name)
    good = (arr > 0) & (arr < 1)
    if not good.all():
        raise ValueError(
            f"`{name}` must lie strictly between 0 and 1; got {_first_bad(arr, good)!r}. "
            "Pass a tail probability such as 0.05."
        )
    return arr


def check_option(value, name, allowed):
    """Return ``value`` if it is one of ``allowed``, or raise ValueError listing the valid choices.

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
    ValueError
        If ``value`` is not in ``allowed``.

    Examples
    --------
    >>> from nullspec.ginibre._checks import check_option
    >>> check_option("real", "part", ("all", "real"))
    'real'
    """
    if not isinstance(value, str) or value not in allowed:
        choices = ", ".join(repr(a) for a in allowed)
        raise ValueError(f"`{name}` must be one of {choices}; got {value!r}. Pick one of those strings.")
    return value
