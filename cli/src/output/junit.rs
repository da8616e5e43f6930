//! The results of `check` as JUnit XML, for CI systems that read it. No
//! timings are written, so the same results give the same bytes.

use super::{Output, OutputFile};
use crate::check::{CaseResult, Status};
use anyhow::Result;
use std::fmt::Write;
use std::path::Path;

/// The JUnit XML output of a check, under the file name the user chose.
pub struct JunitXml {
    /// File name inside the output folder.
    pub file_name: String,
}

impl Output<[CaseResult]> for JunitXml {
    fn format(&self) -> &'static str {
        "junit"
    }

    fn files(&self, results: &[CaseResult]) -> Result<Vec<OutputFile>> {
        Ok(vec![self.file(self.file_name.as_str(), render(results))])
    }
}

/// Escape text for XML attributes and content: the HTML escapes (valid in
/// XML too), with the control characters XML 1.0 does not allow blanked.
fn escape(text: &str) -> String {
    let clean: String = text
        .chars()
        .map(|c| {
            if (c as u32) < 0x20 && !matches!(c, '\n' | '\t' | '\r') {
                ' '
            } else {
                c
            }
        })
        .collect();
    super::html::escape(&clean)
}

/// The JUnit XML of a check run.
pub fn render(results: &[CaseResult]) -> String {
    let failures = results
        .iter()
        .filter(|r| r.status == Status::Failed)
        .count();
    let errors = results.iter().filter(|r| r.status == Status::Error).count();
    let mut out = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let counts = format!(
        "tests=\"{}\" failures=\"{failures}\" errors=\"{errors}\"",
        results.len()
    );
    let _ = writeln!(out, "<testsuites name=\"tidewater check\" {counts}>");
    let _ = writeln!(
        out,
        "  <testsuite name=\"tidewater check\" {counts} skipped=\"0\">"
    );
    for r in results {
        // The folder as the user sees it from the working folder, so an
        // absolute path gives `scenarios`, not `.work.main.scenarios`.
        let shown = std::env::current_dir()
            .ok()
            .and_then(|cwd| r.script.strip_prefix(cwd).ok().map(Path::to_path_buf))
            .unwrap_or_else(|| r.script.clone());
        let classname = shown
            .parent()
            .map(|p| p.to_string_lossy().replace(['/', '\\'], "."))
            .filter(|p| !p.is_empty())
            .unwrap_or_else(|| ".".into());
        let open = format!(
            "    <testcase name=\"{}\" classname=\"{}\" file=\"{}\"",
            escape(&r.name),
            escape(&classname),
            escape(&r.script.display().to_string())
        );
        let inner = match r.status {
            Status::Failed | Status::Error => {
                let (tag, kind) = if r.status == Status::Failed {
                    ("failure", "regression")
                } else {
                    ("error", "input")
                };
                format!(
                    "<{tag} type=\"{kind}\" message=\"{}\">{}</{tag}>",
                    escape(&r.headline),
                    escape(&r.details.join("\n"))
                )
            }
            _ => format!("<system-out>{}</system-out>", escape(&r.headline)),
        };
        let _ = writeln!(out, "{open}>\n      {inner}\n    </testcase>");
    }
    out.push_str("  </testsuite>\n</testsuites>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    #[test]
    fn failures_and_errors_are_counted_and_escaped() {
        let case = |name: &str, status, headline: &str, details: Vec<&str>| CaseResult {
            script: PathBuf::from(format!("scenarios/{name}.rhai")),
            name: name.into(),
            status,
            headline: headline.into(),
            details: details.into_iter().map(String::from).collect(),
        };
        let xml = render(&[
            case("a", Status::Passed, "held", vec![]),
            case(
                "b",
                Status::Failed,
                "na <moved> & \"more\"",
                vec!["na_mmol_l: x"],
            ),
            case("c", Status::Error, "bad baseline", vec!["line 4"]),
        ]);
        assert!(
            xml.contains(
                "<testsuites name=\"tidewater check\" tests=\"3\" failures=\"1\" errors=\"1\">"
            ),
            "{xml}"
        );
        assert!(
            xml.contains("message=\"na &lt;moved&gt; &amp; &quot;more&quot;\""),
            "{xml}"
        );
        assert!(
            xml.contains("<error type=\"input\" message=\"bad baseline\">line 4</error>"),
            "{xml}"
        );
        assert!(xml.contains("classname=\"scenarios\""), "{xml}");
        // An absolute path under the working folder is shown relative to it.
        let cwd = std::env::current_dir().unwrap();
        let absolute = CaseResult {
            script: cwd.join("scenarios").join("c.rhai"),
            ..case("c", Status::Passed, "held", vec![])
        };
        let xml2 = render(&[absolute]);
        assert!(xml2.contains("classname=\"scenarios\""), "{xml2}");
        assert!(xml.ends_with("</testsuites>\n"));
        // Well formed: every opened testcase is closed.
        assert_eq!(
            xml.matches("<testcase ").count(),
            xml.matches("</testcase>").count()
        );
    }
}
