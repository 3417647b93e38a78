"""Command line: ``nullspec report``, ``screen``, ``table`` and ``demo``.

Results go to standard output (or to ``-o PATH``, written atomically); progress, warnings and errors
go to standard error, warnings and errors as one line each.  Exit codes: 0 when the analysis ran
(significant or not), 1 on a data or runtime error, 2 on a usage error, 130 when interrupted.

Examples::

    nullspec report weights.csv --format html -o weights.html
    nullspec screen a.npy b.npy c.npy --fdr holm --format csv
    nullspec table 200
    nullspec demo
"""

import argparse
import contextlib
import json
import os
import sys
import tempfile
import warnings

import numpy as np

from . import __version__, ginibre
from ._validation import check_positive_int
from .demo import demo_names, load_demo
from .inference import screen, spectral_test
from .io import FORMATS as FILE_FORMATS
from .io import read_matrix
from .nulls import Permutation
from .report import RESULT_FORMATS, SCREEN_FORMATS, render
from .results import SCHEMA_VERSION

__all__ = ["main"]

_NULLS = ("auto", "gaussian", "permutation", "bootstrap")
_WITHIN = ("all", "offdiagonal", "rows", "columns", "pairs")
_STATISTICS = ("real_count", "radial", "edge")
_PROGRESS = {"auto": None, "always": True, "never": False}
_FLAGS = {"auto": "auto", "yes": True, "no": False}
_REAL_COUNT_LEVELS = (0.001, 0.025, 0.5, 0.975, 0.999)
_RADIUS_LEVELS = (0.90, 0.95, 0.99, 0.999)
_TABLE_MAX_N = 10**6  # the exact real-count pmf holds N + 1 numbers and takes seconds at 10**6
_DEMO_FEATURED = "hidden_module"
_ERRORS = (ValueError, TypeError, OSError, MemoryError, ArithmeticError)


# --------------------------------------------------------------------------- the parser


def _number_or_word(text):
    """``--center`` / ``--scale``: a known number, or a policy name left for the library to check."""
    try:
        return float(text)
    except ValueError:
        return text


def _statistics_list(text):
    """``--statistics``: a comma-separated list of statistic names."""
    names = [name.strip() for name in text.split(",") if name.strip()]
    unknown = [name for name in names if name not in _STATISTICS]
    if unknown or not names:
        raise argparse.ArgumentTypeError(
            f"expected a comma-separated list of {', '.join(_STATISTICS)}; got {text!r}")
    return tuple(names)


def _add_analysis_options(parser, null_default="auto"):
    group = parser.add_argument_group("analysis")
    group.add_argument("--null", choices=_NULLS, default=null_default,
                       help=f"the null hypothesis (default: {null_default}; auto = permutation up to N = 400, "
                            "exact Gaussian above)")
    group.add_argument("--within", choices=_WITHIN,
                       help="what the permutation null shuffles (with --null permutation; default: all entries)")
    group.add_argument("--statistics", type=_statistics_list, metavar="NAMES",
                       help=f"comma-separated statistics to test (default: {','.join(_STATISTICS)})")
    group.add_argument("--n-resamples", type=int, default=999, metavar="B", help="null draws (default: 999)")
    group.add_argument("--all-draws", action="store_true",
                       help="draw all B even when the decision is settled early (no sequential stopping)")
    group.add_argument("--alternative", choices=("two-sided", "greater", "less"),
                       help="the same alternative for every statistic (default: each statistic's natural one)")
    group.add_argument("--alpha", type=float, default=0.05, help="level of the decision (default: 0.05)")
    group.add_argument("--center", type=_number_or_word, default="mean", help="mean, none or a number (default: mean)")
    group.add_argument("--scale", type=_number_or_word, default="sd", help="sd, mad or a number (default: sd)")
    group.add_argument("--diagonal", choices=("include", "shift"), default="include",
                       help="include the diagonal as entries, or remove its mean as a spectral shift")
    group.add_argument("--seed", type=int, help="seed of a drawn null (same seed, same numbers)")
    group.add_argument("--jobs", type=int, metavar="N", help="parallel workers for a drawn null (-1: all cores)")
    group.add_argument("--progress", choices=tuple(_PROGRESS), default="auto",
                       help="progress bar on stderr (auto: when stderr is a terminal)")


