//! Parameter sweeps and uncertainty over patient populations.
//!
//! A [`SweepSpec`] (YAML) names a base scenario, the parameters to vary
//! (patient fields as `patient.<field>` or engine parameters by name), each
//! with a fixed list, a range or a distribution, a design (full grid,
//! random, Latin hypercube), a member count, a seed, the outputs to keep,
//! and optionally the solver's relative tolerance for every member.
//! [`SweepSpec::members`] expands it into [`Member`]s deterministically; [`run_sweep`] runs them on worker threads (one
//! simulation per member, one [`MemberRunner`] per worker), streams one CSV
//! row per member in member order, resumes an interrupted output file
//! without losing or duplicating members, and runs a deterministic shard
//! (`K/N`) of the members when asked. [`Summary`] reduces a result file to
//! percentile bands, limit-crossing probabilities (any limit, and each rule
//! of the scenario's guideline set) and a sensitivity ranking with memory
//! independent of the member count.

use crate::error::InputError;
use crate::limits::Severity;
use crate::numeric::gcd;
use crate::trajectory::Trajectory;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::io::{BufRead, BufReader, Write};
use std::path::Path;

// ---------------------------------------------------------------------------
// Random numbers and distributions
// ---------------------------------------------------------------------------

/// SplitMix64: a small, fast generator with a 64-bit state (Steele, Lea &
/// Flood, OOPSLA 2014). Deterministic across platforms; used to seed and to
/// draw uniform numbers.
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    /// A generator for a seed.
    pub fn new(seed: u64) -> Self {
        SplitMix64(seed)
    }

    /// Next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform number in the open interval (0, 1).
    pub fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }
}

/// Standard normal cumulative distribution, via the complementary error
/// function (W. J. Cody's rational approximations as given in Numerical
/// Recipes, 3rd ed., `erfc` to ~1.2e-7 relative).
pub fn normal_cdf(x: f64) -> f64 {
    0.5 * erfc(-x / std::f64::consts::SQRT_2)
}

fn erfc(x: f64) -> f64 {
    // Numerical Recipes (3rd ed.) erfcc: Chebyshev fit, fractional error < 1.2e-7.
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let r = t
        * (-z * z - 1.265_512_23
            + t * (1.000_023_68
                + t * (0.374_091_96
                    + t * (0.096_784_18
                        + t * (-0.186_288_06
                            + t * (0.278_868_07
                                + t * (-1.135_203_98
                                    + t * (1.488_515_87
                                        + t * (-0.822_152_23 + t * 0.170_872_77)))))))))
            .exp();
    if x >= 0.0 {
        r
    } else {
        2.0 - r
    }
}

