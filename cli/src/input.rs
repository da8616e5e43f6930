//! What a report is made from: a [`RunInput`] gathers the title, the
//! patient, the plan, the trajectory, the expectation results and the run
//! log, whatever produced them (the built-in demonstration case or a
//! scenario script). Everything downstream (summary, CSV, JSON, charts,
//! HTML) reads only a `RunInput`.

use crate::format::{fixed, hours_text};
use anyhow::{Context, Result};
use serde::Serialize;
use std::path::Path;
use tidewater::{Action, Plan, Simulation, Species, Stream, Trajectory};

/// One checked expectation of a scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Expectation {
    /// Line of the script where the expectation is written (0: none).
    pub line: usize,
    /// What was expected.
    pub description: String,
    /// Whether it held.
    pub passed: bool,
    /// The values behind the verdict.
    pub detail: String,
}

/// A label and a value, for the patient and plan tables.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Row {
    /// What the value is.
    pub label: String,
    /// The value with its unit.
    pub value: String,
}

fn row(label: &str, value: String) -> Row {
    Row {
        label: label.to_string(),
        value,
    }
}

/// One planned event, in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlanLine {
    /// When, h.
    pub time_h: f64,
    /// What happens.
    pub text: String,
}

/// The plan in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlanSummary {
    /// Length of the run, h.
    pub duration_h: f64,
    /// Sampling interval, h.
    pub sample_every_h: f64,
    /// Interval of rule checks, h.
    pub check_every_h: Option<f64>,
    /// Guideline set id.
    pub guideline: String,
    /// Whether the high-risk rules apply.
    pub high_risk: bool,
    /// Parameter overrides as `name = value`.
    pub overrides: Vec<String>,
    /// Planned events in time order.
    pub events: Vec<PlanLine>,
}

/// What a run is called and where it came from.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Heading {
    /// Short name for folders (`demo`, or the script's file stem).
    pub name: String,
    /// Title.
    pub title: String,
    /// Description (plain text).
    pub description: String,
    /// Where it came from (script path or "built-in").
    pub source: String,
}

/// Everything a report needs about one run.
#[derive(Debug, Clone)]
pub struct RunInput {
    /// Short name for folders (`demo`, or the script's file stem).
    pub name: String,
    /// Title.
    pub title: String,
    /// Description (plain text, may span lines).
    pub description: String,
    /// Where it came from (script path or "built-in").
    pub source: String,
    /// Patient as given and as derived (volumes, contents).
    pub patient: Vec<Row>,
    /// How the start was made steady (habitual intake, vasopressin,
    /// threshold, urine, blood volume).
    pub start: StartSummary,
    /// The plan.
    pub plan: PlanSummary,
    /// The simulated course.
    pub trajectory: Trajectory,
    /// Expectation results (empty when there are none).
    pub expectations: Vec<Expectation>,
    /// Messages the run logged.
    pub log: Vec<String>,
}

impl RunInput {
    /// Assemble a run input from a plan and its finished trajectory. The
    /// patient rows are derived from the plan (resolved patient, initial
    /// volumes and solute contents).
    pub fn assemble(
        heading: Heading,
        plan: &Plan,
        trajectory: Trajectory,
        expectations: Vec<Expectation>,
        log: Vec<String>,
    ) -> Result<RunInput> {
        let sim = Simulation::new(plan.clone()).context("building the initial state")?;
        Ok(RunInput {
            name: heading.name,
            title: heading.title,
            description: heading.description,
            source: heading.source,
            patient: patient_rows(&sim),
            start: StartSummary::of(&sim),
            plan: plan_summary(plan),
            trajectory,
            expectations,
            log,
        })
    }

    /// Whether every expectation held.
    pub fn all_expectations_hold(&self) -> bool {
        self.expectations.iter().all(|e| e.passed)
    }
}

