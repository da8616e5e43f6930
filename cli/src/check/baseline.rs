//! Baselines: the key samples of a scenario's run, kept as a small CSV
//! file beside the scenarios so that a change to the model or to a
//! parameter shows up as a difference.
//!
//! The format is the `samples.csv` of a report cut to key samples (every
//! `every_h` hours and the last sample), with `#` comment lines on top:
//!
//! ```text
//! # Tidewater baseline of bolus.rhai: key samples every 1 h, 7 significant digits.
//! # Compare with `tidewater check SCRIPT`; refresh deliberately with
//! # `tidewater check --update SCRIPT`.
//! time_h,na_mmol_l,k_mmol_l,...
//! 0,118,4,...
//! ```
//!
//! The first column is `time_h`; the others are any of the report's columns
//! (a baseline may keep fewer columns than the report writes, never
//! unknown ones). Numbers carry the report's significant digits.

use crate::output::csv::{line, COLUMNS, DIGITS};
use crate::output::{Output, OutputFile};
use std::fmt;
use std::path::{Path, PathBuf};

/// The rows of a run (in [`COLUMNS`] order), a baseline's source.
pub type Rows = [[f64; COLUMNS.len()]];

/// The baseline output of `check --update`: the key samples of a run.
pub struct BaselineCsv {
    /// The script's file name, named in the comment lines.
    pub script: String,
    /// File name inside the baseline folder (`<stem>.csv`).
    pub file_name: String,
    /// Key-sample interval, h.
    pub every_h: f64,
}

impl BaselineCsv {
    /// The baseline file of `rows`.
    pub fn file_of(&self, rows: &Rows) -> OutputFile {
        self.file(
            self.file_name.as_str(),
            render(&self.script, rows, self.every_h),
        )
    }
}

impl Output<Rows> for BaselineCsv {
    fn format(&self) -> &'static str {
        "baseline"
    }

    fn files(&self, rows: &Rows) -> anyhow::Result<Vec<OutputFile>> {
        Ok(vec![self.file_of(rows)])
    }
}

/// A baseline file that cannot be used, with where and why.
#[derive(Debug, Clone, PartialEq)]
pub struct BaselineError {
    /// The file.
    pub path: PathBuf,
    /// Line in the file (1-based; 0 when the whole file is at fault).
    pub line: usize,
    /// Column of the cell at fault (1-based; 0 when the whole line is).
    pub column: usize,
    /// What is wrong.
    pub message: String,
}

impl fmt::Display for BaselineError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line == 0 {
            write!(f, "baseline {}: {}", self.path.display(), self.message)
        } else if self.column > 0 {
            write!(
                f,
                "baseline {}:{}:{}: {}",
                self.path.display(),
                self.line,
                self.column,
                self.message
            )
        } else {
            write!(
                f,
                "baseline {}:{}: {}",
                self.path.display(),
                self.line,
                self.message
            )
        }
    }
}

impl std::error::Error for BaselineError {}

/// One key sample of a baseline.
#[derive(Debug, Clone, PartialEq)]
pub struct KeySample {
    /// Line in the file (1-based).
    pub line: usize,
    /// Time, h.
    pub time_h: f64,
    /// Values in the order of [`Baseline::columns`].
    pub values: Vec<f64>,
}

/// A parsed baseline.
#[derive(Debug, Clone, PartialEq)]
pub struct Baseline {
    /// The file it was read from.
    pub path: PathBuf,
    /// Indices into [`COLUMNS`] of the value columns (time excluded), in
    /// file order.
    pub columns: Vec<usize>,
    /// Key samples in increasing time.
    pub samples: Vec<KeySample>,
}

/// Read and parse a baseline file.
pub fn read(path: &Path) -> Result<Baseline, BaselineError> {
    let text = std::fs::read_to_string(path).map_err(|e| BaselineError {
        path: path.to_path_buf(),
        line: 0,
        column: 0,
        message: if e.kind() == std::io::ErrorKind::NotFound {
            "no such file (write one with `tidewater check --update`)".into()
        } else {
            format!("cannot be read: {e}")
        },
    })?;
    parse(&text, path)
}

