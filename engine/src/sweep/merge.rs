//! Joining shards: their result files, rows in member order, into the file
//! an unsharded run writes, written whole or not at all.

use super::error::{ResultProblem, SweepError};
use super::fingerprint::{fingerprint_path, read_fingerprint, write_fingerprint};
use super::rows::member_of;
use std::collections::BTreeMap;
use std::io::{BufRead, BufReader, Write};
use std::path::Path;

/// Join shard result files into one, rows in member order. The result is
/// byte-identical to an unsharded run of the same spec. Shards must carry
/// the same fingerprint (or none of them one); the merged file gets it.
pub fn merge(inputs: &[&Path], out: &Path) -> Result<usize, SweepError> {
    let mut fingerprints = Vec::with_capacity(inputs.len());
    for path in inputs {
        fingerprints.push(read_fingerprint(path)?);
    }
    let fingerprint = match fingerprints.first() {
        Some(first) => {
            if let Some((path, other)) = inputs.iter().zip(&fingerprints).find(|(_, f)| *f != first)
            {
                return Err(SweepError::results(
                    &path.display().to_string(),
                    ResultProblem::ShardFingerprint {
                        this: other.clone(),
                        first: first.clone(),
                    },
                ));
            }
            first.clone()
        }
        None => None,
    };
    let mut header: Option<String> = None;
    let mut rows: BTreeMap<usize, String> = BTreeMap::new();
    for path in inputs {
        let name = path.display().to_string();
        let io = |e| SweepError::io(&name, e);
        let f = std::fs::File::open(path).map_err(io)?;
        let mut lines = BufReader::new(f).lines();
        let h = lines
            .next()
            .transpose()
            .map_err(io)?
            .ok_or_else(|| SweepError::results(&name, ResultProblem::Empty))?;
        match &header {
            None => header = Some(h),
            Some(prev) if *prev != h => {
                return Err(SweepError::results(&name, ResultProblem::ShardHeader))
            }
            _ => {}
        }
        for (n, line) in lines.enumerate() {
            let line = line.map_err(io)?;
            let idx = member_of(&line).ok_or_else(|| {
                SweepError::results(&name, ResultProblem::NoMemberIndex { line: n + 2 })
            })?;
            if rows.insert(idx, line).is_some() {
                return Err(SweepError::results(
                    &name,
                    ResultProblem::DuplicateMember { member: idx },
                ));
            }
        }
    }
    let header = header.ok_or(SweepError::NoShards)?;
    let name = out.display().to_string();
    // Written whole or not at all: a partial file beside `out`, renamed
    // into place once complete.
    let mut partial_name = out.file_name().unwrap_or_default().to_os_string();
    partial_name.push(format!(".partial-{}", std::process::id()));
    let partial = out.with_file_name(partial_name);
    let written = (|| -> std::io::Result<()> {
        let mut w = std::io::BufWriter::new(std::fs::File::create(&partial)?);
        writeln!(w, "{header}")?;
        for row in rows.values() {
            writeln!(w, "{row}")?;
        }
        w.flush()?;
        std::fs::rename(&partial, out)
    })();
    if let Err(e) = written {
        let _ = std::fs::remove_file(&partial);
        return Err(SweepError::io(&name, e));
    }
    let side = fingerprint_path(out);
    match fingerprint {
        Some(f) => write_fingerprint(out, &f)?,
        None => {
            if side.exists() {
                std::fs::remove_file(&side)
                    .map_err(|e| SweepError::io(&side.display().to_string(), e))?;
            }
        }
    }
    Ok(rows.len())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sweep::fingerprint::{claim_output, fingerprint};
    use crate::sweep::spec::tests::spec;

    #[test]
    fn a_result_file_is_resumed_and_merged_only_under_its_own_fingerprint() {
        let dir = std::env::temp_dir().join(format!("tidewater-fp-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let a = spec("random", "members: 4\n");
        let b = spec("random", "members: 5\n");
        let (fa, fb) = (fingerprint(&a, "script"), fingerprint(&b, "script"));
        assert_ne!(fa, fb, "the member count is part of it");
        assert_ne!(
            fa,
            fingerprint(&a, "script changed"),
            "the script is part of it"
        );
        assert_eq!(fa, fingerprint(&a.clone(), "script"), "stable");

        let out = dir.join("r.csv");
        claim_output(&out, &fa).unwrap();
        assert_eq!(
            read_fingerprint(&out).unwrap().as_deref(),
            Some(fa.as_str())
        );
        std::fs::write(&out, "member\n0\n").unwrap();
        claim_output(&out, &fa).unwrap();
        let err = claim_output(&out, &fb).unwrap_err().to_string();
        assert!(
            err.contains("r.csv") && err.contains("another spec"),
            "{err}"
        );
        std::fs::remove_file(fingerprint_path(&out)).unwrap();
        let err = claim_output(&out, &fa).unwrap_err().to_string();
        assert!(err.contains("r.csv.fingerprint"), "{err}");

        // Shards of different specs do not merge; the merged file keeps
        // the shards' fingerprint.
        let (s1, s2, m) = (dir.join("s1.csv"), dir.join("s2.csv"), dir.join("m.csv"));
        for (p, rows) in [(&s1, "member\n0\n"), (&s2, "member\n1\n")] {
            claim_output(p, &fa).unwrap();
            std::fs::write(p, rows).unwrap();
        }
        assert_eq!(merge(&[s1.as_path(), s2.as_path()], &m).unwrap(), 2);
        assert_eq!(read_fingerprint(&m).unwrap().as_deref(), Some(fa.as_str()));
        std::fs::write(fingerprint_path(&s2), format!("{fb}\n")).unwrap();
        let err = merge(&[s1.as_path(), s2.as_path()], &dir.join("m2.csv"))
            .unwrap_err()
            .to_string();
        assert!(err.contains("s2.csv") && err.contains("differs"), "{err}");
        assert!(!dir.join("m2.csv").exists(), "nothing written");
        // An output that cannot be written is an error naming it, and
        // leaves nothing behind.
        std::fs::write(fingerprint_path(&s2), format!("{fa}\n")).unwrap();
        let blocked = dir.join("m.csv").join("inside-a-file.csv");
        let err = merge(&[s1.as_path(), s2.as_path()], &blocked)
            .unwrap_err()
            .to_string();
        assert!(err.contains("inside-a-file.csv"), "{err}");
        let left: Vec<_> = std::fs::read_dir(&dir)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().contains("partial"))
            .collect();
        assert!(left.is_empty(), "{left:?}");
        std::fs::remove_dir_all(&dir).ok();
    }
}
