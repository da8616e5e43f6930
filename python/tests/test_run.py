"""`tidewater.run` gives what `tidewater run` writes: the same samples.csv
to the printed digits and the same summary.json, for every bundled
scenario; settings change what they name; the fallbacks without pandas or
NumPy hold the same numbers."""

import csv
import json
import sys

import pytest

import tidewater
from conftest import ROOT, SCENARIOS, sig

BUNDLED = sorted(p.stem for p in SCENARIOS.glob("*.rhai"))


def test_every_bundled_scenario_is_checked():
    # The bundled set (scenarios/*.rhai) is not empty: the comparison below
    # would otherwise pass on nothing.
    assert len(BUNDLED) >= 10


@pytest.mark.parametrize("name", BUNDLED)
def test_samples_and_summary_equal_the_command_lines(name, rendered, monkeypatch):
    monkeypatch.chdir(ROOT)
    folder = rendered / name
    with open(folder / "samples.csv", newline="") as f:
        rows = list(csv.reader(f))
    with open(folder / "summary.json") as f:
        summary = json.load(f)
    result = tidewater.run(f"scenarios/{name}.rhai")
    assert list(result.samples.columns) == rows[0] == list(tidewater.COLUMNS)
    got = [[sig(v) for v in row] for row in result.samples.itertuples(index=False)]
    assert len(got) == len(rows) - 1
    for i, (g, want) in enumerate(zip(got, rows[1:])):
        assert g == want, f"{name}: sample {i} differs"
    assert result.summary == summary
    assert result.flags == summary["flags"]
    assert result.log == summary["log"]
    assert result.summary["caution"] == tidewater.CAUTION


def test_script_text_runs_like_its_file(monkeypatch):
    monkeypatch.chdir(ROOT)
    path = SCENARIOS / "nausea_settles.rhai"
    from_file = tidewater.run(path)
    from_text = tidewater.run(path.read_text())
    assert from_text.samples.equals(from_file.samples)
    assert from_text.summary["source"] == "<script>"


SCRIPT = """
patient(#{ sex: "female", age_years: 70, weight_kg: 60, na: 120, onset: "chronic", cause: "siad" });
run_for(hours(12));
at(hours(0), infuse("saline_3", ml(setting("bolus_ml", 150)), minutes(20)));
"""


def test_settings_change_what_they_name():
    base = tidewater.run(SCRIPT)
    assert base.summary["given"][1]["volume_in_ml"] == 150
    more = tidewater.run(SCRIPT, {"script.bolus_ml": 250})
    assert more.summary["given"][1]["volume_in_ml"] == 250
    # More 3 % saline raises sodium more (common practice: hypertonic
    # saline raises serum sodium).
    assert more.samples.na_mmol_l.iloc[-1] > base.samples.na_mmol_l.iloc[-1]
    lower = tidewater.run(SCRIPT, **{"patient.na": 118})
    assert lower.summary["sodium"]["start"]["mmol_l"] == pytest.approx(118, abs=1e-6)
    assert tidewater.run(SCRIPT, gfr_ml_min=60).samples.shape == base.samples.shape


def test_a_setting_the_script_never_reads_is_refused():
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run(SCRIPT, {"script.bolus_mll": 250})
    assert e.value.field == "script.bolus_mll"
    assert "bolus_ml" in str(e.value)
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run(SCRIPT, {"patient.weigth_kg": 70})
    assert e.value.field == "patient.weigth_kg"
    assert "weight_kg" in str(e.value)


def _without(monkeypatch, *modules):
    for m in modules:
        monkeypatch.setitem(sys.modules, m, None)


def test_without_pandas_samples_are_numpy_arrays(monkeypatch):
    frame = tidewater.run(SCRIPT).samples
    _without(monkeypatch, "pandas")
    import numpy

    arrays = tidewater.run(SCRIPT).samples
    assert isinstance(arrays, dict) and list(arrays) == list(tidewater.COLUMNS)
    assert isinstance(arrays["na_mmol_l"], numpy.ndarray)
    assert numpy.array_equal(arrays["na_mmol_l"], frame["na_mmol_l"].to_numpy())


def test_without_numpy_samples_are_lists(monkeypatch):
    frame = tidewater.run(SCRIPT).samples
    _without(monkeypatch, "pandas", "numpy")
    lists = tidewater.run(SCRIPT).samples
    assert isinstance(lists["time_h"], list)
    assert lists["na_mmol_l"] == frame["na_mmol_l"].tolist()
    assert lists["time_h"][0] == 0 and lists["time_h"][-1] == 12


def test_params_and_fluids(cli):
    import subprocess

    p = tidewater.params()
    listed = subprocess.run([cli, "params"], capture_output=True, text=True, check=True).stdout
    assert len(p) > 20
    for name in p["name"]:
        assert name in listed
    assert ((p["min"] <= p["default"]) & (p["default"] <= p["max"])).all()
    f = tidewater.fluids().set_index("id")
    # 0.9 % sodium chloride holds 154 mmol/L of sodium and of chloride,
    # 3 % holds 513 mmol/L (common practice: 9 g/L and 30 g/L over
    # 58.44 g/mol).
    assert f.loc["saline_0_9", "na_mmol_l"] == pytest.approx(154, abs=0.5)
    assert f.loc["saline_0_9", "cl_mmol_l"] == pytest.approx(154, abs=0.5)
    assert f.loc["saline_3", "na_mmol_l"] == pytest.approx(513, abs=1)
    assert f.loc["dextrose_5", "na_mmol_l"] == 0
