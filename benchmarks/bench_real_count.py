"""Time the exact real-count law, ``nullspec.ginibre.real_count_pmf``, from n = 10 to n = 10**6 + 1.

Two tables, both from one run:

- ``pmf``: ``real_count_pmf(n)`` as a user calls it (the regime is chosen by n: dense ``Ms`` up to
  n = 400, the Nystrom discretisation above), odd and even n, once with the BLAS thread pools as they
  are and once limited to one thread (threadpoolctl).  The parameter cache is cleared before every
  timed call, so each call pays the full eigen-solve.  Each row also records how far the mean of the
  returned pmf is from ``real_count_mean(n)`` (relative).  Target: n = 10**6 under 5 s.
- ``regimes``: the two private evaluations side by side at the same n (100 to 2001), with the ratio
  dense/Nystrom of the medians and the largest difference of the top parameters.

Times are medians over rounds (``--rounds``, fewer for the largest n); the JSON keeps every round,
the BLAS set-up and the 1-minute load average at each size, since the machine may be shared.  Before
each size the script waits (up to ``--patience`` seconds) for the load average to drop below
``--max-load``.  Run from the repository root:

    python benchmarks/bench_real_count.py          # writes benchmarks/results/real_count.json
    python benchmarks/bench_real_count.py --quick  # n <= 10**4, nothing written
"""

import argparse
import contextlib
import json
import os
import platform
import time
from pathlib import Path

import numpy as np
import scipy
from threadpoolctl import threadpool_info, threadpool_limits

import nullspec
from nullspec.ginibre import real_count as rc
from nullspec.ginibre import real_count_mean, real_count_pmf

RESULTS = Path(__file__).parent / "results" / "real_count.json"
PMF_SIZES = (10, 11, 100, 101, 400, 401, 1000, 1001, 10**4, 10**4 + 1, 10**5, 10**5 + 1, 10**6, 10**6 + 1)
REGIME_SIZES = (100, 101, 400, 401, 1000, 1001, 2000, 2001)


def _timed(fn):
    start = time.perf_counter()
    out = fn()
    return time.perf_counter() - start, out


def time_pmf(n, rounds):
    """Median wall time of a cold ``real_count_pmf(n)`` (default and one BLAS thread), mean error."""
    seconds = {"default": [], "one_thread": []}
    for _ in range(rounds):
        for setting, limit in (("default", contextlib.nullcontext), ("one_thread", _one_thread)):
            rc._bernoulli_params.cache_clear()
            with limit():
                elapsed, pmf = _timed(lambda: real_count_pmf(n))
            seconds[setting].append(elapsed)
    mean = real_count_mean(n)
    return {
        "n": n,
        "regime": "dense" if n <= rc._DENSE_MAX_N else "nystrom",
        "parameters": int(rc._bernoulli_params(n).size),
        "seconds": seconds,
        "median_seconds": {k: float(np.median(v)) for k, v in seconds.items()},
        "mean_rel_error": float(abs(pmf @ np.arange(n + 1) - mean) / mean),
    }


def _one_thread():
    return threadpool_limits(limits=1, user_api="blas")


def wait_for_quiet(max_load, patience):
    """Sleep until the 1-minute load average is below ``max_load`` or ``patience`` seconds have passed."""
    deadline = time.monotonic() + patience
    while os.getloadavg()[0] > max_load and time.monotonic() < deadline:
        time.sleep(5)
    return os.getloadavg()[0]


def time_regimes(n, rounds):
    """Dense and Nystrom parameters at the same n, timed in alternation."""
    dense_s, nystrom_s = [], []
    for _ in range(rounds):
        elapsed, dense = _timed(lambda: rc._dense_params(n))
        dense_s.append(elapsed)
        elapsed, nystrom = _timed(lambda: rc._nystrom_params(n))
        nystrom_s.append(elapsed)
    dense, nystrom = np.sort(dense)[::-1], np.sort(nystrom)[::-1]
    resolved = int((dense > 1e-13).sum())
    return {
        "n": n,
        "dense_seconds": dense_s,
        "nystrom_seconds": nystrom_s,
        "dense_over_nystrom": float(np.median(dense_s) / np.median(nystrom_s)),
        "max_param_difference": float(np.max(np.abs(dense[:resolved] - nystrom[:resolved]))),
    }


def environment():
    return {
        "nullspec": nullspec.__version__,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "python": platform.python_version(),
        "cpu_count": os.cpu_count(),
        "blas": [{k: lib.get(k) for k in ("internal_api", "version", "architecture", "num_threads")}
                 for lib in threadpool_info()],
        "load_average": list(os.getloadavg()),
    }


def print_tables(result):
    print(f"{'n':>9} {'regime':>8} {'params':>7} {'median s':>10} {'1 thread s':>11} {'mean rel err':>13}"
          f" {'load':>5}")
    for row in result["pmf"]:
        med = row["median_seconds"]
        print(f"{row['n']:>9} {row['regime']:>8} {row['parameters']:>7} {med['default']:>10.4f}"
              f" {med['one_thread']:>11.4f} {row['mean_rel_error']:>13.1e} {row['load_average']:>5.2f}")
    print(f"\n{'n':>9} {'dense s':>10} {'Nystrom s':>10} {'dense/Nys':>10} {'max |diff|':>11} {'load':>5}")
    for row in result["regimes"]:
        dense, nystrom = np.median(row["dense_seconds"]), np.median(row["nystrom_seconds"])
        print(f"{row['n']:>9} {dense:>10.4f} {nystrom:>10.4f} {row['dense_over_nystrom']:>10.2f}"
              f" {row['max_param_difference']:>11.1e} {row['load_average']:>5.2f}")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=5, help="timed rounds per size (3 at n >= 1e5)")
    parser.add_argument("--quick", action="store_true", help="n <= 10**4 only; write nothing")
    parser.add_argument("--max-load", type=float, default=1.5, help="wait for a 1-minute load below this")
    parser.add_argument("--patience", type=float, default=120.0, help="longest wait per size, seconds")
    args = parser.parse_args(argv)
    limit = 10**4 + 1 if args.quick else max(PMF_SIZES)
    result = {"environment": environment()}
    result["pmf"], result["regimes"] = [], []
    for n in (n for n in PMF_SIZES if n <= limit):
        load = wait_for_quiet(args.max_load, args.patience)
        rounds = args.rounds if n < 10**5 else min(args.rounds, 3)
        result["pmf"].append({**time_pmf(n, rounds), "load_average": load})
    for n in REGIME_SIZES:
        load = wait_for_quiet(args.max_load, args.patience)
        result["regimes"].append({**time_regimes(n, args.rounds), "load_average": load})
    print_tables(result)
    if not args.quick:
        RESULTS.parent.mkdir(parents=True, exist_ok=True)
        RESULTS.write_text(json.dumps(result, indent=1) + "\n")
        print(f"\nwritten: {RESULTS}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
