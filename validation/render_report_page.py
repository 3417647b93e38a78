"""Render nullspec's HTML report headless in Chromium and keep the screenshots out of the repository.

The pages are made by the command line itself (``nullspec.cli.main``) from the embedded SYNTHETIC
demo scenarios, plus one labelled CSV whose labels are hostile HTML, so the screenshots show what a
reader sees: the layout, the figures and that every label stays text.  Look at the PNGs afterwards.

Set-up (Debian; as root)::

    apt-get update && apt-get install -y chromium

Run from a checkout::

    python validation/render_report_page.py                     # writes validation/screenshots/*.png
    python validation/render_report_page.py --out /tmp/shots    # elsewhere
    python validation/render_report_page.py --null permutation  # drawn null (slower)

``validation/screenshots/`` is git-ignored.  Exit code 0 when every page rendered, 1 otherwise.
"""

import argparse
import contextlib
import csv
import re
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import numpy as np

from nullspec.cli import main as nullspec_main
from nullspec.demo import demo_names, load_demo

DEFAULT_OUT = Path(__file__).resolve().parent / "screenshots"
HOSTILE = ("<script>alert(1)</script>", "\"&'", "<b>bold?</b>")
CHROMIUM_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync")


def _chromium():
    """The Chromium executable, or None."""
    return next((found for name in ("chromium", "chromium-browser") if (found := shutil.which(name))), None)


def _hostile_csv(folder):
    """The hidden-module scenario as a labelled CSV in which three module nodes carry hostile HTML labels."""
    demo = load_demo("hidden_module")
    module = [int(i) - 1 for i in re.findall(r"node_(\d{3})", demo.description)]
    labels = list(demo.row_labels)
    for index, label in zip(module, HOSTILE):
        labels[index] = label
    path = folder / "hostile_labels.csv"
    with open(path, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["", *labels])
        for label, row in zip(labels, np.asarray(demo.values)):
            writer.writerow([label, *(repr(float(x)) for x in row)])
    return path


def _pages(folder, null):
    """Write the HTML pages through the command line; returns {name: path}."""
    pages = {}
    for name in demo_names():
        pages[name] = folder / f"{name}.html"
        with open(pages[name], "w", encoding="utf-8") as handle, contextlib.redirect_stdout(handle):
            code = nullspec_main(["demo", name, "--format", "html", "--null", null, "--seed", "1"])
        if code != 0:
            raise SystemExit(f"nullspec demo {name} failed with exit code {code}")
    pages["hostile_labels"] = folder / "hostile_labels.html"
    code = nullspec_main(["report", str(_hostile_csv(folder)), "--null", null, "--seed", "1", "--format", "html",
                          "-o", str(pages["hostile_labels"])])
    if code != 0:
        raise SystemExit(f"nullspec report (hostile labels) failed with exit code {code}")
    return pages


def _screenshot(chromium, page, png, size):
    """One headless Chromium run with a fresh profile; True when the PNG was written."""
    with tempfile.TemporaryDirectory(prefix="nullspec-chromium-") as profile:
        command = [chromium, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", f"--screenshot={png}",
                   f"--window-size={size}", page.resolve().as_uri()]
        run = subprocess.run(command, capture_output=True, text=True, timeout=120)
    return run.returncode == 0 and png.exists() and png.stat().st_size > 10_000


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0], allow_abbrev=False)
    parser.add_argument("--out", type=Path, default=DEFAULT_OUT, help="folder for the PNGs (outside git)")
    parser.add_argument("--null", default="gaussian", choices=("gaussian", "permutation", "auto"))
    parser.add_argument("--window-size", default="1200,2400", help="WIDTH,HEIGHT of the browser window")
    args = parser.parse_args(argv)
    chromium = _chromium()
    if chromium is None:
        print("Chromium not found: apt-get update && apt-get install -y chromium", file=sys.stderr)
        return 1
    args.out.mkdir(parents=True, exist_ok=True)
    failed = []
    with tempfile.TemporaryDirectory(prefix="nullspec-pages-") as folder:
        for name, page in _pages(Path(folder), args.null).items():
            png = args.out / f"{name}.png"
            ok = _screenshot(chromium, page, png, args.window_size)
            print(f"{'ok  ' if ok else 'FAIL'} {png}  (page {page.stat().st_size // 1024} KiB)")
            failed += [] if ok else [name]
    return 1 if failed else 0


if __name__ == "__main__":
    raise SystemExit(main())
