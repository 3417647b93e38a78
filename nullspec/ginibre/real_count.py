"""Number of real eigenvalues of a real Ginibre matrix: mean, variance and exact distribution.

Quantity
--------
``K_n`` is the number of real eigenvalues of an ``n x n`` matrix with i.i.d. N(0, 1) entries.  ``K_n``
has the parity of ``n`` (non-real eigenvalues come in conjugate pairs).  The module gives ``E K_n``,
``Var K_n`` and the full probability mass function ``P(K_n = k)``, ``k = 0..n``.

Method
------
*Mean.*  Edelman, Kostlan & Shub (1994) give ``E K_n = sqrt(2) sum_{k<n/2} a_{2k}`` for even ``n`` and
``E K_n = 1 + sqrt(2) sum_{k<=(n-1)/2} a_{2k-1}`` for odd ``n``, with the central-binomial ratio
``a_j = (2j-1)!!/(2j)!! = Gamma(j+1/2) / (sqrt(pi) Gamma(j+1))``.  Each ``a_j`` is evaluated on its own
in log space from O(1) pieces (Stirling remainders and ``x - log(1 + x)``), not by a running product
of term ratios, and the positive terms are summed with ``math.fsum``: the relative error stays below
1e-15 for every ``n`` (a running product of ``n/2`` ratios would drift by about ``1e-16 sqrt(n)``).

*Distribution, even n.*  ``E[z**K] = det(I + (z**2 - 1) Ms)`` with the symmetric ``n/2 x n/2`` matrix
``Ms_jk = Gamma(j+k+1/2) / sqrt(2 pi (2j)! (2k)!)`` (Edelman 1997, after a diagonal similarity).  Its
eigenvalues ``mu`` lie in (0, 1), so ``K/2`` is a sum of independent Bernoulli(``mu_i``) variables
(Poisson-binomial); ``E K = 2 sum mu`` and ``Var K = 4 sum mu (1 - mu)`` exactly.

*Distribution, odd n = 2m + 1.*  Eliminating the border of Edelman's bordered determinant gives
``E[z**K] = z prod_i (1 + (z**2 - 1) nu_i)`` with ``nu = spec(Ms_m - s t^T)``, a rank-one change of
the even matrix of size ``m``: ``s_j = Gamma(j+m+1/2) / sqrt(2 pi (2j)! (2m)!)`` and
``t_j = sqrt(a_j / a_m)``.  In the eigenbasis of ``Ms_m`` (eigenvalues ``lambda``, ``a = V^T s``,
``b = V^T t``) the products ``a_i b_i`` are positive, so ``nu = eigvalsh(diag(lambda) - c c^T)`` with
``c = sqrt(a b)``: ``K = 1 + 2 PoissonBinomial(nu)`` and ``Var K = 4 sum nu (1 - nu)``.  The positivity
of ``a_i b_i`` is the project's own numerical finding (checked in mpmath up to n = 201 and on every
resolvable mode up to n = 10**5 + 1), not a proved result.

*Evaluation, n <= 400 (dense).*  ``log Ms_jk`` is assembled from O(1) pieces:
``log Ms_jk = (log Ms_jj + log Ms_kk)/2 + log rho_jk`` where ``log rho_jk`` is the second difference of
``log Gamma`` around ``j + k + 1/2``, written with ``(1+u) log(1+u) + (1-u) log(1-u)`` and Stirling
remainders.  Plain ``gammaln`` differences would lose about ``1e-16 n log n``.  Then one symmetric
eigen-solve; odd ``n``: a Householder tridiagonalisation that also rotates ``s`` and ``t`` (no
eigenvector matrix is formed), the tridiagonal eigen-decomposition, and the secular matrix.

*Evaluation, n > 400 (Nystrom).*  ``spec(Ms)`` is the non-zero spectrum of the integral operator with
kernel ``T_N(x, y) = (2 pi)**-0.5 exp(-(x**2 + y**2)/2) sum_{j<N/2} (xy)**(2j)/(2j)!`` (``N`` even) on
even functions.  For ``x, y >= 0`` and ``t = x y``,
``T_N = (2 pi)**-0.5 exp(-(x-y)**2/2) [Q(N, t) + exp(-2t) - R_N(t)] / 2`` with the regularised upper
incomplete gamma ``Q`` and the alternating Poisson tail ``R_N(t) = t pi_{N-1}(t) E[1/(N + X)]``,
``X ~ Poisson(t)``; ``E[1/(N+X)]`` is a 48-node Gauss-Laguerre sum after the change of variables
``s = exp(-z/(N + t))`` in ``int_0^1 s**(N-1) exp(-t(1-s)) ds``.  ``R_N`` is O(N**-0.5) at the
spectral edge and is kept.  The grid is ``x_i = 0.35 i`` up to ``sqrt(n) + 10`` with trapezoid weights
``(h, 2h, 2h, ...)`` (the operator on even functions), so the matrix ``W^(1/2) T W^(1/2)`` has size
about ``2.9 sqrt(n)``: cost O(n) for the mean, O(n**1.5) for the eigen-solve.  For odd ``n`` the rank-one
part is ``|Q(m, x**2/2)> <(|y|/2) g_{m+1/2}(y**2/2)|`` with the Gamma density ``g``, handled by the
same secular eigen-solve as the dense case.  Two details keep the kernel at about 1e-16: ``t = x y``
is formed exactly (Dekker's two-product, with a first-order correction of ``Q``), since ``Q(N, t)``
moves by ``0.4 N**-0.5`` per unit of ``t ~ N``; and where scipy's incomplete gamma loses accuracy
(``a >~ 3e5``, 4.5 to 15 standard deviations below the mean) the lower tail is recomputed from
``1F1`` (:func:`_upper_gamma`).

Truncation and accuracy
-----------------------
- Parameters ``mu < 1e-18`` are dropped.  By the Weyl-law count ``#(mu > eps) ~ (sqrt 2/pi)
  sqrt(n log(1/eps))`` their sum is below ``0.04 sqrt(n) 1e-18``, so the exact pmf changes by less
  than 1e-15 in total variation for ``n <= 10**6``.
- Rounding: a float symmetric eigen-solve moves each parameter by about 1e-15 absolute (dense and
  Nystrom agree to 3e-15), so the total variation error is at most (number of parameters) x 2e-15,
  about 6e-12 at ``n = 10**6``.  Entry by entry, ``P(k)`` moves by at most ``1e-15 S_k P(k)`` with
  ``S_k = sum_i |P^(-i)(k-1) - P^(-i)(k)| / P(k)`` (``P^(-i)``: the pmf without parameter ``i``).
  Against mpmath (n = 10 ... 201) the relative error is below 4e-14 for entries >= 1e-6, 2e-12 down
  to 1e-12 and 2e-11 down to 1e-20; the far upper tail, which depends on parameters below 1e-16, is
  not resolved in float64.  Lower tails depend on ``1 - mu >~ 1/n``: ``P(K = n mod 2)`` has a
  relative error of about ``2e-15 sum 1/(1 - mu_i)``, 3e-13 at ``n = 100`` and 2e-9 at ``n = 10**6``.
- The Nystrom grid ends at ``sqrt(n) + 10``: the eigenfunctions of ``T_N`` decay like
  ``exp(-(x - sqrt n)**2 / 2)`` beyond the edge, so the truncation changes ``mu`` by about
  ``exp(-50) ~ 2e-22``.  Kernel entries with ``|x - y| > 9.8`` (below ``3e-22``) are dropped, which
  moves each ``mu`` by less than 1e-20; the even case then uses a banded eigen-solve.
- Entries of the pmf with ``k`` of the wrong parity are exact zeros; so are entries beyond the number
  of retained parameters (they are below about ``1e-18 ** j`` and underflow in any case).

References
----------
A. Edelman, E. Kostlan and M. Shub, "How many eigenvalues of a random matrix are real?",
J. Amer. Math. Soc. 7 (1994) 247-267 (mean, closed form with 2F1).
A. Edelman, "The probability that a random real Gaussian matrix has k real eigenvalues, related
distributions, and the circular law", J. Multivariate Anal. 60 (1997) 203-232 (the determinant
formulas, ``P(K_n = n) = 2**(-n(n-1)/4)``).
P. J. Forrester and T. Nagao, "Eigenvalue statistics of the real Ginibre ensemble", Phys. Rev. Lett.
99 (2007) 050603 (``Var K_n ~ (2 - sqrt 2) E K_n``) [from memory].
E. Kanzieper, M. Poplavskyi, C. Timm, R. Tribe and O. Zaboronski, "What is the probability that a
large random matrix has no real eigenvalues?", Ann. Appl. Probab. 26 (2016) 2733-2753
(``log P(K_n = 0) ~ -zeta(3/2) sqrt(n / (2 pi))``) [from memory].
The Nystrom kernel, the odd-n secular form and the error bounds above are the project's own
derivations (see the theory sheet); C. Loader (2000) for the saddle-point log-Poisson [from memory].
Bibliographic details (titles, volumes, pages) are quoted from memory.
"""

