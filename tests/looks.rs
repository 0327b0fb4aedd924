//! Looks end to end: the ledger a study's runs leave, what the results say about every look,
//! and what happens when the ledger is damaged, replaced, bypassed or shared by parallel runs.

use crate::support::{copy_dir, examples, surety};
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Output;

fn run_in(dir: &Path, args: &[&str]) -> Output {
    surety()
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the binary starts")
}

/// A scratch copy of the valve-endurance example with the export of `week` in place.
fn endurance(week: u32) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path().join("valve-endurance");
    copy_dir(&examples().join("valve-endurance"), &root);
    set_week(&root, week);
    (dir, root)
}

fn set_week(root: &Path, week: u32) {
    std::fs::copy(
        root.join(format!("weeks/week-{week}.csv")),
        root.join("cycles.csv"),
    )
    .unwrap();
}

fn results(root: &Path) -> Value {
    let bytes = std::fs::read(root.join("study-report/results.json")).unwrap();
    serde_json::from_slice(&bytes).unwrap()
}

fn ledger(root: &Path) -> String {
    std::fs::read_to_string(root.join("valve-endurance.ledger.jsonl")).unwrap()
}

fn ok(o: &Output) {
    assert!(
        o.status.success(),
        "exit {:?}: {}",
        o.status.code(),
        String::from_utf8_lossy(&o.stderr)
    );
}

// The "done when": three runs on a growing export give three chained ledger lines and a
// report that shows every look; the third report verifies from its own attachments.
#[test]
fn three_weekly_runs_chain_three_looks() {
    let (_dir, root) = endurance(1);
    for week in 1..=3 {
        set_week(&root, week);
        ok(&run_in(&root, &["run", "study.yaml"]));
    }
    let text = ledger(&root);
    let lines: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 3);
    for (i, line) in lines.iter().enumerate() {
        assert_eq!(line["seq"], i as u64 + 1);
        assert_eq!(line["look"], i as u64 + 1);
        assert_eq!(line["kind"], "look");
        assert_eq!(line["method"], "beta-binomial-mixture");
        // A confidence sequence spends nothing per look (METHODS.md §8, §11).
        assert_eq!(line["delta_spent"], 0.0);
    }
    // Each line carries the SHA-256 of the line before it.
    let raw: Vec<&str> = text.lines().collect();
    for i in 1..3 {
        let digest = sha256(raw[i - 1].as_bytes());
        assert_eq!(lines[i]["prev"], digest.as_str());
    }
    let r = results(&root);
    let looks = &r["looks"];
    assert_eq!(looks["look"], 3);
    assert_eq!(looks["ledger"]["status"], "registered");
    assert_eq!(
        looks["ledger"]["previous"],
        sha256(raw[1].as_bytes()).as_str()
    );
    let history = looks["history"].as_array().unwrap();
    assert_eq!(history.len(), 3);
    // Trials per look: the weekly exports of generate.py (1,800, 4,200 and 7,500 cycles).
    let n: Vec<u64> = history
        .iter()
        .map(|h| h["arms"][0]["n"].as_u64().unwrap())
        .collect();
    assert_eq!(n, [1800, 4200, 7500]);
    // The reported bound is the running minimum of the looks' own upper bounds.
    let own: Vec<f64> = history
        .iter()
        .map(|h| h["arms"][0]["upper"].as_f64().unwrap())
        .collect();
    let running = own.iter().cloned().fold(f64::INFINITY, f64::min);
    assert_eq!(r["arms"][0]["primary"]["upper"].as_f64().unwrap(), running);
    // The bound along the cycles marks every look.
    let path = &r["arms"][0]["path"];
    assert_eq!(path["looks"].as_array().unwrap().len(), 3);
    ok(&run_in(&root, &["verify", "study-report/report.pdf"]));
}

fn sha256(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

#[test]
fn a_rerun_on_the_same_inputs_is_a_reissue() {
    let (_dir, root) = endurance(1);
    ok(&run_in(&root, &["run", "study.yaml"]));
    // `surety check` reads the ledger without writing to it, and says what a run would do.
    let before = ledger(&root);
    let o = run_in(&root, &["check", "study.yaml"]);
    ok(&o);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("1 look recorded, chain verified"), "{text}");
    assert!(text.contains("would re-issue look 1"), "{text}");
    assert_eq!(ledger(&root), before);
    // A fixed typo in the title changes the spec but not the look.
    let spec = std::fs::read_to_string(root.join("study.yaml")).unwrap();
    std::fs::write(
        root.join("study.yaml"),
        spec.replace("endurance campaign", "endurance campaign (rev. 2)"),
    )
    .unwrap();
    ok(&run_in(&root, &["run", "study.yaml"]));
    let lines: Vec<Value> = ledger(&root)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 2);
    assert_eq!(lines[1]["kind"], "re-issue");
    assert_eq!(lines[1]["look"], 1);
    let r = results(&root);
    assert_eq!(r["looks"]["ledger"]["status"], "re-issue");
    assert_eq!(r["looks"]["history"].as_array().unwrap().len(), 1);
}

