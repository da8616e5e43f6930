"""The engine's typed errors arrive as Python exceptions carrying file,
line and field (inputs) or simulated time and pool (simulations). The
cases are those of the command line's corpus, tests/bad_scripts/ (each
with the line its .expect sidecar names)."""

import pytest

import tidewater
from conftest import BAD_SCRIPTS


def expected_line(name):
    first = (BAD_SCRIPTS / f"{name}.expect").read_text().splitlines()[0]
    assert first.startswith("line: ")
    return int(first.split(":")[1])


@pytest.mark.parametrize(
    "name, field",
    [
        ("param_out_of_range", "thirst_max_l_h"),
        ("impossible_lab", "na"),
        ("huge_weight", "weight_kg"),
        ("unknown_param", None),
        ("syntax_error", None),
    ],
)
def test_script_errors_carry_file_line_and_field(name, field):
    path = BAD_SCRIPTS / f"{name}.rhai"
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run(path)
    assert e.value.file == str(path)
    assert e.value.line == expected_line(name)
    if field is not None:
        assert e.value.field == field
    assert str(path) in str(e.value)


def test_unknown_parameter_names_it():
    script = (BAD_SCRIPTS / "unknown_param.rhai").read_text()
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run(BAD_SCRIPTS / "unknown_param.rhai")
    assert e.value.field is not None and e.value.field in script


def test_a_bad_data_file_is_named_with_its_line():
    # bad_yaml_fluid.expect: bad_fluids.yaml:5, unknown field `sodium`.
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run(BAD_SCRIPTS / "bad_yaml_fluid.rhai")
    assert e.value.file == "bad_fluids.yaml"
    assert e.value.line == 5
    assert e.value.field == "sodium"
    # A value out of range names its field (the file's checks give no line).
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run(BAD_SCRIPTS / "bad_yaml_value.rhai")
    assert e.value.file == "negative_fluids.yaml"
    assert e.value.field == "na"


def test_a_missing_script_is_an_input_error():
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run("no/such/script.rhai")
    assert e.value.file == "no/such/script.rhai"
    assert e.value.line is None


def test_a_syntax_error_in_text_has_line_and_column():
    with pytest.raises(tidewater.InputError) as e:
        tidewater.run('patient(#{ sex: "female", age_years: 60, weight_kg: 60 });\nrun_for(hours(6);\n')
    assert e.value.file == "<script>"
    assert e.value.line == 2
    assert e.value.column is not None


def test_a_failed_simulation_carries_time_and_pool():
    path = BAD_SCRIPTS / "loss_empties_the_body.rhai"
    with pytest.raises(tidewater.SimulationError) as e:
        tidewater.run(path)
    assert not isinstance(e.value, tidewater.InputError)
    # The loss starts at 1 h (the script) and empties a pool within its 2 h.
    assert 1 < e.value.time_h <= 3
    assert e.value.pool and e.value.pool in str(e.value)
    assert e.value.line == expected_line("loss_empties_the_body")
    assert e.value.file == str(path)


def test_a_script_rule_error_is_a_simulation_error_with_time():
    path = BAD_SCRIPTS / "rule_error_later.rhai"
    with pytest.raises(tidewater.SimulationError) as e:
        tidewater.run(path)
    assert e.value.time_h is not None and e.value.time_h > 0
    assert e.value.line == expected_line("rule_error_later")


def test_every_error_is_a_tidewater_error():
    assert issubclass(tidewater.InputError, tidewater.TidewaterError)
    assert issubclass(tidewater.SimulationError, tidewater.TidewaterError)
    assert issubclass(tidewater.RuleError, tidewater.SimulationError)