/// Parse baseline text; `path` names the file in errors.
pub fn parse(text: &str, path: &Path) -> Result<Baseline, BaselineError> {
    let at = |line: usize, column: usize, message: String| BaselineError {
        path: path.to_path_buf(),
        line,
        column,
        message,
    };
    let err = |line: usize, message: String| at(line, 0, message);
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim_end_matches('\r')))
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let Some((header_line, header)) = lines.next() else {
        return Err(err(0, "is empty: no header line and no samples".into()));
    };
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    if names[0] != COLUMNS[0] {
        return Err(err(
            header_line,
            format!(
                "the first column must be `{}`, found `{}`",
                COLUMNS[0], names[0]
            ),
        ));
    }
    let mut columns = Vec::new();
    for name in &names[1..] {
        let Some(index) = COLUMNS.iter().position(|c| c == name) else {
            let hint = tidewater::suggest::closest(name, COLUMNS.iter().copied())
                .map(|c| format!(" (did you mean `{c}`?)"))
                .unwrap_or_default();
            return Err(err(
                header_line,
                format!(
                    "unknown column `{name}`{hint}; known columns: {}",
                    COLUMNS.join(", ")
                ),
            ));
        };
        if index == 0 || columns.contains(&index) {
            return Err(err(header_line, format!("column `{name}` appears twice")));
        }
        columns.push(index);
    }
    if columns.is_empty() {
        return Err(err(header_line, "no value columns after `time_h`".into()));
    }
    let mut samples: Vec<KeySample> = Vec::new();
    for (number, text) in lines {
        let cells: Vec<&str> = text.split(',').map(str::trim).collect();
        if cells.len() != names.len() {
            return Err(err(
                number,
                format!(
                    "{} values where the header has {} columns",
                    cells.len(),
                    names.len()
                ),
            ));
        }
        let mut values = Vec::with_capacity(cells.len());
        for (index, (cell, name)) in cells.iter().zip(&names).enumerate() {
            // A baseline holds what a run printed, and a run prints only
            // finite numbers: NaN, an infinity or text is a broken baseline
            // (exit 2), never a value to compare against.
            let value: f64 = cell.parse().map_err(|_| {
                at(
                    number,
                    index + 1,
                    format!("column `{name}`: `{cell}` is not a number"),
                )
            })?;
            if !value.is_finite() {
                return Err(at(
                    number,
                    index + 1,
                    format!("column `{name}`: `{cell}` is not a finite number"),
                ));
            }
            values.push(value);
        }
        let time_h = values.remove(0);
        if let Some(last) = samples.last() {
            if time_h <= last.time_h {
                return Err(err(
                    number,
                    format!(
                        "time {time_h} h does not follow the previous sample's {} h (times must increase)",
                        last.time_h
                    ),
                ));
            }
        }
        samples.push(KeySample {
            line: number,
            time_h,
            values,
        });
    }
    if samples.is_empty() {
        return Err(err(0, "has a header but no samples".into()));
    }
    Ok(Baseline {
        path: path.to_path_buf(),
        columns,
        samples,
    })
}

/// Whether `t` is a key time: a multiple of `every_h` (to 1e-9 h).
fn is_key_time(t: f64, every_h: f64) -> bool {
    let k = (t / every_h).round();
    (t - k * every_h).abs() <= 1e-9 * every_h.max(1.0)
}

