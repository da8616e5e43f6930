//! What can go wrong with a sweep: a spec that does not parse or does not
//! check, a result file (or shard, or fingerprint) that does not fit, a
//! file that cannot be read or written, a worker that cannot start.
//!
//! Every error names the file; a spec error also names the field
//! (`parameters[2].values`, 0-based as in the YAML list). The messages
//! read exactly as the engine's [`InputError::DataFile`] would print them,
//! and [`From<SweepError>`](SweepError) turns one into that for callers
//! that deal in [`InputError`].
//!
//! No variant reports a [`std::error::Error::source`]: the text of the
//! cause is already part of the message, and a reporter that prints the
//! chain (`anyhow`'s `{:#}`) would print it twice.

use crate::error::InputError;
use thiserror::Error;

/// A failure of a sweep, naming the file and, for a spec, the field.
#[derive(Debug, Error)]
pub enum SweepError {
    /// The spec is not YAML of the spec's shape (an unknown key, a value
    /// of the wrong type).
    #[error("{file}{}: {message}", location.map(|(l, c)| format!(":{l}:{c}")).unwrap_or_default())]
    Syntax {
        /// Spec file.
        file: String,
        /// Line and column (1-based) where known.
        location: Option<(usize, usize)>,
        /// What the parser said.
        message: String,
    },
    /// A field of the spec with a value that cannot be used.
    #[error("{file}{}: {problem}", location.map(|(l, c)| format!(":{l}:{c}")).unwrap_or_default())]
    Spec {
        /// Spec file.
        file: String,
        /// Line and column (1-based) of the field, where it is written in
        /// the spec (a missing field has none).
        location: Option<(usize, usize)>,
        /// The field, as a path into the spec (`parameters[2].values`,
        /// `outputs.na_at_h[0]`, `rtol`).
        field: String,
        /// What is wrong with it (boxed: it keeps the error small).
        problem: Box<SpecProblem>,
    },
    /// A result file, shard or fingerprint that does not fit this sweep or
    /// cannot be read as one.
    #[error("{file}: {problem}")]
    Results {
        /// The result file (or shard).
        file: String,
        /// What is wrong with it.
        problem: ResultProblem,
    },
    /// A file could not be read or written.
    #[error("{file}: {error}")]
    Io {
        /// The file.
        file: String,
        /// The operating system's error.
        error: std::io::Error,
    },
    /// A worker could not set up its member runner (for example, the base
    /// script no longer loads); `file` is the result file being written.
    #[error("{file}: {message}")]
    Runner {
        /// The result file.
        file: String,
        /// What the runner's maker said.
        message: String,
    },
    /// `merge` was given no shards.
    #[error("merge: no input files")]
    NoShards,
}

