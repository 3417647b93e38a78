"""Layering: every import inside the package points to the same layer or a lower one.

The layer order is DEVELOPERS.md's ("Architecture").  Modules are listed by name even before they
exist, so the test keeps working as they land; a new top-level module must be added here (and to
DEVELOPERS.md) before it can pass.  Subpackages (``ginibre``, ``nulls``) are one layer each.
"""

import ast
import pathlib

import pytest

import nullspec

PACKAGE = pathlib.Path(nullspec.__file__).parent

# Lowest first.  Same-layer imports are allowed.
LAYERS = (
    ("ginibre", "_lapack"),
    ("exceptions", "_validation", "_diagnostics", "_rng", "_cache", "_radial_table"),
    ("standardize",),
    ("spectrum",),
    ("statistics",),
    ("nulls",),
    ("calibration",),
    ("results",),
    ("inference",),
    ("io", "report", "transformers", "cli", "demo"),
    ("__main__", "__init__"),
)
RANK = {name: rank for rank, names in enumerate(LAYERS) for name in names}
# ``from . import __version__`` reads a constant that nullspec/__init__.py sets before importing any
# submodule; it is the one name a lower layer may take from the package root.
ROOT_CONSTANTS = {"__version__"}
# The pure layers: no printing, no file I/O, no random numbers.
PURE = ("ginibre", "_lapack", "standardize", "spectrum", "statistics")


def _module_files():
    return sorted(p for p in PACKAGE.rglob("*.py") if "__pycache__" not in p.parts)


def _dotted(path):
    """``("nullspec", "nulls", "engine")`` for nullspec/nulls/engine.py; packages end at their name."""
    parts = ("nullspec",) + path.relative_to(PACKAGE).with_suffix("").parts
    return parts[:-1] if parts[-1] == "__init__" else parts


def _layer_of(parts):
    """Layer name of a dotted module path inside nullspec (the package root is ``__init__``)."""
    return "__init__" if len(parts) == 1 else parts[1]


def _is_module(parts):
    sub = PACKAGE.joinpath(*parts[1:])
    return sub.with_suffix(".py").exists() or sub.is_dir()


def _targets(node, path):
    """The nullspec modules (as dotted tuples) that an import node reads from."""
    if isinstance(node, ast.Import):
        return [tuple(a.name.split(".")) for a in node.names if a.name.split(".")[0] == "nullspec"]
    if node.level == 0:
        if not (node.module or "").startswith("nullspec"):
            return []
        base = tuple(node.module.split("."))
    else:
        here = _dotted(path)
        package = here if path.name == "__init__.py" else here[:-1]
        base = package[: len(package) - (node.level - 1)] + tuple((node.module or "").split(".") if node.module else ())
    out = []
    for alias in node.names:
        candidate = base + (alias.name,)
        if _is_module(candidate):
            out.append(candidate)
        elif not (len(base) == 1 and alias.name in ROOT_CONSTANTS):
            out.append(base)
    return out


def _imports(path):
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, (ast.Import, ast.ImportFrom)):
            for target in _targets(node, path):
                yield node.lineno, target


@pytest.mark.parametrize("path", _module_files(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_imports_point_downward(path):
    source = _layer_of(_dotted(path))
    assert source in RANK, f"{path.name}: layer {source!r} is not in LAYERS; add it here and to DEVELOPERS.md"
    for lineno, target in _imports(path):
        layer = _layer_of(target)
        assert layer in RANK, f"{path}:{lineno} imports {'.'.join(target)}, whose layer is not in LAYERS"
        assert RANK[layer] <= RANK[source], (
            f"{path}:{lineno}: {source} (layer {RANK[source]}) imports {'.'.join(target)} "
            f"(layer {RANK[layer]}), an upward import"
        )


def _impurities(tree):
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and node.func.id in {"print", "open", "input"}:
            yield node.lineno, f"calls {node.func.id}()"
        if isinstance(node, ast.Attribute) and node.attr == "random" and isinstance(node.value, ast.Name):
            if node.value.id in {"np", "numpy"}:
                yield node.lineno, "uses numpy.random"
        if isinstance(node, (ast.Import, ast.ImportFrom)):
            names = [a.name for a in node.names] + ([node.module] if isinstance(node, ast.ImportFrom) else [])
            if any(n and n.split(".")[0] in {"random", "logging"} or n == "numpy.random" for n in names):
                yield node.lineno, "imports random, numpy.random or logging"


@pytest.mark.parametrize(
    "path",
    [p for p in _module_files() if _layer_of(_dotted(p)) in PURE],
    ids=lambda p: str(p.relative_to(PACKAGE)),
)
def test_pure_layers_do_no_io_and_draw_no_random_numbers(path):
    found = list(_impurities(ast.parse(path.read_text(encoding="utf-8"))))
    assert not found, f"{path}: " + "; ".join(f"line {line} {what}" for line, what in found)


def test_the_checker_sees_an_upward_import():
    # Guard against a checker that cannot fail: a fake spectrum module importing higher layers.
    fake = PACKAGE / "spectrum.py"
    tree = ast.parse("from .inference import spectral_test\nfrom . import statistics\nimport nullspec.nulls.engine\n")
    targets = [t for node in tree.body for t in _targets(node, fake)]
    assert targets == [("nullspec", "inference"), ("nullspec", "statistics"), ("nullspec", "nulls", "engine")]
    assert all(RANK[_layer_of(t)] > RANK["spectrum"] for t in targets)
    root = ast.parse("from . import __version__\n").body[0]
    assert _targets(root, PACKAGE / "results.py") == []
    impure = ast.parse("import numpy as np\nx = np.random.default_rng(0)\nprint(x)\nimport logging\n")
    assert sorted(what for _, what in _impurities(impure)) == [
        "calls print()",
        "imports random, numpy.random or logging",
        "uses numpy.random",
    ]
