"""Seed normalisation (SPEC 7 inputs) and the pure per-batch seeds."""

import numpy as np
import pytest

from nullspec._rng import as_seed_sequence, batch_seed


def _state(ss):
    return ss.generate_state(4).tolist()


@pytest.mark.parametrize("value", [0, 42, np.int64(42), 2**100, [1, 2, 3], (7, 8), np.array([4, 5])])
def test_integer_seeds_match_numpy_seed_sequence(value):
    # reference: numpy's own SeedSequence(value)
    assert _state(as_seed_sequence(value)) == _state(np.random.SeedSequence(value))


def test_integer_seed_entropy_is_plain_python():
    assert as_seed_sequence(np.int64(9)).entropy == 9
    assert type(as_seed_sequence(np.int64(9)).entropy) is int
    assert as_seed_sequence(np.array([4, 5])).entropy == [4, 5]


def test_seed_sequence_passes_through():
    ss = np.random.SeedSequence(3)
    assert as_seed_sequence(ss) is ss


def test_none_takes_fresh_entropy():
    a, b = as_seed_sequence(None), as_seed_sequence()
    assert a.entropy != b.entropy
    assert isinstance(a.entropy, int)


def test_generator_is_spawned_like_numpy_spawn():
    g, twin = np.random.default_rng(5), np.random.default_rng(5)
    first, second = as_seed_sequence(g), as_seed_sequence(g)
    # reference: Generator.spawn (numpy >= 1.25) gives the same children in the same order
    expected = [child.bit_generator.seed_seq for child in twin.spawn(2)]
    assert _state(first) == _state(expected[0])
    assert _state(second) == _state(expected[1])
    assert first.entropy == 5 and first.spawn_key == (0,) and second.spawn_key == (1,)


def test_bit_generator_is_spawned():
    bg = np.random.PCG64(11)
    ss = as_seed_sequence(bg)
    assert ss.entropy == 11 and ss.spawn_key == (0,)
    assert as_seed_sequence(bg).spawn_key == (1,)


def test_random_state_seeds_from_its_draws():
    a, b = as_seed_sequence(np.random.RandomState(3)), as_seed_sequence(np.random.RandomState(3))
    assert _state(a) == _state(b)  # same legacy state, same root
    rs = np.random.RandomState(3)
    assert _state(as_seed_sequence(rs)) != _state(as_seed_sequence(rs))  # the state advances
    assert len(a.entropy) == 4 and all(type(x) is int for x in a.entropy)


def test_generator_without_seed_sequence_falls_back_to_draws():
    # numpy wraps a RandomState's MT19937 without a SeedSequence: spawn() raises TypeError
    g1 = np.random.default_rng(np.random.RandomState(8))
    g2 = np.random.default_rng(np.random.RandomState(8))
    assert _state(as_seed_sequence(g1)) == _state(as_seed_sequence(g2))


@pytest.mark.parametrize("bad", [1.5, "7", True, [], [1, 2.5], {"seed": 1}])
def test_unsupported_types_are_rejected(bad):
    with pytest.raises(TypeError, match=r"`rng` must be None, an int, .*; got \w+\. Pass e\.g\."):
        as_seed_sequence(bad)


@pytest.mark.parametrize("bad", [-1, [3, -2]])
def test_negative_seeds_are_rejected(bad):
    with pytest.raises(ValueError, match=r"`rng` must be a non-negative integer seed; got"):
        as_seed_sequence(bad)


def test_errors_name_the_callers_argument():
    with pytest.raises(TypeError, match=r"`random_state` must be None, an int, .*Pass e\.g\. random_state=12345"):
        as_seed_sequence("7", name="random_state")
    with pytest.raises(ValueError, match=r"`random_state` must be a non-negative integer seed; got -1"):
        as_seed_sequence(-1, name="random_state")


def test_batch_seed_equals_spawned_children_of_a_fresh_root():
    # reference: SeedSequence.spawn, whose i-th child has spawn_key (i,)
    children = np.random.SeedSequence(123).spawn(10)
    root = np.random.SeedSequence(123)
    for i, child in enumerate(children):
        assert _state(batch_seed(root, i)) == _state(child)


def test_batch_seed_ignores_earlier_spawning():
    root = np.random.SeedSequence(5)
    before = _state(batch_seed(root, 2))
    root.spawn(7)
    assert _state(batch_seed(root, 2)) == before


def test_batch_seed_keeps_nested_key_and_pool_size():
    root = np.random.SeedSequence(5, spawn_key=(2,), pool_size=8)
    child = batch_seed(root, np.int64(3))
    assert child.spawn_key == (2, 3) and type(child.spawn_key[-1]) is int
    assert child.pool_size == 8
    assert _state(child) == _state(np.random.SeedSequence(5, spawn_key=(2, 3), pool_size=8))


def test_batch_streams_are_distinct():
    root = as_seed_sequence(0)
    firsts = {np.random.default_rng(batch_seed(root, i)).integers(2**62) for i in range(200)}
    assert len(firsts) == 200
