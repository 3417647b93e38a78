"""Expected numbers of eigenvalues of an ``n x n`` real Ginibre matrix inside and outside a circle.

Quantities
----------
With ``rho_r`` and ``rho_c`` the mean real and non-real densities (:mod:`nullspec.ginibre.densities`),
the moduli of all eigenvalues have the radial density

    f_n(s) = 2 rho_r(s) + 2 s (1 - erfcx(sqrt(2) s)) Q(n-1, s**2),

where the first term counts the real eigenvalues at ``+-s`` and the second is the angular integral of
``rho_c`` over the circle of radius ``s``, in closed form.  Then

- ``expected_within(r, n)`` = F_n(r) = int_0^r f_n, the expected number of eigenvalues with modulus <= r;
- ``expected_outside(r, n)`` = G_n(r) = int_r^inf f_n, the expected number with modulus > r;
- ``modulus_cdf(s, n)`` = F_n(s sqrt(n)) / n, the law of the modulus of an eigenvalue picked at random,
  in units of ``sqrt(n)`` (the exact finite-n counterpart of the circular law's ``s**2``).

Each splits into a real part and a non-real part (``part="real"``, ``part="nonreal"``).
``part="upper"`` counts the eigenvalues with Im >= 0, i.e. the real ones plus one member of each
conjugate pair: its tail ``G*_n(r) = G_real(r) + G_c(r)/2`` bounds P(spectral radius >= r) (Markov's
inequality) and drives :mod:`nullspec.ginibre.edge`.

Method
------
One regime, composite Gauss-Legendre quadrature of f_n:

- per ``n`` (cached, since callers evaluate many radii at one ``n``): 16-point Gauss-Legendre on panels
  of width 1/8 covering ``[0, sqrt(n) + 20]``, and the cumulative sums of the panel integrals from
  both ends, separately for the real and the non-real part;
- per radius ``r``, for F: the cumulative sum up to the panel edge below ``r`` plus the integral, from
  that edge to ``r``, of the degree-15 polynomial that interpolates each part at the panel's 16 nodes
  (kept per ``n`` as the power-series coefficients of its antiderivative in the panel's coordinate,
  272 bytes per panel: 0.26 MB at n = 10**4, 69 MB at the largest n, 10**9).  Integrated over a whole panel
  that polynomial gives the Gauss-Legendre sum itself, and inside a panel it agrees with a fresh
  16-point rule on ``[edge, r]`` to rounding (below 2e-16 of ``n`` for n = 2 ... 10**4, tested), at a
  fraction of the cost: no special function is evaluated per radius;
- per radius ``r``, for G: a fresh 16-point rule from ``r`` up to the panel edge above it, plus the
  cumulative tail sum.  The tail G is always summed directly, never formed as ``n - F``, so tiny
  tails keep their relative accuracy;
- beyond the grid end the tail is integrated on ``[r, r + 2]`` (the integrand's log-derivative there
  exceeds 20, so the rest is below 1e-17 relative); the same window at the grid end seeds the
  cumulative tail sums.  F beyond the grid is the grid total: the mass left beyond ``sqrt(n) + 20`` is
  below 1e-90 of ``n``.

The non-real integrand uses ``1 - erfcx(u) = exp(u**2) erf(u) - expm1(u**2)`` for ``u < 1`` to avoid the
cancellation of ``1 - erfcx(u)`` near the origin.

References
----------
A. Edelman, E. Kostlan and M. Shub, J. Amer. Math. Soc. 7 (1994) 247-267 (real density; from memory).
A. Edelman, J. Multivariate Anal. 60 (1997) 203-232 (non-real density; from memory).
The closed angular integral ``2 s (1 - erfcx(sqrt(2) s))``, the radial density f_n and the bound with
G* were derived and checked for this project (THEORY.md section 5).
"""

import dataclasses
import functools

import numpy as np
from scipy import special

