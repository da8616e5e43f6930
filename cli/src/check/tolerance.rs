//! How far a checked value may move from its baseline before `check`
//! calls it a regression: per column, an absolute and a relative part,
//! `|got - expected| <= abs + rel * |expected|`.
//!
//! The defaults sit far below clinical relevance (0.01 mmol/L of sodium,
//! 1 mL of a compartment) and well above the solver's own error (local
//! relative tolerance 1e-6; the SciPy cross-check agrees to < 1e-4
//! relative) and the 7 significant digits a baseline keeps. A YAML file overrides them for every scenario or for one:
//!
//! ```yaml
//! columns:                     # every scenario
//!   urine_ml_h: { abs: 1.0, rel: 0.002 }
//! scenarios:
//!   siad_restriction_urea:     # file stem of the script
//!     na_mmol_l: { abs: 0.02 }
//! ```
//!
//! A field left out keeps the value below it (default, then `columns`).

use crate::output::csv::COLUMNS;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// The allowed distance from a baseline value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    /// Absolute part, in the column's unit.
    pub abs: f64,
    /// Relative part, a fraction of the baseline value.
    pub rel: f64,
}

impl Tolerance {
    /// The allowed distance from `expected`.
    pub fn allowed(&self, expected: f64) -> f64 {
        self.abs + self.rel * expected.abs()
    }

    /// Whether `got` is within tolerance of `expected` (two NaN agree).
    pub fn holds(&self, expected: f64, got: f64) -> bool {
        if expected.is_nan() || got.is_nan() {
            return expected.is_nan() && got.is_nan();
        }
        (got - expected).abs() <= self.allowed(expected)
    }
}

/// The default tolerance of a column of [`COLUMNS`] (by index).
pub fn default_for(column: usize) -> Tolerance {
    let t = |abs, rel| Tolerance { abs, rel };
    match COLUMNS[column] {
        // Concentrations, mmol/L or g/L: 0.01 (common practice: labs
        // report sodium to 1 mmol/L, so 0.01 is far below anything read).
        "na_mmol_l"
        | "k_mmol_l"
        | "glucose_mmol_l"
        | "urea_mmol_l"
        | "albumin_g_l"
        | "na_change_24h_mmol_l" => t(0.01, 0.0),
        "osmolality_mosm_kg" | "tonicity_mosm_kg" => t(0.05, 0.0),
        // Compartments, L: 1 mL.
        "cells_l" | "red_cells_l" | "interstitium_l" | "plasma_l" => t(0.001, 0.0),
        "brain_volume_index" | "hematocrit" => t(1e-4, 0.0),
        // Urine: flows and concentrations move fast after an input change.
        "urine_ml_h" | "urine_osm_mosm_kg" | "urine_na_mmol_l" | "efwc_ml_h" => t(0.5, 1e-3),
        // Cumulative amounts: 1 mL and 0.1 mmol, or 1e-4 of the total.
        "water_in_cum_l" | "water_out_cum_l" => t(0.001, 1e-4),
        "na_in_cum_mmol" | "na_out_cum_mmol" => t(0.1, 1e-4),
        _ => t(0.0, 0.0),
    }
}

/// A tolerance file that cannot be used.
#[derive(Debug, Clone, PartialEq)]
pub struct ToleranceError(pub String);

impl std::fmt::Display for ToleranceError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for ToleranceError {}

#[derive(Debug, Clone, Copy, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct Spec {
    abs: Option<f64>,
    rel: Option<f64>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct FileText {
    #[serde(default)]
    columns: BTreeMap<String, Spec>,
    #[serde(default)]
    scenarios: BTreeMap<String, BTreeMap<String, Spec>>,
}

/// The tolerances of one check run: defaults with the overrides of a file.
#[derive(Debug, Clone, Default)]
pub struct Tolerances {
    /// Where the overrides came from (none: defaults only).
    pub path: Option<PathBuf>,
    columns: BTreeMap<usize, Spec>,
    scenarios: BTreeMap<String, BTreeMap<usize, Spec>>,
    /// The line of each scenario's key in the file.
    scenario_lines: BTreeMap<String, usize>,
}

/// The first line of `text` whose content starts with `key:` (for errors
/// about a key that parsed but does not make sense).
fn line_of(text: &str, key: &str) -> Option<usize> {
    text.lines()
        .position(|l| {
            let l = l.trim_start();
            l.strip_prefix(key)
                .is_some_and(|rest| rest.trim_start().starts_with(':'))
        })
        .map(|i| i + 1)
}