/// Inverse of the standard normal cumulative distribution (Acklam's
/// algorithm, relative error < 1.15e-9).
pub fn normal_quantile(p: f64) -> f64 {
    let p = p.clamp(1e-300, 1.0 - 1e-16);
    const A: [f64; 6] = [
        -3.969_683_028_665_376e1,
        2.209_460_984_245_205e2,
        -2.759_285_104_469_687e2,
        1.383_577_518_672_69e2,
        -3.066_479_806_614_716e1,
        2.506_628_277_459_239,
    ];
    const B: [f64; 5] = [
        -5.447_609_879_822_406e1,
        1.615_858_368_580_409e2,
        -1.556_989_798_598_866e2,
        6.680_131_188_771_972e1,
        -1.328_068_155_288_572e1,
    ];
    const C: [f64; 6] = [
        -7.784_894_002_430_293e-3,
        -3.223_964_580_411_365e-1,
        -2.400_758_277_161_838,
        -2.549_732_539_343_734,
        4.374_664_141_464_968,
        2.938_163_982_698_783,
    ];
    const D: [f64; 4] = [
        7.784_695_709_041_462e-3,
        3.224_671_290_700_398e-1,
        2.445_134_137_142_996,
        3.754_408_661_907_416,
    ];
    let low = 0.02425;
    if p < low {
        let q = (-2.0 * p.ln()).sqrt();
        (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5])
            / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1.0)
    } else if p <= 1.0 - low {
        let q = p - 0.5;
        let r = q * q;
        (((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q
            / (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1.0)
    } else {
        let q = (-2.0 * (1.0 - p).ln()).sqrt();
        -(((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5])
            / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1.0)
    }
}

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

    fn check(&self, name: &str) -> Result<(), String> {
        let bad = |why: &str| Err(format!("parameter {name}: {why}"));
        match *self {
            Distribution::Uniform { min, max }
                if !(min.is_finite() && max.is_finite() && min <= max) =>
            {
                bad("uniform needs finite min <= max")
            }
            Distribution::Normal { sd, .. } if !(sd.is_finite() && sd > 0.0) => {
                bad("normal needs sd > 0")
            }
            Distribution::LogNormal { median, sigma, .. } if !(median > 0.0 && sigma > 0.0) => {
                bad("log_normal needs median > 0 and sigma > 0")
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
            } if a >= b => bad("truncation needs min < max"),
            _ => Ok(()),
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
    /// engine's, [`crate::simulate::Tolerances::default`]). A sweep over
    /// uncertain parameters rarely needs sodium to 1e-6: a looser tolerance
    /// buys members per second.
    #[serde(default)]
    pub rtol: Option<f64>,
}

fn default_balance_share() -> f64 {
    0.01
}

/// One member: its index and the value of each varied parameter (in spec
/// order).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Member {
    /// Index, 0-based.
    pub index: usize,
    /// Values, in the order of the spec's parameters.
    pub values: Vec<f64>,
}

fn spec_error(file: &str, message: String) -> InputError {
    InputError::DataFile {
        file: file.to_string(),
        location: None,
        message,
    }
}

impl SweepSpec {
    /// Parse and check a spec; errors name the file, line and field.
    pub fn from_yaml(text: &str, file: &str) -> Result<Self, InputError> {
        let spec: SweepSpec = serde_yaml::from_str(text).map_err(|e| InputError::DataFile {
            file: file.to_string(),
            location: e.location().map(|l| (l.line(), l.column())),
            message: e.to_string(),
        })?;
        spec.check(file)?;
        Ok(spec)
    }

    fn check(&self, file: &str) -> Result<(), InputError> {
        if self.parameters.is_empty() {
            return Err(spec_error(
                file,
                "parameters: give at least one parameter to vary".into(),
            ));
        }
        for p in &self.parameters {
            let given = [
                p.values.is_some(),
                p.range.is_some(),
                p.distribution.is_some(),
            ]
            .iter()
            .filter(|&&b| b)
            .count();
            if given != 1 {
                return Err(spec_error(
                    file,
                    format!(
                        "parameter {}: give exactly one of values, range, distribution",
                        p.name
                    ),
                ));
            }
            if let Some(v) = &p.values {
                if v.is_empty() || v.iter().any(|x| !x.is_finite()) {
                    return Err(spec_error(
                        file,
                        format!("parameter {}: values must be finite and not empty", p.name),
                    ));
                }
            }
            if let Some([a, b]) = p.range {
                if !(a.is_finite() && b.is_finite() && a <= b) {
                    return Err(spec_error(
                        file,
                        format!("parameter {}: range needs finite [min, max]", p.name),
                    ));
                }
            }
            if let Some(d) = &p.distribution {
                d.check(&p.name).map_err(|m| spec_error(file, m))?;
            }
            if !p.name.starts_with("patient.")
                && !p.name.starts_with("script.")
                && crate::params::info(&p.name).is_none()
            {
                let suggestion = crate::suggest::closest(
                    &p.name,
                    crate::params::PARAMETERS.iter().map(|i| i.name),
                );
                return Err(spec_error(
                    file,
                    format!(
                        "parameter {}: not an engine parameter, patient.<field> or script.<setting>{}",
                        p.name,
                        suggestion
                            .map(|s| format!(" (did you mean \"{s}\"?)"))
                            .unwrap_or_default()
                    ),
                ));
            }
        }
        match self.design {
            Design::Grid => {
                if self.parameters.iter().any(|p| p.distribution.is_some()) {
                    return Err(spec_error(
                        file,
                        "design grid: use values or range, not distributions".into(),
                    ));
                }
                if self.parameters.iter().any(|p| p.range.is_some()) && self.levels.unwrap_or(0) < 2
                {
                    return Err(spec_error(
                        file,
                        "design grid: ranges need levels >= 2".into(),
                    ));
                }
            }
            Design::Random | Design::LatinHypercube => {
                if self.members.unwrap_or(0) == 0 {
                    return Err(spec_error(
                        file,
                        "members: give the number of members (> 0)".into(),
                    ));
                }
            }
        }
        if let Some(rtol) = self.rtol {
            if !(1e-10..=1e-2).contains(&rtol) {
                return Err(spec_error(
                    file,
                    format!("rtol: {rtol} is outside 1e-10..=1e-2"),
                ));
            }
        }
        if !(0.0..=1.0).contains(&self.check_balance_share) {
            return Err(spec_error(
                file,
                "check_balance_share must lie in 0..=1".into(),
            ));
        }
        if self.outputs.band_every_h < 0.0
            || self
                .outputs
                .na_at_h
                .iter()
                .any(|t| *t < 0.0 || !t.is_finite())
        {
            return Err(spec_error(file, "outputs: times must be >= 0".into()));
        }
        Ok(())
    }

    /// Number of members the design gives.
    pub fn member_count(&self) -> usize {
        match self.design {
            Design::Grid => self
                .parameters
                .iter()
                .map(|p| {
                    p.values
                        .as_ref()
                        .map_or(self.levels.unwrap_or(2), |v| v.len())
                })
                .product(),
            _ => self.members.unwrap_or(0),
        }
    }

    /// Member `index` (deterministic: depends only on the spec and index).
    pub fn member(&self, index: usize) -> Member {
        let values = match self.design {
            Design::Grid => {
                let mut rest = index;
                self.parameters
                    .iter()
                    .map(|p| {
                        let levels = p
                            .values
                            .as_ref()
                            .map_or(self.levels.unwrap_or(2), |v| v.len());
                        let k = rest % levels;
                        rest /= levels;
                        match (&p.values, p.range) {
                            (Some(v), _) => v[k],
                            (None, Some([a, b])) => a + (b - a) * k as f64 / (levels - 1) as f64,
                            _ => f64::NAN,
                        }
                    })
                    .collect()
            }
            Design::Random => {
                let mut rng =
                    SplitMix64::new(self.seed ^ (index as u64).wrapping_mul(0xA24B_AED4_963E_E407));
                self.parameters
                    .iter()
                    .map(|p| self.draw(p, rng.uniform()))
                    .collect()
            }
            Design::LatinHypercube => {
                let n = self.member_count();
                self.parameters
                    .iter()
                    .enumerate()
                    .map(|(j, p)| {
                        // Stratum of this member for parameter j: a seeded
                        // permutation of 0..n (Feistel-free: a random-key
                        // rank computed on the fly would be O(n) per member,
                        // so the permutation is an affine map mod n with a
                        // multiplier coprime to n, then jitter within the
                        // stratum).
                        let mut key = SplitMix64::new(self.seed ^ ((j as u64 + 1) << 32));
                        let stratum = affine_permutation(index, n, key.next_u64(), key.next_u64());
                        let mut jitter = SplitMix64::new(
                            self.seed
                                ^ (index as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)
                                ^ (j as u64).wrapping_mul(0xD1B5_4A32_D192_ED03),
                        );
                        let u = (stratum as f64 + jitter.uniform()) / n as f64;
                        self.draw(p, u)
                    })
                    .collect()
            }
        };
        Member { index, values }
    }

    fn draw(&self, p: &SweepParameter, u: f64) -> f64 {
        match (&p.values, p.range, &p.distribution) {
            (Some(v), _, _) => v[((u * v.len() as f64) as usize).min(v.len() - 1)],
            (None, Some([a, b]), _) => a + u * (b - a),
            (None, None, Some(d)) => d.quantile(u),
            _ => f64::NAN,
        }
    }
}

/// A permutation of `0..n`: `(a·i + b) mod n` with `a` made coprime to `n`.
fn affine_permutation(i: usize, n: usize, a: u64, b: u64) -> usize {
    if n <= 1 {
        return 0;
    }
    let n64 = n as u64;
    let mut a = a % n64;
    if a == 0 {
        a = 1;
    }
    while gcd(a, n64) != 1 {
        a = (a + 1) % n64;
        if a == 0 {
            a = 1;
        }
    }
    ((a as u128 * i as u128 + (b % n64) as u128) % n as u128) as usize
}

// ---------------------------------------------------------------------------
// Running members
// ---------------------------------------------------------------------------

/// Runs one member: applies the overrides `(name, value)` to the base
/// scenario and simulates it. One runner lives on each worker thread.
pub trait MemberRunner {
    /// Simulate the base scenario with these overrides.
    fn run(&mut self, overrides: &[(String, f64)]) -> Result<Trajectory, String>;
}

/// Set a numeric patient field by name (`weight_kg`, `na`, ...).
pub fn set_patient_field(
    patient: &mut crate::patient::Patient,
    field: &str,
    value: f64,
) -> Result<(), String> {
    let slot: &mut Option<f64> = match field {
        "age_years" => {
            patient.age_years = value;
            return Ok(());
        }
        "weight_kg" => {
            patient.weight_kg = value;
            return Ok(());
        }
        "height_cm" => &mut patient.height_cm,
        "water_fraction" => &mut patient.water_fraction,
        "na" => &mut patient.na,
        "k" => &mut patient.k,
        "glucose_mmol_l" => &mut patient.glucose_mmol_l,
        "glucose_mg_dl" => &mut patient.glucose_mg_dl,
        "urea_mmol_l" => &mut patient.urea_mmol_l,
        "bun_mg_dl" => &mut patient.bun_mg_dl,
        "albumin_g_l" => &mut patient.albumin_g_l,
        "hematocrit" => &mut patient.hematocrit,
        other => {
            let known = [
                "age_years",
                "weight_kg",
                "height_cm",
                "water_fraction",
                "na",
                "k",
                "glucose_mmol_l",
                "glucose_mg_dl",
                "urea_mmol_l",
                "bun_mg_dl",
                "albumin_g_l",
                "hematocrit",
            ];
            return Err(format!(
                "patient.{other} is not a numeric patient field{}",
                crate::suggest::closest(other, known)
                    .map(|s| format!(" (did you mean \"patient.{s}\"?)"))
                    .unwrap_or_default()
            ));
        }
    };
    *slot = Some(value);
    Ok(())
}

/// Apply sweep overrides to a plan: `patient.<field>` to the patient,
/// other names as parameter overrides.
pub fn apply_overrides(
    plan: &mut crate::simulate::Plan,
    overrides: &[(String, f64)],
) -> Result<(), String> {
    for (name, value) in overrides {
        if name.starts_with("script.") {
            // Script settings are applied when the script is loaded.
            continue;
        }
        match name.strip_prefix("patient.") {
            Some(field) => set_patient_field(&mut plan.patient, field, *value)?,
            None => {
                plan.params
                    .clone()
                    .set(name, *value)
                    .map_err(|e| e.to_string())?;
                plan.overrides.push((name.clone(), *value));
            }
        }
    }
    Ok(())
}

/// A runner for a base scenario script: each member is the script loaded
/// afresh (with the member's `script.<name>` settings), its plan changed by
/// the member's other overrides, run with the script's rules and
/// expectations.
pub struct ScenarioRunner {
    /// The base scenario, loaded once per worker.
    pub scenario: crate::scenario::Scenario,
    /// The spec's solver tolerance, if it sets one ([`SweepSpec::rtol`]).
    pub rtol: Option<f64>,
}

impl MemberRunner for ScenarioRunner {
    fn run(&mut self, overrides: &[(String, f64)]) -> Result<Trajectory, String> {
        let settings: Vec<(String, f64)> = overrides
            .iter()
            .filter_map(|(n, v)| n.strip_prefix("script.").map(|s| (s.to_string(), *v)))
            .collect();
        let reloaded;
        let scenario = if settings.is_empty() {
            &self.scenario
        } else {
            reloaded = self
                .scenario
                .reloaded(&settings)
                .map_err(|e| e.to_string())?;
            &reloaded
        };
        let mut plan = scenario.plan().clone();
        apply_overrides(&mut plan, overrides)?;
        if let Some(rtol) = self.rtol {
            plan.tolerances.rtol = rtol;
        }
        scenario
            .run_with_plan(plan)
            .map(|r| r.trajectory)
            .map_err(|e| e.to_string())
    }
}

/// A runner for a base [`crate::Plan`] without rules.
#[derive(Debug, Clone)]
pub struct PlanRunner {
    /// The base plan.
    pub base: crate::simulate::Plan,
}

impl MemberRunner for PlanRunner {
    fn run(&mut self, overrides: &[(String, f64)]) -> Result<Trajectory, String> {
        if let Some((name, _)) = overrides.iter().find(|(n, _)| n.starts_with("script.")) {
            return Err(format!(
                "{name}: script settings need a scenario script as the base"
            ));
        }
        let mut plan = self.base.clone();
        apply_overrides(&mut plan, overrides)?;
        crate::simulate::Simulation::new(plan)
            .and_then(|s| s.run())
            .map_err(|e| e.to_string())
    }
}

/// Which slice of the members to run: member `i` belongs to shard
/// `i mod count` (0-based `index`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// This shard, 0-based.
    pub index: usize,
    /// Number of shards.
    pub count: usize,
}

impl Shard {
    /// Every member.
    pub const ALL: Shard = Shard { index: 0, count: 1 };

    /// Parse `K/N` with 1-based K (as a person writes it).
    pub fn parse(text: &str) -> Result<Self, InputError> {
        let bad = || InputError::BadChoice {
            field: "shard".into(),
            value: text.into(),
            expected: "K/N with 1 <= K <= N".into(),
        };
        let (k, n) = text.split_once('/').ok_or_else(bad)?;
        let k: usize = k.trim().parse().map_err(|_| bad())?;
        let n: usize = n.trim().parse().map_err(|_| bad())?;
        if n == 0 || k == 0 || k > n {
            return Err(bad());
        }
        Ok(Shard {
            index: k - 1,
            count: n,
        })
    }

    /// Whether member `i` is in this shard.
    pub fn contains(&self, i: usize) -> bool {
        i % self.count == self.index
    }
}

/// The leading columns of a result file: `member` and the varied
/// parameters' names (the design, as `tidewater sweep --design-only`
/// prints it).
pub fn design_header(spec: &SweepSpec) -> Vec<String> {
    let mut h = vec!["member".to_string()];
    h.extend(spec.parameters.iter().map(|p| p.name.clone()));
    h
}

/// The leading cells of a member's row, under [`design_header`].
pub fn design_cells(member: &Member) -> Vec<String> {
    let mut cells = vec![member.index.to_string()];
    cells.extend(member.values.iter().map(|v| fmt_val(*v)));
    cells
}

/// The header of a result file for a spec.
pub fn result_header(spec: &SweepSpec, duration_h: f64) -> Vec<String> {
    let mut h = design_header(spec);
    h.push("status".into());
    for t in &spec.outputs.na_at_h {
        h.push(format!("na_at_{}h", fmt_num(*t)));
    }
    if spec.outputs.largest_rise_24h {
        h.push("largest_rise_24h".into());
    }
    if spec.outputs.largest_rise_48h {
        h.push("largest_rise_48h".into());
    }
    if spec.outputs.min_brain_volume_index {
        h.push("min_brain_volume_index".into());
    }
    if spec.outputs.flags {
        h.push("limit_crossed".into());
        h.push("caution_crossed".into());
        h.push("limits_crossed".into());
    }
    h.push("balance_residual".into());
    for t in band_times(spec, duration_h) {
        h.push(format!("band_na_{}h", fmt_num(t)));
    }
    h.push("error".into());
    h
}

fn band_times(spec: &SweepSpec, duration_h: f64) -> Vec<f64> {
    let dt = spec.outputs.band_every_h;
    if dt <= 0.0 {
        return Vec::new();
    }
    let n = (duration_h / dt + 1e-9).floor() as usize;
    (0..=n).map(|k| k as f64 * dt).collect()
}

fn fmt_num(x: f64) -> String {
    if x == x.round() && x.abs() < 1e15 {
        format!("{}", x as i64)
    } else {
        format!("{x}")
    }
}

fn fmt_val(x: f64) -> String {
    if x.is_finite() {
        format!("{x:.6}")
    } else {
        String::new()
    }
}

/// Whether member `i` gets its mass balance checked (a deterministic
/// share of the members).
pub fn checks_balance(spec: &SweepSpec, i: usize) -> bool {
    let mut r =
        SplitMix64::new(spec.seed ^ 0x5EED_BA1A ^ (i as u64).wrapping_mul(0x2545_F491_4F6C_DD1D));
    r.uniform() < spec.check_balance_share
}

/// One CSV row of results for a member.
pub fn result_row(
    spec: &SweepSpec,
    member: &Member,
    duration_h: f64,
    outcome: &Result<Trajectory, String>,
) -> String {
    let mut cells = design_cells(member);
    let n_out = result_header(spec, duration_h).len() - cells.len() - 1;
    match outcome {
        Ok(traj) => {
            cells.push("ok".into());
            for t in &spec.outputs.na_at_h {
                cells.push(fmt_val(crate::trajectory::interpolate(
                    &traj.times(),
                    &traj.sodium(),
                    *t,
                )));
            }
            if spec.outputs.largest_rise_24h {
                cells.push(fmt_val(traj.largest_rise(24.0).0));
            }
            if spec.outputs.largest_rise_48h {
                cells.push(fmt_val(traj.largest_rise(48.0).0));
            }
            if spec.outputs.min_brain_volume_index {
                let m = traj
                    .samples
                    .iter()
                    .map(|s| s.obs.brain_volume_index)
                    .fold(f64::INFINITY, f64::min);
                cells.push(fmt_val(m));
            }
            if spec.outputs.flags {
                let limit = traj
                    .flags
                    .iter()
                    .any(|f| f.rule.severity == Severity::Limit);
                let caution = traj
                    .flags
                    .iter()
                    .any(|f| f.rule.severity == Severity::Caution);
                cells.push(u8::from(limit).to_string());
                cells.push(u8::from(caution).to_string());
                // Which rules of the scenario's guideline set were crossed:
                // their numbers (1-based, in the set's order), space-separated.
                let crossed: Vec<String> = traj
                    .limits
                    .rules()
                    .iter()
                    .enumerate()
                    .filter(|(_, r)| traj.flags.iter().any(|f| f.rule == **r))
                    .map(|(i, _)| (i + 1).to_string())
                    .collect();
                cells.push(crossed.join(" "));
            }
            cells.push(if checks_balance(spec, member.index) {
                format!("{:.3e}", traj.max_balance_residual())
            } else {
                String::new()
            });
            let times = traj.times();
            let na = traj.sodium();
            for t in band_times(spec, duration_h) {
                cells.push(fmt_val(crate::trajectory::interpolate(&times, &na, t)));
            }
            cells.push(String::new());
        }
        Err(e) => {
            cells.push("failed".into());
            cells.extend(std::iter::repeat_n(String::new(), n_out - 1));
            cells.push(csv_quote(e));
        }
    }
    cells.join(",")
}

fn csv_quote(s: &str) -> String {
    let one_line = s.replace(['\n', '\r'], " ");
    format!("\"{}\"", one_line.replace('"', "\"\""))
}

/// Members already present in a result file (for resuming): the indices
/// of complete rows. A partial last line (the run was killed while writing
/// it) is dropped and the file truncated to the last complete row.
pub fn completed_members(path: &Path, header: &[String]) -> Result<Vec<usize>, InputError> {
    let file_name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| spec_error(&file_name, e.to_string()))?;
    let mut lines = text.split_inclusive('\n');
    let first = lines.next().unwrap_or("");
    if first.trim_end() != header.join(",") {
        return Err(spec_error(
            &file_name,
            "the existing result file has another header (different spec): remove it or choose another output".into(),
        ));
    }
    let mut done = Vec::new();
    let mut keep = first.len();
    for line in lines {
        if !line.ends_with('\n') {
            break;
        }
        let idx: usize = line
            .split(',')
            .next()
            .and_then(|c| c.parse().ok())
            .ok_or_else(|| spec_error(&file_name, format!("corrupt row after byte {keep}")))?;
        done.push(idx);
        keep += line.len();
    }
    if keep < text.len() {
        let f = std::fs::OpenOptions::new()
            .write(true)
            .open(path)
            .map_err(|e| spec_error(&file_name, e.to_string()))?;
        f.set_len(keep as u64)
            .map_err(|e| spec_error(&file_name, e.to_string()))?;
    }
    Ok(done)
}

