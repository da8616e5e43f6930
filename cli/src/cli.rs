//! Command-line options as the user types them (clap derive): every
//! argument struct of every command is here. What the program does with
//! them is settled, in one place, in `options.rs`.

use clap::{Args, Parser, Subcommand};
use std::path::PathBuf;

/// Exit codes, shown in `--help`.
pub const EXIT_CODES: &str = "\
Exit codes:
  0  success
  1  the run finished but an expectation failed, a guideline limit was
     crossed under --strict, or every member of a sweep failed
  2  bad input (option, script, YAML file) or a failed run; nothing is written

Data go to stdout or to files; messages go to stderr. Set NO_COLOR to turn
colour off.";

const ABOUT: &str = "Whole-body water and sodium simulator: plan and teach the correction of \
serum sodium. A simulation for planning and teaching, not a medical device.";

const EXAMPLES: &str = "\
Examples:
  tidewater run --demo                      # report of the built-in case into runs/demo/
  tidewater run scenarios/bolus.rhai --out /tmp/bolus
  tidewater run --demo --strict             # exit 1 if a guideline limit is crossed
  tidewater fluids --json                   # the fluid library as JSON
  tidewater patient --sex female --age 70 --weight 55 --na 121
  tidewater patient --file patient.yaml --json
  tidewater render-reports scenarios/ reports/
  tidewater completions bash > ~/.local/share/bash-completion/completions/tidewater";

