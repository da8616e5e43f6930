//! Observed labs as data: a CSV of measurements taken during a scenario
//! (serum sodium, potassium and glucose, urine volumes and urine
//! chemistry, body weight), read into [`Observations`].
//!
//! The format (documented with an example in `scenarios/README.md`,
//! section "Observed labs"):
//!
//! * comma-separated; the first line that is neither blank nor a comment is
//!   the header; `#` comment lines and blank lines are allowed anywhere;
//! * `time_h` (hours since the start of the scenario) is required, in any
//!   column; every other header is one of [`Lab::ALL`]'s
//!   [`column`](Lab::column)s, each at most once;
//! * every row has as many cells as the header; a blank cell means "not
//!   measured"; a row with no measured value is refused;
//! * times are finite, `>= 0` and strictly increase; values are finite
//!   numbers inside [`Lab::plausible`];
//! * `urine_ml` is the volume collected since the previous row (the first
//!   row: since time 0, so it is refused on a row at time 0);
//! * quoted cells are not supported.
//!
//! Every error names `file:line:column (header)`, the value and what was
//! expected.

use crate::error::InputError;
use serde::Serialize;
use std::path::Path;

/// Most data rows a file may hold. Labs are drawn at most every hour or so:
/// 100 000 rows would be more than eleven years of hourly values, far more
/// than any course a scenario simulates, so a longer file is a runaway
/// export rather than a record, and the bound keeps the cost of anything
/// fitted to the rows bounded.
pub const MAX_ROWS: usize = 100_000;

/// The name of the time column.
pub const TIME_COLUMN: &str = "time_h";

/// One lab the CSV may hold.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
pub enum Lab {
    /// Serum sodium, mmol/L.
    Na,
    /// Serum potassium, mmol/L.
    K,
    /// Plasma glucose, mmol/L.
    Glucose,
    /// Urine volume collected since the previous row, mL.
    UrineMl,
    /// Urine osmolality, mOsm/kg.
    UrineOsm,
    /// Urine sodium, mmol/L.
    UrineNa,
    /// Urine potassium, mmol/L.
    UrineK,
    /// Body weight, kg.
    WeightKg,
}

impl Lab {
    /// Every lab, in the order of the documentation.
    pub const ALL: [Lab; 8] = [
        Lab::Na,
        Lab::K,
        Lab::Glucose,
        Lab::UrineMl,
        Lab::UrineOsm,
        Lab::UrineNa,
        Lab::UrineK,
        Lab::WeightKg,
    ];

    /// The CSV column name.
    pub fn column(self) -> &'static str {
        match self {
            Lab::Na => "na_mmol_l",
            Lab::K => "k_mmol_l",
            Lab::Glucose => "glucose_mmol_l",
            Lab::UrineMl => "urine_ml",
            Lab::UrineOsm => "urine_osm_mosm_kg",
            Lab::UrineNa => "urine_na_mmol_l",
            Lab::UrineK => "urine_k_mmol_l",
            Lab::WeightKg => "weight_kg",
        }
    }

    /// The unit of the values.
    pub fn unit(self) -> &'static str {
        match self {
            Lab::Na | Lab::K | Lab::Glucose | Lab::UrineNa | Lab::UrineK => "mmol/L",
            Lab::UrineMl => "mL",
            Lab::UrineOsm => "mOsm/kg",
            Lab::WeightKg => "kg",
        }
    }

    /// What the lab is, in words, for messages.
    pub fn describe(self) -> &'static str {
        match self {
            Lab::Na => "a measured serum sodium",
            Lab::K => "a measured serum potassium",
            Lab::Glucose => "a measured plasma glucose",
            Lab::UrineMl => "a urine volume collected between two rows",
            Lab::UrineOsm => "a measured urine osmolality",
            Lab::UrineNa => "a measured urine sodium",
            Lab::UrineK => "a measured urine potassium",
            Lab::WeightKg => "a measured body weight",
        }
    }

    /// The range a measurement may take; values outside are refused.
    ///
    /// These are bounds of what can be measured in a living patient (a
    /// value outside is a typo, a unit mix-up or a wrong column), not
    /// reference intervals: common practice, the figures from memory.
    /// Serum sodium 90-190 mmol/L; potassium 1-10 mmol/L; glucose
    /// 0.5-100 mmol/L (hyperosmolar states reach 50-70); urine volume
    /// 0-10 000 mL in one collection; urine osmolality 20-1500 mOsm/kg (the
    /// kidney dilutes to about 50 and concentrates to about 1200); urine
    /// sodium 0-400 mmol/L and potassium 0-300 mmol/L; weight 1-400 kg.
    pub fn plausible(self) -> (f64, f64) {
        match self {
            Lab::Na => (90.0, 190.0),
            Lab::K => (1.0, 10.0),
            Lab::Glucose => (0.5, 100.0),
            Lab::UrineMl => (0.0, 10_000.0),
            Lab::UrineOsm => (20.0, 1500.0),
            Lab::UrineNa => (0.0, 400.0),
            Lab::UrineK => (0.0, 300.0),
            Lab::WeightKg => (1.0, 400.0),
        }
    }

    /// The lab whose column is `name`.
    pub fn from_column(name: &str) -> Option<Lab> {
        Lab::ALL.into_iter().find(|l| l.column() == name)
    }
}

