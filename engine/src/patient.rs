//! Patient description: who the patient is and what the labs show.
//!
//! A [`Patient`] is what a user writes (YAML, a script map or Rust). It is
//! checked and resolved into a [`ResolvedPatient`] with every value filled
//! in and in engine units; [`crate::model::Model::new`] then builds the
//! steady, consistent initial state from it.

use crate::error::InputError;
use crate::formulas;
use crate::params::Params;
use crate::units;
use serde::{Deserialize, Serialize};

/// Every field of a patient description, as scripts (`patient(#{ ... })`),
/// patient files and sweep specs (`patient.<field>`) name them.
pub const PATIENT_FIELDS: &[&str] = &[
    "sex",
    "age_years",
    "weight_kg",
    "height_cm",
    "water_fraction",
    "water_method",
    "na",
    "k",
    "glucose_mmol_l",
    "glucose_mg_dl",
    "urea_mmol_l",
    "bun_mg_dl",
    "albumin_g_l",
    "hematocrit",
    "onset",
    "symptoms",
    "cause",
];

/// The fields of [`PATIENT_FIELDS`] that hold a word, not a number.
pub const TEXT_PATIENT_FIELDS: &[&str] = &["sex", "water_method", "onset", "symptoms", "cause"];

/// The fields of [`PATIENT_FIELDS`] that hold a number (a sweep can vary
/// them).
pub fn numeric_patient_fields() -> impl Iterator<Item = &'static str> {
    PATIENT_FIELDS
        .iter()
        .copied()
        .filter(|f| !TEXT_PATIENT_FIELDS.contains(f))
}

/// A patient as described by the user. Optional fields fall back to the
/// defaults of [`Params`] (normal labs) or of the sex.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Patient {
    /// "male" or "female".
    pub sex: String,
    /// Age, years.
    pub age_years: f64,
    /// Body weight, kg.
    pub weight_kg: f64,
    /// Height, cm (needed for the Watson water method).
    #[serde(default)]
    pub height_cm: Option<f64>,
    /// Total body water as a fraction of weight (overrides the method).
    #[serde(default)]
    pub water_fraction: Option<f64>,
    /// "fraction" (rule of thumb by sex and age, the default) or "watson".
    #[serde(default)]
    pub water_method: Option<String>,
    /// Serum sodium, mmol/L.
    #[serde(default)]
    pub na: Option<f64>,
    /// Serum potassium, mmol/L.
    #[serde(default)]
    pub k: Option<f64>,
    /// Plasma glucose, mmol/L.
    #[serde(default)]
    pub glucose_mmol_l: Option<f64>,
    /// Plasma glucose, mg/dL.
    #[serde(default)]
    pub glucose_mg_dl: Option<f64>,
    /// Plasma urea, mmol/L.
    #[serde(default)]
    pub urea_mmol_l: Option<f64>,
    /// Blood urea nitrogen, mg/dL.
    #[serde(default)]
    pub bun_mg_dl: Option<f64>,
    /// Plasma albumin, g/L.
    #[serde(default)]
    pub albumin_g_l: Option<f64>,
    /// Hematocrit, fraction (0.42) or percent (42).
    #[serde(default)]
    pub hematocrit: Option<f64>,
    /// "acute" (< 48 h: brain not adapted) or "chronic" (the default).
    #[serde(default)]
    pub onset: Option<String>,
    /// Symptoms at the start: "none" (the default), "moderate" or
    /// "severe" (decides which guideline goals apply; the model itself
    /// does not use them).
    #[serde(default)]
    pub symptoms: Option<String>,
    /// What keeps sodium where it is (see [`crate::causes::Cause`]):
    /// none, hypovolemic, inappropriate_antidiuresis, reset_osmostat,
    /// low_solute_intake, primary_polydipsia, diuretic_induced,
    /// insulin_deficiency.
    #[serde(default)]
    pub cause: Option<String>,
}

