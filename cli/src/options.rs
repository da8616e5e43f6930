//! The settings the program uses, apart from how they are typed (see
//! `cli.rs`). [`Task::from_command`] is the one place where the parsed
//! command line (and the environment it reads: cores, Slurm) becomes
//! settings; the commands read only these.

use crate::cli::{self, Command};
use anyhow::{Context, Result};
use std::io::IsTerminal;
use std::path::PathBuf;
use tidewater::sweep::Shard;
use tidewater::Patient;

/// How messages on stderr look.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Style {
    /// Colour escapes allowed (stderr is a terminal and NO_COLOR is unset).
    pub color: bool,
    /// Progress bars allowed (stderr is a terminal).
    pub progress: bool,
}

impl Style {
    /// From the environment: NO_COLOR (any non-empty value) turns colour
    /// off; neither colour nor progress bars when stderr is no terminal.
    pub fn detect() -> Style {
        let terminal = std::io::stderr().is_terminal();
        Style {
            color: terminal && !no_color(),
            progress: terminal,
        }
    }

    fn paint(&self, code: &str, text: &str) -> String {
        if self.color {
            format!("\x1b[{code}m{text}\x1b[0m")
        } else {
            text.to_string()
        }
    }

    /// Red bold.
    pub fn bad(&self, text: &str) -> String {
        self.paint("1;31", text)
    }

    /// Green bold.
    pub fn good(&self, text: &str) -> String {
        self.paint("1;32", text)
    }

    /// Yellow.
    pub fn warn(&self, text: &str) -> String {
        self.paint("33", text)
    }
}

/// Whether NO_COLOR asks for no colour (https://no-color.org: any
/// non-empty value).
pub fn no_color() -> bool {
    std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty())
}

/// Worker threads when none are asked for: every core.
pub fn all_cores() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get())
}

/// What one invocation does, with its settings.
#[derive(Debug)]
pub enum Task {
    /// `run`.
    Run(RunOptions),
    /// `render-reports`.
    RenderReports(RenderOptions),
    /// `fluids`.
    Fluids(FluidsOptions),
    /// `patient`.
    Patient(PatientOptions),
    /// `demo`.
    Demo,
    /// `bench`: the number of timed runs.
    Bench {
        /// Timed runs (at least 1).
        runs: usize,
    },
    /// `params`.
    Params,
    /// `sweep`.
    Sweep(SweepOptions),
    /// `merge`.
    Merge(MergeOptions),
    /// `check`.
    Check(CheckOptions),
    /// `validate`: the dossier, the output folder, threads, quiet.
    Validate(crate::validate::ValidateArgs),
    /// `fit`: the options as typed.
    Fit(crate::cli::FitArgs),
    /// `compare`.
    Compare(crate::cli::CompareArgs),
    /// `plan`: the options as typed (the planner checks them itself).
    Plan(crate::cli::PlanArgs),
    /// `dump`: the scenario script.
    Dump {
        /// Scenario script.
        script: PathBuf,
    },
    /// `completions`: the shell.
    Completions {
        /// The shell.
        shell: clap_complete::Shell,
    },
}

impl Task {
    /// The settings of a parsed command. Fails only on values the parser
    /// cannot check alone (a number of hours that must be positive).
    pub fn from_command(command: Command) -> Result<Task> {
        Ok(match command {
            Command::Run(a) => Task::Run(RunOptions {
                source: match a.script {
                    Some(path) if !a.demo => RunSource::Script(path),
                    _ => RunSource::Demo,
                },
                out: a.out,
                strict: a.strict,
                quiet: a.quiet,
                observed: a.observed,
            }),
            Command::RenderReports(a) => Task::RenderReports(RenderOptions {
                scenarios: a.scenarios,
                reports: a.reports,
                demo: a.demo,
            }),
            Command::Fluids(a) => Task::Fluids(FluidsOptions {
                json: a.json,
                file: a.file,
            }),
            Command::Patient(a) => Task::Patient(PatientOptions::from_args(a)?),
            Command::Demo => Task::Demo,
            Command::Bench(a) => Task::Bench {
                runs: (a.runs as usize).max(1),
            },
            Command::Params => Task::Params,
            Command::Sweep(a) => Task::Sweep(SweepOptions {
                shard: ShardChoice::of(a.shard),
                threads: a.threads.unwrap_or_else(all_cores),
                spec: a.spec,
                out: a.out,
                summary: a.summary,
                design_only: a.design_only,
            }),
            Command::Merge(a) => Task::Merge(MergeOptions {
                inputs: a.inputs,
                out: a.out,
                spec: a.spec,
            }),
            Command::Check(a) => Task::Check(CheckOptions::from_args(a)?),
            Command::Validate(a) => Task::Validate(a),
            Command::Plan(a) => Task::Plan(a),
            Command::Fit(a) => Task::Fit(a),
            Command::Compare(a) => Task::Compare(a),
            Command::Dump(a) => Task::Dump { script: a.script },
            Command::Completions(a) => Task::Completions { shell: a.shell },
        })
    }
}

