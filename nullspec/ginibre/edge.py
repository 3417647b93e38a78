"""Law of the spectral radius of an ``n x n`` real Ginibre matrix.

Quantities
----------
With ``G*_n(r) = G_real(r) + G_c(r)/2`` the expected number of eigenvalues with Im >= 0 and modulus
> r (:func:`nullspec.ginibre.expected_outside` with ``part="upper"``):

``spectral_radius_bound(r, n)``
    ``min(G*_n(r), 1)``, an exact upper bound on P(spectral radius >= r).  The event needs at least
    one real eigenvalue, or one eigenvalue with Im > 0, beyond ``r`` (non-real ones come in conjugate
    pairs), so Markov's inequality applies to that count.  It is a conservative p-value.
``spectral_radius_sf(r, n)``
    ``1 - exp(-G*_n(r))``, the Poisson approximation of P(spectral radius >= r): the calibrated
    survival function (it matches simulated quantiles within their confidence intervals for
    ``n = 20 ... 500``; THEORY.md section 6).
``spectral_radius_isf(p, n)``
    its inverse: the radius ``r`` with ``spectral_radius_sf(r, n) = p``.

Method
------
- ``G*`` comes from the cached Gauss-Legendre grid of :mod:`nullspec.ginibre.radial`, whose tails are
  summed directly (relative accuracy about 1e-14 down to ``G* ~ 1e-25``).
- The survival function is ``-expm1(-G*)``, so it keeps the relative accuracy of ``G*`` in the tail.
- The inverse solves ``log G*(r) = log(-log1p(-p))`` with scipy's vectorised bracketing root finder
  (Chandrupatla's method, ``scipy.optimize.elementwise.find_root``).  The bracket, three panels wide,
  comes from the grid's cumulative tail sums at the panel edges (``sqrt(n) + 40`` bounds it beyond the
  grid); ``log G*`` is smooth and nearly quadratic in the tail.  Where ``p >= spectral_radius_sf(0, n)``
  (only for ``n <= 3`` and large ``p``) the answer is 0.
- The large-``n`` Gumbel limits of the spectral radius (Rider 2003 for the complex ensemble; a real
  analogue attributed to Rider and Sinclair 2014, both quoted from memory and unchecked) are not used:
  their centring is unusable for ``n <= 500`` (THEORY.md section 6).

References
----------
The bound with ``G*`` and the Poisson form ``1 - exp(-G*)`` were derived and checked against simulation
for this project (THEORY.md sections 5 and 6).
T. R. Chandrupatla, "A new hybrid quadratic/bisection algorithm for finding the zero of a nonlinear
function without using derivatives", Adv. Eng. Software 28 (1997) 145-149 (the root finder, as
implemented in scipy; quoted from memory).
"""

import functools

import numpy as np
from scipy.optimize import elementwise

from ._checks import check_probability, check_radius, check_size
from .radial import _expected_outside, _outside_at_edges

__all__ = ["spectral_radius_sf", "spectral_radius_isf", "spectral_radius_bound"]

# Beyond sqrt(n) + 40 every G* is below the smallest float (the tail falls like exp(-(r - sqrt n)**2)).
_ISF_REACH = 40.0
# A finite stand-in for log(0) where G* underflows, below every attainable log(-log1p(-p)) (>= -745).
_LOG_FLOOR = -2000.0


def _upper_tail(r, n):
    """``G*_n(r)`` for a float array ``r`` (no argument checks)."""
    return _expected_outside(r, n, "upper")


def _log_gap(r, log_target, n):
    """``log G*(r) - log_target``, decreasing in ``r``; finite where ``G*`` underflows."""
    g = _upper_tail(r, n)
    with np.errstate(divide="ignore"):
        return np.maximum(np.log(g), _LOG_FLOOR) - log_target


