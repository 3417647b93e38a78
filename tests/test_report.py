"""Tests of nullspec.report.render: text, strict JSON, the self-contained HTML page, screens.

External checks: the JSON is parsed by the standard library with NaN/Infinity refused; the HTML is
parsed by ``html.parser`` and the escaping compared with ``html.escape``; the CSV is read back with
``csv``; the PNG figures are recognised by their signature (PNG specification: the 8 bytes
``89 50 4E 47 0D 0A 1A 0A``).  The simulated radial band is checked against the exact expected
modulus law (``nullspec.ginibre.modulus_cdf``) and for its coverage of fresh Gaussian draws.
"""

import base64
import csv
import html
import io
import json
import math
import re
import sys
import warnings
from html.parser import HTMLParser

import numpy as np
import pytest

import nullspec
from nullspec import report
from nullspec.ginibre import modulus_cdf
from nullspec.inference import screen, spectral_test
from nullspec.report import PLOT_HINT, render
from nullspec.exceptions import NullspecWarning
from nullspec.results import Outlier, SpectralTestResult, StatisticResult
from nullspec.spectrum import compute_spectrum
from nullspec.standardize import standardize

pd = pytest.importorskip("pandas")  # labels reach spectral_test through a DataFrame

HOSTILE = ("<script>alert(1)</script>", "\"&'", "a<b>c")
HOSTILE_SOURCE = "<img src=x onerror=alert(2)>.csv"
FAST = {"null": "gaussian", "statistics": ("real_count", "edge")}  # exact null: no simulation
CAUTION_TOPICS = ("What the null assumes", "it is not an effect size", "Multiple testing",
                  "Significance is not mechanism", "your knowledge of the system to judge")


def _planted(n=30, seed=11):
    """Noise plus a strong rank-one signal on the first three rows/columns, with hostile labels there."""
    rng = np.random.default_rng(seed)
    u = np.zeros(n)
    u[:3] = 1 / np.sqrt(3)
    values = rng.standard_normal((n, n)) + 3.0 * np.sqrt(n) * np.outer(u, u)
    labels = list(HOSTILE) + [f"r{i}" for i in range(3, n)]
    return pd.DataFrame(values, index=labels, columns=labels)