/// Progress of a running sweep, for a progress bar.
pub trait Progress: Sync {
    /// `done` more members finished.
    fn advance(&self, done: usize);
}

impl Progress for () {
    fn advance(&self, _done: usize) {}
}

/// Run (or resume) a sweep into `out` (CSV). Members of `shard` not yet in
/// the file are run on `threads` workers, each with its own runner from
/// `make_runner`; rows are written in member order as they complete, so an
/// interrupted run can resume. Returns the number of members run now.
pub fn run_sweep<R, F>(
    spec: &SweepSpec,
    duration_h: f64,
    out: &Path,
    shard: Shard,
    threads: usize,
    make_runner: F,
    progress: &dyn Progress,
) -> Result<usize, InputError>
where
    R: MemberRunner,
    F: Fn() -> Result<R, String> + Sync,
{
    let header = result_header(spec, duration_h);
    let file_name = out.display().to_string();
    let done: std::collections::HashSet<usize> = if out.exists() {
        completed_members(out, &header)?.into_iter().collect()
    } else {
        std::fs::write(out, format!("{}\n", header.join(",")))
            .map_err(|e| spec_error(&file_name, e.to_string()))?;
        Default::default()
    };
    let todo: Vec<usize> = (0..spec.member_count())
        .filter(|i| shard.contains(*i) && !done.contains(i))
        .collect();
    if todo.is_empty() {
        return Ok(0);
    }
    let file = std::fs::OpenOptions::new()
        .append(true)
        .open(out)
        .map_err(|e| spec_error(&file_name, e.to_string()))?;
    let writer = std::sync::Mutex::new(OrderedWriter {
        out: std::io::BufWriter::new(file),
        next: 0,
        pending: BTreeMap::new(),
    });
    let next_job = std::sync::atomic::AtomicUsize::new(0);
    let threads = threads.max(1).min(todo.len());
    let failure: std::sync::Mutex<Option<String>> = std::sync::Mutex::new(None);
    std::thread::scope(|scope| {
        for _ in 0..threads {
            scope.spawn(|| {
                let mut runner = match make_runner() {
                    Ok(r) => r,
                    Err(e) => {
                        *failure.lock().expect("lock") = Some(e);
                        return;
                    }
                };
                loop {
                    let k = next_job.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                    if k >= todo.len() || failure.lock().expect("lock").is_some() {
                        break;
                    }
                    let member = spec.member(todo[k]);
                    let overrides: Vec<(String, f64)> = spec
                        .parameters
                        .iter()
                        .zip(member.values.iter())
                        .map(|(p, v)| (p.name.clone(), *v))
                        .collect();
                    let outcome = runner.run(&overrides);
                    let row = result_row(spec, &member, duration_h, &outcome);
                    let mut w = writer.lock().expect("lock");
                    if let Err(e) = w.put(k, row) {
                        *failure.lock().expect("lock") = Some(e.to_string());
                        break;
                    }
                    drop(w);
                    progress.advance(1);
                }
            });
        }
    });
    if let Some(e) = failure.into_inner().expect("lock") {
        return Err(spec_error(&file_name, e));
    }
    let mut w = writer.into_inner().expect("lock");
    w.out
        .flush()
        .map_err(|e| spec_error(&file_name, e.to_string()))?;
    Ok(todo.len())
}

