"""Bootstrap null: surrogate matrices whose entries are resampled with replacement."""

import numpy as np

from .base import NullModel, _as_float_array

__all__ = ["Bootstrap"]


class Bootstrap(NullModel):
    """Bootstrap null: each surrogate entry drawn with replacement from all N² observed entries.

    The hypothesis is that the entries are i.i.d. draws from one distribution, estimated by the
    empirical distribution of the observed entries. Unlike a permutation, a bootstrap surrogate does
    not keep the multiset of values (some repeat, some are missing), so its mean and spread vary from
    draw to draw: the caller recomputes the standardisation (centre, scale) on every surrogate, as
    on the data, so that this variation enters the null distribution. A permutation null is exact
    for the same hypothesis; the bootstrap is the approximate alternative.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.nulls import Bootstrap
    >>> a = np.arange(16.0).reshape(4, 4)
    >>> s = Bootstrap().draw(a, np.random.default_rng(0))
    >>> bool(np.isin(s, a).all()), s.shape
    (True, (4, 4))
    """

    name = "bootstrap"
    description = "the entries are i.i.d. draws from their empirical distribution (resampled with replacement)"

    def draw(self, matrix, rng):
        """Draw one matrix of entries sampled with replacement from `matrix`."""
        flat = _as_float_array(matrix).reshape(-1)
        out = np.empty(np.shape(matrix))
        np.take(flat, rng.integers(0, flat.size, size=out.shape), out=out)
        return out