/// Whole-body water and sodium simulator.
#[derive(Parser, Debug)]
#[command(
    name = "tidewater",
    bin_name = "tidewater",
    version,
    about = ABOUT,
    after_help = format!("{EXAMPLES}\n\n{EXIT_CODES}"),
)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands (parsed once, so the size of the variants does not matter).
#[derive(Subcommand, Debug)]
#[allow(clippy::large_enum_variant)]
pub enum Command {
    /// Run a scenario (or the built-in case) and write its report: samples.csv,
    /// summary.json, SVG charts and report.html.
    #[command(after_help = format!("Examples:\n  tidewater run --demo --out /tmp/demo\n  tidewater run scenarios/bolus.rhai\n\n{EXIT_CODES}"))]
    Run(RunArgs),
    /// Regenerate the rendered report of every bundled scenario (and of the
    /// built-in case, as `demo`) into REPORTS/<name>/.
    #[command(after_help = format!("Example:\n  tidewater render-reports scenarios/ reports/\n\n{EXIT_CODES}"))]
    RenderReports(RenderArgs),
    /// Find the dose of one fluid that brings the change of serum sodium at
    /// a time into a goal range without crossing a limit of the scenario's
    /// guideline set, with the full model: an infusion rate, or boluses;
    /// or, with --relower, a re-lowering after an overshoot.
    #[command(
        after_help = format!("Examples:\n  tidewater plan scenarios/planning_saline_rate.rhai --fluid saline_3 --goal-rise 4..6 --by 24\n  tidewater plan SCRIPT --fluid saline_3 --form bolus --goal-rise 4..6 --by 1\n  tidewater plan SCRIPT --fluid dextrose_5 --goal-fall 6..10 --by 24 --json\n  tidewater plan SCRIPT --fluid saline_3 --goal-rise 4..6 --by 24 --uncertainty 200\n  tidewater plan SCRIPT --relower --from 14 --by 24 --clamp 2\n\nThe script gives the patient, the cause and the background (everything it\ndoes runs with every candidate dose); the planner adds the dose.\n\nExit codes:\n  0  a dose meets the goal within the limits\n  1  no dose meets the goal within the limits (the reason and the nearest\n     feasible dose are printed)\n  2  bad input (option, script) or a failed run"),
        allow_negative_numbers = true
    )]
    Plan(PlanArgs),
    /// Learn the patient's unknowns from measured labs (a CSV) and forecast
    /// the scenario's plan with bands: forecast.csv, fit.json,
    /// forecast.svg and report.html.
    #[command(
        after_help = format!("Examples:\n  tidewater fit scenarios/labs_settling.rhai --observed scenarios/observations/settling_labs.csv\n  tidewater fit SCRIPT --observed labs.csv --vary unknowns.yaml --out /tmp/fit\n\nThe script gives the patient, the cause and what was given so far (and, after\nthe last observation, the plan proposed). The observation file is described\nin scenarios/README.md (\"Observed labs\").\n\n{EXIT_CODES}")
    )]
    Fit(FitArgs),
    /// Lay scenarios side by side: serum sodium, the brain-cell volume
    /// index and body water on shared axes, and their headline figures in
    /// one table (report.html, summary.json, SVG charts).
    #[command(
        after_help = format!("Examples:\n  tidewater compare scenarios/exercise_associated.rhai scenarios/severe_chronic_boluses.rhai\n  tidewater compare plan_a.rhai plan_b.rhai --out /tmp/a_vs_b\n\n{EXIT_CODES}")
    )]
    Compare(CompareArgs),
    /// List the fluid library with compositions (mmol/L; albumin in g/L).
    #[command(
        after_help = "Examples:\n  tidewater fluids\n  tidewater fluids --json\n  tidewater fluids --file my_fluids.yaml"
    )]
    Fluids(FluidsArgs),
    /// Show a patient's derived volumes and solute contents, from a YAML file
    /// or from flags.
    #[command(
        after_help = "Examples:\n  tidewater patient --sex male --age 45 --weight 80\n  tidewater patient --sex female --age 70 --weight 55 --na 121 --onset chronic\n  tidewater patient --file patient.yaml --json\n\nThe YAML file takes the fields sex, age_years, weight_kg, height_cm,\nwater_fraction, water_method, na, k, glucose_mmol_l, glucose_mg_dl,\nurea_mmol_l, bun_mg_dl, albumin_g_l, hematocrit, onset, symptoms, cause.",
        allow_negative_numbers = true
    )]
    Patient(PatientArgs),
    /// Run the built-in demonstration case and print serum sodium every 4 h
    /// (for a full report: `tidewater run --demo`).
    Demo,
    /// Time the reference 48 h run: median over repeated runs, with solver
    /// step and right-hand-side counts.
    Bench(BenchArgs),
    /// List every model parameter with unit, default and source.
    Params,
    /// Run a parameter sweep over a base scenario: members in parallel,
    /// streamed to a CSV file that resumes if interrupted; summary (JSON),
    /// percentile fan chart and sensitivity chart beside it.
    #[command(
        after_help = "Examples:\n  tidewater sweep scenarios/sweeps/bolus_uncertainty.yaml\n  tidewater sweep spec.yaml --out runs/s/results.csv --threads 2\n  tidewater sweep spec.yaml --shard 2/8 --out runs/s/shard-2.csv\n  tidewater sweep spec.yaml --design-only        # the members, without running them\n\nInside a Slurm array job the shard comes from SLURM_ARRAY_TASK_ID and\nSLURM_ARRAY_TASK_COUNT (see scenarios/sweeps/slurm_array.sh).\n\nExit codes:\n  0  the sweep ran (some members may have failed: how many, and the first,\n     are printed)\n  1  every member failed: no result; the result file and summary are kept\n     (each row holds its member's error)\n  2  bad input (option, spec, script), another sweep writing the same\n     result file, or a failed run"
    )]
    Sweep(SweepArgs),
    /// Join the result files of sweep shards (the same file an unsharded
    /// run writes), optionally with its summary.
    #[command(
        after_help = "Example:\n  tidewater merge runs/s/shard-*.csv --out runs/s/results.csv --spec spec.yaml"
    )]
    Merge(MergeArgs),
    /// Run scenarios as regression tests: their expectations must hold and
    /// their samples must stay within tolerance of stored baselines.
    #[command(
        after_help = "Examples:\n  tidewater check                              # every scenario in scenarios/\n  tidewater check scenarios/bolus.rhai --junit check.xml\n  tidewater check --update scenarios/bolus.rhai   # write or refresh its baseline\n  tidewater check --require-baseline --tolerances tol.yaml scenarios/\n\nBaselines are CSV files of key samples, scenarios/baselines/<name>.csv by\ndefault; tolerances.yaml beside them overrides the built-in tolerances.\n\nExit codes:\n  0  every scenario held (or, with --update, its baseline was written)\n  1  an expectation failed or a run left its baseline\n  2  bad input: an option, a script, a baseline or a tolerance file"
    )]
    Check(CheckArgs),
    /// Run the validation dossier (published human data) and write its page,
    /// index.html, with the caution, a summary and every check.
    #[command(
        after_help = "Example:\n  tidewater validate tests/validation --out reports/validation\n\nExit codes:\n  0  every check came out as the dossier expects\n  1  a check failed, a check marked expected_failure passed, or a check could not be evaluated\n  2  bad input: the dossier or an option"
    )]
    Validate(crate::validate::ValidateArgs),
    /// Print the model dump of a scenario's plan as JSON: every parameter,
    /// the calibration, the initial state and the input segments (for an
    /// independent implementation of docs/equations.md).
    Dump(DumpArgs),
    /// Print a shell completion script to stdout.
    #[command(
        after_help = "Examples:\n  tidewater completions bash > ~/.local/share/bash-completion/completions/tidewater\n  tidewater completions zsh > ~/.zfunc/_tidewater\n  tidewater completions fish > ~/.config/fish/completions/tidewater.fish"
    )]
    Completions(CompletionsArgs),
}

