"""Shared machinery of the validation studies (size, power, calibration gain) and their summary.

One owner for what the three study scripts share:

- the entry laws, all with mean 0 and variance 1 (:data:`LAWS`, :func:`draw_entries`), and the
  arbitrary mean and scale put on every simulated matrix (:func:`arbitrary_affine`: the tests are
  meant to be invariant under ``A -> loc + scale * A``, so the studies never feed them unit entries);
- seeds: a configuration's seed is a pure function of the study's root seed and the configuration's
  key (:func:`cell_seed`), and replication ``r`` gets its ``r``-th child, so every number is
  the same for any ``n_jobs``, any order of the configurations and any resumption;
- binomial bands and intervals from exact binomial quantiles (scipy.stats);
- resumable runs: each configuration's result is written to its own JSON record as soon as it is
  finished, and a rerun skips the records that exist (:func:`run_cells`);
- replications in parallel with joblib (one BLAS thread and ``n_jobs=1`` inside each worker), with
  the warnings nullspec raised counted per replication.

Progress goes to stderr; results go to ``validation/results/<study>/<key>.json``.
"""

import hashlib
import json
import math
import os
from pathlib import Path
import platform
import subprocess
import sys
import time
import warnings

import joblib
import numpy as np
import scipy
from scipy import stats
from threadpoolctl import threadpool_limits

import nullspec
from nullspec._rng import batch_seed
from nullspec.exceptions import NullspecWarning

HERE = Path(__file__).resolve().parent
RESULTS = HERE / "results"
#: Level of the binomial bands (size) and intervals (power).
CONFIDENCE = 0.99
#: The levels every study reports; both are read off the same replications.
ALPHAS = (0.01, 0.05)
#: Statistics in the order the records list them; "omnibus" is the test's overall p-value.
STATISTICS = ("real_count", "radial", "edge")
COLUMNS = STATISTICS + ("omnibus",)
#: Workers across replications (the machine has 2 cores).
N_JOBS = 2
#: Replications per joblib task (amortises the task overhead; the seeds do not depend on it).
CHUNK = 10

_SPARSE_DENSITY = 0.1


def _gaussian(rng, n):
    return rng.standard_normal((n, n))


def _rademacher(rng, n):
    return rng.choice(np.array([-1.0, 1.0]), size=(n, n))


def _student_t5(rng, n):
    return rng.standard_t(5, size=(n, n)) / math.sqrt(5.0 / 3.0)  # Var t_5 = 5/3


def _sparse(rng, n):
    signs = rng.choice(np.array([-1.0, 1.0]), size=(n, n))
    return np.where(rng.random((n, n)) < _SPARSE_DENSITY, signs / math.sqrt(_SPARSE_DENSITY), 0.0)


def _laplace(rng, n):
    return rng.laplace(0.0, 1.0 / math.sqrt(2.0), size=(n, n))  # Var = 2 b^2 = 1


#: name -> (description, sampler(rng, n) of an n x n matrix of i.i.d. mean-0, variance-1 entries).
LAWS = {
    "gaussian": ("N(0, 1)", _gaussian),
    "rademacher": ("+-1 with probability 1/2 each", _rademacher),
    "t5": ("Student t with 5 degrees of freedom / sqrt(5/3) (excess kurtosis 6)", _student_t5),
    "sparse": ("0 with probability 0.9, else +-1/sqrt(0.1) (density 0.1)", _sparse),
    "laplace": ("Laplace with scale 1/sqrt(2) (excess kurtosis 3)", _laplace),
}


def draw_entries(law, rng, n):
    """An n x n matrix of i.i.d. entries of mean 0 and variance 1 from the law named `law`.

    Parameters
    ----------
    law : str
        A key of :data:`LAWS`.
    rng : numpy.random.Generator
        The only source of randomness.
    n : int
        Matrix size.

    Returns
    -------
    ndarray, shape (n, n)

    Examples
    --------
    >>> import numpy as np
    >>> x = draw_entries("sparse", np.random.default_rng(0), 200)
    >>> round(float((x != 0).mean()), 2), round(float(x.var()), 1)
    (0.1, 1.0)
    """
    return LAWS[law][1](rng, n)