/// The baseline text of a run: every column of the report, at each sample
/// whose time is a multiple of `every_h` and at the last sample. `source`
/// (the script's file name) names the scenario in the comment lines.
pub fn render(source: &str, rows: &Rows, every_h: f64) -> String {
    let mut out = format!(
        "# Tidewater baseline of {source}: key samples every {} h, {DIGITS} significant digits.\n\
         # Compare with `tidewater check SCRIPT`; refresh deliberately with\n\
         # `tidewater check --update SCRIPT`.\n",
        crate::format::sig(every_h, 6)
    );
    out.push_str(&COLUMNS.join(","));
    out.push('\n');
    let last = rows.len().saturating_sub(1);
    for (i, row) in rows.iter().enumerate() {
        if is_key_time(row[0], every_h) || i == last {
            out.push_str(&line(row));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p() -> PathBuf {
        PathBuf::from("b.csv")
    }

    fn row(t: f64, na: f64) -> [f64; COLUMNS.len()] {
        let mut r = [1.0; COLUMNS.len()];
        r[0] = t;
        r[1] = na;
        r
    }

    #[test]
    fn rendered_baselines_parse_back() {
        let rows: Vec<_> = (0..=8)
            .map(|i| row(i as f64 * 0.25, 118.0 + i as f64))
            .collect();
        let text = render("x.rhai", &rows, 1.0);
        let b = parse(&text, &p()).unwrap();
        // Times 0, 1 and 2 h (2 h is also the last sample).
        assert_eq!(
            b.samples.iter().map(|s| s.time_h).collect::<Vec<_>>(),
            vec![0.0, 1.0, 2.0]
        );
        assert_eq!(b.columns.len(), COLUMNS.len() - 1);
        assert_eq!(b.samples[1].values[0], 122.0);
        // The last sample is kept even off the key grid.
        let text = render("x.rhai", &rows[..8], 1.0);
        assert_eq!(
            parse(&text, &p()).unwrap().samples.last().unwrap().time_h,
            1.75
        );
    }

    #[test]
    fn bad_baselines_name_line_and_column() {
        let e = parse("", &p()).unwrap_err();
        assert!(e.to_string().contains("is empty"), "{e}");
        let e = parse("# only a comment\n", &p()).unwrap_err();
        assert!(e.to_string().contains("is empty"), "{e}");
        let e = parse("na_mmol_l,time_h\n1,2\n", &p()).unwrap_err();
        assert_eq!(e.line, 1);
        assert!(e.message.contains("first column must be `time_h`"), "{e}");
        let e = parse("time_h,na_mmol\n0,118\n", &p()).unwrap_err();
        assert!(e.message.contains("unknown column `na_mmol`"), "{e}");
        assert!(e.message.contains("did you mean `na_mmol_l`"), "{e}");
        let e = parse("time_h,na_mmol_l,na_mmol_l\n0,1,1\n", &p()).unwrap_err();
        assert!(e.message.contains("appears twice"), "{e}");
        let e = parse("# c\ntime_h,na_mmol_l\n0,118\n1,11x8\n", &p()).unwrap_err();
        assert_eq!(e.line, 4);
        assert!(
            e.message.contains("`na_mmol_l`: `11x8` is not a number"),
            "{e}"
        );
        assert_eq!(
            e.to_string(),
            "baseline b.csv:4:2: column `na_mmol_l`: `11x8` is not a number"
        );
        let e = parse("time_h,na_mmol_l\n0,118,3\n", &p()).unwrap_err();
        assert!(e.message.contains("3 values where the header has 2"), "{e}");
        let e = parse("time_h,na_mmol_l\n1,118\n1,119\n", &p()).unwrap_err();
        assert!(e.message.contains("times must increase"), "{e}");
        let e = parse("time_h,na_mmol_l\n", &p()).unwrap_err();
        assert!(e.message.contains("no samples"), "{e}");
        let e = parse("time_h,na_mmol_l\n0,inf\n", &p()).unwrap_err();
        assert!(e.message.contains("not a finite number"), "{e}");
        let e = read(Path::new("/no/such/dir/b.csv")).unwrap_err();
        assert!(e.message.contains("no such file"), "{e}");
    }

    #[test]
    fn a_baseline_may_keep_fewer_columns() {
        let b = parse("time_h,urine_ml_h,na_mmol_l\n0,50,118\n", &p()).unwrap();
        assert_eq!(b.columns, vec![13, 1]);
        assert_eq!(b.samples[0].values, vec![50.0, 118.0]);
    }
}
