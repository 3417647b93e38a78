"""The drawn-null engine: reproducible for any parallelism, extensible, interruptible, stoppable."""

import sys

import numpy as np
import pytest
from joblib import parallel_config
from threadpoolctl import threadpool_info

from nullspec._lapack import eigvals, hessenberg_eigvals
from nullspec.exceptions import InterruptedNullWarning
from nullspec.nulls import Bootstrap, Gaussian, NullDraws, Permutation, draw_null
from nullspec.nulls import engine
from nullspec.nulls.engine import default_batch_size

N = 12
BATCH = 4  # small batches: many tasks, partial batches at the ends


def spectrum_stats(surrogate):
    """Real count and spectral radius: one discrete and one continuous statistic."""
    ev = eigvals(surrogate, overwrite_a=True)
    return np.array([np.count_nonzero(ev.imag == 0), np.abs(ev).max()])


def blas_threads(surrogate):
    """Largest BLAS thread count in the process running this evaluation."""
    return [max(lib["num_threads"] for lib in threadpool_info() if lib["user_api"] == "blas")]


class InterruptAt:
    """An evaluation that raises KeyboardInterrupt on its `k`-th call (simulates Ctrl-C)."""

    def __init__(self, k):
        self.k, self.calls = k, 0

    def __call__(self, surrogate):
        self.calls += 1
        if self.calls == self.k:
            raise KeyboardInterrupt
        return spectrum_stats(surrogate)


class StopAfterHits:
    """Reference stopping rule: stop at the `h`-th draw whose real count reaches `observed`."""

    def __init__(self, observed, h):
        self.observed, self.h, self.calls = observed, h, []

    def __call__(self, values):
        self.calls.append(len(values))
        hits = np.flatnonzero(values[:, 0] >= self.observed)
        return int(hits[self.h - 1]) + 1 if len(hits) >= self.h else None


@pytest.fixture(scope="module")
def matrix():
    return np.random.default_rng(2024).standard_normal((N, N))


def run(matrix, **kwargs):
    options = dict(n_resamples=30, rng=77, batch_size=BATCH, progress=False)
    options.update(kwargs)
    return draw_null(matrix, Permutation(), spectrum_stats, **options)


@pytest.fixture(scope="module")
def reference(matrix):
    return run(matrix, n_jobs=1)


def test_result_fields(reference):
    assert isinstance(reference, NullDraws)
    assert reference.values.shape == (30, 2)
    assert reference.n_used == 30 and reference.complete
    assert reference.n_batches == 8 and reference.batch_size == BATCH  # ceil(30 / 4)
    assert reference.entropy == 77 and reference.spawn_key == ()
    assert reference.backend == "in-process"
    assert reference.null == "Permutation(within='all')"
    assert reference.elapsed > 0
    assert len(np.unique(reference.values[:, 1])) > 25  # the surrogates differ from each other


def test_values_are_the_statistics_of_the_documented_draws(matrix, reference):
    # draw j lives in batch j // BATCH at position j % BATCH of default_rng(batch_seed(root, i))
    # (the i-th child of SeedSequence(77).spawn); written out here without the engine
    children = np.random.SeedSequence(77).spawn(8)
    expected = []
    for i, child in enumerate(children):
        g = np.random.default_rng(child)
        for _ in range(min(BATCH, 30 - i * BATCH)):
            expected.append(spectrum_stats(Permutation().draw(matrix, g)))
    np.testing.assert_array_equal(reference.values, np.array(expected))


@pytest.mark.parametrize(
    "backend, n_jobs",
    [(None, 2), ("threading", 2), ("loky", 2), ("threading", -1), (None, None)],
)
def test_identical_for_any_n_jobs_and_backend(matrix, reference, backend, n_jobs):
    with parallel_config(backend=backend) if backend else parallel_config():
        got = run(matrix, n_jobs=n_jobs)
    np.testing.assert_array_equal(got.values, reference.values)
    expected_backend = {None: "in-process"}.get(n_jobs, backend or "threading")
    assert got.backend == expected_backend


def test_identical_for_any_completion_order(matrix, reference, monkeypatch):
    original = engine._Runner.run

    def reversed_run(self, work, tasks):
        yield from original(self, work, list(reversed(tasks)))

    monkeypatch.setattr(engine._Runner, "run", reversed_run)
    np.testing.assert_array_equal(run(matrix, n_jobs=1).values, reference.values)


@pytest.mark.dask
def test_identical_on_dask_in_process_cluster(matrix, reference):
    distributed = pytest.importorskip("distributed")
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=2, dashboard_address=":0"):
        with parallel_config(backend="dask"):
            got = run(matrix, n_jobs=2)
    np.testing.assert_array_equal(got.values, reference.values)
    assert got.backend.startswith("dask")