/// Sex, for body-water rules of thumb and formulas.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Sex {
    /// Male.
    Male,
    /// Female.
    Female,
}

/// How long the disorder has been present: decides whether brain cells
/// start adapted (docs/model.md, the start).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Onset {
    /// Less than 48 h: brain osmolytes at their normal content.
    Acute,
    /// 48 h or more: brain osmolytes adapted, brain volume normal.
    Chronic,
}

/// Symptoms of the disorder at the start, as the guidelines grade them
/// (Spasovski et al. 2014: moderately severe, e.g. nausea without
/// vomiting, confusion, headache; severe, e.g. vomiting, seizures,
/// somnolence, coma; from memory). Only the guideline goals use them.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Symptoms {
    /// None or mild (the default when not given).
    #[default]
    None,
    /// Moderately severe.
    Moderate,
    /// Severe.
    Severe,
}

/// A checked patient with every value in engine units.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResolvedPatient {
    /// Sex.
    pub sex: Sex,
    /// Age, years.
    pub age_years: f64,
    /// Weight, kg.
    pub weight_kg: f64,
    /// Height, cm, if given.
    pub height_cm: Option<f64>,
    /// Total body water, L.
    pub total_water_l: f64,
    /// How total body water was obtained.
    pub water_method: String,
    /// Serum sodium, mmol/L.
    pub na: f64,
    /// Serum potassium, mmol/L.
    pub k: f64,
    /// Plasma glucose, mmol/L.
    pub glucose_mmol_l: f64,
    /// Plasma urea, mmol/L.
    pub urea_mmol_l: f64,
    /// Plasma albumin, g/L.
    pub albumin_g_l: f64,
    /// Hematocrit, fraction.
    pub hematocrit: f64,
    /// Onset.
    pub onset: Onset,
    /// Symptoms at the start.
    pub symptoms: Symptoms,
    /// Cause.
    pub cause: crate::causes::Cause,
}

fn check_range(field: &str, value: f64, min: f64, max: f64, unit: &str) -> Result<f64, InputError> {
    if value.is_finite() && value >= min && value <= max {
        Ok(value)
    } else {
        Err(InputError::OutOfRange {
            field: field.to_string(),
            value,
            min,
            max,
            unit: unit.to_string(),
        })
    }
}

fn one_of(
    field: &str,
    a: (&str, Option<f64>),
    b: (&str, Option<f64>),
) -> Result<Option<(usize, f64)>, InputError> {
    match (a.1, b.1) {
        (Some(_), Some(_)) => Err(InputError::Conflict {
            field: a.0.to_string(),
            other: b.0.to_string(),
            why: format!("give {field} in one unit only"),
        }),
        (Some(x), None) => Ok(Some((0, x))),
        (None, Some(x)) => Ok(Some((1, x))),
        (None, None) => Ok(None),
    }
}

