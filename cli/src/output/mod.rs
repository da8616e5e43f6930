//! Every file a command writes, made as bytes first and then written by
//! one writer. Each format is one small module behind the [`Output`]
//! trait, which turns its source into named files; [`write`] renders the
//! outputs of a source and places their files in the output folder, either
//! as a folder of their own swapped in whole ([`Placement::Folder`]) or
//! one by one beside other files ([`Placement::Beside`]). Either way a
//! failure leaves nothing half-written.
//!
//! | source | outputs (file) | written by |
//! |---|---|---|
//! | [`report::Report`] (one run) | [`csv`] (`samples.csv`), [`json`] (`summary.json`), [`svg`] (`*.svg`), [`html`] (`report.html`) | `run`, `render-reports` |
//! | [`sweep::SweepReport`] | [`sweep::json`] (`summary.json`), [`sweep::charts`] (`*.svg`) | `sweep`, `merge` |
//! | check results | [`junit`] (the `--junit` file) | `check` |
//! | a run's key samples | `check::baseline` (`<stem>.csv`) | `check --update` |
//!
//! Not here: a sweep's result file, streamed row by row as members finish
//! (so that it resumes), and the merged file of `merge`, both written by
//! the engine's sweep machinery.

pub mod compare;
pub mod csv;
pub mod fit;
pub mod html;
pub mod json;
pub mod junit;
pub mod report;
pub mod svg;
pub mod sweep;

use anyhow::{Context, Result};
use std::path::{Path, PathBuf};

/// One file of an output: its name in the output folder and its bytes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OutputFile {
    /// Short name of the format that made it (`csv`, `svg`, ...).
    pub format: &'static str,
    /// File name inside the output folder.
    pub name: String,
    /// The content.
    pub bytes: Vec<u8>,
}

/// One output format: the files it makes from a source `S` (a run's
/// report, a sweep's summary, the results of a check).
pub trait Output<S: ?Sized> {
    /// Short name for messages (`csv`, `json`, `svg`, `html`, `junit`).
    fn format(&self) -> &'static str;

    /// The files of this format, in writing order.
    fn files(&self, source: &S) -> Result<Vec<OutputFile>>;

    /// One file of this format.
    fn file(&self, name: impl Into<String>, bytes: impl Into<Vec<u8>>) -> OutputFile
    where
        Self: Sized,
    {
        OutputFile {
            format: self.format(),
            name: name.into(),
            bytes: bytes.into(),
        }
    }
}

/// How the writer places files in the output folder.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Placement {
    /// The folder holds these files alone: it is filled as a hidden
    /// staging folder beside it and swapped in whole, replacing what was
    /// there. Errors name the format (the staging path would mislead).
    Folder,
    /// The folder holds other files too (a sweep's result file, the
    /// scenarios): each file replaces its namesake whole, one by one.
    /// Errors name the file.
    Beside,
}

/// The files of every output of `source`, in order.
pub fn render<S: ?Sized>(source: &S, outputs: &[&dyn Output<S>]) -> Result<Vec<OutputFile>> {
    let mut files = Vec::new();
    for o in outputs {
        files.extend(
            o.files(source)
                .with_context(|| format!("writing the {} output", o.format()))?,
        );
    }
    Ok(files)
}

/// Place `files` in `dir`. Returns the paths written, in order.
pub fn place(dir: &Path, files: &[OutputFile], placement: Placement) -> Result<Vec<PathBuf>> {
    match placement {
        Placement::Folder => {
            write_atomically(dir, |staging| {
                for f in files {
                    write_file(&staging.join(&f.name), &f.bytes)
                        .with_context(|| format!("writing the {} output", f.format))?;
                }
                Ok(())
            })?;
        }
        Placement::Beside => {
            for f in files {
                write_whole(&dir.join(&f.name), &f.bytes)?;
            }
        }
    }
    Ok(files.iter().map(|f| dir.join(&f.name)).collect())
}

/// Render every output of `source` and place the files in `dir`: the one
/// writer of the command line.
pub fn write<S: ?Sized>(
    source: &S,
    outputs: &[&dyn Output<S>],
    dir: &Path,
    placement: Placement,
) -> Result<Vec<PathBuf>> {
    place(dir, &render(source, outputs)?, placement)
}

/// Write a file, naming it in any error.
fn write_file(path: &Path, bytes: &[u8]) -> Result<()> {
    std::fs::write(path, bytes).with_context(|| format!("writing {}", path.display()))
}