#[test]
fn a_damaged_ledger_stops_the_run_until_replaced() {
    let (_dir, root) = endurance(1);
    ok(&run_in(&root, &["run", "study.yaml"]));
    set_week(&root, 2);
    ok(&run_in(&root, &["run", "study.yaml"]));
    // Edit one digit of the first look's trial count.
    let text = ledger(&root);
    let damaged = text.replacen("\"n\":1800", "\"n\":1900", 1);
    assert_ne!(damaged, text);
    std::fs::write(root.join("valve-endurance.ledger.jsonl"), &damaged).unwrap();
    let report = std::fs::read(root.join("study-report/report.pdf")).unwrap();
    set_week(&root, 3);
    let o = run_in(&root, &["run", "study.yaml"]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("valve-endurance.ledger.jsonl:1"), "{err}");
    assert_eq!(
        err.matches("valve-endurance.ledger.jsonl").count(),
        1,
        "{err}"
    );
    assert!(err.contains("--new-ledger"), "{err}");
    // Nothing was written: the report of look 2 and the damaged ledger are untouched.
    assert_eq!(
        std::fs::read(root.join("study-report/report.pdf")).unwrap(),
        report
    );
    assert_eq!(ledger(&root), damaged);

    // Starting a new ledger keeps the damaged one under another name and says so.
    ok(&run_in(&root, &["run", "study.yaml", "--new-ledger"]));
    let kept = std::fs::read_to_string(root.join("valve-endurance.ledger.replaced-1.jsonl"))
        .expect("the old ledger is kept");
    assert_eq!(kept, damaged);
    let lines: Vec<Value> = ledger(&root)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 2);
    assert_eq!(lines[0]["kind"], "new-ledger");
    assert!(
        lines[0]["note"]
            .as_str()
            .unwrap()
            .contains("valve-endurance.ledger.replaced-1.jsonl")
    );
    assert_eq!(lines[1]["look"], 1);
    let r = results(&root);
    assert!(r["looks"]["ledger"]["new_ledger"].is_string());
}

#[test]
fn no_ledger_is_an_unregistered_look() {
    let (_dir, root) = endurance(2);
    ok(&run_in(&root, &["run", "study.yaml", "--no-ledger"]));
    assert!(!root.join("valve-endurance.ledger.jsonl").exists());
    let r = results(&root);
    assert_eq!(r["looks"]["ledger"]["status"], "not-registered");
    let item = r["checklist"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["id"] == "looks-recorded")
        .unwrap()
        .clone();
    assert_eq!(item["status"], "open");
}

// Two planned looks of a fixed-n method share δ equally (METHODS.md §11): each spends δ/2, the
// second reports the smaller of the two upper bounds, and a third look is refused.
#[test]
fn planned_looks_spend_their_share_and_stop_at_the_plan() {
    let dir = tempfile::tempdir().unwrap();
    let spec = |trials: u64, events: u64| {
        format!(
            "surety: 1
study: {{id: T-9, title: two planned looks}}
claim: {{quantity: failure rate, side: upper, limit: 0.01, confidence: 0.95}}
outcome: {{type: binary, event: failure}}
data: {{trials: {trials}, events: {events}}}
looks: {{mode: planned, planned: 2}}
"
        )
    };
    let path = dir.path().join("study.yaml");
    std::fs::write(&path, spec(600, 1)).unwrap();
    ok(&run_in(dir.path(), &["run", "study.yaml"]));
    let first = results(dir.path());
    assert_eq!(first["arms"][0]["delta"], 0.025);
    std::fs::write(&path, spec(1200, 5)).unwrap();
    ok(&run_in(dir.path(), &["run", "study.yaml"]));
    let second = results(dir.path());
    assert_eq!(second["looks"]["look"], 2);
    assert_eq!(second["arms"][0]["delta"], 0.025);
    assert_eq!(second["looks"]["delta_spent_total"], 0.05);
    let own: Vec<f64> = second["looks"]["history"]
        .as_array()
        .unwrap()
        .iter()
        .map(|h| h["arms"][0]["upper"].as_f64().unwrap())
        .collect();
    // 1 event in 600 gives a smaller exact bound than 5 in 1,200 at δ/2 (both exact upper
    // bounds, so the running minimum is the first look's).
    assert!(own[0] < own[1], "{own:?}");
    assert_eq!(
        second["arms"][0]["primary"]["upper"].as_f64().unwrap(),
        own[0]
    );
    std::fs::write(&path, spec(1800, 5)).unwrap();
    let o = run_in(dir.path(), &["run", "study.yaml"]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("look 3 of a study planned for 2 looks"),
        "{err}"
    );
    assert!(err.contains("anytime"), "{err}");
}

// Parallel runs sharing one ledger take turns under its lock: every line verifies and the
// looks are numbered 1 to N without gaps.
#[test]
fn concurrent_runs_leave_a_valid_chain() {
    let dir = tempfile::tempdir().unwrap();
    let runs = 6;
    for i in 0..runs {
        std::fs::write(
            dir.path().join(format!("spec-{i}.yaml")),
            format!(
                "surety: 1
study: {{id: T-{i}, title: parallel look {i}}}
claim: {{quantity: failure rate, side: upper, limit: 0.05, confidence: 0.95}}
outcome: {{type: binary, event: failure}}
data: {{trials: {}, events: 1}}
looks: {{mode: anytime, ledger: shared.ledger.jsonl}}
",
                100 + 10 * i
            ),
        )
        .unwrap();
    }
    let children: Vec<_> = (0..runs)
        .map(|i| {
            surety()
                .current_dir(dir.path())
                .args(["run", &format!("spec-{i}.yaml"), "--json"])
                .stdout(std::process::Stdio::null())
                .stderr(std::process::Stdio::piped())
                .spawn()
                .unwrap()
        })
        .collect();
    for child in children {
        let o = child.wait_with_output().unwrap();
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    }
    let bytes = std::fs::read(dir.path().join("shared.ledger.jsonl")).unwrap();
    let parsed = surety::ledger::Ledger::parse(&bytes).expect("the chain verifies");
    let looks: Vec<u32> = parsed.entries.iter().map(|e| e.look).collect();
    assert_eq!(looks, (1..=runs as u32).collect::<Vec<_>>());
}
