"""Eigenvalues only, through LAPACK called without the GIL.

``numpy.linalg.eigvals`` and scipy's ``dgeev`` wrapper hold the GIL while LAPACK runs, so Python
threads computing eigenvalues do not run in parallel. ``scipy.linalg.cython_lapack`` exports the raw
LAPACK routines as PyCapsules (``__pyx_capi__``); calling those function pointers through
:mod:`ctypes` (``CFUNCTYPE`` foreign functions release the GIL for the duration of the call) lets
two threads solve two matrices at once. This module wraps two routines:

- ``dgeev`` (jobvl = jobvr = 'N'): eigenvalues of a dense real square matrix;
- ``dhseqr`` (job = 'E', compz = 'N'): eigenvalues of an upper Hessenberg matrix, skipping the
  O(N³) Householder reduction that ``dgeev`` would redo (THEORY.md §9).

When the capsules cannot be reached (an unusual scipy build), both functions fall back to
:func:`scipy.linalg.eigvals`, which gives the same eigenvalues with the GIL held.

LAPACK stores a real eigenvalue with an imaginary part of exactly 0.0 (its 1×1 Schur blocks), so
``eigenvalues.imag == 0`` reads LAPACK's own real/complex decision.
"""

import ctypes
import functools

import numpy as np
import scipy.linalg

__all__ = ["eigvals", "hessenberg_eigvals"]

_INT_P = ctypes.POINTER(ctypes.c_int)
_CHAR_P = ctypes.c_char_p
_PTR = ctypes.c_void_p
# void dgeev(jobvl, jobvr, n, a, lda, wr, wi, vl, ldvl, vr, ldvr, work, lwork, info)
_DGEEV_TYPE = ctypes.CFUNCTYPE(
    None, _CHAR_P, _CHAR_P, _INT_P, _PTR, _INT_P, _PTR, _PTR, _PTR, _INT_P, _PTR, _INT_P, _PTR,
    _INT_P, _INT_P,
)
# void dhseqr(job, compz, n, ilo, ihi, h, ldh, wr, wi, z, ldz, work, lwork, info)
_DHSEQR_TYPE = ctypes.CFUNCTYPE(
    None, _CHAR_P, _CHAR_P, _INT_P, _INT_P, _INT_P, _PTR, _INT_P, _PTR, _PTR, _PTR, _INT_P, _PTR,
    _INT_P, _INT_P,
)
# Own prototypes of the two C-API calls, so the shared ctypes.pythonapi objects stay untouched.
_capsule_name = ctypes.PYFUNCTYPE(ctypes.c_char_p, ctypes.py_object)(
    ("PyCapsule_GetName", ctypes.pythonapi)
)
_capsule_pointer = ctypes.PYFUNCTYPE(ctypes.c_void_p, ctypes.py_object, ctypes.c_char_p)(
    ("PyCapsule_GetPointer", ctypes.pythonapi)
)


@functools.cache
def _routine(name):
    """Foreign function for LAPACK routine `name`, or None if the capsule is unavailable."""
    try:
        from scipy.linalg import cython_lapack

        capsule = cython_lapack.__pyx_capi__[name]
        address = _capsule_pointer(capsule, _capsule_name(capsule))
    except (ImportError, AttributeError, KeyError, ValueError):
        return None
    prototype = {"dgeev": _DGEEV_TYPE, "dhseqr": _DHSEQR_TYPE}[name]
    return prototype(address)


def _int(value):
    return ctypes.byref(ctypes.c_int(value))


def _check_info(info, routine):
    """Turn LAPACK's `info` code into an exception (0 means success)."""
    if info < 0:
        raise RuntimeError(
            f"LAPACK {routine} rejected its argument number {-info} as illegal; this is a bug "
            "in nullspec._lapack, please report it."
        )
    if info > 0:
        raise np.linalg.LinAlgError(
            f"LAPACK {routine}: the QR algorithm failed to converge ({info} eigenvalues not "
            "computed). Check the matrix for extreme or badly scaled entries."
        )


def _check_square(a, name):
    """Validate a float64-convertible square finite matrix argument (internal callers)."""
    if a.ndim != 2 or a.shape[0] != a.shape[1]:
        raise ValueError(f"`{name}` must be a square 2-D array; got shape {a.shape}.")
    if not np.isfinite(a).all():
        raise ValueError(f"`{name}` must contain only finite values; got NaN or infinity.")


def _dgeev_call(a, work, lwork):
    """One raw dgeev call (eigenvalues only) on the column-major buffer of `a`."""
    n = a.shape[0]
    wr, wi, info = np.empty(n), np.empty(n), ctypes.c_int(0)
    _routine("dgeev")(
        b"N", b"N", _int(n), a.ctypes.data, _int(max(n, 1)), wr.ctypes.data, wi.ctypes.data,
        None, _int(1), None, _int(1), work.ctypes.data, _int(lwork), ctypes.byref(info),
    )
    return wr, wi, info.value


