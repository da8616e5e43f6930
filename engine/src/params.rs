//! Every physiological parameter of the model, in one place.
//!
//! Each parameter has a name (the one scripts and sweep specs use), a unit,
//! a default, an admissible range and a source. A source marked "(M)" is a
//! value recalled from memory rather than read from the cited work; "common
//! practice" marks a fact of the trade without a single source; "calibrated"
//! marks a value chosen so that the model meets a reference check (the check
//! is named).
//!
//! Nothing else in the engine hard-codes a physiological number: the
//! mechanisms in [`crate::physiology`] read them from [`Params`].

use crate::error::InputError;

/// Description of one parameter, for listings, validation and reports.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParamInfo {
    /// Name used by scripts (`set_param`) and sweep specs.
    pub name: &'static str,
    /// Unit of the value.
    pub unit: &'static str,
    /// Default value.
    pub default: f64,
    /// Smallest admissible value.
    pub min: f64,
    /// Largest admissible value.
    pub max: f64,
    /// Where the default comes from.
    pub source: &'static str,
    /// What the parameter means.
    pub meaning: &'static str,
}

macro_rules! parameters {
    ($( $name:ident : $default:expr, [$min:expr, $max:expr], $unit:expr, $meaning:expr, $source:expr; )*) => {
        /// All model parameters, one `f64` each, units in [`PARAMETERS`].
        #[derive(Debug, Clone, PartialEq)]
        pub struct Params {
            $( #[doc = $meaning] #[doc = ""] #[doc = concat!("Unit: ", $unit, ". Source: ", $source, ".")] pub $name: f64, )*
        }

        impl Default for Params {
            fn default() -> Self {
                Self { $( $name: $default, )* }
            }
        }

        /// The table of every parameter: name, unit, default, range, source.
        pub const PARAMETERS: &[ParamInfo] = &[
            $( ParamInfo { name: stringify!($name), unit: $unit, default: $default, min: $min, max: $max, source: $source, meaning: $meaning }, )*
        ];

        impl Params {
            /// Value of a parameter by its documented name.
            pub fn get(&self, name: &str) -> Option<f64> {
                match name {
                    $( stringify!($name) => Some(self.$name), )*
                    _ => None,
                }
            }

            fn slot(&mut self, name: &str) -> Option<&mut f64> {
                match name {
                    $( stringify!($name) => Some(&mut self.$name), )*
                    _ => None,
                }
            }
        }
    };
}

parameters! {
    // --- reference plasma composition ("normal") ---------------------------
    na_ref_mmol_l: 140.0, [120.0, 160.0], "mmol/L", "Normal serum sodium: the tonicity brain cells are adapted to at rest", "common practice";
    k_ref_mmol_l: 4.2, [2.0, 7.0], "mmol/L", "Normal serum potassium", "common practice";
    glucose_ref_mmol_l: 5.0, [2.0, 15.0], "mmol/L", "Normal fasting plasma glucose", "common practice";
    globulin_g_l: 27.0, [5.0, 60.0], "g/L", "Non-albumin plasma protein (total protein ~69 g/L minus albumin ~42 g/L)", "docs/model.md, capillaries and lymph (M)";
    cell_k_mmol_l: 140.0, [100.0, 170.0], "mmol/L", "Potassium concentration of cell water at normal tonicity", "docs/model.md, compartments (common practice)";

    // --- body composition ---------------------------------------------------
    tbw_fraction_man: 0.60, [0.3, 0.8], "L/kg", "Total body water per kg, adult men", "common practice";
    tbw_fraction_woman: 0.50, [0.3, 0.8], "L/kg", "Total body water per kg, adult women", "common practice";
    tbw_fraction_elderly_man: 0.50, [0.3, 0.8], "L/kg", "Total body water per kg, elderly men", "common practice";
    tbw_fraction_elderly_woman: 0.45, [0.3, 0.8], "L/kg", "Total body water per kg, elderly women", "common practice";
    elderly_age_years: 65.0, [40.0, 100.0], "years", "Age from which the elderly water fractions apply", "common practice";
    icf_fraction: 0.6667, [0.4, 0.8], "1", "Intracellular share of total body water (two thirds)", "common practice";
    blood_volume_ml_kg_man: 70.0, [40.0, 120.0], "mL/kg", "Blood volume per kg of body weight, men (used when no height is given)", "common practice: 70 mL/kg in men";
    blood_volume_ml_kg_woman: 65.0, [40.0, 120.0], "mL/kg", "Blood volume per kg of body weight, women (used when no height is given)", "common practice: 65 mL/kg in women";
    brain_fraction_of_icf: 0.036, [0.01, 0.1], "1", "Brain cell water as a share of intracellular water (~1 L of ~28 L)", "docs/model.md, compartments (M)";
    rbc_water_fraction: 0.72, [0.5, 0.9], "1", "Water share of red-cell volume", "physiology tables (M)";
    plasma_water_fraction: 0.93, [0.8, 1.0], "1", "Water share of plasma volume", "common practice";
    hematocrit_man: 0.44, [0.15, 0.7], "1", "Default hematocrit, men", "common practice";
    hematocrit_woman: 0.40, [0.15, 0.7], "1", "Default hematocrit, women", "common practice";
    albumin_ref_g_l: 42.0, [10.0, 60.0], "g/L", "Default plasma albumin", "docs/model.md, capillaries and lymph: 35-50 g/L (M)";
    urea_ref_mmol_l: 5.0, [1.0, 60.0], "mmol/L", "Default plasma urea", "common practice";

    // --- cell membranes (docs/model.md, cell membranes) ---------------------------------
    body_temperature_c: 37.0, [30.0, 42.0], "degC", "Body temperature for the van't Hoff factor RT", "common practice";
    cell_water_equilibration_min: 4.0, [0.1, 60.0], "min", "Time constant of osmotic water exchange between tissue cells and interstitium (steady state after ~4 time constants)", "Hamilton, Ward & Watson, Am J Physiol 1993: muscle at steady state ~17 min after an osmotic step (M)";
    rbc_water_equilibration_s: 1.0, [0.01, 60.0], "s", "Time constant of osmotic water exchange between red cells and plasma", "docs/model.md, cell membranes: under a second (M)";
    brain_water_equilibration_min: 4.0, [0.1, 60.0], "min", "Time constant of osmotic water exchange between brain cells and interstitium", "assumed equal to other tissues (M)";
    sigma_urea_cells: 0.0, [0.0, 1.0], "1", "Reflection coefficient of urea at tissue-cell membranes", "docs/model.md, cell membranes (urea an ineffective osmole)";
    sigma_urea_rbc: 0.65, [0.0, 1.0], "1", "Reflection coefficient of urea at the red-cell membrane", "Toon & Solomon, Biochim Biophys Acta 1987";
    sigma_urea_brain: 0.0, [0.0, 1.0], "1", "Reflection coefficient of urea at brain-cell membranes", "docs/model.md, cell membranes (M)";
    urea_cell_equilibration_min: 10.0, [0.1, 600.0], "min", "Time constant of urea exchange between interstitium and cells", "docs/model.md, cell membranes: minutes (M)";
    urea_rbc_equilibration_s: 10.0, [0.1, 600.0], "s", "Time constant of urea exchange between plasma and red cells", "(M)";
    potassium_shift_h: 2.0, [0.1, 48.0], "h", "Time constant for extracellular potassium to approach its distribution equilibrium with cells", "docs/model.md, metabolism and insensible loss: over hours (M)";

    // --- capillaries and lymph (docs/model.md, capillaries and lymph) --------------------------
    kf_ml_min_mmhg: 6.67, [0.5, 50.0], "mL/min/mmHg", "Whole-body capillary filtration coefficient", "Guyton & Hall textbook (M)";
    interstitial_pressure_mmhg: -3.0, [-10.0, 5.0], "mmHg", "Interstitial fluid pressure at rest", "Guyton & Hall textbook";
    interstitial_colloid_mmhg: 8.0, [1.0, 20.0], "mmHg", "Interstitial colloid osmotic pressure at rest", "Guyton & Hall textbook";
    sigma_albumin: 0.9, [0.5, 1.0], "1", "Reflection coefficient of plasma proteins at the capillary wall", "docs/model.md, capillaries and lymph (M)";
    capillary_elastance_mmhg: 10.0, [0.5, 100.0], "mmHg per fraction of blood volume", "Rise of capillary pressure per relative blood-volume change (2 mmHg per L at 5 L)", "calibrated: one quarter of isotonic crystalloid stays intravascular (check M4)";
    interstitial_elastance_mmhg: 20.0, [2.0, 200.0], "mmHg per fraction of interstitial volume", "Stiffness of the interstitium while its pressure is negative (1.9 mmHg per L at 10.5 L)", "calibrated against check M4; Guyton's pressure-volume curve (M)";
    oedema_compliance_ratio: 15.0, [1.0, 100.0], "1", "How many times more compliant the interstitium is once its pressure is positive", "Guyton's interstitial pressure-volume curve (M)";
    lymph_flow_ml_h: 120.0, [20.0, 500.0], "mL/h", "Lymph flow at rest (equals net filtration at rest)", "docs/model.md, capillaries and lymph: 2-3 L/day (Guyton & Hall)";
    lymph_max_ratio: 20.0, [1.5, 50.0], "1", "Plateau of lymph flow as a multiple of resting flow", "Guyton & Hall lymph flow curve (M)";
    lymph_half_pressure_mmhg: 0.0, [-5.0, 5.0], "mmHg", "Interstitial pressure at which lymph flow is half its plateau", "Guyton & Hall lymph flow curve (M)";
    overfill_albumin_leak_gain: 40.0, [0.0, 200.0], "1", "Rise of the albumin escape rate per unit of blood volume above normal beyond the threshold (an overfilled circulation leaks protein)", "calibrated: 5 % albumin, 20 mL/kg on a normal blood volume, keeps about half in the vessels 30 min after the end against ~0.7 when it replaces blood loss; reviews of volume kinetics report ~40 % against ~90 % (Chappell, Jacob et al., Anesthesiology 2008;109:723-40, from memory)";
    overfill_leak_threshold_fraction: 0.08, [0.0, 0.5], "1", "Blood volume excess (fraction of normal) below which the albumin escape rate is unchanged", "calibrated: 1-2 L of crystalloid or 5 % dextrose (blood volume up to ~8 %) leave the escape rate as it was, so the crystalloid checks hold (M)";
    albumin_escape_per_h: 0.055, [0.005, 0.3], "1/h", "Transcapillary escape rate of plasma albumin", "docs/model.md, capillaries and lymph: 5-6 %/h; Chahid et al. 2021: 6.2 %/h";
    albumin_return_flow_exponent: 0.0, [0.0, 1.0], "1", "Exponent of albumin return on lymph flow relative to rest (1 = lymph albumin concentration independent of flow)", "(M): lymph protein concentration falls as lymph flow rises";
    albumin_extravascular_fraction: 0.6, [0.3, 0.8], "1", "Share of body albumin outside the plasma at rest", "docs/model.md, capillaries and lymph: over 60 % (M)";
    small_solute_exchange_min: 1.0, [0.1, 60.0], "min", "Time constant of small-solute exchange between plasma and interstitium", "docs/model.md, capillaries and lymph: minutes (M)";

    // --- metabolism and insensible loss (docs/model.md, metabolism and insensible loss) -----------------
    insensible_ml_day: 800.0, [0.0, 5000.0], "mL/day", "Insensible loss of solute-free water", "docs/model.md, metabolism and insensible loss (common practice)";
    metabolic_water_ml_day: 300.0, [0.0, 1000.0], "mL/day", "Water of oxidation", "docs/model.md, metabolism and insensible loss: 250-350 mL/day (common practice)";
    glucose_production_mg_kg_min: 2.0, [0.5, 6.0], "mg/kg/min", "Endogenous glucose production at rest", "physiology textbooks (M)";
    glucose_insulin_independent_fraction: 0.5, [0.1, 0.9], "1", "Share of resting glucose disposal that needs no insulin (brain, red cells)", "(M)";
    glucose_uptake_km_mmol_l: 1.5, [0.1, 10.0], "mmol/L", "Half-saturation of insulin-independent glucose uptake", "(M)";
    insulin_gain: 2.0, [0.0, 5.0], "1", "Exponent of insulin-dependent disposal on glucose relative to its set point", "(M)";
    insulin_activity: 1.0, [0.0, 3.0], "1", "Insulin action relative to normal (0 = absent)", "model switch";
    urea_generation_mmol_kg_day: 5.7, [0.0, 30.0], "mmol/kg/day", "Urea generation from protein catabolism (about 1 g protein/kg/day)", "common practice (M)";

    // --- kidney and antidiuretic hormone (docs/model.md, the kidney) ----------------
    avp_threshold_mosm_kg: 284.0, [260.0, 300.0], "mOsm/kg", "Population-mean plasma osmolality threshold for osmotic vasopressin release; each patient's own threshold is solved at the start within avp_threshold_spread_mosm_kg of it (docs/model.md, the start)", "Baylis & Robertson, J R Soc Med 1980";
    avp_threshold_spread_mosm_kg: 10.0, [0.0, 30.0], "mOsm/kg", "How far an individual's osmotic threshold may lie from the population mean", "from memory: thresholds of healthy adults in hypertonic-saline studies span about 275-295 mOsm/kg, stable within a person (Robertson's osmoregulation studies)";
    avp_slope_pmol_l_per_mosm: 0.63, [0.05, 3.0], "pmol/L per mOsm/kg", "Slope of plasma vasopressin on plasma osmolality above threshold", "Baylis & Robertson, J R Soc Med 1980";
    avp_half_max_pmol_l: 1.8, [0.1, 20.0], "pmol/L", "Vasopressin giving half the maximal rise of urine osmolality", "urine near maximal at ~5 pg/mL (docs/model.md, the kidney) (M)";
    avp_hill: 2.0, [0.5, 6.0], "1", "Hill exponent of urine osmolality on vasopressin", "(M)";
    avp_floor_pmol_l: 0.0, [0.0, 50.0], "pmol/L", "Vasopressin secreted whatever the osmolality (unsuppressible antidiuresis)", "model switch";
    urine_osm_min: 50.0, [30.0, 300.0], "mOsm/kg", "Most dilute urine of a young adult (30 years)", "common practice: 50-100 mOsm/kg";
    urine_osm_min_rise_per_year: 0.8, [0.0, 5.0], "mOsm/kg per year over 30", "Rise of the most dilute urine with age (diluting capacity falls)", "from memory: minimum urine osmolality after a water load ~52 mOsm/kg in young and ~92 mOsm/kg in healthy elderly adults (Faull, Holmes & Baylis, Age Ageing 1993)";
    urine_osm_max: 1200.0, [300.0, 1500.0], "mOsm/kg", "Most concentrated urine of a healthy young adult", "docs/model.md, the kidney";
    urine_osm_max_decline_per_year: 5.0, [0.0, 20.0], "mOsm/kg per year over 30", "Loss of concentrating ability with age", "(M)";
    gfr_ml_min: 120.0, [5.0, 200.0], "mL/min", "Glomerular filtration rate", "common practice";
    na_intake_mmol_day: 150.0, [0.0, 600.0], "mmol/day", "Habitual sodium intake (equals excretion at steady state)", "common practice (M)";
    k_intake_mmol_day: 70.0, [0.0, 300.0], "mmol/day", "Habitual potassium intake", "common practice (M)";
    natriuresis_gain: 13.0, [0.0, 100.0], "1", "Log-gain of sodium excretion on relative extracellular volume", "calibrated: excess extracellular volume excreted with a time constant of about a day (M)";
    kaliuresis_exponent: 2.0, [0.0, 6.0], "1", "Exponent of potassium excretion on plasma potassium relative to its start", "(M)";
    glucose_renal_threshold_mmol_l: 10.0, [5.0, 25.0], "mmol/L", "Plasma glucose above which glucose appears in urine", "docs/model.md, the kidney";

    volume_avp_threshold_fraction: 0.08, [0.0, 0.5], "1", "Blood-volume deficit (fraction of normal) beyond which vasopressin rises without an osmotic stimulus", "docs/model.md, the kidney: steep rise past ~8-10 % loss (M)";
    volume_avp_gain_pmol_l: 150.0, [0.0, 2000.0], "pmol/L per fraction of blood volume", "Rise of vasopressin per fraction of blood volume lost beyond the threshold", "(M): ~10 pmol/L at 15 % loss";
    ecf_deficit_fraction: 0.0, [0.0, 0.5], "1", "Extracellular volume deficit at the start, as a fraction of normal (hypovolemia)", "patient state";
    v2_response_h: 0.5, [0.01, 6.0], "h", "Time constant of the collecting duct's response to a change in V2 agonism (vasopressin clearance and water-channel trafficking)", "(M)";
    desmopressin_half_life_h: 3.0, [0.5, 24.0], "h", "Elimination half-life of desmopressin", "product information of desmopressin, 2-4 h (M)";
    gut_absorption_half_life_min: 12.0, [2.0, 120.0], "min", "Half-life of absorption from the gut of water drunk (and of what it carries); first order", "Peronnet et al. 2012, pharmacokinetics of ingested D2O-labelled water in 36 adults: absorption half-life ~11-13 min (journal Eur J Appl Physiol 112:2213, from memory)";
    desmopressin_absorption_h: 0.7, [0.05, 12.0], "h", "Absorption time constant of desmopressin given under the skin, in the nose or by mouth", "(M)";
    desmopressin_avp_equiv_pmol_l_per_ug: 10.0, [0.1, 200.0], "pmol/L per ug", "Vasopressin-equivalent V2 agonism per microgram of desmopressin in the body", "calibrated: 2 ug IV keeps urine near maximally concentrated for about 10 h (M)";
    desmopressin_bioavailability_nasal: 0.05, [0.0, 1.0], "1", "Share of an intranasal desmopressin dose that reaches the circulation", "(M)";
    desmopressin_bioavailability_oral: 0.0016, [0.0, 1.0], "1", "Share of an oral desmopressin dose that reaches the circulation", "(M)";
    v2_antagonist_half_life_h: 12.0, [1.0, 72.0], "h", "Elimination half-life of the oral V2 antagonist", "(M)";
    v2_antagonist_ki_mg: 10.0, [0.01, 100.0], "mg", "Body content of V2 antagonist that halves V2 agonism", "calibrated: 15 mg in chronic inappropriate antidiuresis at ~126 mmol/L raises sodium by ~7 mmol/L in 24 h with habitual drinking (Han et al., J Korean Med Sci 2018;33:e112: 126.8 to 133.7 mmol/L in the first 24 h on 15 mg, n = 39)";
    loop_diuretic_na_mmol_h: 90.0, [0.0, 300.0], "mmol/h", "Extra sodium excretion at full loop-diuretic effect", "(M): peak natriuresis of a ceiling dose ~1.5 mmol/min in normal kidneys (maximal fractional excretion of sodium ~20 %); 40 mg IV then gives ~150-200 mmol over 3-4 h";
    loop_diuretic_k_mmol_h: 12.0, [0.0, 100.0], "mmol/h", "Extra potassium excretion at full loop-diuretic effect", "(M): about an eighth of the extra sodium";
    loop_diuretic_urine_osm: 300.0, [150.0, 500.0], "mOsm/kg", "Urine osmolality a loop diuretic pulls toward (the medullary gradient is lost)", "common practice (M)";
    loop_diuretic_ec50_mg: 10.0, [0.5, 500.0], "mg", "Loop diuretic (furosemide-equivalent) in the body giving half its full effect", "calibrated: 40 mg IV acts at once, peaks in the first half hour and has faded by ~3 h; common practice: IV onset ~5 min, peak ~30 min, duration ~2-3 h (M)";
    loop_diuretic_hill: 2.0, [0.5, 6.0], "1", "Hill exponent of loop-diuretic effect on the amount in the body (a steep, saturating dose-response)", "(M)";
    loop_diuretic_half_life_h: 1.0, [0.2, 12.0], "h", "Elimination half-life of a loop diuretic (furosemide, normal kidneys)", "common practice: furosemide ~1-2 h with normal renal function (M)";
    loop_diuretic_effect_delay_h: 0.25, [0.01, 4.0], "h", "Time constant with which a loop diuretic reaches its site of action (secreted into the tubule) from the blood", "calibrated (M): an IV dose's diuresis peaks about half an hour after the injection (common practice, from memory); the validation check of the peak time rests on the same recalled fact";
    loop_diuretic_bioavailability_oral: 0.5, [0.05, 1.0], "1", "Share of an oral loop-diuretic dose absorbed", "common practice: furosemide ~50 %, 10-100 % between people (M)";
    loop_diuretic_absorption_h: 1.0, [0.1, 12.0], "h", "Absorption time constant of an oral loop diuretic", "common practice: oral onset 30-60 min, peak 1-2 h, duration 6-8 h (M)";
    thiazide_min_urine_osm: 250.0, [50.0, 500.0], "mOsm/kg", "Most dilute urine at full thiazide effect (impaired diluting segment)", "(M)";
    thiazide_na_mmol_h: 3.0, [0.0, 50.0], "mmol/h", "Extra sodium excretion at full thiazide effect", "(M)";
    thiazide_k_mmol_h: 1.5, [0.0, 50.0], "mmol/h", "Extra potassium excretion at full thiazide effect", "(M)";
    ckd_gfr_ml_min: 60.0, [10.0, 120.0], "mL/min", "GFR below which the concentrating and diluting range narrows in proportion", "(M)";
    food_water_l_day: 0.7, [0.0, 3.0], "L/day", "Water eaten in food, part of the habitual intake; a fluid restriction limits drinks and leaves it", "from memory: textbook adult water-balance tables give ~0.7-1.0 L/day of water in food (M)";
    habitual_water_l_day: 0.0, [0.0, 30.0], "L/day", "Habitual water intake, drinks and food water (0: the default for the sex, habitual_water_man_l_day or habitual_water_woman_l_day)", "patient state";
    habitual_water_man_l_day: 2.5, [0.5, 10.0], "L/day", "Default habitual water intake (drinks and food water), men", "EFSA Panel on Dietetic Products, Nutrition and Allergies, EFSA Journal 2010;8(3):1459: adequate intake of total water 2.5 L/day for adult men";
    habitual_water_woman_l_day: 2.0, [0.5, 10.0], "L/day", "Default habitual water intake (drinks and food water), women", "EFSA Panel on Dietetic Products, Nutrition and Allergies, EFSA Journal 2010;8(3):1459: adequate intake of total water 2.0 L/day for adult women";
    unexplained_water_intake_max_l_day: 4.0, [1.0, 30.0], "L/day", "Largest habitual water intake a start may need without a cause that explains it (more is primary polydipsia)", "from memory: daily water intake of healthy adults rarely exceeds 3-4 L";
    na_reference_low_mmol_l: 135.0, [120.0, 140.0], "mmol/L", "Lower end of the serum sodium reference interval", "common practice";
    na_reference_high_mmol_l: 145.0, [140.0, 160.0], "mmol/L", "Upper end of the serum sodium reference interval", "common practice";
    na_excretion_max_filtered_fraction: 0.1, [0.01, 0.5], "1", "Largest sodium excretion as a share of the filtered load", "from memory: fractional sodium excretion rarely exceeds ~10 % even in maximal natriuresis";
    drug_electrolyte_scale_max: 1.5, [1.0, 5.0], "1", "Cap on the scaling of diuretic-driven sodium and potassium losses with plasma concentration relative to the start", "model choice (keeps drug losses bounded in extreme states)";
    interstitial_knee_width_fraction: 0.02, [0.001, 0.2], "1", "Width of the smooth knee of the interstitial pressure-volume curve, as a share of resting interstitial volume", "model choice (numerical smoothing of Guyton's curve)";
    thirst_enabled: 0.0, [0.0, 1.0], "1", "1 = the patient drinks when thirsty; 0 = drinks only what the scenario gives", "model switch";
    thirst_threshold_mosm_kg: 0.0, [0.0, 320.0], "mOsm/kg", "Plasma osmolality at which thirst begins (0: the patient's own vasopressin threshold plus thirst_offset_mosm_kg; docs/model.md, thirst)", "Thompson et al., Clin Sci 1986;71:651: thirst rises linearly above 281 mOsm/kg, a threshold similar to that of vasopressin; the individual threshold is solved at the start (docs/model.md, the start)";
    thirst_offset_mosm_kg: 0.9, [-10.0, 20.0], "mOsm/kg", "How far the thirst threshold lies above the patient's own vasopressin threshold", "systematic review of 12 studies, Perioper Med 2018;7:1 (authors from memory: Hughes, Mythen, Montgomery): thirst threshold 285.2 ± 1.3 mOsm/kg (95 % CI), vasopressin threshold 284.3 ± 0.7";
    thirst_gain_l_h_per_mosm: 0.1, [0.0, 2.0], "L/h per mOsm/kg", "Drinking rate per mOsm/kg above the thirst threshold (at the start, drinking at will takes the place of that much habitual drinking)", "(M): no published drinking rate per mOsm/kg was found; thirst ratings rise 0.3-0.54 cm (of a 10 cm scale) per mOsm/kg (Thompson et al. 1986; the 2018 review)";
    thirst_max_l_h: 1.0, [0.0, 5.0], "L/h", "Largest drinking rate", "(M)";

    // --- brain adaptation (docs/model.md, brain adaptation) --------------------------------
    brain_adaptive_fraction: 0.25, [0.0, 0.6], "1", "Share of brain-cell osmoles that can be shed or regained to defend volume", "(M)";
    brain_osmolyte_loss_h: 24.0, [1.0, 200.0], "h", "Time constant of losing adaptive osmolytes in hypotonicity", "docs/model.md, brain adaptation: electrolytes in hours, organic osmolytes 1-2 days (M)";
    brain_osmolyte_regain_h: 96.0, [1.0, 500.0], "h", "Time constant of regaining adaptive osmolytes on correction", "docs/model.md, brain adaptation: several days (M)";
}

impl Params {
    /// Set a parameter by name, checking that the name exists and the value
    /// lies in its admissible range.
    pub fn set(&mut self, name: &str, value: f64) -> Result<(), InputError> {
        let info = info(name).ok_or_else(|| InputError::UnknownParameter {
            name: name.to_string(),
            suggestion: crate::suggest::closest(name, PARAMETERS.iter().map(|p| p.name)),
        })?;
        if !value.is_finite() || value < info.min || value > info.max {
            return Err(InputError::OutOfRange {
                field: name.to_string(),
                value,
                min: info.min,
                max: info.max,
                unit: info.unit.to_string(),
            });
        }
        if let Some(slot) = self.slot(name) {
            *slot = value;
        }
        Ok(())
    }

    /// Check every parameter against its range (after deserialising or
    /// building by hand).
    pub fn validate(&self) -> Result<(), InputError> {
        for info in PARAMETERS {
            let value = self.get(info.name).unwrap_or(f64::NAN);
            if !value.is_finite() || value < info.min || value > info.max {
                return Err(InputError::OutOfRange {
                    field: info.name.to_string(),
                    value,
                    min: info.min,
                    max: info.max,
                    unit: info.unit.to_string(),
                });
            }
        }
        Ok(())
    }
}

/// Look a parameter up by name.
pub fn info(name: &str) -> Option<&'static ParamInfo> {
    PARAMETERS.iter().find(|p| p.name == name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_default_lies_in_its_range_and_names_are_unique() {
        let p = Params::default();
        p.validate().expect("defaults valid");
        let mut names: Vec<_> = PARAMETERS.iter().map(|p| p.name).collect();
        names.sort_unstable();
        let n = names.len();
        names.dedup();
        assert_eq!(n, names.len());
        for info in PARAMETERS {
            assert!(
                !info.source.is_empty() && !info.unit.is_empty(),
                "{}",
                info.name
            );
        }
    }

    #[test]
    fn set_checks_name_and_range() {
        let mut p = Params::default();
        p.set("gfr_ml_min", 60.0).unwrap();
        assert_eq!(p.gfr_ml_min, 60.0);
        match p.set("gfr_ml_mn", 60.0) {
            Err(InputError::UnknownParameter { suggestion, .. }) => {
                assert_eq!(suggestion.as_deref(), Some("gfr_ml_min"))
            }
            other => panic!("{other:?}"),
        }
        assert!(matches!(
            p.set("gfr_ml_min", -1.0),
            Err(InputError::OutOfRange { .. })
        ));
    }
}