/// Write `bytes` to `path` through a temporary file in the same folder, so
/// the file is either the old one or the whole new one.
fn write_whole(path: &Path, bytes: &[u8]) -> Result<()> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).with_context(|| format!("creating {}", dir.display()))?;
    let mut builder = tempfile::Builder::new();
    builder.prefix(".tidewater-");
    // Created as a plain file is (0666 less the umask), not the temporary
    // file's private 0600: a result file is for the user's other tools.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    let mut tmp = builder
        .tempfile_in(&dir)
        .with_context(|| format!("creating a temporary file in {}", dir.display()))?;
    std::io::Write::write_all(&mut tmp, bytes)
        .with_context(|| format!("writing {}", path.display()))?;
    tmp.persist(path)
        .with_context(|| format!("writing {}", path.display()))?;
    Ok(())
}

/// Fill a fresh folder with `fill` and move it to `dest` (replacing an
/// existing folder there). Nothing appears at `dest` unless `fill`
/// succeeds.
/// A folder about to be replaced as a whole may hold only what a
/// Tidewater output holds (the files just staged, or the files of an
/// earlier report or page: `report.html`, `index.html`, `samples.csv`,
/// `summary.json`, SVG charts). Anything else (a script, a subfolder, a
/// user's notes) would be deleted with it: refuse, naming it.
fn refuse_foreign_files(dest: &Path, staged: &Path) -> Result<()> {
    let ours = |name: &str| {
        staged.join(name).is_file()
            || matches!(
                name,
                "report.html" | "index.html" | "samples.csv" | "summary.json"
            )
            || name.ends_with(".svg")
    };
    let entries = std::fs::read_dir(dest).with_context(|| format!("reading {}", dest.display()))?;
    let mut foreign = Vec::new();
    for entry in entries {
        let entry = entry.with_context(|| format!("reading {}", dest.display()))?;
        let name = entry.file_name().to_string_lossy().to_string();
        let is_file = entry.file_type().map(|t| t.is_file()).unwrap_or(false);
        if !is_file || !ours(&name) {
            foreign.push(name);
        }
    }
    if foreign.is_empty() {
        return Ok(());
    }
    foreign.sort();
    anyhow::bail!(
        "{}: the folder holds {} entr{} that Tidewater did not write ({}{}), and writing the output replaces the folder as a whole; choose a new or empty folder, or move them",
        dest.display(),
        foreign.len(),
        if foreign.len() == 1 { "y" } else { "ies" },
        foreign.iter().take(3).cloned().collect::<Vec<_>>().join(", "),
        if foreign.len() > 3 { ", ..." } else { "" }
    )
}

/// A staging folder older than this was left by a run that was killed: a
/// report is staged and moved in within seconds, so ten minutes leaves a
/// wide margin for a run still writing into the same parent.
const STALE_STAGING: std::time::Duration = std::time::Duration::from_secs(600);

/// Remove the staging folders (`.NAME.partial-*`, `.NAME.old-*`) that killed
/// runs left beside `dest`. Best effort: a folder that cannot be removed is
/// left for the next run.
fn remove_stale_staging(parent: &Path, name: &str) {
    let Ok(entries) = std::fs::read_dir(parent) else {
        return;
    };
    let prefixes = [format!(".{name}.partial-"), format!(".{name}.old-")];
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().to_string();
        if !prefixes.iter().any(|p| file_name.starts_with(p.as_str())) {
            continue;
        }
        let stale = entry
            .metadata()
            .ok()
            .filter(|m| m.is_dir())
            .and_then(|m| m.modified().ok())
            .and_then(|t| t.elapsed().ok())
            .is_some_and(|age| age > STALE_STAGING);
        if stale {
            let _ = std::fs::remove_dir_all(entry.path());
        }
    }
}

