use super::*;

#[test]
fn every_numeric_field_is_a_field_a_sweep_can_set() {
    assert_eq!(numeric_patient_fields().count(), 12);
    for f in numeric_patient_fields() {
        let mut p = Patient::healthy(Sex::Male, 40.0, 70.0);
        crate::sweep::set_patient_field(&mut p, f, 1.0).unwrap_or_else(|e| panic!("{e}"));
    }
    for f in TEXT_PATIENT_FIELDS {
        assert!(PATIENT_FIELDS.contains(f), "{f}");
    }
    let mut p = Patient::healthy(Sex::Male, 40.0, 70.0);
    assert!(crate::sweep::set_patient_field(&mut p, "sex", 1.0).is_err());
}

fn resolve(p: Patient) -> Result<ResolvedPatient, InputError> {
    p.resolve(&Params::default())
}

#[test]
fn healthy_man_uses_rule_of_thumb() {
    let r = resolve(Patient::healthy(Sex::Male, 40.0, 70.0)).unwrap();
    assert!((r.total_water_l - 42.0).abs() < 1e-9);
    assert_eq!(r.onset, Onset::Chronic);
}

#[test]
fn bad_fields_are_named() {
    let mut p = Patient::healthy(Sex::Male, 40.0, -70.0);
    assert_eq!(resolve(p.clone()).unwrap_err().field(), "weight_kg");
    p.weight_kg = 70.0;
    p.na = Some(300.0);
    assert_eq!(resolve(p.clone()).unwrap_err().field(), "na");
    p.na = None;
    assert_eq!(Sex::parse("robot").unwrap_err().field(), "sex");
    p.sex = Sex::Female;
    p.albumin_g_l = Some(0.0);
    assert_eq!(resolve(p.clone()).unwrap_err().field(), "albumin_g_l");
    p.albumin_g_l = None;
    p.glucose_mg_dl = Some(90.0);
    p.glucose_mmol_l = Some(5.0);
    assert!(matches!(
        resolve(p.clone()),
        Err(InputError::Conflict { .. })
    ));
    p.glucose_mmol_l = None;
    p.water_method = Some(WaterMethod::Watson);
    assert_eq!(resolve(p).unwrap_err().field(), "height_cm");
}

#[test]
fn words_are_read_in_any_case_and_written_back_in_their_canonical_form() {
    assert_eq!(Sex::parse(" Woman ").unwrap(), Sex::Female);
    assert_eq!(Onset::parse("ACUTE").unwrap(), Onset::Acute);
    assert_eq!(
        Cause::parse("SIADH").unwrap(),
        Cause::InappropriateAntidiuresis
    );
    let p: Patient = crate::yaml::from_str(
        "sex: M\nage_years: 40\nweight_kg: 70\nonset: Chronic\ncause: siad\nsymptoms: severe\nwater_method: Watson\n",
    )
    .unwrap();
    assert_eq!(p.sex, Sex::Male);
    assert_eq!(p.cause, Some(Cause::InappropriateAntidiuresis));
    assert_eq!(p.water_method, Some(WaterMethod::Watson));
    let json = serde_json::to_value(&p).unwrap();
    assert_eq!(json["sex"], "male");
    assert_eq!(json["onset"], "chronic");
    assert_eq!(json["cause"], "inappropriate_antidiuresis");
    assert_eq!(json["symptoms"], "severe");
    assert_eq!(json["water_method"], "watson");
    assert_eq!(json["na"], serde_json::Value::Null);
}

#[test]
fn a_bad_word_in_yaml_is_named_at_its_line() {
    let err = patient_from_yaml(
        "sex: male\nage_years: 40\nweight_kg: 70\nonset: sudden\n",
        "p.yaml",
    )
    .unwrap_err();
    let msg = err.to_string();
    assert!(msg.contains("p.yaml:4"), "{msg}");
    assert!(
        msg.contains("onset = \"sudden\" is not one of: acute, chronic"),
        "{msg}"
    );
}

#[test]
fn yaml_errors_carry_a_location() {
    let err = patient_from_yaml(
        "sex: male\nage_years: 40\nweight_kg: 70\nnaa: 120\n",
        "p.yaml",
    )
    .unwrap_err();
    let msg = err.to_string();
    assert!(msg.contains("p.yaml:4"), "{msg}");
    assert!(msg.contains("naa"), "{msg}");
}
