//! The sweep spec (YAML): the base scenario, the varied parameters with
//! their lists, ranges or distributions, the design, the outputs kept, and
//! the checks a spec must pass before anything runs.

use super::error::{DistributionProblem, SpecProblem, SweepError};
use super::random::{normal_cdf, normal_quantile};
use serde::{Deserialize, Serialize};

/// The longest run a plan allows (60 days), h.
const LONGEST_RUN_H: f64 = 24.0 * 60.0;

/// The most members one sweep (or one run of a shard's spec) may have.
/// At the 1,300-1,900 members/s measured for the bundled bolus sweep on
/// the two-core development machine (release build; DEVELOPERS.md,
/// "Sweeps") ten million members take 1.5-2 h, and the list of members
/// still to run stays under 100 MB;
/// a larger study belongs in shards (`--shard K/N`) of several specs with
/// their own seeds, joined with `tidewater merge`. Without a bound a
/// mistyped count (4294967296) asks for gigabytes before the first member.
pub const MAX_MEMBERS: usize = 10_000_000;

/// How one parameter varies across members.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum Distribution {
    /// Uniform on `[min, max]`.
    Uniform {
        /// Lower bound.
        min: f64,
        /// Upper bound.
        max: f64,
    },
    /// Normal, optionally truncated to `[min, max]`.
    Normal {
        /// Mean.
        mean: f64,
        /// Standard deviation.
        sd: f64,
        /// Lower truncation.
        #[serde(default)]
        min: Option<f64>,
        /// Upper truncation.
        #[serde(default)]
        max: Option<f64>,
    },
    /// Log-normal given by its median and the standard deviation of its
    /// logarithm, optionally truncated.
    LogNormal {
        /// Median.
        median: f64,
        /// Standard deviation of ln(value).
        sigma: f64,
        /// Lower truncation.
        #[serde(default)]
        min: Option<f64>,
        /// Upper truncation.
        #[serde(default)]
        max: Option<f64>,
    },
}

impl Distribution {
    /// Value at cumulative probability `u` in (0, 1) (inverse transform, so
    /// that a Latin hypercube stratifies every distribution).
    pub fn quantile(&self, u: f64) -> f64 {
        match *self {
            Distribution::Uniform { min, max } => min + u * (max - min),
            Distribution::Normal { mean, sd, min, max } => {
                let lo = min.map_or(0.0, |m| normal_cdf((m - mean) / sd));
                let hi = max.map_or(1.0, |m| normal_cdf((m - mean) / sd));
                let x = mean + sd * normal_quantile(lo + u * (hi - lo));
                clamp_opt(x, min, max)
            }
            Distribution::LogNormal {
                median,
                sigma,
                min,
                max,
            } => {
                let mu = median.ln();
                let lo = min.map_or(0.0, |m| normal_cdf((m.max(1e-300).ln() - mu) / sigma));
                let hi = max.map_or(1.0, |m| normal_cdf((m.ln() - mu) / sigma));
                let x = (mu + sigma * normal_quantile(lo + u * (hi - lo))).exp();
                clamp_opt(x, min, max)
            }
        }
    }

    /// The first condition the distribution's parameters fail, if any.
    fn problem(&self) -> Option<DistributionProblem> {
        match *self {
            Distribution::Uniform { min, max }
                if !(min.is_finite() && max.is_finite() && min <= max) =>
            {
                Some(DistributionProblem::UniformBounds)
            }
            Distribution::Normal { sd, .. } if !(sd.is_finite() && sd > 0.0) => {
                Some(DistributionProblem::NormalSd)
            }
            Distribution::LogNormal { median, sigma, .. } if !(median > 0.0 && sigma > 0.0) => {
                Some(DistributionProblem::LogNormalShape)
            }
            Distribution::Normal {
                min: Some(a),
                max: Some(b),
                ..
            }
            | Distribution::LogNormal {
                min: Some(a),
                max: Some(b),
                ..
            } if a >= b => Some(DistributionProblem::Truncation),
            _ => None,
        }
    }
}

fn clamp_opt(x: f64, min: Option<f64>, max: Option<f64>) -> f64 {
    let x = min.map_or(x, |m| x.max(m));
    max.map_or(x, |m| x.min(m))
}

// ---------------------------------------------------------------------------
// The spec
// ---------------------------------------------------------------------------

