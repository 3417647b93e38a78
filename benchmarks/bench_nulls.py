"""Throughput of drawn nulls (replicates per second), with ratios measured in one run.

Statistic: the real count K = #{Im λ == 0} of a permuted matrix (all N² entries shuffled). Compared:

- ``naive``: the loop a user would write, ``np.linalg.eigvals(rng.permutation(A.ravel()).reshape(N, N))``
  with numpy's default BLAS threads;
- ``scipy``: ``scipy.stats.permutation_test((A.ravel(),), ..., permutation_type="pairings",
  vectorized=True)`` with a batched ``np.linalg.eigvals``;
- ``limit``: the machine's limit, ``cores x`` the best single-thread eigenvalue rate (numpy or the
  GIL-free LAPACK route) measured in the same round;
- ``engine_*``: :func:`nullspec.nulls.draw_null` with ``Permutation()``, n_jobs = 1 and 2, on the
  default hint (threads) and on loky (warm pool);
- ``prefer``: the engine on threads vs a warm loky pool vs in-process, for the real count alone and
  for the full pipeline (standardise, spectrum, real_count + radial + edge), at N = 50, 100, 400;
- the Gaussian null drawn dense vs in Hessenberg form (THEORY.md §9), in-process.

Each round times every method once, interleaved, after waiting (up to a limit) until other
processes leave the CPU nearly idle; the JSON keeps every round, the medians, and the medians of
the per-round ratios. Run from the repository root:

    python benchmarks/bench_nulls.py            # writes benchmarks/results/nulls.json
    python benchmarks/bench_nulls.py --quick    # a smoke run, nothing written
"""

import argparse
import contextlib
import functools
import json
import os
import platform
import time
from pathlib import Path

import joblib
import numpy as np
import scipy
from joblib import parallel_config
from scipy import stats
from threadpoolctl import threadpool_limits

import nullspec
from nullspec import statistics
from nullspec.spectrum import compute_spectrum
from nullspec.standardize import standardize
from nullspec._lapack import eigvals, hessenberg_eigvals
from nullspec.nulls import Gaussian, Permutation, draw_null

RESULTS = Path(__file__).parent / "results" / "nulls.json"
CORES = os.cpu_count()
# N -> replicates per timing (about 0.5-1 s of work on two cores)
REPLICATES = {50: 3000, 100: 400, 400: 40}
THROUGHPUT_SIZES = (100, 400)
PREFER_SIZES = (50, 100, 400)


def real_count(surrogate):
    """The engine's evaluation: K of a surrogate through the GIL-free LAPACK route."""
    return [np.count_nonzero(eigvals(surrogate, overwrite_a=True).imag == 0)]


def hessenberg_real_count(h):
    """K of a Hessenberg surrogate (dhseqr, no reduction)."""
    return [np.count_nonzero(hessenberg_eigvals(h, overwrite=True).imag == 0)]


def pipeline(surrogate):
    """A full evaluation as the inference layer runs it: standardise, spectrum, three statistics."""
    spec = compute_spectrum(standardize(surrogate).matrix)
    return statistics.evaluate(spec, ("real_count", "radial", "edge"))


def naive_loop(a, b, seed):
    rng = np.random.default_rng(seed)
    flat = a.ravel()
    return [
        np.count_nonzero(np.linalg.eigvals(rng.permutation(flat).reshape(a.shape)).imag == 0)
        for _ in range(b)
    ]


