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
        h.push(format!("na_at_{}h", fmt_num(*t)));
    }
    if spec.outputs.largest_rise_24h {
        h.push("largest_rise_24h".into());
    }
    if spec.outputs.largest_rise_48h {
        h.push("largest_rise_48h".into());
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
        h.push(format!("band_na_{}h", fmt_num(t)));
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
    let n_out = result_header(spec, duration_h).len() - cells.len() - 1;
    match outcome {
        Ok(traj) => {
            cells.push("ok".into());
            for t in &spec.outputs.na_at_h {
                cells.push(fmt_val(crate::trajectory::interpolate(
                    &traj.times(),
                    &traj.sodium(),
                    *t,
                )));
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
                // their numbers (1-based, in the set's order), space-separated.
                let crossed: Vec<String> = traj
                    .limits
                    .rules()
                    .iter()
                    .enumerate()
                    .filter(|(_, r)| traj.flags.iter().any(|f| f.rule == **r))
                    .map(|(i, _)| (i + 1).to_string())
                    .collect();
                cells.push(crossed.join(" "));
            }
            cells.push(if checks_balance(spec, member.index) {
                format!("{:.3e}", traj.max_balance_residual())
            } else {
                String::new()
            });
            let times = traj.times();
            let na = traj.sodium();
            for t in band_times(spec, duration_h) {
                cells.push(fmt_val(crate::trajectory::interpolate(&times, &na, t)));
            }
            cells.push(String::new());
        }
        Err(e) => {
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
