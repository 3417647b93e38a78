"""Render test results for people: terminal text, strict JSON, a self-contained HTML page, CSV.

:func:`render` is the one entry point.  A :class:`~nullspec.results.SpectralTestResult` renders as
``"text"`` (its ``summary()`` with the input named and a guide to the numbers), ``"json"`` (its
``to_dict()`` plus the input, the seed, the versions, the guide and the cautions) or ``"html"`` (one
page with inline CSS and inline PNG figures, no external resource); a
:class:`~nullspec.results.ScreenResult` renders as ``"text"``, ``"csv"`` or ``"json"``.

The HTML figures are drawn with matplotlib (the ``plot`` extra, imported only when a page is made) on
:class:`matplotlib.figure.Figure` objects, never through pyplot: the scaled eigenvalues in the plane
with the circular-law disk, the finite-N band of the spectral radius and the outliers; the radial
profile against the exact expected one with a simulated null band; the exact null distribution of
the real count with the observed count.  Without matplotlib the page says how to get the figures
and still carries every number.  Everything that comes from the input (labels, file names,
descriptions) is HTML-escaped, and the page forbids scripts through its content security policy.

The radial band is simulated once per matrix size and policy from a fixed seed (so it is the same on
every run) and cached on disk by :func:`nullspec._cache.cached_array`.
"""

import base64
import csv
import html
import io
import json
import platform
from functools import partial

import numpy as np
import scipy

from . import __version__, ginibre
from ._cache import cached_array
from ._validation import check_option, check_positive_int
from .nulls import Gaussian, draw_null
from .results import _CAUTIONS, SCHEMA_VERSION, ScreenResult, SpectralTestResult, _fmt, _fmt_p, _labels_text
from .spectrum import compute_spectrum
from .standardize import CENTERS, DIAGONALS, SCALES, standardize

__all__ = ["render", "RESULT_FORMATS", "SCREEN_FORMATS", "PLOT_HINT"]

RESULT_FORMATS = ("text", "json", "html")
SCREEN_FORMATS = ("text", "csv", "json")
PLOT_HINT = 'The figures need matplotlib: pip install "nullspec[plot]"'

_GUIDE = (
    "Each statistic looks at one feature of the spectrum: real_count is the number of real "
    "eigenvalues (too many points at reciprocal coupling, too few at antagonistic coupling); radial "
    "compares how the eigenvalue moduli spread over the noise disk with the exact expected spread "
    "(uneven row or column scales, heavy tails, sparsity); edge is the largest scaled modulus (a "
    "low-rank signal, a module, a common mean).",
    "'value' is the statistic on your matrix and 'expected' its typical value under the null. The "
    "p-value is the probability, under the null, of a value at least as extreme in the direction "
    "named by the alternative; a Monte Carlo p-value comes with a 95% interval for its simulation error.",
    "'effect' says how far the value lies from the null, on the scale named beside it: judge the size "
    "of a departure by the effect, not by the p-value.",
    "The omnibus p-value asks whether any of the statistics departs from the null; the correction "
    "across the statistics is already in it.",
    "Outliers are eigenvalues beyond the null's edge. The rows and columns listed with each carry at "
    "least half of the weight of its right and left eigenvectors: they show where in the matrix the "
    "structure sits.",
    "The scaled eigenvalues are z = (lambda - shift) / (sigma_hat * sqrt(N)): under the null they fill "
    "the unit disk, with an edge that is blurred at finite N.",
    "Same seed, same numbers: a drawn null is repeated exactly with the seed entropy shown "
    "(rng= in Python, --seed on the command line).",
)
_SCREEN_GUIDE = (
    "One row per matrix: p is the matrix's omnibus p-value, 'p adj.' the value after the correction "
    "across the matrices (bh: Benjamini-Hochberg, false discovery rate; holm: family-wise error), and "
    "a matrix is flagged when its adjusted p-value is at most alpha.",
    "The p_<statistic> and effect_<statistic> columns of the CSV and JSON forms give each statistic's "
    "own p-value and effect size; a matrix's full report says which statistic departs and by how much.",
)
_STATISTIC_TEXT = {
    "real_count": "number of real eigenvalues",
    "radial": "spread of the moduli |z| against the exact expected spread",
    "edge": "largest modulus |z| (spectral radius)",
}
_BAND_LEVELS = (0.05, 0.001)  # the shaded ring: the 95% and 99.9% points of the spectral radius
_PMF_FLOOR = 1e-5  # real-count values less likely than this are left off the plot (unless observed)
_ENVELOPE_SEED = 5_120_931  # fixed: the radial band is the same on every run and machine
_ENVELOPE_GRID = np.linspace(0.0, 2.0, 201)
_ENVELOPE_MAX_N = 300  # above this the band is not simulated (its cost grows as N**3)
_RADIAL_AXIS_END = 1.6  # the radial profile's axis stops here: beyond it the expected fraction is ~1
_DPI = 144


