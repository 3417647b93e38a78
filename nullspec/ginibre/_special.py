"""Log-space special-function kernels shared by the exact real Ginibre formulas.

Quantities
----------
``stirlerr(a)``
    The remainder of Stirling's formula, ``log Gamma(a + 1) - [log(2 pi a)/2 + a log a - a]``.
``log_poisson(a, t)``
    ``log(t**a * exp(-t) / Gamma(a + 1))``, the log of the Poisson-type weight that appears in the
    incomplete-gamma form of every finite-N real Ginibre density.  It is the log of the Gamma(a + 1)
    density at ``t``, so ``log_poisson(a - 1, t)`` is ``log g_a(t)``.

Method
------
For a large argument the naive ``a*log(t) - t - gammaln(a + 1)`` subtracts numbers of size ``a log a``
and loses about ``1e-16 * a log a`` absolutely.  The saddle-point form of Loader (2000),
``-a*psi(t/a) - log(2 pi a)/2 - stirlerr(a)`` with ``psi(u) = u - 1 - log u``, keeps every piece O(1)
near the peak ``t ~ a``; ``psi`` is evaluated by its Taylor series when ``|u - 1| < 0.1`` and directly
otherwise, and ``stirlerr`` by its asymptotic series for ``a >= 15`` and from ``gammaln`` below.

References
----------
C. Loader, "Fast and accurate computation of binomial probabilities", 2000 (the saddle-point
log-Poisson form and the Stirling remainder; quoted from memory).
"""

import numpy as np
from scipy import special

__all__ = ["stirlerr", "log_poisson", "log1pmx_neg"]

_HALF_LOG_2PI = 0.5 * np.log(2.0 * np.pi)
# Coefficients of the Stirling remainder series: B_{2k} / (2k (2k - 1)), k = 1..7.
_STIRLING = (1.0 / 12, -1.0 / 360, 1.0 / 1260, -1.0 / 1680, 1.0 / 1188, -691.0 / 360360, 1.0 / 156)
_SERIES_CUTOFF = 15.0
# psi(1 + v) = sum_{k>=2} (-1)^k v^k / k; 18 terms give < 1e-19 relative for |v| < 0.1.
_PSI_TERMS = 18


def stirlerr(a):
    """Stirling-formula remainder ``log Gamma(a+1) - (log(2 pi a)/2 + a log a - a)``.

    Parameters
    ----------
    a : array_like
        Positive real arguments.

    Returns
    -------
    ndarray
        The remainder, about ``1/(12 a)`` for large ``a``.

    Examples
    --------
    >>> from nullspec.ginibre._special import stirlerr
    >>> float(round(stirlerr(100.0) * 1200, 6))
    0.999997
    """
    a = np.asarray(a, dtype=float)
    out = np.empty_like(a)
    big = a >= _SERIES_CUTOFF
    ab = a[big]
    inv2 = 1.0 / (ab * ab)
    acc = np.zeros_like(ab)
    for coef in reversed(_STIRLING):
        acc = acc * inv2 + coef
    out[big] = acc / ab
    small = ~big
    asml = a[small]
    out[small] = special.gammaln(asml + 1.0) - (_HALF_LOG_2PI + 0.5 * np.log(asml) + asml * np.log(asml) - asml)
    return out


def log1pmx_neg(v):
    """``v - log(1 + v)`` without cancellation (the function ``psi(1 + v)``).

    Parameters
    ----------
    v : array_like
        Real values greater than -1.

    Returns
    -------
    ndarray
        ``v - log1p(v)``, non-negative.

    Examples
    --------
    >>> from nullspec.ginibre._special import log1pmx_neg
    >>> float(log1pmx_neg(1e-4) / 5e-9)  # ~ v**2 / 2
    0.9999333...
    """
    v = np.asarray(v, dtype=float)
    out = np.empty_like(v)
    near = np.abs(v) < 0.1
    vn = v[near]
    acc = np.zeros_like(vn)
    for k in range(_PSI_TERMS + 1, 1, -1):
        acc = acc * (-vn) + 1.0 / k
    out[near] = vn * vn * acc
    vf = v[~near]
    # v -> -1 (a modulus far below the bulk) has the limit +inf: no warning, exact limit.
    with np.errstate(divide="ignore"):
        out[~near] = vf - np.log1p(vf)
    return out


def log_poisson(a, t):
    """``log(t**a * exp(-t) / Gamma(a + 1))`` in the stable saddle-point form.

    Parameters
    ----------
    a : array_like
        Non-negative shape (the "count"), real-valued.
    t : array_like
        Non-negative argument.  ``t = 0`` gives ``-inf`` for ``a > 0`` and ``0`` for ``a = 0``.

    Returns
    -------
    ndarray
        The log weight, broadcast over ``a`` and ``t``.

    Examples
    --------
    >>> import numpy as np
    >>> from scipy import stats
    >>> from nullspec.ginibre._special import log_poisson
    >>> bool(np.isclose(log_poisson(30.0, 25.0), stats.poisson.logpmf(30, 25.0)))
    True
    """
    a, t = np.broadcast_arrays(np.asarray(a, dtype=float), np.asarray(t, dtype=float))
    out = np.empty(a.shape)
    pos = (a > 0) & (t > 0)
    ap, tp = a[pos], t[pos]
    out[pos] = -ap * log1pmx_neg(tp / ap - 1.0) - _HALF_LOG_2PI - 0.5 * np.log(ap) - stirlerr(ap)
    zero_a = a == 0
    out[zero_a] = -t[zero_a]
    out[(a > 0) & (t == 0)] = -np.inf
    return out