/// Options of `run`.
#[derive(Args, Debug)]
pub struct RunArgs {
    /// Scenario script to run.
    #[arg(required_unless_present = "demo", conflicts_with = "demo")]
    pub script: Option<PathBuf>,
    /// Run the built-in demonstration case instead of a script.
    #[arg(long)]
    pub demo: bool,
    /// Output folder (default: runs/<scenario-name>/). Replaced as a whole
    /// when the run succeeds; untouched when it fails.
    #[arg(long, short = 'o', value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Exit with 1 when a guideline limit (severity "limit") is crossed (a goal missed does not count).
    #[arg(long)]
    pub strict: bool,
    /// Observed labs (CSV): fit the script's unknowns to them and add the
    /// fit, its forecast and its chart to the report (see `tidewater fit`).
    #[arg(long, value_name = "CSV", conflicts_with = "demo")]
    pub observed: Option<PathBuf>,
    /// Print nothing on stderr but errors.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

/// Options of `render-reports`.
#[derive(Args, Debug)]
pub struct RenderArgs {
    /// Folder of bundled scenario scripts (*.rhai).
    #[arg(default_value = "scenarios")]
    pub scenarios: PathBuf,
    /// Folder of rendered reports.
    #[arg(default_value = "reports")]
    pub reports: PathBuf,
    /// Also render the built-in demonstration case (into `demo/`).
    #[arg(long)]
    pub demo: bool,
}

/// Options of `fluids`.
#[derive(Args, Debug)]
pub struct FluidsArgs {
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Add (or replace) fluids from a YAML file of the same shape as
    /// scenarios/fluids.yaml.
    #[arg(long, value_name = "YAML")]
    pub file: Option<PathBuf>,
}

/// Options of `patient`.
#[derive(Args, Debug)]
pub struct PatientArgs {
    /// Patient description in YAML.
    #[arg(long, value_name = "YAML", conflicts_with_all = ["sex", "age", "weight", "height", "na", "k", "glucose", "urea", "albumin", "hematocrit", "onset", "symptoms", "cause", "water_method"])]
    pub file: Option<PathBuf>,
    /// Sex: male or female.
    #[arg(long, required_unless_present = "file")]
    pub sex: Option<tidewater::Sex>,
    /// Age, years.
    #[arg(long, required_unless_present = "file")]
    pub age: Option<f64>,
    /// Weight, kg.
    #[arg(long, required_unless_present = "file")]
    pub weight: Option<f64>,
    /// Height, cm (needed by --water-method watson).
    #[arg(long)]
    pub height: Option<f64>,
    /// Serum sodium, mmol/L.
    #[arg(long)]
    pub na: Option<f64>,
    /// Serum potassium, mmol/L.
    #[arg(long)]
    pub k: Option<f64>,
    /// Plasma glucose, mmol/L.
    #[arg(long)]
    pub glucose: Option<f64>,
    /// Plasma urea, mmol/L.
    #[arg(long)]
    pub urea: Option<f64>,
    /// Plasma albumin, g/L.
    #[arg(long)]
    pub albumin: Option<f64>,
    /// Hematocrit, fraction (0.42) or percent (42).
    #[arg(long)]
    pub hematocrit: Option<f64>,
    /// Onset: acute or chronic.
    #[arg(long)]
    pub onset: Option<tidewater::Onset>,
    /// Symptoms at the start: none, moderate or severe (decides which
    /// guideline goals apply).
    #[arg(long)]
    pub symptoms: Option<tidewater::Symptoms>,
    /// Cause of the disorder: none, hypovolemic, inappropriate_antidiuresis
    /// (also SIAD or SIADH), reset_osmostat, low_solute_intake,
    /// primary_polydipsia, diuretic_induced, insulin_deficiency,
    /// inadequate_water_intake (scenarios/README.md describes each).
    #[arg(long)]
    pub cause: Option<tidewater::Cause>,
    /// Total body water method: fraction or watson.
    #[arg(long)]
    pub water_method: Option<tidewater::WaterMethod>,
    /// Print JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

/// Options of `bench`.
#[derive(Args, Debug)]
pub struct BenchArgs {
    /// Number of timed runs.
    #[arg(long, default_value_t = 200, value_parser = clap::value_parser!(u64).range(1..=1_000_000))]
    pub runs: u64,
}

/// Options of `sweep`.
#[derive(Args, Debug)]
pub struct SweepArgs {
    /// Sweep specification (YAML).
    pub spec: PathBuf,
    /// Result file (CSV, one row per member; resumed if it exists).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Run only shard K of N (1-based, e.g. 2/8). Inside a Slurm array job
    /// the shard is taken from SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT
    /// when this option is absent.
    #[arg(long)]
    pub shard: Option<String>,
    /// Worker threads (default: all cores).
    #[arg(long)]
    pub threads: Option<usize>,
    /// Write the summary (JSON and SVG charts) next to the result file.
    #[arg(long, default_value_t = true, action = clap::ArgAction::Set)]
    pub summary: bool,
    /// Print the members (number and parameter values, CSV) of the design,
    /// or of the shard, and run nothing: check a design before a long run.
    #[arg(long)]
    pub design_only: bool,
}

/// Options of `merge`.
#[derive(Args, Debug)]
pub struct MergeArgs {
    /// Shard result files.
    #[arg(required = true)]
    pub inputs: Vec<PathBuf>,
    /// Merged result file.
    #[arg(long)]
    pub out: PathBuf,
    /// The sweep spec, to write the summary of the merged result.
    #[arg(long)]
    pub spec: Option<PathBuf>,
}

/// Options of `check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Scenario scripts, or folders of them (*.rhai, not recursive).
    #[arg(default_value = "scenarios", value_name = "SCRIPT|DIR")]
    pub paths: Vec<PathBuf>,
    /// Write (or refresh) the baseline of every scenario whose expectations
    /// hold, instead of comparing with it.
    #[arg(long)]
    pub update: bool,
    /// Folder of baselines (default: `baselines/` beside each script).
    /// Baseline files are named after the script: <stem>.csv.
    #[arg(long, value_name = "DIR")]
    pub baselines: Option<PathBuf>,
    /// Tolerance file (YAML). Default: `tolerances.yaml` in the baseline
    /// folder when it exists, else the built-in tolerances.
    #[arg(long, value_name = "YAML")]
    pub tolerances: Option<PathBuf>,
    /// A scenario without a baseline is an error (for CI).
    #[arg(long)]
    pub require_baseline: bool,
    /// Key-sample interval of written baselines, h (with --update).
    #[arg(long, default_value_t = 1.0, value_name = "HOURS")]
    pub every: f64,
    /// Also write the results as JUnit XML to FILE.
    #[arg(long, value_name = "FILE")]
    pub junit: Option<PathBuf>,
    /// Scenarios run at once (default: all cores).
    #[arg(long, value_parser = clap::value_parser!(u64).range(1..=1024))]
    pub threads: Option<u64>,
}

/// Options of `plan`.
#[derive(Args, Debug)]
pub struct PlanArgs {
    /// Scenario script: the patient, the cause and the background.
    pub script: PathBuf,
    /// Fluid to give (an id of the script's fluid library). Default with
    /// --relower: dextrose_5.
    #[arg(long, required_unless_present = "relower")]
    pub fluid: Option<String>,
    /// Goal for the rise of sodium by --by, mmol/L: LOW..HIGH (e.g. 4..6).
    #[arg(long, value_name = "LOW..HIGH", conflicts_with = "goal_fall")]
    pub goal_rise: Option<String>,
    /// Goal for the fall of sodium by --by, mmol/L: LOW..HIGH (e.g. 6..10).
    #[arg(long, value_name = "LOW..HIGH")]
    pub goal_fall: Option<String>,
    /// Time the goal is measured at, h from the start.
    #[arg(long, value_name = "HOURS")]
    pub by: f64,
    /// Rate (an infusion) or bolus (equal boluses).
    #[arg(long, value_enum, default_value_t = PlanForm::Rate)]
    pub form: PlanForm,
    /// Start of the dose, h (with --relower: the time the re-lowering
    /// starts).
    #[arg(long, value_name = "HOURS", default_value_t = 0.0)]
    pub from: f64,
    /// Duration of the infusion, h (default: until --by).
    #[arg(long = "for", value_name = "HOURS")]
    pub for_h: Option<f64>,
    /// Highest infusion rate the planner may propose, mL/h.
    #[arg(long, value_name = "ML_H", default_value_t = 500.0)]
    pub max_rate: f64,
    /// Duration of one bolus, minutes.
    #[arg(long, value_name = "MIN", default_value_t = 20.0)]
    pub bolus_minutes: f64,
    /// Start-to-start interval of boluses, minutes.
    #[arg(long, value_name = "MIN", default_value_t = 20.0)]
    pub bolus_every: f64,
    /// Most boluses.
    #[arg(long, value_name = "N", default_value_t = 3)]
    pub max_boluses: usize,
    /// Largest single bolus, mL.
    #[arg(long, value_name = "ML", default_value_t = 150.0)]
    pub max_bolus: f64,
    /// Plan a re-lowering after an overshoot: the rate of --fluid (default
    /// 5 % dextrose) from --from that brings the 24 h rise back under the
    /// limit by --by without falling below --floor.
    #[arg(long, conflicts_with_all = ["goal_rise", "goal_fall", "uncertainty"])]
    pub relower: bool,
    /// With --relower: desmopressin clamp, micrograms IV at --from and every
    /// --clamp-every hours until --by.
    #[arg(long, value_name = "UG", requires = "relower")]
    pub clamp: Option<f64>,
    /// With --clamp: interval between desmopressin doses, h.
    #[arg(long, value_name = "HOURS", default_value_t = 8.0, requires = "clamp")]
    pub clamp_every: f64,
    /// With --relower: lowest sodium allowed from --from on, mmol/L
    /// (default: the sodium at the start of the scenario).
    #[arg(long, value_name = "MMOL_L", requires = "relower")]
    pub floor: Option<f64>,
    /// Rerun the dose found over N members drawn from the plausible
    /// unknowns and report the probability of crossing each limit and of
    /// missing the goal.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(2..=100_000))]
    pub uncertainty: Option<u64>,
    /// With --uncertainty: a sweep spec whose parameters (and seed, design)
    /// replace the default unknowns.
    #[arg(long, value_name = "YAML", requires = "uncertainty")]
    pub unknowns: Option<PathBuf>,
    /// With --uncertainty: the largest probability of crossing a limit
    /// accepted in the dose range reported.
    #[arg(
        long,
        value_name = "P",
        default_value_t = 0.1,
        requires = "uncertainty"
    )]
    pub risk: f64,
    /// With --uncertainty: worker threads (default: all cores).
    #[arg(long, requires = "uncertainty")]
    pub threads: Option<usize>,
    /// Plan for the patient fitted to these observed labs (see `tidewater
    /// fit`) instead of the script's patient: "given what we have seen,
    /// what dose now?" (use --from for the time the dose starts).
    #[arg(long, value_name = "CSV")]
    pub observed: Option<PathBuf>,
    /// Print the answer as one JSON object.
    #[arg(long)]
    pub json: bool,
}

