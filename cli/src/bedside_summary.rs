//! The bedside formula beside the body, for `summary.json` and the report:
//! the Adrogué–Madias course of the run's infusions at 6, 12, 24 and 48 h
//! and the attribution of the simulated change at 24 h (or at the end of a
//! shorter run) to its causes, computed by the engine's
//! [`tidewater::bedside`] and put into words here.

use crate::format::{fixed, round_sig, sig};
use serde::Serialize;
use tidewater::bedside::{self, GapAttribution};
use tidewater::Trajectory;

const DIGITS: usize = 6;

/// Times of the course in the summary, h.
const COURSE_TIMES_H: [f64; 4] = [6.0, 12.0, 24.0, 48.0];

/// The time of the attribution, h: 24 h, or the end of a shorter run.
const ATTRIBUTION_H: f64 = 24.0;

/// The formula and the body at one time.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CoursePoint {
    /// Time, h.
    pub time_h: f64,
    /// The Adrogué–Madias change from the start, mmol/L.
    pub formula_na_change_mmol_l: f64,
    /// The simulated change from the start, mmol/L.
    pub simulated_na_change_mmol_l: f64,
}

/// The terms of the attribution with the amounts behind them.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Attribution {
    /// Time attributed, h.
    pub time_h: f64,
    /// Simulated change from the start, mmol/L.
    pub simulated_change_mmol_l: f64,
    /// The formula's prediction, mmol/L.
    pub formula_mmol_l: f64,
    /// Exact closed-body mixing minus the formula, mmol/L.
    pub formula_approximations_mmol_l: f64,
    /// Change from electrolyte-free water in urine, mmol/L.
    pub electrolyte_free_urine_mmol_l: f64,
    /// Electrolyte-free water in urine (∫EFWC), L.
    pub electrolyte_free_urine_l: f64,
    /// Change from sodium and potassium lost in urine with their
    /// isotonic water, mmol/L.
    pub urine_na_k_mmol_l: f64,
    /// Sodium plus potassium in urine, mmol.
    pub urine_na_k_mmol: f64,
    /// Urine water that carried them at plasma sodium, L.
    pub urine_isotonic_water_l: f64,
    /// Change from other intake and losses (drinks and food absorbed,
    /// water of oxidation, insensible loss, stool, vomit, drains, blood),
    /// mmol/L.
    pub other_intake_and_losses_mmol_l: f64,
    /// Net other water into the body, L.
    pub other_water_l: f64,
    /// Net other sodium plus potassium into the body, mmol.
    pub other_na_k_mmol: f64,
    /// Change from water shifts, glucose, urea and the other osmoles
    /// (the change of serum Na against (Na_e + K_e)/TBW), mmol/L.
    pub shifts_glucose_urea_osmoles_mmol_l: f64,
    /// Serum Na over (Na_e + K_e)/TBW at the start.
    pub na_to_exchangeable_ratio_start: f64,
    /// The same at the time attributed.
    pub na_to_exchangeable_ratio_end: f64,
    /// Sum of the terms, mmol/L.
    pub sum_of_terms_mmol_l: f64,
    /// The ledger's error (reconstructed body against the actual), mmol/L.
    pub ledger_residual_mmol_l: f64,
}

/// The formula beside the body, as `summary.json` holds it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FormulaSummary {
    /// What the formula is and what it counts.
    pub formula: String,
    /// Start serum sodium (the formula's Na₀), mmol/L.
    pub na_start_mmol_l: f64,
    /// Start total body water (the formula's TBW₀), L.
    pub tbw_start_l: f64,
    /// Water given by vein over the whole run, L.
    pub infused_l: f64,
    /// Sodium plus potassium given by vein over the whole run, mmol.
    pub infused_na_k_mmol: f64,
    /// The course at 6, 12, 24 and 48 h (those within the run).
    pub course: Vec<CoursePoint>,
    /// The attribution of the change at 24 h (or the end).
    pub attribution: Attribution,
    /// The attribution in one sentence.
    pub sentence: String,
}

fn r(x: f64) -> f64 {
    round_sig(x, DIGITS)
}

fn signed(x: f64) -> String {
    with_sign(fixed(x, 1))
}

