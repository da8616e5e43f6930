//! Script errors turned into [`ScenarioError`]s: the innermost position
//! (line and column), the script function it happened in, and a message in
//! the words of the language (unknown words and labs get a suggestion, a
//! wrong number of arguments gets the usage). An input error a word raised
//! as itself (a bad fluid file) points into that file.

use super::error::{self, ScenarioError};
use super::sandbox::{MAX_CALL_LEVELS, MAX_OPERATIONS, MAX_WALL_TIME};
use super::words::{usage, WORDS};
use crate::error::InputError;
use rhai::{EvalAltResult, ParseError, Position};

/// A script error, read: where it happened and what it says.
#[derive(Debug)]
pub(super) struct Described {
    /// 1-based line (0 if unknown).
    pub line: usize,
    /// 1-based column (0 if unknown).
    pub column: usize,
    /// What is wrong, naming the script function it happened in.
    pub message: String,
    /// The input error a word raised as itself (a bad data file), if any.
    pub input: Option<InputError>,
}

/// Line, column and message of a script error (innermost position first).
pub(super) fn describe_error(err: &EvalAltResult) -> Described {
    let mut e = err;
    let mut callers: Vec<(String, Position)> = Vec::new();
    loop {
        match e {
            EvalAltResult::ErrorInFunctionCall(name, _, inner, pos) => {
                callers.push((name.clone(), *pos));
                e = inner;
            }
            EvalAltResult::ErrorInModule(name, inner, pos) => {
                callers.push((name.clone(), *pos));
                e = inner;
            }
            _ => break,
        }
    }
    let mut pos = e.position();
    if pos.is_none() {
        pos = callers.last().map_or(Position::NONE, |c| c.1);
    }
    let mut input = None;
    let message = match e {
        EvalAltResult::ErrorRuntime(d, _) => match d.clone().try_cast::<InputError>() {
            Some(ie) => {
                let text = match &ie {
                    InputError::DataFile { message, .. } => message.clone(),
                    other => other.to_string(),
                };
                input = Some(ie);
                text
            }
            None => d.to_string(),
        },
        EvalAltResult::ErrorFunctionNotFound(sig, _) => function_not_found(sig),
        EvalAltResult::ErrorVariableNotFound(name, _) => unknown_variable(name),
        EvalAltResult::ErrorPropertyNotFound(name, _) | EvalAltResult::ErrorDotExpr(name, _) => {
            property_not_found(name)
        }
        EvalAltResult::ErrorTooManyOperations(_) => format!(
            "the script was stopped after {MAX_OPERATIONS} operations: is there a loop that never ends?"
        ),
        EvalAltResult::ErrorTerminated(_, _) => format!(
            "the script was stopped after running for {} s of wall-clock time: is there a loop that never ends?",
            MAX_WALL_TIME.as_secs()
        ),
        EvalAltResult::ErrorStackOverflow(_) => format!(
            "functions call each other more than {MAX_CALL_LEVELS} levels deep: is there a recursion without an end?"
        ),
        EvalAltResult::ErrorDataTooLarge(what, _) => {
            format!("{what} grew beyond the limits of scenario scripts")
        }
        other => {
            let text = other.to_string();
            match text.rfind(" (line ") {
                Some(i) => text[..i].to_string(),
                None => text,
            }
        }
    };
    let message = match callers.first() {
        Some((name, p)) if !name.is_empty() && !name.starts_with("anon$") => format!(
            "{message} (in function `{name}` called on line {})",
            p.line().unwrap_or(0)
        ),
        _ => message,
    };
    Described {
        line: pos.line().unwrap_or(0),
        column: pos.position().unwrap_or(0),
        message,
        input,
    }
}

/// The error of a script whose top level failed: an error of the data file
/// when a word raised one, else an error of the script.
pub(super) fn load_error(err: &EvalAltResult, file: &str, source: &str) -> ScenarioError {
    let d = describe_error(err);
    match d.input {
        Some(InputError::DataFile {
            file: data_file,
            location,
            ..
        }) => ScenarioError::Data {
            file: file.to_string(),
            line: d.line,
            data_file,
            location,
            message: d.message,
        },
        _ => script_error(file, source, d.line, d.column, d.message),
    }
}

/// The error of a script that does not compile.
pub(super) fn compile_error(e: &ParseError, file: &str, source: &str) -> ScenarioError {
    let pos = e.position();
    script_error(
        file,
        source,
        pos.line().unwrap_or(0),
        pos.position().unwrap_or(0),
        match e.err_type() {
            rhai::ParseErrorType::VariableUndefined(n) => unknown_variable(n),
            other => format!("syntax error: {other}"),
        },
    )
}

