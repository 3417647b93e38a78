"""The spectrum of a standardised matrix: eigenvalues computed once, the exact real mask, eigenvectors.

Eigenvalues come from LAPACK's ``dgeev`` (real Schur form, eigenvalues only) through
:func:`nullspec._lapack.eigvals`, the one eigenvalue routine used for the data and for every drawn
surrogate alike.  An eigenvalue is real when its imaginary part is exactly 0.0, with no tolerance:
real eigenvalues are the 1 x 1 blocks of the real Schur form, which LAPACK stores with an imaginary
part of exactly zero, while a complex pair has ``|Im| = sqrt(|b c|) > 0`` from its 2 x 2 block
(THEORY.md §1).  Applying the same rule to the data and to the surrogates keeps a drawn null valid
even where the rule itself is fragile (discrete entries, THEORY.md §8).

Eigenvectors are needed only for the few outliers, so :func:`outlier_vectors` computes them one
eigenvalue at a time by inverse iteration with one LU factorisation of ``M - lambda I`` (about
``2/3 N^3`` flops each, against ``~25 N^3`` for a full eigen-decomposition with vectors).
"""

from dataclasses import dataclass

import numpy as np
from scipy.linalg import get_lapack_funcs

from ._lapack import eigvals
from ._validation import check_eigen_residual, check_square_matrix
from .ginibre._checks import check_complex

__all__ = ["Spectrum", "compute_spectrum", "outlier_vectors"]

_EPS = np.finfo(np.float64).eps
# Inverse-iteration steps before falling back to an SVD; one step suffices for a simple eigenvalue.
_MAX_STEPS = 3
# Irrational step of the deterministic start vector (its entries are not aligned with any structure).
_GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0


@dataclass(frozen=True, slots=True)
class Spectrum:
    """Eigenvalues of a standardised N x N matrix and their scaled values.

    Attributes
    ----------
    eigenvalues : ndarray of complex128, shape (N,)
        Eigenvalues of the standardised matrix, in LAPACK's order (read-only).
    z : ndarray of complex128, shape (N,)
        Scaled eigenvalues ``eigenvalues / sqrt(N)``; the null's bulk fills the unit disk.
    is_real : ndarray of bool, shape (N,)
        ``eigenvalues.imag == 0`` exactly (LAPACK's 1 x 1 Schur blocks).
    n : int
        Matrix size N.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> spec = compute_spectrum(np.diag([2.0, -1.0, 0.5, 3.0]))
    >>> spec.real_count, float(spec.moduli.max())
    (4, 1.5)
    """

    eigenvalues: np.ndarray
    z: np.ndarray
    is_real: np.ndarray
    n: int

    @property
    def moduli(self):
        """ndarray of float: ``|z|``, the scaled moduli."""
        return np.abs(self.z)

    @property
    def real_count(self):
        """int: the number of real eigenvalues."""
        return int(np.count_nonzero(self.is_real))


def _read_only(a):
    a.flags.writeable = False
    return a


def compute_spectrum(matrix):
    """Eigenvalues of a (standardised) real square matrix, once, with the exact real mask.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        Real, finite, square matrix, usually ``standardize(A).matrix``; never modified.

    Returns
    -------
    Spectrum
        The eigenvalues, ``z = eigenvalues / sqrt(N)``, the real mask and N.

    Raises
    ------
    TypeError, ValueError
        If ``matrix`` is not a real, finite, square 2-D array.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> rotation = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 2.0]])
    >>> spec = compute_spectrum(rotation)
    >>> spec.real_count, spec.n
    (1, 3)
    """
    m = check_square_matrix(matrix, "matrix")
    n = m.shape[0]
    # complex128 even when every eigenvalue is real (numpy's eigvals would return float64 then).
    w = eigvals(m)
    return Spectrum(_read_only(w), _read_only(w / np.sqrt(n)), _read_only(w.imag == 0), n)


def _start_vector(n):
    """A fixed, irregular start vector (deterministic; generically not orthogonal to any eigenvector)."""
    v = 1.0 + (np.arange(1, n + 1) * _GOLDEN) % 1.0
    return v / np.linalg.norm(v)


def _unit_phase(v):
    """``v / |v|`` with its largest entry made real and positive (a reproducible phase)."""
    v = v / np.linalg.norm(v)
    k = np.argmax(np.abs(v))
    v = v * (np.abs(v[k]) / v[k])
    v[k] = np.abs(v[k])  # exactly real: the product leaves rounding in the imaginary part
    return v