from ._checks import check_option, check_radius, check_size
from .densities import _clipped, _real_density, _upper_q

__all__ = ["expected_within", "expected_outside", "modulus_cdf"]

_PANEL = 0.125
_REACH = 20.0
_FAR_WINDOW = 2.0
_GL_NODES, _GL_WEIGHTS = np.polynomial.legendre.leggauss(16)
_SQRT2 = np.sqrt(2.0)
# (weight of the real part, weight of the non-real part) for each counting rule.
_PART_WEIGHTS = {"all": (1.0, 1.0), "real": (1.0, 0.0), "nonreal": (0.0, 1.0), "upper": (1.0, 0.5)}
_PARTS = tuple(_PART_WEIGHTS)


def _one_minus_erfcx(u):
    """``1 - erfcx(u)`` for ``u >= 0``, without cancellation near 0."""
    out = np.empty_like(u)
    small = u < 1.0
    us = u[small]
    out[small] = np.exp(us * us) * special.erf(us) - np.expm1(us * us)
    out[~small] = 1.0 - special.erfcx(u[~small])
    return out


def _integrands(s, n):
    """Radial densities at moduli ``s``: array of shape ``(2,) + s.shape``, (real, non-real)."""
    q = _upper_q(n, s)
    real = 2.0 * _real_density(s, n, q)
    nonreal = 2.0 * s * _one_minus_erfcx(_SQRT2 * s) * q
    return np.stack([real, nonreal])


def _panel_nodes(a, b):
    """Half-widths and Gauss-Legendre nodes of the panels ``[a, b]`` (broadcast arrays)."""
    half = 0.5 * (b - a)
    return half, (a + half)[..., None] + half[..., None] * _GL_NODES


def _panel_integrals(a, b, n):
    """16-point Gauss-Legendre integrals of both parts over ``[a, b]`` (broadcast arrays)."""
    half, nodes = _panel_nodes(a, b)
    return half * (_integrands(nodes, n) @ _GL_WEIGHTS)


# Legendre coefficients of the polynomial through 16 node values: c_m = (2m + 1)/2 sum_j w_j P_m(x_j) f_j
# (discrete orthogonality of P_0 ... P_15 under the 16-point rule).
_NODES_TO_LEGENDRE = (
    _GL_WEIGHTS[:, None] * np.polynomial.legendre.legvander(_GL_NODES, 15) * (2 * np.arange(16) + 1) / 2
)


def _legendre_to_powers(degree):
    """Matrix taking Legendre-series coefficients to power-series coefficients, both up to `degree`."""
    out = np.zeros((degree + 1, degree + 1))
    for k in range(degree + 1):
        coef = np.polynomial.legendre.leg2poly(np.eye(degree + 1)[k])
        out[: coef.size, k] = coef
    return out


# The antiderivatives have degree 16.  Power series evaluate in a few array operations (np.vander) where
# a Legendre recurrence takes ~60; the conversion costs no accuracy here (tested against mpmath).
_LEGENDRE_TO_POWERS = _legendre_to_powers(16)


@dataclasses.dataclass(frozen=True)
class _Grid:
    """Cumulative panel integrals for one ``n``: ``below[:, k]`` = F at edge k, ``above[:, k]`` = G;
    ``within[:, :, k]``: power-series coefficients (17, 2) of each part's antiderivative on panel k, in
    the panel's coordinate t in [-1, 1], vanishing at t = -1."""

    n_panels: int
    below: np.ndarray
    above: np.ndarray
    within: np.ndarray