def _test(a, **options):
    """spectral_test with the package's warnings silenced (the result records them in `warnings`)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NullspecWarning)
        return spectral_test(a, **options)


@pytest.fixture(scope="module")
def planted():
    return _test(_planted(), **FAST)


@pytest.fixture(scope="module")
def drawn():
    a = np.random.default_rng(5).standard_normal((20, 20))
    return _test(a, null="permutation", n_resamples=99, rng=7, statistics=("real_count", "edge"))


@pytest.fixture(autouse=True)
def _private_cache(tmp_path, monkeypatch):
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path / "cache"))


def _strict_json(text):
    def refuse(constant):
        raise ValueError(f"non-standard JSON constant {constant}")

    return json.loads(text, parse_constant=refuse)


class _Tags(HTMLParser):
    """Collect the start tags and their attributes of a page."""

    def __init__(self):
        super().__init__()
        self.tags = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


def _tags(page):
    parser = _Tags()
    parser.feed(page)
    parser.close()
    return parser.tags


# ---- text --------------------------------------------------------------------------------------

def test_text_is_the_summary_with_the_input_and_a_guide(planted):
    text = render(planted, "text", source="weights.csv", description="what it is")
    assert text.startswith("Input: weights.csv\n  what it is\n")
    assert planted.summary() in text
    assert "What the numbers mean:" in text and text.endswith("\n")
    for topic in CAUTION_TOPICS:
        assert topic in text, topic


def test_text_without_source_starts_with_the_summary(planted):
    assert render(planted).startswith(planted.summary())


# ---- JSON --------------------------------------------------------------------------------------

def test_json_schema_keys_and_types(planted):
    data = _strict_json(render(planted, "json", source="m.csv", seed=None))
    assert data["schema_version"] == "1" and data["nullspec_version"] == nullspec.__version__
    assert data["input"] == {"source": "m.csv", "description": None, "n": 30}
    assert data["null"] == "gaussian" and data["n_resamples"] is None and data["entropy"] is None
    assert data["seed"] is None
    assert isinstance(data["pvalue"], float) and 0 <= data["pvalue"] <= 1
    assert set(data["tests"]) == {"real_count", "edge"}
    for name, test in data["tests"].items():
        assert test["name"] == name and 0 < test["pvalue"] <= 1
        assert isinstance(test["method"], str) and isinstance(test["effect_label"], str)
    outlier = data["outliers"][0]
    assert set(outlier) == {"eigenvalue", "modulus_ratio", "pvalue", "rows", "columns"}
    assert set(outlier["eigenvalue"]) == {"re", "im"} and outlier["modulus_ratio"] > 1
    assert set(outlier["rows"]) <= set(HOSTILE)  # the planted rows carry the outlier, labels kept raw
    assert set(data["environment"]) == {"nullspec", "numpy", "scipy", "python"}
    assert all(isinstance(item, str) for item in data["how_to_read"])
    assert len(data["cautions"]) == 4
    for topic in CAUTION_TOPICS:
        assert any(topic in c for c in data["cautions"]), topic


def test_json_adds_to_to_dict_without_overwriting_it(planted):
    data = _strict_json(render(planted, "json"))
    base = planted.to_dict()
    assert {k: data[k] for k in base} == json.loads(json.dumps(base))
    assert set(data) - set(base) == {"input", "seed", "environment", "how_to_read", "cautions"}


def test_json_records_the_seed_and_the_entropy_of_a_drawn_null(drawn):
    data = _strict_json(render(drawn, "json", seed=7))
    assert data["seed"] == 7 and data["entropy"] == 7
    assert isinstance(data["n_resamples"], int) and 1 <= data["n_resamples"] <= 99
    assert len(data["tests"]["edge"]["null_distribution"]) >= data["n_resamples"]


def _result_with_nan():
    stat = StatisticResult("edge", 1.3, None, 0.004, (0.0, 0.004), float("nan"), "rho / q99", "greater", "exact",
                           details={"inf": float("inf")})
    outlier = Outlier.from_vectors(2.0 + 0.5j, 1.7, 1e-9, [0.1, 0.1, 1.0], [1.0, 1.0, 0.1], HOSTILE, HOSTILE)
    return SpectralTestResult(
        tests={"edge": stat}, pvalue=0.004, omnibus_method="one statistic", alpha=0.05, significant=True,
        outliers=[outlier], n=3, null="gaussian", null_description="entries i.i.d. normal.", null_reason="asked",
        standardization={"center": "mean", "scale": "sd", "diagonal": "include", "center_value": 0.0,
                         "scale_value": 1.0, "shift": 0.0},
        reciprocity={"value": float("nan"), "interval": (float("nan"), float("nan"))}, n_resamples=None,
        entropy=None, warnings=[f"a warning about {HOSTILE[0]}"], labels={"rows": HOSTILE, "columns": HOSTILE},
        eigenvalues=np.array([1.3 + 0.0j, 0.2 + 0.1j, 0.2 - 0.1j]))


def test_json_turns_nan_and_infinity_into_null():
    data = _strict_json(render(_result_with_nan(), "json"))
    assert data["tests"]["edge"]["effect_size"] is None and data["tests"]["edge"]["details"]["inf"] is None
    assert data["reciprocity"]["value"] is None and data["tests"]["edge"]["expected"] is None


# ---- HTML --------------------------------------------------------------------------------------

ALLOWED_TAGS = {"html", "head", "meta", "title", "style", "body", "main", "h1", "h2", "h3", "p", "div", "strong",
                "span", "br", "table", "tr", "th", "td", "figure", "img", "figcaption", "ul", "li", "dl", "dt",
                "dd", "footer"}


def test_html_is_self_contained_and_script_free(planted):
    page = render(planted, "html", source="m.csv")
    tags = _tags(page)
    assert {tag for tag, _ in tags} <= ALLOWED_TAGS
    assert all(attrs["src"].startswith("data:image/png;base64,") for tag, attrs in tags if tag == "img")
    text = re.sub(r"data:image/png;base64,[A-Za-z0-9+/=]+", "", page)
    assert not re.search(r"(https?:|url\(|@import|//[a-z])", text)  # no URL, hence nothing to fetch
    csp = [attrs["content"] for tag, attrs in tags if attrs.get("http-equiv") == "Content-Security-Policy"]
    assert csp == ["default-src 'none'; img-src data:; style-src 'unsafe-inline'"]


@pytest.mark.parametrize("make", [lambda: _test(_planted(), **FAST), _result_with_nan],
                         ids=["spectral_test", "hand-made"])
def test_html_escapes_every_label_source_and_warning(make):
    result = make()
    page = render(result, "html", source=HOSTILE_SOURCE, description=HOSTILE[1])
    assert result.outliers and set(result.outliers[0].rows + result.outliers[0].columns) == set(HOSTILE)
    for raw in (*HOSTILE, HOSTILE_SOURCE):
        assert raw not in page
        assert html.escape(raw, quote=True) in page
    assert "<script" not in page.lower()
    assert not any("onerror" in attrs for _, attrs in _tags(page))  # the hostile source stayed text


def test_html_carries_the_numbers_the_guide_and_the_cautions(planted):
    page = html.unescape(render(planted, "html"))
    for test in planted.tests.values():
        assert f"{test.statistic:.4g}" in page and test.method in page
    assert "How to read this" in page and "Cautions" in page
    for topic in CAUTION_TOPICS:
        assert topic in page, topic


def test_html_without_matplotlib_says_how_to_get_figures(planted, monkeypatch):
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)  # import fails as if not installed
    page = render(planted, "html")
    assert html.escape(PLOT_HINT) in page and "<img" not in page
    assert f"{planted.tests['edge'].statistic:.4g}" in page
    assert html.escape(", ".join(planted.outliers[0].rows)) in page


def _images(page):
    return [base64.b64decode(attrs["src"].split(",", 1)[1]) for tag, attrs in _tags(page) if tag == "img"]


def test_real_count_figure_is_an_inline_png(planted):
    pytest.importorskip("matplotlib")
    images = _images(render(planted, "html"))
    assert images and all(image[:8] == b"\x89PNG\r\n\x1a\n" for image in images)
    assert "Number of real eigenvalues." in render(planted, "html")


def test_figures_are_skipped_with_a_note_when_a_statistic_is_absent():
    pytest.importorskip("matplotlib")
    result = _test(_planted(), null="gaussian", statistics=("edge",))
    assert "not drawn: real_count was not among the statistics tested." in render(result, "html")


def test_plane_and_radial_figures_are_drawn(planted):
    pytest.importorskip("matplotlib")
    page = render(planted, "html")
    assert len(_images(page)) == 3
    assert "Eigenvalues in the plane." in page and "Radial profile." in page


# ---- the simulated radial band ---------------------------------------------------------------

POLICY = {"center": "mean", "scale": "sd", "diagonal": "include"}


def _fresh_curves(n, count, seed):
    """Modulus ECDFs of fresh Gaussian matrices on the band's grid (same pipeline, another seed)."""
    rng = np.random.default_rng(seed)
    curves = []
    for _ in range(count):
        moduli = np.sort(compute_spectrum(standardize(rng.standard_normal((n, n)), **POLICY).matrix).moduli)
        curves.append(np.searchsorted(moduli, report._ENVELOPE_GRID, side="right") / n)
    return np.array(curves)