import functools
import math
from fractions import Fraction

import numpy as np
from scipy import linalg, special
from scipy.linalg import lapack

from ._checks import check_size
from ._special import log1pmx_neg, log_poisson, stirlerr

__all__ = ["real_count_mean", "real_count_pmf", "real_count_var"]

_DENSE_MAX_N = 400  # dense Ms up to here, the Nystrom discretisation above
_PARAM_FLOOR = 1e-18  # Bernoulli parameters below this are dropped (module docstring)
_GRID_STEP = 0.35
_GRID_MARGIN = 10.0  # the grid runs to sqrt(n) + 10
_STEP_SQ = 0.35**2
_STEP_SQ_LO = float(Fraction(49, 400) - Fraction(_STEP_SQ))  # h**2 = 0.1225 = _STEP_SQ + _STEP_SQ_LO
_SPLITTER = 2.0**27 + 1.0
_BAND_REACH = 9.8  # kernel entries with |x - y| beyond this are below 3e-22 and dropped
_LAGUERRE_NODES = 48
_INV_SQRT_2PI = 1.0 / math.sqrt(2.0 * math.pi)


def _log_half_binomial(j):
    """``log a_j = log(Gamma(j + 1/2) / (sqrt(pi) Gamma(j + 1)))`` for integers ``j >= 0``.

    With ``lgamma(x + 1) = log(2 pi x)/2 + x log x - x + stirlerr(x)`` at ``x = j - 1/2`` and ``x = j``
    the ``j log j`` parts cancel analytically, leaving
    ``-log(pi j)/2 - j psi(-1/(2j)) + stirlerr(j - 1/2) - stirlerr(j)`` with ``psi(v) = v - log(1+v)``.
    """
    j = np.asarray(j, dtype=float)
    out = np.zeros_like(j)  # a_0 = 1
    pos = j > 0
    jp = j[pos]
    out[pos] = (-0.5 * np.log(np.pi * jp) - jp * log1pmx_neg(-0.5 / jp)
                + stirlerr(jp - 0.5) - stirlerr(jp))
    return out


