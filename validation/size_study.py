"""Size study: how often each null rejects when the entries are i.i.d. (the null hypothesis is true).

For every null (the exact Gaussian null; the permutation null with each of its five schemes -- under
i.i.d. entries every scheme's hypothesis holds; the bootstrap) x entry law (:data:`_common.LAWS`)
x N, a configuration draws R matrices ``loc + scale * X`` with i.i.d. unit entries X and arbitrary
``loc`` and ``scale`` (the tests are invariant under them), tests each with
:func:`nullspec.spectral_test` (drawn nulls: ``n_resamples=B``, Besag-Clifford stopping at
alpha = 0.05) and counts the p-values <= alpha for each statistic and the omnibus, at alpha = 0.01
and 0.05 on the same replications.  That is valid with sequential stopping: a statistic the rule
settles has ``p = h / l > 0.05``, so it is rejected at neither level, and one it does not settle gets
the fixed-B p-value ``(b + 1) / (B + 1)``, the same event as without stopping.

Each record also states what the theory expects of the cell (``expectation`` per column), so that
the summary can tell a null that is known not to hold there from an unexpected miss:

- ``exact``: the rejection rate must lie in the two-sided binomial band (permutation nulls for the
  continuous statistics ``radial`` and ``edge``: the data and the surrogates are exchangeable);
- ``valid``: only the upper side binds, the test may be conservative (a discrete statistic with
  ties, the doubled two-sided real-count p-value, the Holm omnibus, the estimated scale);
- ``not guaranteed``: the Gaussian null with non-Gaussian entries (THEORY.md section 8), except the
  real count with continuous symmetric entries at N >= 50, which section 8 found valid;
- ``approximate``: the bootstrap (asymptotically valid, no finite-N guarantee): both sides checked;
  ``approximate, discrete`` for its real count and omnibus, where ties make the p-value conservative
  as for the permutation null, so a rate below the band is not counted against it.

Run time on the project's 2-core machine: see ``validation/README.md``.

Usage::

    python validation/size_study.py [--n-jobs 2]     # resumable: finished configurations are skipped
"""

import argparse

import numpy as np

import nullspec
from nullspec.nulls import Permutation
from nullspec.nulls.engine import default_batch_size

import _common as common

ROOT_SEED = 20250701
N_RESAMPLES = 99  # B = 99: p = (b + 1) / 100 resolves alpha = 0.01 exactly
SEQUENTIAL_ALPHA = 0.05
SCHEMES = ("all", "offdiagonal", "rows", "columns", "pairs")
NULLS = ("gaussian",) + tuple(f"permutation-{s}" for s in SCHEMES) + ("bootstrap",)
SIZES = (20, 100, 300)
# Replications per configuration, chosen to fit the 45-minute budget on 2 cores (README): the exact
# Gaussian null costs one eigenvalue solve per replication, a drawn null up to B + 1 = 100.
R_GAUSSIAN = {20: 2000, 100: 2000, 300: 1000}
R_DRAWN = {20: 300, 100: 200, 300: 100}
# The four schemes other than "all" (offdiagonal, rows, columns, pairs) get fewer replications at
# N >= 100, every law.
R_OTHER_SCHEMES = {20: 300, 100: 100, 300: 100}
_CONTINUOUS_SYMMETRIC = ("gaussian", "t5", "laplace")


def null_argument(null):
    """The ``null=`` argument of spectral_test for a null's name in :data:`NULLS`."""
    if null.startswith("permutation-"):
        return Permutation(null.removeprefix("permutation-"))
    return null


