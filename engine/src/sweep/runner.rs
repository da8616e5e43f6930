//! Running members: a [`MemberRunner`] turns one member's overrides into a
//! trajectory (a scenario script, or a bare plan); [`run_sweep`] runs the
//! members of a shard that a result file lacks on worker threads and
//! writes their rows in member order through an `OrderedWriter`, so a run
//! can be interrupted and resumed at any point.

use super::design::Shard;
use super::error::SweepError;
use super::rows::{completed_members, result_header, result_row};
use super::spec::SweepSpec;
use crate::trajectory::Trajectory;
use std::collections::BTreeMap;
use std::io::Write;
use std::path::Path;

/// Runs one member: applies the overrides `(name, value)` to the base
/// scenario and simulates it. One runner lives on each worker thread.
pub trait MemberRunner {
    /// Simulate the base scenario with these overrides. The bundled
    /// runners sample only what the state gives
    /// ([`crate::plan::SampleDetail::StateOnly`]): what a result row reads.
    fn run(&mut self, overrides: &[(String, f64)]) -> Result<Trajectory, String>;

    /// [`MemberRunner::run`] for a member whose row reports the mass
    /// balance (`balance`, [`super::checks_balance`]) or not; a runner may
    /// skip working it out when not. By default the same as `run`.
    fn run_member(
        &mut self,
        overrides: &[(String, f64)],
        balance: bool,
    ) -> Result<Trajectory, String> {
        let _ = balance;
        self.run(overrides)
    }
}

/// Run member `index` of `spec` with `runner` and give its result row
/// (without the line end): its overrides, the mass balance only where the
/// row reports it ([`super::checks_balance`]).
pub fn member_row(
    spec: &SweepSpec,
    index: usize,
    duration_h: f64,
    runner: &mut impl MemberRunner,
) -> String {
    let member = spec.member(index);
    let overrides: Vec<(String, f64)> = spec
        .parameters
        .iter()
        .zip(member.values.iter())
        .map(|(p, v)| (p.name.clone(), *v))
        .collect();
    let balance = super::checks_balance(spec, member.index);
    let outcome = runner.run_member(&overrides, balance);
    result_row(spec, &member, duration_h, &outcome)
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
            let known = crate::patient::numeric_patient_fields();
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
    plan: &mut crate::plan::Plan,
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

/// Refuse a `script.<name>` of `spec` (parsed from `text`, the file
/// `file`) that the base `scenario`, as loaded once before any member
/// runs, never reads with `setting(name, default)`: it would vary nothing.
/// A setting read only inside a rule is read at run time, not at load: a
/// name written as a string (`"name"`) in the script is let through, so
/// that only a name the script cannot read is refused.
pub fn check_script_settings(
    spec: &SweepSpec,
    text: &str,
    file: &str,
    scenario: &crate::scenario::Scenario,
) -> Result<(), SweepError> {
    let read = scenario.settings_read();
    for (i, p) in spec.parameters.iter().enumerate() {
        let Some(name) = p.name.strip_prefix("script.") else {
            continue;
        };
        if read.iter().any(|r| r == name) || scenario.source().contains(&format!("\"{name}\"")) {
            continue;
        }
        return Err(SweepError::spec(
            file,
            format!("parameters[{i}].name"),
            super::error::SpecProblem::UnreadSetting {
                name: p.name.clone(),
                suggestion: crate::suggest::closest(name, read.iter().map(|r| r.as_str())),
                read: read.clone(),
            },
        )
        .located(text));
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
        self.run_member(overrides, true)
    }

    fn run_member(
        &mut self,
        overrides: &[(String, f64)],
        balance: bool,
    ) -> Result<Trajectory, String> {
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
        // A row reads sodium, the brain-cell volume index and the state.
        plan.sample_detail = crate::plan::SampleDetail::StateOnly;
        plan.mass_balance = balance;
        scenario
            .trajectory_with_plan(plan)
            .map_err(|e| e.to_string())
    }
}

/// A runner for a base [`crate::Plan`] without rules.
#[derive(Debug, Clone)]
pub struct PlanRunner {
    /// The base plan.
    pub base: crate::plan::Plan,
}

impl MemberRunner for PlanRunner {
    fn run(&mut self, overrides: &[(String, f64)]) -> Result<Trajectory, String> {
        self.run_member(overrides, true)
    }

    fn run_member(
        &mut self,
        overrides: &[(String, f64)],
        balance: bool,
    ) -> Result<Trajectory, String> {
        if let Some((name, _)) = overrides.iter().find(|(n, _)| n.starts_with("script.")) {
            return Err(format!(
                "{name}: script settings need a scenario script as the base"
            ));
        }
        let mut plan = self.base.clone();
        apply_overrides(&mut plan, overrides)?;
        plan.sample_detail = crate::plan::SampleDetail::StateOnly;
        plan.mass_balance = balance;
        crate::simulate::Simulation::new(plan)
            .and_then(|s| s.run())
            .map_err(|e| e.to_string())
    }
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
) -> Result<usize, SweepError>
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
            .map_err(|e| SweepError::io(&file_name, e))?;
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
        .map_err(|e| SweepError::io(&file_name, e))?;
    let writer = std::sync::Mutex::new(OrderedWriter {
        out: std::io::BufWriter::new(file),
        next: 0,
        pending: BTreeMap::new(),
    });
    let next_job = std::sync::atomic::AtomicUsize::new(0);
    let threads = threads.max(1).min(todo.len());
    // A worker whose runner cannot be made, or whose row cannot be
    // written, records why; the others stop at their next member.
    let failure: std::sync::Mutex<Option<SweepError>> = std::sync::Mutex::new(None);
    std::thread::scope(|scope| {
        for _ in 0..threads {
            scope.spawn(|| {
                let mut runner = match make_runner() {
                    Ok(r) => r,
                    Err(message) => {
                        *failure.lock().expect("lock") = Some(SweepError::Runner {
                            file: file_name.clone(),
                            message,
                        });
                        return;
                    }
                };
                loop {
                    let k = next_job.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                    if k >= todo.len() || failure.lock().expect("lock").is_some() {
                        break;
                    }
                    let row = member_row(spec, todo[k], duration_h, &mut runner);
                    let mut w = writer.lock().expect("lock");
                    if let Err(e) = w.put(k, row) {
                        *failure.lock().expect("lock") = Some(SweepError::io(&file_name, e));
                        break;
                    }
                    drop(w);
                    progress.advance(1);
                }
            });
        }
    });
    if let Some(e) = failure.into_inner().expect("lock") {
        return Err(e);
    }
    let mut w = writer.into_inner().expect("lock");
    w.out.flush().map_err(|e| SweepError::io(&file_name, e))?;
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::Scenario;

    #[test]
    fn a_script_setting_the_script_never_reads_is_refused() {
        let source = "patient(#{ sex: \"female\", age_years: 58, weight_kg: 66, height_cm: 164, na: 140 });\nrun_for(hours(2));\nlet extra = setting(\"bolus_ml\", 150);\n";
        let scenario =
            Scenario::from_source_with_settings("s.rhai", source, Path::new("."), &[]).unwrap();
        assert_eq!(scenario.settings_read(), ["bolus_ml"]);
        let spec_with = |name: &str| {
            format!("scenario: s.rhai\ndesign: grid\nparameters:\n  - name: gfr_ml_min\n    values: [90]\n  - name: {name}\n    values: [100, 200]\n")
        };
        let text = spec_with("script.bolus_ml");
        let spec = SweepSpec::from_yaml(&text, "k.yaml").unwrap();
        assert!(check_script_settings(&spec, &text, "k.yaml", &scenario).is_ok());

        let text = spec_with("script.bolus_mll");
        let spec = SweepSpec::from_yaml(&text, "k.yaml").unwrap();
        let err = check_script_settings(&spec, &text, "k.yaml", &scenario).unwrap_err();
        assert_eq!(err.field(), Some("parameters[1].name"));
        assert_eq!(
            err.to_string(),
            "k.yaml:6:5: parameter script.bolus_mll: the base script never reads setting(\"bolus_mll\", ...) (did you mean \"script.bolus_ml\"?); the settings it reads: bolus_ml"
        );

        let bare = Scenario::from_source_with_settings(
            "b.rhai",
            &source.replace("let extra = setting(\"bolus_ml\", 150);\n", ""),
            Path::new("."),
            &[],
        )
        .unwrap();
        let err = check_script_settings(&spec, &text, "k.yaml", &bare).unwrap_err();
        assert!(err.to_string().ends_with("; it reads no setting"), "{err}");

        // Read only inside a rule, at run time: named in the script, so
        // let through.
        let in_rule = Scenario::from_source_with_settings(
            "r.rhai",
            &format!("{source}let late = || setting(\"bolus_mll\", 1);\n"),
            Path::new("."),
            &[],
        )
        .unwrap();
        assert!(check_script_settings(&spec, &text, "k.yaml", &in_rule).is_ok());
    }
}