def real_count_mean(n):
    """Expected number of real eigenvalues of an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    float
        ``E K_n`` (Edelman, Kostlan & Shub 1994), to a relative error below 1e-15.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1.

    See Also
    --------
    real_count_var, real_count_pmf

    Notes
    -----
    Even ``n``: ``sqrt(2) sum_{k<n/2} (4k-1)!!/(4k)!!``; odd ``n``:
    ``1 + sqrt(2) sum_{k=1}^{(n-1)/2} (4k-3)!!/(4k-2)!!``.  For large ``n``,
    ``E K_n = sqrt(2n/pi) (1 - 3/(8n) - ...) + 1/2``.  The cost is O(n).

    Examples
    --------
    >>> from nullspec.ginibre import real_count_mean
    >>> round(real_count_mean(4), 12)  # 11 sqrt(2) / 8
    1.944543648263
    >>> round(real_count_mean(1000), 6)
    25.721863
    """
    n = check_size(n)
    first = 0 if n % 2 == 0 else 1
    terms = np.exp(_log_half_binomial(np.arange(first, n, 2)))
    return (n % 2) + math.sqrt(2.0) * math.fsum(terms)


def _log_ms(size):
    """``log Ms_jk``, ``j, k < size``, from O(1) pieces (module docstring, dense evaluation).

    ``log Ms_jk = (log Ms_jj + log Ms_kk)/2 + log rho_jk`` with ``Ms_jj = a_{2j}/sqrt 2`` and
    ``log rho_jk = lgamma(c) - lgamma(c + d)/2 - lgamma(c - d)/2``, ``c = j + k + 1/2``, ``d = j - k``.
    Writing ``lgamma(y) = (y - 1/2) log y - y + log(2 pi)/2 + stirlerr(y)`` and ``u = d/c``, the second
    difference is ``-(c/2) [(1+u) log(1+u) + (1-u) log(1-u)] + log(1 - u**2)/4`` minus the second
    difference of ``stirlerr``; ``(1+u) log(1+u) + (1-u) log(1-u) = 2u**2 - (1+u) psi(u) - (1-u) psi(-u)``
    with ``psi(v) = v - log(1 + v)``, every piece O(u**2).
    """
    j = np.arange(size, dtype=float)
    log_diag = _log_half_binomial(2.0 * j) - 0.5 * math.log(2.0)
    row, col = j[:, None], j[None, :]
    centre = row + col + 0.5
    u = (row - col) / centre
    mixing = 2.0 * u * u - (1.0 + u) * log1pmx_neg(u) - (1.0 - u) * log1pmx_neg(-u)
    ends = stirlerr(2.0 * j + 0.5)  # at c + d = 2j + 1/2 and c - d = 2k + 1/2
    stirling = 0.5 * (ends[:, None] + ends[None, :]) - stirlerr(centre)
    log_rho = -0.5 * centre * mixing + 0.25 * np.log1p(-u * u) - stirling
    return 0.5 * (log_diag[:, None] + log_diag[None, :]) + log_rho


