"""Result objects of the spectral tests: frozen, non-iterable dataclasses with a report and a JSON form.

:class:`StatisticResult` holds the calibration of one statistic, :class:`Outlier` one eigenvalue beyond
the null's edge with the rows and columns that carry it, :class:`SpectralTestResult` a whole test of
one matrix and :class:`ScreenResult` the table of a screen over many matrices.  Each has ``to_dict()``,
a strict JSON-safe dict (no NaN or infinity: they become ``None``; numpy scalars become Python numbers;
a complex number becomes ``{"re": ..., "im": ...}``).  The objects are frozen, their mappings are
read-only and their arrays are read-only copies; they compute nothing but their text and dict forms.
"""

from collections.abc import Mapping
from dataclasses import dataclass, field, fields, is_dataclass
import math

import numpy as np

from . import __version__

__all__ = ["StatisticResult", "Outlier", "SpectralTestResult", "ScreenResult", "SCHEMA_VERSION"]

SCHEMA_VERSION = "1"
_REPR_ITEMS = 6


class _FrozenMap(Mapping):
    """A read-only mapping (a plain dict underneath, so it pickles, unlike ``MappingProxyType``)."""

    __slots__ = ("_data",)

    def __init__(self, data=()):
        object.__setattr__(self, "_data", dict(data))

    def __setattr__(self, name, value):
        raise AttributeError("read-only mapping")

    def __getitem__(self, key):
        return self._data[key]

    def __iter__(self):
        return iter(self._data)

    def __len__(self):
        return len(self._data)

    def __reduce__(self):
        return (_FrozenMap, (self._data,))

    def __repr__(self):
        return "{" + ", ".join(f"{k!r}: {_short(v)}" for k, v in self._data.items()) + "}"


def _frozen_array(values):
    """A read-only float copy of ``values`` (or None)."""
    if values is None:
        return None
    out = np.array(values, dtype=float)
    out.setflags(write=False)
    return out


def _short(value):
    """A short repr: arrays and long sequences are elided in the middle."""
    if isinstance(value, np.ndarray):
        body = np.array2string(value, threshold=_REPR_ITEMS, edgeitems=3, precision=4)
        return f"array({body}, shape={value.shape})"
    if isinstance(value, tuple) and len(value) > _REPR_ITEMS:
        head = ", ".join(_short(v) for v in value[:3])
        return f"({head}, ... {len(value) - 3} more)"
    if isinstance(value, float):
        return f"{value:.6g}"
    return repr(value)


def _repr(obj):
    """``Name(field=value, ...)`` with arrays and long tuples shortened."""
    body = ", ".join(f"{f.name}={_short(getattr(obj, f.name))}" for f in fields(obj))
    return f"{type(obj).__name__}({body})"


def _jsonable(value):
    """Convert ``value`` recursively to strict JSON types (see the module docstring)."""
    if is_dataclass(value) and not isinstance(value, type):
        return {f.name: _jsonable(getattr(value, f.name)) for f in fields(value)}
    if isinstance(value, Mapping):
        return {str(k): _jsonable(v) for k, v in value.items()}
    if isinstance(value, np.ndarray):
        return [_jsonable(v) for v in value.tolist()]
    if isinstance(value, (list, tuple)):
        return [_jsonable(v) for v in value]
    if isinstance(value, np.generic):
        return _jsonable(value.item())
    if isinstance(value, bool) or value is None or isinstance(value, (int, str)):
        return value
    if isinstance(value, complex):
        return {"re": _jsonable(value.real), "im": _jsonable(value.imag)}
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    raise TypeError(f"cannot convert {type(value).__name__} to JSON")


