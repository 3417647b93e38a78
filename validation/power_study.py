"""Power study: rejection rates against signal strength for the three structures the tests target.

Gaussian noise X (i.i.d. N(0, 1), then an arbitrary mean and scale, :func:`_common.arbitrary_affine`)
carries one structure of strength s:

- ``rank_one``: ``X + theta sqrt(N) u u^T`` with u a random unit vector orthogonal to the all-ones
  vector (centring by the mean would remove a component along it), so theta is in units of
  sigma sqrt(N).  Theory: for |theta| > 1 an outlier emerges near theta, outside the circular-law
  disk (Tao 2013, Probab. Theory Relat. Fields, quoted from memory); at finite N it clears the
  null's 95% edge quantile only for theta above that quantile, so both are recorded as thresholds.
- ``reciprocity``: the real elliptic construction of THEORY.md section 7,
  ``sqrt((1 + tau)/2) S + sqrt((1 - tau)/2) K``, corr(A_ij, A_ji) = tau.  The threshold recorded is
  the tau at which the mean real count reaches the exact null's two-sided 5% critical distance
  ``z_0.975 sd_N`` from E_N, using the asymptotic mean of section 7 with its offset of about 1/2:
  ``E_N(tau) ~ (E_N - 1/2) sqrt((1 + tau)/(1 - tau)) + 1/2`` [derived here; power near 1/2 there,
  roughly, since Var K changes with tau too].
- ``scale``: row scales ``exp(s xi_i)`` with xi_i i.i.d. N(0, 1) (log-normal spread s).  No
  finite-N threshold is known to the project (none is recorded).

Nulls: the exact Gaussian null at N = 50 and 200, and the permutation null (``null="auto"``'s choice
at these sizes) at N = 50 only (its cost at N = 200, B + 1 eigenvalue solves per replication, does
not fit the budget).  Rates are counted at alpha = 0.01 and 0.05 with 99% Clopper-Pearson intervals.

Usage::

    python validation/power_study.py [--n-jobs 2]     # resumable: finished configurations are skipped
"""

import argparse
import math

import numpy as np
from scipy import stats

import nullspec
from nullspec.calibration import edge_threshold
from nullspec.ginibre import real_count_mean, real_count_var
from nullspec.nulls.engine import default_batch_size

import _common as common

ROOT_SEED = 20250702
N_RESAMPLES = 99
SEQUENTIAL_ALPHA = 0.05
SIZES = (50, 200)
STRENGTHS = {
    "rank_one": (0.0, 0.5, 0.8, 1.0, 1.1, 1.2, 1.35, 1.5, 2.0),
    "reciprocity": (-0.6, -0.3, -0.1, 0.0, 0.1, 0.2, 0.35, 0.5),
    "scale": (0.0, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0),
}
#: The statistic each structure is meant to move (THEORY / DESIGN's table of signatures).
TARGET = {"rank_one": "edge", "reciprocity": "real_count", "scale": "radial"}
R_GAUSSIAN = 500
R_PERMUTATION = 150
PERMUTATION_SIZES = (50,)


def _rank_one(rng, n, theta):
    u = rng.standard_normal(n)
    u -= u.mean()
    u /= np.linalg.norm(u)
    return rng.standard_normal((n, n)) + theta * math.sqrt(n) * np.outer(u, u)


def _reciprocity(rng, n, tau):
    g1, g2 = rng.standard_normal((n, n)), rng.standard_normal((n, n))
    sym, skew = (g1 + g1.T) / math.sqrt(2.0), (g2 - g2.T) / math.sqrt(2.0)
    return math.sqrt((1.0 + tau) / 2.0) * sym + math.sqrt((1.0 - tau) / 2.0) * skew


def _scale(rng, n, spread):
    rows = np.exp(spread * rng.standard_normal(n))
    return rows[:, None] * rng.standard_normal((n, n))


STRUCTURES = {"rank_one": _rank_one, "reciprocity": _reciprocity, "scale": _scale}