/// One row: a time and the labs measured then (blank cells are absent).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ObservedRow {
    /// Line (1-based) of the row in its file.
    pub line: usize,
    /// Hours since the start of the scenario.
    pub time_h: f64,
    /// The labs measured, in the order of the file's columns.
    pub values: Vec<(Lab, f64)>,
}

impl ObservedRow {
    /// The value of `lab` in this row, if it was measured.
    pub fn get(&self, lab: Lab) -> Option<f64> {
        self.values.iter().find(|(l, _)| *l == lab).map(|(_, v)| *v)
    }
}

/// A file of observations.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Observations {
    /// The file name, as given (used in messages).
    pub file: String,
    /// The rows, times strictly increasing.
    pub rows: Vec<ObservedRow>,
}

impl Observations {
    /// Parse the text of an observed-labs CSV; `file` names it in messages.
    pub fn from_csv(text: &str, file: &str) -> Result<Observations, InputError> {
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        let mut lines = text
            .lines()
            .enumerate()
            .map(|(i, l)| (i + 1, l.trim()))
            .filter(|(_, l)| !l.is_empty() && !l.starts_with('#'));
        let Some((header_line, header_text)) = lines.next() else {
            return Err(whole_file(
                file,
                None,
                "the file is empty: expected a header line such as `time_h,na_mmol_l`",
            ));
        };
        let header = Header::parse(header_text, header_line, file)?;
        let mut rows: Vec<ObservedRow> = Vec::new();
        for (line, text) in lines {
            if rows.len() == MAX_ROWS {
                return Err(whole_file(
                    file,
                    Some((line, 1)),
                    &format!(
                        "more than {MAX_ROWS} rows of observations, far more than labs \
                         drawn over any simulated course (hourly for eleven years)"
                    ),
                ));
            }
            let row = header.row(text, line, file, rows.last())?;
            rows.push(row);
        }
        if rows.is_empty() {
            return Err(whole_file(
                file,
                Some((header_line, 1)),
                "the header is followed by no rows of observations",
            ));
        }
        Ok(Observations {
            file: file.to_string(),
            rows,
        })
    }

    /// Read and parse an observed-labs CSV (a regular file of bounded size).
    pub fn load(path: &Path) -> Result<Observations, InputError> {
        let file = path.display().to_string();
        let text = crate::textfile::read_text(path)
            .map_err(|e| whole_file(&file, None, &format!("cannot be read: {e}")))?;
        Observations::from_csv(&text, &file)
    }

    /// The labs with at least one value, in [`Lab::ALL`] order.
    pub fn labs(&self) -> Vec<Lab> {
        Lab::ALL
            .into_iter()
            .filter(|&lab| self.rows.iter().any(|r| r.get(lab).is_some()))
            .collect()
    }

    /// Time of the last row, hours (0 when there are no rows).
    pub fn last_time_h(&self) -> f64 {
        self.rows.last().map_or(0.0, |r| r.time_h)
    }

    /// Number of values (not rows).
    pub fn count(&self) -> usize {
        self.rows.iter().map(|r| r.values.len()).sum()
    }