def render(result, format="text", *, source=None, description=None, seed=None):
    """Render a test result as text, JSON, HTML or (for a screen) CSV.

    Parameters
    ----------
    result : SpectralTestResult or ScreenResult
        What :func:`nullspec.inference.spectral_test` or :func:`nullspec.inference.screen` returned.
    format : str, default="text"
        One of :data:`RESULT_FORMATS` (``"text"``, ``"json"``, ``"html"``) for a test, one of
        :data:`SCREEN_FORMATS` (``"text"``, ``"csv"``, ``"json"``) for a screen.
    source : str, optional
        Where the matrix came from (a file name), shown in the report and recorded in the JSON.
    description : str, optional
        What the matrix is, shown under the source.
    seed : int, optional
        The seed that was passed to the test, recorded in the JSON beside the entropy it gave.

    Returns
    -------
    str
        The report, ending with a newline.  The JSON is strict (no NaN or infinity).

    Raises
    ------
    TypeError
        If ``result`` is not a result object, or ``seed`` is not an integer.
    ValueError
        If ``format`` does not apply to the result, or ``seed`` is negative.

    Examples
    --------
    >>> import json
    >>> import numpy as np
    >>> from nullspec.inference import spectral_test
    >>> from nullspec.report import render
    >>> res = spectral_test(np.random.default_rng(0).standard_normal((30, 30)), null="gaussian",
    ...                     statistics=("real_count", "edge"))
    >>> data = json.loads(render(res, "json", source="noise.npy"))
    >>> data["input"]["source"], data["null"], len(data["cautions"])
    ('noise.npy', 'gaussian', 4)
    >>> render(res, "html").startswith("<!DOCTYPE html>")
    True
    """
    context = {"source": source, "description": description,
               "seed": None if seed is None else check_positive_int(seed, "seed", minimum=0)}
    if isinstance(result, ScreenResult):
        return _SCREEN_RENDERERS[check_option(format, "format", SCREEN_FORMATS)](result, context)
    if isinstance(result, SpectralTestResult):
        return _RESULT_RENDERERS[check_option(format, "format", RESULT_FORMATS)](result, context)
    raise TypeError(
        f"`result` must be a SpectralTestResult or a ScreenResult; got {type(result).__name__}. Pass what "
        "spectral_test() or screen() returned."
    )


# --------------------------------------------------------------------------- shared pieces


def _cautions(descriptions):
    """The cautions of the results module, the first naming every null assumption involved."""
    assumed = " / ".join(dict.fromkeys(descriptions))
    return [_CAUTIONS[0].format(null_description=assumed), *_CAUTIONS[1:]]


def _environment():
    return {"nullspec": __version__, "numpy": np.__version__, "scipy": scipy.__version__,
            "python": platform.python_version()}


def _input(context, n):
    return {"source": context["source"], "description": context["description"], "n": n}


def _text_block(title, items):
    return f"{title}:\n" + "\n".join(f"  - {item}" for item in items)


def _dumps(data):
    return json.dumps(data, allow_nan=False, indent=2) + "\n"


# --------------------------------------------------------------------------- one matrix: text, JSON


def _result_text(result, context):
    head = [f"Input: {context['source']}"] if context["source"] else []
    if context["description"]:
        head.append(f"  {context['description']}")
    parts = ["\n".join(head), result.summary(), _text_block("What the numbers mean", _GUIDE)]
    return "\n\n".join(p for p in parts if p) + "\n"


