//! `surety verify` and reproducibility: untouched reports verify; each kind of tampering is
//! named with exit 3; the same inputs give the same bytes in another folder, time zone and
//! locale. The expected outcomes follow from the contract in DESIGN.md §4 and §10 (exit codes,
//! byte-identical outputs), not from recorded values.

use crate::support::{copy_dir, examples, surety};
use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Copy an example folder into a fresh temporary folder and run it there.
fn run_copy(name: &str) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let to = dir.path().join(name);
    copy_dir(&examples().join(name), &to);
    let o = surety()
        .args(["run", "study.yaml"])
        .current_dir(&to)
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    (dir, to)
}

fn verify(file: &Path, extra: &[&str]) -> Output {
    surety()
        .arg("verify")
        .arg(file)
        .args(extra)
        .output()
        .unwrap()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn sha(path: &Path) -> String {
    let bytes = std::fs::read(path).unwrap();
    format!("{:x}", Sha256::digest(bytes))
}

#[test]
fn untouched_reports_and_results_verify() {
    for name in [
        "release-signoff",
        "lot-comparison",
        "zero-failure-demo",
        "dock-approach",
        "valve-endurance",
    ] {
        let (_keep, dir) = run_copy(name);
        for file in ["report.pdf", "results.json"] {
            let o = verify(&dir.join("study-report").join(file), &[]);
            let text = stdout(&o);
            assert_eq!(o.status.code(), Some(0), "{name} {file}:\n{text}");
            assert!(text.contains("checks agree"), "{text}");
            assert!(!text.contains("MISMATCH"), "{text}");
        }
        let text = stdout(&verify(&dir.join("study-report/report.pdf"), &[]));
        assert!(text.contains("re-renders byte for byte"), "{text}");
    }
}

#[test]
fn an_edited_spec_is_named() {
    let (_keep, dir) = run_copy("release-signoff");
    let spec = dir.join("study.yaml");
    let text = std::fs::read_to_string(&spec).unwrap();
    std::fs::write(&spec, text.replace("events: 1", "events: 0")).unwrap();
    let o = verify(&dir.join("study-report/results.json"), &[]);
    let out = stdout(&o);
    assert_eq!(o.status.code(), Some(3), "{out}");
    assert!(out.contains("the spec was edited"), "{out}");
    assert!(out.contains("arms[0].events"), "{out}");
}

#[test]
fn an_edited_results_file_is_named() {
    let (_keep, dir) = run_copy("release-signoff");
    let path = dir.join("study-report/results.json");
    let mut r: serde_json::Value = serde_json::from_slice(&std::fs::read(&path).unwrap()).unwrap();
    r["arms"][0]["primary"]["upper"] = serde_json::json!(0.001);
    std::fs::write(&path, serde_json::to_vec_pretty(&r).unwrap()).unwrap();
    let o = verify(&path, &[]);
    let out = stdout(&o);
    assert_eq!(o.status.code(), Some(3), "{out}");
    assert!(out.contains("the results were edited"), "{out}");
    assert!(
        out.contains("arms[0].primary.upper: recorded 0.001"),
        "{out}"
    );
}

#[test]
fn a_truncated_or_altered_pdf_fails() {
    let (_keep, dir) = run_copy("release-signoff");
    let pdf = dir.join("study-report/report.pdf");
    let bytes = std::fs::read(&pdf).unwrap();
    for keep in [bytes.len() / 2, bytes.len() - 200, 1000] {
        let cut = dir.join(format!("cut-{keep}.pdf"));
        std::fs::write(&cut, &bytes[..keep]).unwrap();
        let o = verify(&cut, &[]);
        assert_eq!(o.status.code(), Some(3), "cut at {keep}: {}", stdout(&o));
        assert!(stdout(&o).contains("MISMATCH"));
    }
}

#[test]
fn a_missing_file_is_bad_input() {
    let o = verify(Path::new("no-such-report.pdf"), &[]);
    assert_eq!(o.status.code(), Some(2));
}

/// DESIGN.md §10: same spec, inputs and version give the same bytes, wherever and whenever.
#[test]
fn outputs_do_not_depend_on_folder_time_zone_or_locale() {
    let (_a, first) = run_copy("lot-comparison");
    let other = tempfile::tempdir().unwrap();
    let second = other.path().join("deeper/elsewhere");
    copy_dir(&examples().join("lot-comparison"), &second);
    let out = other.path().join("out");
    let o = surety()
        .args(["run", second.join("study.yaml").to_str().unwrap(), "--out"])
        .arg(&out)
        .current_dir(other.path())
        .env("TZ", "Pacific/Kiritimati")
        .env("LC_ALL", "de_DE.UTF-8")
        .env("LANG", "de_DE.UTF-8")
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    for file in ["results.json", "report.pdf"] {
        assert_eq!(
            sha(&first.join("study-report").join(file)),
            sha(&out.join(file)),
            "{file} differs"
        );
    }
}

/// A data file with one changed value no longer matches the digest recorded in the report.
#[test]
fn a_changed_data_value_is_named() {
    let (_keep, dir) = run_copy("dock-approach");
    let csv = dir.join("approach-errors.csv");
    let text = std::fs::read_to_string(&csv).unwrap();
    let mut lines: Vec<&str> = text.lines().collect();
    let changed = if lines[10] == "0.500" {
        "0.501"
    } else {
        "0.500"
    };
    lines[10] = changed;
    std::fs::write(&csv, lines.join("\n") + "\n").unwrap();
    // results.json is checked against the files beside the spec.
    let o = verify(&dir.join("study-report/results.json"), &[]);
    let out = stdout(&o);
    assert_eq!(o.status.code(), Some(3), "{out}");
    assert!(out.contains("approach-errors.csv"), "{out}");
    assert!(out.contains("the data changed"), "{out}");
    // The report carries its own copy of the data, so it still verifies on its own ...
    let o = verify(&dir.join("study-report/report.pdf"), &[]);
    assert_eq!(o.status.code(), Some(0), "{}", stdout(&o));
    // ... while --data-dir checks the files in that folder instead.
    let o = verify(
        &dir.join("study-report/report.pdf"),
        &["--data-dir", dir.to_str().unwrap()],
    );
    assert_eq!(o.status.code(), Some(3), "{}", stdout(&o));
    assert!(stdout(&o).contains("the data changed"));
}

/// Fresh reports, checked by tools independent of surety: pikepdf (tests/reference/
/// pdf_structure.py: PDF/A-3B identification in XMP, title and creator, output intent, the
/// embedded files and their SHA-256) and `qpdf --check`.
#[test]
fn fresh_reports_pass_independent_pdf_checks() {
    for (name, data) in [
        ("release-signoff", None),
        ("dock-approach", Some("approach-errors.csv")),
    ] {
        let (_keep, dir) = run_copy(name);
        let pdf = dir.join("study-report/report.pdf");
        let results = std::fs::read(dir.join("study-report/results.json")).unwrap();
        let spec = std::fs::read(dir.join("study.yaml")).unwrap();
        let data_bytes = data.map(|d| std::fs::read(dir.join(d)).unwrap());
        let attached: Vec<(&str, &[u8])> = match (data, &data_bytes) {
            (Some(d), Some(b)) => vec![(d, b.as_slice())],
            _ => Vec::new(),
        };
        crate::extract::check_report_structure(&pdf, &results, "study.yaml", &spec, &attached);
        match Command::new("qpdf").arg("--check").arg(&pdf).output() {
            Ok(o) => assert!(
                o.status.success(),
                "{name}: qpdf --check: {}",
                String::from_utf8_lossy(&o.stdout)
            ),
            Err(e) => {
                assert!(
                    std::env::var("SURETY_REQUIRE_REFERENCE").as_deref() != Ok("1"),
                    "qpdf is required here: {e}"
                );
                eprintln!("SKIPPED qpdf --check: {e}");
            }
        }
    }
}