def expectation(null, law, n, column):
    """What the theory expects of one column of one configuration (module docstring), with why."""
    if null.startswith("permutation-"):
        if column in ("radial", "edge"):
            return "exact", "permutation of i.i.d. entries: data and surrogates exchangeable"
        return "valid", "exchangeable, but the real count is discrete (ties make the p-value conservative)"
    if null == "bootstrap":
        if column in ("radial", "edge"):
            return "approximate", "bootstrap: asymptotically valid, no finite-N guarantee"
        reason = "bootstrap (no finite-N guarantee); the real count is discrete (ties: conservative)"
        return "approximate, discrete", reason
    if law == "gaussian":
        if column == "radial":
            return "exact", "exact Gaussian null (tabulated radial quantiles)"
        return "valid", "exact Gaussian null (discrete real count, estimated scale or Holm: may be conservative)"
    if column == "real_count" and law in _CONTINUOUS_SYMMETRIC and n >= 50:
        return "valid", "THEORY.md s.8: Gaussian real-count null fine for continuous symmetric entries at N >= 50"
    return "not guaranteed", f"THEORY.md s.8: Gaussian null not guaranteed for {law} entries at N = {n}"


def replicate(seed, *, null, law, n):
    """One replication: p-values of each statistic and the omnibus, and the draws used."""
    rng, null_seed = common.split_seed(seed)
    a = common.arbitrary_affine(rng, common.draw_entries(law, rng, n))
    res = nullspec.spectral_test(a, null=null_argument(null), n_resamples=N_RESAMPLES, alpha=SEQUENTIAL_ALPHA,
                                 rng=null_seed, n_jobs=1, progress=False, sequential=True)
    return {"pvalues": common.pvalue_row(res), "draws": res.n_resamples}


def key(null, law, n):
    return f"{null}_{law}_n{n:03d}"


def size_cell(null, law, n, replications, n_jobs=1):
    """The record of one configuration: counts, bands and expectations at each alpha.

    Parameters
    ----------
    null : str
        A name in :data:`NULLS`.
    law : str
        A key of :data:`_common.LAWS`.
    n : int
        Matrix size.
    replications : int
        R.
    n_jobs : int
        Workers across replications (the numbers do not depend on it).

    Returns
    -------
    dict
    """
    seed = common.cell_seed(ROOT_SEED, key(null, law, n))
    outcomes = common.run_replications(replicate, seed, replications, {"null": null, "law": law, "n": n}, n_jobs)
    draws = [row["draws"] for row in outcomes if row["draws"] is not None]
    return {
        "config": {"null": null, "law": law, "law_description": common.LAWS[law][0], "n": n},
        "replications": replications,
        "n_resamples": None if null == "gaussian" else N_RESAMPLES,
        "sequential_alpha": None if null == "gaussian" else SEQUENTIAL_ALPHA,
        "mean_draws": float(np.mean(draws)) if draws else None,
        "engine_batch_size": None if null == "gaussian" else default_batch_size(n),
        "seed": {"root": ROOT_SEED, "entropy": list(seed.entropy)},
        "counts": common.rejection_counts(outcomes),
        "bands": {str(a): list(common.binomial_band(replications, a)) for a in common.ALPHAS},
        "band_confidence": common.CONFIDENCE,
        "expectation": {col: list(expectation(null, law, n, col)) for col in common.COLUMNS},
        "warning_rates": common.warning_rates(outcomes),
    }


def replications(null, n):
    """R of a configuration (module constants)."""
    if null == "gaussian":
        return R_GAUSSIAN[n]
    if null in ("permutation-all", "bootstrap"):
        return R_DRAWN[n]
    return R_OTHER_SCHEMES[n]


def cells():
    """Every configuration run, cheapest sizes first."""
    out = []
    for n in SIZES:
        for null in NULLS:
            for law in common.LAWS:
                out.append({"key": key(null, law, n), "null": null, "law": law, "n": n,
                            "replications": replications(null, n)})
    return out


def _run_cell(cell, n_jobs):
    return size_cell(cell["null"], cell["law"], cell["n"], cell["replications"], n_jobs)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0], allow_abbrev=False)
    parser.add_argument("--n-jobs", type=int, default=common.N_JOBS, help="workers across replications")
    args = parser.parse_args(argv)
    elapsed = common.run_cells("size", cells(), _run_cell, n_jobs=args.n_jobs)
    common.progress(f"[size] finished in {elapsed:.0f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