def _result_json(result, context):
    data = result.to_dict()
    data.update(input=_input(context, result.n), seed=context["seed"], environment=_environment(),
                how_to_read=list(_GUIDE), cautions=_cautions((result.null_description,)))
    return _dumps(data)


# --------------------------------------------------------------------------- one matrix: HTML page

_CSS = """
body { font: 15px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, Helvetica, Arial, sans-serif;
       color: #1d232a; background: #fff; margin: 0; }
main { max-width: 1100px; margin: 0 auto; padding: 24px 28px 48px; }
h1 { font-size: 1.6em; margin: 0 0 4px; }
h2 { font-size: 1.2em; margin: 32px 0 8px; border-bottom: 1px solid #d5dbe1; padding-bottom: 4px; }
.source { color: #4a5561; margin: 0; overflow-wrap: anywhere; }
.verdict { margin: 18px 0 8px; padding: 12px 16px; border-radius: 6px; border-left: 6px solid; }
.verdict.yes { background: #fdf1e7; border-color: #d9822b; }
.verdict.no { background: #edf5ee; border-color: #4a9a5b; }
.verdict p { margin: 2px 0; }
table { border-collapse: collapse; width: 100%; font-size: 0.93em; }
th, td { text-align: left; padding: 5px 8px; border-bottom: 1px solid #e3e7eb; vertical-align: top; }
th { background: #f3f5f7; font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.labels { overflow-wrap: anywhere; }
.small { color: #4a5561; font-size: 0.88em; }
.figures { display: grid; grid-template-columns: 1fr 1fr; gap: 20px; align-items: start; }
.figures figure.tall { grid-row: span 2; }
@media (max-width: 900px) { .figures { grid-template-columns: 1fr; } .figures figure.tall { grid-row: auto; } }
figure { margin: 0; padding: 10px; border: 1px solid #e3e7eb; border-radius: 6px; }
figure img { width: 100%; height: auto; display: block; }
figcaption { font-size: 0.9em; color: #33404c; margin-top: 6px; }
.note { background: #f3f5f7; padding: 10px 14px; border-radius: 6px; }
dl { display: grid; grid-template-columns: max-content 1fr; gap: 4px 16px; margin: 0; }
dt { font-weight: 600; } dd { margin: 0; overflow-wrap: anywhere; }
ul { padding-left: 22px; } li { margin: 4px 0; }
footer { margin-top: 40px; color: #66717c; font-size: 0.85em; }
"""
_CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"


def _e(value):
    """HTML-escaped text of any value (quotes included)."""
    return html.escape(str(value), quote=True)


def _result_html(result, context):
    title = "Spectral test report" + (f": {context['source']}" if context["source"] else "")
    sections = (
        _html_header(result, context), _html_verdict(result), _html_tests(result), _html_figures(result),
        _html_outliers(result), _html_details(result, context), _html_list("How to read this", _GUIDE),
        _html_list("Cautions", _cautions((result.null_description,))), _html_footer(),
    )
    return (
        '<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        f'<meta http-equiv="Content-Security-Policy" content="{_CSP}">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f"<title>{_e(title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n<main>\n"
        + "\n".join(sections) + "\n</main>\n</body>\n</html>\n"
    )


def _html_header(result, context):
    lines = [f"<h1>Spectral test of a {result.n} &times; {result.n} matrix</h1>"]
    if context["source"]:
        lines.append(f'<p class="source">Input: {_e(context["source"])}</p>')
    if context["description"]:
        lines.append(f'<p class="source">{_e(context["description"])}</p>')
    return "\n".join(lines)


def _html_verdict(result):
    answer = "yes" if result.significant else "no"
    return (
        f'<div class="verdict {answer}"><p><strong>Departure from the {_e(result.null)} null at '
        f"alpha = {_e(f'{result.alpha:g}')}: {answer}</strong> (omnibus p-value {_e(_fmt_p(result.pvalue))}, "
        f"{len(result.outliers)} outlier{'s' if len(result.outliers) != 1 else ''}).</p>"
        f'<p class="small">Omnibus: {_e(result.omnibus_method)}.</p></div>'
    )


