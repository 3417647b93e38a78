"""Calibration gain: the size of naive asymptotic rules against nullspec's exact finite-N calibration.

Under i.i.d. Gaussian entries (with an arbitrary mean and scale), at N = 10, 20, 50, the same
matrices are judged by

- the naive edge rule a practitioner would take from the circular law: reject when any eigenvalue
  of the centred matrix has ``|lambda| > sigma_hat sqrt(N)``, i.e. the scaled spectral radius
  ``rho > 1`` (the rule has no level: its size is the same at every alpha);
- the naive real-count rule: ``E_N ~ sqrt(2N/pi)`` (Edelman-Kostlan-Shub 1994, leading term) and
  a normal approximation with variance ``(2 - sqrt 2) sqrt(2N/pi)`` (Forrester-Nagao 2007, leading
  term; both quoted from memory, as in THEORY.md sections 1-2), two-sided;
- nullspec's exact Gaussian null: the exact finite-N pmf of the real count and the finite-N law of
  the spectral radius (``spectral_test(null="gaussian")``).

The naive rules use the statistics nullspec computed for the same matrix (the standardised spectral
radius and the exact-zero real count), so only the calibration differs.

Usage::

    python validation/calibration_gain.py [--n-jobs 2]   # resumable: finished sizes are skipped
"""

import argparse
import math

import numpy as np
from scipy import stats

import nullspec
from nullspec.calibration import discrete_pvalue
from nullspec.ginibre import real_count_mean, real_count_pmf

import _common as common

ROOT_SEED = 20250703
SIZES = (10, 20, 50)
REPLICATIONS = 10000
RULES = ("naive_edge", "exact_edge", "naive_real_count", "exact_real_count")


def naive_real_count_pvalue(k, n):
    """Two-sided normal-approximation p-value of a real count k with the leading-order moments.

    Examples
    --------
    >>> round(naive_real_count_pvalue(round(math.sqrt(2 * 50 / math.pi)), 50), 2)
    0.84
    """
    mean = math.sqrt(2.0 * n / math.pi)
    sd = math.sqrt((2.0 - math.sqrt(2.0)) * mean)
    return float(2.0 * stats.norm.sf(abs(k - mean) / sd))


def real_count_sizes(n, alpha):
    """Exact sizes of the two real-count rules under the Gaussian null, summed over the exact pmf.

    The real count is discrete, so no rule attains size alpha exactly; summing the exact pmf of K over
    the counts a rule rejects gives the size the Monte Carlo estimate is checked against.

    Examples
    --------
    >>> {rule: round(size, 4) for rule, size in real_count_sizes(10, 0.05).items()}
    {'exact_real_count': 0.0004, 'naive_real_count': 0.0883}
    """
    pmf = real_count_pmf(n)
    ks = np.arange(n % 2, n + 1, 2)
    exact = discrete_pvalue(pmf, ks, "two-sided")
    naive = np.array([naive_real_count_pvalue(k, n) for k in ks])
    return {"exact_real_count": float(pmf[ks][exact <= alpha].sum()),
            "naive_real_count": float(pmf[ks][naive <= alpha].sum())}


def naive_edge_rejects(rho):
    """The circular-law rule: reject when the scaled spectral radius exceeds 1."""
    return bool(rho > 1.0)


def replicate(seed, *, n):
    """One Gaussian matrix: the exact p-values and the naive rules' inputs."""
    rng, _ = common.split_seed(seed)
    a = common.arbitrary_affine(rng, rng.standard_normal((n, n)))
    res = nullspec.spectral_test(a, null="gaussian", statistics=("real_count", "edge"))
    k, rho = res.tests["real_count"].statistic, res.tests["edge"].statistic
    pvalues = {"exact_edge": res.tests["edge"].pvalue, "exact_real_count": res.tests["real_count"].pvalue,
               "naive_real_count": naive_real_count_pvalue(k, n),
               "naive_edge": 0.0 if naive_edge_rejects(rho) else 1.0}  # a level-free rule: 0 = reject, 1 = not
    return {"k": int(k), "rho": float(rho), "pvalues": pvalues}


def calibration_cell(n, replications, n_jobs=1):
    """The record of one size: rejection counts of every rule at each alpha, with the bands."""
    seed = common.cell_seed(ROOT_SEED, key(n))
    outcomes = common.run_replications(replicate, seed, replications, {"n": n}, n_jobs)
    counts = common.rejection_counts(outcomes, columns=RULES)
    sizes = {str(a): real_count_sizes(n, a) for a in common.ALPHAS}
    return {
        "config": {"n": n},
        "replications": replications,
        "seed": {"root": ROOT_SEED, "entropy": list(seed.entropy)},
        "counts": counts,
        "bands": {str(a): list(common.binomial_band(replications, a)) for a in common.ALPHAS},
        "real_count_exact_sizes": sizes,
        "real_count_bands": {a: {rule: list(common.binomial_band(replications, size)) for rule, size in per.items()}
                             for a, per in sizes.items()},
        "band_confidence": common.CONFIDENCE,
        "mean_real_count": float(np.mean([row["k"] for row in outcomes])),
        "exact_mean_real_count": real_count_mean(n),
        "naive_mean_real_count": math.sqrt(2.0 * n / math.pi),
        "mean_rho": float(np.mean([row["rho"] for row in outcomes])),
        "warning_rates": common.warning_rates(outcomes),
    }


def key(n):
    return f"gain_n{n:03d}"


def _run_cell(cell, n_jobs):
    return calibration_cell(cell["n"], cell["replications"], n_jobs)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--n-jobs", type=int, default=common.N_JOBS, help="workers across replications")
    args = parser.parse_args(argv)
    cells = [{"key": key(n), "n": n, "replications": REPLICATIONS} for n in SIZES]
    elapsed = common.run_cells("calibration", cells, _run_cell, n_jobs=args.n_jobs)
    common.progress(f"[calibration] finished in {elapsed:.0f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