@functools.lru_cache(maxsize=32)
def _grid(n):
    """Panel set-up for size ``n`` (cached: callers evaluate many radii at one ``n``)."""
    n_panels = int(np.ceil((np.sqrt(n) + _REACH) / _PANEL))
    edges = np.arange(n_panels + 1) * _PANEL
    half, nodes = _panel_nodes(edges[:-1], edges[1:])
    values = _integrands(nodes, n)  # (2, panels, 16)
    parts = half * (values @ _GL_WEIGHTS)
    below = np.concatenate([np.zeros((2, 1)), np.cumsum(parts, axis=1)], axis=1)
    # The tails start from the mass beyond the grid end, so G keeps its relative accuracy up to the end.
    beyond = _far_tail(edges[-1:], n)
    above = np.concatenate([np.cumsum(parts[:, ::-1], axis=1)[:, ::-1] + beyond, beyond], axis=1)
    # d/dr = (1 / half) d/dt, so the antiderivative in r is half times the one in t
    legendre = np.polynomial.legendre.legint(np.moveaxis(values @ _NODES_TO_LEGENDRE, -1, 0), lbnd=-1)
    within = np.tensordot(_LEGENDRE_TO_POWERS, legendre, axes=1) * half
    for table in (below, above, within):
        table.setflags(write=False)
    return _Grid(n_panels, below, above, within)


def _panel_index(r, grid):
    """Index of the panel holding each radius, capped at ``grid.n_panels`` (beyond the grid)."""
    return np.floor(np.minimum(r, grid.n_panels * _PANEL) / _PANEL).astype(np.intp)


def _far_tail(r, n):
    """Both tail parts for radii beyond the grid end, integrated on ``[r, r + 2]``."""
    starts = r[:, None] + _PANEL * np.arange(round(_FAR_WINDOW / _PANEL))
    return _panel_integrals(starts, starts + _PANEL, n).sum(axis=-1)


def _outside_parts(r, n):
    """(G_real, G_c) at radii ``r`` (1-D float array), each summed directly from the top."""
    r = _clipped(r, n)  # both parts are exactly 0.0 beyond the cap
    grid = _grid(n)
    k = _panel_index(r, grid)
    inside = k < grid.n_panels
    out = np.empty((2,) + r.shape)
    ki = k[inside]
    out[:, inside] = _panel_integrals(r[inside], (ki + 1) * _PANEL, n) + grid.above[:, ki + 1]
    out[:, ~inside] = _far_tail(r[~inside], n)
    return out


def _within_parts(r, n):
    """(F_real, F_c) at radii ``r`` (1-D float array), each summed from the origin."""
    grid = _grid(n)
    k = _panel_index(r, grid)
    inside = k < grid.n_panels
    out = np.empty((2,) + r.shape)
    ki = k[inside]
    t = 2.0 * (r[inside] - ki * _PANEL) / _PANEL - 1.0  # the panel's coordinate, in [-1, 1)
    powers = np.vander(t, grid.within.shape[0], increasing=True)
    out[:, inside] = grid.below[:, ki] + np.einsum("mk,kpm->pm", powers, grid.within[:, :, ki])
    out[:, ~inside] = grid.below[:, -1:]
    return out


def _combine(parts, part, shape):
    """Weighted sum of the (real, non-real) parts for the counting rule ``part``."""
    w_real, w_nonreal = _PART_WEIGHTS[part]
    return (w_real * parts[0] + w_nonreal * parts[1]).reshape(shape)


def _outside_at_edges(n, part):
    """Panel edges of the grid for ``n`` and the expected count beyond each (brackets for inverses)."""
    grid = _grid(n)
    edges = np.arange(grid.n_panels + 1) * _PANEL
    return edges, _combine(grid.above, part, edges.shape)


def _expected_outside(r, n, part):
    """``expected_outside`` without argument checks (``r`` a float array, ``n`` an int)."""
    return _combine(_outside_parts(r.ravel(), n), part, r.shape)


