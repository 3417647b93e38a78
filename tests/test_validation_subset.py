"""A fast subset of the validation study (validation/size_study.py), and the summary's agreement with its JSON.

The size checks run the study's own code for a few configurations with fewer replications: the
permutation null under Laplace, Rademacher and sparse entries at N = 25 (issue 4's criterion: size
within the binomial 99% band at alpha = 0.05) and the exact Gaussian null under Gaussian entries at
N = 20.  Each configuration has a fixed seed (validation/_common.cell_seed), so the test is
deterministic; the bands are the exact binomial quantiles of scipy.stats (derivations below).
"""

import importlib
from pathlib import Path
import sys

import pytest
from scipy import stats

VALIDATION = Path(__file__).resolve().parent.parent / "validation"


@pytest.fixture(scope="module")
def studies():
    """The validation scripts as modules (they import their shared helpers as ``_common``)."""
    sys.path.insert(0, str(VALIDATION))
    try:
        yield {name: importlib.import_module(name) for name in ("_common", "size_study", "summarize")}
    finally:
        sys.path.remove(str(VALIDATION))


# R = 150 replications of an exact 5% test: the rejection count is Binomial(150, 0.05), whose exact
# 0.5% and 99.5% quantiles are 2 and 15 (scipy.stats.binom.ppf), i.e. rates 0.013 and 0.100.
PERMUTATION_R = 150
# R = 600 for the Gaussian null (one eigenvalue solve each): Binomial(600, 0.05) quantiles 17 and 45.
GAUSSIAN_R = 600
ALPHA = "0.05"


def test_bands_are_the_binomial_quantiles(studies):
    # scipy.stats.binom is the reference; the numbers are those quoted in the comments above
    assert studies["_common"].binomial_band(PERMUTATION_R, 0.05) == (2, 15)
    assert studies["_common"].binomial_band(GAUSSIAN_R, 0.05) == (17, 45)
    lo, hi = studies["_common"].binomial_band(PERMUTATION_R, 0.05)
    assert stats.binom.cdf(lo - 1, PERMUTATION_R, 0.05) < 0.005 and stats.binom.sf(hi, PERMUTATION_R, 0.05) <= 0.005


@pytest.mark.parametrize("law", ["laplace", "rademacher", "sparse"])
def test_permutation_null_size_in_band(studies, law):
    record = studies["size_study"].size_cell("permutation-all", law, 25, PERMUTATION_R)
    lo, hi = record["bands"][ALPHA]
    counts = {col: per[ALPHA] for col, per in record["counts"].items()}
    # radial and edge are continuous: the permutation test is exact, both sides of the band bind
    assert lo <= counts["radial"] <= hi, counts
    assert lo <= counts["edge"] <= hi, counts
    # the real count is discrete (ties make its p-value conservative), and so the omnibus that uses it
    assert counts["real_count"] <= hi and counts["omnibus"] <= hi, counts
    assert record["mean_draws"] <= 99


def test_gaussian_null_size_in_band_under_gaussian_entries(studies):
    record = studies["size_study"].size_cell("gaussian", "gaussian", 20, GAUSSIAN_R)
    lo, hi = record["bands"][ALPHA]
    counts = {col: per[ALPHA] for col, per in record["counts"].items()}
    assert lo <= counts["radial"] <= hi, counts  # tabulated null quantiles: exact up to the table's MC error
    for col in ("real_count", "edge", "omnibus"):  # discrete / estimated scale / Holm: may be conservative
        assert counts[col] <= hi, counts
    assert record["warning_rates"].get("NonGaussianEntriesWarning", 0.0) < 0.05


def test_replications_do_not_depend_on_n_jobs(studies):
    # loky reuses worker processes started by earlier tests, before validation/ was on sys.path, and
    # they could not unpickle the study's functions: start fresh workers, which inherit sys.path.
    from joblib.externals.loky import get_reusable_executor

    get_reusable_executor().shutdown(wait=True, kill_workers=True)
    common, size = studies["_common"], studies["size_study"]
    seed = common.cell_seed(size.ROOT_SEED, "n_jobs-check")
    options = {"null": "permutation-rows", "law": "t5", "n": 12}
    one = common.run_replications(size.replicate, seed, 12, options, n_jobs=1)
    two = common.run_replications(size.replicate, seed, 12, options, n_jobs=2)
    assert one == two


def test_summary_matches_the_committed_json(studies):
    summarize = studies["summarize"]
    assert summarize.SUMMARY.read_text() == summarize.render(), "run python validation/summarize.py"