def scipy_permutation_test(a, b, seed):
    n = a.shape[0]

    def statistic(x, axis=-1):
        m = np.moveaxis(x, axis, -1)
        m = m.reshape(m.shape[:-1] + (n, n))
        return np.count_nonzero(np.linalg.eigvals(m).imag == 0, axis=-1)

    batch = max(1, 10**6 // (n * n))  # ~8 MB of surrogates per call
    return stats.permutation_test(
        (a.ravel(),), statistic, permutation_type="pairings", vectorized=True, n_resamples=b,
        batch=batch, alternative="greater", rng=seed,
    )


def engine(a, b, seed, n_jobs, backend=None, null=None, evaluate=real_count):
    config = parallel_config(backend=backend) if backend else contextlib.nullcontext()
    with config:
        return draw_null(a, null or Permutation(), evaluate, n_resamples=b, rng=seed, n_jobs=n_jobs,
                         progress=False)


def one_thread_rate(n, k, seed):
    """Best single-thread eigenvalue rate (solves/s) of numpy and of the GIL-free route."""
    rng = np.random.default_rng(seed)
    mats = [rng.standard_normal((n, n)) for _ in range(k)]
    rates = {}
    with threadpool_limits(limits=1, user_api="blas"):
        for name, solve in (("numpy", np.linalg.eigvals), ("lapack", eigvals)):
            start = time.perf_counter()
            for m in mats:
                solve(m)
            rates[name] = k / (time.perf_counter() - start)
    return rates


def timed_rate(func, b):
    start = time.perf_counter()
    func()
    return b / (time.perf_counter() - start)


def busy_fraction(interval):
    """Fraction of the machine's CPU time spent busy over `interval` seconds (this process sleeps,
    so it is the other processes' share); from /proc/stat, or the load average elsewhere."""
    try:
        with open("/proc/stat") as f:
            before = [int(x) for x in f.readline().split()[1:]]
        time.sleep(interval)
        with open("/proc/stat") as f:
            after = [int(x) for x in f.readline().split()[1:]]
    except OSError:
        return os.getloadavg()[0] / CORES
    delta = [b - a for a, b in zip(before, after)]
    return 1.0 - (delta[3] + delta[4]) / max(sum(delta), 1)  # fields 3, 4: idle, iowait


def wait_for_quiet(max_busy, patience):
    """Wait up to `patience` s until other processes use less than `max_busy` of the CPU."""
    deadline = time.time() + patience
    busy = busy_fraction(2.0)
    while busy > max_busy and time.time() < deadline:
        busy = busy_fraction(2.0)
    return busy


def throughput_round(n, b, seed):
    a = np.random.default_rng(seed).standard_normal((n, n))
    one = one_thread_rate(n, max(b // 8, 5), seed)
    rates = {"one_thread_numpy": one["numpy"], "one_thread_lapack": one["lapack"]}
    rates["limit"] = CORES * max(one.values())
    rates["naive"] = timed_rate(lambda: naive_loop(a, b, seed), b)
    rates["scipy"] = timed_rate(lambda: scipy_permutation_test(a, b, seed), b)
    for n_jobs in (1, 2):
        rates[f"engine_n_jobs_{n_jobs}"] = timed_rate(lambda: engine(a, b, seed, n_jobs), b)
    engine(a, 4 * CORES, seed, 2, backend="loky")  # warm the loky pool
    rates["engine_loky_n_jobs_2"] = timed_rate(lambda: engine(a, b, seed, 2, backend="loky"), b)
    return rates


def prefer_round(n, b, seed):
    """Engine with n_jobs=2 on threads vs a warm loky pool (the `prefer` hint's evidence), for the
    real count alone and for the full pipeline (whose Python parts hold the GIL)."""
    a = np.random.default_rng(seed).standard_normal((n, n))
    engine(a, 4 * CORES, seed, 2, backend="loky")
    rates = {}
    for label, evaluate, size in (("real_count", real_count, b), ("pipeline", pipeline, b // 2)):
        run_ = functools.partial(engine, a, size, seed, evaluate=evaluate)
        rates[f"{label}_threads"] = timed_rate(lambda: run_(2, backend="threading"), size)
        rates[f"{label}_loky_warm"] = timed_rate(lambda: run_(2, backend="loky"), size)
        rates[f"{label}_in_process"] = timed_rate(lambda: run_(1), size)
    return rates


def hessenberg_round(n, b, seed):
    a = np.zeros((n, n))
    dense = Gaussian(0.0, 1.0, hessenberg=False)
    hess = Gaussian(0.0, 1.0, hessenberg=True)
    return {
        "dense": timed_rate(lambda: engine(a, b, seed, 1, null=dense), b),
        "hessenberg": timed_rate(
            lambda: engine(a, b, seed, 1, null=hess, evaluate=hessenberg_real_count), b
        ),
    }


def medians(rounds):
    return {key: float(np.median([r[key] for r in rounds])) for key in rounds[0]}


def summarize_throughput(rounds):
    """Ratios to the limit and to the naive loop: the median over rounds of each round's ratio
    (methods are interleaved within a round, so a ratio compares like conditions)."""
    keys = [k for k in rounds[0] if k.startswith(("naive", "scipy", "engine"))]
    return {
        f"ratio_to_{base}": {
            k: float(np.median([r[k] / r[base] for r in rounds])) for k in keys
        }
        for base in ("limit", "naive")
    }


def cold_loky_seconds(seed):
    """Wall time of a tiny loky run (8 one-draw batches at N = 20) on a fresh pool, minus warm."""
    from joblib.externals.loky import get_reusable_executor

    a = np.random.default_rng(seed).standard_normal((20, 20))

    def tiny():
        start = time.perf_counter()
        with parallel_config(backend="loky"):
            draw_null(a, Permutation(), real_count, n_resamples=8, rng=seed, n_jobs=2, batch_size=1,
                      progress=False)
        return time.perf_counter() - start

    get_reusable_executor().shutdown(wait=True)
    cold = tiny()
    return {"cold": cold, "warm": tiny()}


def run(rounds, scale, max_busy, patience):
    out = {"throughput": {}, "prefer": {}, "hessenberg": {}, "busy_before_rounds": []}
    for kind, sizes, measure in (
        ("throughput", THROUGHPUT_SIZES, throughput_round),
        ("prefer", PREFER_SIZES, prefer_round),
        ("hessenberg", THROUGHPUT_SIZES, hessenberg_round),
    ):
        for n in sizes:
            b = max(int(REPLICATES[n] * scale), 2 * CORES)
            per_round = []
            for r in range(rounds):
                out["busy_before_rounds"].append(wait_for_quiet(max_busy, patience))
                per_round.append(measure(n, b, 1000 * n + r))
            out[kind][str(n)] = {"replicates": b, "rounds": per_round, "median": medians(per_round)}
            print(kind, n, {k: round(v, 3) for k, v in medians(per_round).items()}, flush=True)
    for entry in out["throughput"].values():
        entry.update(summarize_throughput(entry["rounds"]))
    for entry in out["prefer"].values():
        entry["threads_over_loky"] = {
            label: float(np.median([r[f"{label}_threads"] / r[f"{label}_loky_warm"] for r in entry["rounds"]]))
            for label in ("real_count", "pipeline")
        }
    for entry in out["hessenberg"].values():
        entry["gain"] = float(np.median([r["hessenberg"] / r["dense"] for r in entry["rounds"]]))
    out["loky_start_seconds"] = cold_loky_seconds(1)
    return out


def environment():
    return {
        "cores": CORES,
        "platform": platform.platform(),
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "joblib": joblib.__version__,
        "nullspec": nullspec.__version__,
        "date": time.strftime("%Y-%m-%d %H:%M:%S"),
    }


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--quick", action="store_true", help="a short smoke run; writes nothing")
    parser.add_argument("--max-busy", type=float, default=0.1,
                        help="wait while other processes use more than this fraction of the CPU")
    parser.add_argument("--patience", type=float, default=300.0, help="longest wait per round (s)")
    args = parser.parse_args()
    rounds, scale = (1, 0.1) if args.quick else (args.rounds, 1.0)
    result = {"environment": environment(), **run(rounds, scale, args.max_busy, args.patience)}
    if not args.quick:
        RESULTS.parent.mkdir(parents=True, exist_ok=True)
        RESULTS.write_text(json.dumps(result, indent=2, allow_nan=False) + "\n")
        print(f"wrote {RESULTS}")


if __name__ == "__main__":
    main()
