//! The bedside formula beside the body: the Adrogué–Madias course for the
//! infusions of a run, and an exact attribution of the difference between
//! it and the simulated change of serum sodium, read off the ledger.
//!
//! # The formula course
//!
//! Adrogué & Madias (NEJM 2000;342:1581) estimate the change of serum
//! sodium after one litre of an infusate as
//! `((Na + K)_infusate − Na₀)/(TBW₀ + 1)`; clinicians scale it linearly by
//! the litres given. Summed over every fluid given by vein up to time `t`:
//!
//! ```text
//! ΔNa_AM(t) = Σ_f V_f(t)·((Na+K)_f − Na₀)/(TBW₀ + 1)
//!           = (N_iv(t) + K_iv(t) − Na₀·V_iv(t))/(TBW₀ + 1)
//! ```
//!
//! with `V_iv`, `N_iv`, `K_iv` the cumulative water, sodium and potassium
//! given by vein (ledger states [`StateSlot::InfusedWaterL`], [`StateSlot::InfusedNa`],
//! [`StateSlot::InfusedK`], integrated by the solver from the plan's
//! piecewise-constant rates, which it stops at every change). Only what is
//! given by vein counts: a clinician's formula counts the infusate, so
//! drinks, tube feeds and tablets of a plan fall into the body's "other
//! intake and losses" below. `Na₀` is the start sodium and `TBW₀` the
//! patient's total body water at the start, the model's own (the gut lumen
//! excluded): the patient's weight times the fraction for sex and age (or
//! Watson's formula when asked), the same estimate Adrogué and Madias
//! tabulate, so the formula and the body start from one patient.
//!
//! # The attribution
//!
//! Let `E` be the exchangeable sodium and potassium in the body (plasma,
//! interstitium, cells; not the gut lumen), `W` the total body water and
//! `r = Na/(E/W)` the ratio of serum sodium to their quotient (Edelman et
//! al., J Clin Invest 1958: serum sodium follows `(Na_e + K_e)/TBW`). Then
//! `Na = r·E/W` exactly, and the simulated change telescopes through
//! intermediate bodies built from ledger integrals:
//!
//! ```text
//! B0 = (E₀, W₀)                                 the start
//! B1 = (E₀ + N_iv + K_iv, W₀ + V_iv)             closed-body mixing with the infusions
//! B2 = (E₁, W₁ − F_u)                            remove the electrolyte-free urine water
//! B3 = (E₂ − N_u − K_u, W₂ − (V_u − F_u))        remove urine Na + K with their isotonic water
//! B4 = (E₃ + ΔE_other, W₃ + ΔW_other)            other intake and losses
//! Na(T) − Na₀ = r₀·(E₄/W₄ − E₀/W₀) + (r(T) − r₀)·E(T)/W(T) + residual
//! ```
//!
//! with `F_u = ∫ Q_u·(1 − (U_Na + U_K)/P_Na) dt` (ledger
//! [`StateSlot::UrineFreeWaterL`]), `N_u`, `K_u` the urine sodium and potassium,
//! `V_u` the urine volume, and the other exchange what the ledger's totals
//! hold beyond infusions and urine (drinks, food and tablets absorbed from
//! the gut, water of oxidation, insensible loss, stool, vomit, drains,
//! blood). Each step is a term `r₀·(E_k/W_k − E_{k−1}/W_{k−1})`; the step
//! to B1 is split into the formula's prediction and the formula's own
//! approximations (a slope of 1 where the body's is `r₀`, and `TBW₀ + 1`
//! per litre where exact mixing divides by `TBW₀ + V_iv`). The last term,
//! `(r(T) − r₀)·E(T)/W(T)`, holds water and solute shifts and the other
//! osmoles (glucose, urea, cell and brain osmoles, potassium moving into
//! cells). Nothing is a remainder by construction: the reconstructed B4 is
//! compared with the actual state, and `residual = r₀·(E(T)/W(T) −
//! E₄/W₄)` is the ledger's error, reported beside the terms.

use crate::body::{total_water_l, StateSlot};
use crate::trajectory::Trajectory;
use serde::Serialize;

/// Exchangeable sodium and potassium in the body (plasma, interstitium,
/// tissue cells; not the gut lumen), mmol.
pub fn exchangeable_cations_mmol(y: &[f64]) -> f64 {
    [
        StateSlot::NaPlasma,
        StateSlot::NaInterstitium,
        StateSlot::KPlasma,
        StateSlot::KInterstitium,
        StateSlot::KCells,
    ]
    .iter()
    .map(|&s| y[s as usize])
    .sum()
}

/// Serum sodium of a state (per litre of plasma water), mmol/L.
pub fn serum_sodium(y: &[f64]) -> f64 {
    y[StateSlot::NaPlasma as usize] / y[StateSlot::PlasmaL as usize].max(1e-9)
}