impl Patient {
    /// Check every field and fill in defaults.
    pub fn resolve(&self, params: &Params) -> Result<ResolvedPatient, InputError> {
        let sex = match self.sex.trim().to_ascii_lowercase().as_str() {
            "male" | "man" | "m" => Sex::Male,
            "female" | "woman" | "f" => Sex::Female,
            _ => {
                return Err(InputError::BadChoice {
                    field: "sex".into(),
                    value: self.sex.clone(),
                    expected: "male, female".into(),
                })
            }
        };
        let age_years = check_range("age_years", self.age_years, 16.0, 110.0, "years")?;
        let weight_kg = check_range("weight_kg", self.weight_kg, 30.0, 250.0, "kg")?;
        let height_cm = match self.height_cm {
            Some(h) => Some(check_range("height_cm", h, 120.0, 230.0, "cm")?),
            None => None,
        };
        let elderly = age_years >= params.elderly_age_years;
        let (total_water_l, water_method) =
            match (self.water_fraction, self.water_method.as_deref()) {
                (Some(_), Some(m)) if m != "fraction" => {
                    return Err(InputError::Conflict {
                        field: "water_fraction".into(),
                        other: "water_method".into(),
                        why: format!(
                            "a fixed water fraction cannot be combined with the {m} method"
                        ),
                    })
                }
                (Some(f), _) => {
                    let f = check_range("water_fraction", f, 0.3, 0.8, "L/kg")?;
                    (f * weight_kg, format!("fraction {f:.2} of weight (given)"))
                }
                (None, None) | (None, Some("fraction")) => {
                    let f = match (sex, elderly) {
                        (Sex::Male, false) => params.tbw_fraction_man,
                        (Sex::Male, true) => params.tbw_fraction_elderly_man,
                        (Sex::Female, false) => params.tbw_fraction_woman,
                        (Sex::Female, true) => params.tbw_fraction_elderly_woman,
                    };
                    (
                        f * weight_kg,
                        format!("fraction {f:.2} of weight (rule of thumb)"),
                    )
                }
                (None, Some("watson")) => {
                    let h = height_cm.ok_or_else(|| InputError::Missing {
                        field: "height_cm".into(),
                        why: "the Watson water method needs the height".into(),
                    })?;
                    let tbw = match sex {
                        Sex::Male => formulas::watson_tbw_man_l(age_years, h, weight_kg),
                        Sex::Female => formulas::watson_tbw_woman_l(h, weight_kg),
                    };
                    (tbw, "Watson et al. 1980".to_string())
                }
                (None, Some(other)) => {
                    return Err(InputError::BadChoice {
                        field: "water_method".into(),
                        value: other.to_string(),
                        expected: "fraction, watson".into(),
                    })
                }
            };
        check_range(
            "total body water (derived)",
            total_water_l / weight_kg,
            0.3,
            0.8,
            "L/kg",
        )?;

        let na = check_range(
            "na",
            self.na.unwrap_or(params.na_ref_mmol_l),
            95.0,
            190.0,
            "mmol/L",
        )?;
        let k = check_range(
            "k",
            self.k.unwrap_or(params.k_ref_mmol_l),
            1.5,
            9.0,
            "mmol/L",
        )?;
        let glucose_mmol_l = match one_of(
            "glucose",
            ("glucose_mmol_l", self.glucose_mmol_l),
            ("glucose_mg_dl", self.glucose_mg_dl),
        )? {
            Some((0, g)) => check_range("glucose_mmol_l", g, 1.5, 120.0, "mmol/L")?,
            Some((_, g)) => {
                check_range("glucose_mg_dl", g, 27.0, 2160.0, "mg/dL")?;
                units::glucose_mg_dl_to_mmol_l(g)
            }
            None => params.glucose_ref_mmol_l,
        };
        let urea_mmol_l = match one_of(
            "urea",
            ("urea_mmol_l", self.urea_mmol_l),
            ("bun_mg_dl", self.bun_mg_dl),
        )? {
            Some((0, u)) => check_range("urea_mmol_l", u, 0.5, 100.0, "mmol/L")?,
            Some((_, u)) => {
                check_range("bun_mg_dl", u, 1.4, 280.0, "mg/dL")?;
                units::bun_mg_dl_to_urea_mmol_l(u)
            }
            None => params.urea_ref_mmol_l,
        };
        let albumin_g_l = check_range(
            "albumin_g_l",
            self.albumin_g_l.unwrap_or(params.albumin_ref_g_l),
            10.0,
            60.0,
            "g/L",
        )?;
        let hematocrit = match self.hematocrit {
            Some(h) if h > 1.0 => check_range("hematocrit", h, 10.0, 70.0, "%")? / 100.0,
            Some(h) => check_range("hematocrit", h, 0.10, 0.70, "fraction")?,
            None => match sex {
                Sex::Male => params.hematocrit_man,
                Sex::Female => params.hematocrit_woman,
            },
        };
        let onset = match self.onset.as_deref().map(|s| s.trim().to_ascii_lowercase()) {
            None => Onset::Chronic,
            Some(s) if s == "chronic" => Onset::Chronic,
            Some(s) if s == "acute" => Onset::Acute,
            Some(_) => {
                return Err(InputError::BadChoice {
                    field: "onset".into(),
                    value: self.onset.clone().unwrap_or_default(),
                    expected: "acute, chronic".into(),
                })
            }
        };
        let symptoms = match self
            .symptoms
            .as_deref()
            .map(|s| s.trim().to_ascii_lowercase())
        {
            None => Symptoms::None,
            Some(s) if s == "none" => Symptoms::None,
            Some(s) if s == "moderate" => Symptoms::Moderate,
            Some(s) if s == "severe" => Symptoms::Severe,
            Some(_) => {
                return Err(InputError::BadChoice {
                    field: "symptoms".into(),
                    value: self.symptoms.clone().unwrap_or_default(),
                    expected: "none, moderate, severe".into(),
                })
            }
        };
        let cause = match &self.cause {
            Some(c) => crate::causes::Cause::parse(c)?,
            None => crate::causes::Cause::None,
        };
        Ok(ResolvedPatient {
            cause,
            sex,
            age_years,
            weight_kg,
            height_cm,
            total_water_l,
            water_method,
            na,
            k,
            glucose_mmol_l,
            urea_mmol_l,
            albumin_g_l,
            hematocrit,
            onset,
            symptoms,
        })
    }