fn write_atomically(dest: &Path, fill: impl FnOnce(&Path) -> Result<()>) -> Result<PathBuf> {
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
    remove_stale_staging(&parent, &name);
    let staging = tempfile::Builder::new()
        .prefix(&format!(".{name}.partial-"))
        .tempdir_in(&parent)
        .with_context(|| format!("creating a staging folder in {}", parent.display()))?;
    fill(staging.path())?;
    if dest.exists() {
        refuse_foreign_files(dest, staging.path())?;
    }
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

    #[cfg(unix)]
    #[test]
    fn files_written_beside_others_have_a_plain_files_mode() {
        use std::os::unix::fs::PermissionsExt;
        let root = tempfile::tempdir().unwrap();
        let plain = root.path().join("plain");
        std::fs::File::create(&plain).unwrap();
        let ours = root.path().join("ours.json");
        write_whole(&ours, b"{}").unwrap();
        let mode = |p: &Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode(&ours), mode(&plain));
    }

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
        std::fs::write(dest.join("stale.svg"), "old").unwrap();
        write_atomically(&dest, |dir| write_file(&dir.join("new.txt"), b"new")).unwrap();
        assert!(dest.join("new.txt").exists());
        assert!(!dest.join("stale.svg").exists());
        assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 1);
    }

    #[test]
    fn staging_folders_of_killed_runs_are_removed_fresh_ones_kept() {
        let root = tempfile::tempdir().unwrap();
        let dest = root.path().join("out");
        let old = root.path().join(".out.partial-abc123");
        let fresh = root.path().join(".out.partial-def456");
        let other = root.path().join(".other.partial-abc123");
        for d in [&old, &fresh, &other] {
            std::fs::create_dir(d).unwrap();
            std::fs::write(d.join("report.html"), "half").unwrap();
        }
        let long_ago = std::time::SystemTime::now() - 2 * STALE_STAGING;
        for d in [&old, &other] {
            std::fs::File::open(d)
                .unwrap()
                .set_modified(long_ago)
                .unwrap();
        }
        write_atomically(&dest, |dir| write_file(&dir.join("new.txt"), b"new")).unwrap();
        assert!(!old.exists(), "a killed run's staging folder stays");
        // A fresh one may belong to a run still writing; another name's
        // folder is not ours to remove.
        assert!(fresh.exists() && other.exists());
        assert!(dest.join("new.txt").exists());
    }

    #[test]
    fn a_folder_with_foreign_files_is_refused_and_kept() {
        let root = tempfile::tempdir().unwrap();
        let dest = root.path().join("out");
        std::fs::create_dir(&dest).unwrap();
        std::fs::write(dest.join("notes.txt"), "mine").unwrap();
        let err = write_atomically(&dest, |dir| write_file(&dir.join("new.txt"), b"new"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("notes.txt"), "{err}");
        assert_eq!(
            std::fs::read_to_string(dest.join("notes.txt")).unwrap(),
            "mine"
        );
        assert!(!dest.join("new.txt").exists());
        // Nothing staged is left behind.
        assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 1);
    }

    struct Greeting;

    impl Output<str> for Greeting {
        fn format(&self) -> &'static str {
            "text"
        }

        fn files(&self, name: &str) -> Result<Vec<OutputFile>> {
            if name.is_empty() {
                anyhow::bail!("nobody to greet");
            }
            Ok(vec![
                self.file("hello.txt", format!("hello {name}\n")),
                self.file("bye.txt", format!("bye {name}\n")),
            ])
        }
    }

    #[test]
    fn the_writer_places_every_file_of_every_output() {
        let root = tempfile::tempdir().unwrap();
        let dir = root.path().join("out");
        for placement in [Placement::Folder, Placement::Beside] {
            let paths = write("sea", &[&Greeting], &dir, placement).unwrap();
            assert_eq!(paths, [dir.join("hello.txt"), dir.join("bye.txt")]);
            assert_eq!(std::fs::read_to_string(&paths[0]).unwrap(), "hello sea\n");
            assert_eq!(std::fs::read_to_string(&paths[1]).unwrap(), "bye sea\n");
        }
        // Beside: other files stay; Folder: the folder is replaced whole,
        // and refused while it holds a file no output writes.
        std::fs::write(dir.join("results.csv"), "kept").unwrap();
        write("tide", &[&Greeting], &dir, Placement::Beside).unwrap();
        assert!(dir.join("results.csv").exists());
        assert!(write("tide", &[&Greeting], &dir, Placement::Folder).is_err());
        assert!(dir.join("results.csv").exists());
        std::fs::remove_file(dir.join("results.csv")).unwrap();
        write("tide", &[&Greeting], &dir, Placement::Folder).unwrap();
        // A failing output writes nothing and names its format.
        let err = write(
            "",
            &[&Greeting],
            &root.path().join("none"),
            Placement::Folder,
        )
        .unwrap_err();
        assert_eq!(
            format!("{err:#}"),
            "writing the text output: nobody to greet"
        );
        assert!(!root.path().join("none").exists());
    }
}
