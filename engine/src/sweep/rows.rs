//! The rows of a result file: the header a spec gives, one row per member
//! (its design cells, status, outputs, balance residual, sodium at the
//! band times, error), reading rows back (the member number, the cells)
//! and the complete rows of a file to resume.

use super::design::{checks_balance, Member};
use super::error::{ResultProblem, SweepError};
use super::spec::SweepSpec;
use crate::limits::Severity;
use crate::trajectory::Trajectory;
use std::path::Path;

/// The leading columns of a result file: `member` and the varied
/// parameters' names (the design, as `tidewater sweep --design-only`
/// prints it).
pub fn design_header(spec: &SweepSpec) -> Vec<String> {
    let mut h = vec!["member".to_string()];
    h.extend(spec.parameters.iter().map(|p| p.name.clone()));
    h
}

/// The leading cells of a member's row, under [`design_header`].
pub fn design_cells(member: &Member) -> Vec<String> {
    let mut cells = vec![member.index.to_string()];
    cells.extend(member.values.iter().map(|v| fmt_val(*v)));
    cells
}

/// The header of a result file for a spec.
pub fn result_header(spec: &SweepSpec, duration_h: f64) -> Vec<String> {
    let mut h = design_header(spec);
    h.push("status".into());
    for t in &spec.outputs.na_at_h {
        h.push(format!("na_at_{}h_mmol_l", fmt_num(*t)));
    }
    if spec.outputs.largest_rise_24h {
        h.push("largest_rise_24h_mmol_l".into());
    }
    if spec.outputs.largest_rise_48h {
        h.push("largest_rise_48h_mmol_l".into());
    }
    if spec.outputs.min_brain_volume_index {
        h.push("min_brain_volume_index".into());
    }
    if spec.outputs.flags {
        h.push("limit_crossed".into());
        h.push("caution_crossed".into());
        h.push("limits_crossed".into());
    }
    h.push("balance_residual".into());
    for t in band_times(spec, duration_h) {
        h.push(format!("band_na_{}h_mmol_l", fmt_num(t)));
    }
    h.push("error".into());
    h
}

fn band_times(spec: &SweepSpec, duration_h: f64) -> Vec<f64> {
    let dt = spec.outputs.band_every_h;
    if dt <= 0.0 {
        return Vec::new();
    }
    let n = (duration_h / dt + 1e-9).floor() as usize;
    (0..=n).map(|k| k as f64 * dt).collect()
}

fn fmt_num(x: f64) -> String {
    if x == x.round() && x.abs() < 1e15 {
        format!("{}", x as i64)
    } else {
        format!("{x}")
    }
}

fn fmt_val(x: f64) -> String {
    if x.is_finite() {
        format!("{x:.6}")
    } else {
        String::new()
    }
}

/// One CSV row of results for a member.
pub fn result_row(
    spec: &SweepSpec,
    member: &Member,
    duration_h: f64,
    outcome: &Result<Trajectory, String>,
) -> String {
    let mut cells = design_cells(member);
    match outcome {
        Ok(traj) => {
            cells.push("ok".into());
            let times = traj.times();
            let na = traj.sodium();
            for t in &spec.outputs.na_at_h {
                cells.push(fmt_val(crate::trajectory::interpolate(&times, &na, *t)));
            }
            if spec.outputs.largest_rise_24h {
                cells.push(fmt_val(traj.largest_rise(24.0).0));
            }
            if spec.outputs.largest_rise_48h {
                cells.push(fmt_val(traj.largest_rise(48.0).0));
            }
            if spec.outputs.min_brain_volume_index {
                let m = traj
                    .samples
                    .iter()
                    .map(|s| s.obs.brain_volume_index)
                    .fold(f64::INFINITY, f64::min);
                cells.push(fmt_val(m));
            }
            if spec.outputs.flags {
                let limit = traj
                    .flags
                    .iter()
                    .any(|f| f.rule.severity == Severity::Limit);
                let caution = traj
                    .flags
                    .iter()
                    .any(|f| f.rule.severity == Severity::Caution);
                cells.push(u8::from(limit).to_string());
                cells.push(u8::from(caution).to_string());
                // Which rules of the scenario's guideline set were crossed:
                // their numbers (1-based, in the set's order), joined by `;`
                // (`1;3`; empty when none), so the cell reads as one text.
                let crossed: Vec<String> = traj
                    .limits
                    .rules()
                    .iter()
                    .enumerate()
                    .filter(|(_, r)| traj.flags.iter().any(|f| f.rule == **r))
                    .map(|(i, _)| (i + 1).to_string())
                    .collect();
                cells.push(crossed.join(";"));
            }
            cells.push(if checks_balance(spec, member.index) {
                format!("{:.3e}", traj.max_balance_residual())
            } else {
                String::new()
            });
            for t in band_times(spec, duration_h) {
                cells.push(fmt_val(crate::trajectory::interpolate(&times, &na, t)));
            }
            cells.push(String::new());
        }
        Err(e) => {
            let n_out = result_header(spec, duration_h).len() - cells.len() - 1;
            cells.push("failed".into());
            cells.extend(std::iter::repeat_n(String::new(), n_out - 1));
            cells.push(csv_quote(e));
        }
    }
    cells.join(",")
}

fn csv_quote(s: &str) -> String {
    let one_line = s.replace(['\n', '\r'], " ");
    format!("\"{}\"", one_line.replace('"', "\"\""))
}

/// The member number a row starts with.
pub(super) fn member_of(line: &str) -> Option<usize> {
    line.split(',').next().and_then(|c| c.parse().ok())
}

