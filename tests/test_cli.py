"""Tests of the command line, through ``main(argv)`` and as a subprocess (``python -m nullspec`` and
the installed ``nullspec`` script).

External references: the exact mean number of real eigenvalues, E_N, from the closed form of
Edelman, Kostlan & Shub (1994) [from memory] evaluated with mpmath; the Monte Carlo quantiles of the
spectral radius (1e5 real Ginibre samples per N) and the real-count quantiles recorded in THEORY.md
sections 3 and 6; the files are written by numpy, scipy.io and the csv module.
"""

import csv
import hashlib
import html
import io
import json
import os
import subprocess
import sys
from pathlib import Path

import mpmath
import numpy as np
import pytest
import scipy.io

import nullspec
from nullspec import cli, ginibre
from nullspec.cli import main
from nullspec.demo import demo_names, load_demo

HOSTILE = ("<script>alert(1)</script>", "\"&'", "a<b>c")
GAUSSIAN = ("--null", "gaussian")  # the exact null: no simulation, fast
SCRIPT = Path(sys.executable).with_name("nullspec")


@pytest.fixture(autouse=True)
def _private_cache(tmp_path_factory, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path_factory.getbasetemp() / "cache"))


def _run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def _subprocess(*args, stdin=None, command=None):
    env = dict(os.environ)  # carries the test's private NULLSPEC_CACHE_DIR
    command = command or [sys.executable, "-m", "nullspec"]
    return subprocess.run([*command, *args], input=stdin, capture_output=True, text=True, timeout=120, env=env)


def _strict_json(text):
    def refuse(constant):
        raise ValueError(f"non-standard JSON constant {constant}")

    return json.loads(text, parse_constant=refuse)


def _write_labelled_csv(path, values, labels):
    with open(path, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["", *labels])
        for label, row in zip(labels, values):
            writer.writerow([label, *(repr(float(x)) for x in row)])
    return path


@pytest.fixture
def planted_csv(tmp_path):
    """A labelled CSV: noise plus a rank-one signal on the first three nodes, which carry hostile labels."""
    n = 24
    rng = np.random.default_rng(8)
    u = np.zeros(n)
    u[:3] = 1 / np.sqrt(3)
    values = rng.standard_normal((n, n)) + 3.0 * np.sqrt(n) * np.outer(u, u)
    return _write_labelled_csv(tmp_path / "planted.csv", values, [*HOSTILE, *(f"n{i}" for i in range(3, n))])


@pytest.fixture
def noise_npy(tmp_path):
    path = tmp_path / "noise.npy"
    np.save(path, np.random.default_rng(9).standard_normal((20, 20)))
    return path


def _one_error_line(err, *needles):
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("nullspec: error: "), err
    assert "Traceback" not in err
    for needle in needles:
        assert needle in lines[0], (needle, lines[0])


def _fingerprint(path):
    stat = os.stat(path)
    return hashlib.sha256(Path(path).read_bytes()).hexdigest(), stat.st_mtime_ns, stat.st_mode


# ---- report: the three formats -----------------------------------------------------------------

def test_version(capsys):
    code, out, _ = _run(["--version"], capsys)
    assert code == 0 and out.strip() == f"nullspec {nullspec.__version__}"


def test_report_text(planted_csv, capsys):
    code, out, err = _run(["report", str(planted_csv), *GAUSSIAN], capsys)
    assert code == 0
    assert out.startswith(f"Input: {planted_csv}\n") and "Spectral test of a 24 x 24 matrix" in out
    assert "Outliers (beyond" in out and HOSTILE[0] in out  # text keeps labels as they are
    assert all(line.startswith("nullspec: warning (") for line in err.splitlines())