/// The Adrogué–Madias change (mmol/L) for what was given by vein between
/// the start state `y0` and the state `y`: cumulative infused water,
/// sodium and potassium, the start sodium and the start total body water
/// (see the module text).
pub fn formula_change_between(y0: &[f64], y: &[f64]) -> f64 {
    let d = |s: StateSlot| y[s as usize] - y0[s as usize];
    let cations = d(StateSlot::InfusedNa) + d(StateSlot::InfusedK);
    let water = d(StateSlot::InfusedWaterL);
    adrogue_madias_course(cations, water, serum_sodium(y0), total_water_l(y0))
}

/// The Adrogué–Madias change (mmol/L) after `water_l` litres of infusate
/// holding `cations_mmol` of sodium plus potassium in all, given to a
/// patient with serum sodium `na0` and total body water `tbw0_l`: the
/// per-litre formula (Adrogué & Madias, NEJM 2000) scaled by the litres,
/// `(cations − na0·water)/(tbw0 + 1)`.
pub fn adrogue_madias_course(cations_mmol: f64, water_l: f64, na0: f64, tbw0_l: f64) -> f64 {
    (cations_mmol - na0 * water_l) / (tbw0_l + 1.0)
}

/// The Adrogué–Madias course of a run at every sample, mmol/L change from
/// the start.
pub fn formula_course(traj: &Trajectory) -> Vec<f64> {
    let Some(first) = traj.samples.first() else {
        return Vec::new();
    };
    traj.samples
        .iter()
        .map(|s| formula_change_between(&first.y, &s.y))
        .collect()
}

/// The Adrogué–Madias change at `at_h` hours (clamped to the run),
/// interpolated linearly between samples (exact at sample times).
pub fn formula_change_at(traj: &Trajectory, at_h: f64) -> f64 {
    crate::trajectory::interpolate(&traj.times(), &formula_course(traj), at_h)
}

/// The difference between the simulated change of serum sodium and the
/// bedside formula, attributed to its causes (see the module text). Every
/// change is in mmol/L of serum sodium; the amounts behind each term are
/// given beside it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GapAttribution {
    /// Time of the state attributed (the sample nearest the time asked,
    /// no later than the end of the run), h.
    pub time_h: f64,
    /// Serum sodium at the start, mmol/L.
    pub na_start_mmol_l: f64,
    /// Serum sodium at `time_h`, mmol/L.
    pub na_mmol_l: f64,
    /// Simulated change `Na(T) − Na₀`, mmol/L.
    pub simulated_change_mmol_l: f64,
    /// Total body water at the start (the formula's TBW₀), L.
    pub tbw_start_l: f64,
    /// Ratio `r₀ = Na₀/(E₀/W₀)` at the start.
    pub ratio_start: f64,
    /// Ratio `r(T)` at `time_h`.
    pub ratio_end: f64,
    /// Water given by vein, L.
    pub infused_l: f64,
    /// Sodium plus potassium given by vein, mmol.
    pub infused_cations_mmol: f64,
    /// The Adrogué–Madias prediction, mmol/L.
    pub formula_mmol_l: f64,
    /// Exact closed-body mixing minus the formula (its slope of 1 and its
    /// per-litre divisor), mmol/L.
    pub formula_approximation_mmol_l: f64,
    /// Electrolyte-free water in urine (∫EFWC), L.
    pub urine_free_water_l: f64,
    /// Change from the electrolyte-free urine water, mmol/L.
    pub urine_free_water_mmol_l: f64,
    /// Sodium plus potassium in urine, mmol.
    pub urine_cations_mmol: f64,
    /// The water that carried them at plasma sodium (urine volume less its
    /// electrolyte-free water), L.
    pub urine_isotonic_water_l: f64,
    /// Change from the urine's cations with their isotonic water, mmol/L.
    pub urine_cations_mmol_l: f64,
    /// Net other water into the body (absorbed drinks and food, water of
    /// oxidation, less insensible loss, stool, vomit, drains, blood), L.
    pub other_water_l: f64,
    /// Net other sodium plus potassium into the body, mmol.
    pub other_cations_mmol: f64,
    /// Change from the other intake and losses, mmol/L.
    pub other_exchange_mmol_l: f64,
    /// Change from water and solute shifts and the other osmoles
    /// (glucose, urea, cell and brain osmoles), `(r(T) − r₀)·E(T)/W(T)`,
    /// mmol/L.
    pub shifts_and_osmoles_mmol_l: f64,
    /// Sum of the terms (formula, approximation, urine free water, urine
    /// cations, other exchange, shifts), mmol/L.
    pub sum_of_terms_mmol_l: f64,
    /// The ledger's error: `r₀·(E(T)/W(T) − E₄/W₄)`, the reconstructed
    /// body against the actual one, mmol/L.
    pub ledger_residual_mmol_l: f64,
}