/// One varied parameter: exactly one of `values`, `range`, `distribution`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepParameter {
    /// `patient.<field>` or an engine parameter name.
    pub name: String,
    /// A fixed list of values.
    #[serde(default)]
    pub values: Option<Vec<f64>>,
    /// A uniform range `[min, max]`.
    #[serde(default)]
    pub range: Option<[f64; 2]>,
    /// A distribution.
    #[serde(default)]
    pub distribution: Option<Distribution>,
}

/// How members are drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Design {
    /// Every combination of the lists (ranges are split into `levels` points).
    Grid,
    /// Independent random draws.
    Random,
    /// Latin hypercube: each parameter's distribution cut into `members`
    /// equal-probability strata, one draw per stratum, strata shuffled.
    LatinHypercube,
}

/// Outputs kept for each member.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepOutputs {
    /// Serum sodium at these times, h.
    #[serde(default)]
    pub na_at_h: Vec<f64>,
    /// Keep the largest rise in any 24 h.
    #[serde(default = "yes")]
    pub largest_rise_24h: bool,
    /// Keep the largest rise in any 48 h.
    #[serde(default = "yes")]
    pub largest_rise_48h: bool,
    /// Keep the lowest brain-cell volume index.
    #[serde(default = "yes")]
    pub min_brain_volume_index: bool,
    /// Keep which guideline limits were crossed.
    #[serde(default = "yes")]
    pub flags: bool,
    /// Interval of the sodium series kept for percentile bands, h
    /// (0: none).
    #[serde(default = "default_band_every")]
    pub band_every_h: f64,
}

fn yes() -> bool {
    true
}

fn default_band_every() -> f64 {
    2.0
}

impl Default for SweepOutputs {
    fn default() -> Self {
        SweepOutputs {
            na_at_h: vec![24.0, 48.0],
            largest_rise_24h: true,
            largest_rise_48h: true,
            min_brain_volume_index: true,
            flags: true,
            band_every_h: 2.0,
        }
    }
}

/// A sweep specification (YAML). Parameter names are engine parameters,
/// `patient.<field>`, or `script.<name>` for a script's
/// `setting(name, default)` word.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepSpec {
    /// Base scenario script, relative to the spec file.
    pub scenario: String,
    /// Design.
    pub design: Design,
    /// Number of members (random and Latin hypercube designs).
    #[serde(default)]
    pub members: Option<usize>,
    /// Points per range in a grid.
    #[serde(default)]
    pub levels: Option<usize>,
    /// Seed of the random numbers.
    #[serde(default)]
    pub seed: u64,
    /// Varied parameters.
    pub parameters: Vec<SweepParameter>,
    /// Outputs kept.
    #[serde(default)]
    pub outputs: SweepOutputs,
    /// Share of members (0–1) whose mass balance is checked.
    #[serde(default = "default_balance_share")]
    pub check_balance_share: f64,
    /// Relative tolerance of the solver for every member (default: the
    /// engine's, [`crate::plan::Tolerances::default`]). A sweep over
    /// uncertain parameters rarely needs sodium to 1e-6: a looser tolerance
    /// buys members per second.
    #[serde(default)]
    pub rtol: Option<f64>,
}

fn default_balance_share() -> f64 {
    0.01
}

impl SweepSpec {
    /// Parse and check a spec; errors name the file, line and field.
    pub fn from_yaml(text: &str, file: &str) -> Result<Self, SweepError> {
        let spec: SweepSpec = crate::yaml::from_str(text).map_err(|e| SweepError::Syntax {
            file: file.to_string(),
            location: e.location,
            message: e.message,
        })?;
        spec.check(file).map_err(|e| e.located(text))?;
        Ok(spec)
    }

