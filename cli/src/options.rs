//! The settings the program uses, settled once from the command line and
//! the environment (apart from how they are typed, see `cli.rs`).

use std::io::IsTerminal;
use std::path::PathBuf;

/// How messages on stderr look.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Style {
    /// Colour escapes allowed (stderr is a terminal and NO_COLOR is unset).
    pub color: bool,
    /// Progress bars allowed (stderr is a terminal).
    pub progress: bool,
}

impl Style {
    /// From the environment: NO_COLOR (any non-empty value) turns colour
    /// off; neither colour nor progress bars when stderr is no terminal.
    pub fn detect() -> Style {
        let terminal = std::io::stderr().is_terminal();
        Style {
            color: terminal && !no_color(),
            progress: terminal,
        }
    }

    fn paint(&self, code: &str, text: &str) -> String {
        if self.color {
            format!("\x1b[{code}m{text}\x1b[0m")
        } else {
            text.to_string()
        }
    }

    /// Red bold.
    pub fn bad(&self, text: &str) -> String {
        self.paint("1;31", text)
    }

    /// Green bold.
    pub fn good(&self, text: &str) -> String {
        self.paint("1;32", text)
    }

    /// Yellow.
    pub fn warn(&self, text: &str) -> String {
        self.paint("33", text)
    }
}

/// Whether NO_COLOR asks for no colour (https://no-color.org: any
/// non-empty value).
pub fn no_color() -> bool {
    std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty())
}

/// Where a run comes from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RunSource {
    /// The built-in demonstration case.
    Demo,
    /// A scenario script.
    Script(PathBuf),
}

/// Settings of one `run`.
#[derive(Debug, Clone)]
pub struct RunOptions {
    /// What to run.
    pub source: RunSource,
    /// Output folder; `None`: `runs/<name>/`.
    pub out: Option<PathBuf>,
    /// Crossing a guideline limit makes the exit code 1.
    pub strict: bool,
    /// Only errors on stderr.
    pub quiet: bool,
}

impl RunOptions {
    /// From the parsed `run` options.
    pub fn from_args(args: crate::cli::RunArgs) -> RunOptions {
        RunOptions {
            source: match args.script {
                Some(path) if !args.demo => RunSource::Script(path),
                _ => RunSource::Demo,
            },
            out: args.out,
            strict: args.strict,
            quiet: args.quiet,
        }
    }

    /// The output folder for a run named `name`.
    pub fn out_dir(&self, name: &str) -> PathBuf {
        self.out
            .clone()
            .unwrap_or_else(|| PathBuf::from("runs").join(name))
    }
}