def test_radial_band_holds_the_exact_mean_and_covers_fresh_draws():
    n = 30
    draws, band = report._radial_band(n, POLICY)
    assert draws == 200 and band.shape == (2, report._ENVELOPE_GRID.size)
    assert np.all(band[0] <= band[1]) and np.all(np.diff(band, axis=1) >= 0) and band.min() >= 0 and band.max() <= 1
    exact = modulus_cdf(report._ENVELOPE_GRID, n)  # the mean of the ECDF, exact
    bulk = (exact > 0.05) & (exact < 0.95)
    assert np.all((band[0][bulk] <= exact[bulk]) & (exact[bulk] <= band[1][bulk]))
    # Coverage: each fresh curve lies inside the pointwise 95% band at a given s with probability
    # 0.95 (more when ECDF ties sit on the band's edges).  Per curve, the mean coverage over the bulk
    # has variance <= 0.95 * 0.05, so over 1000 curves its sd is <= sqrt(0.0475 / 1000) = 0.0069; the
    # band's own quantiles, estimated from 200 draws, move the coverage by about
    # sqrt(0.025 * 0.975 / 200) = 0.011 per side.  4 combined sd: 4 * sqrt(0.0069**2 + 2 * 0.011**2) = 0.068.
    curves = _fresh_curves(n, 1000, seed=2024)
    inside = (curves[:, bulk] >= band[0][bulk]) & (curves[:, bulk] <= band[1][bulk])
    assert inside.mean() > 0.95 - 0.068