def arbitrary_affine(rng, x):
    """``loc + scale * x`` with loc uniform on [-10, 10] and scale log-uniform on [0.1, 10].

    Examples
    --------
    >>> import numpy as np
    >>> y = arbitrary_affine(np.random.default_rng(1), np.eye(3))
    >>> bool(np.all(np.diff(np.unique(y)) > 0)), y.shape
    (True, (3, 3))
    """
    loc = rng.uniform(-10.0, 10.0)
    scale = 10.0 ** rng.uniform(-1.0, 1.0)
    return loc + scale * x


def binomial_band(replications, alpha, confidence=CONFIDENCE):
    """Band of rejection counts a test of exact size `alpha` stays in with probability >= `confidence`.

    With ``X ~ Binomial(R, alpha)``: ``lo = F^-1((1 - c) / 2)`` and ``hi = F^-1((1 + c) / 2)`` from
    the exact binomial quantile function (scipy.stats.binom.ppf, the smallest k with F(k) >= q), so
    ``P(X < lo) < (1 - c) / 2`` and ``P(X > hi) <= (1 - c) / 2``.

    Returns
    -------
    tuple of int
        ``(lo, hi)``, counts (divide by R for rates).

    Examples
    --------
    >>> binomial_band(1000, 0.05)
    (33, 69)
    """
    q = (1.0 - confidence) / 2.0
    return int(stats.binom.ppf(q, replications, alpha)), int(stats.binom.ppf(1.0 - q, replications, alpha))


def binomial_interval(count, replications, confidence=CONFIDENCE):
    """Exact (Clopper-Pearson) interval for a rejection rate (scipy.stats.binomtest).

    Examples
    --------
    >>> [round(v, 3) for v in binomial_interval(50, 100)]
    [0.369, 0.631]
    """
    ci = stats.binomtest(int(count), int(replications)).proportion_ci(confidence_level=confidence, method="exact")
    return float(ci.low), float(ci.high)


def cell_seed(root, key):
    """The seed of one configuration: ``SeedSequence([root, h])`` with h a hash of its key.

    Examples
    --------
    >>> s = cell_seed(1, "a")
    >>> s.entropy == cell_seed(1, "a").entropy, s.entropy == cell_seed(1, "b").entropy
    (True, False)
    """
    digest = int.from_bytes(hashlib.blake2b(key.encode(), digest_size=8).digest(), "big")
    return np.random.SeedSequence([int(root), digest])


def split_seed(seed):
    """(data generator, seed of the test's drawn null) of one replication, from its seed."""
    return np.random.default_rng(batch_seed(seed, 0)), batch_seed(seed, 1)


def pvalue_row(result):
    """``{column: p-value}`` of a SpectralTestResult: each statistic, and "omnibus"."""
    return {**{name: result.tests[name].pvalue for name in result.tests}, "omnibus": result.pvalue}


def _run_chunk(replicate, seeds, options):
    """Run `replicate(seed, **options)` for each seed, one BLAS thread, warnings counted."""
    out = []
    with threadpool_limits(limits=1):
        for seed in seeds:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                result = replicate(seed, **options)
            names = sorted({w.category.__name__ for w in caught if issubclass(w.category, NullspecWarning)})
            out.append({**result, "warnings": names})
    return out