/// The cells of a row.
pub(super) fn split_csv(line: &str) -> Vec<&str> {
    // Cells never contain commas except the quoted error message, which is
    // always last.
    match line.find(",\"") {
        Some(q) => {
            let mut cells: Vec<&str> = line[..q].split(',').collect();
            cells.push(&line[q + 1..]);
            cells
        }
        None => line.split(',').collect(),
    }
}

/// Members already present in a result file (for resuming): the indices
/// of complete rows. A partial last line (the run was killed while writing
/// it) is dropped and the file truncated to the last complete row.
pub fn completed_members(path: &Path, header: &[String]) -> Result<Vec<usize>, SweepError> {
    let file_name = path.display().to_string();
    let io = |e| SweepError::io(&file_name, e);
    let text = std::fs::read_to_string(path).map_err(io)?;
    let mut lines = text.split_inclusive('\n');
    let first = lines.next().unwrap_or("");
    if first.trim_end() != header.join(",") {
        return Err(SweepError::results(&file_name, ResultProblem::OtherHeader));
    }
    let mut done = Vec::new();
    let mut keep = first.len();
    for line in lines {
        if !line.ends_with('\n') {
            break;
        }
        let idx = member_of(line).ok_or_else(|| {
            SweepError::results(&file_name, ResultProblem::CorruptRow { after_byte: keep })
        })?;
        done.push(idx);
        keep += line.len();
    }
    if keep < text.len() {
        let f = std::fs::OpenOptions::new()
            .write(true)
            .open(path)
            .map_err(io)?;
        f.set_len(keep as u64).map_err(io)?;
    }
    Ok(done)
}

/// A member that failed, as its row in a result file records it.
#[derive(Debug, Clone, PartialEq)]
pub struct FailedMember {
    /// The member number.
    pub index: usize,
    /// The varied parameters' names with the member's values, as written.
    pub values: Vec<(String, String)>,
    /// Why the member failed.
    pub error: String,
}

/// How the members of a result file came out: how many rows, how many
/// failed, and the first failure in file (member) order.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Outcomes {
    /// Rows in the file.
    pub members: usize,
    /// Rows whose status is `failed`.
    pub failed: usize,
    /// The first failed row.
    pub first_failure: Option<FailedMember>,
}

impl Outcomes {
    /// Every row failed (and there is at least one): the sweep gave no
    /// result.
    pub fn all_failed(&self) -> bool {
        self.members > 0 && self.failed == self.members
    }
}

/// Count the failed members of the result file `path` of `spec` and keep
/// the first failure with its parameter values and error. The file is read
/// row by row (its memory does not grow with the members).
pub fn outcomes(path: &Path, spec: &SweepSpec) -> Result<Outcomes, SweepError> {
    use std::io::BufRead;
    let file_name = path.display().to_string();
    let io = |e| SweepError::io(&file_name, e);
    let file = std::fs::File::open(path).map_err(io)?;
    let names = design_header(spec);
    let status_at = names.len();
    let mut tally = Outcomes::default();
    for line in std::io::BufReader::new(file).lines().skip(1) {
        let line = line.map_err(io)?;
        let line = line.as_str();
        if line.is_empty() {
            continue;
        }
        tally.members += 1;
        let cells = split_csv(line);
        if cells.get(status_at) != Some(&"failed") {
            continue;
        }
        tally.failed += 1;
        if tally.first_failure.is_none() {
            let error = cells.last().copied().unwrap_or("");
            let error = error
                .strip_prefix('"')
                .and_then(|e| e.strip_suffix('"'))
                .unwrap_or(error)
                .replace("\"\"", "\"");
            tally.first_failure = Some(FailedMember {
                index: member_of(line).unwrap_or(0),
                values: names[1..]
                    .iter()
                    .zip(cells[1..status_at].iter())
                    .map(|(n, v)| (n.clone(), v.to_string()))
                    .collect(),
                error,
            });
        }
    }
    Ok(tally)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sweep::spec::tests::spec;

    #[test]
    fn outcomes_count_failures_and_keep_the_first_with_its_values() {
        let s = spec("random", "members: 3\n");
        let dir = std::env::temp_dir().join(format!("tidewater-outcomes-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("r.csv");
        let mut text = result_header(&s, 24.0).join(",") + "\n";
        for i in 0..3 {
            let outcome = if i == 0 {
                Err("na = \"300\" is outside 95..=190".to_string())
            } else {
                Err(format!("member {i} broke"))
            };
            text += &(result_row(&s, &s.member(i), 24.0, &outcome) + "\n");
        }
        std::fs::write(&path, &text).unwrap();
        let all = outcomes(&path, &s).unwrap();
        assert_eq!((all.members, all.failed), (3, 3));
        assert!(all.all_failed());
        let first = all.first_failure.unwrap();
        assert_eq!(first.index, 0);
        assert_eq!(first.error, "na = \"300\" is outside 95..=190");
        let names: Vec<&str> = first.values.iter().map(|(n, _)| n.as_str()).collect();
        assert_eq!(
            names,
            ["natriuresis_gain", "patient.weight_kg", "gfr_ml_min"]
        );
        assert_eq!(first.values[1].1, format!("{:.6}", s.member(0).values[1]));

        // No failure at all: nothing to report.
        let header_only = result_header(&s, 24.0).join(",") + "\n";
        std::fs::write(&path, header_only).unwrap();
        let none = outcomes(&path, &s).unwrap();
        assert_eq!(none, Outcomes::default());
        assert!(!none.all_failed());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
