"""Mean densities of the real and of the non-real eigenvalues of an ``n x n`` real Ginibre matrix.

Quantities
----------
For a matrix with i.i.d. N(0, 1) entries (radii in raw units: the bulk fills the disk of radius
``sqrt(n)``), with ``Q(a, t)`` and ``P(a, t)`` the regularised upper and lower incomplete gamma
functions and ``g_a(t) = t**(a-1) exp(-t) / Gamma(a)`` the Gamma(a) density:

``real_density(x, n)``
    rho_r(x) = Q(n-1, x**2) / sqrt(2 pi) + (|x|/2) g_{n/2}(x**2/2) P((n-1)/2, x**2/2),
    the expected number of real eigenvalues per unit length at ``x``; it integrates to E K_n, the
    expected number of real eigenvalues.  For ``n = 1`` it is the N(0, 1) density.
``complex_density(z, n)``
    rho_c(x + iy) = sqrt(2/pi) |y| erfcx(sqrt(2)|y|) Q(n-1, x**2 + y**2),
    the expected number of non-real eigenvalues per unit area at ``z`` (both members of each conjugate
    pair counted); its mass over the plane is n - E K_n.  It is zero for ``n = 1``.

Method
------
Both are closed forms, evaluated elementwise in float64 for every ``n`` (no regime switch):

- ``Q`` and ``P`` come from scipy.special (``gammaincc``, ``gammainc``), which keep relative accuracy
  in both tails for large shape parameters.
- The Gamma density of the second real term is ``exp(log_poisson(n/2 - 1, x**2/2))`` with the
  saddle-point log-Poisson of :mod:`nullspec.ginibre._special`: the naive
  ``(n-1) log|x| - x**2/2 - gammaln(n/2)`` cancels terms of size ``n log n`` and loses about
  ``1e-16 n log n`` relatively (1e-9 at ``n = 10**6``).
- ``erfcx`` (scaled complementary error function) replaces ``exp(y**2 - x**2) erfc(sqrt(2)|y|)`` of the
  textbook form; nothing overflows and the factor ``exp(-(x**2 + y**2))`` lives inside the normalised
  ``Q``.

References
----------
A. Edelman, E. Kostlan and M. Shub, "How many eigenvalues of a random matrix are real?", J. Amer. Math.
Soc. 7 (1994) 247-267 (the real density; quoted from memory).
A. Edelman, "The probability that a random real Gaussian matrix has k real eigenvalues, related
distributions, and the circular law", J. Multivariate Anal. 60 (1997) 203-232 (the non-real density
with the unnormalised exponential sum; quoted from memory).
P. J. Forrester and T. Nagao, "Eigenvalue statistics of the real Ginibre ensemble", Phys. Rev. Lett. 99
(2007) 050603 (the edge limit used as a test; quoted from memory).
The prefactor 1/2 of the second real term (a version with 1/sqrt(2 pi) times 2 circulates and is
wrong by sqrt(pi/2)) and the erfcx/normalised-Q form of the non-real density were derived and checked
for this project (THEORY.md sections 3 and 4).
"""

import numpy as np
from scipy import special

from ._checks import check_complex, check_real, check_size
from ._special import log_poisson

__all__ = ["real_density", "complex_density"]

_INV_SQRT_2PI = 1.0 / np.sqrt(2.0 * np.pi)
_SQRT_2_OVER_PI = np.sqrt(2.0 / np.pi)
_SQRT2 = np.sqrt(2.0)
_CAP = 1000.0


def _clipped(modulus, n):
    """``modulus`` capped at ``sqrt(n) + 1000``, beyond which both densities are exactly 0.0 in float64.

    The cap keeps squares from overflowing for absurdly large arguments without changing any result.
    """
    return np.minimum(modulus, np.sqrt(n) + _CAP)


def _upper_q(n, modulus):
    """``Q(n - 1, modulus**2)``: the chance that a Poisson(modulus**2) count is <= n - 2 (0 for n = 1)."""
    if n == 1:
        return np.zeros_like(modulus)
    m = _clipped(modulus, n)
    return special.gammaincc(n - 1, m * m)