def expected_within(r, n, *, part="all"):
    """Expected number of eigenvalues of modulus <= ``r`` for an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    r : array_like of float
        Radii >= 0 in raw units (entries of variance 1; the bulk edge is at ``sqrt(n)``).
    n : int
        Matrix size, ``n >= 1``.
    part : {"all", "real", "nonreal", "upper"}, default="all"
        Which eigenvalues to count: all of them, the real ones, the non-real ones (both members of each
        conjugate pair), or those with Im >= 0 (real plus one per conjugate pair).

    Returns
    -------
    ndarray
        F_n(r) (or its part), same shape as ``r``.  ``expected_within(r, n) -> n`` as ``r`` grows.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, ``r`` is negative or not finite, or ``part`` is unknown.

    See Also
    --------
    expected_outside : the complementary tail, computed directly.
    modulus_cdf : the same law per eigenvalue, in units of ``sqrt(n)``.

    Notes
    -----
    Integral of the radial density ``f_n(s) = 2 rho_r(s) + 2 s (1 - erfcx(sqrt(2) s)) Q(n-1, s**2)``
    (derived for this project, THEORY.md section 5) by composite Gauss-Legendre quadrature.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import expected_within
    >>> float(np.round(expected_within(11.0, 100), 10))
    99.8519915845
    >>> float(np.round(expected_within(100.0, 100), 10))
    100.0
    """
    n = check_size(n)
    r = check_radius(r, "r")
    check_option(part, "part", _PARTS)
    return _combine(_within_parts(r.ravel(), n), part, r.shape)


def expected_outside(r, n, *, part="all"):
    """Expected number of eigenvalues of modulus > ``r`` for an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    r : array_like of float
        Radii >= 0 in raw units (entries of variance 1; the bulk edge is at ``sqrt(n)``).
    n : int
        Matrix size, ``n >= 1``.
    part : {"all", "real", "nonreal", "upper"}, default="all"
        Which eigenvalues to count: all of them (G_n), the real ones (G_real), the non-real ones (G_c,
        both members of each conjugate pair), or those with Im >= 0 (G* = G_real + G_c / 2).

    Returns
    -------
    ndarray
        G_n(r) (or its part), same shape as ``r``, with full relative accuracy in the far tail.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, ``r`` is negative or not finite, or ``part`` is unknown.

    See Also
    --------
    expected_within : the complementary count.
    nullspec.ginibre.spectral_radius_sf : the spectral-radius law built on ``part="upper"``.

    Notes
    -----
    The tail is summed directly from the top of the quadrature grid, never formed as ``n - F``
    (THEORY.md section 5; derived for this project).  ``part="upper"`` gives the exact bound
    P(spectral radius >= r) <= G*_n(r).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import expected_outside
    >>> float(np.round(expected_outside(11.0, 100), 12))
    0.148008415472
    >>> float(np.round(expected_outside(13.0, 100, part="upper") * 1e5, 9))
    1.976276374
    """
    n = check_size(n)
    r = check_radius(r, "r")
    check_option(part, "part", _PARTS)
    return _expected_outside(r, n, part)


def modulus_cdf(s, n):
    """Expected fraction of eigenvalues with ``|lambda| / sqrt(n) <= s`` for an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    s : array_like of float
        Scaled moduli >= 0 (``|lambda| / sqrt(n)``; the bulk edge is at 1).
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray
        ``F_n(s sqrt(n)) / n``, same shape as ``s``: the CDF of the modulus of an eigenvalue chosen
        uniformly at random, the exact finite-n law behind the radial statistic.  It approaches the
        circular law's ``min(s, 1)**2`` as ``n`` grows, with a blurred edge at finite ``n``.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, or ``s`` is negative or not finite.

    See Also
    --------
    expected_within : the unscaled count F_n(r).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import modulus_cdf
    >>> np.round(modulus_cdf([0.5, 1.0, 2.0], 1000), 4).tolist()
    [0.2505, 0.9875, 1.0]
    """
    n = check_size(n)
    s = check_radius(s, "s")
    r = np.minimum(s.ravel(), 1e150) * np.sqrt(n)  # the cap (far past the edge) avoids overflow only
    return _combine(_within_parts(r, n), "all", s.shape) / n
