"""Every script in examples/ runs to completion and says that its data are synthetic.

The scripts are found by globbing, so examples added later are covered without editing this file.
Each runs in a fresh interpreter with a temporary working directory (anything it writes lands
there); a script that needs arguments gets them from ``ARGUMENTS``.
"""

import ast
import subprocess
import sys
from pathlib import Path

import pytest

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
SCRIPTS = sorted(EXAMPLES.glob("*.py"))
# make_demo_data.py rewrites the packaged archive unless it is given an output path.
ARGUMENTS = {"make_demo_data.py": lambda tmp: [str(tmp / "demo.npz")]}
TIMEOUT = 120  # seconds; each example is meant to run in a few


def test_examples_are_found():
    assert len(SCRIPTS) >= 3


@pytest.mark.parametrize("script", SCRIPTS, ids=[p.name for p in SCRIPTS])
def test_example_says_synthetic(script):
    docstring = ast.get_docstring(ast.parse(script.read_text())) or ""
    assert "synthetic" in docstring.lower(), f"{script.name}: the module docstring must label the data synthetic"


@pytest.mark.parametrize("script", SCRIPTS, ids=[p.name for p in SCRIPTS])
def test_example_runs(script, tmp_path):
    args = ARGUMENTS.get(script.name, lambda tmp: [])(tmp_path)
    run = subprocess.run([sys.executable, str(script), *args], cwd=tmp_path, capture_output=True, text=True,
                         timeout=TIMEOUT)
    assert run.returncode == 0, f"{script.name} failed:\n{run.stderr}"
    if script.name in ARGUMENTS:
        assert all(Path(a).exists() for a in args if a.startswith(str(tmp_path)))
    else:
        assert run.stdout.strip(), f"{script.name} printed nothing"