def _real_edge_term(x, n):
    """Second term of the real density, ``(|x|/2) g_{n/2}(x**2/2) P((n-1)/2, x**2/2)`` (``n >= 2``).

    For ``n = 1`` the whole density is this term with ``P(0, .) = 1``: the N(0, 1) density.
    """
    ax = _clipped(np.abs(x), n)
    t = 0.5 * ax * ax
    if n == 1:
        return _INV_SQRT_2PI * np.exp(-t)
    return 0.5 * ax * np.exp(log_poisson(0.5 * n - 1.0, t)) * special.gammainc(0.5 * (n - 1), t)


def _real_density(x, n, q):
    """Real density at ``x`` given ``q = _upper_q(n, |x|)`` (shared with the radial integrand)."""
    return _INV_SQRT_2PI * q + _real_edge_term(x, n)


def _strip_factor(y):
    """``sqrt(2/pi) |y| erfcx(sqrt(2)|y|)``: the depletion of non-real eigenvalues near the real axis.

    It rises from 0 at the axis to ``1/pi`` for ``|y| >> 1`` (as ``(1 - 1/(4 y**2) + ...)/pi``).
    """
    ay = np.minimum(np.abs(y), 1e150)  # the factor is exactly 1/pi in float64 long before the cap
    return _SQRT_2_OVER_PI * ay * special.erfcx(_SQRT2 * ay)


def real_density(x, n):
    """Mean density of the real eigenvalues of an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    x : array_like of float
        Points on the real line, in raw units (entries of variance 1; the bulk is ``|x| < sqrt(n)``).
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray
        ``rho_r(x)``, the expected number of real eigenvalues per unit length at ``x``; same shape as
        ``x``.  It tends to ``1/sqrt(2 pi)`` inside ``(-sqrt(n), sqrt(n))`` and integrates to the
        expected number of real eigenvalues.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, or ``x`` is complex, NaN or infinite.

    See Also
    --------
    complex_density : the density of the non-real eigenvalues.

    Notes
    -----
    ``rho_r(x) = Q(n-1, x**2)/sqrt(2 pi) + (|x|/2) g_{n/2}(x**2/2) P((n-1)/2, x**2/2)`` (Edelman, Kostlan
    and Shub 1994, with the prefactor 1/2 checked for this project); see the module docstring for the
    stable evaluation.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import real_density
    >>> float(np.round(real_density(0.0, 10) * np.sqrt(2 * np.pi), 12))
    1.0
    >>> np.round(real_density([1.0, 3.0], 2), 6).tolist()
    [0.353799, 0.016668]
    """
    n = check_size(n)
    x = check_real(x, "x")
    return _real_density(x, n, _upper_q(n, np.abs(x)))


def complex_density(z, n):
    """Mean density of the non-real eigenvalues of an ``n x n`` real Ginibre matrix, per unit area.

    Parameters
    ----------
    z : array_like of complex
        Points of the complex plane, in raw units (the bulk is the disk ``|z| < sqrt(n)``).  Real input
        is accepted (the density vanishes on the real axis).
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray
        ``rho_c(z)``, the expected number of non-real eigenvalues per unit area at ``z``, counting both
        members of each conjugate pair; same shape as ``z``.  Far from the real axis and inside the
        disk it tends to ``1/pi``; its mass over the plane is ``n`` minus the expected number of real
        eigenvalues.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1, or ``z`` has a NaN or infinite part.

    See Also
    --------
    real_density : the density of the real eigenvalues.

    Notes
    -----
    ``rho_c(x + iy) = sqrt(2/pi) |y| erfcx(sqrt(2)|y|) Q(n-1, x**2 + y**2)``, the form of Edelman (1997)
    rewritten with ``erfcx`` and the normalised ``Q`` (checked for this project).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import complex_density
    >>> float(np.round(complex_density(1 + 1j, 10), 10))
    0.2681882871
    >>> float(np.round(np.pi * complex_density(15j, 400), 4))
    0.9989
    """
    n = check_size(n)
    z = check_complex(z, "z")
    return _strip_factor(z.imag) * _upper_q(n, np.abs(z))
