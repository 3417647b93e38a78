"""Random-state normalisation and the per-batch seeds of drawn nulls.

Every random input the package accepts (SPEC 7: None, an int, a sequence of ints, a
:class:`numpy.random.SeedSequence`, a :class:`numpy.random.Generator` or
:class:`numpy.random.BitGenerator`, and a legacy :class:`numpy.random.RandomState`) is turned into one
root :class:`~numpy.random.SeedSequence` by :func:`as_seed_sequence`. A drawn null then splits its work
into fixed-size batches, and batch ``i`` draws from :func:`batch_seed` ``(root, i)``: a seed defined by
the root's entropy and spawn key and by ``i`` alone. So a batch's stream never depends on how many
workers run, in which order batches finish, or how many batches were drawn before, which is what
makes results identical for any ``n_jobs`` and backend and lets a result be extended with new draws.

The root's ``entropy`` and ``spawn_key`` are recorded in results: ``SeedSequence(entropy,
spawn_key=spawn_key)`` rebuilds it, so a run made without a seed can be repeated.
"""

import numbers

import numpy as np

__all__ = ["as_seed_sequence", "batch_seed"]


def _from_generator(generator):
    """Spawn a child seed from a Generator, or seed one from its output if it cannot spawn."""
    try:
        return generator.spawn(1)[0].bit_generator.seed_seq
    except TypeError:  # e.g. a Generator wrapping a RandomState's MT19937: no SeedSequence
        return _seed_from_draws(generator.integers(2**63, size=4))


def _seed_from_draws(draws):
    """SeedSequence whose entropy is four drawn integers (kept as plain ints for reports)."""
    return np.random.SeedSequence([int(x) for x in draws])


def as_seed_sequence(rng=None, *, name="rng"):
    """Normalise a seed or random generator to a root SeedSequence.

    Parameters
    ----------
    rng : None, int, sequence of int, SeedSequence, Generator, BitGenerator or RandomState
        ``None`` takes fresh entropy from the operating system; an int or sequence of non-negative
        ints seeds ``SeedSequence(rng)``; a SeedSequence is used as is; a Generator or BitGenerator
        gives a spawned child (so passing the same generator twice gives two different streams,
        as consuming a generator does); a RandomState seeds ``SeedSequence`` from four of its draws.
    name : str, default="rng"
        The caller's name for the argument, used in error messages (e.g. ``"random_state"``).

    Returns
    -------
    numpy.random.SeedSequence
        The root seed. Its ``entropy`` and ``spawn_key`` identify the run.

    Raises
    ------
    TypeError
        If `rng` is of none of these types.
    ValueError
        If an integer seed is negative.

    Examples
    --------
    >>> from nullspec._rng import as_seed_sequence
    >>> root = as_seed_sequence(42)
    >>> root.entropy, root.spawn_key
    (42, ())
    """
    if isinstance(rng, np.random.SeedSequence):
        return rng
    if isinstance(rng, np.random.Generator):
        return _from_generator(rng)
    if isinstance(rng, np.random.BitGenerator):
        return _from_generator(np.random.Generator(rng))
    if isinstance(rng, np.random.RandomState):
        # CONVENTIONS.md: a legacy RandomState seeds the SeedSequence from its own output
        return _seed_from_draws(rng.randint(0, 2**63, size=4, dtype=np.int64))
    if rng is None or _is_int_seed(rng):
        return np.random.SeedSequence(_plain_entropy(rng, name))
    raise TypeError(
        f"`{name}` must be None, an int, a sequence of ints, a numpy SeedSequence, Generator, "
        f"BitGenerator or RandomState; got {type(rng).__name__}. Pass e.g. {name}=12345 for a "
        "reproducible run."
    )


def _is_int_seed(rng):
    """True for a non-bool integer or a non-empty sequence of non-bool integers."""
    items = np.ravel(rng) if isinstance(rng, (list, tuple, np.ndarray)) else [rng]
    return len(items) > 0 and all(
        isinstance(x, numbers.Integral) and not isinstance(x, (bool, np.bool_)) for x in items
    )


def _plain_entropy(rng, name):
    """Entropy as Python ints (so reports and JSON show plain numbers); rejects negatives."""
    if rng is None:
        return None
    values = [int(x) for x in np.ravel(rng)]
    if min(values) < 0:
        raise ValueError(
            f"`{name}` must be a non-negative integer seed; got {rng!r}. Use e.g. abs() of it."
        )
    return values[0] if np.ndim(rng) == 0 else values


def batch_seed(root, index):
    """Seed of batch `index` of a drawn null: a pure function of the root and the index.

    Parameters
    ----------
    root : numpy.random.SeedSequence
        The run's root seed (from :func:`as_seed_sequence`).
    index : int
        Batch index, 0, 1, 2, ...

    Returns
    -------
    numpy.random.SeedSequence
        ``SeedSequence(root.entropy, spawn_key=root.spawn_key + (index,))``: the same child as
        ``root.spawn(index + 1)[index]`` on a fresh root, but independent of how often the root
        has been spawned from.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec._rng import batch_seed
    >>> root = np.random.SeedSequence(7)
    >>> child = batch_seed(root, 3)
    >>> child.spawn_key
    (3,)
    >>> bool(np.all(child.generate_state(2) == root.spawn(4)[3].generate_state(2)))
    True
    """
    return np.random.SeedSequence(
        root.entropy, spawn_key=(*root.spawn_key, int(index)), pool_size=root.pool_size
    )