def _bracket(target, n):
    """Radii ``(lo, hi)`` with ``G*(lo) > target > G*(hi)``, from the grid's tail sums at panel edges.

    The bracket spans the panel where the tail crosses ``target`` plus one panel on each side, so the
    rounding difference between the edge sums and a fresh evaluation cannot flip a sign.  Targets below
    the tail at the grid end get ``(grid end, sqrt(n) + 40)``.
    """
    edges, tail = _outside_at_edges(n, "upper")
    k = np.searchsorted(-tail, -target, side="right")  # first edge whose tail is below target
    lo = edges[np.maximum(k - 2, 0)]
    hi = np.where(k + 1 < edges.size, edges[np.minimum(k + 1, edges.size - 1)], np.sqrt(n) + _ISF_REACH)
    return lo, hi


def spectral_radius_sf(r, n):
    """Probability that the spectral radius of an ``n x n`` real Ginibre matrix is at least ``r``.

    Parameters
    ----------
    r : array_like of float
        Radii >= 0 in raw units (entries of variance 1; the bulk edge is at ``sqrt(n)``).
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray
        ``1 - exp(-G*_n(r))``, same shape as ``r``; full relative accuracy in the tail.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, or ``r`` is negative or not finite.

    See Also
    --------
    spectral_radius_bound : the exact conservative bound ``min(G*, 1)``.
    spectral_radius_isf : the inverse.

    Notes
    -----
    A Poisson approximation of the exceedance count (derived for this project, THEORY.md section 6);
    in the tail it agrees with the exact bound to first order, ``1 - exp(-G*) = G* - G*^2/2 + ...``.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import spectral_radius_sf
    >>> float(np.round(spectral_radius_sf(1.1223 * np.sqrt(100), 100), 3))
    0.05
    """
    n = check_size(n)
    r = check_radius(r, "r")
    return -np.expm1(-_upper_tail(r, n))


def spectral_radius_bound(r, n):
    """Exact upper bound on the probability that the spectral radius is at least ``r``.

    Parameters
    ----------
    r : array_like of float
        Radii >= 0 in raw units (entries of variance 1; the bulk edge is at ``sqrt(n)``).
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray
        ``min(G*_n(r), 1)``, same shape as ``r``: a conservative p-value for an observed spectral
        radius ``r`` under the i.i.d. Gaussian null.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, or ``r`` is negative or not finite.

    See Also
    --------
    spectral_radius_sf : the calibrated (Poisson) survival function.

    Notes
    -----
    Markov's inequality for the number of eigenvalues with Im >= 0 beyond ``r`` (derived for this
    project, THEORY.md section 5).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import spectral_radius_bound
    >>> np.round(spectral_radius_bound([0.0, 13.0], 100), 9).tolist()
    [1.0, 1.9763e-05]
    """
    n = check_size(n)
    r = check_radius(r, "r")
    return np.minimum(_upper_tail(r, n), 1.0)


def spectral_radius_isf(p, n):
    """Radius exceeded by the spectral radius of an ``n x n`` real Ginibre matrix with probability ``p``.

    Parameters
    ----------
    p : array_like of float
        Exceedance probabilities, strictly between 0 and 1.
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray
        ``r`` with ``spectral_radius_sf(r, n) = p`` (raw units), same shape as ``p``; 0 where ``p`` is
        at least ``spectral_radius_sf(0, n)``.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, or ``p`` is not strictly between 0 and 1.

    See Also
    --------
    spectral_radius_sf : the survival function being inverted.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import spectral_radius_isf
    >>> np.round(spectral_radius_isf([0.05, 0.01, 0.001], 100) / 10, 4).tolist()
    [1.1223, 1.1668, 1.2226]
    """
    n = check_size(n)
    p = check_probability(p, "p")
    target = -np.log1p(-p)  # the G* that gives sf = p
    log_target = np.log(target)
    solve = _log_gap(np.zeros(p.shape), log_target, n) > 0  # else sf(0) <= p: the answer is r = 0
    r = np.zeros(p.shape)
    if solve.any():
        gap = functools.partial(_log_gap, n=n)
        res = elementwise.find_root(gap, _bracket(target[solve], n), args=(log_target[solve],))
        r[solve] = res.x
    return r
