//! Writing output files so that a failed command leaves nothing half-written: every file is
//! first written in full to a temporary name in the target folder, then renamed into place.

use crate::error::Error;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

fn temp_name(dir: &Path, name: &str) -> PathBuf {
    dir.join(format!(".{name}.{}.partial", std::process::id()))
}

fn write_temp(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let mut file = fs::File::create(path)?;
    file.write_all(bytes)?;
    file.sync_all()
}

/// Write each `(file name, bytes)` into `dir` (created if missing). Either every file is
/// written, or the temporaries are removed and the error is returned.
pub fn write_all(dir: &Path, files: &[(&str, &[u8])]) -> Result<(), Error> {
    fs::create_dir_all(dir).map_err(|source| Error::Write {
        path: dir.display().to_string(),
        source,
    })?;
    let mut temps = Vec::new();
    for (name, bytes) in files {
        let temp = temp_name(dir, name);
        if let Err(source) = write_temp(&temp, bytes) {
            let _ = fs::remove_file(&temp);
            for t in &temps {
                let _ = fs::remove_file(t);
            }
            return Err(Error::Write {
                path: dir.join(name).display().to_string(),
                source,
            });
        }
        temps.push(temp);
    }
    for ((name, _), temp) in files.iter().zip(&temps) {
        let target = dir.join(name);
        if let Err(source) = fs::rename(temp, &target) {
            for t in &temps {
                let _ = fs::remove_file(t);
            }
            return Err(Error::Write {
                path: target.display().to_string(),
                source,
            });
        }
    }
    Ok(())
}

/// Write a single new file; refuse to replace an existing one unless `force` is set.
pub fn write_new(path: &Path, bytes: &[u8], force: bool) -> Result<(), Error> {
    if path.exists() && !force {
        return Err(Error::Usage(format!(
            "{} already exists; pass --force to overwrite it",
            path.display()
        )));
    }
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .ok_or_else(|| Error::Usage(format!("{} is not a file name", path.display())))?;
    if !dir.is_dir() {
        return Err(Error::Usage(format!(
            "the folder {} does not exist",
            dir.display()
        )));
    }
    write_all(&dir, &[(name.as_str(), bytes)])
}
