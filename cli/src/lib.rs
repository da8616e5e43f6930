//! `tidewater_cli`: what a run's report is made of, shared by the
//! `tidewater` command and the Python package (`python/`), so that both
//! give the same numbers from one piece of code.
//!
//! * [`input::RunInput`]: everything a report is made from (title,
//!   patient, plan, trajectory, expectation results, log), built by
//!   [`input::load_script`], [`input::demo_input`] or
//!   [`input::from_scenario_run`].
//! * [`samples`]: the columns of `samples.csv` ([`samples::COLUMNS`]) and
//!   their values per sample ([`samples::values`]).
//! * [`summary::Summary`]: the numbers a reader wants first
//!   (`summary.json`), computed from a `RunInput`.
//! * [`format`](mod@format): numbers as text (significant digits, fixed decimals).
//!
//! The command's own presentation (tables, files, charts, progress bars)
//! lives in the binary.

pub mod bedside_summary;
pub mod format;
pub mod input;
pub mod samples;
pub mod summary;
