"""mpmath reference values for nullspec.ginibre.densities, .radial and .edge.

Run from the repository root::

    python tests/reference/ginibre_radial_mpmath.py

It writes ``ginibre_radial_mpmath.json`` beside this file (do not edit that file by hand).  The formulas
are typed here again from THEORY.md sections 3-5, in mpmath at 50 digits, independently of the package
(this script imports nothing from nullspec; the tests load its functions from this file):

- real density  rho_r(x) = Q(n-1, x^2)/sqrt(2 pi) + |x|^(n-1) e^(-x^2/2) / (2^(n/2) Gamma(n/2)) P((n-1)/2, x^2/2);
- non-real density  rho_c(x+iy) = sqrt(2/pi) |y| e^(2y^2) erfc(sqrt(2)|y|) Q(n-1, x^2+y^2);
- radial parts  2 rho_r(s)  and  2 s (1 - e^(2s^2) erfc(sqrt(2) s)) Q(n-1, s^2), integrated with
  mpmath's Gauss-Legendre rule on sub-intervals of width 1/4; each integral is repeated with
  tanh-sinh and the larger relative difference of the two is stored as ``quad_rel_diff``.

The tail radii were chosen where G_real is about 1e-20 and 1e-25; beyond r + 16 the integrands are
below exp(-500) of their value at r, so the tail integrals stop there.
"""

import json
import pathlib

import mpmath as mp
import numpy as np
from scipy import special

OUT = pathlib.Path(__file__).with_name("ginibre_radial_mpmath.json")

TAIL_RADII = {10: (10.89, 11.96), 100: (17.1, 18.05), 1000: (38.37, 39.25), 10000: (106.62, 107.45)}
# (n, r) pairs where F and G are both O(1) or larger: a bulk and an edge check.
BULK_RADII = ((20, 3.0), (20, 5.0), (100, 5.0), (100, 11.0), (100, 13.0), (1000, 1000**0.5))
REAL_POINTS = ((1000, 20.0), (1000, 32.0), (1000, 35.0), (100000, 316.0), (100000, 320.0))
COMPLEX_POINTS = ((1000, 10.0, 10.0), (1000, 30.0, 5.0), (1000, 0.3, 0.1), (100000, 300.0, 20.0))


def eks_mean(n):
    """E K_n = 1/2 + sqrt(2) Gamma(n + 1/2)/(Gamma(n) sqrt(pi)) 2F1(1, -1/2; n; 1/2), in float64.

    Edelman, Kostlan & Shub 1994 (quoted from memory; THEORY.md section 1 verifies it to 1e-11 against
    the exact sums), with scipy.special.hyp2f1; ``poch(n, 1/2)`` is the Gamma ratio without the
    cancellation of gammaln differences.  Used by the tests, not written to the JSON.
    """
    return 0.5 + np.sqrt(2.0 / np.pi) * special.poch(n, 0.5) * special.hyp2f1(1.0, -0.5, n, 0.5)


def q_upper(a, t):
    """Regularised upper incomplete gamma Q(a, t)."""
    return mp.gammainc(a, t, mp.inf, regularized=True)


def real_density(x, n):
    """THEORY.md section 3 (corrected prefactor 1/2)."""
    x = mp.mpf(x)
    t = x * x
    second = abs(x) ** (n - 1) * mp.exp(-t / 2) / (mp.mpf(2) ** (mp.mpf(n) / 2) * mp.gamma(mp.mpf(n) / 2))
    return q_upper(n - 1, t) / mp.sqrt(2 * mp.pi) + second * mp.gammainc(mp.mpf(n - 1) / 2, 0, t / 2, regularized=True)


def complex_density(x, y, n):
    """THEORY.md section 4, right-hand (unnormalised-sum) form rewritten with the normalised Q."""
    x, y = mp.mpf(x), abs(mp.mpf(y))
    return mp.sqrt(2 / mp.pi) * y * mp.exp(2 * y * y) * mp.erfc(mp.sqrt(2) * y) * q_upper(n - 1, x * x + y * y)


def radial_real(s, n):
    return 2 * real_density(s, n)


def radial_nonreal(s, n):
    s = mp.mpf(s)
    return 2 * s * (1 - mp.exp(2 * s * s) * mp.erfc(mp.sqrt(2) * s)) * q_upper(n - 1, s * s)


def integrate(f, a, b, n):
    """Integral of f(., n) over [a, b] and the relative difference between two quadrature rules."""
    a, b = mp.mpf(a), mp.mpf(b)
    pts = mp.linspace(a, b, max(1, int(mp.ceil((b - a) * 4))) + 1)
    gl = mp.quad(lambda s: f(s, n), pts, method="gauss-legendre")
    ts = mp.quad(lambda s: f(s, n), pts, method="tanh-sinh")
    return gl, abs(gl / ts - 1) if ts != 0 else mp.mpf(0)


def radial_record(n, r, upper):
    """G parts over [r, upper] (or F parts over [0, r] when upper is None) with their quadrature check."""
    a, b = (0, r) if upper is None else (r, upper)
    real, d1 = integrate(radial_real, a, b, n)
    nonreal, d2 = integrate(radial_nonreal, a, b, n)
    return {
        "n": n,
        "r": r,
        "real": mp.nstr(real, 20),
        "nonreal": mp.nstr(nonreal, 20),
        "all": mp.nstr(real + nonreal, 20),
        "upper": mp.nstr(real + nonreal / 2, 20),
        "quad_rel_diff": mp.nstr(max(d1, d2), 3),
    }


def main():
    mp.mp.dps = 50  # set here, not at import, so tests importing this module keep their own precision
    tail = [radial_record(n, r, r + 16) for n, radii in TAIL_RADII.items() for r in radii]
    outside = [radial_record(n, r, n**0.5 + 30) for n, r in BULK_RADII]
    within = [radial_record(n, r, None) for n, r in BULK_RADII]
    real = [{"n": n, "x": x, "value": mp.nstr(real_density(x, n), 20)} for n, x in REAL_POINTS]
    cplx = [{"n": n, "x": x, "y": y, "value": mp.nstr(complex_density(x, y, n), 20)} for n, x, y in COMPLEX_POINTS]
    doc = {
        "generated_by": "tests/reference/ginibre_radial_mpmath.py (mpmath, 50 digits)",
        "tail_outside": tail,
        "bulk_outside": outside,
        "bulk_within": within,
        "real_density": real,
        "complex_density": cplx,
    }
    OUT.write_text(json.dumps(doc, indent=1) + "\n")


if __name__ == "__main__":
    main()