def _factor(shifted, floor):
    """LU factors of ``shifted`` with exactly-zero pivots replaced by ``floor`` (as LAPACK's dlaein does)."""
    getrf, getrs = get_lapack_funcs(("getrf", "getrs"), (shifted,))
    lu, piv, _ = getrf(shifted)
    diag = np.diagonal(lu).copy()
    diag[diag == 0] = floor
    np.fill_diagonal(lu, diag)
    return lu, piv, getrs


def _iterate(solve, residual, start, good):
    """Inverse iteration from ``start``: returns ``(vector, residual)`` after at most ``_MAX_STEPS``."""
    v, r = start, np.inf
    for _ in range(_MAX_STEPS):
        x = solve(v)
        if not np.all(np.isfinite(x)):
            break
        v = x / np.linalg.norm(x)
        r = residual(v)
        if r <= good:
            break
    return v, r


def _svd_pair(shifted):
    """Right and transposed-left null vectors of ``shifted`` from its SVD (the robust fallback)."""
    u, _, vh = np.linalg.svd(shifted)
    return vh[-1].conj(), u[:, -1].conj()


def _eigenpair(m, value, norm):
    """Unit right and left eigenvectors of ``m`` for the eigenvalue ``value``."""
    n = m.shape[0]
    lam = value.real if value.imag == 0 else value
    shifted = m - lam * np.eye(n)
    lu, piv, getrs = _factor(shifted, _EPS * norm)
    good = 10.0 * n * _EPS * norm

    def right_residual(v):
        return np.linalg.norm(m @ v - lam * v)

    def left_residual(u):
        return np.linalg.norm(m.T @ u - lam * u)

    start = _start_vector(n)
    right, r_right = _iterate(lambda b: getrs(lu, piv, b, trans=0)[0], right_residual, start, good)
    left, r_left = _iterate(lambda b: getrs(lu, piv, b, trans=1)[0], left_residual, start, good)
    if max(r_right, r_left) > good:
        right, left = _svd_pair(shifted)
        r_right, r_left = right_residual(right), left_residual(left)
    check_eigen_residual(max(r_right, r_left), np.sqrt(_EPS) * norm, value)
    return _unit_phase(right), _unit_phase(left)


def outlier_vectors(matrix, eigenvalues):
    """Right and left eigenvectors of ``matrix`` for a few of its eigenvalues only.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        Real, finite, square matrix (the one whose spectrum gave ``eigenvalues``).
    eigenvalues : array_like of complex, shape (k,)
        Eigenvalues of ``matrix`` as computed (e.g. entries of ``compute_spectrum(matrix).eigenvalues``).

    Returns
    -------
    right, left : ndarray of complex128, shape (N, k)
        Column ``j`` holds unit vectors ``v`` and ``u`` with ``M v = lambda_j v`` and
        ``u^T M = lambda_j u^T`` (transpose, not conjugate transpose: ``u`` is the right eigenvector
        of ``M^T``; scipy's ``eig(left=True)`` returns ``conj(u)``).  The largest entry of each vector
        is real and positive; vectors of real eigenvalues are real.

    Raises
    ------
    TypeError, ValueError
        If ``matrix`` is not a real, finite, square array, an eigenvalue is not finite, or a value
        is not an eigenvalue of ``matrix`` (residual above ``sqrt(eps) * ||M||_F``).

    Notes
    -----
    Each eigenvalue costs one LU factorisation of ``M - lambda I`` and up to three inverse-iteration
    solves for each side (one suffices for a simple eigenvalue, because ``M - lambda I`` is singular
    to working precision); an SVD of ``M - lambda I`` is the fallback if the residual does not drop
    to ``10 N eps ||M||_F``.  A full ``scipy.linalg.eig`` becomes cheaper only for dozens of values.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import outlier_vectors
    >>> m = np.array([[2.0, 1.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, -1.0]])
    >>> right, left = outlier_vectors(m, [2.0])
    >>> np.round(right[:, 0].real, 6).tolist(), np.round(left[:, 0].real, 4).tolist()
    ([1.0, 0.0, 0.0], [0.7071, 0.7071, 0.0])
    """
    m = check_square_matrix(matrix, "matrix")
    values = np.ravel(check_complex(eigenvalues, "eigenvalues"))
    norm = max(np.linalg.norm(m), np.finfo(np.float64).tiny)
    pairs = [_eigenpair(m, value, norm) for value in values]
    n = m.shape[0]
    right = np.empty((n, values.size), dtype=np.complex128)
    left = np.empty((n, values.size), dtype=np.complex128)
    for j, (v, u) in enumerate(pairs):
        right[:, j], left[:, j] = v, u
    return right, left