/// What is wrong with a field of a spec.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum SpecProblem {
    /// `parameters` is empty.
    #[error("parameters: give at least one parameter to vary")]
    NoParameters,
    /// A parameter gives none, or more than one, of `values`, `range`,
    /// `distribution`.
    #[error("parameter {name}: give exactly one of values, range, distribution")]
    NotOneForm {
        /// The parameter's name.
        name: String,
    },
    /// An empty list, or one with a value that is not finite.
    #[error("parameter {name}: values must be finite and not empty")]
    Values {
        /// The parameter's name.
        name: String,
    },
    /// A range whose ends are not finite or not in order.
    #[error("parameter {name}: range needs finite [min, max]")]
    Range {
        /// The parameter's name.
        name: String,
    },
    /// A distribution with impossible parameters.
    #[error("parameter {name}: {problem}")]
    Distribution {
        /// The parameter's name.
        name: String,
        /// Which condition fails.
        problem: DistributionProblem,
    },
    /// A name that is no engine parameter, `patient.<field>` or
    /// `script.<setting>`.
    #[error("parameter {name}: not an engine parameter, patient.<field> or script.<setting>{}", suggestion.as_ref().map(|s| format!(" (did you mean \"{s}\"?)")).unwrap_or_default())]
    UnknownName {
        /// The name given.
        name: String,
        /// The closest engine parameter, if one is close.
        suggestion: Option<String>,
    },
    /// A `patient.<field>` whose field is not a numeric patient field
    /// ([`crate::patient::numeric_patient_fields`]).
    #[error("parameter {name}: not a numeric patient field{}; the fields are {}", suggestion.as_ref().map(|s| format!(" (did you mean \"patient.{s}\"?)")).unwrap_or_default(), crate::patient::numeric_patient_fields().collect::<Vec<_>>().join(", "))]
    UnknownPatientField {
        /// The name given.
        name: String,
        /// The closest patient field, if one is close.
        suggestion: Option<String>,
    },
    /// A `script.<name>` the base script never reads with `setting`.
    #[error("parameter {name}: the base script never reads setting(\"{}\", ...){}; {}", name.trim_start_matches("script."), suggestion.as_ref().map(|s| format!(" (did you mean \"script.{s}\"?)")).unwrap_or_default(), if read.is_empty() { "it reads no setting".to_string() } else { format!("the settings it reads: {}", read.join(", ")) })]
    UnreadSetting {
        /// The name given.
        name: String,
        /// The closest setting the script reads, if one is close.
        suggestion: Option<String>,
        /// The settings the script reads.
        read: Vec<String>,
    },
    /// A grid over a distribution.
    #[error("design grid: use values or range, not distributions")]
    GridDistribution,
    /// A grid over a range without at least two levels.
    #[error("design grid: ranges need levels >= 2")]
    GridLevels,
    /// A random design without a member count.
    #[error("members: give the number of members (> 0)")]
    NoMembers,
    /// More members than a sweep may have ([`super::MAX_MEMBERS`]).
    #[error("members: {members} is more than the most one sweep runs ({}); split a larger study into shards or several specs", super::MAX_MEMBERS)]
    TooManyMembers {
        /// The count given.
        members: usize,
    },
    /// A grid with more members than a sweep may have.
    #[error("design grid: {members} members (the product of the lists' lengths and levels) is more than the most one sweep runs ({}); use fewer levels or values", super::MAX_MEMBERS)]
    TooLargeGrid {
        /// The grid's size, as text (it may not fit a number).
        members: String,
    },
    /// A solver tolerance outside the admissible range.
    #[error("rtol: {rtol} is outside 1e-10..=1e-2")]
    Rtol {
        /// The tolerance given.
        rtol: f64,
    },
    /// A share outside 0..=1.
    #[error("check_balance_share must lie in 0..=1")]
    BalanceShare,
    /// A negative (or not finite) output time or band interval.
    #[error("outputs: times must be >= 0")]
    OutputTime,
    /// An output time beyond the longest possible run.
    #[error("outputs: {time_h:?} h is beyond the longest run (60 days, 1440 h)")]
    OutputTimeBeyondRun {
        /// The time given, h.
        time_h: f64,
    },
    /// A band interval that is not 0 (no bands) or 1 min to 1440 h.
    #[error("outputs.band_every_h: {value:?} h; give 0 (no bands) or an interval from 1 min (0.0167 h) to 1440 h")]
    BandInterval {
        /// The interval given, h.
        value: f64,
    },
    /// The same parameter listed twice.
    #[error("parameter {name} is listed twice (also as parameters[{first}])")]
    DuplicateParameter {
        /// The name listed twice.
        name: String,
        /// Index of its first listing.
        first: usize,
    },
}

/// Which condition a distribution fails.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Error)]
pub enum DistributionProblem {
    /// Uniform bounds not finite or not in order.
    #[error("uniform needs finite min <= max")]
    UniformBounds,
    /// A normal without a positive standard deviation.
    #[error("normal needs sd > 0")]
    NormalSd,
    /// A log-normal without a positive median and sigma.
    #[error("log_normal needs median > 0 and sigma > 0")]
    LogNormalShape,
    /// Truncation bounds not in order.
    #[error("truncation needs min < max")]
    Truncation,
}

/// What is wrong with a result file, a shard or a fingerprint.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ResultProblem {
    /// The file has no header line.
    #[error("empty result file")]
    Empty,
    /// A file to resume whose header is not this spec's.
    #[error("the existing result file has another header (different spec): remove it or choose another output")]
    OtherHeader,
    /// A complete row of a file to resume without a member number.
    #[error("corrupt row after byte {after_byte}")]
    CorruptRow {
        /// Bytes of the file before the row.
        after_byte: usize,
    },
    /// A file to resume written under another fingerprint.
    #[error("the existing result file was written for another spec, scenario or engine version (fingerprint {found}, now {expected}): remove it or choose another output")]
    OtherFingerprint {
        /// The fingerprint beside the file.
        found: String,
        /// This sweep's fingerprint.
        expected: String,
    },
    /// A file to resume without its fingerprint beside it.
    #[error("the existing result file has no {fingerprint_file} beside it, so it cannot be told to belong to this spec: remove it or choose another output")]
    NoFingerprint {
        /// Name of the missing fingerprint file.
        fingerprint_file: String,
    },
    /// A shard whose fingerprint differs from the first shard's
    /// (`None`: the shard has none).
    #[error("this shard's fingerprint ({}) differs from the first shard's ({}): the shards come from different specs, scenarios or engine versions", show(.this), show(.first))]
    ShardFingerprint {
        /// This shard's fingerprint.
        this: Option<String>,
        /// The first shard's fingerprint.
        first: Option<String>,
    },
    /// A shard whose header differs from the first shard's.
    #[error("header differs from the first shard (different spec)")]
    ShardHeader,
    /// A shard row without a member number.
    #[error("line {line}: no member index")]
    NoMemberIndex {
        /// Line in the file (1-based).
        line: usize,
    },
    /// A member found in two shards.
    #[error("member {member} appears in more than one shard")]
    DuplicateMember {
        /// The member number.
        member: usize,
    },
    /// A row with the wrong number of cells.
    #[error("line {line}: {found} cells, expected {expected}")]
    CellCount {
        /// Line in the file (1-based).
        line: usize,
        /// Cells in the row.
        found: usize,
        /// Cells in the header.
        expected: usize,
    },
    /// A cell that should hold a number.
    #[error("line {line}: \"{cell}\" is not a number in column {column}")]
    NotANumber {
        /// Line in the file (1-based).
        line: usize,
        /// The cell's text.
        cell: String,
        /// The column's name.
        column: String,
    },
    /// A `limits_crossed` cell that is not a list of rule numbers.
    #[error("line {line}: \"{cell}\" is not a list of rule numbers in column limits_crossed")]
    NotRuleNumbers {
        /// Line in the file (1-based).
        line: usize,
        /// The cell's text.
        cell: String,
    },
}

