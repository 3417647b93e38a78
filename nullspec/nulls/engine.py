"""The drawn-null engine: statistics of many surrogate matrices, in reproducible parallel batches.

Draw ``j`` of a null lives in batch ``i = j // batch_size`` at position ``j % batch_size``, and batch
``i`` draws from its own generator ``default_rng(batch_seed(root, i))`` (:mod:`nullspec._rng`). The
batch size is a function of the matrix size N only. So every draw is a pure function of the root
seed, N and ``j``: the values are identical for any ``n_jobs``, any joblib backend and any order in
which batches finish, and a result can be extended with draws ``B, B + 1, …`` without repeating
any. A stopping rule is asked after each batch *in draw order* (batch ``i`` once batches
``0 .. i`` are all finished, whatever order they finished in), so the stopping point and the values
kept do not depend on the parallelism either.

Parallel work goes through :class:`joblib.Parallel` with only a soft ``prefer`` hint, so
:func:`joblib.parallel_config` chooses the backend (loky, threading, dask, …). BLAS is held to one
thread in every process for the whole run: one eigenvalue solve per core is faster than a
multi-threaded one up to N ≈ 400 (PERFORMANCE.md), and a fixed thread count keeps LAPACK's rounding,
hence the values, the same in every process.
"""

import contextlib
import dataclasses
import hashlib
import sys
import threading
import time
import warnings

import numpy as np
from joblib import Parallel, delayed
from joblib.parallel import get_active_backend
from threadpoolctl import threadpool_limits

from .._rng import as_seed_sequence, batch_seed
from .._validation import check_positive_int, check_square_matrix
from ..exceptions import InterruptedNullWarning

__all__ = ["NullDraws", "draw_null", "default_batch_size"]

# Batch-size model: one draw costs about _DRAW_OVERHEAD (shuffle, standardise, statistics) plus the
# eigenvalue solve, ~2.2 ms at N = 100 on one core and O(N³) (PERFORMANCE.md, dgeev 1 thread).
_TARGET_BATCH_SECONDS = 0.05
_DRAW_OVERHEAD = 40e-6
_SOLVE_SECONDS_PER_N3 = 2.2e-9
_MAX_BATCH = 256
# Fewer tasks than this run in-process (see _Runner).
_MIN_TASKS_FOR_POOL = 4
# Soft hint given to joblib (see the module's Notes / benchmarks/bench_nulls.py for the measurement).
_PREFER = "threads"


@dataclasses.dataclass(frozen=True)
class NullDraws:
    """Statistics evaluated on the surrogates of a drawn null.

    Attributes
    ----------
    values : ndarray, shape (B, k)
        Row ``j`` holds the k statistics of surrogate ``j``, in draw order (read-only).
    n_used : int
        Number of leading rows the decision rests on: ``B``, or the ``L`` at which a stopping rule
        settled the decision (rows after ``L`` up to the end of that batch are kept).
    n_batches : int
        Number of batches the draws span (batch ``i`` holds draws ``i * batch_size`` onwards).
    batch_size : int
        Draws per batch.
    entropy : int or list of int
        Entropy of the root seed.
    spawn_key : tuple of int
        Spawn key of the root seed; ``SeedSequence(entropy, spawn_key=spawn_key)`` is the root.
    pool_size : int
        Pool size of the root seed (4 unless a SeedSequence with another one was given).
    complete : bool
        False when the run was interrupted and `values` holds only the batches finished before.
    backend : str
        Where the batches ran: ``"in-process"`` or the joblib backend's name (``"threading"``, ``"loky"``,
        ``"daskdistributed"``, …); for an extended result, the backend of the last extension.
    elapsed : float
        Wall-clock seconds spent drawing (summed over extensions).
    null : str
        ``repr`` of the null model, checked when the result is extended.
    matrix_digest : str
        A hash of the observed matrix's values, checked when the result is extended.
    """

    values: np.ndarray
    n_used: int
    n_batches: int
    batch_size: int
    entropy: object
    spawn_key: tuple
    pool_size: int
    complete: bool
    backend: str
    elapsed: float
    null: str
    matrix_digest: str

    def seed_sequence(self):
        """The root seed of the draws (a new SeedSequence object).

        Returns
        -------
        numpy.random.SeedSequence
        """
        return np.random.SeedSequence(self.entropy, spawn_key=self.spawn_key, pool_size=self.pool_size)


