"""Generate ``nullspec/_radial_table.py``: simulated Gaussian-null quantiles of the radial statistic.

The radial statistic (``nullspec.statistics.radial``, a Cramer-von Mises distance between the
moduli |z| and their exact finite-N law) has no closed-form null law, and the classical i.i.d.
Cramer-von Mises table does not apply (eigenvalues repel each other).  This script simulates it once,
like a published table of critical values: for each N on a grid it draws matrices of i.i.d. N(0, 1)
entries and runs exactly the default pipeline of ``nullspec.spectral_test``
(``center="mean", scale="sd", diagonal="include"``) through
``nullspec.calibration.simulate_radial_null`` -- the same function that simulates the on-demand
nulls beyond the table -- then stores, at each level, the quantile of the scaled statistic
``N**SCALE_EXPONENT * W2`` and its 95% distribution-free order-statistic confidence interval (the
Monte Carlo error of the tabulated value).

The scaling exponent is measured, not assumed: the script fits ``log median(W2)`` against ``log N``
for N >= 50 and records the slope in the table; ``SCALE_EXPONENT`` is the value used to put all N on
one scale for the interpolation in N.

Usage::

    python validation/make_radial_table.py                   # every size of N_GRID, all rows rewritten
    python validation/make_radial_table.py --add 650 800     # simulate only these sizes, merge them in
    python validation/make_radial_table.py --pilot           # scaling check only (a few hundred draws per N)

``--n-jobs`` sets the workers (default 1); the numbers do not depend on it.

Seeds and random streams: the sample of size N comes from the root seed ``SeedSequence([SEED, N])``,
so adding a size leaves the other rows valid, and ``--add`` keeps them exactly as they are.  Each row
records the random stream that produced it (``STREAMS``, described in the generated header):

- stream 1: one generator ``default_rng(SeedSequence([SEED, N]))`` drew the matrices in turn, on one
  core (``simulate_radial_null`` before it ran through the drawn-null engine; the rows N <= 500 of
  the table, reproducible from the commit that generated them, 4a424e2);
- stream 2 (current): ``nullspec.nulls.draw_null`` with one draw per batch -- draw j is the first
  matrix of ``default_rng(SeedSequence([SEED, N], spawn_key=(j,)))`` -- identical for any ``--n-jobs``
  (the rows N = 650, 800, 1000).

Both are independent samples of the same null law, so rows of either stream are valid; regenerating
the whole table (no ``--add``) rewrites every row with the current stream.  BLAS is held to one thread
(by the engine).
"""

import argparse
import importlib.util
from pathlib import Path
import sys
import time

import numpy as np
from scipy import stats

from nullspec.calibration import simulate_radial_null

SEED = 20240611
LEVELS = (0.001, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.975, 0.99, 0.995, 0.999)
N_GRID = (3, 4, 5, 6, 7, 8, 9, 10, 12, 14, 16, 18, 20, 25, 30, 35, 40, 50, 60, 70, 80, 100, 120, 150,
          200, 250, 300, 400, 500, 650, 800, 1000)
SCRIPT = "validation/make_radial_table.py"
TARGET = Path(__file__).resolve().parent.parent / "nullspec" / "_radial_table.py"
CONFIDENCE = 0.95
STREAM = 2  # the stream simulate_radial_null draws now (module docstring)
STREAM_TEXT = {
    1: "one generator default_rng(SeedSequence([SEED, N])) drawing the matrices in turn (commit 4a424e2)",
    2: "nullspec.nulls.draw_null, one draw per batch: draw j seeded SeedSequence([SEED, N], spawn_key=(j,))",
}


def replications(n):
    """Draws at size n: 20000 up to N = 20, falling to 2000 at N = 500 and 400 at N = 1000."""
    if n <= 20:
        return 20000
    table = {25: 12000, 30: 12000, 35: 12000, 40: 12000, 50: 10000, 60: 8000, 70: 8000, 80: 8000,
             100: 6000, 120: 5000, 150: 4000, 200: 3000, 250: 2500, 300: 2500, 400: 2000, 500: 2000,
             650: 600, 800: 500, 1000: 400}
    return table[n]