def _eigen_coefficients(sym, vectors):
    """Eigenvalues of the symmetric ``sym`` and the coefficients ``V^T vectors`` in its eigenbasis.

    Householder tridiagonalisation ``sym = Q J Q^T`` (LAPACK ``dsytrd``), ``Q^T vectors`` from the stored
    reflectors (``dormqr``, as ``dormtr`` does), then the eigen-decomposition of the tridiagonal ``J``:
    the ``O(M**3)`` back-transformation of a full eigenvector matrix is never formed.
    """
    size = sym.shape[0]
    lwork = int(lapack.dsytrd_lwork(size, lower=1)[0])
    packed, diag, offdiag, tau, _ = lapack.dsytrd(sym, lower=1, lwork=lwork)
    rotated = vectors.copy()
    if size > 1:
        args = ("L", "T", packed[1:, :-1], tau[: size - 1], vectors[1:])
        lwork = int(lapack.dormqr(*args, lwork=-1)[1][0])
        rotated[1:] = lapack.dormqr(*args, lwork=lwork)[0]
    lam, z = linalg.eigh_tridiagonal(diag, offdiag)
    return lam, z.T @ rotated


def _secular_params(lam, a, b):
    """Spectrum of ``diag(lam) - a b^T`` when ``a_i b_i >= 0``: ``eigvalsh(diag(lam) - c c^T)``.

    ``c = sqrt(a b)`` gives the same characteristic polynomial,
    ``prod(lam_i - x) (1 - sum a_i b_i / (lam_i - x))``.  Modes with ``lam_i`` below the parameter floor
    are left out: in exact arithmetic ``a_i b_i <= lam_i`` there (``sum a_i b_i / lam_i < 1``), so they
    carry only roots below the floor.  Float noise can make a tiny ``a_i b_i`` negative; it is set to 0.
    """
    keep = lam > _PARAM_FLOOR
    c = np.sqrt(np.clip(a[keep] * b[keep], 0.0, None))
    return linalg.eigvalsh(np.diag(lam[keep]) - np.outer(c, c))


