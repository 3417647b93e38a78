"""Cost of one spectral test against one eigenvalue solve, measured in the same run.

``spectral_test(A)`` with its defaults (``null="auto"``: the exact Gaussian null above N = 400, all
three statistics) on an 800 x 800 matrix of i.i.d. normal entries, against one
``np.linalg.eigvals(A)`` on the same matrix.  Target: the ratio of medians is at most 2.

The radial statistic beyond the shipped table (N > 500) is calibrated by a null sample simulated
once per N and cached on disk.  The first call pays that once; the benchmark times it separately
(``cold_seconds``, with an empty cache in a temporary directory) and then times the warm calls that
every later test of an 800 x 800 matrix costs.  Rounds interleave the two timings; the JSON keeps
every round and the medians.  Run from the repository root:

    python benchmarks/bench_inference.py           # writes benchmarks/results/inference.json
    python benchmarks/bench_inference.py --quick   # N = 200, 3 rounds, nothing written
"""

import argparse
import json
import os
import platform
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

import nullspec
from nullspec.inference import spectral_test

RESULTS = Path(__file__).parent / "results" / "inference.json"


def _timed(fn):
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def measure(n, rounds, seed=0):
    """Cold first call, then interleaved rounds of eigvals and spectral_test on one matrix."""
    a = np.random.default_rng(seed).standard_normal((n, n))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", nullspec.exceptions.NullspecWarning)
        cold = _timed(lambda: spectral_test(a))
        eig, test = [], []
        for _ in range(rounds):
            eig.append(_timed(lambda: np.linalg.eigvals(a)))
            test.append(_timed(lambda: spectral_test(a)))
        result = spectral_test(a)
    return {
        "n": n,
        "rounds": rounds,
        "null_used": result.null,
        "statistics": list(result.tests),
        "cold_seconds": cold,
        "eigvals_seconds": eig,
        "spectral_test_seconds": test,
        "eigvals_median": float(np.median(eig)),
        "spectral_test_median": float(np.median(test)),
        "ratio_of_medians": float(np.median(test) / np.median(eig)),
    }


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--quick", action="store_true", help="N = 200, 3 rounds, nothing written")
    args = parser.parse_args(argv)
    n, rounds = (200, 3) if args.quick else (800, 9)
    with tempfile.TemporaryDirectory() as cache:
        os.environ["NULLSPEC_CACHE_DIR"] = cache  # an empty cache: the cold call pays the one-off simulation
        out = measure(n, rounds)
    out.update(
        target_ratio=2.0,
        meets_target=out["ratio_of_medians"] <= 2.0,
        nullspec_version=nullspec.__version__,
        numpy_version=np.__version__,
        machine={"cpus": os.cpu_count(), "platform": platform.platform(), "load_average": os.getloadavg()},
        date=time.strftime("%Y-%m-%d %H:%M:%S"),
    )
    print(json.dumps({k: out[k] for k in ("n", "cold_seconds", "eigvals_median", "spectral_test_median",
                                          "ratio_of_medians", "meets_target")}, indent=2))
    if not args.quick:
        RESULTS.parent.mkdir(parents=True, exist_ok=True)
        RESULTS.write_text(json.dumps(out, indent=2) + "\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