def test_same_seed_sequence_reproduces_an_unseeded_run(matrix):
    first = run(matrix, rng=None)
    again = run(matrix, rng=first.seed_sequence())
    np.testing.assert_array_equal(first.values, again.values)


def test_a_generator_seed_is_consumed(matrix):
    g = np.random.default_rng(3)
    assert not np.array_equal(run(matrix, rng=g).values, run(matrix, rng=g).values)


@pytest.mark.parametrize("first", [1, 13, 16])
def test_extension_equals_one_longer_run(matrix, first):
    longer = run(matrix, n_resamples=first + 21)
    part = run(matrix, n_resamples=first)
    extended = draw_null(
        matrix, Permutation(), spectrum_stats, n_resamples=21, previous=part, progress=False
    )
    np.testing.assert_array_equal(extended.values, longer.values)
    assert extended.n_used == first + 21 and extended.n_batches == longer.n_batches
    assert extended.elapsed > part.elapsed


def test_interruption_returns_finished_batches_with_a_warning(matrix, reference):
    with pytest.warns(InterruptedNullWarning, match="interrupted after 12 draws"):
        got = draw_null(
            matrix, Permutation(), InterruptAt(15), n_resamples=30, rng=77, batch_size=BATCH,
            progress=False,
        )
    # the 15th evaluation is in batch 3 (draws 12-15): batches 0-2 are the finished prefix
    assert not got.complete and got.n_used == 12
    np.testing.assert_array_equal(got.values, reference.values[:12])
    rest = draw_null(matrix, Permutation(), spectrum_stats, n_resamples=18, previous=got, progress=False)
    assert rest.complete
    np.testing.assert_array_equal(rest.values, reference.values)


def test_interruption_before_any_batch(matrix):
    with pytest.warns(InterruptedNullWarning, match="after 0 draws"):
        got = draw_null(matrix, Permutation(), InterruptAt(1), n_resamples=10, rng=1, progress=False)
    assert got.values.shape[0] == 0 and got.n_used == 0 and not got.complete


@pytest.fixture(scope="module")
def long_reference(matrix):
    return run(matrix, n_resamples=300, n_jobs=1)