def default_batch_size(n):
    """Draws per batch for N x N matrices: about 50 ms of work on one core, between 1 and 256.

    A function of N only, never of ``n_jobs``, so the batch plan (hence every draw) is the same
    however the batches are run. 50 ms keeps joblib's per-task overhead (~1 ms with loky, a few
    µs with threads) near 2 % or below, while the last batches, which may leave a worker idle, cost
    at most ~50 ms of one core at the end of a run.

    Parameters
    ----------
    n : int
        Matrix size N.

    Returns
    -------
    int

    Examples
    --------
    >>> from nullspec.nulls.engine import default_batch_size
    >>> [default_batch_size(n) for n in (10, 50, 100, 200, 400)]
    [256, 159, 22, 3, 1]
    """
    seconds_per_draw = _DRAW_OVERHEAD + _SOLVE_SECONDS_PER_N3 * float(n) ** 3
    return int(min(max(round(_TARGET_BATCH_SECONDS / seconds_per_draw), 1), _MAX_BATCH))


_BLAS_LOCK = threading.Lock()
_BLAS_STATE = {"depth": 0, "limiter": None}


@contextlib.contextmanager
def _one_blas_thread():
    """Hold every BLAS library of this process to one thread; re-entrant and thread-safe.

    threadpoolctl limits are process-wide, so nested or concurrent users (the parent around the
    whole run, thread workers inside it, a dask worker running several batches at once) share one
    limiter, applied by the first to enter and restored by the last to leave.
    """
    with _BLAS_LOCK:
        if _BLAS_STATE["depth"] == 0:
            _BLAS_STATE["limiter"] = threadpool_limits(limits=1, user_api="blas")
        _BLAS_STATE["depth"] += 1
    try:
        yield
    finally:
        with _BLAS_LOCK:
            _BLAS_STATE["depth"] -= 1
            if _BLAS_STATE["depth"] == 0:
                _BLAS_STATE["limiter"].restore_original_limits()
                _BLAS_STATE["limiter"] = None


def _run_task(matrix, null, evaluate, root, task):
    """Evaluate the draws of one task; runs in a worker. Returns ``(task, values (m, k))``.

    A task ``(i, lo, hi)`` covers positions ``lo .. hi - 1`` of batch ``i``. Draws before ``lo``
    (already evaluated in an earlier run that is being extended) are drawn again, so the generator
    reaches position ``lo`` in the same state, but not evaluated.
    """
    index, lo, hi = task
    with _one_blas_thread():
        rng = np.random.default_rng(batch_seed(root, index))
        rows = []
        for position in range(hi):
            surrogate = null.draw(matrix, rng)
            if position >= lo:
                rows.append(np.asarray(evaluate(surrogate), dtype=np.float64).reshape(-1))
    return task, np.stack(rows)


def _tasks(start, stop, batch_size):
    """The tasks ``(batch, lo, hi)`` covering global draw indices ``start .. stop - 1``."""
    first, last = start // batch_size, -(-stop // batch_size)
    return [
        (i, max(start - i * batch_size, 0), min(stop - i * batch_size, batch_size))
        for i in range(first, last)
    ]


def _progress_bar(progress, total):
    """Context giving a tqdm bar on stderr, or None when off or tqdm is not installed."""
    if progress is False:
        return contextlib.nullcontext()
    try:
        from tqdm.auto import tqdm
    except ImportError:
        return contextlib.nullcontext()
    # disable=None: tqdm turns itself off when stderr is not a terminal (progress=None means auto)
    return tqdm(total=total, file=sys.stderr, unit="draw", disable=None if progress is None else False)


def _backend_name():
    """Short name of the joblib backend the hint and the active configuration select."""
    backend, _ = get_active_backend(prefer=_PREFER)
    return type(backend).__name__.removesuffix("Backend").lower()


class _Runner:
    """Runs the tasks in-process or through one joblib Parallel.

    A run with one worker, or with fewer than _MIN_TASKS_FOR_POOL tasks (under ~0.2 s of work),
    stays in-process: a pool could save at most ~0.1 s there, and a cold process pool costs ~0.3 s
    to start (PERFORMANCE.md).
    """

    def __init__(self, n_jobs, n_tasks):
        # batch_size=1: a task is already ~50 ms of work; joblib's automatic grouping would bundle
        # several, leave a worker idle at the end of the run and delay the stopping checks.
        parallel = Parallel(
            n_jobs=n_jobs, prefer=_PREFER, return_as="generator_unordered", batch_size=1
        )
        pooled = parallel.n_jobs != 1 and n_tasks >= _MIN_TASKS_FOR_POOL
        self.parallel = parallel if pooled else None
        self.backend = _backend_name() if pooled else "in-process"

    def __enter__(self):
        if self.parallel is not None:
            self.parallel.__enter__()
        return self

    def __exit__(self, *exc_info):
        if self.parallel is not None:
            self.parallel.__exit__(*exc_info)

    def run(self, work, tasks):
        """Yield ``(task, values)`` for each task, in completion order."""
        if self.parallel is None:
            yield from (work(task) for task in tasks)
            return
        results = self.parallel(delayed(work)(task) for task in tasks)
        try:
            for item in results:  # not `yield from`: closing this generator must not reach joblib's
                yield item  # generator before the filter below is in place
        finally:
            with warnings.catch_warnings():
                # a stopping rule ends the run on purpose: the batches already drawn beyond it are dropped
                warnings.filterwarnings("ignore", message=r".*adjusting the input task iterator", category=UserWarning)
                results.close()


