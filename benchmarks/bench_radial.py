"""Speed of the exact densities, expected counts by modulus and spectral-radius law against ``n``.

For each matrix size ``n`` in 10 ... 10**6 this times, as the median over a few rounds:

- ``setup_s``: building the cached Gauss-Legendre grid of :mod:`nullspec.ginibre.radial` for ``n``
  (the cache is cleared before each round);
- ``real_density_s``, ``complex_density_s``: 10**4 points spread over the bulk and the edge;
- ``expected_outside_s``, ``modulus_cdf_s``, ``spectral_radius_sf_s``: 10**4 radii in ``[0, sqrt(n) + 10]``
  (scaled by ``1/sqrt(n)`` for ``modulus_cdf``) on a warm grid;
- ``spectral_radius_isf_s``: 10**4 probabilities in ``[1e-20, 0.8]`` on a warm grid.

The machine is shared, so the 1-minute load average is recorded at the start and the end.  Run from
the repository root::

    python benchmarks/bench_radial.py           # writes benchmarks/results/radial.json
    python benchmarks/bench_radial.py --quick   # a smoke run up to n = 10**4, nothing written
"""

import argparse
import json
import os
import platform
import statistics
import time
from pathlib import Path

import numpy as np
import scipy

import nullspec
from nullspec.ginibre import (
    complex_density, expected_outside, modulus_cdf, real_density, spectral_radius_isf, spectral_radius_sf,
)
from nullspec.ginibre import radial

RESULTS = Path(__file__).parent / "results" / "radial.json"
SIZES = (10, 100, 1000, 10**4, 10**5, 10**6)
QUICK_SIZES = (10, 100, 1000, 10**4)
POINTS = 10**4
ROUNDS = 5


def _median_time(func, rounds, before=None):
    """Median wall time of ``func()`` over ``rounds`` calls (``before()`` runs untimed first)."""
    times = []
    for _ in range(rounds):
        if before is not None:
            before()
        start = time.perf_counter()
        func()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def _inputs(n):
    """The 10**4 points, complex points, radii and probabilities used at size ``n``."""
    rng = np.random.default_rng(n)
    edge = np.sqrt(n)
    radii = np.linspace(0.0, edge + 10.0, POINTS)
    z = radii * np.exp(1j * rng.uniform(0, np.pi, POINTS))
    probs = np.logspace(-20, np.log10(0.8), POINTS)
    return radii, z, probs


def time_size(n, rounds):
    """One row of timings (seconds) for size ``n``."""
    radii, z, probs = _inputs(n)
    row = {"n": n, "points": POINTS}
    row["setup_s"] = _median_time(lambda: radial._grid(n), rounds, before=radial._grid.cache_clear)
    row["real_density_s"] = _median_time(lambda: real_density(radii, n), rounds)
    row["complex_density_s"] = _median_time(lambda: complex_density(z, n), rounds)
    row["expected_outside_s"] = _median_time(lambda: expected_outside(radii, n), rounds)
    row["modulus_cdf_s"] = _median_time(lambda: modulus_cdf(radii / np.sqrt(n), n), rounds)
    row["spectral_radius_sf_s"] = _median_time(lambda: spectral_radius_sf(radii, n), rounds)
    row["spectral_radius_isf_s"] = _median_time(lambda: spectral_radius_isf(probs, n), rounds)
    return row


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--quick", action="store_true", help="smoke run up to n = 10**4, one round, no file")
    args = parser.parse_args(argv)
    sizes, rounds = (QUICK_SIZES, 1) if args.quick else (SIZES, ROUNDS)
    load_start = os.getloadavg()[0]
    rows = [time_size(n, rounds) for n in sizes]
    doc = {
        "schema_version": 1,
        "generated_by": "benchmarks/bench_radial.py",
        "nullspec": nullspec.__version__,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "python": platform.python_version(),
        "machine": platform.machine(),
        "cpu_count": os.cpu_count(),
        "rounds": rounds,
        "load_average_1min": {"start": load_start, "end": os.getloadavg()[0]},
        "results": rows,
    }
    text = json.dumps(doc, indent=1)
    if args.quick:
        print(text)
        return 0
    RESULTS.parent.mkdir(parents=True, exist_ok=True)
    RESULTS.write_text(text + "\n")
    print(f"wrote {RESULTS}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