def _interval_text(test):
    if test.pvalue_interval is None:
        return ""
    lo, hi = test.pvalue_interval
    return f'<br><span class="small">95% MC: {_e(_fmt(lo, 3))} to {_e(_fmt(hi, 3))}</span>'


def _html_tests(result):
    rows = []
    for test in result.tests.values():
        rows.append(
            f"<tr><td><strong>{_e(test.name)}</strong><br><span class=\"small\">"
            f"{_e(_STATISTIC_TEXT.get(test.name, ''))}</span></td>"
            f'<td class="num">{_e(_fmt(test.statistic))}</td><td class="num">{_e(_fmt(test.expected))}</td>'
            f'<td class="num">{_e(_fmt_p(test.pvalue, test.pvalue_interval))}{_interval_text(test)}</td>'
            f'<td class="num">{_e(_fmt(test.effect_size, 3))}</td><td class="small">{_e(test.effect_label)}</td>'
            f'<td>{_e(test.alternative)}</td><td class="small">{_e(test.method)}</td></tr>'
        )
    head = ("<tr><th>statistic</th><th>value</th><th>expected</th><th>p-value</th><th>effect</th>"
            "<th>effect measured as</th><th>alternative</th><th>how the p-value was computed</th></tr>")
    return "<h2>Statistics</h2>\n<table>\n" + head + "\n" + "\n".join(rows) + "\n</table>"


def _html_outliers(result):
    if not result.outliers:
        return "<h2>Outliers</h2>\n<p>None: no eigenvalue lies beyond the null's edge.</p>"
    rows = []
    for k, o in enumerate(result.outliers, start=1):
        z = o.eigenvalue
        rows.append(
            f'<tr><td class="num">{k}</td><td class="num">{_e(f"{z.real:.4g} {z.imag:+.4g}i")}</td>'
            f'<td class="num">{_e(_fmt(abs(z)))}</td><td class="num">{_e(_fmt(o.modulus_ratio, 3))}</td>'
            f'<td class="num">{_e(_fmt_p(o.pvalue))}</td><td class="labels">{_e(_labels_text(o.rows))}</td>'
            f'<td class="labels">{_e(_labels_text(o.columns))}</td></tr>'
        )
    edge = f"{100 * (1 - result.alpha):g}%"
    head = ("<tr><th>#</th><th>z</th><th>|z|</th><th>|z| / edge</th><th>p-value</th><th>rows</th>"
            "<th>columns</th></tr>")
    return (f"<h2>Outliers</h2>\n<p class=\"small\">Eigenvalues beyond the null's {_e(edge)} point of the "
            "spectral radius (one per conjugate pair), with the rows and columns that carry them.</p>\n"
            "<table>\n" + head + "\n" + "\n".join(rows) + "\n</table>")


def _details(result, context):
    """(term, text) pairs of the run's settings."""
    s, rec = result.standardization, result.reciprocity
    lo, hi = rec["interval"]
    draws = "none (exact null)" if result.n_resamples is None else f"{result.n_resamples} (seed entropy {result.entropy})"
    pairs = [
        ("null", f"{result.null}: {result.null_description}"),
        ("why this null", result.null_reason),
        ("standardisation", f"center={s['center']!r} ({_fmt(s['center_value'])}), scale={s['scale']!r} "
                            f"({_fmt(s['scale_value'])}), diagonal={s['diagonal']!r} (shift {_fmt(s['shift'])})"),
        ("reciprocity", f"corr(A_ij, A_ji) = {_fmt(rec['value'], 3)}, 95% CI {_fmt(lo, 3)} to {_fmt(hi, 3)}"),
        ("null draws", draws),
    ]
    if context["seed"] is not None:
        pairs.append(("seed", str(context["seed"])))
    return pairs


def _html_details(result, context):
    items = "\n".join(f"<dt>{_e(term)}</dt><dd>{_e(text)}</dd>" for term, text in _details(result, context))
    out = f"<h2>How the test was run</h2>\n<dl>\n{items}\n</dl>"
    if result.warnings:
        out += "\n" + _html_list("Warnings", result.warnings, level=3)
    return out


def _html_list(title, items, level=2):
    body = "\n".join(f"<li>{_e(item)}</li>" for item in items)
    return f"<h{level}>{_e(title)}</h{level}>\n<ul>\n{body}\n</ul>"


