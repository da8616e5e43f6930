//! The resting body of the start, piece by piece (docs/model.md): the
//! water compartments and the osmoles that hold them, the cell membranes,
//! the capillaries and lymph, metabolism and the kidney. Each function
//! returns its piece; [`Model::new`](super::Model::new) gathers them into a
//! [`Calibration`](super::Calibration) and the initial state.

use crate::body::{StateSlot, N_STATES};
use crate::error::InputError;
use crate::params::Params;
use crate::patient::{Onset, ResolvedPatient};
use crate::physiology::{blood_volume, capillary, kidney, membrane, potassium};
use crate::units;

/// Water compartments at equal tonicity, and the osmoles that hold them.
pub(super) struct Compartments {
    /// Extracellular water, L.
    pub ecf: f64,
    /// Blood volume at the start, L, and how it was predicted.
    pub blood_volume_start: f64,
    pub blood_volume_method: &'static str,
    /// Plasma and red-cell volumes (water and solids), L.
    pub plasma_volume: f64,
    pub red_cell_volume: f64,
    /// Water of plasma, interstitium, red cells, brain and tissue cells, L.
    pub v_p: f64,
    pub v_i: f64,
    pub v_r: f64,
    pub v_b: f64,
    pub v_c: f64,
    /// Plasma and red-cell solids, L.
    pub plasma_solids: f64,
    pub red_cell_solids: f64,
    /// Effective osmolality of the start and of the reference, mOsm/L.
    pub tonicity: f64,
    pub reference_tonicity: f64,
    /// Brain water at normal volume (L), fixed and adaptive osmoles (mOsm).
    pub brain_normal: f64,
    pub brain_fixed: f64,
    pub brain_osmolytes: f64,
    /// Cell potassium, mmol/L and mmol.
    pub k_cell_conc: f64,
    pub k_cells: f64,
    /// Fixed tissue-cell and red-cell osmoles, mOsm.
    pub cell_fixed: f64,
    pub red_cell_osmoles: f64,
}

/// Water compartments (docs/model.md, compartments), then tonicity and the
/// cell osmoles that keep every compartment at it.
pub(super) fn compartments(
    patient: &ResolvedPatient,
    p: &Params,
) -> Result<Compartments, InputError> {
    let tbw = patient.total_water_l;
    let icf = p.icf_fraction * tbw;
    let ecf = tbw - icf;
    let (blood_volume_start, blood_volume_method) = match patient.height_cm {
        Some(h) => (
            blood_volume::nadler_l(patient.sex, h / 100.0, patient.weight_kg),
            "Nadler (sex, height, weight)",
        ),
        None => (
            blood_volume::per_kg_l(
                match patient.sex {
                    crate::patient::Sex::Male => p.blood_volume_ml_kg_man,
                    crate::patient::Sex::Female => p.blood_volume_ml_kg_woman,
                },
                patient.weight_kg,
            ),
            "per kg of weight (no height given)",
        ),
    };
    let (plasma_volume, red_cell_volume) =
        blood_volume::split(blood_volume_start, patient.hematocrit);
    let v_p = plasma_volume * p.plasma_water_fraction;
    if v_p >= 0.5 * ecf {
        return Err(InputError::Conflict {
            field: "weight_kg".into(),
            other: "total body water".into(),
            why: format!(
                "the predicted plasma water ({v_p:.1} L) would be half or more of the extracellular water ({ecf:.1} L)"
            ),
        });
    }
    let v_i = ecf - v_p;
    let plasma_solids = plasma_volume - v_p;
    let v_r = p.rbc_water_fraction * red_cell_volume;
    let red_cell_solids = red_cell_volume - v_r;

    // Effective osmolality at cell membranes: 2·(Na + K) + glucose
    // (urea starts at one concentration everywhere, so it adds nothing).
    let tonicity = 2.0 * (patient.na + patient.k) + patient.glucose_mmol_l;
    let reference_tonicity = 2.0 * (p.na_ref_mmol_l + p.k_ref_mmol_l) + p.glucose_ref_mmol_l;
    let brain_normal = p.brain_fraction_of_icf * icf;
    let brain_fixed = (1.0 - p.brain_adaptive_fraction) * reference_tonicity * brain_normal;
    let brain_osmolytes = match patient.onset {
        Onset::Acute => p.brain_adaptive_fraction * reference_tonicity * brain_normal,
        Onset::Chronic => (tonicity * brain_normal - brain_fixed).max(0.0),
    };
    let v_b = (brain_fixed + brain_osmolytes) / tonicity;
    let v_c = icf - v_r - v_b;
    if v_c <= 0.1 * icf {
        return Err(InputError::OutOfRange {
            field: "hematocrit".into(),
            value: patient.hematocrit,
            min: 0.1,
            max: 0.7,
            unit: "fraction (red cells leave no room for tissue cells)".into(),
        });
    }
    // Cells keep ~140 mmol/L potassium at normal tonicity and follow
    // tonicity by water movement.
    let k_cell_conc = p.cell_k_mmol_l * tonicity / reference_tonicity;
    let k_cells = k_cell_conc * v_c;
    let cell_fixed = tonicity * v_c - 2.0 * k_cells;
    if cell_fixed <= 0.0 {
        return Err(InputError::OutOfRange {
            field: "cell_k_mmol_l".into(),
            value: p.cell_k_mmol_l,
            min: 0.0,
            max: reference_tonicity / 2.0,
            unit: "mmol/L (cell potassium salts exceed cell tonicity)".into(),
        });
    }
    let red_cell_osmoles = tonicity * v_r;
    Ok(Compartments {
        ecf,
        blood_volume_start,
        blood_volume_method,
        plasma_volume,
        red_cell_volume,
        v_p,
        v_i,
        v_r,
        v_b,
        v_c,
        plasma_solids,
        red_cell_solids,
        tonicity,
        reference_tonicity,
        brain_normal,
        brain_fixed,
        brain_osmolytes,
        k_cell_conc,
        k_cells,
        cell_fixed,
        red_cell_osmoles,
    })
}

