//! Errors of the scenario runtime. Every error names the script (or data
//! file), the line and what is wrong; script errors quote the source line
//! with a caret under the column.

use crate::error::SimulationError;
use thiserror::Error;

/// Something wrong with a scenario script, its data files or its run.
#[derive(Debug, Clone, Error)]
pub enum ScenarioError {
    /// The script (or a file it names) could not be read.
    #[error("{file}: cannot read the file: {message}")]
    Read {
        /// File name as given.
        file: String,
        /// What went wrong.
        message: String,
    },
    /// A syntax error, an unknown word, a wrong unit, a bad value: anything
    /// found while reading and running the script before the simulation.
    #[error("{}", render(file, *line, *column, message, snippet))]
    Script {
        /// Script file name.
        file: String,
        /// 1-based line (0 if unknown).
        line: usize,
        /// 1-based column (0 if unknown).
        column: usize,
        /// What is wrong.
        message: String,
        /// The source line.
        snippet: String,
    },
    /// A rule failed while the simulation ran.
    #[error("{}", render(file, *line, *column, &format!("rule of line {rule_line} failed at t = {time_h:.2} h: {message}"), snippet))]
    Rule {
        /// Script file name.
        file: String,
        /// Line where the rule is defined (its `every`).
        rule_line: usize,
        /// Simulated time of the failure, h.
        time_h: f64,
        /// Line of the failing statement.
        line: usize,
        /// Column of the failing statement.
        column: usize,
        /// What is wrong.
        message: String,
        /// The source line of the failing statement.
        snippet: String,
    },
    /// A data file named by the script (a YAML fluid file) is malformed.
    #[error("{data_file}{}: {message}\n  (loaded by {file}:{line})", location.map(|(l, c)| format!(":{l}:{c}")).unwrap_or_default())]
    Data {
        /// Script file name.
        file: String,
        /// Script line that named the data file.
        line: usize,
        /// Data file as named.
        data_file: String,
        /// Line and column in the data file, where known.
        location: Option<(usize, usize)>,
        /// What is wrong (names the field).
        message: String,
    },
    /// The simulation itself failed (a pool emptied, the solver failed).
    /// `line` is the last action started at or before the failure (0 if
    /// none), the likeliest cause.
    #[error("{file}{}: the simulation failed: {source}{}", if *line > 0 { format!(":{line}") } else { String::new() }, if *line > 0 { format!("\n  (the last action started before then is on line {line})") } else { String::new() })]
    Simulation {
        /// Script file name.
        file: String,
        /// Line of the last action started before the failure (0 if none).
        line: usize,
        /// The engine's error.
        source: SimulationError,
    },
}

impl ScenarioError {
    /// The script line the error points at (0 if none).
    pub fn line(&self) -> usize {
        match self {
            ScenarioError::Script { line, .. }
            | ScenarioError::Rule { line, .. }
            | ScenarioError::Data { line, .. }
            | ScenarioError::Simulation { line, .. } => *line,
            _ => 0,
        }
    }
}

/// `file:line:col: message`, then the source line and a caret.
pub(crate) fn render(
    file: &str,
    line: usize,
    column: usize,
    message: &str,
    snippet: &str,
) -> String {
    let mut out = if line == 0 {
        format!("{file}: {message}")
    } else if column == 0 {
        format!("{file}:{line}: {message}")
    } else {
        format!("{file}:{line}:{column}: {message}")
    };
    if line > 0 && !snippet.is_empty() {
        let gutter = line.to_string().len();
        out.push_str(&format!("\n{:gutter$} |\n{line} | {snippet}", ""));
        if column > 0 {
            let pad: String = snippet
                .chars()
                .take(column.saturating_sub(1))
                .map(|c| if c == '\t' { '\t' } else { ' ' })
                .collect();
            out.push_str(&format!("\n{:gutter$} | {pad}^", ""));
        }
    }
    out
}

/// The text of line `line` (1-based) of `source`.
pub(crate) fn source_line(source: &str, line: usize) -> String {
    if line == 0 {
        return String::new();
    }
    source
        .lines()
        .nth(line - 1)
        .unwrap_or_default()
        .trim_end()
        .to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn caret_under_the_column() {
        let text = render("a.rhai", 3, 5, "bad thing", "at(ml(5), x);");
        assert_eq!(
            text,
            "a.rhai:3:5: bad thing\n  |\n3 | at(ml(5), x);\n  |     ^"
        );
    }
}