def _dense_params(n):
    """Bernoulli parameters of ``(K - n mod 2)/2`` from the dense ``Ms`` (n >= 2)."""
    m = n // 2
    if n % 2 == 0:
        return linalg.eigvalsh(np.exp(_log_ms(m)))
    log_ms = _log_ms(m + 1)
    log_a = _log_half_binomial(np.arange(m + 1))
    border = np.exp(log_ms[:m, m])
    weights = np.exp(0.5 * (log_a[:m] - log_a[m]))
    lam, coef = _eigen_coefficients(np.exp(log_ms[:m, :m]), np.column_stack([border, weights]))
    return _secular_params(lam, coef[:, 0], coef[:, 1])


def _grid(n):
    """Node indices ``i`` (nodes ``0.35 i`` up to ``sqrt(n) + 10``) and trapezoid weights, even functions."""
    index = np.arange(int((math.sqrt(n) + _GRID_MARGIN) / _GRID_STEP) + 1, dtype=float)
    w = np.full(index.size, 2.0 * _GRID_STEP)
    w[0] = _GRID_STEP
    return index, w


def _split(a):
    """Veltkamp split ``a = high + low`` into halves of 26 bits (``high * high`` is exact)."""
    c = _SPLITTER * a
    high = c - (c - a)
    return high, a - high


def _step_sq_times(k):
    """``h**2 k`` for integer-valued ``k`` as an unevaluated sum ``(hi, lo)`` (Dekker's exact product).

    Near the spectral edge ``Q(N, t)`` changes by ``0.4 N**-0.5`` per unit of ``t``, so the rounding of a
    plain product ``x * y ~ N`` alone would perturb kernel entries by ~4e-14 at ``N = 10**6``; the
    first-order correction with ``lo`` removes that.
    """
    hi = _STEP_SQ * k
    c_hi, c_lo = _split(_STEP_SQ)
    k_hi, k_lo = _split(k)
    err = ((c_hi * k_hi - hi) + c_hi * k_lo + c_lo * k_hi) + c_lo * k_lo
    return hi, err + _STEP_SQ_LO * k


def _upper_gamma(a, t):
    """Regularised upper incomplete gamma ``Q(a, t)`` accurate to about 1e-17 absolute.

    scipy's ``gammaincc`` (and ``gammainc``) lose up to 1e-11 absolute for ``a >~ 3e5`` between about
    4.5 and 15 standard deviations below the mean, where the lower-tail series is cut short
    (measured against mpmath).  There ``P = pi_a(t) 1F1(1; a + 1; t)`` is used instead: 1e-13 relative
    on values below 1e-5.  Below 10 standard deviations ``P < 1e-20`` and either form is exact enough.
    """
    q = special.gammaincc(a, t)
    z = (t - a) / math.sqrt(a)
    redo = (z > -10.0) & (z < -4.4)
    t_redo = t[redo]
    q[redo] = 1.0 - np.exp(log_poisson(a, t_redo)) * special.hyp1f1(1.0, a + 1.0, t_redo)
    return q


def _inverse_shift_mean(n_even, t):
    """``E[1/(N + X)]``, ``X ~ Poisson(t)``, by 48-node Gauss-Laguerre.

    ``E[1/(N+X)] = int_0^1 s**(N-1) exp(-t(1-s)) ds``; with ``s = exp(-z/(N + t))`` it is
    ``int_0^inf e**-z exp(t phi(z/(N + t))) dz / (N + t)`` with ``phi(a) = a - 1 + e**-a >= 0``, an
    integrand close to 1 where the Laguerre weight lives.
    """
    nodes, weights = special.roots_laguerre(_LAGUERRE_NODES)
    scale = n_even + t
    total = np.zeros_like(t)
    for z, wz in zip(nodes, weights):
        arg = z / scale
        total += wz * np.exp(t * (np.expm1(-arg) + arg))
    return total / scale


