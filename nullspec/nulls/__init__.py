"""Drawn nulls: null models that draw surrogate matrices, and the engine that runs them.

A null model is any object with ``draw(matrix, rng) -> ndarray`` (subclass :class:`NullModel`):
:class:`Permutation`, :class:`Bootstrap` and :class:`Gaussian` are provided.
:func:`~nullspec.nulls.engine.draw_null` evaluates a caller's statistics on many surrogates in
reproducible parallel batches.
"""

from .._validation import check_option
from .base import NullModel
from .bootstrap import Bootstrap
from .engine import NullDraws, draw_null
from .gaussian import Gaussian
from .permutation import Permutation

__all__ = [
    "NullModel",
    "Permutation",
    "Bootstrap",
    "Gaussian",
    "NullDraws",
    "draw_null",
    "resolve_null",
    "NULL_NAMES",
]

NULL_NAMES = ("permutation", "bootstrap", "gaussian")


def resolve_null(spec):
    """Turn a null specification into a null model.

    Parameters
    ----------
    spec : str or NullModel
        ``"permutation"`` (all entries exchangeable), ``"bootstrap"`` or ``"gaussian"`` (the
        defaults of :class:`Permutation`, :class:`Bootstrap`, :class:`Gaussian`), or a
        :class:`NullModel` instance, returned as is.

    Returns
    -------
    NullModel

    Raises
    ------
    TypeError
        If `spec` is neither a string nor a NullModel.
    ValueError
        If `spec` is a string other than the three names.

    Examples
    --------
    >>> from nullspec.nulls import Permutation, resolve_null
    >>> resolve_null("permutation")
    Permutation(within='all')
    >>> resolve_null(Permutation("rows"))
    Permutation(within='rows')
    """
    if isinstance(spec, NullModel):
        return spec
    name = check_option(spec, "null", NULL_NAMES)
    return {"permutation": Permutation, "bootstrap": Bootstrap, "gaussian": Gaussian}[name]()