/// The built-in demonstration case: the reference plan of the engine
/// (`tidewater::reference::benchmark_plan`), run now.
pub fn demo_input() -> Result<RunInput> {
    let plan = tidewater::reference::benchmark_plan();
    let trajectory = Simulation::new(plan.clone())?.run()?;
    RunInput::assemble(
        Heading {
            name: "demo".into(),
            title: "Demonstration: chronic hyponatremia, hypertonic boluses then isotonic saline"
                .into(),
            description: "An invented woman of 58 years and 62 kg with chronic hyponatremia \
         (serum sodium 118 mmol/L) receives three 150 mL boluses of 3 % saline \
         over 20 minutes each, half an hour apart, then 1 L of 0.9 % saline \
         over 12.5 h. Her habitual intake continues. Followed for 48 h."
                .into(),
            source: "built-in".into(),
        },
        &plan,
        trajectory,
        Vec::new(),
        Vec::new(),
    )
}

/// Load and run a scenario script into a run input: the only place that
/// knows about scripts. Script errors render as `file:line:col`, the
/// source line and a caret.
pub fn load_script(path: &Path) -> Result<RunInput> {
    let scenario = tidewater::scenario::Scenario::load(path).map_err(|e| anyhow::anyhow!("{e}"))?;
    let run = scenario.run().map_err(|e| anyhow::anyhow!("{e}"))?;
    let stem = path
        .file_stem()
        .unwrap_or_default()
        .to_string_lossy()
        .to_string();
    from_scenario_run(
        &scenario,
        scenario.plan(),
        run,
        slug(&stem),
        path.display().to_string(),
    )
}

/// A run input from a scenario's finished run of `plan` (the script's own
/// plan, or one changed by settings), named `name` (folders) and coming
/// from `source` (the script path, or what a caller calls it).
pub fn from_scenario_run(
    scenario: &tidewater::scenario::Scenario,
    plan: &Plan,
    run: tidewater::scenario::ScenarioRun,
    name: String,
    source: String,
) -> Result<RunInput> {
    RunInput::assemble(
        Heading {
            name,
            title: scenario.title().into(),
            description: scenario.description().into(),
            source,
        },
        plan,
        run.trajectory,
        run.expectations
            .into_iter()
            .map(|e| Expectation {
                line: e.line,
                description: e.description,
                passed: e.passed,
                detail: e.detail,
            })
            .collect(),
        run.log,
    )
}

/// Folder-safe name from a file stem or title.
pub fn slug(text: &str) -> String {
    let mut out = String::new();
    for c in text.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    let out = out.trim_end_matches('-').to_string();
    if out.is_empty() {
        "run".into()
    } else {
        out
    }
}

fn capitalise(word: &str) -> String {
    let mut chars = word.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// The start's balance as `summary.json` carries it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct StartSummary {
    /// The patient's own osmotic threshold for vasopressin, mOsm/kg.
    pub osmotic_threshold_mosm_kg: f64,
    /// The balance of the start, each value with its unit in its name.
    #[serde(flatten)]
    pub balance: tidewater::StartBalance,
}

impl StartSummary {
    /// The start of a simulation.
    pub fn of(sim: &Simulation) -> StartSummary {
        let c = &sim.model().calibration;
        StartSummary {
            osmotic_threshold_mosm_kg: c.avp_threshold_mosm_kg(),
            balance: c.start,
        }
    }
}

/// How the habitual water intake was set, in words.
fn intake_source(s: tidewater::WaterIntakeSource) -> &'static str {
    match s {
        tidewater::WaterIntakeSource::Given => "given",
        tidewater::WaterIntakeSource::DefaultForSex => "default for the sex",
        tidewater::WaterIntakeSource::SolvedForBalance => "solved so that the start balances",
        tidewater::WaterIntakeSource::NotApplicable => "none (habitual intake off)",
    }
}