    /// A healthy adult: the given sex, age and weight with normal labs.
    pub fn healthy(sex: &str, age_years: f64, weight_kg: f64) -> Self {
        Patient {
            sex: sex.to_string(),
            age_years,
            weight_kg,
            ..Default::default()
        }
    }
}

/// Parse a patient from YAML text; errors name the file, line and field.
pub fn patient_from_yaml(text: &str, file: &str) -> Result<Patient, InputError> {
    crate::yaml::from_str(text).map_err(|e| InputError::DataFile {
        file: file.to_string(),
        location: e.location,
        message: e.message,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_numeric_field_is_a_field_a_sweep_can_set() {
        assert_eq!(numeric_patient_fields().count(), 12);
        for f in numeric_patient_fields() {
            let mut p = Patient::healthy("male", 40.0, 70.0);
            crate::sweep::set_patient_field(&mut p, f, 1.0).unwrap_or_else(|e| panic!("{e}"));
        }
        for f in TEXT_PATIENT_FIELDS {
            assert!(PATIENT_FIELDS.contains(f), "{f}");
        }
        let mut p = Patient::healthy("male", 40.0, 70.0);
        assert!(crate::sweep::set_patient_field(&mut p, "sex", 1.0).is_err());
    }

    fn resolve(p: Patient) -> Result<ResolvedPatient, InputError> {
        p.resolve(&Params::default())
    }

    #[test]
    fn healthy_man_uses_rule_of_thumb() {
        let r = resolve(Patient::healthy("male", 40.0, 70.0)).unwrap();
        assert!((r.total_water_l - 42.0).abs() < 1e-9);
        assert_eq!(r.onset, Onset::Chronic);
    }

    #[test]
    fn bad_fields_are_named() {
        let mut p = Patient::healthy("male", 40.0, -70.0);
        assert_eq!(resolve(p.clone()).unwrap_err().field(), "weight_kg");
        p.weight_kg = 70.0;
        p.na = Some(300.0);
        assert_eq!(resolve(p.clone()).unwrap_err().field(), "na");
        p.na = None;
        p.sex = "robot".into();
        assert_eq!(resolve(p.clone()).unwrap_err().field(), "sex");
        p.sex = "female".into();
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
        p.water_method = Some("watson".into());
        assert_eq!(resolve(p).unwrap_err().field(), "height_cm");
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
}
