"""On-disk cache of simulated null samples (one ``.npz`` file per key).

Location: ``$NULLSPEC_CACHE_DIR`` if set, else ``$XDG_CACHE_HOME/nullspec``, else ``~/.cache/nullspec``.
Each file stores the array, its metadata (seed, size, policy, number of draws) and the package
version; a file whose metadata or version differs from the request is ignored and recomputed.
Writes are atomic (a temporary file in the same directory, then ``os.replace``), so concurrent
processes never read a half-written file.  The cache only saves time: every cached sample comes from
a fixed seed, so the numbers are the same with an empty cache.  If the directory cannot be written,
the sample is computed and returned without being stored.
"""

import json
import os
from pathlib import Path
import tempfile

import numpy as np

from . import __version__

__all__ = ["cache_dir", "cached_array"]


def cache_dir():
    """The cache directory (not created).

    Returns
    -------
    pathlib.Path

    Examples
    --------
    >>> import os
    >>> from nullspec._cache import cache_dir
    >>> os.environ["NULLSPEC_CACHE_DIR"] = "/tmp/nullspec-doc-cache"
    >>> str(cache_dir())
    '/tmp/nullspec-doc-cache'
    >>> del os.environ["NULLSPEC_CACHE_DIR"]
    """
    explicit = os.environ.get("NULLSPEC_CACHE_DIR")
    if explicit:
        return Path(explicit)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "nullspec"


def _header(meta):
    """The metadata string stored with an array (sorted JSON, with the package version)."""
    return json.dumps({"meta": meta, "version": __version__}, sort_keys=True)


def _load(path, header):
    """The stored array if ``path`` exists and carries exactly ``header``, else None."""
    try:
        with np.load(path, allow_pickle=False) as stored:
            if str(stored["header"]) == header:
                return stored["values"]
    except (OSError, KeyError, ValueError):
        return None
    return None


def _store(path, values, header):
    """Write atomically; give up silently when the directory is not writable."""
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-", suffix=".npz")
        with os.fdopen(fd, "wb") as handle:
            np.savez(handle, values=values, header=np.array(header))
        os.replace(tmp, path)
    except OSError:
        return


def cached_array(key, meta, compute):
    """Return the cached array for ``key`` and ``meta``, computing and storing it when absent.

    Parameters
    ----------
    key : str
        File stem (letters, digits, ``-`` and ``.``).
    meta : dict
        JSON-serialisable provenance that must match exactly for a hit (seed, sizes, policy).
    compute : callable
        ``compute() -> ndarray``, called on a miss.

    Returns
    -------
    ndarray

    Examples
    --------
    >>> import os, tempfile
    >>> from nullspec._cache import cached_array
    >>> os.environ["NULLSPEC_CACHE_DIR"] = tempfile.mkdtemp()
    >>> cached_array("demo", {"seed": 1}, lambda: np.arange(3.0)).tolist()
    [0.0, 1.0, 2.0]
    >>> cached_array("demo", {"seed": 1}, lambda: np.zeros(3)).tolist()   # a hit: not recomputed
    [0.0, 1.0, 2.0]
    >>> del os.environ["NULLSPEC_CACHE_DIR"]
    """
    path = cache_dir() / f"{key}.npz"
    header = _header(meta)
    found = _load(path, header)
    if found is not None:
        return found
    values = np.asarray(compute())
    _store(path, values, header)
    return values