def _fmt(value, digits=4):
    """Format a number for the text report ("n/a" for None or NaN)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "n/a"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    return f"{value:.{digits}g}"


def _fmt_p(p, interval=None):
    """Format a p-value; a bound (interval starting at 0 and ending at ``p``) is shown as ``<= p``."""
    if interval is not None and interval[0] == 0 and interval[1] == p:
        return f"<= {p:.3g}"
    return f"{p:.3g}" if p >= 1e-4 else f"{p:.2e}"


@dataclass(frozen=True, slots=True, repr=False, eq=False)
class StatisticResult:
    """The calibration of one spectral statistic against the null.

    Attributes
    ----------
    name : str
        The statistic's name (``"real_count"``, ``"radial"``, ``"edge"``).
    statistic : float
        Its value on the data.
    expected : float or None
        Its value expected under the null (the mean for ``real_count`` and the drawn nulls, the median
        for ``edge`` and ``radial`` under the Gaussian null, where the mean has no closed form).
    pvalue : float
        The p-value for ``alternative``.  For a drawn null it is never 0.
    pvalue_interval : tuple of float or None
        A 95% interval for the p-value's Monte Carlo error (Clopper-Pearson for a drawn null, the
        table's order-statistic error for ``radial``), or ``(0, bound)`` when only an upper bound is
        known; None when the p-value is exact.
    effect_size : float
        The effect size, on the scale named by ``effect_label``.  It is not the p-value: a tiny
        effect in a large matrix can be significant and a large one in a small matrix not.
    effect_label : str
        What ``effect_size`` measures.
    alternative : str
        ``"two-sided"``, ``"greater"`` or ``"less"``.
    method : str
        How the p-value was computed.
    null_distribution : ndarray or None
        The statistic on each null draw (read-only), or None for an exact or tabulated null.
    details : Mapping
        Read-only extra numbers (e.g. ``ratio`` K/E_N, ``radial_shift``, the null ``sd``).
    """

    name: str
    statistic: float
    expected: float | None
    pvalue: float
    pvalue_interval: tuple | None
    effect_size: float
    effect_label: str
    alternative: str
    method: str
    null_distribution: np.ndarray | None = None
    details: Mapping = field(default_factory=dict)

    def __post_init__(self):
        object.__setattr__(self, "details", _FrozenMap(self.details))
        object.__setattr__(self, "null_distribution", _frozen_array(self.null_distribution))
        if self.pvalue_interval is not None:
            object.__setattr__(self, "pvalue_interval", tuple(float(v) for v in self.pvalue_interval))

    __repr__ = _repr

    def to_dict(self):
        """Strict JSON-safe dict of all fields.

        Returns
        -------
        dict
            The fields, converted as the module docstring says.

        Examples
        --------
        >>> import json
        >>> from nullspec.results import StatisticResult
        >>> r = StatisticResult("edge", 1.1, 1.05, 0.2, None, float("nan"), "rho / q99", "greater", "exact")
        >>> json.dumps(r.to_dict()["effect_size"], allow_nan=False)
        'null'
        """
        return _jsonable(self)


@dataclass(frozen=True, slots=True, repr=False, eq=False)
class Outlier:
    """One eigenvalue (one per conjugate pair, the member with Im >= 0) beyond the null's edge.

    Attributes
    ----------
    eigenvalue : complex
        The scaled eigenvalue z = (lambda - shift) / (sigma_hat sqrt(N)).
    modulus_ratio : float
        |z| divided by the null's (1 - alpha) quantile of the spectral radius (above 1 by definition).
    pvalue : float
        The null probability that the spectral radius reaches |z|.  For the largest outlier this is
        its exact p-value; for the others it is conservative (the k-th largest modulus exceeds a
        radius less often than the largest does).
    rows : tuple
        Row labels (or indices) ordered by decreasing weight |v_i|^2 in the unit right eigenvector,
        truncated to the fewest rows that carry at least half of the squared weight.
    columns : tuple
        The same for the columns, from the left eigenvector.
    """

    eigenvalue: complex
    modulus_ratio: float
    pvalue: float
    rows: tuple
    columns: tuple

    __repr__ = _repr

    @classmethod
    def from_vectors(cls, eigenvalue, modulus_ratio, pvalue, right, left, row_labels=None, col_labels=None):
        """Build an outlier from its right and left eigenvectors.

        Parameters
        ----------
        eigenvalue : complex
            The scaled eigenvalue.
        modulus_ratio, pvalue : float
            See the class attributes.
        right, left : array_like
            Right and left eigenvectors (any normalisation).
        row_labels, col_labels : sequence or None
            Labels of the rows and columns; None gives integer indices.

        Returns
        -------
        Outlier

        Examples
        --------
        >>> from nullspec.results import Outlier
        >>> o = Outlier.from_vectors(2.0, 1.8, 1e-6, [0.1, 0.9, 0.4], [1, 0, 0], ["a", "b", "c"])
        >>> o.rows, o.columns
        (('b',), (0,))
        """
        return cls(
            complex(eigenvalue),
            float(modulus_ratio),
            float(pvalue),
            _carriers(right, row_labels),
            _carriers(left, col_labels),
        )

    def to_dict(self):
        """Strict JSON-safe dict of all fields (the eigenvalue as ``{"re", "im"}``).

        Returns
        -------
        dict
        """
        return _jsonable(self)


def _carriers(vector, labels):
    """Labels ordered by |v_i|^2, truncated to the fewest that carry half of the squared weight."""
    weight = np.abs(np.asarray(vector)) ** 2
    order = np.argsort(-weight, kind="stable")
    share = np.cumsum(weight[order]) / weight.sum()
    count = int(np.searchsorted(share, 0.5 - 1e-12)) + 1
    chosen = order[:count]
    if labels is None:
        return tuple(int(i) for i in chosen)
    return tuple(_jsonable(labels[i]) for i in chosen)


_CAUTIONS = (
    "What the null assumes: {null_description} A departure from it can come from any violation of "
    "that assumption, not only from the structure the statistic is named after.",
    "A p-value measures how surprising the spectrum would be under the null; it is not an effect "
    "size. Read the effect column for how large the departure is.",
    "Multiple testing: the omnibus p-value is corrected across the statistics shown here. If you "
    "test several matrices or several settings, correct across them too (screen() does this).",
    "Significance is not mechanism: a departure says the matrix is not i.i.d. noise of this kind; "
    "which process produced it is for your knowledge of the system to judge.",
)


@dataclass(frozen=True, slots=True, repr=False, eq=False)
class SpectralTestResult:
    """The spectral test of one matrix.

    Attributes
    ----------
    tests : Mapping
        Read-only mapping from statistic name to :class:`StatisticResult`.
    pvalue : float
        The omnibus p-value, family-wise valid across ``tests``.
    omnibus_method : str
        How the omnibus was formed (Holm across exact marginals, or min-p on shared draws).
    alpha : float
        The level of the decision.
    significant : bool
        ``pvalue <= alpha``.
    outliers : tuple of Outlier
        Eigenvalues beyond the null's (1 - alpha) quantile of the spectral radius, largest first.
    n : int
        The matrix size N.
    null : str
        The null's name.
    null_description : str
        The hypothesis the null stands for.
    null_reason : str
        Why this null was used (e.g. what ``null="auto"`` chose).
    standardization : Mapping
        The policy as given (``center``, ``scale``, ``diagonal``) and the values used
        (``center_value``, ``scale_value``, ``shift``).
    reciprocity : Mapping
        ``value`` = corr(A_ij, A_ji) over i < j and its 95% ``interval``.
    n_resamples : int or None
        Number of null draws used; None for the exact Gaussian null.
    entropy : int or None
        Entropy of the seed of the drawn null (repeat the run with ``rng=entropy``); None for an exact null.
    warnings : tuple of str
        The warnings raised during the test.
    labels : Mapping
        ``rows`` and ``columns`` labels of the input (None when it had none).
    eigenvalues : ndarray
        Read-only complex array of the scaled eigenvalues z = (lambda - shift) / (sigma_hat sqrt(N)) in
        LAPACK's order; under the null they fill the unit disk.  ``to_dict`` stores them as
        ``{"re": [...], "im": [...]}``.
    """

    tests: Mapping
    pvalue: float
    omnibus_method: str
    alpha: float
    significant: bool
    outliers: tuple
    n: int
    null: str
    null_description: str
    null_reason: str
    standardization: Mapping
    reciprocity: Mapping
    n_resamples: int | None
    entropy: int | None
    warnings: tuple
    labels: Mapping
    eigenvalues: np.ndarray

    def __post_init__(self):
        for name in ("tests", "standardization", "reciprocity", "labels"):
            object.__setattr__(self, name, _FrozenMap(getattr(self, name)))
        object.__setattr__(self, "outliers", tuple(self.outliers))
        object.__setattr__(self, "warnings", tuple(self.warnings))
        z = np.array(self.eigenvalues, dtype=complex)
        z.setflags(write=False)
        object.__setattr__(self, "eigenvalues", z)

    __repr__ = _repr

    def to_dict(self):
        """Strict JSON-safe dict with the schema and package versions.

        Returns
        -------
        dict
            All fields, plus ``schema_version`` and ``nullspec_version``.
        """
        out = {"schema_version": SCHEMA_VERSION, "nullspec_version": __version__, **_jsonable(self)}
        out["eigenvalues"] = {"re": _jsonable(self.eigenvalues.real), "im": _jsonable(self.eigenvalues.imag)}
        return out

    def summary(self):
        """Plain-text report: statistics, omnibus, outliers, warnings and how to read them.

        Returns
        -------
        str
        """
        parts = [self._header(), self._table(), self._omnibus_line(), self._outlier_lines()]
        if self.warnings:
            parts.append("Warnings:\n" + "\n".join(f"  - {w}" for w in self.warnings))
        parts.append(self._cautions())
        return "\n\n".join(p for p in parts if p)

    def _header(self):
        s = self.standardization
        draws = "" if self.n_resamples is None else f", {self.n_resamples} null draws (seed entropy {self.entropy})"
        rec = self.reciprocity
        lo, hi = rec["interval"]
        return "\n".join(
            (
                f"Spectral test of a {self.n} x {self.n} matrix against the {self.null} null{draws}",
                f"  null: {self.null_description}",
                f"  why this null: {self.null_reason}",
                f"  standardisation: center={s['center']!r} ({_fmt(s['center_value'])}), "
                f"scale={s['scale']!r} ({_fmt(s['scale_value'])}), diagonal={s['diagonal']!r} "
                f"(shift {_fmt(s['shift'])})",
                f"  reciprocity corr(A_ij, A_ji) = {_fmt(rec['value'], 3)} [95% CI {_fmt(lo, 3)}, {_fmt(hi, 3)}]",
            )
        )

    def _table(self):
        head = f"  {'statistic':<11}{'value':>10}{'expected':>10}{'p-value':>12}{'effect':>10}  alternative / effect scale"
        rows = [head]
        for r in self.tests.values():
            rows.append(
                f"  {r.name:<11}{_fmt(r.statistic):>10}{_fmt(r.expected):>10}"
                f"{_fmt_p(r.pvalue, r.pvalue_interval):>12}{_fmt(r.effect_size, 3):>10}  "
                f"{r.alternative} / {r.effect_label}"
            )
        methods = [f"  {r.name}: {r.method}" for r in self.tests.values()]
        return "\n".join(rows) + "\n\nHow each p-value was computed:\n" + "\n".join(methods)

    def _omnibus_line(self):
        verdict = "yes" if self.significant else "no"
        return (
            f"Omnibus p-value {_fmt_p(self.pvalue)} ({self.omnibus_method}); "
            f"departure from the null at alpha = {self.alpha:g}: {verdict}"
        )

    def _outlier_lines(self):
        if not self.outliers:
            return "Outliers: none beyond the null's edge."
        lines = [f"Outliers (beyond the null's {100 * (1 - self.alpha):g}% point of the spectral radius):"]
        for o in self.outliers:
            z = o.eigenvalue
            lines.append(
                f"  z = {z.real:.4g}{z.imag:+.4g}i  |z|/edge = {o.modulus_ratio:.3g}  p = {_fmt_p(o.pvalue)}\n"
                f"    rows: {_labels_text(o.rows)}\n    columns: {_labels_text(o.columns)}"
            )
        return "\n".join(lines)

    def _cautions(self):
        first = _CAUTIONS[0].format(null_description=self.null_description.rstrip(".") + ".")
        return "How to read this:\n" + "\n".join(f"  - {c}" for c in (first, *_CAUTIONS[1:]))


def _labels_text(labels, limit=10):
    """Comma-separated labels, the tail elided beyond ``limit``."""
    shown = ", ".join(str(v) for v in labels[:limit])
    return shown + (f", ... ({len(labels) - limit} more)" if len(labels) > limit else "")


_NAME_WIDTH_CAP = 60  # widest name column of ScreenResult.summary()


def _elide_middle(text, width):
    """``text`` if it fits in ``width`` characters, else its start and end joined by ``...``."""
    if len(text) <= width:
        return text
    tail = (width - 3) // 2
    return text[: width - 3 - tail] + "..." + text[len(text) - tail :]


@dataclass(frozen=True, slots=True, repr=False, eq=False)
class ScreenResult:
    """A screen of many matrices: one row per matrix, with a correction across matrices.

    Attributes
    ----------
    rows : tuple of Mapping
        One read-only row per matrix: ``index``, ``name``, ``n``, ``null``, ``pvalue`` (the omnibus),
        ``pvalue_adjusted``, ``significant`` (after the correction), one ``p_<statistic>`` and one
        ``effect_<statistic>`` per statistic, and ``n_outliers``.
    fdr : str
        The correction across matrices: ``"bh"`` (Benjamini-Hochberg, false discovery rate) or
        ``"holm"`` (family-wise error rate).
    alpha : float
        The level of the correction.
    results : tuple of SpectralTestResult
        The full result of each matrix, in input order.
    """

    rows: tuple
    fdr: str
    alpha: float
    results: tuple

    def __post_init__(self):
        object.__setattr__(self, "rows", tuple(_FrozenMap(r) for r in self.rows))
        object.__setattr__(self, "results", tuple(self.results))

    __repr__ = _repr

    def to_dict(self):
        """Strict JSON-safe dict: the table, the correction, and each matrix's full result.

        Returns
        -------
        dict
        """
        return {
            "schema_version": SCHEMA_VERSION,
            "nullspec_version": __version__,
            "fdr": self.fdr,
            "alpha": self.alpha,
            "rows": _jsonable(self.rows),
            "results": [r.to_dict() for r in self.results],
        }

    def summary(self):
        """Plain-text table of the screen with the correction named.

        The name column is as wide as the longest name, up to 60 characters; a longer name (a deep
        file path) keeps its start and end, with ``...`` in the middle.

        Returns
        -------
        str

        Examples
        --------
        >>> from nullspec.results import ScreenResult
        >>> rows = [{"index": 0, "name": "reciprocal_pairs", "n": 40, "pvalue": 0.0004,
        ...          "pvalue_adjusted": 0.0008, "significant": True}]
        >>> print(ScreenResult(rows=rows, fdr="bh", alpha=0.05, results=()).summary().splitlines()[3])
             0 reciprocal_pairs    40     0.0004     0.0008  yes
        """
        what = "false discovery rate (Benjamini-Hochberg)" if self.fdr == "bh" else "family-wise error (Holm)"
        lines = [f"Screen of {len(self.rows)} matrices; {what} controlled at {self.alpha:g} across matrices", ""]
        names = [_elide_middle(str(r["name"]), _NAME_WIDTH_CAP) for r in self.rows]
        width = max([len("name"), *map(len, names)]) + 1
        lines.append(f"  {'#':>4} {'name':<{width}}{'N':>6}{'p':>11}{'p adj.':>11}  flagged")
        for r, name in zip(self.rows, names):
            lines.append(
                f"  {r['index']:>4} {name:<{width}}{r['n']:>6}{_fmt_p(r['pvalue']):>11}"
                f"{_fmt_p(r['pvalue_adjusted']):>11}  {'yes' if r['significant'] else 'no'}"
            )
        lines.append("")
        lines.append(
            "A flagged matrix departs from its null; the p-values are not effect sizes and the "
            "departure is not a mechanism. See each matrix's summary() for the statistics and cautions."
        )
        return "\n".join(lines)
