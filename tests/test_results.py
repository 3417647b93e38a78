"""Result objects: frozen, non-iterable, read-only, strict JSON, a readable report."""

import dataclasses
import json
import math
import pickle

import numpy as np
import pytest

from nullspec.results import Outlier, ScreenResult, SpectralTestResult, StatisticResult


def _stat(name="edge", **kw):
    fields = {
        "name": name,
        "statistic": np.float64(1.3),
        "expected": 1.05,
        "pvalue": 0.004,
        "pvalue_interval": (0.002, np.float64(0.008)),
        "effect_size": float("nan"),
        "effect_label": "rho / q99",
        "alternative": "greater",
        "method": "exact",
        "null_distribution": np.arange(50.0),
        "details": {"q99": np.float32(1.2), "inf": float("inf"), "count": np.int64(3)},
    }
    fields.update(kw)
    return StatisticResult(**fields)


def _result(**kw):
    outlier = Outlier.from_vectors(2.0 + 0.5j, 1.7, 1e-9, [0.9, 0.1, 0.3, 0.0], [0.0, 1.0, 0.0, 0.0],
                                   ["r0", "r1", "r2", "r3"], ["c0", "c1", "c2", "c3"])
    fields = {
        "tests": {"edge": _stat(), "real_count": _stat("real_count", statistic=np.int64(6))},
        "pvalue": 0.008,
        "omnibus_method": "Holm across the marginal p-values",
        "alpha": 0.05,
        "significant": np.bool_(True),
        "outliers": [outlier],
        "n": 4,
        "null": "gaussian",
        "null_description": "entries i.i.d. Gaussian.",
        "null_reason": "requested",
        "standardization": {"center": "mean", "scale": "sd", "diagonal": "include",
                            "center_value": np.float64(0.1), "scale_value": 1.0, "shift": 0.0},
        "reciprocity": {"value": 0.02, "interval": (-0.1, 0.14)},
        "n_resamples": None,
        "entropy": None,
        "warnings": ["a warning"],
        "labels": {"rows": ("r0", "r1", "r2", "r3"), "columns": None},
        "eigenvalues": np.array([2.1 + 0.0j, 0.3 + 0.4j, 0.3 - 0.4j, -0.5 + 0.0j]),
    }
    fields.update(kw)
    return SpectralTestResult(**fields)


def test_frozen_and_not_iterable():
    res = _result()
    with pytest.raises(dataclasses.FrozenInstanceError):
        res.pvalue = 0.5
    with pytest.raises(TypeError):
        iter(res)
    with pytest.raises(TypeError):
        res.tests["new"] = 1
    with pytest.raises(TypeError):
        res.tests["edge"].details["q99"] = 2.0
    with pytest.raises(ValueError, match="read-only"):
        res.tests["edge"].null_distribution[0] = 5.0


def test_inputs_not_aliased():
    # The null distribution is copied: changing the caller's array does not change the result.
    arr = np.arange(5.0)
    r = _stat(null_distribution=arr)
    arr[0] = 99.0
    assert r.null_distribution[0] == 0.0


def test_to_dict_strict_json():
    d = _result().to_dict()
    text = json.dumps(d, allow_nan=False)  # raises on NaN/inf or numpy scalars
    back = json.loads(text)
    edge = back["tests"]["edge"]
    assert edge["effect_size"] is None  # NaN -> None
    assert edge["details"]["inf"] is None  # inf -> None
    assert edge["details"]["count"] == 3 and isinstance(edge["details"]["count"], int)
    assert back["outliers"][0]["eigenvalue"] == {"re": 2.0, "im": 0.5}
    assert back["significant"] is True
    assert back["schema_version"] == "1" and "nullspec_version" in back
    assert back["tests"]["edge"]["null_distribution"][:3] == [0.0, 1.0, 2.0]


def test_outlier_carriers_half_weight():
    # weights 0.81, 0.09, 0.01 (+0): the first row alone carries 0.81/0.91 > 1/2.
    o = Outlier.from_vectors(1.5, 1.2, 0.01, [0.9, 0.3, 0.1, 0.0], [0.5, 0.5, 0.5, 0.5])
    assert o.rows == (0,)
    # equal weights: the fewest carrying half are 2 of 4, in index order (stable sort)
    assert o.columns == (0, 1)
    # labels are used when given, complex vectors by modulus
    o = Outlier.from_vectors(1.5, 1.2, 0.01, [0.1j, 0.7, 0.7j], [1, 0, 0], ["a", "b", "c"], ["x", "y", "z"])
    assert o.rows == ("b", "c") and o.columns == ("x",)


def test_summary_has_table_outliers_and_cautions():
    text = _result().summary()
    for needle in ("edge", "real_count", "Omnibus p-value", "r0", "c1", "not an effect", "Multiple testing",
                   "Significance is not mechanism", "a warning", "entries i.i.d. Gaussian."):
        assert needle in text, needle
    # the p-value bound (interval starting at 0 and ending at p) is shown as a bound
    bounded = _result(tests={"radial": _stat("radial", pvalue=0.001, pvalue_interval=(0.0, 0.001))})
    assert "<= 0.001" in bounded.summary()


def test_repr_shortens_arrays():
    text = repr(_stat(null_distribution=np.arange(1000.0)))
    assert "shape=(1000,)" in text and "..." in text and len(text) < 800


def test_pickle_roundtrip():
    res = pickle.loads(pickle.dumps(_result()))
    assert res.tests["edge"].details["count"] == 3
    assert res.outliers[0].rows == ("r0",)


def test_screen_result_json_and_summary():
    row = {"index": 0, "name": "m0", "n": 4, "null": "gaussian", "pvalue": 0.01, "pvalue_adjusted": 0.02,
           "significant": True, "p_edge": math.nan, "effect_edge": 1.0, "n_outliers": 1}
    scr = ScreenResult(rows=[row], fdr="bh", alpha=0.05, results=[_result()])
    d = json.loads(json.dumps(scr.to_dict(), allow_nan=False))
    assert d["rows"][0]["p_edge"] is None and d["fdr"] == "bh"
    assert "Benjamini-Hochberg" in scr.summary() and "m0" in scr.summary()


def _screen(names):
    rows = [{"index": i, "name": name, "n": 40, "pvalue": 0.5, "pvalue_adjusted": 0.5, "significant": False}
            for i, name in enumerate(names)]
    return ScreenResult(rows=rows, fdr="holm", alpha=0.05, results=())


def test_screen_summary_widens_the_name_column():
    names = ["reciprocal_pairs", "a", "data/run-2024/region_07/weights.csv"]
    lines = _screen(names).summary().splitlines()
    table = lines[3:6]
    for line, name in zip(table, names):
        assert f" {name} " in line  # never clipped
    # the N column starts at the same place on every line: one column as wide as the longest name
    assert len({line.index(" 40 ") for line in table}) == 1
    assert lines[2].index("name") == table[0].index("reciprocal_pairs")


def test_screen_summary_elides_the_middle_of_very_long_names():
    long = "/very/long/path/" + "x" * 80 + "/matrix_final.npy"
    line = _screen([long]).summary().splitlines()[3]
    shown = line.split()[1]
    assert len(shown) == 60 and "..." in shown
    assert shown.startswith("/very/long/path/") and shown.endswith("/matrix_final.npy")