/// Writes rows in job order even when workers finish out of order.
struct OrderedWriter<W: Write> {
    out: W,
    next: usize,
    pending: BTreeMap<usize, String>,
}

impl<W: Write> OrderedWriter<W> {
    fn put(&mut self, k: usize, row: String) -> std::io::Result<()> {
        self.pending.insert(k, row);
        while let Some(row) = self.pending.remove(&self.next) {
            self.out.write_all(row.as_bytes())?;
            self.out.write_all(b"\n")?;
            self.next += 1;
        }
        if self.pending.is_empty() {
            self.out.flush()?;
        }
        Ok(())
    }
}

// ---------------------------------------------------------------------------
// Fingerprints: a result file is resumed or merged only with rows of the
// same spec, scenario and engine
// ---------------------------------------------------------------------------

/// A stable fingerprint of everything that decides a sweep's rows: the
/// spec, the base scenario's text and the engine's version (64-bit FNV-1a,
/// hex). The header alone cannot tell a changed range or seed.
pub fn fingerprint(spec: &SweepSpec, scenario_source: &str) -> String {
    let spec_json = serde_json::to_string(spec).unwrap_or_default();
    let text = format!(
        "{spec_json}\n{scenario_source}\n{}",
        env!("CARGO_PKG_VERSION")
    );
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

/// The file beside a result file that holds its fingerprint
/// (`results.csv.fingerprint`).
pub fn fingerprint_path(out: &Path) -> std::path::PathBuf {
    let mut name = out.file_name().unwrap_or_default().to_os_string();
    name.push(".fingerprint");
    out.with_file_name(name)
}

fn read_fingerprint(out: &Path) -> Result<Option<String>, InputError> {
    let side = fingerprint_path(out);
    match std::fs::read_to_string(&side) {
        Ok(t) => Ok(Some(t.trim().to_string())),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(None),
        Err(e) => Err(spec_error(&side.display().to_string(), e.to_string())),
    }
}

fn write_fingerprint(out: &Path, fingerprint: &str) -> Result<(), InputError> {
    let side = fingerprint_path(out);
    std::fs::write(&side, format!("{fingerprint}\n"))
        .map_err(|e| spec_error(&side.display().to_string(), e.to_string()))
}

/// Before a sweep writes `out`: a new result file gets the fingerprint
/// beside it; an existing one (a run to resume) must carry the same one,
/// so that rows of another spec, scenario or engine are never mixed in.
pub fn claim_output(out: &Path, fingerprint: &str) -> Result<(), InputError> {
    let name = out.display().to_string();
    if !out.exists() {
        return write_fingerprint(out, fingerprint);
    }
    match read_fingerprint(out)? {
        Some(f) if f == fingerprint => Ok(()),
        Some(f) => Err(spec_error(
            &name,
            format!(
                "the existing result file was written for another spec, scenario or engine version (fingerprint {f}, now {fingerprint}): remove it or choose another output"
            ),
        )),
        None => Err(spec_error(
            &name,
            format!(
                "the existing result file has no {} beside it, so it cannot be told to belong to this spec: remove it or choose another output",
                fingerprint_path(out)
                    .file_name()
                    .unwrap_or_default()
                    .to_string_lossy()
            ),
        )),
    }
}

/// Join shard result files into one, rows in member order. The result is
/// byte-identical to an unsharded run of the same spec. Shards must carry
/// the same fingerprint (or none of them one); the merged file gets it.
pub fn merge(inputs: &[&Path], out: &Path) -> Result<usize, InputError> {
    let mut fingerprints = Vec::with_capacity(inputs.len());
    for path in inputs {
        fingerprints.push(read_fingerprint(path)?);
    }
    let fingerprint = match fingerprints.first() {
        Some(first) => {
            if let Some((path, other)) = inputs.iter().zip(&fingerprints).find(|(_, f)| *f != first)
            {
                let show = |f: &Option<String>| f.clone().unwrap_or_else(|| "none".into());
                return Err(spec_error(
                    &path.display().to_string(),
                    format!(
                        "this shard's fingerprint ({}) differs from the first shard's ({}): the shards come from different specs, scenarios or engine versions",
                        show(other),
                        show(first)
                    ),
                ));
            }
            first.clone()
        }
        None => None,
    };
    let mut header: Option<String> = None;
    let mut rows: BTreeMap<usize, String> = BTreeMap::new();
    for path in inputs {
        let name = path.display().to_string();
        let f = std::fs::File::open(path).map_err(|e| spec_error(&name, e.to_string()))?;
        let mut lines = BufReader::new(f).lines();
        let h = lines
            .next()
            .transpose()
            .map_err(|e| spec_error(&name, e.to_string()))?
            .ok_or_else(|| spec_error(&name, "empty result file".into()))?;
        match &header {
            None => header = Some(h),
            Some(prev) if *prev != h => {
                return Err(spec_error(
                    &name,
                    "header differs from the first shard (different spec)".into(),
                ))
            }
            _ => {}
        }
        for (n, line) in lines.enumerate() {
            let line = line.map_err(|e| spec_error(&name, e.to_string()))?;
            let idx: usize = line
                .split(',')
                .next()
                .and_then(|c| c.parse().ok())
                .ok_or_else(|| spec_error(&name, format!("line {}: no member index", n + 2)))?;
            if rows.insert(idx, line).is_some() {
                return Err(spec_error(
                    &name,
                    format!("member {idx} appears in more than one shard"),
                ));
            }
        }
    }
    let header = header.ok_or_else(|| spec_error("merge", "no input files".into()))?;
    let name = out.display().to_string();
    // Written whole or not at all: a partial file beside `out`, renamed
    // into place once complete.
    let mut partial_name = out.file_name().unwrap_or_default().to_os_string();
    partial_name.push(format!(".partial-{}", std::process::id()));
    let partial = out.with_file_name(partial_name);
    let written = (|| -> std::io::Result<()> {
        let mut w = std::io::BufWriter::new(std::fs::File::create(&partial)?);
        writeln!(w, "{header}")?;
        for row in rows.values() {
            writeln!(w, "{row}")?;
        }
        w.flush()?;
        std::fs::rename(&partial, out)
    })();
    if let Err(e) = written {
        let _ = std::fs::remove_file(&partial);
        return Err(spec_error(&name, e.to_string()));
    }
    let side = fingerprint_path(out);
    match fingerprint {
        Some(f) => write_fingerprint(out, &f)?,
        None => {
            if side.exists() {
                std::fs::remove_file(&side)
                    .map_err(|e| spec_error(&side.display().to_string(), e.to_string()))?;
            }
        }
    }
    Ok(rows.len())
}

// ---------------------------------------------------------------------------
// Summaries with memory independent of the member count
// ---------------------------------------------------------------------------

/// A histogram on fixed bins, for percentiles in constant memory.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Histogram {
    lo: f64,
    width: f64,
    counts: Vec<u64>,
    below: u64,
    above: u64,
    n: u64,
}