/// Where a run comes from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RunSource {
    /// The built-in demonstration case.
    Demo,
    /// A scenario script.
    Script(PathBuf),
}

/// Settings of one `run`.
#[derive(Debug, Clone)]
pub struct RunOptions {
    /// What to run.
    pub source: RunSource,
    /// Output folder; `None`: `runs/<name>/`.
    pub out: Option<PathBuf>,
    /// Crossing a guideline limit makes the exit code 1.
    pub strict: bool,
    /// Only errors on stderr.
    pub quiet: bool,
    /// Observed labs to fit and add to the report.
    pub observed: Option<PathBuf>,
}

impl RunOptions {
    /// The output folder for a run named `name`.
    pub fn out_dir(&self, name: &str) -> PathBuf {
        self.out
            .clone()
            .unwrap_or_else(|| PathBuf::from("runs").join(name))
    }
}

/// Settings of `render-reports`.
#[derive(Debug, Clone)]
pub struct RenderOptions {
    /// Folder of scenario scripts.
    pub scenarios: PathBuf,
    /// Folder of rendered reports (one folder per scenario inside, named
    /// after the script's file).
    pub reports: PathBuf,
    /// Also render the demonstration case.
    pub demo: bool,
}

/// Settings of `fluids`.
#[derive(Debug, Clone)]
pub struct FluidsOptions {
    /// JSON instead of a table.
    pub json: bool,
    /// Fluids to add from a YAML file.
    pub file: Option<PathBuf>,
}

/// Where the patient of `patient` is described.
#[derive(Debug, Clone)]
pub enum PatientSource {
    /// A YAML file (read by the command).
    File(PathBuf),
    /// The flags.
    Flags(Box<Patient>),
}

/// Settings of `patient`.
#[derive(Debug, Clone)]
pub struct PatientOptions {
    /// The patient.
    pub source: PatientSource,
    /// JSON instead of a table.
    pub json: bool,
}

impl PatientOptions {
    fn from_args(a: cli::PatientArgs) -> Result<PatientOptions> {
        let source = match a.file {
            Some(path) => PatientSource::File(path),
            None => {
                let (Some(sex), Some(age), Some(weight)) = (a.sex, a.age, a.weight) else {
                    anyhow::bail!("--sex, --age and --weight are required without --file");
                };
                PatientSource::Flags(Box::new(Patient {
                    height_cm: a.height,
                    na: a.na,
                    k: a.k,
                    glucose_mmol_l: a.glucose,
                    urea_mmol_l: a.urea,
                    albumin_g_l: a.albumin,
                    hematocrit: a.hematocrit,
                    onset: a.onset,
                    symptoms: a.symptoms,
                    cause: a.cause,
                    water_method: a.water_method,
                    ..Patient::healthy(sex, age, weight)
                }))
            }
        };
        Ok(PatientOptions {
            source,
            json: a.json,
        })
    }
}

/// Which shard of a sweep to run, as given (`--shard`) or as a Slurm array
/// job says. Read at start-up, checked by [`ShardChoice::resolve`] once
/// the spec has been read (so a bad spec is reported first).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ShardChoice {
    /// Every member.
    All,
    /// `--shard K/N`.
    Given(String),
    /// SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT (and, where set,
    /// SLURM_ARRAY_TASK_MIN, the first index: 0 or 1).
    Slurm {
        /// The task id, as set.
        id: String,
        /// The number of tasks, as set.
        count: String,
        /// The first task id (1 when unset or not a number).
        min: usize,
    },
}

