//! Reading the text files users hand us (scripts, fluid and patient files,
//! sweep specs, tolerance files, the validation dossier): only regular
//! files, and only up to a size no such file needs, so that a device
//! (`/dev/zero`), a named pipe or a runaway file is refused at once instead
//! of being read forever.

use std::io::Read;
use std::path::Path;

/// Largest text file read, bytes (16 MiB: the bundled files are a few kB).
pub const MAX_TEXT_FILE_BYTES: u64 = 16 * 1024 * 1024;

/// Read `path` as UTF-8 text: refused when it is not a regular file or is
/// larger than [`MAX_TEXT_FILE_BYTES`]. Errors are `std::io::Error`s whose
/// text says which.
pub fn read_text(path: &Path) -> std::io::Result<String> {
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        return Err(std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            "not a regular file (a folder, device or pipe cannot be read as text)",
        ));
    }
    if meta.len() > MAX_TEXT_FILE_BYTES {
        return Err(too_large());
    }
    let file = std::fs::File::open(path)?;
    let mut bytes = Vec::new();
    // Read one byte past the limit: a file that grew since the check is
    // refused too.
    file.take(MAX_TEXT_FILE_BYTES + 1).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > MAX_TEXT_FILE_BYTES {
        return Err(too_large());
    }
    String::from_utf8(bytes)
        .map_err(|_| std::io::Error::new(std::io::ErrorKind::InvalidData, "not UTF-8 text"))
}

fn too_large() -> std::io::Error {
    std::io::Error::new(
        std::io::ErrorKind::InvalidInput,
        format!(
            "larger than {} MiB, far more than any text file Tidewater reads",
            MAX_TEXT_FILE_BYTES / (1024 * 1024)
        ),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn devices_and_folders_are_refused_and_text_is_read() {
        let dir = std::env::temp_dir().join(format!("tidewater-textfile-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let file = dir.join("a.yaml");
        std::fs::write(&file, "fluids: []\n").unwrap();
        assert_eq!(read_text(&file).unwrap(), "fluids: []\n");
        assert!(read_text(&dir)
            .unwrap_err()
            .to_string()
            .contains("regular file"));
        if Path::new("/dev/zero").exists() {
            assert!(read_text(Path::new("/dev/zero")).is_err());
        }
        std::fs::remove_dir_all(&dir).ok();
    }
}
