//! Fluid compositions: the bundled library (`scenarios/fluids.yaml`, compiled
//! in) and user fluids from YAML files of the same shape.

use crate::error::InputError;
use crate::model::Inputs;
use serde::{Deserialize, Serialize};

/// The bundled library, as shipped in `scenarios/fluids.yaml`.
pub const BUNDLED_YAML: &str = include_str!("../../scenarios/fluids.yaml");

/// What a fluid is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum FluidKind {
    /// Can be infused or drunk.
    Given,
    /// Describes the composition of a loss.
    Loss,
}

/// A fluid: concentrations in mmol/L of the solution (albumin in g/L).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Fluid {
    /// Identifier used in scripts (`saline_3`).
    pub id: String,
    /// Human-readable name.
    pub name: String,
    /// Given or loss.
    pub kind: FluidKind,
    /// Sodium, mmol/L.
    #[serde(default)]
    pub na: f64,
    /// Potassium, mmol/L.
    #[serde(default)]
    pub k: f64,
    /// Chloride, mmol/L (shown, not modelled separately).
    #[serde(default)]
    pub cl: f64,
    /// Buffer anions (lactate, acetate, gluconate), mmol/L (shown only).
    #[serde(default)]
    pub buffer: f64,
    /// Calcium, mmol/L (shown only).
    #[serde(default)]
    pub calcium: f64,
    /// Magnesium, mmol/L (shown only).
    #[serde(default)]
    pub magnesium: f64,
    /// Glucose, mmol/L.
    #[serde(default)]
    pub glucose: f64,
    /// Urea, mmol/L.
    #[serde(default)]
    pub urea: f64,
    /// Albumin, g/L.
    #[serde(default)]
    pub albumin_g_l: f64,
}

impl Fluid {
    /// Input rates for a flow of `rate_l_h` litres per hour of this fluid
    /// into the body.
    pub fn given_at(&self, rate_l_h: f64) -> Inputs {
        Inputs {
            water_in_l_h: rate_l_h,
            na_in_mmol_h: self.na * rate_l_h,
            k_in_mmol_h: self.k * rate_l_h,
            urea_in_mmol_h: self.urea * rate_l_h,
            glucose_in_mmol_h: self.glucose * rate_l_h,
            albumin_in_g_h: self.albumin_g_l * rate_l_h,
            ..Default::default()
        }
    }

    /// Input rates for `rate_l_h` litres per hour of this fluid drunk or
    /// given by tube: into the gut lumen, absorbed from there (protein is
    /// digested, not absorbed as albumin, so a drink carries none).
    pub fn drunk_at(&self, rate_l_h: f64) -> Inputs {
        Inputs {
            oral_water_l_h: rate_l_h,
            oral_na_mmol_h: self.na * rate_l_h,
            oral_k_mmol_h: self.k * rate_l_h,
            oral_urea_mmol_h: self.urea * rate_l_h,
            oral_glucose_mmol_h: self.glucose * rate_l_h,
            ..Default::default()
        }
    }

    /// Input rates for a loss of `rate_l_h` litres per hour of this fluid.
    pub fn lost_at(&self, rate_l_h: f64) -> Inputs {
        Inputs {
            water_out_l_h: rate_l_h,
            na_out_mmol_h: self.na * rate_l_h,
            k_out_mmol_h: self.k * rate_l_h,
            urea_out_mmol_h: self.urea * rate_l_h,
            glucose_out_mmol_h: self.glucose * rate_l_h,
            albumin_out_g_h: self.albumin_g_l * rate_l_h,
            ..Default::default()
        }
    }

    /// Effective osmolarity of the fluid as infused (salts count twice),
    /// mOsm/L.
    pub fn osmolarity(&self) -> f64 {
        2.0 * (self.na + self.k) + self.glucose + self.urea
    }