def test_report_json_carries_labels_input_and_seed(planted_csv, capsys):
    code, out, _ = _run(["report", str(planted_csv), "--seed", "4", "--n-resamples", "99", "--format", "json"],
                        capsys)
    data = _strict_json(out)
    assert code == 0 and data["input"]["source"] == str(planted_csv) and data["input"]["n"] == 24
    assert data["seed"] == 4 and data["entropy"] == 4 and data["null"] == "permutation"
    assert data["n_resamples"] <= 99 and data["labels"]["rows"][:3] == list(HOSTILE)
    assert set(data["outliers"][0]["rows"]) <= set(HOSTILE) and set(data["outliers"][0]["columns"]) <= set(HOSTILE)
    assert len(data["cautions"]) == 4 and data["how_to_read"]


def test_same_seed_same_numbers(noise_npy, capsys):
    argv = ["report", str(noise_npy), "--seed", "11", "--n-resamples", "49", "--format", "json"]
    first, second = _strict_json(_run(argv, capsys)[1]), _strict_json(_run(argv, capsys)[1])
    assert first["tests"] == second["tests"] and first["pvalue"] == second["pvalue"]


def test_report_html_escapes_labels(planted_csv, tmp_path, capsys):
    out_path = tmp_path / "page.html"
    code, out, _ = _run(["report", str(planted_csv), *GAUSSIAN, "--format", "html", "-o", str(out_path)], capsys)
    page = out_path.read_text(encoding="utf-8")
    assert code == 0 and out == "" and page.startswith("<!DOCTYPE html>")
    for raw in HOSTILE:
        assert raw not in page and html.escape(raw, quote=True) in page
    assert "<script" not in page.lower()


@pytest.mark.parametrize("fmt", ["text", "json", "html"])
def test_report_formats_as_a_subprocess(noise_npy, fmt):
    run = _subprocess("report", str(noise_npy), *GAUSSIAN, "--format", fmt)
    assert run.returncode == 0 and "Traceback" not in run.stderr
    if fmt == "json":
        assert _strict_json(run.stdout)["input"]["source"] == str(noise_npy)
    else:
        assert run.stdout.startswith("<!DOCTYPE html>" if fmt == "html" else f"Input: {noise_npy}")


@pytest.mark.skipif(not SCRIPT.exists(), reason="the nullspec console script is not installed beside this Python")
def test_report_through_the_installed_script(noise_npy):
    run = _subprocess("report", str(noise_npy), *GAUSSIAN, "--format", "json", command=[str(SCRIPT)])
    assert run.returncode == 0 and _strict_json(run.stdout)["n"] == 20


def test_report_reads_standard_input(noise_npy):
    text = "\n".join(",".join(repr(float(x)) for x in row) for row in np.load(noise_npy))
    run = _subprocess("report", "-", *GAUSSIAN, "--format", "json", stdin=text)
    assert run.returncode == 0 and _strict_json(run.stdout)["input"]["source"] == "<stdin>"


def test_analysis_options_reach_the_test(noise_npy, capsys):
    argv = ["report", str(noise_npy), "--null", "permutation", "--within", "rows", "--n-resamples", "19",
            "--seed", "1", "--center", "0", "--scale", "mad", "--alpha", "0.1", "--statistics", "edge",
            "--all-draws", "--format", "json", "--progress", "never"]
    code, out, _ = _run(argv, capsys)
    data = _strict_json(out)
    assert code == 0 and list(data["tests"]) == ["edge"] and data["alpha"] == 0.1 and data["n_resamples"] == 19
    assert data["standardization"]["center"] == 0.0 and data["standardization"]["scale"] == "mad"
    assert "within='rows'" in data["tests"]["edge"]["method"]


def test_statistics_are_a_comma_separated_list(noise_npy, capsys):
    code, out, _ = _run(["report", str(noise_npy), *GAUSSIAN, "--statistics", "edge,real_count", "--format",
                         "json"], capsys)
    assert code == 0 and list(_strict_json(out)["tests"]) == ["edge", "real_count"]
    code, _, err = _run(["report", str(noise_npy), "--statistics", "edge,radius"], capsys)
    assert code == 2 and "expected a comma-separated list of real_count, radial, edge; got 'edge,radius'" in err


