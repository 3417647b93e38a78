"""Generate ``nullspec/_radial_table.py``: simulated Gaussian-null quantiles of the radial statistic.

The radial statistic (``nullspec.statistics.radial``, a Cramer-von Mises distance between the
moduli |z| and their exact finite-N law) has no closed-form null law, and the classical i.i.d.
Cramer-von Mises table does not apply (eigenvalues repel each other).  This script simulates it once,
like a published table of critical values: for each N on a grid it draws matrices of i.i.d. N(0, 1)
entries and runs exactly the default pipeline of ``nullspec.spectral_test``
(``center="mean", scale="sd", diagonal="include"``) through
``nullspec.calibration.simulate_radial_null``, then stores, at each level, the quantile of the scaled
statistic ``N**SCALE_EXPONENT * W2`` and its 95% distribution-free order-statistic confidence
interval (the Monte Carlo error of the tabulated value).

The scaling exponent is measured, not assumed: the script fits ``log median(W2)`` against ``log N``
for N >= 50 and records the slope in the table; ``SCALE_EXPONENT`` is the value used to put all N on
one scale for the interpolation in N.

Usage::

    python validation/make_radial_table.py            # writes nullspec/_radial_table.py
    python validation/make_radial_table.py --pilot    # scaling check only (a few hundred draws per N)

Seeds: the sample of size N comes from ``SeedSequence([SEED, N])``, so adding a size to the grid
leaves the other rows unchanged.  BLAS is held to one thread.
"""

import argparse
from pathlib import Path
import sys
import time

import numpy as np
from scipy import stats
from threadpoolctl import threadpool_limits

from nullspec.calibration import simulate_radial_null

SEED = 20240611
LEVELS = (0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.975, 0.99, 0.995, 0.999)
N_GRID = (3, 4, 5, 6, 7, 8, 9, 10, 12, 14, 16, 18, 20, 25, 30, 35, 40, 50, 60, 70, 80, 100, 120, 150,
          200, 250, 300, 400, 500)
SCRIPT = "validation/make_radial_table.py"
TARGET = Path(__file__).resolve().parent.parent / "nullspec" / "_radial_table.py"
CONFIDENCE = 0.95


def replications(n):
    """Draws at size n: 20000 up to N = 20, falling to 2000 at N = 500 (about 15 min of one core in all)."""
    if n <= 20:
        return 20000
    table = {25: 12000, 30: 12000, 35: 12000, 40: 12000, 50: 10000, 60: 8000, 70: 8000, 80: 8000,
             100: 6000, 120: 5000, 150: 4000, 200: 3000, 250: 2500, 300: 2500, 400: 2000, 500: 2000}
    return table[n]


def order_statistic_ci(sorted_sample, level):
    """95% distribution-free CI for the ``level`` quantile from order statistics (binomial ranks)."""
    r = sorted_sample.size
    lo = int(stats.binom.ppf((1 - CONFIDENCE) / 2, r, level))
    hi = int(stats.binom.ppf((1 + CONFIDENCE) / 2, r, level)) + 1
    return sorted_sample[max(lo - 1, 0)], sorted_sample[min(hi - 1, r - 1)]


def simulate(n, reps):
    """The raw W2 sample at size n (seeded by (SEED, n))."""
    return simulate_radial_null(n, n_reps=reps, seed=np.random.SeedSequence([SEED, n]))


def fit_slope(grid, medians, n_min=50):
    """Slope of log median(W2) against log N over N >= n_min."""
    grid, medians = np.asarray(grid, float), np.asarray(medians, float)
    keep = grid >= n_min
    return float(np.polyfit(np.log(grid[keep]), np.log(medians[keep]), 1)[0])


def pilot(grid=(20, 50, 100, 200, 400), reps=300):
    """Print the median and 95% point of W2 and of N^e W2 for a few exponents."""
    meds = []
    for n in grid:
        w = simulate(n, reps)
        meds.append(np.median(w))
        print(f"N={n:5d} median W2={np.median(w):.4g} q95={np.quantile(w, .95):.4g} "
              + " ".join(f"N^{e}*med={n ** e * np.median(w):.4g}" for e in (0.5, 1.0)), flush=True)
    print(f"slope of log median vs log N (N >= 50): {fit_slope(grid, meds):.3f}")


def table_rows(exponent):
    """Simulate every N of the grid: scaled quantiles, their CIs, raw medians, replications, CPU time."""
    quant, lower, upper, medians, reps_used = [], [], [], [], []
    start = time.process_time()
    for n in N_GRID:
        reps = replications(n)
        w = np.sort(simulate(n, reps))
        scaled = w * n**exponent
        quant.append([float(np.quantile(scaled, q)) for q in LEVELS])
        cis = [order_statistic_ci(scaled, q) for q in LEVELS]
        lower.append([float(c[0]) for c in cis])
        upper.append([float(c[1]) for c in cis])
        medians.append(float(np.median(w)))
        reps_used.append(reps)
        print(f"N={n:5d} reps={reps:6d} median scaled={quant[-1][LEVELS.index(0.5)]:.5g} "
              f"cpu={time.process_time() - start:.0f}s", flush=True)
    return quant, lower, upper, medians, reps_used, time.process_time() - start


def _rows_text(rows):
    return "(\n" + "".join("    (" + ", ".join(f"{v:.6g}" for v in row) + "),\n" for row in rows) + ")"


def write_table(exponent, quant, lower, upper, medians, reps_used, cpu):
    """Write the generated module."""
    slope = fit_slope(N_GRID, medians)
    text = f'''"""Simulated Gaussian-null quantiles of the radial statistic (generated file: do not edit).

Generated by {SCRIPT} (run it to regenerate) with seed {SEED}: for each N in N_GRID,
REPLICATIONS[i] matrices of i.i.d. N(0, 1) entries went through the default pipeline
(center="mean", scale="sd", diagonal="include"); QUANTILES[i][j] is the LEVELS[j] quantile of
N**SCALE_EXPONENT * W2, and LOWER/UPPER its 95% order-statistic confidence interval.
Fitted slope of log median(W2) against log N (N >= 50): {slope:.4f}.  CPU time: {cpu:.0f} s.
"""

SCRIPT = "{SCRIPT}"
SEED = {SEED}
SCALE_EXPONENT = {exponent!r}
FITTED_SLOPE = {slope:.4f}
LEVELS = {LEVELS!r}
N_GRID = {N_GRID!r}
REPLICATIONS = {tuple(reps_used)!r}
QUANTILES = {_rows_text(quant)}
LOWER = {_rows_text(lower)}
UPPER = {_rows_text(upper)}
'''
    TARGET.write_text(text)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--pilot", action="store_true", help="scaling check only")
    parser.add_argument("--exponent", type=float, default=0.5, help="scaling exponent of the table")
    args = parser.parse_args(argv)
    with threadpool_limits(limits=1, user_api="blas"):
        if args.pilot:
            pilot()
            return 0
        write_table(args.exponent, *table_rows(args.exponent))
    return 0


if __name__ == "__main__":
    sys.exit(main())