/// Proteins and the capillary balance: filtration equal to lymph flow,
/// albumin escape equal to its return.
pub(super) struct Capillaries {
    /// Albumin in plasma and interstitium, globulins in both, g.
    pub albumin_p: f64,
    pub albumin_i: f64,
    pub globulin_p: f64,
    pub globulin_i: f64,
    /// Lymph flow at rest, L/h.
    pub lymph0: f64,
    /// Filtration coefficient, L/h/mmHg.
    pub kf: f64,
    /// Capillary pressure at rest, mmHg.
    pub capillary0: f64,
    /// Blood volume at the start, L.
    pub blood_volume0: f64,
    /// Interstitial pressure–volume curve.
    pub interstitium: capillary::InterstitialCompliance,
    /// Lymph slope scale, mmHg.
    pub lymph_scale: f64,
    /// Fraction of interstitial albumin returned per hour at rest, 1/h.
    pub albumin_return_per_h: f64,
}

/// Proteins, capillaries and lymph at rest, for compartments `w` in a body
/// `size` times the 70 kg reference.
pub(super) fn capillaries_and_lymph(
    patient: &ResolvedPatient,
    p: &Params,
    w: &Compartments,
    size: f64,
) -> Capillaries {
    let (v_p, v_i) = (w.v_p, w.v_i);
    let albumin_p = patient.albumin_g_l * v_p;
    let albumin_i =
        albumin_p * p.albumin_extravascular_fraction / (1.0 - p.albumin_extravascular_fraction);
    let globulin_p = p.globulin_g_l * v_p;
    let pi_p = capillary::landis_pappenheimer_mmhg((albumin_p + globulin_p) / v_p / 10.0);
    let interstitial_protein =
        capillary::protein_for_colloid_pressure_g_dl(p.interstitial_colloid_mmhg) * 10.0 * v_i;
    let globulin_i = (interstitial_protein - albumin_i).max(0.0);
    let pi_i = capillary::landis_pappenheimer_mmhg((albumin_i + globulin_i) / v_i / 10.0);
    let lymph0 = units::ml_to_l(p.lymph_flow_ml_h) * size;
    let kf = units::ml_to_l(units::per_min_to_per_h(p.kf_ml_min_mmhg)) * size;
    let p_i0 = p.interstitial_pressure_mmhg;
    let capillary0 = p_i0 + p.sigma_albumin * (pi_p - pi_i) + lymph0 / kf;
    let blood_volume0 = w.plasma_volume + w.red_cell_volume;
    let e_low = p.interstitial_elastance_mmhg / v_i;
    let interstitium = capillary::InterstitialCompliance::through(
        v_i,
        p_i0,
        e_low,
        e_low / p.oedema_compliance_ratio,
        p.interstitial_knee_width_fraction * v_i,
    );
    let lymph_scale =
        capillary::lymph_scale_mmhg(p_i0, p.lymph_half_pressure_mmhg, p.lymph_max_ratio);
    let albumin_return_per_h = p.albumin_escape_per_h * albumin_p / albumin_i;
    Capillaries {
        albumin_p,
        albumin_i,
        globulin_p,
        globulin_i,
        lymph0,
        kf,
        capillary0,
        blood_volume0,
        interstitium,
        lymph_scale,
        albumin_return_per_h,
    }
}