def test_progress_goes_to_stderr_only(noise_npy):
    run = _subprocess("report", str(noise_npy), "--n-resamples", "40", "--seed", "2", "--all-draws",
                      "--progress", "always", "--format", "json")
    assert run.returncode == 0 and _strict_json(run.stdout)["n_resamples"] == 40


def test_warnings_go_to_stderr_one_line_each(tmp_path, capsys):
    path = tmp_path / "small.csv"
    np.savetxt(path, np.random.default_rng(1).standard_normal((4, 4)), delimiter=",")
    code, out, err = _run(["report", str(path), *GAUSSIAN, "--format", "json"], capsys)
    assert code == 0 and _strict_json(out)["warnings"]
    lines = err.splitlines()
    assert lines and all(line.startswith("nullspec: warning (") for line in lines)
    assert any("SmallMatrixWarning" in line for line in lines) and len(lines) == len(_strict_json(out)["warnings"])


# ---- bad input -----------------------------------------------------------------------------------

def _bad_files(folder):
    """(name, path, extra argv, fragments of the one-line message) for every kind of bad input."""
    rng = np.random.default_rng(0)
    m = rng.standard_normal((4, 4))
    texts = {"ragged.csv": "1,2,3\n4,5\n6,7,8\n", "text.csv": "1,2,3\n4,x,6\n7,8,9\n",
             "nan.csv": "1,2,3\n4,nan,6\n7,8,10\n", "inf.csv": "1,2,3\n4,-inf,6\n7,8,10\n", "empty.csv": "",
             "nonsquare.csv": "1,2,3,4\n5,6,7,8\n9,10,11,12\n",
             "pattern.mtx": "%%MatrixMarket matrix coordinate pattern general\n3 3 2\n1 1\n2 2\n"}
    for name, text in texts.items():
        (folder / name).write_text(text)
    np.savez(folder / "archive.npz", weights=m)
    np.save(folder / "whole.npy", m)
    (folder / "truncated.npy").write_bytes((folder / "whole.npy").read_bytes()[:100])
    scipy.io.mmwrite(folder / "complex.mtx", m + 1j * m)
    (folder / "folder.csv").mkdir()
    return [
        ("ragged rows", "ragged.csv", [], ["line 2 has 2 fields but line 1 has 3"]),
        ("text cell", "text.csv", [], ["line 2, field 2 holds 'x', which is not a number"]),
        ("NaN", "nan.csv", [], ["must contain finite numbers only", "(nan)"]),
        ("infinity", "inf.csv", [], ["must contain finite numbers only", "(-inf)"]),
        ("empty file", "empty.csv", [], ["the file is empty"]),
        ("non-square", "nonsquare.csv", [], ["must be square", "(3, 4)"]),
        ("missing npz key", "archive.npz", ["--key", "nope"], ["the archive has no array 'nope'", "'weights'"]),
        ("missing file", "absent.csv", [], ["cannot open the file (No such file or directory)"]),
        ("a folder", "folder.csv", [], ["is a directory"]),
        ("damaged file", "truncated.npy", [], ["not a readable .npy array"]),
        ("complex mtx", "complex.mtx", [], ["the Matrix Market field is 'complex'"]),
        ("pattern mtx", "pattern.mtx", [], ["the Matrix Market field is 'pattern'"]),
    ]


@pytest.fixture
def bad_files(tmp_path):
    return tmp_path, _bad_files(tmp_path)


def test_every_bad_input_gives_one_line_and_exit_1(bad_files, capsys):
    folder, cases = bad_files
    for label, name, extra, needles in cases:
        code, out, err = _run(["report", str(folder / name), *GAUSSIAN, *extra], capsys)
        assert code == 1 and out == "", label
        _one_error_line(err, str(folder / name), *needles)


def test_bad_inputs_as_a_subprocess(bad_files):
    folder, cases = bad_files
    for label, name, extra, needles in cases[::3]:  # a third of them: each run starts a Python
        run = _subprocess("report", str(folder / name), *extra)
        assert run.returncode == 1 and run.stdout == "", label
        _one_error_line(run.stderr, *needles)


