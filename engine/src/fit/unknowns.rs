//! The unknowns a fit estimates, each with its prior.
//!
//! Every unknown is searched in a standard coordinate `z` whose prior is
//! the standard normal: the value is `x = F⁻¹(Φ(z))`, with `F` the prior's
//! distribution ([`Distribution::quantile`]) and `Φ` the standard normal
//! distribution function. A standard normal `z` then gives `x` exactly
//! its prior (the inverse-transform method), so the prior enters the
//! least squares as one residual `z` per unknown, bounds are kept by
//! construction, and a uniform prior needs no special case.

use crate::causes::Cause;
use crate::error::InputError;
use crate::plan::Plan;
use crate::sweep::{normal_cdf, Distribution, SweepParameter};
use serde::Serialize;

/// The name of the unknown "time the cause resolves", h (not a parameter:
/// the fit adds a `resolve_cause` event at that time).
pub const CAUSE_RESOLVES_H: &str = "cause_resolves_h";

/// One unknown and its prior.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Unknown {
    /// `patient.<field>`, an engine parameter, or [`CAUSE_RESOLVES_H`].
    pub name: String,
    /// Its prior.
    pub prior: Distribution,
    /// Why this prior, in words (source or "from memory").
    pub why: String,
}

impl Unknown {
    /// The value at standard coordinate `z`.
    pub fn value(&self, z: f64) -> f64 {
        // Keep Φ(z) off 0 and 1 so that unbounded priors stay finite.
        self.prior.quantile(normal_cdf(z).clamp(1e-12, 1.0 - 1e-12))
    }

    /// The prior median.
    pub fn median(&self) -> f64 {
        self.value(0.0)
    }
}

/// Unknowns from the parameters of a sweep spec (`--vary`): each needs a
/// `distribution` or a `range` (a uniform prior); a list of `values` is
/// no prior.
pub fn from_parameters(
    parameters: &[SweepParameter],
    file: &str,
) -> Result<Vec<Unknown>, InputError> {
    parameters
        .iter()
        .map(|p| {
            let prior = match (&p.distribution, p.range, &p.values) {
                (Some(d), None, None) => d.clone(),
                (None, Some([min, max]), None) => Distribution::Uniform { min, max },
                _ => {
                    return Err(InputError::BadChoice {
                        field: format!("{file}: parameters: {}", p.name),
                        value: "a list of values".into(),
                        expected: "a prior: a distribution or a range".into(),
                    })
                }
            };
            Ok(Unknown {
                name: p.name.clone(),
                prior,
                why: format!("given in {file}"),
            })
        })
        .collect()
}

/// The default unknowns for a plan, centred on its patient: body water,
/// the strength of an inappropriate secretion (or, without one, how fast
/// the collecting duct follows vasopressin), when the cause resolves (if
/// it can and the script does not say), and urea generation.
pub fn default_unknowns(plan: &Plan) -> Result<Vec<Unknown>, InputError> {
    let sim = crate::simulate::Simulation::new(plan.clone()).map_err(|e| match e {
        crate::error::SimulationError::Input(i) => i,
        other => InputError::BadChoice {
            field: "scenario".into(),
            value: other.to_string(),
            expected: "a scenario whose start can be built".into(),
        },
    })?;
    let patient = sim.patient();
    let p = &sim.model().params;
    let value = |name: &str| p.get(name).expect("a parameter of the table");
    let fraction = patient.total_water_l / patient.weight_kg;
    let mut out = vec![Unknown {
        name: "patient.water_fraction".into(),
        prior: Distribution::Normal {
            mean: fraction,
            sd: 0.1 * fraction,
            min: Some(0.7 * fraction),
            max: Some(1.3 * fraction),
        },
        why: "total body water predicted from weight, sex and age carries an error near 10 % (from memory: Watson et al. 1980)".into(),
    }];
    let floor = value("avp_floor_pmol_l");
    if floor > 0.0 {
        out.push(Unknown {
            name: "avp_floor_pmol_l".into(),
            prior: Distribution::LogNormal {
                median: floor,
                sigma: 0.5,
                min: Some(floor / 5.0),
                max: Some(floor * 5.0),
            },
            why: "the strength of inappropriate vasopressin secretion differs widely between patients (from memory)".into(),
        });
    } else {
        let v2 = value("v2_response_h");
        out.push(Unknown {
            name: "v2_response_h".into(),
            prior: Distribution::LogNormal {
                median: v2,
                sigma: 0.5,
                min: Some(v2 / 5.0),
                max: Some((v2 * 5.0).min(6.0)),
            },
            why: "how fast the collecting duct follows a fall of vasopressin (a model time constant, uncertain; from memory)".into(),
        });
    }
    let resolves_in_script = plan
        .events
        .iter()
        .any(|e| e.action == crate::plan::Action::ResolveCause);
    if !resolves_in_script
        && crate::model::check_resolvable(patient.cause).is_ok()
        && patient.cause != Cause::None
    {
        out.push(Unknown {
            name: CAUSE_RESOLVES_H.into(),
            prior: Distribution::LogNormal {
                median: 24.0,
                sigma: 1.2,
                min: Some(0.5),
                max: Some(500.0),
            },
            why: "a reversible cause (nausea, pain, a drug) resolves within hours to days; a wide prior, median 24 h (from memory)".into(),
        });
    }
    let urea = value("urea_generation_mmol_kg_day");
    out.push(Unknown {
        name: "urea_generation_mmol_kg_day".into(),
        prior: Distribution::LogNormal {
            median: urea,
            sigma: 0.35,
            min: Some(urea / 3.0),
            max: Some(urea * 3.0),
        },
        why: "protein intake, hence the urea the kidneys must excrete, varies about 1.5-fold between people (from memory)".into(),
    });
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_standard_coordinate_gives_the_prior() {
        // z = 0 is the median; z = ±1.6449 the 5th and 95th percentiles
        // (standard normal quantiles, common practice).
        let u = Unknown {
            name: "x".into(),
            prior: Distribution::LogNormal {
                median: 2.0,
                sigma: 0.5,
                min: None,
                max: None,
            },
            why: String::new(),
        };
        // Φ is the sweeps' erfc approximation (fractional error < 1.2e-7,
        // Numerical Recipes), so the values agree to about 1e-6.
        assert!((u.median() - 2.0).abs() < 1e-6);
        assert!((u.value(1.644_853_6) - 2.0 * (0.5f64 * 1.644_853_6).exp()).abs() < 1e-6);
        let uniform = Unknown {
            prior: Distribution::Uniform { min: 1.0, max: 3.0 },
            ..u
        };
        assert!((uniform.value(0.0) - 2.0).abs() < 1e-6);
        assert!(uniform.value(-40.0) >= 1.0 && uniform.value(40.0) <= 3.0);
    }
}