def _kernel(n_even, i, j):
    """``T_N(x_i, x_j)`` at the nodes ``x = 0.35 i`` (module docstring), ``N = n_even``.

    ``Q(N, t) + exp(-2t)`` is corrected to first order for the low part of ``t = x_i x_j``
    (``dQ/dt = -pi_{N-1}(t)``); ``R_N = t pi_{N-1}(t) E[1/(N+X)]`` varies too slowly to need it.
    """
    t, t_lo = _step_sq_times(i * j)
    density = np.exp(log_poisson(n_even - 1.0, t))
    upper = _upper_gamma(n_even, t) - density * t_lo
    reflected = np.exp(-2.0 * t) * (1.0 - 2.0 * t_lo)
    tail = t * density * _inverse_shift_mean(n_even, t)
    gauss = np.exp(-0.5 * _STEP_SQ * (i - j) ** 2)
    return _INV_SQRT_2PI * gauss * 0.5 * (upper + reflected - tail)


def _nystrom_band(n_even, index, w):
    """Lower band storage of ``W^(1/2) T_N W^(1/2)`` on the grid (``band[d, j] = K[j + d, j]``)."""
    size = index.size
    reach = min(int(math.ceil(_BAND_REACH / _GRID_STEP)), size - 1)
    offsets = np.arange(reach + 1)[:, None]
    cols = np.arange(size)[None, :]
    rows = np.minimum(cols + offsets, size - 1)
    band = _kernel(n_even, index[rows], index[cols]) * np.sqrt(w[rows] * w[cols])
    return np.where(cols + offsets < size, band, 0.0)


def _band_to_dense(band):
    """Full symmetric matrix from lower band storage."""
    size = band.shape[1]
    dense = np.zeros((size, size))
    for d in range(band.shape[0]):
        idx = np.arange(size - d)
        dense[idx + d, idx] = band[d, : size - d]
        dense[idx, idx + d] = band[d, : size - d]
    return dense


def _rank_one_vectors(m, index):
    """``Q(m, x**2/2)`` and ``(x/2) g_{m+1/2}(x**2/2)`` at the nodes, odd ``n = 2m + 1``.

    Both are corrected to first order for the low part of ``x**2/2`` as in :func:`_kernel`;
    ``d log g_{m+1/2}(s)/ds = (m - 1/2)/s - 1``.
    """
    s, s_lo = _step_sq_times(index * index)
    s, s_lo = 0.5 * s, 0.5 * s_lo
    left = _upper_gamma(float(m), s) - np.exp(log_poisson(m - 1.0, s)) * s_lo
    slope = np.divide(m - 0.5, s, out=np.zeros_like(s), where=s > 0) - 1.0
    right = 0.5 * _GRID_STEP * index * np.exp(log_poisson(m - 0.5, s)) * (1.0 + slope * s_lo)
    return left, right


def _nystrom_params(n):
    """Bernoulli parameters of ``(K - n mod 2)/2`` from the Nystrom discretisation of ``T_N``."""
    index, w = _grid(n)
    m = n // 2
    band = _nystrom_band(2.0 * m, index, w)
    if n % 2 == 0:
        return linalg.eigvals_banded(band, lower=True)
    left, right = _rank_one_vectors(m, index)
    lam, coef = _eigen_coefficients(_band_to_dense(band), np.sqrt(w)[:, None] * np.column_stack([left, right]))
    return _secular_params(lam, coef[:, 0], coef[:, 1])


