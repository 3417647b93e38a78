"""Embed the units of one matrix on its significant spectral modes.

SYNTHETIC scenario, invented for this example: a simulated network of 60 units with i.i.d. Gaussian
couplings, in which two modules were planted as rank-one blocks of different strength: units 0-9
(4 times the noise radius) and units 30-41 (2.5 times).  SignificantModes runs the edge test
(permutation null, N <= 400) on the 60 x 60 matrix, keeps the eigenvalues outside the noise disk at
level 0.05 (the test decides how many), and gives each unit its coordinates on their eigenvectors.

Which units carry a mode is a description of the departure from noise, not of its cause; the
report printed at the end states what the null assumes.

Run: python examples/embed_two_modules.py   (a few seconds)
"""

import numpy as np

from nullspec.transformers import SignificantModes

N_UNITS = 60
MODULES = {"A": (np.arange(0, 10), 4.0), "B": (np.arange(30, 42), 2.5)}
SEED = 20_251_105


def planted_network(rng):
    """Noise plus strength * sqrt(N) * u u^T for each module (u uniform on the module, unit norm)."""
    a = rng.standard_normal((N_UNITS, N_UNITS))
    for rows, strength in MODULES.values():
        u = np.zeros(N_UNITS)
        u[rows] = 1 / np.sqrt(rows.size)
        a += strength * np.sqrt(N_UNITS) * np.outer(u, u)
    return a


def best_module(column):
    """The planted module whose size-k set of units best matches the k largest |coordinates|."""
    order = np.argsort(-np.abs(column), kind="stable")
    overlaps = {name: np.intersect1d(order[: rows.size], rows).size for name, (rows, _) in MODULES.items()}
    name = max(overlaps, key=overlaps.get)
    return name, overlaps[name], sorted(order[: MODULES[name][0].size].tolist())


def main():
    a = planted_network(np.random.default_rng(SEED))
    modes = SignificantModes(random_state=0).fit(a)
    embedding = modes.transform(a)
    print(f"synthetic data: {N_UNITS} units, modules planted on units "
          + ", ".join(f"{name} = {rows[0]}-{rows[-1]}" for name, (rows, _) in MODULES.items()))
    print(f"significant modes: {len(modes.eigenvalues_)} ({modes.n_components_} embedding columns)")
    names = modes.get_feature_names_out().tolist()
    for k, (z, p) in enumerate(zip(modes.eigenvalues_, modes.pvalues_)):
        print(f"  mode {k}: scaled eigenvalue {z.real:.2f}{z.imag:+.2f}i, p = {p:.3g}")
    for name, column in zip(names, embedding.T):
        module, hits, units = best_module(column)
        size = MODULES[module][0].size
        print(f"  column {name}: its {size} largest |coordinates| are units {units} "
              f"({hits} of the {size} units of module {module})")
    print()
    print(modes.test_result_.summary())


if __name__ == "__main__":
    main()
