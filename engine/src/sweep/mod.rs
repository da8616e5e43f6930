//! Parameter sweeps and uncertainty over patient populations.
//!
//! A [`SweepSpec`] (YAML) names a base scenario, the parameters to vary
//! (patient fields as `patient.<field>`, engine parameters by name, or a
//! script's `setting(name, default)` as `script.<name>`), each with a fixed
//! list, a range or a [`Distribution`], a [`Design`] (full grid, random,
//! Latin hypercube), a member count, a seed, the outputs to keep, and
//! optionally the solver's relative tolerance for every member.
//! [`SweepSpec::member`] expands it into [`Member`]s deterministically;
//! [`run_sweep`] runs them on worker threads (one simulation per member,
//! one [`MemberRunner`] per worker), streams one CSV row per member in
//! member order, resumes an interrupted output file without losing or
//! duplicating members, and runs a deterministic [`Shard`] (`K/N`) of the
//! members when asked. [`Summary`] reduces a result file to percentile
//! bands, limit-crossing probabilities (any limit, and each rule of the
//! scenario's guideline set) and a sensitivity ranking with memory
//! independent of the member count. Whatever goes wrong is a
//! [`SweepError`] naming the file and, for a spec, the field.
//!
//! ## How data flows between the files
//!
//! ```text
//! spec.rs         YAML ──► SweepSpec (checked: SweepError::Spec names the field)
//!                              │
//! design.rs                    ├─► member(i) ──► Member { index, values }   (random.rs: draws)
//!                              │                       │ shard K/N picks the i
//! runner.rs       run_sweep ◄──┘  MemberRunner::run(overrides) ──► Trajectory
//!                     │                                                 │
//! rows.rs             │  result_header, result_row(member, trajectory) ◄┘
//!                     ▼
//!                 results.csv ◄── resumed via completed_members
//!                     │ beside it: results.csv.fingerprint      (fingerprint.rs)
//!                     ├──► merge(shards) ──► results.csv        (merge.rs)
//!                     ▼
//! summary.rs      Summary::from_file: two streaming passes      (stats.rs: Histogram, Moments)
//! ```
//!
//! * `spec.rs`: [`SweepSpec`], [`SweepParameter`], [`Distribution`],
//!   [`Design`], [`SweepOutputs`]; parsing and every check of a spec.
//! * `design.rs`: [`SweepSpec::member_count`], [`SweepSpec::member`] (grid,
//!   random, Latin hypercube through an affine permutation of the strata),
//!   [`checks_balance`], [`Shard`].
//! * `random.rs`: [`SplitMix64`], [`normal_cdf`], [`normal_quantile`].
//! * `runner.rs`: [`MemberRunner`] with [`ScenarioRunner`] (a script) and
//!   [`PlanRunner`] (a bare plan), [`apply_overrides`], [`run_sweep`] with
//!   its [`Progress`] and the writer that keeps rows in member order.
//! * `rows.rs`: [`design_header`], [`design_cells`], [`result_header`],
//!   [`result_row`], reading rows back, [`completed_members`], [`outcomes`]
//!   (how many members failed, and the first failure).
//! * `fingerprint.rs`: [`fingerprint`], [`fingerprint_path`],
//!   [`claim_output`].
//! * `locate.rs`: the line and column of a spec field in the YAML text,
//!   for the errors of the spec's checks.
//! * `merge.rs`: [`merge`].
//! * `stats.rs`: [`Histogram`], [`Moments`]; `summary.rs`: [`Summary`].
//! * `error.rs`: [`SweepError`] with [`SpecProblem`],
//!   [`DistributionProblem`] and [`ResultProblem`]; it converts into the
//!   engine's [`crate::InputError`] with the same message.

mod design;
mod error;
mod fingerprint;
mod locate;
mod merge;
mod random;
mod rows;
mod runner;
mod spec;
mod stats;
mod summary;

pub use design::{checks_balance, Member, Shard};
pub use error::{DistributionProblem, ResultProblem, SpecProblem, SweepError};
pub use fingerprint::{claim_output, fingerprint, fingerprint_path};
pub use merge::merge;
pub use random::{normal_cdf, normal_quantile, SplitMix64};
pub use rows::{
    completed_members, design_cells, design_header, outcomes, result_header, result_row,
    FailedMember, Outcomes,
};
pub use runner::{
    apply_overrides, check_script_settings, member_row, run_sweep, set_patient_field, MemberRunner,
    PlanRunner, Progress, ScenarioRunner,
};
pub use spec::{Design, Distribution, SweepOutputs, SweepParameter, SweepSpec, MAX_MEMBERS};
pub use stats::{Histogram, Moments};
pub use summary::Summary;