@pytest.mark.skipif(not SCRIPT.exists(), reason="the nullspec console script is not installed beside this Python")
def test_bad_input_through_the_installed_script(bad_files):
    folder, _ = bad_files
    run = _subprocess("screen", str(folder / "ragged.csv"), command=[str(SCRIPT)])
    assert run.returncode == 1
    _one_error_line(run.stderr, "ragged.csv", "line 2 has 2 fields")


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0, reason="root reads files whatever their mode")
def test_unreadable_file(noise_npy, capsys):
    noise_npy.chmod(0)
    try:
        code, _, err = _run(["report", str(noise_npy)], capsys)
    finally:
        noise_npy.chmod(0o644)
    assert code == 1
    _one_error_line(err, "cannot open the file (Permission denied)")


def test_option_errors_of_the_library_are_one_line(noise_npy, capsys):
    code, _, err = _run(["report", str(noise_npy), "--center", "median"], capsys)
    assert code == 1
    _one_error_line(err, "`center` must be one of", "'median'")


@pytest.mark.parametrize("argv", [
    ["report"],
    ["report", "m.npy", "--form", "json"],  # abbreviations are refused on the subcommand too
    ["report", "m.npy", "--n-res", "9"],
    ["report", "m.npy", "--null", "fancy"],
    ["report", "m.npy", "--within", "rows"],  # --within needs --null permutation
    ["report", "m.npy", "--format", "csv"],
    ["screen", "m.npy", "--format", "html"],
    ["table", "many"],
    ["demo", "--format", "json"],  # needs a NAME
    ["demo", "no_such_scenario"],
    ["frobnicate"],
    [],
])
def test_usage_errors_exit_2(argv, capsys):
    code, out, err = _run(argv, capsys)
    assert code == 2 and out == "" and "usage: nullspec" in err and "Traceback" not in err


def test_usage_error_as_a_subprocess():
    run = _subprocess("report", "m.npy", "--form", "json")
    assert run.returncode == 2 and "unrecognized arguments: --form" in run.stderr and "Traceback" not in run.stderr


# ---- output: -o, pipes, interruption --------------------------------------------------------------

def test_output_file_is_written_atomically(noise_npy, tmp_path, capsys):
    target = tmp_path / "out" / "report.json"
    target.parent.mkdir()
    target.write_text("old")
    code, out, _ = _run(["report", str(noise_npy), *GAUSSIAN, "--format", "json", "-o", str(target)], capsys)
    assert code == 0 and out == ""
    assert _strict_json(target.read_text())["n"] == 20
    assert sorted(p.name for p in target.parent.iterdir()) == ["report.json"]  # no temporary file left
    assert target.stat().st_mode & 0o777 == 0o666 & ~cli._current_umask()
    _, stdout_text, _ = _run(["report", str(noise_npy), *GAUSSIAN, "--format", "json", "-o", "-"], capsys)
    assert stdout_text == target.read_text()


def test_a_failed_write_leaves_the_old_file_and_no_temporary(noise_npy, tmp_path, capsys, monkeypatch):
    target = tmp_path / "report.txt"
    target.write_text("old")

    def broken_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(cli.os, "replace", broken_replace)
    code, _, err = _run(["report", str(noise_npy), *GAUSSIAN, "-o", str(target)], capsys)
    assert code == 1 and target.read_text() == "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["noise.npy", "report.txt"]
    _one_error_line(err, "No space left on device")


def test_output_errors(noise_npy, tmp_path, capsys):
    code, _, err = _run(["report", str(noise_npy), *GAUSSIAN, "-o", str(tmp_path / "no" / "x.txt")], capsys)
    assert code == 1
    _one_error_line(err, "cannot write -o", "its folder exists")
    code, _, err = _run(["report", str(noise_npy), *GAUSSIAN, "-o", str(tmp_path)], capsys)
    assert code == 1
    _one_error_line(err, "is a folder")