    /// The first problem of the spec, in the order a reader meets the
    /// fields: each parameter in turn, then the design, the tolerance, the
    /// balance share and the output times.
    fn check(&self, file: &str) -> Result<(), SweepError> {
        let fail =
            |field: String, problem: SpecProblem| Err(SweepError::spec(file, field, problem));
        if self.parameters.is_empty() {
            return fail("parameters".into(), SpecProblem::NoParameters);
        }
        for (i, p) in self.parameters.iter().enumerate() {
            let at = |key: &str| format!("parameters[{i}]{key}");
            if let Some(first) = self.parameters[..i].iter().position(|q| q.name == p.name) {
                return fail(
                    at(".name"),
                    SpecProblem::DuplicateParameter {
                        name: p.name.clone(),
                        first,
                    },
                );
            }
            let name = || p.name.clone();
            let given = [
                p.values.is_some(),
                p.range.is_some(),
                p.distribution.is_some(),
            ]
            .iter()
            .filter(|&&b| b)
            .count();
            if given != 1 {
                return fail(at(""), SpecProblem::NotOneForm { name: name() });
            }
            if let Some(v) = &p.values {
                if v.is_empty() || v.iter().any(|x| !x.is_finite()) {
                    return fail(at(".values"), SpecProblem::Values { name: name() });
                }
            }
            if let Some([a, b]) = p.range {
                if !(a.is_finite() && b.is_finite() && a <= b) {
                    return fail(at(".range"), SpecProblem::Range { name: name() });
                }
            }
            if let Some(problem) = p.distribution.as_ref().and_then(Distribution::problem) {
                return fail(
                    at(".distribution"),
                    SpecProblem::Distribution {
                        name: name(),
                        problem,
                    },
                );
            }
            if !p.name.starts_with("patient.")
                && !p.name.starts_with("script.")
                && crate::params::info(&p.name).is_none()
            {
                let suggestion = crate::suggest::closest(
                    &p.name,
                    crate::params::PARAMETERS.iter().map(|i| i.name),
                );
                return fail(
                    at(".name"),
                    SpecProblem::UnknownName {
                        name: name(),
                        suggestion,
                    },
                );
            }
            // Checked here, before any member runs, against the one list
            // the members' overrides are applied from.
            if let Some(field) = p.name.strip_prefix("patient.") {
                let known = crate::patient::numeric_patient_fields();
                if !crate::patient::numeric_patient_fields().any(|f| f == field) {
                    return fail(
                        at(".name"),
                        SpecProblem::UnknownPatientField {
                            name: name(),
                            suggestion: crate::suggest::closest(field, known),
                        },
                    );
                }
            }
        }
        match self.design {
            Design::Grid => {
                if let Some(i) = self
                    .parameters
                    .iter()
                    .position(|p| p.distribution.is_some())
                {
                    return fail(
                        format!("parameters[{i}].distribution"),
                        SpecProblem::GridDistribution,
                    );
                }
                if self.parameters.iter().any(|p| p.range.is_some()) && self.levels.unwrap_or(0) < 2
                {
                    return fail("levels".into(), SpecProblem::GridLevels);
                }
            }
            Design::Random | Design::LatinHypercube => {
                let members = self.members.unwrap_or(0);
                if members == 0 {
                    return fail("members".into(), SpecProblem::NoMembers);
                }
                if members > MAX_MEMBERS {
                    return fail("members".into(), SpecProblem::TooManyMembers { members });
                }
            }
        }
        if self.design == Design::Grid {
            // The grid's size, counted without overflow.
            let levels = self.levels.unwrap_or(2);
            let count = self.parameters.iter().try_fold(1usize, |n, p| {
                n.checked_mul(p.values.as_ref().map_or(levels, |v| v.len()))
            });
            if count.is_none_or(|n| n > MAX_MEMBERS) {
                let field = if self.parameters.iter().any(|p| p.range.is_some()) {
                    "levels"
                } else {
                    "parameters"
                };
                return fail(
                    field.into(),
                    SpecProblem::TooLargeGrid {
                        members: count.map_or_else(|| "more than 2^64".into(), |n| n.to_string()),
                    },
                );
            }
        }
        if let Some(rtol) = self.rtol {
            if !(1e-10..=1e-2).contains(&rtol) {
                return fail("rtol".into(), SpecProblem::Rtol { rtol });
            }
        }
        if !(0.0..=1.0).contains(&self.check_balance_share) {
            return fail("check_balance_share".into(), SpecProblem::BalanceShare);
        }
        let band = self.outputs.band_every_h;
        if band < 0.0 {
            return fail("outputs.band_every_h".into(), SpecProblem::OutputTime);
        }
        if !(band == 0.0 || (band.is_finite() && (1.0 / 60.0..=LONGEST_RUN_H).contains(&band))) {
            return fail(
                "outputs.band_every_h".into(),
                SpecProblem::BandInterval { value: band },
            );
        }
        if let Some(k) = self
            .outputs
            .na_at_h
            .iter()
            .position(|t| *t < 0.0 || !t.is_finite())
        {
            return fail(format!("outputs.na_at_h[{k}]"), SpecProblem::OutputTime);
        }
        if let Some(k) = self.outputs.na_at_h.iter().position(|t| *t > LONGEST_RUN_H) {
            return fail(
                format!("outputs.na_at_h[{k}]"),
                SpecProblem::OutputTimeBeyondRun {
                    time_h: self.outputs.na_at_h[k],
                },
            );
        }
        Ok(())
    }
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;