/// Options of `compare`.
#[derive(Args, Debug)]
pub struct CompareArgs {
    /// Scenario scripts (2 to 8), in the order their columns and colours
    /// take.
    #[arg(required = true, num_args = 2..)]
    pub scripts: Vec<PathBuf>,
    /// Output folder (replaced whole; default `compare`).
    #[arg(long, default_value = "compare")]
    pub out: PathBuf,
    /// Print nothing but errors.
    #[arg(long)]
    pub quiet: bool,
}

/// Options of `fit`.
#[derive(Args, Debug)]
pub struct FitArgs {
    /// Scenario script.
    pub script: PathBuf,
    /// Observed labs (CSV: time_h and any of na_mmol_l, k_mmol_l, ...).
    #[arg(long, value_name = "CSV")]
    pub observed: PathBuf,
    /// A sweep spec whose parameters (each with a distribution or a range:
    /// the prior) replace the default unknowns.
    #[arg(long, value_name = "YAML")]
    pub vary: Option<PathBuf>,
    /// Output folder (default: runs/<scenario-name>-fit/); replaced as a
    /// whole when the fit succeeds.
    #[arg(long, short = 'o', value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Draws from the fitted posterior for the forecast.
    #[arg(long, value_name = "N", default_value_t = 200, value_parser = clap::value_parser!(u64).range(10..=100_000))]
    pub draws: u64,
    /// Seed of the draws.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Print nothing on stdout but the output folder.
    #[arg(long, short = 'q')]
    pub quiet: bool,
}

/// How the planner gives the fluid.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlanForm {
    /// A constant infusion; the planner finds the rate.
    Rate,
    /// Equal boluses; the planner finds their number and volume.
    Bolus,
}

/// Options of `dump`.
#[derive(Args, Debug)]
pub struct DumpArgs {
    /// Scenario script.
    pub script: PathBuf,
}

/// Options of `completions`.
#[derive(Args, Debug)]
pub struct CompletionsArgs {
    /// The shell.
    pub shell: clap_complete::Shell,
}