@dataclasses.dataclass
class _RunState:
    """A run in progress: the tasks in draw order, those finished, and the stopping point.

    ``checked`` counts the leading tasks the stopping rule has been asked about; when it settles,
    ``kept`` is that count (the values kept end with the batch at which it settled).
    """

    order: list
    finished: dict = dataclasses.field(default_factory=dict)
    checked: int = 0
    kept: int | None = None
    n_used: int | None = None
    interrupted: bool = False

    def prefix(self):
        """Value blocks of the contiguous prefix of finished tasks, in draw order (up to ``kept``)."""
        blocks = []
        for task in self.order[: self.kept]:
            if task not in self.finished:
                break
            blocks.append(self.finished[task])
        return blocks


def _execute(runner, work, tasks, bar, stop, earlier):
    """Run the tasks, asking `stop` after each batch in draw order; returns the _RunState."""
    state = _RunState(order=tasks)
    try:
        with contextlib.closing(runner.run(work, tasks)) as results:
            for task, values in results:
                state.finished[task] = values
                if bar is not None:
                    bar.update(len(values))
                if stop is not None and _settled(state, stop, earlier):
                    break
    except KeyboardInterrupt:
        state.interrupted = True
    return state


def _settled(state, stop, earlier):
    """Ask `stop` about each newly completed leading task, in order; True once it settles."""
    blocks = state.prefix()
    while state.checked < len(blocks):
        state.checked += 1
        state.n_used = _ask_stop(stop, np.concatenate(earlier + blocks[: state.checked]))
        if state.n_used is not None:
            state.kept = state.checked
            return True
    return False


def _ask_stop(stop, values):
    """Call the stopping rule; its answer must be None or a count 1 <= L <= len(values)."""
    answer = stop(values)
    if answer is None:
        return None
    count = check_positive_int(answer, "stop(...)")
    if count > len(values):
        raise ValueError(
            f"`stop(...)` must return None or a number of draws L <= {len(values)} (the draws so "
            f"far); got {answer!r}. Return how many of the first draws the decision rests on."
        )
    return count


def _digest(matrix):
    """Short hash of the matrix's values (C order), to recognise the matrix of an extension."""
    return hashlib.blake2b(np.ascontiguousarray(matrix).tobytes(), digest_size=8).hexdigest()


def _start(matrix, null, rng, batch_size, previous):
    """Root seed, batch size and earlier values of a run (a new one, or an extension)."""
    if previous is None:
        size = default_batch_size(matrix.shape[0]) if batch_size is None else check_positive_int(
            batch_size, "batch_size"
        )
        return as_seed_sequence(rng), size, []
    _check_extension(previous, matrix, null, rng, batch_size)
    return previous.seed_sequence(), previous.batch_size, [previous.values]


def _check_extension(previous, matrix, null, rng, batch_size):
    """An extension must continue the same stream: same matrix, null, root seed and batch size."""
    if not isinstance(previous, NullDraws):
        raise TypeError(f"`previous` must be a NullDraws result of draw_null; got {type(previous).__name__}.")
    if rng is not None:
        raise ValueError(
            "`rng` must be None when `previous` is given (the extension continues the previous "
            f"root seed); got rng={rng!r}. Drop rng, or start a new run without previous."
        )
    if _digest(matrix) != previous.matrix_digest:
        raise ValueError(
            "`matrix` must be the matrix of `previous` to extend it; got a matrix with other values. "
            "Pass the same matrix, or start a new run."
        )
    if repr(null) != previous.null:
        raise ValueError(
            f"`null` must be the null of `previous` ({previous.null}) to extend it; got {null!r}. "
            "Pass the same null model, or start a new run."
        )
    if batch_size is not None and batch_size != previous.batch_size:
        raise ValueError(
            f"`batch_size` must equal previous.batch_size ({previous.batch_size}) to extend it; got "
            f"{batch_size!r}. Leave batch_size=None."
        )


def _check_null(null):
    if not callable(getattr(null, "draw", None)):
        raise TypeError(
            f"`null` must be a null model with a draw(matrix, rng) method (e.g. "
            f"nullspec.nulls.Permutation()); got {type(null).__name__}."
        )