def run_replications(replicate, seed, replications, options, n_jobs=N_JOBS):
    """Outcomes of `replications` independent replications of one configuration.

    Parameters
    ----------
    replicate : callable
        ``replicate(seed, **options) -> dict`` for one replication (module level: picklable).
    seed : numpy.random.SeedSequence
        The configuration's seed; replication ``r`` gets ``nullspec._rng.batch_seed(seed, r)`` (the
        ``r``-th spawned child, without the state that ``SeedSequence.spawn`` keeps).
    replications : int
    options : dict
    n_jobs : int
        joblib workers; 1 runs in-process. The outcomes do not depend on it.

    Returns
    -------
    list of dict
        One per replication, in replication order, each with a ``warnings`` entry (the nullspec
        warning classes raised in it).
    """
    seeds = [batch_seed(seed, r) for r in range(replications)]
    chunks = [seeds[i : i + CHUNK] for i in range(0, replications, CHUNK)]
    if n_jobs == 1:
        return [row for chunk in chunks for row in _run_chunk(replicate, chunk, options)]
    parallel = joblib.Parallel(n_jobs=n_jobs, backend="loky")
    return [row for rows in parallel(joblib.delayed(_run_chunk)(replicate, c, options) for c in chunks) for row in rows]


def warning_rates(outcomes):
    """Fraction of replications in which each nullspec warning class was raised."""
    names = sorted({name for row in outcomes for name in row["warnings"]})
    return {name: sum(name in row["warnings"] for row in outcomes) / len(outcomes) for name in names}


def rejection_counts(outcomes, alphas=ALPHAS, columns=COLUMNS):
    """``{column: {str(alpha): count of p <= alpha}}`` over outcomes with a ``pvalues`` mapping."""
    return {
        col: {str(a): int(sum(row["pvalues"][col] <= a for row in outcomes)) for a in alphas} for col in columns
    }


def _git(*args):
    """Output of a git command in the checkout holding this folder ("" when git or the checkout is missing)."""
    try:
        done = subprocess.run(["git", "-C", str(HERE), *args], capture_output=True, text=True, timeout=30)
    except OSError:
        return ""
    return done.stdout.strip() if done.returncode == 0 else ""


def environment():
    """Versions, the package's commit (and whether nullspec/ had uncommitted changes) and machine facts."""
    return {
        "nullspec": nullspec.__version__, "numpy": np.__version__, "scipy": scipy.__version__,
        "joblib": joblib.__version__, "python": platform.python_version(), "cpu_count": os.cpu_count(),
        "commit": _git("rev-parse", "--short", "HEAD") or None,
        "package_modified": bool(_git("status", "--porcelain", "--", str(HERE.parent / "nullspec"))),
    }


def record_path(study, key):
    return RESULTS / study / f"{key}.json"


def write_json(path, obj):
    """Write strict JSON atomically (temporary file, then rename)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_suffix(".json.tmp")
    tmp.write_text(json.dumps(obj, indent=1, sort_keys=True, allow_nan=False) + "\n")
    os.replace(tmp, path)


def load_records(study):
    """All records of a study, sorted by key."""
    return [json.loads(p.read_text()) for p in sorted((RESULTS / study).glob("*.json"))]


def progress(message):
    print(message, file=sys.stderr, flush=True)


def run_cells(study, cells, run_cell, *, n_jobs=N_JOBS):
    """Run every configuration whose record does not exist yet; write each record when it is done.

    Parameters
    ----------
    study : str
        The study's name (the records' folder under ``validation/results``).
    cells : sequence of dict
        Configurations, each with a unique ``"key"``.
    run_cell : callable
        ``run_cell(cell, n_jobs) -> dict``: the configuration's record (without bookkeeping).
    n_jobs : int
        Workers across replications.

    Returns
    -------
    float
        Wall-clock seconds spent on the configurations run now.
    """
    start = time.perf_counter()
    for i, cell in enumerate(cells, 1):
        path = record_path(study, cell["key"])
        if path.exists():
            progress(f"[{study}] {i}/{len(cells)} {cell['key']}: done earlier, skipped")
            continue
        t0 = time.perf_counter()
        record = run_cell(cell, n_jobs)
        elapsed = time.perf_counter() - t0
        write_json(path, {**record, "key": cell["key"], "study": study, "elapsed_seconds": round(elapsed, 2),
                          "n_jobs": n_jobs, "environment": environment()})
        progress(f"[{study}] {i}/{len(cells)} {cell['key']}: {elapsed:.1f} s")
    return time.perf_counter() - start
