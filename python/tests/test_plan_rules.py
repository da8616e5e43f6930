"""A plan built in Python, with a rule written in Python, equals the same
plan and rule written as a scenario script; rule failures name the rule
and the simulated time."""

import numpy
import pytest

import tidewater
from conftest import ROOT


def rescue_plan():
    """scenarios/hypovolemic_overcorrection.rhai, written in Python."""
    patient = tidewater.Patient(
        "male", 64, 74, na=117, onset="chronic", cause="hypovolemic"
    )
    plan = tidewater.Plan(patient, hours=48, limits="europe-2014", high_risk=False)
    plan.at(0, tidewater.nil_by_mouth())
    plan.infuse("saline_0_9", volume_ml=2000, duration_h=6)
    rescued = False

    def rescue(labs):
        nonlocal rescued
        if not rescued and labs.na_change_24h >= 6:
            rescued = True
            return [
                tidewater.desmopressin(2, "iv"),
                tidewater.infuse("dextrose_5", volume_ml=750, duration_h=6),
            ]
        return []

    return plan.every(minutes=30, rule=rescue)


def test_a_python_rule_equals_the_same_rule_in_a_script(monkeypatch):
    monkeypatch.chdir(ROOT)
    script = tidewater.run("scenarios/hypovolemic_overcorrection.rhai")
    python = rescue_plan().run()
    assert list(python.samples.columns) == list(script.samples.columns)
    # The same actions at the same check times: the same numbers, to the bit.
    for column in script.samples.columns:
        assert numpy.array_equal(
            python.samples[column].to_numpy(), script.samples[column].to_numpy()
        ), column
    assert python.summary["given"] == script.summary["given"]
    assert python.summary["flags"] == script.summary["flags"]
    # The rescue happened (the script's own expectation: desmopressin given).
    assert any("rule rescue: desmopressin" in line for line in python.log), python.log
    # Nothing by mouth from the start: the habitual intake never runs.
    assert [g["stream"] for g in python.summary["given"]] == [
        "saline_0_9",
        "desmopressin",
        "dextrose_5",
    ]


def test_builder_methods_chain_and_stop_by_label():
    patient = tidewater.Patient("female", 70, 60, na=120, onset="chronic", cause="siad")
    result = (
        tidewater.Plan(patient, hours=12)
        .infuse("saline_3", volume_ml=150, duration_h=1, label="bolus")
        .at(0.5, tidewater.stop("bolus"))
        .run()
    )
    given = {g["stream"]: g for g in result.summary["given"]}
    # Stopped after half of its hour: 75 of 150 mL.
    assert given["bolus"]["volume_in_ml"] == pytest.approx(75, rel=1e-6)
    assert result.samples.time_h.iloc[-1] == 12


def test_labs_carry_the_script_names():
    seen = {}

    def look(labs):
        if labs.time_h == 1:
            seen.update(labs.as_dict())
            seen["running"] = labs.running("saline_0_9")
            seen["item"] = labs["na"]

    patient = tidewater.Patient("male", 50, 80, na=125, cause="siad")
    tidewater.Plan(patient, hours=2).infuse(
        "saline_0_9", volume_ml=1000, duration_h=2
    ).every(hours=1, rule=look).run()
    names = [n for n, _ in tidewater.Labs.units()]
    assert set(names) <= set(seen)
    assert seen["running"] is True
    assert seen["item"] == seen["na"]
    assert 124 < seen["na"] < 127


def test_a_failing_rule_names_the_rule_and_the_time():
    def divide(labs):
        if labs.time_h >= 2:
            return [1 / 0]
        return None

    plan = tidewater.Plan(tidewater.Patient("male", 50, 80, na=125, cause="siad"), hours=6)
    plan.every(hours=1, rule=divide)
    with pytest.raises(tidewater.RuleError) as e:
        plan.run()
    assert e.value.rule == "divide"
    assert e.value.time_h == 2
    assert isinstance(e.value.__cause__, ZeroDivisionError)
    assert "rule divide failed at t = 2.00 h" in str(e.value)
    assert isinstance(e.value, tidewater.SimulationError)


def test_a_rule_returning_something_else_is_refused():
    plan = tidewater.Plan(tidewater.Patient("male", 50, 80, na=125, cause="siad"), hours=2)
    plan.every(hours=1, rule=lambda labs: "stop", name="wordy")
    with pytest.raises(tidewater.RuleError) as e:
        plan.run()
    assert e.value.rule == "wordy" and e.value.time_h == 0
    assert isinstance(e.value.__cause__, TypeError)


def test_bad_plan_values_name_their_field():
    with pytest.raises(tidewater.InputError) as e:
        tidewater.Patient("female", 58, 62, na=300)
    assert e.value.field == "na"
    with pytest.raises(tidewater.InputError) as e:
        tidewater.infuse("saline_09", volume_ml=100, duration_h=1)
    assert e.value.field == "saline_09" and "saline_0_9" in str(e.value)
    with pytest.raises(tidewater.InputError) as e:
        tidewater.infuse("saline_0_9", volume_ml=100)
    assert e.value.field == "rate_ml_h"
    plan = tidewater.Plan(tidewater.Patient("female", 58, 62, na=140))
    with pytest.raises(tidewater.InputError) as e:
        plan.set_param("gfr_ml_mn", 90)
    assert e.value.field == "gfr_ml_mn"
    with pytest.raises(tidewater.InputError) as e:
        plan.every(minutes=0.5, rule=lambda labs: None)
    assert e.value.field == "hours"


def test_the_interpreter_is_free_while_a_plan_runs():
    # Another Python thread runs while the engine integrates (the run is
    # detached from the interpreter).
    import threading

    ticks = []
    done = threading.Event()

    def count():
        while not done.is_set():
            ticks.append(1)
            done.wait(0.0005)

    t = threading.Thread(target=count)
    t.start()
    try:
        for _ in range(5):
            rescue_plan().run()
    finally:
        done.set()
        t.join()
    assert len(ticks) > 5
