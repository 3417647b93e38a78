"""Generate the embedded demo data, ``nullspec/data/demo.npz``.

Every scenario is SYNTHETIC: invented for the demo, drawn from a fixed seed, and not taken from
any study or product. Run from a checkout::

    python examples/make_demo_data.py              # rewrites nullspec/data/demo.npz
    python examples/make_demo_data.py OUT.npz      # writes elsewhere (the tests compare the bytes)

Only correctly rounded operations (+, -, *, /, sqrt) touch the random draws, and the archive is
written with fixed member timestamps, so the same numpy version gives the same bytes on any machine.

Archive layout (all arrays load with ``allow_pickle=False``): ``names`` (1-D unicode array), and for
each name ``<name>__values`` (N x N float64), ``<name>__row_labels`` and ``<name>__col_labels``
(1-D fixed-width unicode), ``<name>__description`` (0-d unicode).
"""

import io
import sys
import zipfile
from pathlib import Path

import numpy as np

SEED = 7_310_522
DEFAULT_OUTPUT = Path(__file__).resolve().parents[1] / "nullspec" / "data" / "demo.npz"
# zip members need a date; a fixed one keeps the archive byte-for-byte reproducible
_ZIP_DATE = (1980, 1, 1, 0, 0, 0)


def plain_noise(rng):
    """I.i.d. Gaussian couplings: the null hypothesis itself, nothing planted."""
    n, sigma = 80, 0.05
    values = sigma * rng.standard_normal((n, n))
    text = (f"synthetic: {n} nodes with independent Gaussian couplings of scale {sigma}; nothing is "
            "planted, so a calibrated test should find no structure here")
    return values, text


def hidden_module(rng):
    """Noise plus a rank-one signal confined to a block of 16 nodes (an outlier eigenvalue)."""
    n, m, sigma, strength = 80, 16, 0.2, 2.5
    members = np.sort(rng.choice(n, size=m, replace=False))
    # u u^T with a unit vector u on the module has eigenvalue 1, so the planted eigenvalue is
    # strength * sigma * sqrt(n): 2.5 times the circular-law radius of the noise
    block = np.zeros((n, n))
    block[np.ix_(members, members)] = strength * sigma * np.sqrt(n) / m
    values = sigma * rng.standard_normal((n, n)) + block
    listed = ", ".join(f"node_{i + 1:03d}" for i in members)
    text = (f"synthetic: {n} nodes of noise (scale {sigma}) plus a rank-one module among {m} nodes "
            f"({listed}) of strength {strength} x the circular-law radius, so one eigenvalue "
            "should stand outside the noise disk")
    return values, text


def reciprocal_pairs(rng):
    """Elliptic coupling, corr(A_ij, A_ji) = 0.5 (THEORY.md section 7): excess real eigenvalues."""
    n, tau, sigma = 120, 0.5, 1.0
    sym = rng.standard_normal((n, n))
    sym = (sym + sym.T) / np.sqrt(2.0)
    skew = rng.standard_normal((n, n))
    skew = (skew - skew.T) / np.sqrt(2.0)
    values = sigma * (np.sqrt((1 + tau) / 2) * sym + np.sqrt((1 - tau) / 2) * skew)
    text = (f"synthetic: {n} nodes whose mutual couplings are correlated (corr(A_ij, A_ji) = {tau}, "
            "elliptic construction), so more eigenvalues than noise would give are real")
    return values, text


def uneven_rows(rng):
    """Row scales from 0.0625 to 4 (a 64-fold range): a radial profile far from the uniform disk."""
    n = 80
    u = rng.random(n)
    scales = (0.25 + 1.75 * u) * (0.25 + 1.75 * u)
    values = scales[:, None] * rng.standard_normal((n, n))
    text = (f"synthetic: {n} nodes whose outgoing couplings have very different scales (row scales "
            "from 0.06 to 4), so the eigenvalues crowd towards the centre instead of filling the disk "
            "evenly")
    return values, text


SCENARIOS = {f.__name__: f for f in (plain_noise, hidden_module, reciprocal_pairs, uneven_rows)}


def build_arrays(seed=SEED):
    """Draw every scenario, each from its own child of ``SeedSequence(seed)``.

    Parameters
    ----------
    seed : int, default=SEED
        Root seed.

    Returns
    -------
    dict of str to ndarray
        The archive members, in the layout of the module docstring.
    """
    children = np.random.SeedSequence(seed).spawn(len(SCENARIOS))
    arrays = {"names": np.array(list(SCENARIOS))}
    for (name, make), child in zip(SCENARIOS.items(), children):
        values, text = make(np.random.default_rng(child))
        labels = np.array([f"node_{i + 1:03d}" for i in range(values.shape[0])])
        arrays[f"{name}__values"] = values
        arrays[f"{name}__row_labels"] = labels
        arrays[f"{name}__col_labels"] = labels
        arrays[f"{name}__description"] = np.array(text)
    return arrays


def write_npz(path, arrays):
    """Write ``arrays`` as an uncompressed .npz with fixed member dates (reproducible bytes).

    Parameters
    ----------
    path : str or os.PathLike
        Output file.
    arrays : dict of str to ndarray
        Members; none may hold Python objects.
    """
    with zipfile.ZipFile(path, "w", compression=zipfile.ZIP_STORED) as archive:
        for key, array in arrays.items():
            buffer = io.BytesIO()
            np.lib.format.write_array(buffer, array, allow_pickle=False)
            archive.writestr(zipfile.ZipInfo(f"{key}.npy", date_time=_ZIP_DATE), buffer.getvalue())


def main(argv=None):
    """Write the demo archive to ``argv[0]`` (default: the package's data directory)."""
    argv = sys.argv[1:] if argv is None else argv
    output = Path(argv[0]) if argv else DEFAULT_OUTPUT
    output.parent.mkdir(parents=True, exist_ok=True)
    write_npz(output, build_arrays())
    print(f"wrote {output}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