#[cfg(test)]
mod reuse_tests {
    use super::*;
    use crate::scenario::Scenario;

    /// A drip the rule stops once, the first time sodium has risen 2
    /// mmol/L, and a rule counting its calls in a captured variable.
    const SCRIPT: &str = r#"
        patient(#{ sex: "female", age_years: 60, weight_kg: 60, na: 120, onset: "chronic", cause: "inappropriate_antidiuresis" });
        run_for(hours(8));
        at(hours(0), infuse_at_rate("saline_3", ml_per_h(60)).labelled("drip"));
        let fired = false;
        let calls = 0;
        every(minutes(30), |labs| {
            calls += 1;
            if !fired && labs.na_change_since_start >= 2 {
                stop("drip");
                fired = true;
                print(`stopped at call ${calls}`);
            }
        });
    "#;

    fn runner() -> ScenarioRunner {
        ScenarioRunner {
            scenario: Scenario::from_source("once.rhai", SCRIPT, Path::new(".")).unwrap(),
            rtol: Some(1e-4),
        }
    }

    fn member(water: f64, gfr: f64) -> Vec<(String, f64)> {
        vec![
            ("patient.water_fraction".to_string(), water),
            ("gfr_ml_min".to_string(), gfr),
        ]
    }

    #[test]
    fn a_reused_member_matches_a_freshly_loaded_one_with_fresh_rule_state() {
        let members = [member(0.45, 90.0), member(0.55, 60.0), member(0.45, 90.0)];
        let mut reused = runner();
        for m in &members {
            let got = reused.run(m).unwrap();
            let want = runner().run(m).unwrap();
            // The same steps, so the same bits.
            assert_eq!(got.sodium(), want.sodium());
            assert_eq!(got.stats.steps, want.stats.steps);
            // The rule fired in this member too: the drip stopped before
            // the end (a rule state left over from the member before
            // would never stop it again).
            let end = got.samples.last().unwrap();
            assert_eq!(end.inputs.na_in_mmol_h, 0.0, "{m:?}");
            assert!(got.at(0.1).inputs.na_in_mmol_h > 0.0);
        }
        // The members differ: the overrides reached the runs.
        let a = runner().run(&members[0]).unwrap();
        let b = runner().run(&members[1]).unwrap();
        assert_ne!(a.sodium(), b.sodium());
        // The reused runner never loaded its script again.
        assert!(reused.scenario.reuses_its_load());
    }
}
