"""Permutation nulls: surrogate matrices that rearrange the observed entries.

Each scheme keeps the observed values and breaks the arrangement that the chosen hypothesis calls
exchangeable. No scheme relabels rows and columns together: ``P A Pᵀ`` is a similarity transform
with the same spectrum as ``A``, so such a "null" would reproduce the observed statistic exactly.
"""

import numpy as np

from .._validation import check_option
from .base import NullModel, _as_float_array

__all__ = ["Permutation"]

_DESCRIPTIONS = {
    "all": "the N² entries are exchangeable (i.i.d. entries, whatever their law)",
    "offdiagonal": "the diagonal is fixed and the N(N−1) off-diagonal entries are exchangeable",
    "rows": "within each row the entries are exchangeable (rows may differ in law)",
    "columns": "within each column the entries are exchangeable (columns may differ in law)",
    "pairs": (
        "the diagonal is fixed; the N(N−1)/2 pairs (A_ij, A_ji), i < j, are exchangeable across "
        "positions and each pair is exchangeable within itself (reciprocity kept, nothing else)"
    ),
}


class Permutation(NullModel):
    """Permutation null: the observed entries rearranged under an exchangeability hypothesis.

    Parameters
    ----------
    within : {"all", "offdiagonal", "rows", "columns", "pairs"}, default="all"
        Which entries are exchangeable under the null:

        - ``"all"``: all N² entries are exchangeable, which holds when the entries are i.i.d.
          (whatever their distribution). A surrogate is a uniformly random rearrangement of them.
        - ``"offdiagonal"``: the diagonal is held in place (e.g. self-regulation terms measured
          differently) and the N(N−1) off-diagonal entries are rearranged among the off-diagonal
          positions.
        - ``"rows"``: each row is shuffled within itself, keeping every row's multiset of values
          (row heterogeneity, e.g. out-strengths, is part of the null).
        - ``"columns"``: each column is shuffled within itself (column heterogeneity kept).
        - ``"pairs"``: the diagonal is held in place; the N(N−1)/2 unordered pairs
          {A_ij, A_ji} (i < j) are moved together to uniformly random pair positions, and each
          pair's orientation is flipped with probability 1/2. This is exact under the hypothesis
          that the pairs (A_ij, A_ji) are i.i.d. across pair positions with a joint law symmetric in
          its two arguments: the dependence between an entry and its transpose (reciprocity, which
          drives the number of real eigenvalues, as in the elliptic law) is kept, and any structure
          beyond it (modules, low rank, heterogeneous rows) is destroyed. It asks whether the
          spectrum shows more than reciprocity.

    Notes
    -----
    Every scheme is exact (a valid permutation test) under its hypothesis, whatever the law of the
    entries. Standardisation and the eigenvalue classification are applied by the caller to the
    data and to each surrogate alike.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.nulls import Permutation
    >>> a = np.arange(9.0).reshape(3, 3)
    >>> s = Permutation("rows").draw(a, np.random.default_rng(1))
    >>> bool(np.all(np.sort(s, axis=1) == a))
    True
    >>> Permutation("pairs")
    Permutation(within='pairs')
    """

    name = "permutation"

    def __init__(self, within="all"):
        self.within = check_option(within, "within", tuple(_DESCRIPTIONS))

    @property
    def description(self):
        """The hypothesis tested, as reports print it."""
        return _DESCRIPTIONS[self.within]

    def _params(self):
        return {"within": self.within}

    def draw(self, matrix, rng):
        """Draw one rearrangement of `matrix` (see the class docstring for each scheme)."""
        a = _as_float_array(matrix)
        return _SCHEMES[self.within](a, rng)


def _all(a, rng):
    out = np.empty(a.shape)
    rng.permuted(a, axis=None, out=out)
    return out


def _rows(a, rng):
    out = np.empty(a.shape)
    rng.permuted(a, axis=1, out=out)
    return out


def _columns(a, rng):
    out = np.empty(a.shape)
    rng.permuted(a, axis=0, out=out)
    return out


def _offdiagonal(a, rng):
    n = a.shape[0]
    out = np.empty(a.shape)
    np.copyto(out, a)
    flat = out.reshape(-1)
    off = np.ones(n * n, dtype=bool)
    off[:: n + 1] = False  # the diagonal sits at flat positions 0, n + 1, 2(n + 1), ...
    flat[off] = rng.permuted(flat[off])
    return out


def _pairs(a, rng):
    n = a.shape[0]
    upper = np.triu_indices(n, 1)
    first, second = a[upper], a.T[upper]  # A_ij and A_ji for i < j
    order = rng.permutation(first.size)
    flip = rng.random(first.size) < 0.5
    first, second = first[order], second[order]
    out = np.empty(a.shape)
    np.copyto(out, a)
    out[upper] = np.where(flip, second, first)
    out.T[upper] = np.where(flip, first, second)
    return out


_SCHEMES = {
    "all": _all,
    "offdiagonal": _offdiagonal,
    "rows": _rows,
    "columns": _columns,
    "pairs": _pairs,
}
