"""High-precision reference values for nullspec.ginibre.real_count (generated once, read by the tests).

Run from the repository root:

    python tests/reference/real_count_mpmath.py

It writes ``tests/reference/real_count_mpmath.json``.  Everything is computed with mpmath at
``dps = 0.75 n + 40`` decimal digits (enough to resolve every Bernoulli parameter) directly from the
defining formulas, independently of the package's float code:

- even n: ``Ms_jk = Gamma(j+k+1/2) / sqrt(2 pi (2j)! (2k)!)``, ``j, k < n/2`` (Edelman 1997);
  ``mu = eig(Ms)`` and ``K/2 ~ PoissonBinomial(mu)``;
- odd n = 2m+1: ``C = Ms_m - s t^T`` with ``s_j = Gamma(j+m+1/2)/sqrt(2 pi (2j)! (2m)!)`` and
  ``t_j = sqrt(Gamma(j+1/2) Gamma(m+1) / (Gamma(j+1) Gamma(m+1/2)))``; ``nu`` from the secular form
  ``eig(diag(lambda) - c c^T)``, ``c = sqrt((V^T s)(V^T t))``, after checking ``(V^T s)_i (V^T t)_i > 0``.

Each spectrum is checked against determinants before it is used: ``det(I + (z**2 - 1) M)`` equals
``prod(1 + (z**2 - 1) p_i)`` at ``z = 1/2`` (M = Ms or C); for odd n the same value also equals Edelman's
bordered-determinant ratio ``det X(z) / (z det X(1))``; and ``prod mu = 2**(-n(n-1)/4)`` (Edelman 1997).
The pmf is the Poisson-binomial recursion in mpmath.  Values are stored as decimal strings with 25
significant digits (many are far below the float64 range).  For each entry the file also stores its
sensitivity ``S_k`` (see ``sensitivity``), from which the tests derive their float64 tolerance.
"""

import json
import pathlib
import time

import mpmath as mp

SIZES = (10, 11, 50, 51, 200, 201)
OUT = pathlib.Path(__file__).with_name("real_count_mpmath.json")


def ms_matrix(size):
    """The symmetric matrix Ms of the even case, ``size x size``."""
    return mp.matrix([[mp.gamma(j + k + mp.mpf(1) / 2)
                       / mp.sqrt(2 * mp.pi * mp.factorial(2 * j) * mp.factorial(2 * k))
                       for k in range(size)] for j in range(size)])


def generating_det(mat, z):
    """``det(I + (z**2 - 1) mat)``."""
    size = mat.rows
    return mp.det(mp.eye(size) + (z * z - 1) * mat)


def bordered_ratio(m, z):
    """Edelman's bordered-determinant form of ``E[z**K] / z`` for n = 2m + 1 (theory sheet, section 2.2).

    ``X(z)`` is ``(m+1) x (m+1)``: columns ``k < m`` hold ``r_j delta_jk + (z**2 - 1) 2 Gamma(j+k+1/2)`` with
    ``r_j = 2 sqrt(2 pi) (2j)!`` (``r_m`` = 0), the last column ``z 2**(j+1/2) Gamma(j+1/2)``.  Row ``j`` is
    divided by ``2 sqrt(2 pi (2j)!)`` and column ``k < m`` by ``sqrt((2k)!)`` (the same for every z, so
    the ratio is unchanged) to keep all entries O(1) for mpmath's pivoting.
    """
    def scaled(zz):
        x = mp.matrix(m + 1, m + 1)
        for j in range(m + 1):
            row_scale = 2 * mp.sqrt(2 * mp.pi * mp.factorial(2 * j))
            for k in range(m):
                r = 2 * mp.sqrt(2 * mp.pi) * mp.factorial(2 * j) if j == k else 0
                x[j, k] = (r + (zz * zz - 1) * 2 * mp.gamma(j + k + mp.mpf(1) / 2)) / (
                    row_scale * mp.sqrt(mp.factorial(2 * k)))
            x[j, m] = zz * mp.power(2, j + mp.mpf(1) / 2) * mp.gamma(j + mp.mpf(1) / 2) / row_scale
        return x
    return mp.det(scaled(z)) / (z * mp.det(scaled(mp.mpf(1))))