@functools.lru_cache(maxsize=16)
def _bernoulli_params(n):
    """Sorted (descending, read-only) parameters of the Poisson-binomial ``(K - n mod 2)/2``."""
    if n == 1:
        params = np.empty(0)
    elif n <= _DENSE_MAX_N:
        params = _dense_params(n)
    else:
        params = _nystrom_params(n)
    params = np.sort(np.clip(params[params > _PARAM_FLOOR], 0.0, 1.0))[::-1]
    params.flags.writeable = False
    return params


def _poisson_binomial(params):
    """pmf of a sum of independent Bernoulli(``params``) by the positive-term recursion.

    ``P_i(k) = (1 - p_i) P_{i-1}(k) + p_i P_{i-1}(k - 1)``: every term is non-negative, so each entry
    keeps full relative accuracy down to the smallest representable number.
    """
    pmf = np.zeros(params.size + 1)
    pmf[0] = 1.0
    for i, p in enumerate(params):
        head = pmf[: i + 1].copy()
        pmf[: i + 1] *= 1.0 - p
        pmf[1 : i + 2] += p * head
    return pmf


def real_count_pmf(n):
    """Exact distribution of the number of real eigenvalues of an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    ndarray of float, shape (n + 1,)
        ``pmf[k] = P(K_n = k)``; exact zeros where ``k`` and ``n`` differ in parity.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1.

    See Also
    --------
    real_count_mean, real_count_var

    Notes
    -----
    ``(K_n - n mod 2)/2`` is Poisson-binomial with parameters from one symmetric eigen-solve (module
    docstring): the dense matrix ``Ms`` for ``n <= 400``, the Nystrom discretisation of its kernel
    above (``n = 10**6`` takes well under a second for even ``n``, a few seconds for odd ``n``).
    Entries below about 1e-20 in the far upper tail are not resolved in float64;
    ``P(K_n = n) = 2**(-n(n-1)/4)`` (Edelman 1997) is one such entry for large ``n``.

    The eigen-solves use the BLAS thread pool as configured.  On a machine whose cores are busy with
    other work, two BLAS threads can be many times slower than one for these mid-sized matrices;
    limiting BLAS to one thread (``threadpoolctl.threadpool_limits(1)``) around the call avoids that
    (see ``benchmarks/bench_real_count.py``).

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.ginibre import real_count_pmf
    >>> pmf = real_count_pmf(4)
    >>> np.round(pmf, 6)  # P(K=4) = 1/8, P(K=2) = -1/4 + 11 sqrt(2)/16
    array([0.152728, 0.      , 0.722272, 0.      , 0.125   ])
    >>> pmf = real_count_pmf(100)
    >>> print(f"mean {pmf @ np.arange(101):.6f}, P(K=0) {pmf[0]:.6e}")
    mean 8.448906, P(K=0) 3.272944e-05
    """
    n = check_size(n)
    counts = _poisson_binomial(_bernoulli_params(n))
    pmf = np.zeros(n + 1)
    parity = n % 2
    pmf[parity : parity + 2 * counts.size : 2] = counts
    return pmf


def real_count_var(n):
    """Variance of the number of real eigenvalues of an ``n x n`` real Ginibre matrix.

    Parameters
    ----------
    n : int
        Matrix size, ``n >= 1``.

    Returns
    -------
    float
        ``Var K_n = 4 sum p_i (1 - p_i)`` over the Poisson-binomial parameters of ``(K_n - n mod 2)/2``.

    Raises
    ------
    ValueError
        If ``n`` is not an integer >= 1.

    See Also
    --------
    real_count_mean, real_count_pmf

    Notes
    -----
    The parameters come from the same eigen-solve as :func:`real_count_pmf` (and are cached for the
    last few ``n``).  For large ``n``, ``Var K_n / E K_n -> 2 - sqrt 2`` (Forrester & Nagao 2007).

    Examples
    --------
    >>> from nullspec.ginibre import real_count_var
    >>> round(real_count_var(10), 10)
    1.7083846455
    """
    params = _bernoulli_params(check_size(n))
    return 4.0 * math.fsum(params * (1.0 - params))