/// The first key given twice under the same parent in block-style YAML:
/// (line, key). YAML lets the last of two equal keys win silently, which
/// would let a drifted baseline pass under a loose copy of a tolerance.
fn duplicate_key(text: &str) -> Option<(usize, String)> {
    // Open blocks: (indent of their keys, keys seen).
    let mut open: Vec<(usize, std::collections::BTreeSet<String>)> = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let content = line.split('#').next().unwrap_or("");
        let trimmed = content.trim_start();
        if trimmed.is_empty() || trimmed.starts_with('-') {
            continue;
        }
        let Some((key, _)) = trimmed.split_once(':') else {
            continue;
        };
        let key = key
            .trim()
            .trim_matches(|c| c == '"' || c == '\'')
            .to_string();
        let indent = content.len() - trimmed.len();
        while open.last().is_some_and(|(ind, _)| *ind > indent) {
            open.pop();
        }
        match open.last_mut() {
            Some((ind, keys)) if *ind == indent => {
                if !keys.insert(key.clone()) {
                    return Some((i + 1, key));
                }
            }
            // The first key of a deeper block (the value of the key
            // above it) opens that block.
            _ => open.push((indent, [key].into_iter().collect())),
        }
    }
    None
}

impl Tolerances {
    /// Names of the scenarios the file gives tolerances for, each with the
    /// line it stands on.
    pub fn scenario_names(&self) -> Vec<(String, Option<usize>)> {
        self.scenarios
            .keys()
            .map(|name| (name.clone(), self.scenario_lines.get(name).copied()))
            .collect()
    }

    /// The defaults alone.
    pub fn defaults() -> Self {
        Tolerances::default()
    }

    /// Read a tolerance file.
    pub fn read(path: &Path) -> Result<Self, ToleranceError> {
        let text = tidewater::textfile::read_text(path)
            .map_err(|e| ToleranceError(format!("tolerance file {}: {e}", path.display())))?;
        Self::parse(&text, path)
    }

    /// Parse tolerance YAML; `path` names the file in errors.
    pub fn parse(text: &str, path: &Path) -> Result<Self, ToleranceError> {
        if let Some((line, key)) = duplicate_key(text) {
            return Err(ToleranceError(format!(
                "tolerance file {}:{line}: `{key}` is given twice in the same section (the last would silently win); keep one",
                path.display()
            )));
        }
        let file: FileText = if text.trim().is_empty() {
            FileText::default()
        } else {
            tidewater::yaml::from_str(text).map_err(|e| {
                let at = e
                    .location
                    .map(|(l, c)| format!(":{l}:{c}"))
                    .unwrap_or_default();
                ToleranceError(format!(
                    "tolerance file {}{at}: {}",
                    path.display(),
                    e.message
                ))
            })?
        };
        let place = |key: &str| {
            line_of(text, key)
                .map(|n| format!("{}:{n}", path.display()))
                .unwrap_or_else(|| path.display().to_string())
        };
        let convert = |section: &str,
                       specs: &BTreeMap<String, Spec>|
         -> Result<BTreeMap<usize, Spec>, ToleranceError> {
            let mut out = BTreeMap::new();
            for (name, spec) in specs {
                let index = COLUMNS[1..]
                    .iter()
                    .position(|c| c == name)
                    .map(|i| i + 1)
                    .ok_or_else(|| {
                        let hint = tidewater::suggest::closest(name, COLUMNS[1..].iter().copied())
                            .map(|c| format!(" (did you mean `{c}`?)"))
                            .unwrap_or_default();
                        ToleranceError(format!(
                            "tolerance file {}: {section}.{name}: unknown column{hint}; columns: {}",
                            place(name),
                            COLUMNS[1..].join(", ")
                        ))
                    })?;
                for (field, value) in [("abs", spec.abs), ("rel", spec.rel)] {
                    if let Some(v) = value {
                        if !v.is_finite() || v < 0.0 {
                            return Err(ToleranceError(format!(
                                "tolerance file {}: {section}.{name}.{field}: must be a finite number >= 0, got {v}",
                                place(name)
                            )));
                        }
                    }
                }
                out.insert(index, *spec);
            }
            Ok(out)
        };
        let columns = convert("columns", &file.columns)?;
        let mut scenarios = BTreeMap::new();
        for (name, specs) in &file.scenarios {
            scenarios.insert(name.clone(), convert(&format!("scenarios.{name}"), specs)?);
        }
        let scenario_lines = file
            .scenarios
            .keys()
            .filter_map(|name| line_of(text, name).map(|l| (name.clone(), l)))
            .collect();
        Ok(Tolerances {
            path: Some(path.to_path_buf()),
            columns,
            scenarios,
            scenario_lines,
        })
    }

