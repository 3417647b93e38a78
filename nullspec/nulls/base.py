"""The one interface a null model has: draw one surrogate matrix from a random generator."""

import abc

import numpy as np

__all__ = ["NullModel"]


class NullModel(abc.ABC):
    """A null hypothesis for a matrix, as a way to draw surrogate matrices under it.

    Subclasses implement :meth:`draw` and set the class attributes `name` (a short identifier) and
    `description` (the hypothesis tested, in one sentence, as reports print it). A draw never
    modifies its input, depends on nothing but the matrix and the generator, and returns a new
    float64 ndarray (never a memmap view), so it can run in any joblib worker.

    Examples
    --------
    >>> import numpy as np
    >>> from nullspec.nulls import NullModel
    >>> class Flip(NullModel):
    ...     name = "flip"
    ...     description = "the signs of the entries are exchangeable"
    ...     def draw(self, matrix, rng):
    ...         return np.asarray(matrix) * rng.choice([-1.0, 1.0], size=np.shape(matrix))
    >>> Flip()
    Flip()
    >>> Flip().draw(np.ones((2, 2)), np.random.default_rng(0)).shape
    (2, 2)
    """

    name = "null"
    description = ""

    @abc.abstractmethod
    def draw(self, matrix, rng):
        """Draw one surrogate matrix.

        Parameters
        ----------
        matrix : ndarray, shape (n, n)
            The observed matrix (float64); not modified.
        rng : numpy.random.Generator
            Source of randomness; the only one used.

        Returns
        -------
        ndarray, shape (n, n)
            A new float64 array.
        """

    def _params(self):
        """Constructor arguments to show in :func:`repr` (name -> value)."""
        return {}

    def __repr__(self):
        args = ", ".join(f"{key}={value!r}" for key, value in self._params().items())
        return f"{type(self).__name__}({args})"


def _as_float_array(matrix):
    """The matrix as a plain float64 ndarray (a memmap or other subclass becomes a base ndarray).

    ``Generator.shuffle``/``permuted`` fall back to a slow generic path on ndarray subclasses
    (PERFORMANCE.md: ~435x slower on a memmap), so every draw starts from a base-class array.
    """
    return np.asarray(matrix, dtype=np.float64)
