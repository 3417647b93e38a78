"""The spectral statistics: pure functions of a :class:`~nullspec.spectrum.Spectrum`.

- ``real_count``: the number K of real eigenvalues (exact-zero rule, see :mod:`nullspec.spectrum`).
  Too many real eigenvalues point to reciprocal coupling (A_ij ~ A_ji), too few to antagonistic
  coupling (A_ij ~ -A_ji);
- ``radial``: the Cramér–von Mises distance between the scaled moduli ``|z_i|`` and the exact
  finite-N law of the modulus of a real Ginibre eigenvalue, :func:`nullspec.ginibre.modulus_cdf`
  (not the asymptotic uniform disk: at finite N the edge is blurred).  It reacts to a radial profile
  that is not the null's, e.g. from heterogeneous row or column scales; :func:`radial_shift` gives
  its direction;
- ``edge``: the spectral radius ``max |z_i|``, large when a low-rank signal, modules or a common
  mean push eigenvalues beyond the bulk edge at 1.

:func:`reciprocity` is a non-spectral diagnostic of the same matrix: the correlation of the mirror
pairs ``(A_ij, A_ji)``, the direct estimate of what ``real_count`` detects.

The PIT values ``u_i = F(|z_i|)`` of the eigenvalues are not independent, so the classical
Cramér–von Mises table does not apply (nor scipy's p-value): ``radial`` is calibrated by the nulls.
No function here does I/O or draws random numbers.
"""

from types import MappingProxyType

import numpy as np
from scipy import stats

from ._validation import check_names, check_probability, check_square_matrix
from .ginibre import modulus_cdf

__all__ = [
    "real_count",
    "edge",
    "radial",
    "radial_shift",
    "reciprocity",
    "reciprocity_interval",
    "STATISTICS",
    "evaluate",
]


def real_count(spec):
    """Number of real eigenvalues, ``#{i : Im lambda_i == 0}``.

    Parameters
    ----------
    spec : Spectrum
        The spectrum of the standardised matrix.

    Returns
    -------
    int
        K, with ``K = N (mod 2)``.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> from nullspec.statistics import real_count
    >>> real_count(compute_spectrum(np.array([[0.0, -1, 0], [1, 0, 0], [0, 0, 1]])))
    1
    """
    return spec.real_count


def edge(spec):
    """Spectral radius of the scaled eigenvalues, ``max_i |z_i|``.

    Parameters
    ----------
    spec : Spectrum
        The spectrum of the standardised matrix.

    Returns
    -------
    float
        rho; about 1 for i.i.d. noise (the circular-law edge), larger with outliers.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> from nullspec.statistics import edge
    >>> edge(compute_spectrum(np.diag([1.0, -4.0, 2.0, 0.0])))
    2.0
    """
    return float(spec.moduli.max())


def _modulus_pit(spec):
    """``u_i = F(|z_i|)``, the probability integral transforms of the moduli under the exact law."""
    return modulus_cdf(spec.moduli, spec.n)


def radial(spec):
    """Cramér–von Mises distance between the moduli ``|z_i|`` and their exact finite-N law.

    Parameters
    ----------
    spec : Spectrum
        The spectrum of the standardised matrix.

    Returns
    -------
    float
        ``W^2 = sum_i (u_(i) - (2i - 1) / (2N))^2 + 1 / (12 N)`` with ``u_(1) <= ... <= u_(N)`` the
        sorted ``u_i = F(|z_i|)``, ``F = nullspec.ginibre.modulus_cdf(., N)``.  Larger means further
        from the null's radial profile.

    Notes
    -----
    This is the one-sample Cramér–von Mises statistic of the ``u_i`` against the uniform law (as in
    ``scipy.stats.cramervonmises(u, "uniform").statistic``).  Its classical null distribution
    assumes independent observations, which eigenvalues are not: calibrate ``radial`` with a null,
    never with that table.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> from nullspec.standardize import standardize
    >>> from nullspec.statistics import radial
    >>> rng = np.random.default_rng(3)
    >>> noise = rng.standard_normal((200, 200))
    >>> column_scales = np.linspace(0.1, 3.0, 200)  # heterogeneous columns: not i.i.d.
    >>> plain = radial(compute_spectrum(standardize(noise).matrix))
    >>> uneven = radial(compute_spectrum(standardize(noise * column_scales).matrix))
    >>> bool(plain < 0.5 < uneven)
    True
    """
    u = np.sort(_modulus_pit(spec))
    n = u.size
    expected = (2.0 * np.arange(1, n + 1) - 1.0) / (2.0 * n)
    return float(np.sum((u - expected) ** 2) + 1.0 / (12.0 * n))


