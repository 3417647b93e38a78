"""The embedded demo: a few invented, SYNTHETIC matrices shipped inside the package.

The scenarios are drawn from a fixed seed by ``examples/make_demo_data.py`` and stored in
``nullspec/data/demo.npz``; none comes from a study or a product.  Each one plants (or does not
plant) one kind of structure the spectral tests look for:

- ``plain_noise``: i.i.d. Gaussian entries, the null hypothesis itself;
- ``hidden_module``: a rank-one signal on a block of nodes, an eigenvalue beyond the noise disk;
- ``reciprocal_pairs``: correlated mutual couplings, an excess of real eigenvalues;
- ``uneven_rows``: very different row scales, a radial profile far from the uniform disk.

The archive is read with ``allow_pickle=False`` through :mod:`importlib.resources`, so it works from
an installed wheel as well as from a checkout.
"""

from functools import cache
from importlib import resources

import numpy as np

from ._validation import check_option
from .io import _matrix_file

__all__ = ["demo_names", "load_demo"]


@cache
def _archive():
    """Every member of the demo archive, read once, as read-only arrays."""
    resource = resources.files("nullspec").joinpath("data").joinpath("demo.npz")
    with resource.open("rb") as handle, np.load(handle, allow_pickle=False) as members:
        arrays = {key: members[key] for key in members.files}
    for array in arrays.values():
        array.setflags(write=False)
    return arrays


def demo_names():
    """Names of the embedded synthetic scenarios.

    Returns
    -------
    tuple of str
        The names :func:`load_demo` accepts, in the archive's order.

    Examples
    --------
    >>> from nullspec.demo import demo_names
    >>> demo_names()
    ('plain_noise', 'hidden_module', 'reciprocal_pairs', 'uneven_rows')
    """
    return tuple(str(name) for name in _archive()["names"])


def load_demo(name):
    """Load one embedded synthetic scenario.

    Parameters
    ----------
    name : str
        One of :func:`demo_names`.

    Returns
    -------
    MatrixFile
        The matrix with its row and column labels (``node_001``, ...), ``source="demo:<name>"``,
        ``format="npz"`` and a ``description`` that starts with ``"synthetic:"``.

    Raises
    ------
    ValueError
        If ``name`` is not one of the scenarios (the message lists them).

    Examples
    --------
    >>> from nullspec.demo import load_demo
    >>> demo = load_demo("hidden_module")
    >>> demo.values.shape, demo.row_labels[:2], demo.description.startswith("synthetic:")
    ((80, 80), ('node_001', 'node_002'), True)
    """
    check_option(name, "name", demo_names())
    arrays = _archive()
    return _matrix_file(arrays[f"{name}__values"], _labels(arrays, name, "row"), _labels(arrays, name, "col"),
                        source=f"demo:{name}", fmt="npz", description=str(arrays[f"{name}__description"]))


def _labels(arrays, name, axis):
    return tuple(str(label) for label in arrays[f"{name}__{axis}_labels"])