fn with_sign(t: String) -> String {
    if let Some(rest) = t.strip_prefix('-') {
        format!("−{rest}")
    } else if t.chars().all(|c| c == '0' || c == '.') {
        t
    } else {
        format!("+{t}")
    }
}

fn signed_l(x: f64) -> String {
    with_sign(fixed(x, 2))
}

fn signed_mmol(x: f64) -> String {
    with_sign(fixed(x, 0))
}

/// The attribution in one sentence: the formula, the body, and each
/// other term of at least 0.05 mmol/L, largest first, with the amount
/// behind it (so the numbers named add up to the body's change, to the
/// rounding and the terms left out).
pub fn sentence(g: &GapAttribution) -> String {
    let when = format!("At {} h", sig(g.time_h, 4));
    let head = if g.infused_l > 0.0 {
        format!(
            "{when} the Adrogué–Madias formula predicts {} mmol/L for the {} L given by vein (closed body); the body {}",
            signed(g.formula_mmol_l),
            fixed(g.infused_l, 2),
            signed(g.simulated_change_mmol_l)
        )
    } else {
        format!(
            "Nothing was given by vein, so the Adrogué–Madias formula predicts no change; {} the body moved {}",
            when.to_lowercase(),
            signed(g.simulated_change_mmol_l)
        )
    };
    let mut parts: Vec<(f64, String)> = vec![
        (
            g.urine_free_water_mmol_l,
            if g.urine_free_water_l >= 0.0 {
                format!(
                    "{} L of electrolyte-free urine",
                    fixed(g.urine_free_water_l, 2)
                )
            } else {
                // Urine sodium plus potassium above plasma sodium: the
                // kidney returns free water (negative EFWC).
                format!(
                    "urine saltier than plasma ({} L of electrolyte-free water)",
                    signed_l(g.urine_free_water_l)
                )
            },
        ),
        (
            g.urine_cations_mmol_l,
            format!(
                "{} mmol of sodium and potassium lost in urine",
                fixed(g.urine_cations_mmol, 0)
            ),
        ),
        (
            g.other_exchange_mmol_l,
            format!(
                "other intake and losses (net {} L of water, {} mmol of sodium and potassium)",
                signed_l(g.other_water_l),
                signed_mmol(g.other_cations_mmol)
            ),
        ),
        (
            g.shifts_and_osmoles_mmol_l,
            "water shifts, glucose, urea and other osmoles".into(),
        ),
        (
            g.formula_approximation_mmol_l,
            "the formula's own approximations".into(),
        ),
    ];
    parts.retain(|p| p.0.abs() >= 0.05);
    parts.sort_by(|a, b| b.0.abs().total_cmp(&a.0.abs()));
    if parts.is_empty() {
        return format!("{head}, as the formula.");
    }
    let words: Vec<String> = parts
        .iter()
        .map(|(v, what)| format!("{} from {what}", signed(*v)))
        .collect();
    let list = match words.len() {
        1 => words[0].clone(),
        n => format!("{} and {}", words[..n - 1].join(", "), words[n - 1]),
    };
    if g.infused_l > 0.0 {
        format!(
            "{head}: the formula's {} with {list}.",
            signed(g.formula_mmol_l)
        )
    } else {
        format!("{head}: {list}.")
    }
}