impl Histogram {
    /// Bins of `width` from `lo` to `hi`.
    pub fn new(lo: f64, hi: f64, width: f64) -> Self {
        let bins = ((hi - lo) / width).ceil() as usize;
        Histogram {
            lo,
            width,
            counts: vec![0; bins],
            below: 0,
            above: 0,
            n: 0,
        }
    }

    /// Add a value.
    pub fn add(&mut self, x: f64) {
        if !x.is_finite() {
            return;
        }
        self.n += 1;
        if x < self.lo {
            self.below += 1;
            return;
        }
        let k = ((x - self.lo) / self.width) as usize;
        match self.counts.get_mut(k) {
            Some(c) => *c += 1,
            None => self.above += 1,
        }
    }

    /// Counts below each bin (for [`Histogram::mid_rank`]): entry `k` is
    /// the number of values below bin `k`.
    pub fn cumulative(&self) -> Vec<u64> {
        let mut out = Vec::with_capacity(self.counts.len() + 1);
        let mut seen = self.below;
        for c in &self.counts {
            out.push(seen);
            seen += c;
        }
        out.push(seen);
        out
    }

    /// The mid-rank of `x` among the values added, as a fraction (0–1):
    /// values below its bin plus half of those in it, over all values.
    /// Values in one bin tie (the bins are the resolution). `cumulative` is
    /// [`Histogram::cumulative`].
    pub fn mid_rank(&self, cumulative: &[u64], x: f64) -> f64 {
        if self.n == 0 || !x.is_finite() {
            return f64::NAN;
        }
        let n = self.n as f64;
        if x < self.lo {
            return 0.5 * self.below as f64 / n;
        }
        let k = ((x - self.lo) / self.width) as usize;
        match self.counts.get(k) {
            Some(c) => (cumulative[k] as f64 + 0.5 * *c as f64) / n,
            None => (n - 0.5 * self.above as f64) / n,
        }
    }

