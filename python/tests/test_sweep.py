"""`tidewater.sweep` runs the engine's sweep in parallel and gives the
rows `tidewater sweep` writes, whatever the number of threads."""

import subprocess

import pandas
import pytest

import tidewater
from conftest import ROOT, SCENARIOS

SPEC = SCENARIOS / "sweeps" / "bolus_dose_response.yaml"


@pytest.fixture(scope="module")
def cli_results(cli, tmp_path_factory):
    out = tmp_path_factory.mktemp("sweep") / "results.csv"
    subprocess.run(
        [cli, "sweep", str(SPEC), "--out", str(out), "--threads", "2"],
        cwd=ROOT,
        check=True,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
    )
    return out


def test_the_sweep_equals_the_command_lines(cli_results):
    text = tidewater._native.sweep_csv(str(SPEC), 2)
    assert text == cli_results.read_text()
    frame = tidewater.sweep(SPEC, threads=2)
    pandas.testing.assert_frame_equal(frame, pandas.read_csv(cli_results))
    # The spec's grid: 5 bolus volumes by 5 levels of body water.
    assert len(frame) == 25
    assert "na_at_24h_mmol_l" in frame.columns


def test_threads_do_not_change_the_rows(cli_results):
    assert tidewater._native.sweep_csv(str(SPEC), 1) == cli_results.read_text()


def test_the_sweep_summarises_with_pandas():
    frame = tidewater.sweep(SPEC, threads=2)
    by_bolus = frame.groupby("script.bolus_ml")["na_at_24h_mmol_l"].median()
    # More 3 % saline, more sodium at 24 h (common practice).
    assert by_bolus.is_monotonic_increasing
    assert list(by_bolus.index) == [50, 100, 150, 200, 250]


def test_a_bad_spec_names_its_field(tmp_path):
    bad = tmp_path / "bad.yaml"
    bad.write_text(
        f"scenario: {SCENARIOS / 'severe_chronic_boluses.rhai'}\n"
        "design: random\nmembers: 4\nseed: 1\nparameters:\n"
        "  - name: gfr_ml_min\n    values: []\n"
    )
    with pytest.raises(tidewater.InputError) as e:
        tidewater.sweep(bad)
    assert e.value.file == str(bad)
    assert e.value.field == "parameters[0].values"
    assert e.value.line == 7
