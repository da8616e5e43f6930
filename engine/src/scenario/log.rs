//! The run log: what a script prints (`print`, `debug`) and what its rules
//! do, kept within fixed bounds so that a rule printing thousands of lines
//! per call cannot grow memory (and the report) without limit.

/// Most lines a run keeps. A protocol that notes each action and lab check
/// writes tens to hundreds of lines over days; 10,000 is far beyond what a
/// reader can use, and keeps the report's log section to a few MB at most.
pub const MAX_LOG_LINES: usize = 10_000;

/// Most bytes of text a run keeps (1 MiB, about 10,000 lines of 100
/// characters): the bound that holds when lines are long.
pub const MAX_LOG_BYTES: usize = 1 << 20;

/// The lines of one run, cut at [`MAX_LOG_LINES`] or [`MAX_LOG_BYTES`],
/// whichever comes first; lines after the cut are counted, not kept.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RunLog {
    lines: Vec<String>,
    bytes: usize,
    dropped: usize,
}

impl RunLog {
    /// Add a line, or count it as dropped once the log is full.
    pub fn push(&mut self, line: String) {
        if self.dropped > 0
            || self.lines.len() >= MAX_LOG_LINES
            || self.bytes + line.len() > MAX_LOG_BYTES
        {
            self.dropped += 1;
            return;
        }
        self.bytes += line.len();
        self.lines.push(line);
    }

    /// Empty the log.
    pub fn clear(&mut self) {
        *self = Self::default();
    }

    /// The kept lines, then (when some were dropped) one line saying how
    /// many and why.
    pub fn to_lines(&self) -> Vec<String> {
        let mut out = self.lines.clone();
        if self.dropped > 0 {
            out.push(format!(
                "... {} more line{} dropped: the run log keeps at most {MAX_LOG_LINES} lines and {} KiB",
                self.dropped,
                if self.dropped == 1 { "" } else { "s" },
                MAX_LOG_BYTES / 1024
            ));
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_lines_up_to_the_line_bound_then_counts() {
        let mut log = RunLog::default();
        for i in 0..MAX_LOG_LINES + 5 {
            log.push(format!("line {i}"));
        }
        let lines = log.to_lines();
        assert_eq!(lines.len(), MAX_LOG_LINES + 1);
        assert_eq!(
            lines[MAX_LOG_LINES - 1],
            format!("line {}", MAX_LOG_LINES - 1)
        );
        assert!(lines[MAX_LOG_LINES].starts_with("... 5 more lines dropped"));
    }

    #[test]
    fn keeps_bytes_up_to_the_byte_bound() {
        let mut log = RunLog::default();
        let long = "x".repeat(10_000);
        for _ in 0..200 {
            log.push(long.clone());
        }
        let lines = log.to_lines();
        let kept: usize = lines[..lines.len() - 1].iter().map(String::len).sum();
        assert!(kept <= MAX_LOG_BYTES);
        assert_eq!(lines.len() - 1, MAX_LOG_BYTES / 10_000);
        assert!(lines.last().unwrap().contains("more lines dropped"));
        // Once cut, a short line does not slip in after the dropped ones.
        log.push("short".into());
        assert!(!log.to_lines().iter().any(|l| l == "short"));
    }

    #[test]
    fn an_unfilled_log_has_no_note() {
        let mut log = RunLog::default();
        log.push("one".into());
        assert_eq!(log.to_lines(), vec!["one".to_string()]);
        log.clear();
        assert!(log.to_lines().is_empty());
    }
}