def _html_footer():
    return (f"<footer>nullspec {_e(__version__)}, report schema {_e(SCHEMA_VERSION)}. The page is "
            "self-contained: no script, no external resource.</footer>")


# --------------------------------------------------------------------------- figures


def _html_figures(result):
    try:
        from matplotlib.figure import Figure
    except ImportError:
        return (f'<h2>Figures</h2>\n<p class="note">{_e(PLOT_HINT)}. Every number is in the tables of '
                "this page.</p>")
    blocks = [_figure_block(*_plane_figure(result, Figure), tall=True),
              _figure_block(*_radial_figure(result, Figure)), _figure_block(*_pmf_figure(result, Figure))]
    return '<h2>Figures</h2>\n<div class="figures">\n' + "\n".join(blocks) + "\n</div>"


def _figure_block(title, caption, figure, tall=False):
    """A ``<figure>`` with the PNG inline (``tall``: it spans two rows), or a note saying why it is absent."""
    if figure is None:
        return f'<figure><p class="note"><strong>{_e(title)}</strong>: {_e(caption)}</p></figure>'
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=_DPI)
    data = base64.b64encode(buffer.getvalue()).decode("ascii")
    kind = ' class="tall"' if tall else ""
    return (f'<figure{kind}><img src="data:image/png;base64,{data}" alt="{_e(title)}">'
            f"<figcaption><strong>{_e(title)}.</strong> {_e(caption)}</figcaption></figure>")


def _plane_figure(result, Figure):
    """(title, caption, Figure or None): z in the plane, the unit disk, the edge band, the outliers."""
    title = "Eigenvalues in the plane"
    z = result.eigenvalues
    inner, outer = ginibre.spectral_radius_isf(np.array(_BAND_LEVELS), result.n) / np.sqrt(result.n)
    figure = Figure(figsize=(5.2, 5.7), layout="constrained")
    ax = figure.add_subplot()
    _draw_plane(ax, z, inner, outer)
    _mark_outliers(ax, result.outliers)
    xlim, ylim = _square_limits(z, outer)
    ax.set(xlim=xlim, ylim=ylim, aspect="equal", xlabel="Re z", ylabel="Im z")
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.1), ncol=2, fontsize="small", frameon=False)
    caption = (
        "The scaled eigenvalues z. Under the null the bulk fills the unit disk (circular law, solid circle); "
        f"the shaded ring spans the 95% to 99.9% points ({inner:.3f} to {outer:.3f}) of the largest |z| of "
        f"{result.n} x {result.n} Gaussian noise (exact finite-N law), so points beyond it are rare under "
        "that null. Circled and numbered: the outliers of the table below."
    )
    return title, caption, figure


def _square_limits(z, radius):
    """Axis limits holding the disk of ``radius`` and every point, padded, with equal spans (a square box)."""
    low = np.minimum([z.real.min(), z.imag.min()], -radius)
    high = np.maximum([z.real.max(), z.imag.max()], radius)
    half = 0.58 * float(np.max(high - low))  # 16% padding: room for the outlier numbers
    middle = (low + high) / 2
    return (middle[0] - half, middle[0] + half), (middle[1] - half, middle[1] + half)


def _draw_plane(ax, z, inner, outer):
    from matplotlib.patches import Circle, Wedge

    ax.add_patch(Wedge((0, 0), outer, 0, 360, width=outer - inner, color="#f2b872", alpha=0.45, lw=0,
                       label="95-99.9% band of the largest |z|"))
    ax.add_patch(Circle((0, 0), 1.0, fill=False, color="#33404c", lw=1.2, label="circular law |z| = 1"))
    real = z.imag == 0
    ax.scatter(z.real[~real], z.imag[~real], s=9, color="#2f6db5", label="complex eigenvalue", zorder=3)
    ax.scatter(z.real[real], z.imag[real], s=16, marker="D", color="#3c8d4e", label="real eigenvalue", zorder=3)
    ax.axhline(0, color="#b8c0c8", lw=0.6, zorder=1)
    ax.axvline(0, color="#b8c0c8", lw=0.6, zorder=1)


