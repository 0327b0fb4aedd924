//! Running the reference scripts in tests/reference/ (independent Python implementations).
//!
//! When Python or a script's packages are missing, the check is skipped with a loud message, so
//! a developer without them can still run the suite; set SURETY_REQUIRE_REFERENCE=1 (CI does)
//! to make a missing reference a failure instead. SURETY_PYTHON names the interpreter
//! (default `python3`).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Exit status a reference script uses to say its packages are not installed.
const MISSING_PACKAGES: i32 = 77;

/// Path of a script in tests/reference/.
pub(crate) fn script(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/reference")
        .join(name)
}

/// Runs `script` with `args`; `None` (after a loud message) when the reference cannot run here.
/// A script that runs but fails is a test failure.
pub(crate) fn run(name: &str, args: &[&std::ffi::OsStr]) -> Option<Output> {
    let python = std::env::var("SURETY_PYTHON").unwrap_or_else(|_| "python3".to_owned());
    let required = std::env::var("SURETY_REQUIRE_REFERENCE").is_ok_and(|v| v == "1");
    let output = match Command::new(&python).arg(script(name)).args(args).output() {
        Ok(o) => o,
        Err(e) => {
            return skip(required, &format!("cannot start `{python}`: {e}"));
        }
    };
    match output.status.code() {
        Some(0) => Some(output),
        Some(MISSING_PACKAGES) => skip(required, String::from_utf8_lossy(&output.stderr).trim()),
        _ => panic!(
            "{name} failed ({}):\n{}",
            output.status,
            String::from_utf8_lossy(&output.stderr)
        ),
    }
}

fn skip(required: bool, why: &str) -> Option<Output> {
    if required {
        panic!("reference check required (SURETY_REQUIRE_REFERENCE=1) but not available: {why}");
    }
    loud(&format!(
        "*** SKIPPED reference check: {why}\n*** install the packages named above, or set SURETY_REQUIRE_REFERENCE=1 to fail instead"
    ));
    None
}

/// Writes `message` where it is seen even when the test passes: to the stderr handle itself,
/// which the test harness does not capture (it captures `eprintln!`).
pub(crate) fn loud(message: &str) {
    let _ = writeln!(std::io::stderr().lock(), "\n{message}\n");
}
