"""Centring, scaling and the diagonal policy that put a matrix in the units of the real Ginibre null.

The null compares the spectrum with that of an N x N matrix of i.i.d. entries of mean 0 and
variance 1, whose bulk fills the disk of radius sqrt(N).  :func:`standardize` maps the data there:

- **centring** subtracts a constant ``c`` from every entry, i.e. removes the rank-one matrix
  ``c * 1 1^T``.  This is *not* a spectral shift: the eigenvalues of ``A - c 1 1^T`` are not those of
  ``A`` minus ``c``.  A common mean ``mu`` of i.i.d. entries puts one outlier near ``mu * N``; centring
  removes it and leaves the rest of the spectrum nearly unchanged;
- **scaling** divides by an estimate ``sigma`` of the entry standard deviation;
- **the diagonal policy** says whether the diagonal is an entry like any other (``"include"``), or
  whether its mean is a spectral shift of the whole spectrum (``"shift"``): the diagonal's mean is
  then subtracted as a multiple of the identity, which moves every eigenvalue by the same amount,
  and the centre and the scale are estimated from the off-diagonal entries only.

With ``M`` the returned matrix, the eigenvalues of ``M / sqrt(N)`` are the scaled eigenvalues
``z = (lambda - shift) / (sigma sqrt(N))``, where ``lambda`` runs over the eigenvalues of the centred
matrix ``A - c 1 1^T``.
"""

from dataclasses import dataclass

import numpy as np
import scipy.linalg
from scipy import stats

from ._validation import as_square_matrix, check_option, check_option_or_real, check_scale_estimate

__all__ = ["CENTERS", "SCALES", "DIAGONALS", "Standardized", "standardize"]

CENTERS = ("mean", "none")
SCALES = ("sd", "mad")
DIAGONALS = ("include", "shift")


@dataclass(frozen=True, slots=True)
class Standardized:
    """A matrix in the units of the null, and what was done to get it there.

    Attributes
    ----------
    matrix : ndarray
        The standardised N x N float64 matrix ``M`` (read-only).  Its eigenvalues divided by
        ``sqrt(N)`` are the scaled eigenvalues ``z``.
    center : float
        The constant ``c`` subtracted from every entry (0.0 for ``center="none"``).
    scale : float
        The entry scale ``sigma`` the centred entries were divided by.
    shift : float
        The spectral shift removed from the diagonal of the centred matrix, in the data's units:
        the mean of ``A_ii - c`` for ``diagonal="shift"``, 0.0 for ``"include"``.
    policy : dict
        The three choices, ``{"center": ..., "scale": ..., "diagonal": ...}``, each a string or the
        number given (as a float).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.standardize import standardize
    >>> s = standardize(np.arange(16.0).reshape(4, 4), center="none", scale=2.0)
    >>> s.policy
    {'center': 'none', 'scale': 2.0, 'diagonal': 'include'}
    """

    matrix: np.ndarray
    center: float
    scale: float
    shift: float
    policy: dict


def _estimation_entries(a, diagonal):
    """The entries that estimate the centre and the scale: all, or the off-diagonal ones."""
    if diagonal == "include":
        return a.ravel()
    return a[~np.eye(a.shape[0], dtype=bool)]


def _center_value(entries, center):
    if center == "mean":
        return float(np.mean(entries))
    if center == "none":
        return 0.0
    return center


def _scale_value(entries, c, center, scale):
    """sigma: a known value, 1.4826 MAD about the median, or the SD of the entries about ``c``.

    For the SD, ``ddof = 1`` when ``c`` is their sample mean and 0 when ``c`` is known (given, or 0),
    so that ``sigma**2`` is unbiased for the entry variance under the null either way.
    """
    if not isinstance(scale, str):
        return scale
    if scale == "mad":
        sigma = stats.median_abs_deviation(entries, scale="normal")
    else:
        ddof = 1 if center == "mean" else 0
        # BLAS nrm2 scales as it sums, so entries up to ~1e300 do not overflow when squared.
        sigma = scipy.linalg.norm(entries - c, check_finite=False) / np.sqrt(entries.size - ddof)
    return check_scale_estimate(sigma, scale)


def standardize(matrix, *, center="mean", scale="sd", diagonal="include"):
    """Centre, scale and shift a matrix into the units of the real Ginibre null.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        Real, finite, square matrix (N >= 3); never modified.
    center : {"mean", "none"} or float, default="mean"
        The constant subtracted from every entry: the mean of the estimation entries, nothing, or a
        known value.
    scale : {"sd", "mad"} or float, default="sd"
        The entry scale: the sample SD of the estimation entries about the centre (ddof 1 when the
        centre is their mean, else 0), a robust ``1.4826 * MAD`` about their median
        (``scipy.stats.median_abs_deviation(scale="normal")``), or a known value > 0.
    diagonal : {"include", "shift"}, default="include"
        ``"include"``: the diagonal is an entry like any other and every entry estimates the centre
        and the scale.  ``"shift"``: the centre and the scale are estimated from the off-diagonal
        entries; the mean of the centred diagonal is removed as a spectral shift (a multiple of the
        identity); the diagonal's own spread is left as it is.

    Returns
    -------
    Standardized
        ``M = (A - c 1 1^T - shift I) / sigma`` with ``c``, ``sigma``, ``shift`` and the policy.

    Raises
    ------
    TypeError, ValueError
        If the matrix or an option is invalid, or the estimated scale is zero or not finite (e.g.
        constant off-diagonal entries, or ``scale="mad"`` on a matrix that is mostly zeros).

    Notes
    -----
    The eigenvalues of ``M / sqrt(N)`` are ``z = (lambda - shift) / (sigma sqrt(N))`` with ``lambda``
    the eigenvalues of the centred matrix ``A - c 1 1^T``.  Centring is a rank-one change, not a
    spectral shift; only the ``"shift"`` policy moves the whole spectrum.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.standardize import standardize
    >>> rng = np.random.default_rng(0)
    >>> s = standardize(3.0 + 2.0 * rng.standard_normal((60, 60)))
    >>> round(s.center, 1), round(s.scale, 1), s.shift
    (3.0, 2.0, 0.0)
    """
    a, _, _ = as_square_matrix(matrix, name="matrix")
    center = check_option_or_real(center, "center", CENTERS)
    scale = check_option_or_real(scale, "scale", SCALES, positive=True)
    diagonal = check_option(diagonal, "diagonal", DIAGONALS)
    entries = _estimation_entries(a, diagonal)
    with np.errstate(over="ignore", invalid="ignore"):  # an overflow gives inf: refused just below
        c = _center_value(entries, center)
        sigma = _scale_value(entries, c, center, scale)
    shift = float(np.mean(np.diag(a)) - c) if diagonal == "shift" else 0.0
    a -= c
    if shift:
        a[np.diag_indices_from(a)] -= shift
    a /= sigma
    a.flags.writeable = False
    return Standardized(a, c, sigma, shift, {"center": center, "scale": scale, "diagonal": diagonal})