def even_params(n):
    ms = ms_matrix(n // 2)
    mu = sorted(mp.eigsy(ms, eigvals_only=True), reverse=True)
    z = mp.mpf(1) / 2
    check_product(generating_det(ms, z), mu, z)
    edelman = mp.power(2, -mp.mpf(n * (n - 1)) / 4)
    # eigsy resolves each mu to about 10**-dps absolute, so the product has relative error ~ sum 1/mu
    tolerance = mp.mpf(10) ** (-(mp.mp.dps - 5)) * mp.fsum(1 / p for p in mu)
    assert abs(mp.fprod(mu) / edelman - 1) < tolerance, "prod mu != 2^(-n(n-1)/4)"
    return mu


def odd_params(n):
    m = n // 2
    big = ms_matrix(m + 1)
    ms = big[:m, :m]
    s = mp.matrix([big[j, m] for j in range(m)])
    t = mp.matrix([mp.sqrt(mp.gamma(j + mp.mpf(1) / 2) * mp.gamma(m + 1)
                           / (mp.gamma(j + 1) * mp.gamma(m + mp.mpf(1) / 2))) for j in range(m)])
    lam, vecs = mp.eigsy(ms)
    a, b = vecs.T * s, vecs.T * t
    assert all(a[i] * b[i] > 0 for i in range(m)), "a_i b_i > 0 fails"
    c = mp.matrix([mp.sqrt(a[i] * b[i]) for i in range(m)])
    secular = mp.diag([lam[i] for i in range(m)]) - c * c.T
    nu = sorted(mp.eigsy(secular, eigvals_only=True), reverse=True)
    z = mp.mpf(1) / 2
    cmat = ms - s * t.T
    check_product(generating_det(cmat, z), nu, z)
    check_product(bordered_ratio(m, z), nu, z)
    return nu


def check_product(value, params, z):
    prod = mp.fprod(1 + (z * z - 1) * p for p in params)
    assert abs(value / prod - 1) < mp.mpf(10) ** (-(mp.mp.dps - 20)), "determinant check fails"


def poisson_binomial(params):
    pmf = [mp.mpf(1)]
    for p in params:
        nxt = [mp.mpf(0)] * (len(pmf) + 1)
        for k, v in enumerate(pmf):
            nxt[k] += (1 - p) * v
            nxt[k + 1] += p * v
        pmf = nxt
    return pmf


def sensitivity(params, counts):
    """``S_k = sum_i |P^(-i)(k-1) - P^(-i)(k)| / P(k)``: the first-order relative change of ``P(k)`` per
    unit absolute change of every parameter (``P^(-i)`` is the pmf without parameter ``i``)."""
    total = [mp.mpf(0)] * len(counts)
    for i in range(len(params)):
        rest = poisson_binomial(params[:i] + params[i + 1:]) + [mp.mpf(0)]
        for k in range(len(counts)):
            below = rest[k - 1] if k > 0 else mp.mpf(0)
            total[k] += abs(below - rest[k])
    return [t / c for t, c in zip(total, counts)]


def reference(n):
    """Parameters, pmf, sensitivities, mean and variance for size ``n`` at ``0.75 n + 40`` digits."""
    with mp.workdps(int(0.75 * n) + 40):
        return _reference_at_current_precision(n)


def _reference_at_current_precision(n):
    params = even_params(n) if n % 2 == 0 else odd_params(n)
    counts = poisson_binomial(params)
    pmf = {str(n % 2 + 2 * j): mp.nstr(v, 25) for j, v in enumerate(counts)}
    sens = {str(n % 2 + 2 * j): mp.nstr(v, 3) for j, v in enumerate(sensitivity(params, counts))}
    mean = n % 2 + 2 * mp.fsum(params)
    var = 4 * mp.fsum(p * (1 - p) for p in params)
    return {"dps": mp.mp.dps, "params": [mp.nstr(p, 25) for p in params], "pmf": pmf, "sensitivity": sens,
            "mean": mp.nstr(mean, 25), "var": mp.nstr(var, 25)}


def main():
    out = {"generator": "tests/reference/real_count_mpmath.py", "mpmath": mp.__version__}
    for n in SIZES:
        start = time.perf_counter()
        out[str(n)] = reference(n)
        print(f"n = {n}: {time.perf_counter() - start:.1f} s")
    OUT.write_text(json.dumps(out, indent=1) + "\n")


if __name__ == "__main__":
    main()
