"""Gaussian Monte Carlo null: surrogate matrices with i.i.d. normal entries.

For statistics without an exact finite-N law, the Gaussian null is simulated. When the caller's
pipeline is invariant under orthogonal similarity (its statistics depend only on the eigenvalues of
the surrogate, with no centring by the sample mean and a known scale), the surrogate can be drawn
directly in upper Hessenberg form (THEORY.md §9): Householder reduction of a real Ginibre matrix
G = Q H Qᵀ gives an H whose entries on and above the diagonal are i.i.d. N(0, 1) and whose
subdiagonal entries H[k+1, k] are independent χ variables with N−1−k degrees of freedom
(k = 0, …, N−2). Drawing H costs O(N²), and its eigenvalues (LAPACK ``dhseqr``, see
:func:`nullspec._lapack.hessenberg_eigvals`) skip the O(N³) reduction.
"""

import functools

import numpy as np

from .._validation import check_option, check_positive_real
from ..ginibre._checks import check_real
from .base import NullModel, _as_float_array

__all__ = ["Gaussian"]


class Gaussian(NullModel):
    """Gaussian null: surrogate entries i.i.d. normal with the data's (or a given) mean and scale.

    Parameters
    ----------
    loc : float or None, default=None
        Mean of the entries. None uses the mean of the observed entries.
    scale : float or None, default=None
        Standard deviation of the entries (> 0). None uses the observed entries' root mean square
        deviation from `loc` (from their mean, with ddof=1, when `loc` is None too).
    hessenberg : {"auto", True, False}, default="auto"
        Draw surrogates in upper Hessenberg form (same spectrum law, cheaper; module docstring).
        Valid only with ``loc=0`` and a pipeline that is invariant under orthogonal similarity (no
        centring by the sample mean, a known scale, statistics of the eigenvalues only): the
        entries of a Hessenberg draw are not i.i.d., only its spectrum has the Gaussian law. True
        forces it (and requires ``loc=0``); False never uses it; "auto" leaves the choice to the
        caller, which knows its pipeline, through :meth:`for_pipeline`. Until resolved, "auto"
        draws dense matrices.

    Attributes
    ----------
    draws_hessenberg : bool
        Whether :meth:`draw` returns Hessenberg matrices (then evaluate their eigenvalues with
        :func:`nullspec._lapack.hessenberg_eigvals`).

    Raises
    ------
    ValueError
        If `scale` is not > 0, `loc` is not finite, or ``hessenberg=True`` with a `loc` other
        than 0.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.nulls import Gaussian
    >>> a = np.random.default_rng(0).normal(3.0, 2.0, size=(200, 200))
    >>> s = Gaussian().draw(a, np.random.default_rng(1))
    >>> round(float(s.mean()), 1), round(float(s.std()), 1)
    (3.0, 2.0)
    >>> g = Gaussian(loc=0.0, scale=1.0).for_pipeline(similarity_invariant=True)
    >>> g.draws_hessenberg, bool(np.all(np.tril(g.draw(a, np.random.default_rng(2)), -2) == 0))
    (True, True)
    """

    name = "gaussian"

    def __init__(self, loc=None, scale=None, hessenberg="auto"):
        self.loc = None if loc is None else float(check_real(loc, "loc"))
        self.scale = None if scale is None else check_positive_real(scale, "scale")
        if not isinstance(hessenberg, bool):
            check_option(hessenberg, "hessenberg", ("auto",))  # True and False are the other choices
        if hessenberg is True and self.loc != 0.0:
            raise ValueError(
                f"`hessenberg=True` needs `loc=0` (a mean matrix is not preserved by the orthogonal "
                f"similarity behind the Hessenberg form); got loc={loc!r}. Pass loc=0.0, or "
                "hessenberg=False."
            )
        self.hessenberg = hessenberg

    @property
    def description(self):
        """The hypothesis tested, as reports print it."""
        loc = "the observed mean" if self.loc is None else f"mean {self.loc:g}"
        scale = "the observed scale" if self.scale is None else f"standard deviation {self.scale:g}"
        return f"the entries are i.i.d. normal with {loc} and {scale}"

    @property
    def draws_hessenberg(self):
        """Whether :meth:`draw` returns upper Hessenberg surrogates."""
        return self.hessenberg is True

    def _params(self):
        return {"loc": self.loc, "scale": self.scale, "hessenberg": self.hessenberg}

    def for_pipeline(self, *, similarity_invariant):
        """This null with ``hessenberg="auto"`` resolved for the caller's pipeline.

        Parameters
        ----------
        similarity_invariant : bool
            Whether the caller's evaluation of a surrogate depends on it only through its class
            under orthogonal similarity (its eigenvalues, its Frobenius norm), with no centring.

        Returns
        -------
        Gaussian
            A null with `hessenberg` True or False: True when it was True, or "auto" with
            ``loc == 0`` and a similarity-invariant pipeline.

        Raises
        ------
        ValueError
            If ``hessenberg=True`` but the pipeline is not similarity-invariant.
        """
        if self.hessenberg is True and not similarity_invariant:
            raise ValueError(
                "`hessenberg=True` needs a pipeline invariant under orthogonal similarity; got "
                "similarity_invariant=False (e.g. centring by the sample mean). Use "
                "hessenberg='auto' or False."
            )
        use = self.hessenberg is True or (
            self.hessenberg == "auto" and similarity_invariant and self.loc == 0.0
        )
        return Gaussian(self.loc, self.scale, hessenberg=use)

    def draw(self, matrix, rng):
        """Draw one surrogate of the shape of `matrix` (upper Hessenberg when `draws_hessenberg`)."""
        a = _as_float_array(matrix)
        loc, scale = self._location_scale(a)
        if self.draws_hessenberg:
            out = _ginibre_hessenberg(a.shape[0], rng)
        else:
            out = np.empty(a.shape)
            rng.standard_normal(out=out)
        out *= scale
        out += loc  # loc is 0 for Hessenberg draws
        return out

    def _location_scale(self, a):
        """The (loc, scale) of the draws: the given values, or plug-ins from the entries."""
        loc = float(a.mean()) if self.loc is None else self.loc
        if self.scale is not None:
            return loc, self.scale
        ddof = 1 if self.loc is None else 0
        return loc, float(np.sqrt(np.sum((a - loc) ** 2) / (a.size - ddof)))


@functools.lru_cache(maxsize=16)
def _below_subdiagonal(n):
    """Boolean mask of the positions (i, j) with i > j + 1 (zero in a Hessenberg matrix)."""
    return np.tri(n, k=-2, dtype=bool)


def _ginibre_hessenberg(n, rng):
    """Upper Hessenberg form of an n x n real Ginibre matrix, Fortran-ordered (THEORY.md §9)."""
    h = np.empty((n, n), order="F")
    rng.standard_normal(out=h)
    h[_below_subdiagonal(n)] = 0.0
    k = np.arange(n - 1)
    h[k + 1, k] = np.sqrt(rng.chisquare(n - 1 - k))  # chi with n-1, n-2, ..., 1 degrees of freedom
    return h