impl FormulaSummary {
    /// The formula beside the body for a run (`None` for an empty one).
    pub fn of(traj: &Trajectory) -> Option<FormulaSummary> {
        let g = bedside::attribute_gap(traj, ATTRIBUTION_H)?;
        let end = traj.last().time_h;
        let whole = bedside::attribute_gap(traj, end)?;
        let times = traj.times();
        let course = COURSE_TIMES_H
            .iter()
            .filter(|&&t| t <= end + 1e-9)
            .map(|&t| CoursePoint {
                time_h: t,
                formula_na_change_mmol_l: r(bedside::formula_change_at(traj, t)),
                simulated_na_change_mmol_l: r(tidewater::interpolate(
                    &times,
                    &traj.na_change_since_start,
                    t,
                )),
            })
            .collect();
        Some(FormulaSummary {
            formula: "Adrogué–Madias (Adrogué & Madias, NEJM 2000): (Na + K of the infusate − Na₀)/(TBW₀ + 1) per litre, summed over what was given by vein; a closed body (no urine, no other intake or loss); drinks and tablets are not counted".into(),
            na_start_mmol_l: r(g.na_start_mmol_l),
            tbw_start_l: r(g.tbw_start_l),
            infused_l: r(whole.infused_l),
            infused_na_k_mmol: r(whole.infused_cations_mmol),
            course,
            attribution: Attribution {
                time_h: r(g.time_h),
                simulated_change_mmol_l: r(g.simulated_change_mmol_l),
                formula_mmol_l: r(g.formula_mmol_l),
                formula_approximations_mmol_l: r(g.formula_approximation_mmol_l),
                electrolyte_free_urine_mmol_l: r(g.urine_free_water_mmol_l),
                electrolyte_free_urine_l: r(g.urine_free_water_l),
                urine_na_k_mmol_l: r(g.urine_cations_mmol_l),
                urine_na_k_mmol: r(g.urine_cations_mmol),
                urine_isotonic_water_l: r(g.urine_isotonic_water_l),
                other_intake_and_losses_mmol_l: r(g.other_exchange_mmol_l),
                other_water_l: r(g.other_water_l),
                other_na_k_mmol: r(g.other_cations_mmol),
                shifts_glucose_urea_osmoles_mmol_l: r(g.shifts_and_osmoles_mmol_l),
                na_to_exchangeable_ratio_start: r(g.ratio_start),
                na_to_exchangeable_ratio_end: r(g.ratio_end),
                sum_of_terms_mmol_l: r(g.sum_of_terms_mmol_l),
                ledger_residual_mmol_l: round_sig(g.ledger_residual_mmol_l, 2),
            },
            sentence: sentence(&g),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn attribution() -> GapAttribution {
        GapAttribution {
            time_h: 24.0,
            na_start_mmol_l: 117.0,
            na_mmol_l: 128.4,
            simulated_change_mmol_l: 11.4,
            tbw_start_l: 40.0,
            ratio_start: 0.9,
            ratio_end: 0.9,
            infused_l: 2.0,
            infused_cations_mmol: 308.0,
            formula_mmol_l: 6.1,
            formula_approximation_mmol_l: 0.02,
            urine_free_water_l: 1.9,
            urine_free_water_mmol_l: 5.0,
            urine_cations_mmol: 120.0,
            urine_isotonic_water_l: 0.8,
            urine_cations_mmol_l: -0.8,
            other_water_l: -0.4,
            other_cations_mmol: 10.0,
            other_exchange_mmol_l: 1.1,
            shifts_and_osmoles_mmol_l: -0.02,
            sum_of_terms_mmol_l: 11.4,
            ledger_residual_mmol_l: 0.0,
        }
    }

    #[test]
    fn the_sentence_names_the_formula_the_body_and_the_largest_causes() {
        let s = sentence(&attribution());
        assert_eq!(
            s,
            "At 24 h the Adrogué–Madias formula predicts +6.1 mmol/L for the 2.00 L given by vein (closed body); \
             the body +11.4: the formula's +6.1 with +5.0 from 1.90 L of electrolyte-free urine, \
             +1.1 from other intake and losses (net −0.40 L of water, +10 mmol of sodium and potassium) \
             and −0.8 from 120 mmol of sodium and potassium lost in urine."
        );
    }

    #[test]
    fn without_an_infusion_the_formula_says_no_change_plainly() {
        let g = GapAttribution {
            infused_l: 0.0,
            infused_cations_mmol: 0.0,
            formula_mmol_l: 0.0,
            ..attribution()
        };
        let s = sentence(&g);
        let saltier = sentence(&GapAttribution {
            urine_free_water_l: -0.7,
            urine_free_water_mmol_l: -3.0,
            ..attribution()
        });
        assert!(
            saltier.contains(
                "−3.0 from urine saltier than plasma (−0.70 L of electrolyte-free water)"
            ),
            "{saltier}"
        );
        assert!(
            s.starts_with("Nothing was given by vein, so the Adrogué–Madias formula predicts no change; at 24 h the body moved +11.4: +5.0 from"),
            "{s}"
        );
    }
}