/// The patient as resolved, with initial volumes and contents.
pub fn patient_rows(sim: &Simulation) -> Vec<Row> {
    let p = sim.patient();
    let y = &sim.initial().y;
    let obs = sim.model().observe(y, &tidewater::Inputs::default());
    let mut rows = vec![
        row("Sex", p.sex.to_string()),
        row("Age", format!("{} years", fixed(p.age_years, 0))),
        row("Weight", format!("{} kg", fixed(p.weight_kg, 1))),
    ];
    if let Some(h) = p.height_cm {
        rows.push(row("Height", format!("{} cm", fixed(h, 0))));
    }
    rows.extend([
        row("Onset", p.onset.to_string()),
        row("Symptoms", p.symptoms.to_string()),
        row("Cause", p.cause.to_string()),
        row("Serum sodium", format!("{} mmol/L", fixed(p.na, 1))),
        row("Serum potassium", format!("{} mmol/L", fixed(p.k, 1))),
        row("Glucose", format!("{} mmol/L", fixed(p.glucose_mmol_l, 1))),
        row("Urea", format!("{} mmol/L", fixed(p.urea_mmol_l, 1))),
        row("Albumin", format!("{} g/L", fixed(p.albumin_g_l, 0))),
        row("Hematocrit", fixed(p.hematocrit, 2)),
        row(
            "Total body water",
            format!("{} L ({})", fixed(p.total_water_l, 1), p.water_method),
        ),
        row("Tissue-cell water", format!("{} L", fixed(obs.cells_l, 2))),
        row("Red-cell water", format!("{} L", fixed(obs.red_cells_l, 2))),
        row("Brain-cell water", format!("{} L", fixed(obs.brain_l, 2))),
        row(
            "Interstitial water",
            format!("{} L", fixed(obs.interstitium_l, 2)),
        ),
        row("Plasma water", format!("{} L", fixed(obs.plasma_l, 2))),
        row(
            "Blood volume",
            format!(
                "{} L ({})",
                fixed(obs.blood_volume_l, 2),
                sim.model().calibration.start.blood_volume_method
            ),
        ),
        row(
            "Effective osmolality (tonicity)",
            format!("{} mOsm/kg", fixed(obs.tonicity_mosm_kg, 0)),
        ),
    ]);
    let c = &sim.model().calibration;
    let st = &c.start;
    rows.extend([
        row(
            "Habitual water intake (drinks and food)",
            format!(
                "{} L/day ({})",
                fixed(st.habitual_water_l_day, 2),
                intake_source(st.water_intake_source)
            ),
        ),
        row(
            "Habitual salt intake",
            format!("{} mmol/day of sodium", fixed(st.habitual_na_mmol_day, 0)),
        ),
        row(
            "Urea from protein",
            format!("{} mmol/day", fixed(st.urea_generation_mmol_day, 0)),
        ),
        row(
            "Vasopressin at the start",
            format!("{} pmol/L", fixed(st.vasopressin_pmol_l, 2)),
        ),
        row(
            "Osmotic threshold (this patient)",
            format!("{} mOsm/kg", fixed(c.avp_threshold_mosm_kg(), 1)),
        ),
        row(
            "Drinking at will (thirst)",
            if sim.model().params.thirst_enabled >= 0.5 {
                format!(
                    "on: {} L/day of the habitual water at the start; thirst begins at {} mOsm/kg",
                    fixed(st.thirst_water_l_day, 2),
                    fixed(st.thirst_onset_mosm_kg, 1)
                )
            } else {
                "off: drinks only the habitual intake and what the scenario gives".to_string()
            },
        ),
        row(
            "Urine at the start",
            format!(
                "{} L/day at {} mOsm/kg{}",
                fixed(st.urine_l_day, 2),
                fixed(st.urine_osm_mosm_kg, 0),
                if st.steady {
                    ""
                } else {
                    " (not steady: the given intake is not balanced)"
                }
            ),
        ),
    ]);
    for sp in Species::ALL {
        if sp == Species::Water {
            continue;
        }
        rows.push(row(
            &format!("{} held in the body (model pools)", capitalise(sp.name())),
            format!("{} {}", fixed(sp.content(y), 0), sp.unit()),
        ));
    }
    rows
}