    /// The tolerance of a column (index into [`COLUMNS`]) for the scenario
    /// whose script has file stem `scenario`.
    pub fn get(&self, scenario: &str, column: usize) -> Tolerance {
        let mut t = default_for(column);
        let layers = [
            self.columns.get(&column),
            self.scenarios.get(scenario).and_then(|m| m.get(&column)),
        ];
        for spec in layers.into_iter().flatten() {
            if let Some(a) = spec.abs {
                t.abs = a;
            }
            if let Some(r) = spec.rel {
                t.rel = r;
            }
        }
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn col(name: &str) -> usize {
        COLUMNS.iter().position(|c| *c == name).unwrap()
    }

    #[test]
    fn every_value_column_has_a_positive_default() {
        for (i, name) in COLUMNS.iter().enumerate().skip(1) {
            assert!(default_for(i).abs > 0.0, "{name}");
        }
    }

    #[test]
    fn overrides_layer_field_by_field() {
        let text = "columns:\n  urine_ml_h: { abs: 2.0 }\nscenarios:\n  a:\n    urine_ml_h: { rel: 0.01 }\n    na_mmol_l: { abs: 0.1, rel: 0 }\n";
        let t = Tolerances::parse(text, Path::new("t.yaml")).unwrap();
        assert_eq!(
            t.get("b", col("urine_ml_h")),
            Tolerance {
                abs: 2.0,
                rel: 1e-3
            }
        );
        assert_eq!(
            t.get("a", col("urine_ml_h")),
            Tolerance {
                abs: 2.0,
                rel: 0.01
            }
        );
        assert_eq!(
            t.get("a", col("na_mmol_l")),
            Tolerance { abs: 0.1, rel: 0.0 }
        );
        assert_eq!(t.get("b", col("na_mmol_l")), default_for(col("na_mmol_l")));
    }

    #[test]
    fn bad_files_name_the_place() {
        let e = Tolerances::parse("columns:\n  na_mmol: { abs: 1 }\n", Path::new("t.yaml"))
            .unwrap_err()
            .0;
        assert!(
            e.contains("t.yaml:2: columns.na_mmol: unknown column"),
            "{e}"
        );
        assert!(e.contains("did you mean `na_mmol_l`"), "{e}");
        let e = Tolerances::parse(
            "scenarios:\n  a:\n    na_mmol_l: { abs: -1 }\n",
            Path::new("t.yaml"),
        )
        .unwrap_err()
        .0;
        assert!(
            e.contains("t.yaml:3: scenarios.a.na_mmol_l.abs: must be a finite number >= 0"),
            "{e}"
        );
        let e = Tolerances::parse(
            "columns:\n  na_mmol_l: { absolute: 1 }\n",
            Path::new("t.yaml"),
        )
        .unwrap_err()
        .0;
        assert!(e.contains("t.yaml:2:"), "{e}");
        assert!(e.contains("unknown field `absolute`"), "{e}");
        let e = Tolerances::parse("colums: {}\n", Path::new("t.yaml"))
            .unwrap_err()
            .0;
        assert!(e.contains("unknown field `colums`"), "{e}");
    }

    #[test]
    fn a_key_given_twice_is_refused_with_its_line() {
        let text =
            "columns:\n  na_mmol_l: {abs: 0.1}\n  k_mmol_l: {abs: 0.1}\n  na_mmol_l: {abs: 5}\n";
        let err = Tolerances::parse(text, Path::new("t.yaml"))
            .unwrap_err()
            .to_string();
        assert!(
            err.contains("t.yaml:4") && err.contains("given twice"),
            "{err}"
        );
        // The same column under two scenarios is not a duplicate.
        let text = "scenarios:\n  a:\n    na_mmol_l: {abs: 1}\n  b:\n    na_mmol_l: {abs: 2}\n";
        assert!(Tolerances::parse(text, Path::new("t.yaml")).is_ok());
        // Nor is a scenario key equal to a column key above it.
        let text = "columns:\n  na_mmol_l: {abs: 1}\nscenarios:\n  x:\n    na_mmol_l: {abs: 2}\n";
        assert!(Tolerances::parse(text, Path::new("t.yaml")).is_ok());
    }

    #[test]
    fn nan_agrees_only_with_nan() {
        let t = Tolerance { abs: 1.0, rel: 0.0 };
        assert!(t.holds(f64::NAN, f64::NAN));
        assert!(!t.holds(1.0, f64::NAN));
        assert!(t.holds(1.0, 1.9));
        assert!(!t.holds(1.0, 2.1));
    }
}
