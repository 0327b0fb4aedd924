//! Helpers shared by the end-to-end test modules.

use std::path::{Path, PathBuf};
use std::process::Command;

/// The `surety` binary under test, with SOURCE_DATE_EPOCH cleared so that only the spec dates
/// a report.
pub fn surety() -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_surety"));
    cmd.env_remove("SOURCE_DATE_EPOCH");
    cmd
}

/// The repository's examples folder.
pub fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples")
}

/// Copy a folder and its subfolders, leaving out earlier outputs (`study-report/`) and look
/// ledgers, so that a copied example starts as a fresh study.
pub fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for entry in std::fs::read_dir(from).unwrap() {
        let entry = entry.unwrap();
        let name = entry.file_name();
        let target = to.join(&name);
        if entry.file_type().unwrap().is_dir() {
            if name != "study-report" {
                copy_dir(&entry.path(), &target);
            }
        } else if !name.to_string_lossy().contains(".ledger.jsonl") {
            std::fs::copy(entry.path(), target).unwrap();
        }
    }
}