impl ShardChoice {
    fn of(given: Option<String>) -> ShardChoice {
        if let Some(text) = given {
            return ShardChoice::Given(text);
        }
        match (
            std::env::var("SLURM_ARRAY_TASK_ID"),
            std::env::var("SLURM_ARRAY_TASK_COUNT"),
        ) {
            (Ok(id), Ok(count)) => ShardChoice::Slurm {
                id,
                count,
                // Array indices may start at 0 or 1: use the minimum if given.
                min: std::env::var("SLURM_ARRAY_TASK_MIN")
                    .ok()
                    .and_then(|m| m.parse().ok())
                    .unwrap_or(1),
            },
            _ => ShardChoice::All,
        }
    }

    /// The shard.
    pub fn resolve(&self) -> Result<Shard> {
        match self {
            ShardChoice::All => Ok(Shard::ALL),
            ShardChoice::Given(text) => Ok(Shard::parse(text)?),
            ShardChoice::Slurm { id, count, min } => {
                let id: usize = id.parse().context("SLURM_ARRAY_TASK_ID is not a number")?;
                let count: usize = count
                    .parse()
                    .context("SLURM_ARRAY_TASK_COUNT is not a number")?;
                Ok(Shard::parse(&format!("{}/{}", id + 1 - min, count))?)
            }
        }
    }
}

/// Settings of `sweep`.
#[derive(Debug, Clone)]
pub struct SweepOptions {
    /// The sweep spec (YAML).
    pub spec: PathBuf,
    /// Result file; `None`: under `runs/<spec stem>/`.
    pub out: Option<PathBuf>,
    /// Which members to run.
    pub shard: ShardChoice,
    /// Worker threads (as asked; the pool runs at least one).
    pub threads: usize,
    /// Write the summary beside the result file (unsharded runs only).
    pub summary: bool,
    /// Print the design and run nothing.
    pub design_only: bool,
}

impl SweepOptions {
    /// The result file of `shard`.
    pub fn out_file(&self, shard: Shard) -> PathBuf {
        self.out.clone().unwrap_or_else(|| {
            let stem = self
                .spec
                .file_stem()
                .and_then(|s| s.to_str())
                .unwrap_or("sweep");
            if shard.count > 1 {
                PathBuf::from(format!(
                    "runs/{stem}/shard-{}-of-{}.csv",
                    shard.index + 1,
                    shard.count
                ))
            } else {
                PathBuf::from(format!("runs/{stem}/results.csv"))
            }
        })
    }
}

/// Settings of `merge`.
#[derive(Debug, Clone)]
pub struct MergeOptions {
    /// Shard result files.
    pub inputs: Vec<PathBuf>,
    /// Merged result file.
    pub out: PathBuf,
    /// The sweep spec, for the summary.
    pub spec: Option<PathBuf>,
}

/// Settings of `check`.
#[derive(Debug, Clone)]
pub struct CheckOptions {
    /// Scripts and folders of scripts.
    pub paths: Vec<PathBuf>,
    /// Write baselines instead of comparing.
    pub update: bool,
    /// Folder of baselines; `None`: `baselines/` beside each script.
    pub baselines: Option<PathBuf>,
    /// Tolerance file; `None`: `tolerances.yaml` beside the baselines.
    pub tolerances: Option<PathBuf>,
    /// A missing baseline is an error.
    pub require_baseline: bool,
    /// Key-sample interval of written baselines, h (> 0).
    pub every_h: f64,
    /// JUnit XML file to write.
    pub junit: Option<PathBuf>,
    /// Scenarios run at once.
    pub threads: usize,
}

impl CheckOptions {
    fn from_args(a: cli::CheckArgs) -> Result<CheckOptions> {
        if !(a.every.is_finite() && a.every > 0.0) {
            anyhow::bail!("--every: must be a number of hours > 0, got {}", a.every);
        }
        Ok(CheckOptions {
            paths: a.paths,
            update: a.update,
            baselines: a.baselines,
            tolerances: a.tolerances,
            require_baseline: a.require_baseline,
            every_h: a.every,
            junit: a.junit,
            threads: a.threads.map_or_else(all_cores, |t| t as usize),
        })
    }
}