fn show(fingerprint: &Option<String>) -> &str {
    fingerprint.as_deref().unwrap_or("none")
}

impl SweepError {
    /// A field of the spec `file` with a problem.
    pub(super) fn spec(file: &str, field: impl Into<String>, problem: SpecProblem) -> Self {
        SweepError::Spec {
            file: file.to_string(),
            location: None,
            field: field.into(),
            problem: Box::new(problem),
        }
    }

    /// A spec error placed at its field's line and column in the spec's
    /// `text` (other errors are returned as they are).
    pub(super) fn located(mut self, text: &str) -> Self {
        if let SweepError::Spec {
            location, field, ..
        } = &mut self
        {
            *location = super::locate::field_position(text, field);
        }
        self
    }

    /// A problem with the result file (or shard) `file`.
    pub(super) fn results(file: &str, problem: ResultProblem) -> Self {
        SweepError::Results {
            file: file.to_string(),
            problem,
        }
    }

    /// A failed read or write of `file`.
    pub(super) fn io(file: &str, error: std::io::Error) -> Self {
        SweepError::Io {
            file: file.to_string(),
            error,
        }
    }

    /// The file the error is about (`merge` when no shards were given).
    pub fn file(&self) -> &str {
        match self {
            SweepError::Syntax { file, .. }
            | SweepError::Spec { file, .. }
            | SweepError::Results { file, .. }
            | SweepError::Io { file, .. }
            | SweepError::Runner { file, .. } => file,
            SweepError::NoShards => "merge",
        }
    }

    /// The field of the spec, for a spec error.
    pub fn field(&self) -> Option<&str> {
        match self {
            SweepError::Spec { field, .. } => Some(field),
            _ => None,
        }
    }
}

impl From<SweepError> for InputError {
    /// The same message as an [`InputError::DataFile`] about the same file.
    fn from(e: SweepError) -> Self {
        let (file, location, message) = match e {
            SweepError::Syntax {
                file,
                location,
                message,
            } => (file, location, message),
            SweepError::Spec {
                file,
                location,
                problem,
                ..
            } => (file, location, problem.to_string()),
            SweepError::Results { file, problem } => (file, None, problem.to_string()),
            SweepError::Io { file, error } => (file, None, error.to_string()),
            SweepError::Runner { file, message } => (file, None, message),
            SweepError::NoShards => ("merge".into(), None, "no input files".into()),
        };
        InputError::DataFile {
            file,
            location,
            message,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_input_error_made_from_it_reads_the_same() {
        let cases = [
            SweepError::Syntax {
                file: "s.yaml".into(),
                location: Some((4, 1)),
                message: "unknown field `rnage`".into(),
            },
            SweepError::spec(
                "s.yaml",
                "parameters[1].distribution",
                SpecProblem::Distribution {
                    name: "gfr_ml_min".into(),
                    problem: DistributionProblem::NormalSd,
                },
            ),
            SweepError::results(
                "r.csv",
                ResultProblem::ShardFingerprint {
                    this: None,
                    first: Some("00ff".into()),
                },
            ),
            SweepError::io(
                "r.csv",
                std::io::Error::new(std::io::ErrorKind::NotFound, "gone"),
            ),
            SweepError::NoShards,
        ];
        let expected = [
            "s.yaml:4:1: unknown field `rnage`",
            "s.yaml: parameter gfr_ml_min: normal needs sd > 0",
            "r.csv: this shard's fingerprint (none) differs from the first shard's (00ff): the shards come from different specs, scenarios or engine versions",
            "r.csv: gone",
            "merge: no input files",
        ];
        for (e, want) in cases.into_iter().zip(expected) {
            let shown = e.to_string();
            let file = e.file().to_string();
            let input = InputError::from(e);
            assert_eq!(shown, want);
            assert_eq!(input.to_string(), want);
            assert_eq!(input.field(), file);
        }
    }
}
