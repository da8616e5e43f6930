//! Bad patient, parameter and plan input returns a typed error that names
//! the field; nothing panics.

use tidewater::Sex;

use tidewater::{InputError, Params, Patient, Plan, Simulation, SimulationError};

fn field_of(patient: Patient) -> String {
    match Simulation::new(Plan::new(patient)) {
        Err(SimulationError::Input(e)) => e.field().to_string(),
        Err(other) => panic!("expected an input error, got {other}"),
        Ok(_) => panic!("expected an error"),
    }
}

#[test]
fn negative_weight_names_weight() {
    assert_eq!(
        field_of(Patient::healthy(Sex::Male, 40.0, -70.0)),
        "weight_kg"
    );
}

#[test]
fn impossible_sodium_names_na() {
    let p = Patient {
        na: Some(300.0),
        ..Patient::healthy(Sex::Male, 40.0, 70.0)
    };
    assert_eq!(field_of(p), "na");
}

#[test]
fn unknown_words_name_their_field_and_line() {
    for (yaml, field, line) in [
        ("sex: robot\nage_years: 40\nweight_kg: 70\n", "sex", 1),
        (
            "sex: male\nage_years: 40\nweight_kg: 70\nonset: sudden\n",
            "onset",
            4,
        ),
        (
            "sex: male\nage_years: 40\nweight_kg: 70\ncause: bad_luck\n",
            "cause",
            4,
        ),
    ] {
        let msg = tidewater::patient_from_yaml(yaml, "p.yaml")
            .unwrap_err()
            .to_string();
        assert!(msg.contains(&format!("p.yaml:{line}")), "{msg}");
        assert!(msg.contains(&format!("{field} = ")), "{msg}");
    }
    assert_eq!("robot".parse::<Sex>().unwrap_err().field(), "sex");
}

#[test]
fn zero_albumin_names_albumin() {
    let p = Patient {
        albumin_g_l: Some(0.0),
        ..Patient::healthy(Sex::Female, 40.0, 60.0)
    };
    assert_eq!(field_of(p), "albumin_g_l");
}

#[test]
fn nan_and_out_of_range_labs_are_refused() {
    for (p, field) in [
        (
            Patient {
                k: Some(f64::NAN),
                ..Patient::healthy(Sex::Male, 40.0, 70.0)
            },
            "k",
        ),
        (
            Patient {
                hematocrit: Some(0.95),
                ..Patient::healthy(Sex::Male, 40.0, 70.0)
            },
            "hematocrit",
        ),
        (
            Patient {
                urea_mmol_l: Some(-1.0),
                ..Patient::healthy(Sex::Male, 40.0, 70.0)
            },
            "urea_mmol_l",
        ),
        (
            Patient {
                water_fraction: Some(1.5),
                ..Patient::healthy(Sex::Male, 40.0, 70.0)
            },
            "water_fraction",
        ),
        (Patient::healthy(Sex::Male, 5.0, 70.0), "age_years"),
    ] {
        assert_eq!(field_of(p), field);
    }
}

#[test]
fn bad_parameters_name_the_parameter() {
    let mut params = Params::default();
    match params.set("gfr", 10.0) {
        Err(InputError::UnknownParameter { name, .. }) => assert_eq!(name, "gfr"),
        other => panic!("{other:?}"),
    }
    let err = params.set("kf_ml_min_mmhg", -2.0).unwrap_err();
    assert_eq!(err.field(), "kf_ml_min_mmhg");
    // A parameter set out of range directly is caught when the run is built.
    let mut plan = Plan::new(Patient::healthy(Sex::Male, 40.0, 70.0));
    plan.params.lymph_flow_ml_h = -5.0;
    match Simulation::new(plan) {
        Err(SimulationError::Input(e)) => assert_eq!(e.field(), "lymph_flow_ml_h"),
        other => panic!("{:?}", other.err()),
    }
}

#[test]
fn bad_plan_values_are_refused() {
    let plan = Plan::new(Patient::healthy(Sex::Male, 40.0, 70.0)).run_for(-1.0);
    match Simulation::new(plan) {
        Err(SimulationError::Input(e)) => assert_eq!(e.field(), "run_for"),
        other => panic!("{:?}", other.err()),
    }
    let lib = tidewater::FluidLibrary::bundled();
    let err = tidewater::Stream::give(lib.get("saline_3").unwrap(), 0.0, 1.0).unwrap_err();
    assert_eq!(err.field(), "volume");
}