/// A running stream in words.
pub fn describe_stream(s: &Stream) -> String {
    let r = &s.rates;
    let mut parts: Vec<String> = Vec::new();
    if r.water_in_l_h > 0.0 {
        parts.push(format!("{} mL/h in", fixed(r.water_in_l_h * 1000.0, 0)));
    }
    if r.oral_water_l_h > 0.0 {
        parts.push(format!(
            "{} mL/h by mouth",
            fixed(r.oral_water_l_h * 1000.0, 0)
        ));
    }
    if r.water_out_l_h > 0.0 {
        parts.push(format!("{} mL/h out", fixed(r.water_out_l_h * 1000.0, 0)));
    }
    if r.blood_loss_l_h > 0.0 {
        parts.push(format!(
            "blood {} mL/h out",
            fixed(r.blood_loss_l_h * 1000.0, 0)
        ));
    }
    if r.na_in_mmol_h + r.oral_na_mmol_h > 0.0 {
        parts.push(format!(
            "Na {} mmol/h in",
            fixed(r.na_in_mmol_h + r.oral_na_mmol_h, 1)
        ));
    }
    if r.na_out_mmol_h > 0.0 {
        parts.push(format!("Na {} mmol/h out", fixed(r.na_out_mmol_h, 1)));
    }
    if r.k_in_mmol_h + r.oral_k_mmol_h > 0.0 {
        parts.push(format!(
            "K {} mmol/h in",
            fixed(r.k_in_mmol_h + r.oral_k_mmol_h, 1)
        ));
    }
    if r.desmopressin_depot_ug_h + r.desmopressin_ug_h > 0.0 {
        parts.push("desmopressin".into());
    }
    if r.loop_diuretic_mg_h + r.loop_diuretic_depot_mg_h > 0.0 {
        parts.push("loop diuretic".into());
    }
    if r.thiazide_effect > 0.0 {
        parts.push("thiazide effect".into());
    }
    let rates = parts.join(", ");
    let water = r.water_in_l_h + r.oral_water_l_h;
    match s.duration_h {
        // A volume given over a time: what a clinician writes on a chart.
        Some(d) if water > 0.0 => format!(
            "start {}: {} mL over {} ({rates})",
            s.label,
            fixed(water * d * 1000.0, 0),
            hours_text(d)
        ),
        Some(d) if !parts.is_empty() => format!("start {}: {rates} for {}", s.label, hours_text(d)),
        Some(d) => format!("start {} for {}", s.label, hours_text(d)),
        None if !parts.is_empty() => format!("start {}: {rates} until stopped", s.label),
        None => format!("start {} until stopped", s.label),
    }
}

/// The plan in words.
pub fn plan_summary(plan: &Plan) -> PlanSummary {
    let mut events: Vec<PlanLine> = plan
        .events
        .iter()
        .map(|e| PlanLine {
            time_h: e.time_h,
            text: match &e.action {
                Action::Start(s) => describe_stream(s),
                Action::Stop(label) => format!("stop {label}"),
                Action::StopAll => "stop every running stream".into(),
                Action::SetParam { name, value } => format!("set {name} to {value}"),
                Action::ResolveCause => "the cause resolves".into(),
            },
        })
        .collect();
    events.sort_by(|a, b| a.time_h.total_cmp(&b.time_h));
    // Stopping the same stream twice at one moment (a restriction and a
    // nil-by-mouth both stop the habitual intake) is one action.
    events.dedup_by(|b, a| {
        a.text.starts_with("stop ") && a.text == b.text && (a.time_h - b.time_h).abs() < 1e-9
    });
    PlanSummary {
        duration_h: plan.duration_h,
        sample_every_h: plan.sample_every_h,
        check_every_h: plan.check_every_h,
        guideline: plan.limits.guideline.id.clone(),
        high_risk: plan.limits.high_risk,
        overrides: plan
            .overrides
            .iter()
            .map(|(n, v)| format!("{n} = {v}"))
            .collect(),
        events,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slugs_are_folder_safe() {
        assert_eq!(slug("Hypertonic Bolus (rescue)"), "hypertonic-bolus-rescue");
        assert_eq!(slug("***"), "run");
    }

    #[test]
    fn demo_plan_is_described() {
        let plan = plan_summary(&tidewater::reference::benchmark_plan());
        assert_eq!(plan.events.len(), 4);
        // 150 mL over 20 min is 450 mL/h.
        assert!(
            plan.events[0]
                .text
                .contains(": 150 mL over 20 min (450 mL/h in"),
            "{:?}",
            plan.events[0]
        );
    }
}