def order_statistic_ci(sorted_sample, level):
    """95% distribution-free CI for the ``level`` quantile from order statistics (binomial ranks)."""
    r = sorted_sample.size
    lo = int(stats.binom.ppf((1 - CONFIDENCE) / 2, r, level))
    hi = int(stats.binom.ppf((1 + CONFIDENCE) / 2, r, level)) + 1
    return sorted_sample[max(lo - 1, 0)], sorted_sample[min(hi - 1, r - 1)]


def simulate(n, reps, n_jobs=1, progress=False):
    """The raw W2 sample at size n (root seed (SEED, n); the same for any n_jobs)."""
    return simulate_radial_null(n, n_reps=reps, seed=np.random.SeedSequence([SEED, n]), n_jobs=n_jobs,
                                progress=progress)


def fit_slope(grid, medians, n_min=50):
    """Slope of log median(W2) against log N over N >= n_min."""
    grid, medians = np.asarray(grid, float), np.asarray(medians, float)
    keep = grid >= n_min
    return float(np.polyfit(np.log(grid[keep]), np.log(medians[keep]), 1)[0])


def pilot(grid=(20, 50, 100, 200, 400), reps=300, n_jobs=1):
    """Print the median and 95% point of W2 and of N^e W2 for a few exponents."""
    meds = []
    for n in grid:
        w = simulate(n, reps, n_jobs)
        meds.append(np.median(w))
        print(f"N={n:5d} median W2={np.median(w):.4g} q95={np.quantile(w, .95):.4g} "
              + " ".join(f"N^{e}*med={n ** e * np.median(w):.4g}" for e in (0.5, 1.0)), flush=True)
    print(f"slope of log median vs log N (N >= 50): {fit_slope(grid, meds):.3f}")


def simulate_row(n, reps, exponent, n_jobs):
    """One table row: scaled quantiles, their CIs, the replications and the stream."""
    scaled = np.sort(simulate(n, reps, n_jobs, progress=None)) * n**exponent
    cis = [order_statistic_ci(scaled, q) for q in LEVELS]
    return {"quantiles": [float(np.quantile(scaled, q)) for q in LEVELS], "lower": [float(c[0]) for c in cis],
            "upper": [float(c[1]) for c in cis], "replications": reps, "stream": STREAM}


def simulate_rows(sizes, exponent, n_jobs, reps=replications):
    """Rows for ``sizes`` (dict N -> row) and the record of the run (sizes, stream, CPU, wall, n_jobs).

    CPU time is the process's (thread workers, the engine's default, included).
    """
    rows, cpu0, wall0 = {}, time.process_time(), time.perf_counter()
    for n in sizes:
        rows[n] = simulate_row(n, reps(n), exponent, n_jobs)
        q = rows[n]["quantiles"]
        print(f"N={n:5d} reps={reps(n):6d} scaled median={q[LEVELS.index(0.5)]:.5g} "
              f"q95={q[LEVELS.index(0.95)]:.5g} q99={q[LEVELS.index(0.99)]:.5g} "
              f"cpu={time.process_time() - cpu0:.0f}s wall={time.perf_counter() - wall0:.0f}s", flush=True)
    run = {"sizes": tuple(sizes), "stream": STREAM, "cpu_seconds": round(time.process_time() - cpu0, 1),
           "wall_seconds": round(time.perf_counter() - wall0, 1), "n_jobs": n_jobs}
    return rows, run


def load_table(path=TARGET):
    """The rows (dict N -> row), the runs and the exponent of an existing generated table."""
    spec = importlib.util.spec_from_file_location("_existing_radial_table", path)
    table = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(table)
    if tuple(table.LEVELS) != LEVELS or table.SEED != SEED:
        raise SystemExit(f"{path} has other levels or another seed than this script; regenerate it in full.")
    rows = {
        n: {"quantiles": list(q), "lower": list(lo), "upper": list(hi), "replications": r, "stream": s}
        for n, q, lo, hi, r, s in zip(table.N_GRID, table.QUANTILES, table.LOWER, table.UPPER,
                                      table.REPLICATIONS, table.STREAMS)
    }
    return rows, list(table.RUNS), table.SCALE_EXPONENT