    /// A spec with a range, a list and a truncated log-normal, for the
    /// tests of this folder.
    pub(in crate::sweep) fn spec(design: &str, extra: &str) -> SweepSpec {
        let text = format!(
            "scenario: base.rhai\ndesign: {design}\nseed: 7\n{extra}parameters:\n  - name: natriuresis_gain\n    range: [8, 18]\n  - name: patient.weight_kg\n    values: [50, 60, 70]\n  - name: gfr_ml_min\n    distribution: {{ kind: log_normal, median: 90, sigma: 0.3, min: 30, max: 150 }}\n"
        );
        SweepSpec::from_yaml(&text, "s.yaml").unwrap()
    }

    #[test]
    fn bad_specs_name_the_problem() {
        let err = SweepSpec::from_yaml("scenario: b\ndesign: random\nmembers: 5\nparameters:\n  - name: natriuresis_gian\n    range: [1, 2]\n", "x.yaml")
            .unwrap_err()
            .to_string();
        assert!(
            err.contains("x.yaml") && err.contains("did you mean \"natriuresis_gain\""),
            "{err}"
        );
        let err = SweepSpec::from_yaml("scenario: b\ndesign: random\nmembers: 5\nparameters:\n  - name: gfr_ml_min\n    rnage: [1, 2]\n", "x.yaml")
            .unwrap_err()
            .to_string();
        assert!(err.contains("x.yaml:6") && err.contains("rnage"), "{err}");
        let err = SweepSpec::from_yaml("scenario: b\ndesign: random\nmembers: 5\nrtol: 0.5\nparameters:\n  - name: gfr_ml_min\n    range: [1, 2]\n", "x.yaml")
            .unwrap_err()
            .to_string();
        assert!(err.contains("x.yaml") && err.contains("rtol"), "{err}");
    }

    #[test]
    fn a_bad_field_is_named_by_its_path_in_the_spec() {
        let head = "scenario: b\ndesign: random\nmembers: 5\n";
        let ok = "  - name: gfr_ml_min\n    range: [1, 2]\n";
        let cases = [
            (
                format!("{head}parameters:\n{ok}  - name: natriuresis_gain\n    values: []\n"),
                "parameters[1].values",
                "x.yaml:8:5: parameter natriuresis_gain: values must be finite and not empty",
            ),
            (
                format!("{head}parameters:\n{ok}  - name: natriuresis_gain\n    range: [5, 20]\n  - name: kf_ml_min_mmhg\n    distribution: {{ kind: normal, mean: 90, sd: 0 }}\n"),
                "parameters[2].distribution",
                "x.yaml:10:5: parameter kf_ml_min_mmhg: normal needs sd > 0",
            ),
            (
                format!("{head}parameters:\n{ok}  - name: natriuresis_gain\n    range: [5, 20]\n{ok}"),
                "parameters[2].name",
                "x.yaml:9:5: parameter gfr_ml_min is listed twice (also as parameters[0])",
            ),
            (
                format!("{head}outputs:\n  band_every_h: .inf\nparameters:\n{ok}"),
                "outputs.band_every_h",
                "x.yaml:5:3: outputs.band_every_h: inf h; give 0 (no bands) or an interval from 1 min (0.0167 h) to 1440 h",
            ),
            (
                format!("{head}outputs:\n  band_every_h: 1e-300\nparameters:\n{ok}"),
                "outputs.band_every_h",
                "x.yaml:5:3: outputs.band_every_h: 1e-300 h; give 0 (no bands) or an interval from 1 min (0.0167 h) to 1440 h",
            ),
            (
                format!("{head}outputs:\n  na_at_h: [6, 1e300]\nparameters:\n{ok}"),
                "outputs.na_at_h[1]",
                "x.yaml:5:3: outputs: 1e300 h is beyond the longest run (60 days, 1440 h)",
            ),
            (
                format!("{head}outputs:\n  na_at_h: [6, -1]\nparameters:\n{ok}"),
                "outputs.na_at_h[1]",
                "x.yaml:5:3: outputs: times must be >= 0",
            ),
            (
                format!("scenario: b\ndesign: grid\nparameters:\n{ok}"),
                "levels",
                "x.yaml: design grid: ranges need levels >= 2",
            ),
        ];
        for (text, field, message) in cases {
            let err = SweepSpec::from_yaml(&text, "x.yaml").unwrap_err();
            assert_eq!(err.field(), Some(field), "{err}");
            assert_eq!(err.file(), "x.yaml");
            assert_eq!(err.to_string(), message);
        }
    }