def test_output_never_overwrites_the_input(noise_npy, capsys):
    before = _fingerprint(noise_npy)
    code, _, err = _run(["report", str(noise_npy), *GAUSSIAN, "-o", str(noise_npy)], capsys)
    assert code == 1 and _fingerprint(noise_npy) == before
    _one_error_line(err, "is the input file")


def test_input_files_are_never_modified(planted_csv, noise_npy, tmp_path, capsys):
    before = {p: _fingerprint(p) for p in (planted_csv, noise_npy)}
    for fmt in ("text", "json", "html"):
        assert main(["report", str(planted_csv), *GAUSSIAN, "--format", fmt, "-o", str(tmp_path / f"r.{fmt}")]) == 0
    assert main(["screen", str(planted_csv), str(noise_npy), *GAUSSIAN, "--format", "csv"]) == 0
    capsys.readouterr()
    assert {p: _fingerprint(p) for p in before} == before


def test_broken_pipe_exits_quietly(noise_npy):
    with subprocess.Popen([sys.executable, "-m", "nullspec", "report", str(noise_npy), *GAUSSIAN],
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE) as proc:
        proc.stdout.close()  # the reader goes away before anything is written (the child is still importing)
        err = proc.stderr.read().decode()
        code = proc.wait(timeout=120)
    assert code == 1 and "Traceback" not in err and "BrokenPipeError" not in err


def test_interrupt_exits_130(noise_npy, capsys, monkeypatch):
    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(cli, "spectral_test", interrupted)
    code, out, err = _run(["report", str(noise_npy)], capsys)
    assert code == 130 and out == "" and err == "nullspec: interrupted\n"


# ---- screen --------------------------------------------------------------------------------------

def test_screen_one_row_per_file_in_three_formats(planted_csv, noise_npy, capsys):
    files = [str(planted_csv), str(noise_npy), str(noise_npy)]  # a file given twice keeps both rows
    code, out, err = _run(["screen", *files, *GAUSSIAN, "--format", "csv", "--fdr", "holm"], capsys)
    rows = list(csv.DictReader(io.StringIO(out)))
    assert code == 0 and [r["name"] for r in rows] == [files[0], files[1], f"{files[1]} #2"]
    assert rows[0]["significant"] == "True" and rows[1]["pvalue"] == rows[2]["pvalue"]
    assert "the CSV holds the numbers only" in err
    code, out, _ = _run(["screen", *files[:2], *GAUSSIAN, "--format", "json"], capsys)
    data = _strict_json(out)
    assert code == 0 and data["fdr"] == "bh" and data["input"] == files[:2] and len(data["cautions"]) == 4
    assert set(data["results"][0]["outliers"][0]["rows"]) <= set(HOSTILE)  # labels reach the screen too
    code, out, _ = _run(["screen", *files[:2], *GAUSSIAN], capsys)
    assert code == 0 and out.startswith("Screen of 2 matrices") and "Cautions:" in out


# ---- table ---------------------------------------------------------------------------------------

def _eks_mean(n):
    """E_N by the Edelman-Kostlan-Shub (1994) closed form [from memory], evaluated with mpmath."""
    gamma_ratio = mpmath.gamma(n + 0.5) / (mpmath.gamma(n) * mpmath.sqrt(mpmath.pi))
    return float(0.5 + mpmath.sqrt(2) * gamma_ratio * mpmath.hyp2f1(1, -0.5, n, 0.5))


