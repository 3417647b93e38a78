"""Warning classes of nullspec (one module, all public).

Every warning the package issues is an instance of :class:`NullspecWarning`, so a caller can silence
or escalate them all at once, e.g. ``warnings.simplefilter("error", NullspecWarning)``.  The
detection rules that decide when the warnings below are issued live in :mod:`nullspec._diagnostics`.
Errors are plain ``ValueError``/``TypeError`` worded in :mod:`nullspec._validation`; there is no
custom error hierarchy.
"""

__all__ = [
    "NullspecWarning",
    "SmallMatrixWarning",
    "NonGaussianEntriesWarning",
    "ResolutionWarning",
    "InterruptedNullWarning",
]


class NullspecWarning(UserWarning):
    """Base class of every warning issued by nullspec.

    Examples
    --------
    >>> import warnings
    >>> from nullspec.exceptions import NullspecWarning, SmallMatrixWarning
    >>> issubclass(SmallMatrixWarning, NullspecWarning)
    True
    """


class SmallMatrixWarning(NullspecWarning):
    """The matrix is so small that the test has little power and a fragile calibration.

    Examples
    --------
    >>> from nullspec.exceptions import SmallMatrixWarning
    >>> issubclass(SmallMatrixWarning, UserWarning)
    True
    """


class NonGaussianEntriesWarning(NullspecWarning):
    """The entries look discrete, sparse, skewed or heavy-tailed, but the Gaussian null was chosen.

    The exact Gaussian null can then be miscalibrated, and for discrete entries even the exact-zero
    rule that classifies eigenvalues as real can fail; a permutation null, which applies the same rule
    to the data and to every surrogate, stays valid.

    Examples
    --------
    >>> from nullspec.exceptions import NonGaussianEntriesWarning, NullspecWarning
    >>> issubclass(NonGaussianEntriesWarning, NullspecWarning)
    True
    """


class ResolutionWarning(NullspecWarning):
    """The requested significance level is below what the null can resolve.

    A drawn null with ``B`` resamples cannot give a p-value below ``1 / (B + 1)``, so a level ``alpha``
    smaller than that can never be reached.

    Examples
    --------
    >>> from nullspec.exceptions import NullspecWarning, ResolutionWarning
    >>> issubclass(ResolutionWarning, NullspecWarning)
    True
    """


class InterruptedNullWarning(NullspecWarning):
    """Drawing a null distribution was interrupted; results rest on the draws completed so far.

    Examples
    --------
    >>> from nullspec.exceptions import InterruptedNullWarning, NullspecWarning
    >>> issubclass(InterruptedNullWarning, NullspecWarning)
    True
    """
