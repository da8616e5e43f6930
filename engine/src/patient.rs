//! Patient description: who the patient is and what the labs show.
//!
//! A [`Patient`] is what a user writes (YAML, a script map or Rust). It is
//! checked and resolved into a [`ResolvedPatient`] with every value filled
//! in and in engine units; [`crate::model::Model::new`] then builds the
//! steady, consistent initial state from it.

pub use crate::causes::Cause;
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
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Patient {
    /// Male or female (written "male" or "female").
    #[serde(serialize_with = "word_out")]
    pub sex: Sex,
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
    /// How total body water is estimated: "fraction" (rule of thumb by sex
    /// and age, the default) or "watson".
    #[serde(default, serialize_with = "word_out_opt")]
    pub water_method: Option<WaterMethod>,
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
    #[serde(default, serialize_with = "word_out_opt")]
    pub onset: Option<Onset>,
    /// Symptoms at the start: "none" (the default), "moderate" or
    /// "severe" (decides which guideline goals apply; the model itself
    /// does not use them).
    #[serde(default, serialize_with = "word_out_opt")]
    pub symptoms: Option<Symptoms>,
    /// What keeps sodium where it is (see [`Cause`]): none, hypovolemic,
    /// inappropriate_antidiuresis, reset_osmostat, low_solute_intake,
    /// primary_polydipsia, diuretic_induced, insulin_deficiency,
    /// inadequate_water_intake.
    #[serde(default, serialize_with = "word_out_opt")]
    pub cause: Option<Cause>,
}

/// A choice a user writes as a word (`"female"`, `"chronic"`): parsed
/// without regard to case, written back in its canonical form.
pub trait Word: Sized + Copy {
    /// Parse the word; the error names the field and the accepted words.
    fn parse(text: &str) -> Result<Self, InputError>;
    /// The canonical word.
    fn word(self) -> &'static str;
}

/// Words of patient descriptions are read from YAML and JSON as strings.
macro_rules! word_from_text {
    ($($t:ty),*) => {$(
        impl<'de> Deserialize<'de> for $t {
            fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                let text = String::deserialize(d)?;
                <$t as Word>::parse(&text).map_err(serde::de::Error::custom)
            }
        }
        impl std::str::FromStr for $t {
            type Err = InputError;
            fn from_str(text: &str) -> Result<Self, InputError> {
                <$t as Word>::parse(text)
            }
        }
        impl std::fmt::Display for $t {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(self.word())
            }
        }
    )*};
}
word_from_text!(Sex, Onset, Symptoms, WaterMethod, Cause);

fn word_out<W: Word, S: serde::Serializer>(w: &W, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(w.word())
}

fn word_out_opt<W: Word, S: serde::Serializer>(w: &Option<W>, s: S) -> Result<S::Ok, S::Error> {
    match w {
        Some(w) => s.serialize_str(w.word()),
        None => s.serialize_none(),
    }
}

/// Match `text` (trimmed, any case, `-` and spaces read as `_`) against
/// the accepted words of a field; the error lists each choice's canonical
/// word (the first listed for it).
fn choose<T: Copy + PartialEq>(
    field: &str,
    text: &str,
    words: &[(&'static str, T)],
) -> Result<T, InputError> {
    let key = text.trim().to_ascii_lowercase().replace(['-', ' '], "_");
    words
        .iter()
        .find(|(w, _)| *w == key)
        .map(|(_, t)| *t)
        .ok_or_else(|| InputError::BadChoice {
            field: field.into(),
            value: text.into(),
            expected: words
                .iter()
                .filter(|(w, t)| canonical(words, *t) == *w)
                .map(|(w, _)| *w)
                .collect::<Vec<_>>()
                .join(", "),
        })
}

/// The first word listed for `choice`.
fn canonical<T: PartialEq>(words: &[(&'static str, T)], choice: T) -> &'static str {
    words
        .iter()
        .find(|(_, t)| *t == choice)
        .map_or("", |(w, _)| w)
}

/// A [`Word`] from its field name and its words (canonical word first,
/// then any other accepted spelling).
macro_rules! words {
    ($t:ident, $field:literal, [$($w:literal => $v:ident),+ $(,)?]) => {
        impl Word for $t {
            fn parse(text: &str) -> Result<Self, InputError> {
                choose($field, text, &[$(($w, $t::$v)),+])
            }
            fn word(self) -> &'static str {
                canonical(&[$(($w, $t::$v)),+], self)
            }
        }
    };
}

words!(Sex, "sex", ["male" => Male, "man" => Male, "m" => Male, "female" => Female, "woman" => Female, "f" => Female]);
words!(Onset, "onset", ["acute" => Acute, "chronic" => Chronic]);
words!(Symptoms, "symptoms", ["none" => None, "moderate" => Moderate, "severe" => Severe]);
words!(WaterMethod, "water_method", ["fraction" => Fraction, "watson" => Watson]);

impl Word for Cause {
    fn parse(text: &str) -> Result<Self, InputError> {
        Cause::parse(text)
    }
    fn word(self) -> &'static str {
        self.name()
    }
}

/// How total body water is estimated when no fraction is given.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub enum WaterMethod {
    /// A fraction of weight by sex and age (rule of thumb; the default).
    #[default]
    Fraction,
    /// Watson et al. 1980, from sex, age, height and weight.
    Watson,
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
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
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
    pub cause: Cause,
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
        let sex = self.sex;
        let age_years = check_range("age_years", self.age_years, 16.0, 110.0, "years")?;
        let weight_kg = check_range("weight_kg", self.weight_kg, 30.0, 250.0, "kg")?;
        let height_cm = match self.height_cm {
            Some(h) => Some(check_range("height_cm", h, 120.0, 230.0, "cm")?),
            None => None,
        };
        let elderly = age_years >= params.elderly_age_years;
        let (total_water_l, water_method) = match (self.water_fraction, self.water_method) {
            (Some(_), Some(m)) if m != WaterMethod::Fraction => {
                return Err(InputError::Conflict {
                    field: "water_fraction".into(),
                    other: "water_method".into(),
                    why: format!("a fixed water fraction cannot be combined with the {m} method"),
                })
            }
            (Some(f), _) => {
                let f = check_range("water_fraction", f, 0.3, 0.8, "L/kg")?;
                (f * weight_kg, format!("fraction {f:.2} of weight (given)"))
            }
            (None, None) | (None, Some(WaterMethod::Fraction)) => {
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
            (None, Some(WaterMethod::Watson)) => {
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
        let onset = self.onset.unwrap_or(Onset::Chronic);
        let symptoms = self.symptoms.unwrap_or_default();
        let cause = self.cause.unwrap_or(Cause::None);
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
    pub fn healthy(sex: Sex, age_years: f64, weight_kg: f64) -> Self {
        Patient {
            sex,
            age_years,
            weight_kg,
            height_cm: None,
            water_fraction: None,
            water_method: None,
            na: None,
            k: None,
            glucose_mmol_l: None,
            glucose_mg_dl: None,
            urea_mmol_l: None,
            bun_mg_dl: None,
            albumin_g_l: None,
            hematocrit: None,
            onset: None,
            symptoms: None,
            cause: None,
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
#[path = "patient_tests.rs"]
mod tests;