def reciprocity_thresholds(n, alpha=0.05):
    """(tau_minus, tau_plus): where the mean real count reaches the critical distance (docstring).

    Examples
    --------
    >>> lo, hi = reciprocity_thresholds(200)
    >>> -1 < lo < 0 < hi < 1
    True
    """
    mean, sd = real_count_mean(n), math.sqrt(real_count_var(n))
    z = stats.norm.isf(alpha / 2.0)
    out = []
    for sign in (-1.0, 1.0):
        ratio_sq = ((mean - 0.5 + sign * z * sd) / (mean - 0.5)) ** 2
        out.append(float((ratio_sq - 1.0) / (ratio_sq + 1.0)))
    return tuple(out)


def thresholds(structure, n):
    """The thresholds recorded beside a power curve, each with its source."""
    if structure == "rank_one":
        q95 = edge_threshold(0.05, n)
        return [{"value": 1.0, "what": "outliers emerge for |theta| > 1 (Tao 2013, from memory)"},
                {"value": q95, "what": "finite-N 95% quantile of the spectral radius (exact Gaussian null)"}]
    if structure == "reciprocity":
        lo, hi = reciprocity_thresholds(n)
        what = "mean real count at the 5% two-sided critical distance (derived from THEORY.md s.7)"
        q95 = edge_threshold(0.05, n)
        ellipse = "ellipse's semi-major axis 1 + |tau| at the finite-N 95% edge quantile (THEORY.md s.7)"
        return [{"value": lo, "what": what}, {"value": hi, "what": what},
                {"value": 1.0 - q95, "what": ellipse}, {"value": q95 - 1.0, "what": ellipse}]
    return []


def replicate(seed, *, structure, strength, null, n):
    """One replication: p-values and statistics of one structured matrix."""
    rng, null_seed = common.split_seed(seed)
    a = common.arbitrary_affine(rng, STRUCTURES[structure](rng, n, strength))
    null_arg = "gaussian" if null == "gaussian" else "permutation"
    res = nullspec.spectral_test(a, null=null_arg, n_resamples=N_RESAMPLES, alpha=SEQUENTIAL_ALPHA, rng=null_seed,
                                 n_jobs=1, progress=False, sequential=True)
    values = {name: res.tests[name].statistic for name in common.STATISTICS}
    return {"pvalues": common.pvalue_row(res), "statistics": values}


def key(structure, null, n, strength):
    return f"{structure}_{null}_n{n:03d}_s{strength:+.2f}"


def power_cell(structure, strength, null, n, replications, n_jobs=1):
    """The record of one point of a power curve."""
    seed = common.cell_seed(ROOT_SEED, key(structure, null, n, strength))
    options = {"structure": structure, "strength": strength, "null": null, "n": n}
    outcomes = common.run_replications(replicate, seed, replications, options, n_jobs)
    counts = common.rejection_counts(outcomes)
    return {
        "config": {"structure": structure, "strength": strength, "null": null, "n": n,
                   "target_statistic": TARGET[structure]},
        "replications": replications,
        "n_resamples": None if null == "gaussian" else N_RESAMPLES,
        "engine_batch_size": None if null == "gaussian" else default_batch_size(n),
        "seed": {"root": ROOT_SEED, "entropy": list(seed.entropy)},
        "counts": counts,
        "intervals": {col: {a: list(common.binomial_interval(c, replications)) for a, c in per.items()}
                      for col, per in counts.items()},
        "interval_confidence": common.CONFIDENCE,
        "mean_statistic": {name: float(np.mean([row["statistics"][name] for row in outcomes]))
                           for name in common.STATISTICS},
        "thresholds": thresholds(structure, n),
        "warning_rates": common.warning_rates(outcomes),
    }


def cells():
    """Every point of every curve: the Gaussian null first (cheap), then the permutation null."""
    out = []
    for null, sizes, r in (("gaussian", SIZES, R_GAUSSIAN), ("permutation", PERMUTATION_SIZES, R_PERMUTATION)):
        for n in sizes:
            for structure, grid in STRENGTHS.items():
                out += [{"key": key(structure, null, n, s), "structure": structure, "strength": s, "null": null,
                         "n": n, "replications": r} for s in grid]
    return out


def _run_cell(cell, n_jobs):
    return power_cell(cell["structure"], cell["strength"], cell["null"], cell["n"], cell["replications"], n_jobs)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--n-jobs", type=int, default=common.N_JOBS, help="workers across replications")
    args = parser.parse_args(argv)
    elapsed = common.run_cells("power", cells(), _run_cell, n_jobs=args.n_jobs)
    common.progress(f"[power] finished in {elapsed:.0f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