def radial_shift(spec):
    """Signed radial effect: the mean PIT of the moduli minus 1/2.

    Parameters
    ----------
    spec : Spectrum
        The spectrum of the standardised matrix.

    Returns
    -------
    float
        ``mean_i F(|z_i|) - 1/2``, in (-1/2, 1/2); about 0 under the null.  Negative: the moduli are
        concentrated towards the centre; positive: spread out towards (or beyond) the edge.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> from nullspec.statistics import radial_shift
    >>> rng = np.random.default_rng(3)
    >>> radial_shift(compute_spectrum(0.5 * rng.standard_normal((100, 100)))) < 0
    True
    """
    return float(np.mean(_modulus_pit(spec)) - 0.5)


def _mirror_pairs(matrix):
    """The entries ``A_ij`` and ``A_ji`` over ``i < j``, as two vectors."""
    a = check_square_matrix(matrix, "matrix", minimum=3)
    upper = np.triu_indices(a.shape[0], k=1)
    return a[upper], a.T[upper]


def _pearson(x, y):
    """scipy's Pearson result, or None when a side is constant (the correlation is undefined)."""
    if np.ptp(x) == 0 or np.ptp(y) == 0:
        return None
    return stats.pearsonr(x, y)


def reciprocity(matrix):
    """Correlation of the mirror entries, ``corr(A_ij, A_ji)`` over the pairs ``i < j``.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        Real, finite, square matrix (N >= 3); raw or standardised (the value is the same).

    Returns
    -------
    float
        Pearson's r over the ``N (N - 1) / 2`` pairs; NaN when the entries above or below the
        diagonal are all equal (e.g. a triangular matrix), where it is undefined.  Positive:
        reciprocal coupling (more real eigenvalues, an elongated spectrum); negative: antagonistic.

    Notes
    -----
    A non-spectral diagnostic: it estimates directly the ``tau`` of the elliptic law
    (``corr(A_ij, A_ji) = tau``, THEORY.md §7).  Under the i.i.d. null it is about 0.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.statistics import reciprocity
    >>> rng = np.random.default_rng(0)
    >>> g = rng.standard_normal((100, 100))
    >>> round(reciprocity(g + g.T), 6)
    1.0
    """
    result = _pearson(*_mirror_pairs(matrix))
    return float("nan") if result is None else float(result.statistic)


def reciprocity_interval(matrix, confidence=0.95):
    """Fisher-z confidence interval for :func:`reciprocity`.

    Parameters
    ----------
    matrix : array_like, shape (N, N)
        Real, finite, square matrix (N >= 3).
    confidence : float, default=0.95
        Confidence level, in (0, 1).

    Returns
    -------
    tuple of float
        ``(low, high)`` from ``scipy.stats.pearsonr(...).confidence_interval``, i.e.
        ``tanh(atanh(r) -+ z_{(1+c)/2} / sqrt(n_pairs - 3))`` with ``n_pairs = N (N - 1) / 2``;
        ``(-1.0, 1.0)`` for N = 3 (three pairs carry no interval) and ``(nan, nan)`` when the
        correlation is undefined.

    Notes
    -----
    The interval treats the pairs as independent draws of a bivariate normal law.  Entries that
    share a row or a column (a row effect, a common scale) are not independent, and the interval is
    then too narrow; read it as a guide, not as a calibrated test.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.statistics import reciprocity_interval
    >>> rng = np.random.default_rng(0)
    >>> g = rng.standard_normal((60, 60))
    >>> low, high = reciprocity_interval(g + 0.5 * g.T)  # corr(A_ij, A_ji) = 1 / 1.25 = 0.8
    >>> round(low, 2), round(high, 2)
    (0.76, 0.8)
    """
    confidence = check_probability(confidence, "confidence")
    result = _pearson(*_mirror_pairs(matrix))
    if result is None:
        return (float("nan"), float("nan"))
    ci = result.confidence_interval(confidence_level=confidence)
    return (float(ci.low), float(ci.high))


STATISTICS = MappingProxyType({"real_count": real_count, "radial": radial, "edge": edge})


def evaluate(spec, names):
    """Evaluate several statistics of one spectrum at once.

    Parameters
    ----------
    spec : Spectrum
        The spectrum of the standardised matrix.
    names : sequence of str
        Keys of :data:`STATISTICS` ("real_count", "radial", "edge"), in the order wanted.

    Returns
    -------
    ndarray of float64, shape (len(names),)
        The statistics in the order of ``names``.

    Raises
    ------
    TypeError, ValueError
        If ``names`` is a bare string, empty, or holds an unknown name.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.spectrum import compute_spectrum
    >>> from nullspec.statistics import evaluate
    >>> evaluate(compute_spectrum(np.diag([3.0, 1.0, -1.0, 0.5])), ("edge", "real_count")).tolist()
    [1.5, 4.0]
    """
    names = check_names(names, "names", tuple(STATISTICS))
    return np.array([STATISTICS[name](spec) for name in names], dtype=np.float64)