/// Exchange constants of the membranes, set from their time constants.
pub(super) struct Membranes {
    /// Hydraulic conductances of tissue cells, brain cells, red cells, L/h/mmHg.
    pub cell_conductance: f64,
    pub brain_conductance: f64,
    pub red_cell_conductance: f64,
    /// Permeability-surface products of urea (cells, red cells) and of
    /// small solutes across capillaries, L/h.
    pub urea_ps_cells: f64,
    pub urea_ps_red_cells: f64,
    pub small_solute_ps: f64,
    /// Cell/interstitium potassium ratio and potassium shift constant, L/h.
    pub k_ratio: f64,
    pub k_rate: f64,
}

/// Membrane exchange for compartments `w` at van't Hoff factor `rt`.
pub(super) fn membranes(
    patient: &ResolvedPatient,
    p: &Params,
    w: &Compartments,
    rt: f64,
) -> Membranes {
    let (v_c, v_b, v_r, v_i, v_p) = (w.v_c, w.v_b, w.v_r, w.v_i, w.v_p);
    let tonicity = w.tonicity;
    let cell_conductance = membrane::conductance_for_time_constant(
        units::min_to_h(p.cell_water_equilibration_min),
        rt,
        tonicity,
        v_c,
        v_i,
    );
    let brain_conductance = membrane::conductance_for_time_constant(
        units::min_to_h(p.brain_water_equilibration_min),
        rt,
        tonicity,
        v_b,
        v_i,
    );
    let red_cell_conductance = membrane::conductance_for_time_constant(
        units::s_to_h(p.rbc_water_equilibration_s),
        rt,
        tonicity,
        v_r,
        v_p,
    );
    let urea_ps_cells = membrane::ps_for_time_constant(
        units::min_to_h(p.urea_cell_equilibration_min),
        v_i,
        v_c + v_b,
    );
    let urea_ps_red_cells =
        membrane::ps_for_time_constant(units::s_to_h(p.urea_rbc_equilibration_s), v_p, v_r);
    let small_solute_ps =
        membrane::ps_for_time_constant(units::min_to_h(p.small_solute_exchange_min), v_p, v_i);
    let k_ratio = w.k_cell_conc / patient.k;
    let k_rate = potassium::rate_for_time_constant(p.potassium_shift_h, k_ratio, w.ecf, v_c);
    Membranes {
        cell_conductance,
        brain_conductance,
        red_cell_conductance,
        urea_ps_cells,
        urea_ps_red_cells,
        small_solute_ps,
        k_ratio,
        k_rate,
    }
}

/// Metabolism at rest.
pub(super) struct Metabolism {
    /// Endogenous glucose production, mmol/h.
    pub glucose_production: f64,
    /// Urea generation, mmol/h.
    pub urea_generation: f64,
    /// Water of oxidation and insensible loss, L/h.
    pub metabolic_water_l_h: f64,
    pub insensible_l_h: f64,
}

/// Metabolism of a body `size` times the 70 kg reference.
pub(super) fn metabolism(patient: &ResolvedPatient, p: &Params, size: f64) -> Metabolism {
    let glucose_production =
        p.glucose_production_mg_kg_min * patient.weight_kg * 60.0 / units::GLUCOSE_G_PER_MOL;
    let urea_generation =
        units::per_day_to_per_h(p.urea_generation_mmol_kg_day * patient.weight_kg);
    Metabolism {
        glucose_production,
        urea_generation,
        metabolic_water_l_h: units::ml_to_l(units::per_day_to_per_h(p.metabolic_water_ml_day))
            * size,
        insensible_l_h: units::ml_to_l(units::per_day_to_per_h(p.insensible_ml_day)) * size,
    }
}