def test_radial_band_is_cached_and_reproducible(tmp_path, monkeypatch):
    first = report._radial_band(12, POLICY)[1]
    assert list((tmp_path / "cache").glob("radial-band-12-*.npz"))

    def fail(*args):
        raise AssertionError("the cached band should have been used")

    monkeypatch.setattr(report, "_simulate_band", fail)
    np.testing.assert_array_equal(report._radial_band(12, POLICY)[1], first)
    monkeypatch.undo()
    monkeypatch.setenv("NULLSPEC_CACHE_DIR", str(tmp_path / "other"))
    np.testing.assert_array_equal(report._radial_band(12, POLICY)[1], first)  # recomputed: same seed


def test_band_draws_shrink_with_n_and_stop_above_the_cap():
    counts = [report._envelope_draws(n) for n in (3, 100, 150, 300, 301)]
    assert counts[:2] == [200, 200] and counts[1] > counts[2] > counts[3] >= 40 and counts[4] == 0


def test_band_policy_replaces_known_numbers_by_the_defaults():
    given = {"center": 0.5, "scale": "mad", "diagonal": "shift"}
    assert report._band_policy(given) == {"center": "mean", "scale": "mad", "diagonal": "shift"}


# ---- screens -----------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def screened():
    rng = np.random.default_rng(3)
    coupled = rng.standard_normal((25, 25))
    mats = {'odd, "name"': rng.standard_normal((25, 25)), "coupled": coupled + 0.9 * coupled.T}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NullspecWarning)
        return screen(mats, **FAST)


def test_screen_text_has_the_table_the_guide_and_the_cautions(screened):
    text = render(screened, "text")
    assert text.startswith(screened.summary())
    assert "What the columns mean:" in text
    for topic in CAUTION_TOPICS:
        assert topic in text, topic


def test_screen_csv_round_trips_through_the_csv_module(screened):
    rows = list(csv.DictReader(io.StringIO(render(screened, "csv"))))
    assert [r["name"] for r in rows] == ['odd, "name"', "coupled"]
    for got, want in zip(rows, screened.rows):
        assert float(got["pvalue"]) == want["pvalue"] and float(got["pvalue_adjusted"]) == want["pvalue_adjusted"]
        assert got["significant"] == str(want["significant"]) and int(got["n"]) == 25
        assert math.isfinite(float(got["effect_edge"]))


def test_screen_json_is_strict_with_inputs_and_cautions(screened):
    data = _strict_json(render(screened, "json", seed=3))
    assert data["input"] == ['odd, "name"', "coupled"] and data["seed"] == 3 and data["fdr"] == "bh"
    assert len(data["results"]) == 2 and data["results"][1]["schema_version"] == "1"
    assert len(data["cautions"]) == 4 and data["how_to_read"]


# ---- errors ------------------------------------------------------------------------------------

def test_render_rejects_a_format_that_does_not_apply(planted, screened):
    with pytest.raises(ValueError, match="`format` must be one of 'text', 'json', 'html'; got 'csv'"):
        render(planted, "csv")
    with pytest.raises(ValueError, match="`format` must be one of 'text', 'csv', 'json'; got 'html'"):
        render(screened, "html")


def test_render_rejects_other_objects_and_bad_seeds(planted):
    with pytest.raises(TypeError, match="`result` must be a SpectralTestResult or a ScreenResult; got dict"):
        render({"pvalue": 0.5})
    with pytest.raises(ValueError, match="`seed` must be an integer >= 0; got -1"):
        render(planted, seed=-1)
    with pytest.raises(TypeError, match="`seed` must be an integer >= 0"):
        render(planted, seed="7")