    #[test]
    fn a_patient_field_is_checked_before_any_member_runs() {
        // The misspelt field is refused by the spec check, with its line,
        // a suggestion and the list the members' overrides use.
        let text = "scenario: b\ndesign: grid\nparameters:\n  - name: gfr_ml_min\n    values: [90]\n  - name: patient.water_fracction\n    values: [0.5]\n";
        let err = SweepSpec::from_yaml(text, "m.yaml").unwrap_err();
        assert_eq!(err.field(), Some("parameters[1].name"));
        let shown = err.to_string();
        assert!(
            shown.starts_with("m.yaml:6:5: parameter patient.water_fracction: not a numeric patient field (did you mean \"patient.water_fraction\"?)"),
            "{shown}"
        );
        for field in crate::patient::numeric_patient_fields() {
            assert!(shown.contains(field), "{field} listed: {shown}");
            let good = text.replace("water_fracction", field);
            assert!(SweepSpec::from_yaml(&good, "m.yaml").is_ok(), "{field}");
        }
        // A text field cannot be varied.
        let sex = text.replace("water_fracction", "sex");
        assert!(SweepSpec::from_yaml(&sex, "m.yaml").is_err());
    }

    #[test]
    fn member_counts_have_a_documented_maximum() {
        let with = |members: &str| {
            format!("scenario: b\ndesign: latin_hypercube\nmembers: {members}\nparameters:\n  - name: gfr_ml_min\n    range: [60, 120]\n")
        };
        assert!(SweepSpec::from_yaml(&with(&MAX_MEMBERS.to_string()), "h.yaml").is_ok());
        for too_many in ["4294967296", "10000001"] {
            let err = SweepSpec::from_yaml(&with(too_many), "h.yaml").unwrap_err();
            assert_eq!(err.field(), Some("members"));
            assert_eq!(
                err.to_string(),
                format!("h.yaml:3:1: members: {too_many} is more than the most one sweep runs (10000000); split a larger study into shards or several specs")
            );
        }
        // Not a whole number of members: refused by the parser, with the
        // line, before anything is drawn.
        for bad in ["1e12", "2.5", "-3", "many"] {
            let shown = SweepSpec::from_yaml(&with(bad), "h.yaml")
                .unwrap_err()
                .to_string();
            assert!(
                shown.starts_with("h.yaml:3:10: members: invalid type"),
                "{bad}: {shown}"
            );
        }
        // A grid counts its members without overflow.
        let grid = |levels: &str| {
            format!("scenario: b\ndesign: grid\nlevels: {levels}\nparameters:\n  - name: gfr_ml_min\n    range: [60, 120]\n  - name: natriuresis_gain\n    range: [8, 18]\n  - name: patient.na\n    range: [115, 125]\n")
        };
        assert!(SweepSpec::from_yaml(&grid("200"), "g.yaml").is_ok());
        let err = SweepSpec::from_yaml(&grid("4294967296"), "g.yaml").unwrap_err();
        assert_eq!(err.field(), Some("levels"));
        assert!(
            err.to_string()
                .starts_with("g.yaml:3:1: design grid: more than 2^64 members"),
            "{err}"
        );
        let err = SweepSpec::from_yaml(&grid("216"), "g.yaml").unwrap_err();
        assert!(err.to_string().contains("10077696 members"), "{err}");
    }
}