def draw_null(
    matrix,
    null,
    evaluate,
    *,
    n_resamples,
    rng=None,
    n_jobs=None,
    batch_size=None,
    progress=None,
    stop=None,
    previous=None,
):
    """Evaluate statistics on surrogate matrices drawn from a null model, in parallel batches.

    Parameters
    ----------
    matrix : array_like, shape (n, n)
        The observed matrix; never modified (a read-only array or memmap is fine).
    null : NullModel
        Anything with ``draw(matrix, rng) -> ndarray``.
    evaluate : callable
        ``evaluate(surrogate) -> 1-D array of k floats``: the caller's pipeline (standardise,
        spectrum, statistics). It may overwrite the surrogate. It must be picklable for process
        backends (a module-level function or a :func:`functools.partial` of one).
    n_resamples : int
        Number of new draws to evaluate (added to those of `previous` when given).
    rng : None, int, sequence of int, SeedSequence, Generator, BitGenerator or RandomState, optional
        Root seed (see :func:`nullspec._rng.as_seed_sequence`); must be None with `previous`.
    n_jobs : int, optional
        Parallel workers, joblib's meaning (None: 1 unless a :func:`joblib.parallel_config` says
        otherwise; -1: all cores). With one worker, or fewer than four batches, the run stays
        in-process.
    batch_size : int, optional
        Draws per batch; default :func:`default_batch_size` of N. Changing it changes the draws.
    progress : bool, optional
        A tqdm progress bar on stderr (if tqdm is installed): None shows it when stderr is a
        terminal, True always, False never.
    stop : callable, optional
        ``stop(values_so_far) -> int | None``, called with all values so far (shape (m, k)) after
        each batch, in draw order (each call's values extend the previous call's). An int L ends the
        run: the decision rests on the first L draws (``n_used = L``); the values up to the end of
        that batch are kept (batches finished beyond it are dropped).
    previous : NullDraws, optional
        A result to extend: its draws are kept and the new ones continue its stream.

    Returns
    -------
    NullDraws

    Raises
    ------
    TypeError
        If `null` has no ``draw`` method or `previous` is not a NullDraws.
    ValueError
        If `matrix` is not a finite square matrix, `n_resamples` or `batch_size` is not a positive
        integer, `stop` returns an impossible count, or `previous` does not match the run.

    Warns
    -----
    InterruptedNullWarning
        When interrupted (Ctrl-C): the draws of the batches finished in order are returned, with
        ``complete=False``; pass the result as `previous` to finish the run later.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.nulls import Permutation, draw_null
    >>> a = np.random.default_rng(0).standard_normal((10, 10))
    >>> res = draw_null(a, Permutation(), np.trace, n_resamples=50, rng=1, progress=False)
    >>> res.values.shape, res.n_used, res.complete
    ((50, 1), 50, True)
    >>> bool(np.allclose(res.values, np.trace(a)))
    False
    """
    matrix = check_square_matrix(matrix, "matrix")
    _check_null(null)
    n_resamples = check_positive_int(n_resamples, "n_resamples")
    root, size, earlier = _start(matrix, null, rng, batch_size, previous)
    begin = time.perf_counter()
    done = sum(len(block) for block in earlier)
    tasks = _tasks(done, done + n_resamples, size)
    work = _TaskFunction(matrix, null, evaluate, root)
    with _one_blas_thread(), _Runner(n_jobs, len(tasks)) as runner:
        with _progress_bar(progress, n_resamples) as bar:
            state = _execute(runner, work, tasks, bar, stop, earlier)
    run = {"root": root, "batch_size": size, "backend": runner.backend, "null": repr(null),
           "matrix_digest": _digest(matrix), "begin": begin}
    return _assemble(state, earlier, run, previous)


class _TaskFunction:
    """Picklable ``task -> (task, values)`` closure over the run's fixed arguments."""

    def __init__(self, matrix, null, evaluate, root):
        self.args = (matrix, null, evaluate, root)

    def __call__(self, task):
        return _run_task(*self.args, task)


def _assemble(state, earlier, run, previous):
    """Build the NullDraws of a finished, stopped or interrupted run."""
    blocks = earlier + state.prefix()
    values = np.concatenate(blocks) if blocks else np.empty((0, 0))  # interrupted before any batch
    values.flags.writeable = False
    if state.interrupted:
        warnings.warn(
            f"Drawing the null was interrupted after {len(values)} draws; the result rests on "
            "those. Pass it as `previous` to draw the rest.",
            InterruptedNullWarning,
            stacklevel=3,
        )
    root = run["root"]
    return NullDraws(
        values=values,
        n_used=len(values) if state.n_used is None else state.n_used,
        n_batches=-(-len(values) // run["batch_size"]),
        batch_size=run["batch_size"],
        entropy=root.entropy,
        spawn_key=tuple(root.spawn_key),
        pool_size=root.pool_size,
        complete=not state.interrupted,
        backend=run["backend"],
        elapsed=time.perf_counter() - run["begin"] + (0.0 if previous is None else previous.elapsed),
        null=run["null"],
        matrix_digest=run["matrix_digest"],
    )