@pytest.mark.parametrize("n", [3, 100, 1000])
def test_table_matches_the_ginibre_functions(n, capsys):
    code, out, _ = _run(["table", str(n), "--format", "json"], capsys)
    table = _strict_json(out)
    assert code == 0 and table["n"] == n
    real = table["real_count"]
    assert real["mean"] == ginibre.real_count_mean(n) and real["sd"] == np.sqrt(ginibre.real_count_var(n))
    cdf = np.cumsum(ginibre.real_count_pmf(n))
    assert real["quantiles"] == {str(q): int(np.argmax(cdf >= q)) for q in (0.001, 0.025, 0.5, 0.975, 0.999)}
    levels = [row["level"] for row in table["spectral_radius"]]
    assert levels == [0.9, 0.95, 0.99, 0.999]
    radius = ginibre.spectral_radius_isf(1 - np.array(levels), n)
    np.testing.assert_array_equal([row["raw"] for row in table["spectral_radius"]], radius)
    np.testing.assert_allclose([row["scaled"] for row in table["spectral_radius"]], radius / np.sqrt(n), rtol=1e-15)
    assert table["expected_outside_circular_law"] == ginibre.expected_outside(np.sqrt(n), n)
    assert real["mean"] == pytest.approx(_eks_mean(n), rel=1e-10)


def test_table_against_recorded_reference_values(capsys):
    # THEORY.md section 3 (large-N summary): N = 100 real-count quantiles 2, 4, 12, 16 at 0.001, 0.025,
    # 0.975, 0.999 and Var K = 4.966779.  Section 6: 1e5 simulated real Ginibre matrices at N = 100 give
    # rho / sqrt(N) = 1.1231 / 1.1677 / 1.2222 at 95 / 99 / 99.9 %; the order-statistic CI of the 99.9 % point
    # from 1e5 samples is about +-0.006 (THEORY.md quotes [1.499, 1.524] at N = 20), so 0.006 is the tolerance.
    table = _strict_json(_run(["table", "100", "--format", "json"], capsys)[1])
    q = table["real_count"]["quantiles"]
    assert (q["0.001"], q["0.025"], q["0.975"], q["0.999"]) == (2, 4, 12, 16)
    assert table["real_count"]["sd"] ** 2 == pytest.approx(4.966779, abs=1e-6)
    scaled = [row["scaled"] for row in table["spectral_radius"][1:]]
    np.testing.assert_allclose(scaled, [1.1231, 1.1677, 1.2222], atol=0.006)


def test_table_text(capsys):
    code, out, _ = _run(["table", "100"], capsys)
    assert code == 0 and out.startswith("Exact null at N = 100")
    assert "mean E_N      8.44891" in out and "99.9%: 16" in out and "sqrt(N) = 10:" in out


def test_table_rejects_sizes(capsys):
    code, _, err = _run(["table", "0"], capsys)
    assert code == 1
    _one_error_line(err, "`N` must be an integer >= 1; got 0")
    code, _, err = _run(["table", str(10**6 + 1)], capsys)
    assert code == 1
    _one_error_line(err, "`N` must be at most 1000000")


# ---- demo ----------------------------------------------------------------------------------------

def test_demo_overview_and_featured_report(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, _ = _run(["demo"], capsys)
    assert code == 0 and "SYNTHETIC" in out
    for name in demo_names():
        assert f"  {name}: synthetic:" in out
    assert "Full report of hidden_module" in out and "Input: demo:hidden_module" in out
    report = out.split("Full report of hidden_module", 1)[1]
    module = load_demo("hidden_module").description
    rows_line = next(line for line in report.splitlines() if line.strip().startswith("rows:"))
    assert all(label in module for label in rows_line.split(":", 1)[1].replace(" ", "").split(","))
    assert list(tmp_path.iterdir()) == []  # writes nothing


def test_demo_one_scenario_as_json(capsys):
    code, out, _ = _run(["demo", "plain_noise", "--format", "json"], capsys)
    data = _strict_json(out)
    assert code == 0 and data["input"]["source"] == "demo:plain_noise"
    assert data["input"]["description"].startswith("synthetic:") and data["null"] == "gaussian"
    assert not data["significant"]  # the shipped noise matrix (a fixed file) is not flagged


def test_demo_as_a_subprocess():
    run = _subprocess("demo", "reciprocal_pairs")
    assert run.returncode == 0 and "Input: demo:reciprocal_pairs" in run.stdout and "Traceback" not in run.stderr
