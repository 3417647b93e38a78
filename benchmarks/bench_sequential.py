"""Saving of sequential (Besag-Clifford) stopping: draws and wall time, stopping on vs off.

:func:`nullspec.spectral_test` with the permutation null, ``n_resamples = 999``, ``alpha = 0.05`` and
``n_jobs = 2``, run with ``sequential=True`` and ``sequential=False`` on the same matrix and seed, for
three kinds of synthetic matrices at N = 50 and 100:

- ``null``: i.i.d. Gaussian entries (no structure): every statistic is settled as soon as enough
  surrogates are as extreme as the data, so stopping should save most of the draws;
- ``edge_signal``: i.i.d. entries plus a rank-one signal ``3 sqrt(N) u u^T / |u|^2`` (an outlier
  near 3 sigma sqrt(N): the edge statistic far in the tail);
- ``radial_signal``: i.i.d. entries with row scales drawn from a log-normal law (sd 1; the radial
  statistic far in the tail).

With a significant statistic the run goes to the full B by design: the rule stops only on the
non-significant side (an early stop on the significant side would not give valid p-values), and one
unsettled statistic keeps the run going.

The draw counts are deterministic (a function of the seed); the times depend on the machine, so the
script waits for idle CPU before each pair (the load guard of ``bench_nulls.py``, read from /proc).
Run from the repository root::

    python benchmarks/bench_sequential.py          # writes benchmarks/results/sequential.json
"""

import json
import os
import platform
import time
from pathlib import Path

import numpy as np

import nullspec
from bench_nulls import wait_for_quiet  # this script's folder is on sys.path

RESULTS = Path(__file__).parent / "results" / "sequential.json"
SIZES = (50, 100)
MATRICES_PER_KIND = 5
N_RESAMPLES = 999
ALPHA = 0.05
MAX_BUSY, PATIENCE = 0.1, 120.0  # wait (at most PATIENCE s) until other processes use <= MAX_BUSY of the CPU


KINDS = ("null", "edge_signal", "radial_signal")


def synthetic(kind, n, rng):
    """One synthetic matrix of the given kind (module docstring)."""
    a = rng.standard_normal((n, n))
    if kind == "edge_signal":
        u = rng.standard_normal(n)
        a += 3.0 * np.sqrt(n) * np.outer(u, u) / (u @ u)  # eigenvalue 3 sqrt(N) (u v' would give 3 sqrt(N) u.v)
    if kind == "radial_signal":
        a *= np.exp(rng.standard_normal(n))[:, None]
    return a


def timed_test(a, seed, sequential):
    start = time.perf_counter()
    res = nullspec.spectral_test(a, null="permutation", n_resamples=N_RESAMPLES, alpha=ALPHA, rng=seed,
                                 n_jobs=2, progress=False, sequential=sequential)
    return res, time.perf_counter() - start


def pair(kind, n, index):
    """Stopping on and off on one matrix: draws, seconds and the smallest p-value of each run."""
    seed = 7919 * n + index
    a = synthetic(kind, n, np.random.default_rng([seed, len(kind)]))
    wait_for_quiet(MAX_BUSY, PATIENCE)
    on, t_on = timed_test(a, seed, True)
    off, t_off = timed_test(a, seed, False)
    return {
        "draws_sequential": on.n_resamples, "draws_full": off.n_resamples,
        "seconds_sequential": t_on, "seconds_full": t_off,
        "omnibus_p_sequential": float(on.pvalue), "omnibus_p_full": float(off.pvalue),
    }


def summarize(rows):
    draws = [r["draws_sequential"] / r["draws_full"] for r in rows]
    seconds = [r["seconds_sequential"] / r["seconds_full"] for r in rows]
    return {"median_draw_fraction": float(np.median(draws)), "median_time_fraction": float(np.median(seconds)),
            "min_draw_fraction": float(np.min(draws)), "max_draw_fraction": float(np.max(draws))}


def main():
    out = {"environment": {"cores": os.cpu_count(), "platform": platform.platform(),
                           "numpy": np.__version__, "nullspec": nullspec.__version__,
                           "date": time.strftime("%Y-%m-%d %H:%M:%S")},
           "n_resamples": N_RESAMPLES, "alpha": ALPHA, "n_jobs": 2, "results": {}}
    for n in SIZES:
        timed_test(synthetic("null", n, np.random.default_rng(n)), 0, False)  # warm-up: imports, caches, pool
        for kind in KINDS:
            rows = [pair(kind, n, i) for i in range(MATRICES_PER_KIND)]
            out["results"][f"{kind}_n{n}"] = {"rows": rows, **summarize(rows)}
            print(kind, n, {k: round(v, 3) for k, v in summarize(rows).items()}, flush=True)
    RESULTS.parent.mkdir(parents=True, exist_ok=True)
    RESULTS.write_text(json.dumps(out, indent=2, allow_nan=False) + "\n")
    print(f"wrote {RESULTS}")


if __name__ == "__main__":
    main()