@pytest.mark.parametrize("n_jobs, backend", [(1, None), (2, "threading"), (2, "loky")])
def test_stop_rule_is_honoured_and_independent_of_n_jobs(matrix, long_reference, n_jobs, backend):
    observed, h = np.median(long_reference.values[:, 0]), 45
    hits = np.flatnonzero(long_reference.values[:, 0] >= observed)
    expected_l = int(hits[h - 1]) + 1  # where the rule settles on the full run
    assert expected_l > 8 * BATCH  # the test needs many batches before the stop
    rule = StopAfterHits(observed, h)
    with parallel_config(backend=backend) if backend else parallel_config():
        got = run(matrix, n_resamples=300, n_jobs=n_jobs, stop=rule)
    assert got.n_used == expected_l and got.complete
    assert len(got.values) == -(-expected_l // BATCH) * BATCH  # up to the end of the settling batch
    assert rule.calls == list(range(BATCH, len(got.values) + 1, BATCH))  # after every batch, in order
    np.testing.assert_array_equal(got.values, long_reference.values[: len(got.values)])


def test_stop_rule_that_never_stops_runs_everything(matrix, reference):
    got = run(matrix, stop=lambda values: None)
    np.testing.assert_array_equal(got.values, reference.values)
    assert got.n_used == 30


@pytest.mark.parametrize("answer, match", [(0, r"integer >= 1"), (10_000, rf"L <= {BATCH}"), (2.5, "whole number")])
def test_stop_rule_answers_are_checked(matrix, answer, match):
    with pytest.raises(ValueError, match=match):
        run(matrix, stop=lambda values: answer)


def test_input_is_never_modified(matrix):
    copy = matrix.copy()
    for null in (Permutation("pairs"), Bootstrap(), Gaussian()):
        draw_null(matrix, null, spectrum_stats, n_resamples=9, rng=0, batch_size=2, n_jobs=2, progress=False)
    np.testing.assert_array_equal(matrix, copy)


@pytest.mark.parametrize("n_jobs", [1, 2])
def test_read_only_memmap_input(tmp_path, matrix, reference, n_jobs):
    path = tmp_path / "a.npy"
    np.save(path, matrix)
    mapped = np.load(path, mmap_mode="r")
    np.testing.assert_array_equal(run(mapped, n_jobs=n_jobs).values, reference.values)


@pytest.mark.parametrize("n_jobs, backend", [(1, None), (2, "threading"), (2, "loky")])
def test_blas_held_to_one_thread_during_the_run(matrix, n_jobs, backend):
    before = threadpool_info()
    with parallel_config(backend=backend) if backend else parallel_config():
        got = draw_null(matrix, Permutation(), blas_threads, n_resamples=8, rng=0, batch_size=2,
                        n_jobs=n_jobs, progress=False)
    assert np.all(got.values == 1)
    assert [lib["num_threads"] for lib in threadpool_info()] == [lib["num_threads"] for lib in before]


def test_hessenberg_gaussian_through_the_engine(matrix):
    null = Gaussian(loc=0.0, scale=1.0, hessenberg=True)

    got = draw_null(matrix, null, _hessenberg_real_count, n_resamples=20, rng=4, progress=False)
    assert got.values.shape == (20, 1) and np.all(got.values % 2 == N % 2)  # K = N mod 2


def _hessenberg_real_count(h):
    return [np.count_nonzero(hessenberg_eigvals(h, overwrite=True).imag == 0)]


def test_progress_bar_on_stderr(matrix, capsys):
    pytest.importorskip("tqdm")
    run(matrix, progress=True)
    captured = capsys.readouterr()
    assert "30/30" in captured.err and captured.out == ""
    run(matrix, progress=False)
    assert capsys.readouterr().err == ""


def test_progress_auto_is_off_without_a_terminal(matrix, capsys):
    assert not sys.stderr.isatty()
    run(matrix, progress=None)
    assert capsys.readouterr().err == ""


def test_default_batch_size_depends_on_n_only():
    sizes = [default_batch_size(n) for n in range(3, 1000, 7)]
    assert all(1 <= s <= 256 for s in sizes)
    assert sizes == sorted(sizes, reverse=True)


def test_default_batch_size_is_used(matrix):
    got = draw_null(matrix, Permutation(), spectrum_stats, n_resamples=5, rng=0, progress=False)
    assert got.batch_size == default_batch_size(N)


@pytest.mark.parametrize(
    "kwargs, error, match",
    [
        ({"n_resamples": 0}, ValueError, r"`n_resamples` must be an integer >= 1; got 0"),
        ({"n_resamples": 2.5}, ValueError, r"`n_resamples` must be an integer >= 1; got 2.5"),
        ({"batch_size": 0}, ValueError, r"`batch_size` must be an integer >= 1; got 0"),
        ({"matrix": np.zeros((3, 4))}, ValueError, r"`matrix` must be square"),
        ({"null": "permutation"}, TypeError, r"`null` must be a null model with a draw\(matrix, rng\)"),
    ],
)
def test_bad_arguments(matrix, kwargs, error, match):
    options = dict(matrix=matrix, null=Permutation(), evaluate=spectrum_stats, n_resamples=5)
    options.update(kwargs)
    positional = [options.pop(k) for k in ("matrix", "null", "evaluate")]
    with pytest.raises(error, match=match):
        draw_null(*positional, **options)


def test_bad_extensions(matrix, reference):
    def extend(**kwargs):
        options = dict(n_resamples=5, previous=reference, progress=False)
        options.update(kwargs)
        null = options.pop("null", Permutation())
        return draw_null(matrix, null, spectrum_stats, **options)

    with pytest.raises(ValueError, match=r"`rng` must be None when `previous` is given"):
        extend(rng=3)
    with pytest.raises(ValueError, match=r"`null` must be the null of `previous` \(Permutation\(within='all'\)\)"):
        extend(null=Permutation("rows"))
    with pytest.raises(ValueError, match=r"`batch_size` must equal previous.batch_size \(4\)"):
        extend(batch_size=5)
    with pytest.raises(TypeError, match=r"`previous` must be a NullDraws result of draw_null; got dict"):
        extend(previous={})
    with pytest.raises(ValueError, match=r"`matrix` must be the matrix of `previous`"):
        draw_null(matrix + 1.0, Permutation(), spectrum_stats, n_resamples=5, previous=reference)


def _fails(surrogate):
    raise ZeroDivisionError("raised by the evaluation")


@pytest.mark.parametrize("n_jobs", [1, 2])
def test_errors_in_the_evaluation_propagate(matrix, n_jobs):
    with pytest.raises(ZeroDivisionError, match="raised by the evaluation"):
        draw_null(matrix, Permutation(), _fails, n_resamples=20, rng=0, batch_size=2, n_jobs=n_jobs,
                  progress=False)


def test_small_runs_stay_in_process(matrix, reference):
    got = run(matrix, n_resamples=12, n_jobs=2)  # 3 batches < 4: no pool
    assert got.backend == "in-process"
    np.testing.assert_array_equal(got.values, reference.values[:12])


def test_values_are_read_only(reference):
    with pytest.raises(ValueError, match="read-only"):
        reference.values[0, 0] = 1.0