impl GapAttribution {
    /// The named terms that sum to the simulated change, in telescoping
    /// order: (name, mmol/L).
    pub fn terms(&self) -> [(&'static str, f64); 6] {
        [
            ("Adrogué–Madias formula", self.formula_mmol_l),
            (
                "formula's approximations",
                self.formula_approximation_mmol_l,
            ),
            ("electrolyte-free urine", self.urine_free_water_mmol_l),
            ("urine sodium and potassium", self.urine_cations_mmol_l),
            ("other intake and losses", self.other_exchange_mmol_l),
            ("shifts and other osmoles", self.shifts_and_osmoles_mmol_l),
        ]
    }

    /// The simulated change less the formula, mmol/L.
    pub fn gap_mmol_l(&self) -> f64 {
        self.simulated_change_mmol_l - self.formula_mmol_l
    }
}

/// Attribute the change between the start state `y0` and the state `y`
/// (full state vectors, ledger included) at time `time_h`.
pub fn attribute_states(y0: &[f64], y: &[f64], time_h: f64) -> GapAttribution {
    let d = |s: StateSlot| y[s as usize] - y0[s as usize];
    let (e0, w0, na0) = (
        exchangeable_cations_mmol(y0),
        total_water_l(y0),
        serum_sodium(y0),
    );
    let (e, w, na) = (
        exchangeable_cations_mmol(y),
        total_water_l(y),
        serum_sodium(y),
    );
    let r0 = na0 / (e0 / w0);
    let r = na / (e / w);

    let iv_water = d(StateSlot::InfusedWaterL);
    let iv_cations = d(StateSlot::InfusedNa) + d(StateSlot::InfusedK);
    let free = d(StateSlot::UrineFreeWaterL);
    let urine_l = d(StateSlot::UrineL);
    let urine_cations = d(StateSlot::UrineNa) + d(StateSlot::UrineK);
    // What the ledger's totals hold beyond infusions and urine; what was
    // swallowed counts once absorbed (the gut lumen is outside the body).
    let gut = |s: &[f64]| s[StateSlot::GutNa as usize] + s[StateSlot::GutK as usize];
    let in_cations = d(StateSlot::InNa) + d(StateSlot::InK);
    let out_cations = d(StateSlot::OutNa) + d(StateSlot::OutK);
    let other_cations =
        (in_cations - iv_cations) - (out_cations - urine_cations) - (gut(y) - gut(y0));
    let other_water = (d(StateSlot::InWater) - iv_water)
        - (d(StateSlot::OutWater) - urine_l)
        - d(StateSlot::GutWater);

    let b1 = (e0 + iv_cations, w0 + iv_water);
    let b2 = (b1.0, b1.1 - free);
    let b3 = (b2.0 - urine_cations, b2.1 - (urine_l - free));
    let b4 = (b3.0 + other_cations, b3.1 + other_water);
    let ratio = |b: (f64, f64)| b.0 / b.1;
    let step = |from: (f64, f64), to: (f64, f64)| r0 * (ratio(to) - ratio(from));

    let formula = adrogue_madias_course(iv_cations, iv_water, na0, w0);
    let mixing = step((e0, w0), b1);
    let free_term = step(b1, b2);
    let urine_term = step(b2, b3);
    let other_term = step(b3, b4);
    let shifts = (r - r0) * e / w;
    let sum = mixing + free_term + urine_term + other_term + shifts;
    GapAttribution {
        time_h,
        na_start_mmol_l: na0,
        na_mmol_l: na,
        simulated_change_mmol_l: na - na0,
        tbw_start_l: w0,
        ratio_start: r0,
        ratio_end: r,
        infused_l: iv_water,
        infused_cations_mmol: iv_cations,
        formula_mmol_l: formula,
        formula_approximation_mmol_l: mixing - formula,
        urine_free_water_l: free,
        urine_free_water_mmol_l: free_term,
        urine_cations_mmol: urine_cations,
        urine_isotonic_water_l: urine_l - free,
        urine_cations_mmol_l: urine_term,
        other_water_l: other_water,
        other_cations_mmol: other_cations,
        other_exchange_mmol_l: other_term,
        shifts_and_osmoles_mmol_l: shifts,
        sum_of_terms_mmol_l: sum,
        ledger_residual_mmol_l: r0 * (e / w - ratio(b4)),
    }
}

/// Attribute the simulated change at `at_h` hours (or at the end of the
/// run if it is shorter) to the formula and the body's departures from
/// it, at the sample nearest that time. `None` for an empty trajectory.
pub fn attribute_gap(traj: &Trajectory, at_h: f64) -> Option<GapAttribution> {
    let first = traj.samples.first()?;
    let end = traj.last().time_h;
    let s = traj.at(at_h.min(end));
    Some(attribute_states(&first.y, &s.y, s.time_h))
}

#[cfg(test)]
#[path = "bedside_tests.rs"]
mod tests;