def _mark_outliers(ax, outliers):
    for k, o in enumerate(outliers, start=1):
        z = o.eigenvalue
        points = np.array([z, z.conjugate()] if z.imag else [z])
        ax.scatter(points.real, points.imag, s=140, facecolors="none", edgecolors="#c0392b", lw=1.6, zorder=4,
                   label="outlier" if k == 1 else None)
        ax.annotate(str(k), (z.real, z.imag), xytext=(7, 7), textcoords="offset points", color="#c0392b",
                    fontsize="small", fontweight="bold")


def _radial_figure(result, Figure):
    """(title, caption, Figure or None): the modulus ECDF, the exact expected CDF and the null band."""
    title = "Radial profile"
    n, moduli = result.n, np.sort(np.abs(result.eigenvalues))
    top = min(max(1.35, 1.04 * float(moduli[-1])), _RADIAL_AXIS_END)
    figure = Figure(figsize=(5.2, 3.9), layout="constrained")
    ax = figure.add_subplot()
    policy = _band_policy(result.standardization)
    draws, band = _radial_band(n, policy)
    if band is not None:
        ax.fill_between(_ENVELOPE_GRID, band[0], band[1], color="#f2b872", alpha=0.5, lw=0,
                        label=f"95% band of {draws} Gaussian matrices")
    grid = np.linspace(0.0, top, 400)
    ax.plot(grid, ginibre.modulus_cdf(grid, n), color="#33404c", lw=1.4, label="expected (exact, Gaussian null)")
    ax.step(np.r_[0.0, moduli], np.arange(n + 1) / n, where="post", color="#2f6db5", lw=1.4, label="your matrix")
    ax.set(xlim=(0.0, top), ylim=(0.0, 1.02), xlabel="s", ylabel="fraction of eigenvalues with |z| <= s")
    ax.legend(loc="lower right", fontsize="small")
    beyond = int(np.sum(moduli > top))
    return title, _radial_caption(n, draws, policy, beyond), figure


def _radial_caption(n, draws, policy, beyond):
    text = ("The fraction of eigenvalues with |z| at most s (step line) against the exact expected fraction "
            f"for {n} x {n} Gaussian noise (smooth line). A curve above the expected one means moduli crowded "
            "towards the centre; below it, moduli spread outwards. ")
    if beyond:
        text += f"The axis ends at s = {_RADIAL_AXIS_END:g}; {beyond} eigenvalue(s) lie beyond. "
    if draws:
        shown = ", ".join(f"{k}={v!r}" for k, v in policy.items())
        return text + (f"The band holds, at each s, the central 95% of the curves of {draws} simulated Gaussian "
                       f"matrices standardised as the data were ({shown}; fixed seed).")
    return text + f"No simulated band above N = {_ENVELOPE_MAX_N} (its cost grows as N cubed)."


def _band_policy(standardization):
    """The data's standardisation options, with the defaults where a known number was given."""
    def pick(key, allowed, default):
        value = standardization[key]
        return value if isinstance(value, str) and value in allowed else default

    return {"center": pick("center", CENTERS, "mean"), "scale": pick("scale", SCALES, "sd"),
            "diagonal": pick("diagonal", DIAGONALS, "include")}


def _envelope_draws(n):
    """Simulated matrices behind the radial band: 200 up to N = 100, fewer above, none above 300."""
    if n > _ENVELOPE_MAX_N:
        return 0
    return 200 if n <= 100 else max(40, int(200 * (100 / n) ** 2))


def _modulus_ecdf(surrogate, *, policy):
    """The fraction of the surrogate's scaled moduli at or below each point of the band's grid."""
    moduli = np.sort(compute_spectrum(standardize(surrogate, **policy).matrix).moduli)
    return np.searchsorted(moduli, _ENVELOPE_GRID, side="right") / moduli.size


def _simulate_band(n, draws, policy):
    """Pointwise 2.5% and 97.5% quantiles of the modulus ECDF of ``draws`` Gaussian matrices."""
    run = draw_null(np.zeros((n, n)), Gaussian(loc=0.0, scale=1.0, hessenberg=False),
                    partial(_modulus_ecdf, policy=policy), n_resamples=draws, rng=_ENVELOPE_SEED, progress=False)
    if not run.complete:
        raise KeyboardInterrupt  # an interrupted band must not be cached
    return np.quantile(run.values, [0.025, 0.975], axis=0)