/// The kidney at rest.
pub(super) struct Kidney {
    /// GFR, L/h.
    pub gfr_l_h: f64,
    /// Resting sodium and potassium excretion, largest sodium excretion, mmol/h.
    pub na_excretion0: f64,
    pub k_excretion0: f64,
    pub na_excretion_max: f64,
    /// Fractional excretion of filtered urea.
    pub urea_fe: f64,
    /// Most dilute and most concentrated urine, mOsm/kg.
    pub urine_osm_min: f64,
    pub urine_osm_max: f64,
}

/// Filtration, resting excretion and the concentrating range for this age
/// and GFR; urea is excreted as fast as it is generated (`urea_generation`,
/// mmol/h).
pub(super) fn kidney(patient: &ResolvedPatient, p: &Params, urea_generation: f64) -> Kidney {
    let gfr_l_h = units::ml_to_l(units::per_min_to_per_h(p.gfr_ml_min));
    let na_excretion0 = units::per_day_to_per_h(p.na_intake_mmol_day);
    let k_excretion0 = units::per_day_to_per_h(p.k_intake_mmol_day);
    let urea_fe = (urea_generation / (gfr_l_h * patient.urea_mmol_l)).clamp(0.05, 1.0);
    let (urine_osm_min, urine_osm_max) = kidney::concentrating_range(
        kidney::min_urine_osmolality_for_age(
            p.urine_osm_min,
            p.urine_osm_min_rise_per_year,
            patient.age_years,
        ),
        kidney::max_urine_osmolality_for_age(
            p.urine_osm_max,
            p.urine_osm_max_decline_per_year,
            patient.age_years,
        ),
        p.gfr_ml_min,
        p.ckd_gfr_ml_min,
    );
    Kidney {
        gfr_l_h,
        na_excretion0,
        k_excretion0,
        na_excretion_max: p.na_excretion_max_filtered_fraction * gfr_l_h * patient.na,
        urea_fe,
        urine_osm_min,
        urine_osm_max,
    }
}

/// The state vector of the start: the patient's concentrations in every
/// compartment `w`, the proteins of `cap`; the gut, drugs and ledger empty.
pub(super) fn initial_state(
    patient: &ResolvedPatient,
    w: &Compartments,
    cap: &Capillaries,
) -> Vec<f64> {
    let mut y = vec![0.0; N_STATES];
    let (na, k, g, u) = (
        patient.na,
        patient.k,
        patient.glucose_mmol_l,
        patient.urea_mmol_l,
    );
    let (v_c, v_r, v_b, v_i, v_p) = (w.v_c, w.v_r, w.v_b, w.v_i, w.v_p);
    y[StateSlot::CellsL as usize] = v_c;
    y[StateSlot::RedCellsL as usize] = v_r;
    y[StateSlot::BrainL as usize] = v_b;
    y[StateSlot::InterstitiumL as usize] = v_i;
    y[StateSlot::PlasmaL as usize] = v_p;
    y[StateSlot::NaPlasma as usize] = na * v_p;
    y[StateSlot::NaInterstitium as usize] = na * v_i;
    y[StateSlot::KPlasma as usize] = k * v_p;
    y[StateSlot::KInterstitium as usize] = k * v_i;
    y[StateSlot::KCells as usize] = w.k_cells;
    y[StateSlot::GlucosePlasma as usize] = g * v_p;
    y[StateSlot::GlucoseInterstitium as usize] = g * v_i;
    y[StateSlot::UreaPlasma as usize] = u * v_p;
    y[StateSlot::UreaInterstitium as usize] = u * v_i;
    y[StateSlot::UreaCells as usize] = u * (v_c + v_b);
    y[StateSlot::UreaRedCells as usize] = u * v_r;
    y[StateSlot::AlbuminPlasma as usize] = cap.albumin_p;
    y[StateSlot::AlbuminInterstitium as usize] = cap.albumin_i;
    y[StateSlot::GlobulinPlasma as usize] = cap.globulin_p;
    y[StateSlot::RedCellOsmoles as usize] = w.red_cell_osmoles;
    y[StateSlot::BrainOsmolytes as usize] = w.brain_osmolytes;
    y
}