    /// The `q`-quantile (0–1), to within one bin width (bin midpoint).
    pub fn quantile(&self, q: f64) -> f64 {
        if self.n == 0 {
            return f64::NAN;
        }
        let target = (q * self.n as f64).ceil().max(1.0) as u64;
        let mut seen = self.below;
        if seen >= target {
            return self.lo;
        }
        for (k, c) in self.counts.iter().enumerate() {
            seen += c;
            if seen >= target {
                return self.lo + (k as f64 + 0.5) * self.width;
            }
        }
        self.lo + self.counts.len() as f64 * self.width
    }
}

/// Running moments of (x, y) pairs, for a Pearson correlation in constant
/// memory; fed with ranks it gives the Spearman correlation of
/// [`Summary::sensitivity_by_output`].
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Moments {
    n: f64,
    sx: f64,
    sy: f64,
    sxx: f64,
    syy: f64,
    sxy: f64,
}

impl Moments {
    fn add(&mut self, x: f64, y: f64) {
        self.n += 1.0;
        self.sx += x;
        self.sy += y;
        self.sxx += x * x;
        self.syy += y * y;
        self.sxy += x * y;
    }

    /// Pearson correlation.
    pub fn correlation(&self) -> f64 {
        let cov = self.sxy / self.n - self.sx * self.sy / (self.n * self.n);
        let vx = self.sxx / self.n - (self.sx / self.n).powi(2);
        let vy = self.syy / self.n - (self.sy / self.n).powi(2);
        if vx <= 0.0 || vy <= 0.0 {
            0.0
        } else {
            cov / (vx * vy).sqrt()
        }
    }
}

/// The reduction of a result file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Members read.
    pub members: usize,
    /// Members whose run failed.
    pub failed: usize,
    /// Band times, h.
    pub band_times_h: Vec<f64>,
    /// Percentiles 5, 25, 50, 75, 95 of serum sodium at each band time.
    pub bands: Vec<[f64; 5]>,
    /// Share of members crossing a limit.
    pub p_limit: f64,
    /// Share of members crossing a caution edge.
    pub p_caution: f64,
    /// Share of members crossing each rule of the scenario's guideline set,
    /// by rule number (1-based, in the set's order); rules no member
    /// crossed are absent.
    pub p_by_rule: BTreeMap<usize, f64>,
    /// Parameters ranked by |Spearman rank correlation| with the largest
    /// 24 h rise: (name, correlation); empty when that output is not kept.
    pub sensitivity: Vec<(String, f64)>,
    /// The Spearman rank correlation of every parameter with every kept
    /// output (sodium at the chosen times, largest 24 h and 48 h rises,
    /// lowest brain volume index), in the result file's column order:
    /// (output, [(parameter, correlation)] in the spec's parameter order).
    /// A parameter's rank is its quantile in its distribution (exact for
    /// the designs); an output's rank is read off a fine histogram of that
    /// output (a second pass over the file), so memory stays independent
    /// of the member count.
    pub sensitivity_by_output: Vec<(String, Vec<(String, f64)>)>,
    /// Largest mass-balance residual among checked members.
    pub max_balance_residual: f64,
    /// Members checked for mass balance.
    pub balance_checked: usize,
}