def _radial_band(n, policy):
    """(draws, band of shape (2, grid) or None), cached on disk per size and policy."""
    draws = _envelope_draws(n)
    if not draws:
        return 0, None
    meta = {"n": n, "draws": draws, "seed": _ENVELOPE_SEED, "policy": policy, "levels": [0.025, 0.975],
            "grid": [float(_ENVELOPE_GRID[0]), float(_ENVELOPE_GRID[-1]), int(_ENVELOPE_GRID.size)]}
    key = f"radial-band-{n}-{policy['center']}-{policy['scale']}-{policy['diagonal']}"
    return draws, cached_array(key, meta, partial(_simulate_band, n, draws, policy))


def _pmf_figure(result, Figure):
    """(title, caption, Figure or None): the exact real-count pmf with the observed count."""
    title = "Number of real eigenvalues"
    test = result.tests.get("real_count")
    if test is None:
        return title, "not drawn: real_count was not among the statistics tested.", None
    from matplotlib.ticker import MaxNLocator

    n, observed = result.n, int(round(test.statistic))
    k, pmf = np.arange(n + 1), ginibre.real_count_pmf(n)
    visible = k[(pmf > _PMF_FLOOR) | (k == observed)]
    keep = (k >= visible.min()) & (k <= visible.max()) & (k % 2 == n % 2)
    figure = Figure(figsize=(5.2, 3.7), layout="constrained")
    ax = figure.add_subplot()
    ax.bar(k[keep], pmf[keep], width=1.6, color="#9fb8d6", label="exact null distribution (Gaussian)")
    if test.null_distribution is not None:
        drawn = np.bincount(np.rint(test.null_distribution).astype(int), minlength=n + 1) / test.null_distribution.size
        ax.plot(k[keep], drawn[keep], "o", ms=4, color="#33404c", label=f"drawn null ({test.null_distribution.size} draws)")
    ax.axvline(observed, color="#c0392b", lw=2, label=f"your matrix: {observed}")
    ax.set(xlabel="number of real eigenvalues", ylabel="probability", ylim=(0.0, 1.3 * pmf[keep].max()))
    ax.xaxis.set_major_locator(MaxNLocator(integer=True))
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=2, fontsize="small", frameon=False)
    caption = (f"Bars: the exact probability of each number of real eigenvalues for {n} x {n} Gaussian noise "
               f"(mean {ginibre.real_count_mean(n):.2f}). Red line: your matrix. Too many real eigenvalues "
               "point at reciprocal coupling (A_ij close to A_ji), too few at antagonistic coupling.")
    return title, caption, figure


_RESULT_RENDERERS = {"text": _result_text, "json": _result_json, "html": _result_html}


# --------------------------------------------------------------------------- screens


def _screen_descriptions(result):
    return tuple(r.null_description for r in result.results)


def _screen_text(result, context):
    parts = [result.summary(), _text_block("What the columns mean", _SCREEN_GUIDE),
             _text_block("Cautions", _cautions(_screen_descriptions(result)))]
    return "\n\n".join(parts) + "\n"


def _csv_cell(value):
    if value is None or (isinstance(value, float) and not np.isfinite(value)):
        return ""
    return repr(float(value)) if isinstance(value, (float, np.floating)) else str(value)


def _screen_csv(result, context):
    buffer = io.StringIO()
    columns = list(dict.fromkeys(key for row in result.rows for key in row))
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(columns)
    for row in result.rows:
        writer.writerow([_csv_cell(row.get(key)) for key in columns])
    return buffer.getvalue()


def _screen_json(result, context):
    data = result.to_dict()
    data.update(input=[row["name"] for row in data["rows"]], seed=context["seed"],
                environment=_environment(), how_to_read=list(_SCREEN_GUIDE),
                cautions=_cautions(_screen_descriptions(result)))
    return _dumps(data)


_SCREEN_RENDERERS = {"text": _screen_text, "csv": _screen_csv, "json": _screen_json}
