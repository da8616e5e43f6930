//! Comparing a run with its baseline: every value of every key sample,
//! each against its column's tolerance.

use super::baseline::Baseline;
use super::tolerance::Tolerances;
use crate::format::sig;
use crate::output::csv::COLUMNS;

/// One value outside its tolerance.
#[derive(Debug, Clone, PartialEq)]
pub struct Difference {
    /// Index into [`COLUMNS`].
    pub column: usize,
    /// Time of the key sample, h.
    pub time_h: f64,
    /// Baseline value.
    pub expected: f64,
    /// Value of this run.
    pub got: f64,
    /// The allowed distance at this value.
    pub allowed: f64,
}

impl Difference {
    /// `got - expected`.
    pub fn delta(&self) -> f64 {
        self.got - self.expected
    }

    /// The difference in words.
    pub fn describe(&self) -> String {
        let rel = if self.expected != 0.0 && self.expected.is_finite() {
            format!(
                ", {}%",
                signed(100.0 * self.delta() / self.expected.abs(), 3)
            )
        } else {
            String::new()
        };
        format!(
            "at {} h: expected {}, got {} ({}{rel}; tolerance ±{})",
            sig(self.time_h, 6),
            sig(self.expected, 7),
            sig(self.got, 7),
            signed(self.delta(), 4),
            sig(self.allowed, 3)
        )
    }
}

fn signed(x: f64, digits: usize) -> String {
    let text = sig(x, digits);
    if x > 0.0 {
        format!("+{text}")
    } else {
        text
    }
}

/// The outcome of comparing a run with its baseline.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Comparison {
    /// Key samples compared.
    pub samples: usize,
    /// Values compared.
    pub values: usize,
    /// Values outside tolerance, in file order (time, then column).
    pub differences: Vec<Difference>,
    /// Structural mismatches (a key time the run no longer samples, a
    /// different length of run), in words.
    pub mismatches: Vec<String>,
}

impl Comparison {
    /// Whether the run matches its baseline.
    pub fn holds(&self) -> bool {
        self.differences.is_empty() && self.mismatches.is_empty()
    }

    /// Readable lines: per column, how many values differ, the first and
    /// the largest difference.
    pub fn report(&self) -> Vec<String> {
        let mut lines: Vec<String> = self.mismatches.clone();
        let mut columns: Vec<usize> = self.differences.iter().map(|d| d.column).collect();
        columns.sort_unstable();
        columns.dedup();
        for c in columns {
            let diffs: Vec<&Difference> =
                self.differences.iter().filter(|d| d.column == c).collect();
            let first = diffs[0];
            let largest = diffs
                .iter()
                .copied()
                .max_by(|a, b| {
                    (a.delta().abs() / a.allowed.max(f64::MIN_POSITIVE))
                        .total_cmp(&(b.delta().abs() / b.allowed.max(f64::MIN_POSITIVE)))
                })
                .unwrap_or(first);
            lines.push(format!(
                "{}: {} of {} key samples outside tolerance; first {}",
                COLUMNS[c],
                diffs.len(),
                self.samples,
                first.describe()
            ));
            if largest != first {
                lines.push(format!("{}: largest {}", COLUMNS[c], largest.describe()));
            }
        }
        lines
    }
}

/// Compare `rows` (a run's samples, [`COLUMNS`] order) with `baseline`,
/// using the tolerances of scenario `scenario` (the script's file stem).
pub fn compare(
    baseline: &Baseline,
    rows: &[[f64; COLUMNS.len()]],
    tolerances: &Tolerances,
    scenario: &str,
) -> Comparison {
    let mut out = Comparison::default();
    let times: Vec<f64> = rows.iter().map(|r| r[0]).collect();
    let same_time = |a: f64, b: f64| (a - b).abs() <= 1e-6 * a.abs().max(1.0);
    if let (Some(last_run), Some(last_base)) = (times.last(), baseline.samples.last()) {
        if !same_time(*last_run, last_base.time_h) {
            out.mismatches.push(format!(
                "length of run: the run ends at {} h, the baseline at {} h",
                sig(*last_run, 6),
                sig(last_base.time_h, 6)
            ));
        }
    }
    for key in &baseline.samples {
        let i = times.partition_point(|&t| t < key.time_h - 1e-6 * key.time_h.abs().max(1.0));
        let Some(row) = rows.get(i).filter(|r| same_time(r[0], key.time_h)) else {
            out.mismatches.push(format!(
                "time_h: the baseline has a key sample at {} h (line {}), the run has no sample there",
                sig(key.time_h, 6),
                key.line
            ));
            continue;
        };
        out.samples += 1;
        for (&column, &expected) in baseline.columns.iter().zip(&key.values) {
            let got = row[column];
            let tol = tolerances.get(scenario, column);
            out.values += 1;
            if !tol.holds(expected, got) {
                out.differences.push(Difference {
                    column,
                    time_h: key.time_h,
                    expected,
                    got,
                    allowed: tol.allowed(expected),
                });
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::super::baseline::{parse, render};
    use super::*;
    use std::path::Path;

    fn rows(na: impl Fn(f64) -> f64) -> Vec<[f64; COLUMNS.len()]> {
        (0..=48)
            .map(|i| {
                let t = i as f64 * 0.5;
                let mut r = [2.0; COLUMNS.len()];
                r[0] = t;
                r[1] = na(t);
                r
            })
            .collect()
    }

    #[test]
    fn identical_runs_hold_and_count_every_value() {
        let run = rows(|t| 118.0 + 0.3 * t);
        let b = parse(&render("s.rhai", &run, 1.0), Path::new("b.csv")).unwrap();
        let c = compare(&b, &run, &Tolerances::defaults(), "s");
        assert!(c.holds(), "{:?}", c.report());
        assert_eq!(c.samples, 25);
        assert_eq!(c.values, 25 * (COLUMNS.len() - 1));
    }

    #[test]
    fn a_moved_value_is_reported_with_time_expected_and_got() {
        let base = rows(|t| 118.0 + 0.3 * t);
        let b = parse(&render("s.rhai", &base, 1.0), Path::new("b.csv")).unwrap();
        // Sodium 0.05 mmol/L higher from 12 h on.
        let run = rows(|t| 118.0 + 0.3 * t + if t >= 12.0 { 0.05 } else { 0.0 });
        let c = compare(&b, &run, &Tolerances::defaults(), "s");
        assert!(!c.holds());
        assert_eq!(c.differences.len(), 13);
        let report = c.report().join("\n");
        assert!(
            report.contains(
                "na_mmol_l: 13 of 25 key samples outside tolerance; first at 12 h: expected 121.6, got 121.65 (+0.05"
            ),
            "{report}"
        );
        assert!(report.contains("tolerance ±0.01"), "{report}");
    }

    #[test]
    fn a_changed_sampling_or_length_is_a_mismatch() {
        let base = rows(|_| 120.0);
        let b = parse(&render("s.rhai", &base, 1.0), Path::new("b.csv")).unwrap();
        let shorter: Vec<_> = base[..40].to_vec();
        let c = compare(&b, &shorter, &Tolerances::defaults(), "s");
        let report = c.report().join("\n");
        assert!(
            report.contains("the run ends at 19.5 h, the baseline at 24 h"),
            "{report}"
        );
        assert!(report.contains("key sample at 20 h"), "{report}");
    }
}