def add_rows(sizes, *, n_jobs, source=TARGET, target=TARGET, reps=replications):
    """Simulate only ``sizes`` and merge them into the table at ``source`` (written to ``target``)."""
    rows, runs, exponent = load_table(source)
    present = sorted(set(sizes) & set(rows))
    if present:
        raise SystemExit(f"sizes {present} are already in the table; --add takes new sizes only.")
    new_rows, run = simulate_rows(sorted(sizes), exponent, n_jobs, reps)
    write_table(exponent, {**rows, **new_rows}, runs + [run], target)


def _rows_text(rows):
    return "(\n" + "".join("    (" + ", ".join(f"{v:.6g}" for v in row) + "),\n" for row in rows) + ")"


def _runs_text(runs):
    """One header line per run: its sizes, stream, replications rule and cost."""
    lines = []
    for run in runs:
        wall = "" if run["wall_seconds"] is None else f", {run['wall_seconds']:.0f} s wall"
        lines.append(f"- N in {run['sizes']}: stream {run['stream']}, {run['cpu_seconds']:.0f} s CPU{wall}, "
                     f"n_jobs={run['n_jobs']}.")
    return "\n".join(lines)


def write_table(exponent, rows, runs, target=TARGET):
    """Write the generated module (rows: dict N -> row, written in increasing N)."""
    grid = tuple(sorted(rows))
    ordered = [rows[n] for n in grid]
    medians = [row["quantiles"][LEVELS.index(0.5)] / n**exponent for n, row in zip(grid, ordered)]
    slope = fit_slope(grid, medians)
    streams = "\n".join(f"- stream {k}: {STREAM_TEXT[k]}." for k in sorted({r["stream"] for r in ordered}))
    text = f'''"""Simulated Gaussian-null quantiles of the radial statistic (generated file: do not edit).

Generated by {SCRIPT} with seed {SEED} (run it to regenerate, or with --add N to
merge new sizes): for each N in N_GRID, REPLICATIONS[i] matrices of i.i.d. N(0, 1) entries went
through the default pipeline (center="mean", scale="sd", diagonal="include"); QUANTILES[i][j] is the
LEVELS[j] quantile of N**SCALE_EXPONENT * W2, and LOWER/UPPER its 95% order-statistic confidence
interval.
Fitted slope of log median(W2) against log N (N >= 50): {slope:.4f}.

Random streams (STREAMS[i] is row i's; both are valid samples of the same null, seeded by (SEED, N)):
{streams}

Runs (RUNS):
{_runs_text(runs)}
"""

SCRIPT = "{SCRIPT}"
SEED = {SEED}
SCALE_EXPONENT = {exponent!r}
FITTED_SLOPE = {slope:.4f}
LEVELS = {LEVELS!r}
N_GRID = {grid!r}
REPLICATIONS = {tuple(r["replications"] for r in ordered)!r}
STREAMS = {tuple(r["stream"] for r in ordered)!r}
RUNS = {tuple(runs)!r}
QUANTILES = {_rows_text(r["quantiles"] for r in ordered)}
LOWER = {_rows_text(r["lower"] for r in ordered)}
UPPER = {_rows_text(r["upper"] for r in ordered)}
'''
    Path(target).write_text(text)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--pilot", action="store_true", help="scaling check only")
    parser.add_argument("--add", type=int, nargs="+", metavar="N", help="simulate only these sizes and merge them")
    parser.add_argument("--n-jobs", type=int, default=1, help="parallel workers (the numbers do not depend on it)")
    parser.add_argument("--exponent", type=float, default=0.5, help="scaling exponent of a full regeneration")
    args = parser.parse_args(argv)
    if args.pilot:
        pilot(n_jobs=args.n_jobs)
    elif args.add:
        add_rows(args.add, n_jobs=args.n_jobs)
    else:
        rows, run = simulate_rows(N_GRID, args.exponent, args.n_jobs)
        write_table(args.exponent, rows, [run])
    return 0


if __name__ == "__main__":
    sys.exit(main())