impl Summary {
    /// Read a result file (of `spec`) in two streaming passes (the second
    /// ranks the outputs for the sensitivity).
    pub fn from_file(spec: &SweepSpec, path: &Path) -> Result<Summary, InputError> {
        let name = path.display().to_string();
        let open = || -> Result<_, InputError> {
            let f = std::fs::File::open(path).map_err(|e| spec_error(&name, e.to_string()))?;
            Ok(BufReader::new(f).lines())
        };
        let mut lines = open()?;
        let header: Vec<String> = lines
            .next()
            .transpose()
            .map_err(|e| spec_error(&name, e.to_string()))?
            .ok_or_else(|| spec_error(&name, "empty result file".into()))?
            .split(',')
            .map(str::to_string)
            .collect();
        let col = |n: &str| header.iter().position(|h| h == n);
        let band_cols: Vec<(f64, usize)> = header
            .iter()
            .enumerate()
            .filter_map(|(i, h)| {
                h.strip_prefix("band_na_")
                    .and_then(|t| t.strip_suffix('h'))
                    .and_then(|t| t.parse().ok())
                    .map(|t| (t, i))
            })
            .collect();
        let mut hist: Vec<Histogram> = band_cols
            .iter()
            .map(|_| Histogram::new(80.0, 200.0, 0.02))
            .collect();
        let (status, limit, caution, balance, by_rule) = (
            col("status"),
            col("limit_crossed"),
            col("caution_crossed"),
            col("balance_residual"),
            col("limits_crossed"),
        );
        let mut n_by_rule: BTreeMap<usize, usize> = BTreeMap::new();
        let output_cols: Vec<(String, usize)> = header
            .iter()
            .enumerate()
            .filter(|(_, h)| {
                h.starts_with("na_at_")
                    || h.starts_with("largest_rise_")
                    || *h == "min_brain_volume_index"
            })
            .map(|(i, h)| (h.clone(), i))
            .collect();
        // Fine histograms of each output, for ranking it in the second pass.
        let mut output_hist: Vec<Histogram> = output_cols
            .iter()
            .map(|(h, _)| {
                if h.starts_with("na_at_") {
                    Histogram::new(60.0, 220.0, 0.002)
                } else if h.starts_with("largest_rise_") {
                    Histogram::new(-20.0, 100.0, 0.001)
                } else {
                    Histogram::new(0.3, 1.7, 1e-5)
                }
            })
            .collect();
        let (mut members, mut failed, mut n_limit, mut n_caution, mut checked) =
            (0usize, 0usize, 0usize, 0usize, 0usize);
        let mut max_res: f64 = 0.0;
        // A row's cell count checked; and one cell as a number.
        let check_count = |cells: &[&str], n: usize| -> Result<(), InputError> {
            if cells.len() != header.len() {
                return Err(spec_error(
                    &name,
                    format!(
                        "line {}: {} cells, expected {}",
                        n + 2,
                        cells.len(),
                        header.len()
                    ),
                ));
            }
            Ok(())
        };
        let number = |cells: &[&str], c: usize, n: usize| -> Result<f64, InputError> {
            if cells[c].is_empty() {
                return Ok(f64::NAN);
            }
            cells[c].parse::<f64>().map_err(|_| {
                spec_error(
                    &name,
                    format!(
                        "line {}: \"{}\" is not a number in column {}",
                        n + 2,
                        cells[c],
                        header[c]
                    ),
                )
            })
        };
        for (n, line) in lines.enumerate() {
            let line = line.map_err(|e| spec_error(&name, e.to_string()))?;
            let cells = split_csv(&line);
            check_count(&cells, n)?;
            members += 1;
            if status.map(|c| cells[c]) != Some("ok") {
                failed += 1;
                continue;
            }
            let num = |c: usize| number(&cells, c, n);
            for (h, (_, c)) in hist.iter_mut().zip(band_cols.iter()) {
                h.add(num(*c)?);
            }
            if limit.map(|c| cells[c]) == Some("1") {
                n_limit += 1;
            }
            if caution.map(|c| cells[c]) == Some("1") {
                n_caution += 1;
            }
            if let Some(c) = by_rule {
                for k in cells[c].split_whitespace() {
                    let k: usize = k.parse().map_err(|_| {
                        spec_error(
                            &name,
                            format!(
                                "line {}: \"{}\" is not a list of rule numbers in column limits_crossed",
                                n + 2,
                                cells[c]
                            ),
                        )
                    })?;
                    *n_by_rule.entry(k).or_default() += 1;
                }
            }
            if let Some(c) = balance {
                let r = num(c)?;
                if r.is_finite() {
                    checked += 1;
                    max_res = max_res.max(r);
                }
            }
            for ((_, c), h) in output_cols.iter().zip(output_hist.iter_mut()) {
                h.add(num(*c)?);
            }
        }
        // Second pass: the rank of each parameter (its quantile in its
        // distribution) against the rank of each output.
        let cumulative: Vec<Vec<u64>> = output_hist.iter().map(Histogram::cumulative).collect();
        let mut output_moments: Vec<Vec<Moments>> =
            vec![vec![Moments::default(); spec.parameters.len()]; output_cols.len()];
        if !output_cols.is_empty() {
            for (n, line) in open()?.skip(1).enumerate() {
                let line = line.map_err(|e| spec_error(&name, e.to_string()))?;
                let cells = split_csv(&line);
                check_count(&cells, n)?;
                if status.map(|c| cells[c]) != Some("ok") {
                    continue;
                }
                let mut ranks = Vec::with_capacity(spec.parameters.len());
                for (j, p) in spec.parameters.iter().enumerate() {
                    ranks.push(value_rank(p, number(&cells, 1 + j, n)?));
                }
                for (o, (_, c)) in output_cols.iter().enumerate() {
                    let y = number(&cells, *c, n)?;
                    let v = output_hist[o].mid_rank(&cumulative[o], y);
                    for (u, m) in ranks.iter().zip(output_moments[o].iter_mut()) {
                        if u.is_finite() && v.is_finite() {
                            m.add(*u, v);
                        }
                    }
                }
            }
        }
        let ok = (members - failed).max(1) as f64;
        let sensitivity_by_output: Vec<(String, Vec<(String, f64)>)> = output_cols
            .iter()
            .zip(output_moments.iter())
            .map(|((name, _), m)| {
                let by_param = spec
                    .parameters
                    .iter()
                    .zip(m.iter())
                    .map(|(p, mj)| (p.name.clone(), mj.correlation()))
                    .collect();
                (name.clone(), by_param)
            })
            .collect();
        let mut sensitivity: Vec<(String, f64)> = sensitivity_by_output
            .iter()
            .find(|(o, _)| o == "largest_rise_24h")
            .map(|(_, by)| by.clone())
            .unwrap_or_default();
        sensitivity.sort_by(|a, b| b.1.abs().total_cmp(&a.1.abs()));
        Ok(Summary {
            members,
            failed,
            band_times_h: band_cols.iter().map(|(t, _)| *t).collect(),
            bands: hist
                .iter()
                .map(|h| {
                    [
                        h.quantile(0.05),
                        h.quantile(0.25),
                        h.quantile(0.5),
                        h.quantile(0.75),
                        h.quantile(0.95),
                    ]
                })
                .collect(),
            p_limit: n_limit as f64 / ok,
            p_caution: n_caution as f64 / ok,
            p_by_rule: n_by_rule
                .into_iter()
                .map(|(k, n)| (k, n as f64 / ok))
                .collect(),
            sensitivity,
            sensitivity_by_output,
            max_balance_residual: max_res,
            balance_checked: checked,
        })
    }
}

/// The rank of a value within its parameter's distribution (0–1): the CDF
/// for distributions and ranges, the list position for lists.
fn value_rank(p: &SweepParameter, x: f64) -> f64 {
    match (&p.values, p.range, &p.distribution) {
        (Some(v), _, _) => {
            let below = v.iter().filter(|&&y| y < x).count() as f64;
            let equal = v.iter().filter(|&&y| y == x).count() as f64;
            (below + 0.5 * equal) / v.len() as f64
        }
        (None, Some([a, b]), _) => {
            if b > a {
                (x - a) / (b - a)
            } else {
                0.5
            }
        }
        (None, None, Some(Distribution::Uniform { min, max })) => (x - min) / (max - min),
        (None, None, Some(Distribution::Normal { mean, sd, .. })) => normal_cdf((x - mean) / sd),
        (None, None, Some(Distribution::LogNormal { median, sigma, .. })) => {
            normal_cdf((x.ln() - median.ln()) / sigma)
        }
        _ => f64::NAN,
    }
}

