//! Report writers. Each output format is one sibling module behind the
//! [`Exporter`] trait; [`write_report`] runs them all into a staging folder
//! next to the destination and renames it into place only when every file
//! is written, so a failed run leaves nothing half-written.

pub mod csv;
pub mod html;
pub mod json;
pub mod svg;

use crate::input::RunInput;
use crate::summary::Summary;
use anyhow::{Context, Result};
use std::path::{Path, PathBuf};

/// A finished run with its summary and charts, ready to be written.
pub struct Report<'a> {
    /// The run.
    pub input: &'a RunInput,
    /// Its summary.
    pub summary: Summary,
    /// Its charts, rendered once (SVG text).
    pub charts: Vec<svg::Chart>,
}

impl<'a> Report<'a> {
    /// Summarise the run and draw its charts.
    pub fn new(input: &'a RunInput) -> Result<Self> {
        let summary = Summary::of(input);
        let charts = svg::charts(input, &summary)?;
        Ok(Report {
            input,
            summary,
            charts,
        })
    }
}

/// One output format.
pub trait Exporter {
    /// Short name for messages (`csv`, `json`, `svg`, `html`).
    fn name(&self) -> &'static str;
    /// Write this format's files into `dir` (which exists and is empty of
    /// this format's files).
    fn write(&self, report: &Report, dir: &Path) -> Result<()>;
}

/// Every exporter, in writing order.
pub fn exporters() -> Vec<Box<dyn Exporter>> {
    vec![
        Box::new(csv::Samples),
        Box::new(json::SummaryJson),
        Box::new(svg::Charts),
        Box::new(html::Page),
    ]
}

/// Write a file, naming it in any error.
pub fn write_file(path: &Path, bytes: &[u8]) -> Result<()> {
    std::fs::write(path, bytes).with_context(|| format!("writing {}", path.display()))
}

/// Write `text` to `path` through a temporary file in the same folder, so
/// the file is either the old one or the whole new one.
pub fn write_whole(path: &Path, text: &str) -> Result<()> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).with_context(|| format!("creating {}", dir.display()))?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".tidewater-")
        .tempfile_in(&dir)
        .with_context(|| format!("creating a temporary file in {}", dir.display()))?;
    std::io::Write::write_all(&mut tmp, text.as_bytes())
        .with_context(|| format!("writing {}", path.display()))?;
    tmp.persist(path)
        .with_context(|| format!("writing {}", path.display()))?;
    Ok(())
}

/// Write every format of `report` into `dest`, atomically: the files go to
/// a hidden staging folder beside `dest`, which replaces `dest` at the end.
/// On any error the staging folder is removed and `dest` is left as it was.
pub fn write_report(report: &Report, dest: &Path) -> Result<PathBuf> {
    write_atomically(dest, |dir| {
        for e in exporters() {
            e.write(report, dir)
                .with_context(|| format!("writing the {} output", e.name()))?;
        }
        Ok(())
    })
}

/// Fill a fresh folder with `fill` and move it to `dest` (replacing an
/// existing folder there). Nothing appears at `dest` unless `fill`
/// succeeds.
pub fn write_atomically(dest: &Path, fill: impl FnOnce(&Path) -> Result<()>) -> Result<PathBuf> {
    let name = dest
        .file_name()
        .with_context(|| format!("{}: not a folder name", dest.display()))?
        .to_string_lossy()
        .to_string();
    let parent = match dest.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&parent).with_context(|| format!("creating {}", parent.display()))?;
    if dest.exists() && !dest.is_dir() {
        anyhow::bail!("{}: exists and is not a folder", dest.display());
    }
    let staging = tempfile::Builder::new()
        .prefix(&format!(".{name}.partial-"))
        .tempdir_in(&parent)
        .with_context(|| format!("creating a staging folder in {}", parent.display()))?;
    fill(staging.path())?;
    // Move an existing result aside, put the new one in place, then drop
    // the old one; restore it if the swap fails.
    let old = if dest.exists() {
        let aside = tempfile::Builder::new()
            .prefix(&format!(".{name}.old-"))
            .tempdir_in(&parent)?;
        let aside_path = aside.path().join("previous");
        std::fs::rename(dest, &aside_path)
            .with_context(|| format!("moving the previous {} aside", dest.display()))?;
        Some((aside, aside_path))
    } else {
        None
    };
    let staged = staging.keep();
    if let Err(e) = std::fs::rename(&staged, dest) {
        let _ = std::fs::remove_dir_all(&staged);
        if let Some((_, aside_path)) = &old {
            let _ = std::fs::rename(aside_path, dest);
        }
        return Err(e).with_context(|| format!("moving the report into {}", dest.display()));
    }
    drop(old);
    Ok(dest.to_path_buf())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn failed_fill_leaves_nothing() {
        let root = tempfile::tempdir().unwrap();
        let dest = root.path().join("out");
        let err = write_atomically(&dest, |dir| {
            write_file(&dir.join("a.txt"), b"half")?;
            anyhow::bail!("boom")
        });
        assert!(err.is_err());
        assert!(!dest.exists());
        assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 0);
    }

    #[test]
    fn success_replaces_previous_folder() {
        let root = tempfile::tempdir().unwrap();
        let dest = root.path().join("out");
        std::fs::create_dir(&dest).unwrap();
        std::fs::write(dest.join("stale.txt"), "old").unwrap();
        write_atomically(&dest, |dir| write_file(&dir.join("new.txt"), b"new")).unwrap();
        assert!(dest.join("new.txt").exists());
        assert!(!dest.join("stale.txt").exists());
        assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 1);
    }
}