    /// The urine collections: `(from_h, to_h, ml)` for every row with a
    /// `urine_ml` value, from the previous row's time (0 for the first row)
    /// to the row's own.
    pub fn urine_collections(&self) -> Vec<(f64, f64, f64)> {
        let mut out = Vec::new();
        let mut previous = 0.0;
        for row in &self.rows {
            if let Some(ml) = row.get(Lab::UrineMl) {
                out.push((previous, row.time_h, ml));
            }
            previous = row.time_h;
        }
        out
    }
}

/// An error about the file as a whole (or a whole row).
fn whole_file(file: &str, location: Option<(usize, usize)>, message: &str) -> InputError {
    InputError::DataFile {
        file: file.to_string(),
        location,
        message: message.to_string(),
    }
}

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Column {
    Time,
    Value(Lab),
}

/// The parsed header: what each column holds.
struct Header {
    columns: Vec<Column>,
    names: Vec<&'static str>,
}

/// A cell error at `line`, column index `index` (0-based) named `header`.
fn cell(file: &str, line: usize, index: usize, header: &str, message: String) -> InputError {
    InputError::ObservedCell {
        file: file.to_string(),
        line,
        column: index + 1,
        header: header.to_string(),
        message,
    }
}

/// Refuse a quoted cell: the format has no quoting (a number never needs
/// it), so a quote means the file came from a tool that quoted text.
fn refuse_quotes(
    raw: &str,
    file: &str,
    line: usize,
    index: usize,
    header: &str,
) -> Result<(), InputError> {
    if raw.contains('"') || raw.contains('\'') {
        return Err(cell(
            file,
            line,
            index,
            header,
            format!(
                "{raw} is quoted: quoted cells are not supported; write plain numbers \
                 and names without quotes"
            ),
        ));
    }
    Ok(())
}

impl Header {
    fn parse(text: &str, line: usize, file: &str) -> Result<Header, InputError> {
        let known: Vec<&str> = std::iter::once(TIME_COLUMN)
            .chain(Lab::ALL.iter().map(|l| l.column()))
            .collect();
        let mut columns = Vec::new();
        let mut names: Vec<&'static str> = Vec::new();
        for (index, raw) in text.split(',').enumerate() {
            let name = raw.trim();
            refuse_quotes(name, file, line, index, name)?;
            if name.is_empty() {
                return Err(cell(
                    file,
                    line,
                    index,
                    "unnamed",
                    format!("empty column name: expected one of {}", known.join(", ")),
                ));
            }
            let column = if name == TIME_COLUMN {
                Column::Time
            } else if let Some(lab) = Lab::from_column(name) {
                Column::Value(lab)
            } else {
                let hint = crate::suggest::closest(name, known.iter().copied())
                    .map(|s| format!(" (did you mean \"{s}\"?)"))
                    .unwrap_or_default();
                return Err(cell(
                    file,
                    line,
                    index,
                    name,
                    format!(
                        "unknown column \"{name}\"{hint}; the columns are {}",
                        known.join(", ")
                    ),
                ));
            };
            if let Some(first) = columns.iter().position(|c| *c == column) {
                return Err(cell(
                    file,
                    line,
                    index,
                    name,
                    format!(
                        "\"{name}\" appears twice in the header (columns {} and {})",
                        first + 1,
                        index + 1
                    ),
                ));
            }
            names.push(known[known.iter().position(|k| *k == name).unwrap_or(0)]);
            columns.push(column);
        }
        if !columns.contains(&Column::Time) {
            return Err(whole_file(
                file,
                Some((line, 1)),
                &format!(
                    "the header has no \"{TIME_COLUMN}\" column (hours since the start of \
                     the scenario); a header looks like `time_h,na_mmol_l`"
                ),
            ));
        }
        if columns.len() == 1 {
            return Err(whole_file(
                file,
                Some((line, 1)),
                &format!(
                    "the header names no lab beside \"{TIME_COLUMN}\": expected some of {}",
                    known[1..].join(", ")
                ),
            ));
        }
        Ok(Header { columns, names })
    }