fn split_csv(line: &str) -> Vec<&str> {
    // Cells never contain commas except the quoted error message, which is
    // always last.
    match line.find(",\"") {
        Some(q) => {
            let mut cells: Vec<&str> = line[..q].split(',').collect();
            cells.push(&line[q + 1..]);
            cells
        }
        None => line.split(',').collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normal_functions_match_published_tables() {
        // Standard normal table values (any statistics handbook):
        // Φ(1.96) = 0.97500, Φ(1) = 0.84134, Φ⁻¹(0.975) = 1.959964.
        assert!((normal_cdf(1.96) - 0.975).abs() < 1e-5);
        assert!((normal_cdf(1.0) - 0.841_345).abs() < 1e-5);
        assert!((normal_quantile(0.975) - 1.959_964).abs() < 1e-5);
        assert!((normal_quantile(0.5)).abs() < 1e-9);
        for p in [0.001, 0.02, 0.3, 0.7, 0.99] {
            assert!((normal_cdf(normal_quantile(p)) - p).abs() < 1e-6, "{p}");
        }
    }

    fn spec(design: &str, extra: &str) -> SweepSpec {
        let text = format!(
            "scenario: base.rhai\ndesign: {design}\nseed: 7\n{extra}parameters:\n  - name: natriuresis_gain\n    range: [8, 18]\n  - name: patient.weight_kg\n    values: [50, 60, 70]\n  - name: gfr_ml_min\n    distribution: {{ kind: log_normal, median: 90, sigma: 0.3, min: 30, max: 150 }}\n"
        );
        SweepSpec::from_yaml(&text, "s.yaml").unwrap()
    }

    #[test]
    fn latin_hypercube_puts_one_member_in_each_stratum() {
        let s = spec("latin_hypercube", "members: 200\n");
        let mut strata = vec![0; 200];
        for i in 0..200 {
            let m = s.member(i);
            let u = (m.values[0] - 8.0) / 10.0;
            strata[(u * 200.0) as usize] += 1;
            assert!((30.0..=150.0).contains(&m.values[2]));
            assert_eq!(s.member(i), m, "deterministic");
        }
        assert!(strata.iter().all(|&c| c == 1));
    }

    #[test]
    fn grid_enumerates_every_combination() {
        let text = "scenario: b.rhai\ndesign: grid\nlevels: 3\nparameters:\n  - name: natriuresis_gain\n    range: [8, 18]\n  - name: patient.weight_kg\n    values: [50, 60]\n";
        let s = SweepSpec::from_yaml(text, "g.yaml").unwrap();
        assert_eq!(s.member_count(), 6);
        let all: Vec<Vec<f64>> = (0..6).map(|i| s.member(i).values).collect();
        assert!(all.contains(&vec![13.0, 60.0]) && all.contains(&vec![18.0, 50.0]));
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
    fn histogram_quantiles_are_within_a_bin() {
        let mut h = Histogram::new(0.0, 100.0, 0.1);
        for i in 0..1000 {
            h.add(i as f64 / 10.0);
        }
        assert!((h.quantile(0.5) - 50.0).abs() < 0.2);
        assert!((h.quantile(0.05) - 5.0).abs() < 0.2);
    }

    #[test]
    fn a_result_file_is_resumed_and_merged_only_under_its_own_fingerprint() {
        let dir = std::env::temp_dir().join(format!("tidewater-fp-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let a = spec("random", "members: 4\n");
        let b = spec("random", "members: 5\n");
        let (fa, fb) = (fingerprint(&a, "script"), fingerprint(&b, "script"));
        assert_ne!(fa, fb, "the member count is part of it");
        assert_ne!(
            fa,
            fingerprint(&a, "script changed"),
            "the script is part of it"
        );
        assert_eq!(fa, fingerprint(&a.clone(), "script"), "stable");

        let out = dir.join("r.csv");
        claim_output(&out, &fa).unwrap();
        assert_eq!(
            read_fingerprint(&out).unwrap().as_deref(),
            Some(fa.as_str())
        );
        std::fs::write(&out, "member\n0\n").unwrap();
        claim_output(&out, &fa).unwrap();
        let err = claim_output(&out, &fb).unwrap_err().to_string();
        assert!(
            err.contains("r.csv") && err.contains("another spec"),
            "{err}"
        );
        std::fs::remove_file(fingerprint_path(&out)).unwrap();
        let err = claim_output(&out, &fa).unwrap_err().to_string();
        assert!(err.contains("r.csv.fingerprint"), "{err}");

        // Shards of different specs do not merge; the merged file keeps
        // the shards' fingerprint.
        let (s1, s2, m) = (dir.join("s1.csv"), dir.join("s2.csv"), dir.join("m.csv"));
        for (p, rows) in [(&s1, "member\n0\n"), (&s2, "member\n1\n")] {
            claim_output(p, &fa).unwrap();
            std::fs::write(p, rows).unwrap();
        }
        assert_eq!(merge(&[s1.as_path(), s2.as_path()], &m).unwrap(), 2);
        assert_eq!(read_fingerprint(&m).unwrap().as_deref(), Some(fa.as_str()));
        std::fs::write(fingerprint_path(&s2), format!("{fb}\n")).unwrap();
        let err = merge(&[s1.as_path(), s2.as_path()], &dir.join("m2.csv"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("s2.csv") && err.contains("differs"), "{err}");
        assert!(!dir.join("m2.csv").exists(), "nothing written");
        // An output that cannot be written is an error naming it, and
        // leaves nothing behind.
        std::fs::write(fingerprint_path(&s2), format!("{fa}\n")).unwrap();
        let blocked = dir.join("m.csv").join("inside-a-file.csv");
        let err = merge(&[s1.as_path(), s2.as_path()], &blocked)
            .unwrap_err()
            .to_string();
        assert!(err.contains("inside-a-file.csv"), "{err}");
        let left: Vec<_> = std::fs::read_dir(&dir)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().contains("partial"))
            .collect();
        assert!(left.is_empty(), "{left:?}");
        std::fs::remove_dir_all(&dir).ok();
    }

    #[test]
    fn shards_partition_the_members() {
        let s = Shard::parse("2/3").unwrap();
        assert_eq!(s, Shard { index: 1, count: 3 });
        assert!(s.contains(4) && !s.contains(3));
        assert!(
            Shard::parse("0/3").is_err()
                && Shard::parse("4/3").is_err()
                && Shard::parse("x").is_err()
        );
    }
}
