//! What a run gives Python: the values of `samples.csv` (from
//! `tidewater_cli::samples`, the code the CSV writer uses) and the summary
//! (`tidewater_cli::summary::Summary`, serialised as `summary.json` is).
//! Computed without the interpreter; turned into a dict with it.

use pyo3::prelude::*;
use pyo3::types::{PyBytes, PyDict};
use tidewater_cli::input::RunInput;
use tidewater_cli::samples::{values, COLUMNS};
use tidewater_cli::summary::Summary;

/// A finished run, ready for Python.
pub struct Outcome {
    /// Number of samples.
    pub rows: usize,
    /// The samples, row after row in [`COLUMNS`] order, as native-endian
    /// 64-bit floats (one buffer NumPy reads without a copy per value).
    pub matrix: Vec<u8>,
    /// The summary as JSON (the content of `summary.json`).
    pub summary_json: String,
}

impl Outcome {
    /// The samples and the summary of a run.
    pub fn of(input: &RunInput) -> Outcome {
        let rows = values(&input.trajectory);
        let mut matrix = Vec::with_capacity(rows.len() * COLUMNS.len() * 8);
        for row in &rows {
            for v in row {
                matrix.extend_from_slice(&v.to_ne_bytes());
            }
        }
        let summary = Summary::of(input);
        Outcome {
            rows: rows.len(),
            matrix,
            // A summary is numbers and text: serialising it cannot fail.
            summary_json: serde_json::to_string(&summary).unwrap_or_default(),
        }
    }

    /// `{"columns": [names], "rows": n, "matrix": bytes, "summary_json":
    /// text}`.
    pub fn into_dict(self, py: Python<'_>) -> PyResult<Bound<'_, PyDict>> {
        let d = PyDict::new(py);
        d.set_item("columns", COLUMNS.to_vec())?;
        d.set_item("rows", self.rows)?;
        d.set_item("matrix", PyBytes::new(py, &self.matrix))?;
        d.set_item("summary_json", self.summary_json)?;
        Ok(d)
    }
}