    /// Parse one data row; `previous` is the row before it.
    fn row(
        &self,
        text: &str,
        line: usize,
        file: &str,
        previous: Option<&ObservedRow>,
    ) -> Result<ObservedRow, InputError> {
        let cells: Vec<&str> = text.split(',').map(str::trim).collect();
        if cells.len() > self.columns.len() {
            let index = self.columns.len();
            return Err(cell(
                file,
                line,
                index,
                "beyond the header",
                format!(
                    "the row has {} cells but the header has {} columns (a decimal comma? \
                     write 136.5, not 136,5)",
                    cells.len(),
                    self.columns.len()
                ),
            ));
        }
        if cells.len() < self.columns.len() {
            let index = cells.len();
            return Err(cell(
                file,
                line,
                index,
                self.names[index],
                format!(
                    "the row has {} cells but the header has {} columns; leave a cell \
                     blank (`136,,4.1`) for a lab not measured",
                    cells.len(),
                    self.columns.len()
                ),
            ));
        }
        let mut time_h = None;
        let mut values = Vec::new();
        for (index, (raw, column)) in cells.iter().zip(&self.columns).enumerate() {
            let name = self.names[index];
            refuse_quotes(raw, file, line, index, name)?;
            match *column {
                Column::Time => {
                    let t = time_cell(raw, file, line, index, previous)?;
                    time_h = Some(t);
                }
                Column::Value(lab) => {
                    if raw.is_empty() {
                        continue;
                    }
                    values.push((lab, value_cell(lab, raw, file, line, index)?));
                }
            }
        }
        let time_h = time_h.expect("the header has a time column");
        if values.is_empty() {
            return Err(whole_file(
                file,
                Some((line, 1)),
                &format!(
                    "the row at {time_h} h holds no measured value: a time with nothing \
                     measured carries no information and would silently cut the next \
                     urine collection short; delete the row or fill in what was measured"
                ),
            ));
        }
        if time_h == 0.0 && values.iter().any(|(l, _)| *l == Lab::UrineMl) {
            let index = self
                .columns
                .iter()
                .position(|c| *c == Column::Value(Lab::UrineMl));
            return Err(cell(
                file,
                line,
                index.unwrap_or(0),
                Lab::UrineMl.column(),
                "urine_ml is the volume collected since the previous row (the first row: \
                 since time 0), so a row at time 0 has no collection; leave the cell blank"
                    .to_string(),
            ));
        }
        Ok(ObservedRow {
            line,
            time_h,
            values,
        })
    }
}

/// Parse a number cell, or say what it should have been.
fn number(
    raw: &str,
    file: &str,
    line: usize,
    index: usize,
    header: &str,
    unit: &str,
) -> Result<f64, InputError> {
    match raw.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(_) => Err(cell(
            file,
            line,
            index,
            header,
            format!("{raw} is not a finite number: expected a value in {unit}"),
        )),
        Err(_) => Err(cell(
            file,
            line,
            index,
            header,
            format!("\"{raw}\" is not a number: expected a value in {unit}, such as 136 or 4.5"),
        )),
    }
}

fn time_cell(
    raw: &str,
    file: &str,
    line: usize,
    index: usize,
    previous: Option<&ObservedRow>,
) -> Result<f64, InputError> {
    if raw.is_empty() {
        return Err(cell(
            file,
            line,
            index,
            TIME_COLUMN,
            "the time is blank: every row needs the hours since the start of the scenario"
                .to_string(),
        ));
    }
    let t = number(raw, file, line, index, TIME_COLUMN, "hours")?;
    if t < 0.0 {
        return Err(cell(
            file,
            line,
            index,
            TIME_COLUMN,
            format!("{raw} h is before the start: times are hours since the start of the scenario, >= 0"),
        ));
    }
    if let Some(p) = previous {
        if t <= p.time_h {
            return Err(cell(
                file,
                line,
                index,
                TIME_COLUMN,
                format!(
                    "{raw} h is not after the previous row's {} h (line {}): times must \
                     strictly increase",
                    p.time_h, p.line
                ),
            ));
        }
    }
    Ok(t)
}

fn value_cell(
    lab: Lab,
    raw: &str,
    file: &str,
    line: usize,
    index: usize,
) -> Result<f64, InputError> {
    let v = number(raw, file, line, index, lab.column(), lab.unit())?;
    let (lo, hi) = lab.plausible();
    if !(lo..=hi).contains(&v) {
        return Err(cell(
            file,
            line,
            index,
            lab.column(),
            format!(
                "{raw} is outside {lo}-{hi} {}, the range {} can take",
                lab.unit(),
                lab.describe()
            ),
        ));
    }
    Ok(v)
}

#[cfg(test)]
#[path = "observations_tests.rs"]
mod tests;
