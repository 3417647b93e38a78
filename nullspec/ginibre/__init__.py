"""Exact finite-N results for the real Ginibre ensemble.

The real Ginibre ensemble is the law of an ``n x n`` real matrix with i.i.d. N(0, 1) entries.  This
subpackage evaluates, with no simulation and for ``n`` from 1 up to about ``10**6``:

- the number of real eigenvalues: its mean, variance and full probability mass function
  (:func:`real_count_mean`, :func:`real_count_var`, :func:`real_count_pmf`);
- the mean densities of the real and of the non-real eigenvalues
  (:func:`real_density`, :func:`complex_density`);
- expected counts of eigenvalues by modulus (:func:`expected_within`, :func:`expected_outside`);
- the law of the spectral radius (:func:`spectral_radius_sf`, :func:`spectral_radius_isf`).

All functions take the matrix size ``n`` and arguments in the units of unit-variance entries (the
bulk of the spectrum fills the disk of radius ``sqrt(n)``).  The layer is pure: numpy and
scipy.special only, no I/O, no randomness.
"""

from .real_count import real_count_mean, real_count_pmf, real_count_var
from .densities import complex_density, real_density
from .radial import expected_outside, expected_within, modulus_cdf
from .edge import spectral_radius_bound, spectral_radius_isf, spectral_radius_sf

__all__ = [
    "real_count_mean",
    "real_count_var",
    "real_count_pmf",
    "real_density",
    "complex_density",
    "expected_within",
    "expected_outside",
    "modulus_cdf",
    "spectral_radius_sf",
    "spectral_radius_isf",
    "spectral_radius_bound",
]