def _add_file_options(parser):
    group = parser.add_argument_group("reading the file")
    group.add_argument("--file-format", choices=FILE_FORMATS, help="override the file suffix")
    group.add_argument("--delimiter", help="text tables: the field separator (default: sniffed)")
    group.add_argument("--header", choices=tuple(_FLAGS), default="auto",
                       help="text tables: the first row holds column labels (default: auto)")
    group.add_argument("--index", choices=tuple(_FLAGS), default="auto",
                       help="text tables: the first column holds row labels (default: auto)")
    group.add_argument("--key", help=".npz archives: the array to read")


def _add_output(parser, formats):
    parser.add_argument("--format", choices=formats, default="text", help="output format (default: text)")
    parser.add_argument("-o", "--output", metavar="PATH", help="write to PATH (atomically) instead of stdout")


def _build_parser():
    parser = argparse.ArgumentParser(
        prog="nullspec", allow_abbrev=False,
        description="Test whether the eigenvalues of a real square matrix depart from those of i.i.d. noise.")
    parser.add_argument("--version", action="version", version=f"nullspec {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    report = sub.add_parser("report", allow_abbrev=False, help="test one matrix file and print its report")
    report.add_argument("file", metavar="FILE", help="the matrix (.csv .tsv .txt .npy .npz .mtx .mtx.gz, or - for stdin)")
    _add_analysis_options(report)
    _add_file_options(report)
    _add_output(report, RESULT_FORMATS)
    scr = sub.add_parser("screen", allow_abbrev=False, help="test many matrix files, correcting across them")
    scr.add_argument("files", nargs="+", metavar="FILE", help="the matrices")
    scr.add_argument("--fdr", choices=("bh", "holm"), default="bh",
                     help="correction across the files: bh (false discovery rate) or holm (family-wise)")
    _add_analysis_options(scr)
    _add_file_options(scr)
    _add_output(scr, SCREEN_FORMATS)
    table = sub.add_parser("table", allow_abbrev=False, help="print the exact Gaussian null at size N")
    table.add_argument("n", type=int, metavar="N", help="the matrix size")
    _add_output(table, ("text", "json"))
    demo = sub.add_parser("demo", allow_abbrev=False, help="run the embedded synthetic scenarios (writes nothing)")
    demo.add_argument("name", nargs="?", choices=demo_names(), metavar="NAME",
                      help=f"one scenario: {', '.join(demo_names())} (default: an overview of all, then "
                           f"the report of {_DEMO_FEATURED})")
    _add_analysis_options(demo, null_default="gaussian")
    demo.add_argument("--format", choices=RESULT_FORMATS, default="text", help="output format (with NAME)")
    return parser


def _check_combinations(parser, args):
    """Usage rules argparse cannot express (exit 2 through ``parser.error``)."""
    if getattr(args, "within", None) is not None and args.null != "permutation":
        parser.error(f"--within applies to --null permutation only; got --null {args.null}")
    if args.command == "demo" and args.name is None and args.format != "text":
        parser.error(f"--format {args.format} needs a scenario NAME (one of {', '.join(demo_names())})")


# --------------------------------------------------------------------------- running the analysis


def _test_options(args):
    """Keyword arguments of spectral_test / screen from the parsed options."""
    null = Permutation(args.within) if args.within is not None else args.null
    options = {"null": null, "n_resamples": args.n_resamples, "alternative": args.alternative, "alpha": args.alpha,
               "center": args.center, "scale": args.scale, "diagonal": args.diagonal, "rng": args.seed,
               "n_jobs": args.jobs, "progress": _PROGRESS[args.progress], "sequential": not args.all_draws}
    if args.statistics:
        options["statistics"] = args.statistics
    return options


def _read(path, args):
    return read_matrix(path, format=args.file_format, delimiter=args.delimiter, header=_FLAGS[args.header],
                       index_col=_FLAGS[args.index], key=args.key)


def _run_report(args):
    matrix = _read(args.file, args)
    _refuse_overwriting_inputs(args.output, [args.file])
    result = spectral_test(matrix, **_test_options(args))  # the MatrixFile: its labels name the outliers' units
    _emit(render(result, args.format, source=matrix.source, seed=args.seed), args.output)
    return 0


def _unique_names(paths):
    """One name per file; a file given twice gets ``#2``, ``#3`` so no row is lost."""
    seen, names = {}, []
    for path in paths:
        seen[path] = seen.get(path, 0) + 1
        names.append(path if seen[path] == 1 else f"{path} #{seen[path]}")
    return names


def _run_screen(args):
    files = [_read(path, args) for path in args.files]
    _refuse_overwriting_inputs(args.output, args.files)
    names = _unique_names(args.files)
    result = screen(dict(zip(names, files)), fdr=args.fdr, **_test_options(args))
    if args.format == "csv":
        print("nullspec: note: the CSV holds the numbers only; --format text or json adds how to read them "
              "and the cautions", file=sys.stderr)
    _emit(render(result, args.format, seed=args.seed), args.output)
    return 0


def _run_demo(args):
    options = _test_options(args)
    if args.name is not None:
        demo = load_demo(args.name)
        result = spectral_test(demo, **options)
        _emit(render(result, args.format, source=demo.source, description=demo.description, seed=args.seed), None)
        return 0
    names = demo_names()
    demos = [load_demo(name) for name in names]
    overview = screen(dict(zip(names, demos)), **options)
    featured = names.index(_DEMO_FEATURED)
    parts = [
        f"nullspec demo: {len(names)} SYNTHETIC scenarios invented for this demo (nothing is read or written).",
        "\n".join(f"  {name}: {d.description}" for name, d in zip(names, demos)),
        overview.summary(),
        f"Full report of {_DEMO_FEATURED} (the cautions below apply to every row above):",
        render(overview.results[featured], "text", source=demos[featured].source).rstrip("\n"),
        "Next: `nullspec demo NAME` for another scenario's report, `nullspec report FILE` for your own matrix.",
    ]
    _emit("\n\n".join(parts) + "\n", None)
    return 0


# --------------------------------------------------------------------------- the exact null table


def _null_table(n):
    """The exact Gaussian null at size ``n`` as a JSON-safe dict."""
    n = check_positive_int(n, "N")
    if n > _TABLE_MAX_N:
        raise ValueError(f"`N` must be at most {_TABLE_MAX_N} for the table; got {n}. Pass a smaller N.")
    cdf = np.cumsum(ginibre.real_count_pmf(n))
    quantiles = {f"{q:g}": int(np.searchsorted(cdf, q)) for q in _REAL_COUNT_LEVELS}
    radius = ginibre.spectral_radius_isf(1.0 - np.array(_RADIUS_LEVELS), n)
    return {
        "schema_version": SCHEMA_VERSION, "nullspec_version": __version__, "n": n,
        "null": "real Ginibre ensemble: an N x N matrix of i.i.d. N(0, 1) entries",
        "real_count": {"mean": float(ginibre.real_count_mean(n)), "sd": float(np.sqrt(ginibre.real_count_var(n))),
                       "quantiles": quantiles},
        "spectral_radius": [{"level": level, "scaled": float(r / np.sqrt(n)), "raw": float(r)}
                            for level, r in zip(_RADIUS_LEVELS, radius)],
        "expected_outside_circular_law": float(ginibre.expected_outside(np.sqrt(n), n)),
    }


def _table_text(table):
    n, real = table["n"], table["real_count"]
    quantiles = "   ".join(f"{100 * float(q):g}%: {k}" for q, k in real["quantiles"].items())
    lines = [
        f"Exact null at N = {n} ({table['null']})", "",
        "Number of real eigenvalues K",
        f"  mean E_N      {real['mean']:.6g}",
        f"  sd            {real['sd']:.6g}",
        f"  quantiles     {quantiles}", "",
        "Spectral radius rho (largest |eigenvalue|): the point it exceeds with probability 1 - level",
        f"  {'level':>7}  {'rho / sqrt(N)':>14}  {'rho':>12}",
    ]
    lines += [f"  {100 * row['level']:>6g}%  {row['scaled']:>14.6g}  {row['raw']:>12.6g}" for row in table["spectral_radius"]]
    lines += ["", f"Expected number of eigenvalues beyond the circular-law radius sqrt(N) = {np.sqrt(n):.6g}: "
                  f"{table['expected_outside_circular_law']:.6g}",
              "", "Quantiles of K: the smallest k with P(K <= k) >= q. The values hold for Gaussian entries; "
                  "with other entry laws use a drawn null (nullspec report --null permutation)."]
    return "\n".join(lines) + "\n"


def _run_table(args):
    table = _null_table(args.n)
    text = _table_text(table) if args.format == "text" else json.dumps(table, allow_nan=False, indent=2) + "\n"
    _emit(text, args.output)
    return 0


_COMMANDS = {"report": _run_report, "screen": _run_screen, "table": _run_table, "demo": _run_demo}


# --------------------------------------------------------------------------- output, warnings, errors


def _refuse_overwriting_inputs(output, inputs):
    if output in (None, "-") or not os.path.exists(output):
        return
    for path in inputs:
        if path != "-" and os.path.exists(path) and os.path.samefile(output, path):
            raise ValueError(f"-o {output} is the input file {path}; nullspec never overwrites its input. "
                             "Pass another output path.")


def _current_umask():
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _write_atomic(path, text):
    """Write ``text`` to ``path`` through a temporary file in the same folder and ``os.replace``."""
    if os.path.isdir(path):
        raise ValueError(f"-o {path} is a folder; pass a file name.")
    try:
        fd, temporary = tempfile.mkstemp(dir=os.path.dirname(os.path.abspath(path)), prefix=".nullspec-",
                                         suffix=".tmp")
    except OSError as exc:
        raise ValueError(f"cannot write -o {path} ({exc.strerror}). Check that its folder exists and is writable.") from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as handle:
            handle.write(text)
        os.chmod(temporary, 0o666 & ~_current_umask())
        os.replace(temporary, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
        raise


def _emit(text, output):
    if output in (None, "-"):
        sys.stdout.write(text)
        sys.stdout.flush()  # inside main, so a closed pipe is handled there
    else:
        _write_atomic(output, text)


def _one_line(message):
    return " ".join(str(message).split())


def _show_warning(message, category, filename, lineno, file=None, line=None):
    """``warnings.showwarning`` for the command line: one line on stderr, no source location."""
    print(f"nullspec: warning ({category.__name__}): {_one_line(message)}", file=sys.stderr)


def _silence_stdout():
    """After a broken pipe: point stdout at devnull so the interpreter's final flush is silent."""
    with contextlib.suppress(OSError, ValueError):
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())


def _parse(parser, argv):
    """Parsed arguments, or the exit code argparse chose (2 for a usage error, 0 for --help)."""
    try:
        args = parser.parse_args(argv)
        _check_combinations(parser, args)
    except SystemExit as exc:
        return None, exc.code if isinstance(exc.code, int) else 2
    return args, None


def main(argv=None):
    """Run the command line and return its exit code.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments without the program name; ``sys.argv[1:]`` when None.

    Returns
    -------
    int
        0 when the command ran (whatever the test found), 1 on a data or runtime error (one line on
        stderr), 2 on a usage error, 130 when interrupted.

    Examples
    --------
    >>> from nullspec.cli import main
    >>> main(["table", "50", "--format", "json"])  # doctest: +ELLIPSIS
    {
      "schema_version": ...
    0
    """
    args, code = _parse(_build_parser(), argv)
    if args is None:
        return code
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("default")
            warnings.showwarning = _show_warning
            return _COMMANDS[args.command](args)
    except KeyboardInterrupt:
        print("nullspec: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        _silence_stdout()
        return 1
    except _ERRORS as exc:
        print(f"nullspec: error: {_one_line(exc)}", file=sys.stderr)
        return 1