def _dhseqr_call(h, work, lwork):
    """One raw dhseqr call (job='E', compz='N') on the column-major Hessenberg `h`."""
    n = h.shape[0]
    wr, wi, info = np.empty(n), np.empty(n), ctypes.c_int(0)
    _routine("dhseqr")(
        b"E", b"N", _int(n), _int(1), _int(n), h.ctypes.data, _int(max(n, 1)), wr.ctypes.data,
        wi.ctypes.data, None, _int(1), work.ctypes.data, _int(lwork), ctypes.byref(info),
    )
    return wr, wi, info.value


_CALLS = {"dgeev": _dgeev_call, "dhseqr": _dhseqr_call}


@functools.lru_cache(maxsize=64)
def _optimal_lwork(routine, n):
    """Optimal workspace length for `routine` at size `n` (LAPACK query with ``lwork = -1``)."""
    query = np.empty(1)
    *_, info = _CALLS[routine](np.zeros((n, n), order="F"), query, -1)
    _check_info(info, f"{routine} workspace query")
    return max(int(query[0]), 1)


def _solve(routine, buffer):
    """Eigenvalues of `buffer` (overwritten) by `routine`, as complex128."""
    lwork = _optimal_lwork(routine, buffer.shape[0])
    wr, wi, info = _CALLS[routine](buffer, np.empty(lwork), lwork)
    _check_info(info, routine)
    return wr + 1j * wi


def _writable_buffer(a, order, overwrite):
    """`a` itself when it may be overwritten in place in `order`, else a float64 copy."""
    contiguous = a.flags.c_contiguous if order == "C" else a.flags.f_contiguous
    if overwrite and a.dtype == np.float64 and contiguous and a.flags.writeable:
        return a
    return np.array(a, dtype=np.float64, order=order)


def eigvals(a, overwrite_a=False):
    """Eigenvalues of a real square matrix (LAPACK ``dgeev``, GIL released).

    Parameters
    ----------
    a : array_like, shape (n, n)
        Real, finite square matrix.
    overwrite_a : bool, default=False
        Allow the computation to destroy `a` when it is a writeable C-contiguous float64 array
        (no copy is made then); otherwise `a` is copied and left untouched.

    Returns
    -------
    ndarray of complex128, shape (n,)
        The eigenvalues, in LAPACK's order; real eigenvalues have an imaginary part of exactly 0.

    Raises
    ------
    ValueError
        If `a` is not square or holds NaN or infinity.
    numpy.linalg.LinAlgError
        If the QR algorithm fails to converge.

    Notes
    -----
    The matrix is always handed to LAPACK as a C-ordered buffer, which LAPACK reads as Aᵀ in
    column-major order; since eig(Aᵀ) = eig(A), no transposing copy is needed, and the result
    does not depend on the memory layout of the input. The eigenvalues agree with
    :func:`numpy.linalg.eigvals` to rounding (ordering may differ).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec._lapack import eigvals
    >>> ev = eigvals(np.array([[0.0, 1.0], [-1.0, 0.0]]))
    >>> sorted(ev.imag.round(6).tolist())
    [-1.0, 1.0]
    """
    a = np.asarray(a)
    _check_square(a, "a")
    if _routine("dgeev") is None:
        return scipy.linalg.eigvals(a, check_finite=False).astype(np.complex128)
    if a.shape[0] == 0:
        return np.empty(0, dtype=np.complex128)
    return _solve("dgeev", _writable_buffer(a, "C", overwrite_a))


def hessenberg_eigvals(h, overwrite=False):
    """Eigenvalues of a real upper Hessenberg matrix (LAPACK ``dhseqr``, GIL released).

    Parameters
    ----------
    h : array_like, shape (n, n)
        Real, finite upper Hessenberg matrix (``h[i, j] == 0`` for ``i > j + 1``; entries below
        the first subdiagonal are not read).
    overwrite : bool, default=False
        Allow the computation to destroy `h` when it is a writeable Fortran-contiguous float64
        array (no copy then); otherwise `h` is copied and left untouched.

    Returns
    -------
    ndarray of complex128, shape (n,)
        The eigenvalues; real eigenvalues have an imaginary part of exactly 0.

    Raises
    ------
    ValueError
        If `h` is not square or holds NaN or infinity.
    numpy.linalg.LinAlgError
        If the QR algorithm fails to converge.

    Notes
    -----
    ``dgeev`` would first reduce its input to Hessenberg form (O(N³)) even when it already is one;
    ``dhseqr`` starts from the Hessenberg form. LAPACK needs the matrix in column-major order, so a
    C-ordered `h` is copied. Without the LAPACK capsules this falls back to
    :func:`scipy.linalg.eigvals` on the dense matrix (same eigenvalues, slower).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec._lapack import hessenberg_eigvals
    >>> h = np.array([[1.0, 2.0, 0.5], [3.0, 1.0, 1.0], [0.0, 0.0, 4.0]])
    >>> sorted(hessenberg_eigvals(h).real.round(6).tolist())
    [-1.44949, 3.44949, 4.0]
    """
    h = np.asarray(h)
    _check_square(h, "h")
    if _routine("dhseqr") is None:
        return scipy.linalg.eigvals(np.triu(h, -1), check_finite=False).astype(np.complex128)
    if h.shape[0] == 0:
        return np.empty(0, dtype=np.complex128)
    return _solve("dhseqr", _writable_buffer(h, "F", overwrite))