/// An error of the script at `line` and `column`, quoting the line.
pub(super) fn script_error(
    file: &str,
    source: &str,
    line: usize,
    column: usize,
    message: String,
) -> ScenarioError {
    ScenarioError::Script {
        file: file.to_string(),
        line,
        column,
        message,
        snippet: error::source_line(source, line),
    }
}

/// An unknown variable: a fluid named without quotes, or a word misspelt.
fn unknown_variable(name: &str) -> String {
    let lib = crate::FluidLibrary::bundled();
    if lib.get(name).is_ok() {
        format!("unknown variable `{name}`: a fluid is named in quotes, \"{name}\"")
    } else {
        let hint = crate::suggest::closest(name, WORDS.iter().map(|(w, _)| *w))
            .map(|s| format!(" (did you mean `{s}(...)`?)"))
            .unwrap_or_default();
        format!("unknown variable `{name}`{hint}; declare it with `let {name} = ...;` first")
    }
}

/// An unknown function: a property, a word with the wrong arguments (its
/// usage), or an unknown word (the closest one).
fn function_not_found(sig: &str) -> String {
    let name = sig.split([' ', '(']).next().unwrap_or(sig).trim();
    let args = sig[name.len()..]
        .trim()
        .replace("&str | ImmutableString | String", "text")
        .replace("i64", "number")
        .replace("f64", "number");
    if let Some(prop) = name.strip_prefix("get$") {
        return property_not_found(prop);
    }
    if let Some(u) = usage(name) {
        return format!("`{name}` does not take these arguments {args}: write {u}");
    }
    let hint = crate::suggest::closest(name, WORDS.iter().map(|(w, _)| *w))
        .map(|s| format!(" (did you mean `{s}`?)"))
        .unwrap_or_default();
    format!("unknown word `{name}`{hint}; scenarios/README.md lists every word")
}

/// An unknown property: the closest lab.
fn property_not_found(text: &str) -> String {
    // Rhai words it "Unknown property 'x' - a getter is not registered ...".
    let name = match text.split('\'').nth(1) {
        Some(n) if text.starts_with("Unknown property") => n,
        _ => text,
    };
    let name = name.trim_start_matches("get$");
    let hint = crate::suggest::closest(name, super::rules::lab_names())
        .map(|s| format!(" (did you mean `{s}`?)"))
        .unwrap_or_default();
    format!("no lab or property called `{name}`{hint}")
}

#[cfg(test)]
mod tests {
    use super::*;
    use rhai::Dynamic;

    fn raised(e: InputError, line: u16, column: u16) -> EvalAltResult {
        EvalAltResult::ErrorRuntime(Dynamic::from(e), Position::new(line, column))
    }

    #[test]
    fn a_data_file_error_keeps_its_own_location_and_the_calling_function() {
        let inner = raised(
            InputError::DataFile {
                file: "ward.yaml".into(),
                location: Some((5, 7)),
                message: "unknown field `sodium`".into(),
            },
            2,
            5,
        );
        let err = EvalAltResult::ErrorInFunctionCall(
            "load_ward".into(),
            String::new(),
            Box::new(inner),
            Position::new(4, 1),
        );
        let source = "patient(#{});\nfn load_ward() {\n}\nload_ward();\n";
        match load_error(&err, "case.rhai", source) {
            ScenarioError::Data {
                file,
                line,
                data_file,
                location,
                message,
            } => {
                assert_eq!((file.as_str(), line), ("case.rhai", 2));
                assert_eq!((data_file.as_str(), location), ("ward.yaml", Some((5, 7))));
                assert_eq!(
                    message,
                    "unknown field `sodium` (in function `load_ward` called on line 4)"
                );
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn other_input_errors_and_plain_messages_are_script_errors() {
        let source = "one\ntwo\n";
        let unknown = raised(
            InputError::UnknownFluid {
                name: "brine".into(),
                suggestion: None,
            },
            2,
            3,
        );
        let text = EvalAltResult::ErrorRuntime("a plain message".into(), Position::new(1, 1));
        for (err, line, column, message) in [
            (unknown, 2, 3, "unknown fluid \"brine\""),
            (text, 1, 1, "a plain message"),
        ] {
            match load_error(&err, "case.rhai", source) {
                ScenarioError::Script {
                    line: l,
                    column: c,
                    message: m,
                    snippet,
                    ..
                } => {
                    assert_eq!((l, c, m.as_str()), (line, column, message));
                    assert_eq!(snippet, source.lines().nth(line - 1).unwrap());
                }
                other => panic!("{other:?}"),
            }
        }
    }
}