    fn check(&self, file: &str) -> Result<(), InputError> {
        for (field, v, max) in [
            ("na", self.na, 2000.0),
            ("k", self.k, 2000.0),
            ("cl", self.cl, 2000.0),
            ("buffer", self.buffer, 2000.0),
            ("calcium", self.calcium, 500.0),
            ("magnesium", self.magnesium, 500.0),
            ("glucose", self.glucose, 5000.0),
            ("urea", self.urea, 10000.0),
            ("albumin_g_l", self.albumin_g_l, 300.0),
        ] {
            if !v.is_finite() || !(0.0..=max).contains(&v) {
                return Err(InputError::DataFile {
                    file: file.to_string(),
                    location: None,
                    message: format!(
                        "fluid \"{}\": {field} = {} is outside 0..={max}",
                        self.id,
                        crate::numeric::show(v)
                    ),
                });
            }
        }
        if self.id.is_empty()
            || !self
                .id
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_')
        {
            return Err(InputError::DataFile {
                file: file.to_string(),
                location: None,
                message: format!(
                    "fluid id \"{}\" must be letters, digits and underscores",
                    self.id
                ),
            });
        }
        Ok(())
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FluidFile {
    fluids: Vec<Fluid>,
}

/// A set of fluids, looked up by id.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FluidLibrary {
    /// The fluids, in file order.
    pub fluids: Vec<Fluid>,
}

/// Most fluids one file may hold: the bundled library has about twenty and
/// a ward's own a handful; 10,000 bounds the time and memory of a load.
pub const MAX_FLUIDS_PER_FILE: usize = 10_000;

impl FluidLibrary {
    /// The bundled library (parsed once per process).
    pub fn bundled() -> Self {
        static PARSED: std::sync::OnceLock<FluidLibrary> = std::sync::OnceLock::new();
        PARSED
            .get_or_init(|| {
                Self::from_yaml(BUNDLED_YAML, "scenarios/fluids.yaml")
                    .expect("the bundled fluid library is valid")
            })
            .clone()
    }

    /// Parse a fluid file; errors name the file, line and field.
    pub fn from_yaml(text: &str, file: &str) -> Result<Self, InputError> {
        let parsed: FluidFile = crate::yaml::from_str(text).map_err(|e| InputError::DataFile {
            file: file.to_string(),
            location: e.location,
            message: e.message,
        })?;
        for f in &parsed.fluids {
            f.check(file)?;
        }
        if parsed.fluids.len() > MAX_FLUIDS_PER_FILE {
            return Err(InputError::DataFile {
                file: file.to_string(),
                location: None,
                message: format!(
                    "{} fluids: a fluid file holds at most {MAX_FLUIDS_PER_FILE}",
                    parsed.fluids.len()
                ),
            });
        }
        let mut lib = FluidLibrary { fluids: Vec::new() };
        let mut ids = std::collections::HashSet::new();
        for f in parsed.fluids {
            if !ids.insert(f.id.clone()) {
                return Err(InputError::DataFile {
                    file: file.to_string(),
                    location: None,
                    message: format!("fluid id \"{}\" appears twice", f.id),
                });
            }
            lib.fluids.push(f);
        }
        Ok(lib)
    }

    /// Add (or replace) the fluids of another library.
    pub fn extend(&mut self, other: FluidLibrary) {
        for f in other.fluids {
            self.fluids.retain(|g| g.id != f.id);
            self.fluids.push(f);
        }
    }

    /// Find a fluid by id, with a suggestion when it is misspelt.
    pub fn get(&self, id: &str) -> Result<&Fluid, InputError> {
        self.fluids
            .iter()
            .find(|f| f.id == id)
            .ok_or_else(|| InputError::UnknownFluid {
                name: id.to_string(),
                suggestion: crate::suggest::closest(id, self.fluids.iter().map(|f| f.id.as_str())),
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bundled_library_matches_reference_table() {
        // REFERENCES.md fluid table (standard fluid compositions, common practice).
        let lib = FluidLibrary::bundled();
        assert_eq!(lib.get("saline_0_9").unwrap().na, 154.0);
        assert_eq!(lib.get("saline_3").unwrap().na, 513.0);
        assert_eq!(lib.get("saline_5").unwrap().na, 855.0);
        assert_eq!(lib.get("lactated_ringers").unwrap().k, 4.0);
        // 5 % dextrose: 50 g/L of glucose at 180.16 g/mol = 277.5 mmol/L.
        assert!((lib.get("dextrose_5").unwrap().glucose - 50.0 / 0.18016).abs() < 0.1);
        assert_eq!(lib.get("albumin_20").unwrap().albumin_g_l, 200.0);
    }

    #[test]
    fn misspelt_fluid_gets_a_suggestion() {
        let lib = FluidLibrary::bundled();
        let err = lib.get("salin_3").unwrap_err();
        assert!(
            err.to_string().contains("did you mean \"saline_3\""),
            "{err}"
        );
    }

    #[test]
    fn bad_fluid_file_names_line_and_field() {
        let text = "fluids:\n  - id: mine\n    name: x\n    kind: given\n    sodium: 100\n";
        let err = FluidLibrary::from_yaml(text, "my.yaml")
            .unwrap_err()
            .to_string();
        assert!(err.contains("my.yaml:5") && err.contains("sodium"), "{err}");
        let text = "fluids:\n  - id: mine\n    name: x\n    kind: given\n    na: -5\n";
        let err = FluidLibrary::from_yaml(text, "my.yaml")
            .unwrap_err()
            .to_string();
        assert!(err.contains("na = -5"), "{err}");
    }
}
