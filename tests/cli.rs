//! End-to-end tests of the `surety` binary: every example, the JSON output, exit codes, bad
//! inputs (located message, exit 2, nothing written) and byte-for-byte reruns.

use crate::support::{copy_dir, surety};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn run(args: &[&str]) -> Output {
    surety().args(args).output().expect("the binary starts")
}

fn example(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("examples")
        .join(name)
        .join("study.yaml")
}

/// Run a copy of an example (so that its look ledger starts empty and stays out of the
/// repository) into a fresh output folder, with extra arguments.
fn run_example(name: &str, extra: &[&str]) -> (Output, tempfile::TempDir) {
    let out = tempfile::tempdir().unwrap();
    let copy = out.path().join("example");
    copy_dir(example(name).parent().unwrap(), &copy);
    let spec = copy.join("study.yaml");
    let mut args = vec![
        "run",
        spec.to_str().unwrap(),
        "--out",
        out.path().to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    (run(&args), out)
}

fn results(dir: &Path) -> serde_json::Value {
    let bytes = std::fs::read(dir.join("results.json")).expect("results.json written");
    serde_json::from_slice(&bytes).expect("results.json is JSON")
}

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

const EXAMPLES: &[&str] = &[
    "release-signoff",
    "lot-comparison",
    "zero-failure-demo",
    "dock-approach",
    "valve-endurance",
];

#[test]
fn every_example_runs_and_writes_both_files() {
    for name in EXAMPLES {
        let (o, out) = run_example(name, &[]);
        assert!(
            o.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let r = results(out.path());
        assert_eq!(r["format"], "surety-results/1");
        let pdf = std::fs::read(out.path().join("report.pdf")).unwrap();
        assert!(pdf.starts_with(b"%PDF-"), "{name}: report.pdf is a PDF");
        let stdout = String::from_utf8_lossy(&o.stdout);
        assert!(
            stdout.contains(r["study"]["id"].as_str().unwrap()),
            "{name}: summary names the study"
        );
    }
}

// Expected bounds for the examples come from mpmath (50 digits), printed by
// tests/reference/examples_reference.py.
#[test]
fn release_signoff_matches_reference() {
    let (o, out) = run_example("release-signoff", &[]);
    assert!(o.status.success());
    let r = results(out.path());
    let arm = &r["arms"][0];
    assert_eq!(arm["n"], 2300);
    assert_eq!(arm["events"], 1);
    // mpmath: Clopper–Pearson one-sided upper, k = 1, n = 2300, δ = 0.05
    let upper = arm["primary"]["upper"].as_f64().unwrap();
    assert!(rel(upper, 0.0020608718757739678) < 1e-10, "{upper}");
    assert_eq!(r["verdict"], "pass");
    assert_eq!(arm["primary"]["method"], "exact");
}

#[test]
fn lot_comparison_divides_the_budget_among_arms() {
    let (o, out) = run_example("lot-comparison", &[]);
    assert!(o.status.success());
    let r = results(out.path());
    // Bonferroni for scope all over 3 arms (METHODS.md §11): δ = 0.05 / 3.
    assert!(
        rel(
            r["adjustments"]["delta_per_bound"].as_f64().unwrap(),
            0.05 / 3.0
        ) < 1e-15
    );
    // mpmath: Clopper–Pearson one-sided upper at δ = 0.05/3 for each lot.
    let expected = [
        0.014521791748431373,
        0.024643809497941174,
        0.011784694756163814,
    ];
    for (arm, want) in r["arms"].as_array().unwrap().iter().zip(expected) {
        let got = arm["primary"]["upper"].as_f64().unwrap();
        assert!(rel(got, want) < 1e-10, "{}: {got} vs {want}", arm["name"]);
    }
    // Lot B's bound exceeds the 2 % limit while its lower bound does not: inconclusive.
    assert_eq!(r["arms"][1]["verdict"], "inconclusive");
    assert_eq!(r["verdict"], "inconclusive");
}

// The 59-unit zero-failure plan for 95 % confidence / 95 % reliability (common practice).
#[test]
fn zero_failure_demonstration_passes_at_59() {
    let (o, out) = run_example("zero-failure-demo", &[]);
    assert!(o.status.success());
    let r = results(out.path());
    assert_eq!(r["verdict"], "pass");
    // 1 − 0.05^(1/59), mpmath
    let upper = r["arms"][0]["primary"]["upper"].as_f64().unwrap();
    assert!(rel(upper, 0.049507609888226947) < 1e-10, "{upper}");
}

#[test]
fn json_flag_prints_one_document_on_stdout() {
    let (o, out) = run_example("release-signoff", &["--json"]);
    assert!(o.status.success());
    let v: serde_json::Value =
        serde_json::from_slice(&o.stdout).expect("stdout is exactly one JSON document");
    assert_eq!(v["format"], "surety-results/1");
    assert_eq!(v, results(out.path()));
}

#[test]
fn gate_sets_exit_one_unless_pass() {
    let (o, _pass) = run_example("release-signoff", &["--gate"]);
    assert_eq!(o.status.code(), Some(0));
    let (o, _inconclusive) = run_example("lot-comparison", &["--gate"]);
    assert_eq!(o.status.code(), Some(1));
    // Without --gate the same inconclusive run exits 0.
    let (o, _) = run_example("lot-comparison", &[]);
    assert_eq!(o.status.code(), Some(0));
}

#[test]
fn two_runs_give_identical_bytes() {
    let (first, a) = run_example("release-signoff", &[]);
    let (second, b) = run_example("release-signoff", &[]);
    assert!(first.status.success() && second.status.success());
    for file in ["results.json", "report.pdf"] {
        let x = std::fs::read(a.path().join(file)).unwrap();
        let y = std::fs::read(b.path().join(file)).unwrap();
        assert!(x == y, "{file} differs between two runs");
    }
}

#[test]
fn results_digest_recomputes_from_the_file() {
    let (o, out) = run_example("release-signoff", &[]);
    assert!(o.status.success());
    let bytes = std::fs::read(out.path().join("results.json")).unwrap();
    let mut analysis: surety::analysis::model::Analysis = serde_json::from_slice(&bytes).unwrap();
    let recorded = analysis.provenance.results_sha256.clone();
    analysis.provenance.results_sha256.clear();
    assert_eq!(surety::report::json::canonical_digest(&analysis), recorded);
    // The spec digest is the SHA-256 of the file's bytes (FIPS 180-4 via the sha2 crate).
    let spec_bytes = std::fs::read(example("release-signoff")).unwrap();
    assert_eq!(
        analysis.provenance.spec.sha256,
        surety::provenance::sha256_hex(&spec_bytes)
    );
}

/// Write `yaml` as study.yaml in a fresh folder, run it, and check exit 2, a located message
/// naming `line:column` and containing `fragment`, and that no output folder appeared.
fn assert_bad(yaml: &str, line_col: &str, fragment: &str) {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(&spec, yaml).unwrap();
    for cmd in ["run", "check"] {
        let o = run(&[cmd, spec.to_str().unwrap()]);
        let stderr = String::from_utf8_lossy(&o.stderr);
        assert_eq!(
            o.status.code(),
            Some(2),
            "{cmd} exit code; stderr: {stderr}"
        );
        assert!(
            stderr.contains(&format!("study.yaml:{line_col}")),
            "{cmd}: location {line_col} in: {stderr}"
        );
        assert!(
            stderr.contains(fragment),
            "{cmd}: `{fragment}` in: {stderr}"
        );
        assert!(
            !dir.path().join("study-report").exists(),
            "{cmd} wrote an output folder"
        );
    }
    let entries: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(entries.len(), 1, "only the spec is left in the folder");
}

const GOOD: &str = "surety: 1
study:
  id: T-1
  title: Test study
claim:
  quantity: failure rate
  side: upper
  limit: 0.01
  confidence: 0.95
outcome:
  type: binary
data:
  trials: 1000
  events: 2
";

fn with(from: &str, to: &str) -> String {
    assert!(GOOD.contains(from), "{from}");
    GOOD.replace(from, to)
}

#[test]
fn the_base_spec_for_bad_input_tests_is_good() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(&spec, GOOD).unwrap();
    let o = run(&["run", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(dir.path().join("study-report/report.pdf").exists());
}

#[test]
fn bad_inputs_give_located_errors_and_write_nothing() {
    assert_bad(&with("events: 2", "events: 1001"), "14:11", "events");
    assert_bad(&with("trials: 1000", "trials: 0"), "13:11", "trials");
    assert_bad(&with("events: 2", "events: -2"), "14:11", "events");
    assert_bad(&with("events: 2", "events: 2.5"), "14:11", "events");
    assert_bad(&with("limit: 0.01", "limit: 1.5"), "8:10", "limit");
    assert_bad(&with("limit: 0.01", "limit: 0"), "8:10", "limit");
    assert_bad(&with("confidence: 0.95", "confidence: 95"), "9:15", "0.95");
    assert_bad(
        &with("confidence: 0.95", "confidence: 1.5"),
        "9:15",
        "confidence",
    );
    assert_bad(&with("side: upper", "sidee: upper"), "7:3", "side");
    assert_bad(
        &with("  limit: 0.01\n", "  limit: 0.01\n  limit: 0.02\n"),
        "9:3",
        "limit",
    );
    assert_bad(
        &format!("{GOOD}method:\n  primary: exakt\n"),
        "16:12",
        "did you mean `exact`",
    );
    assert_bad(
        &format!("{GOOD}attestations:\n  independant-trials: {{by: A. Tester}}\n"),
        "16:3",
        "independent-trials",
    );
}

#[test]
fn yaml_one_one_booleans_and_alpha_for_confidence_are_refused() {
    assert_bad(
        &format!("{GOOD}report:\n  embed_data: yes\n"),
        "16:15",
        "true or false",
    );
    assert_bad(
        &with("confidence: 0.95", "confidence: 0.05"),
        "9:15",
        "0.95",
    );
}

#[test]
fn init_writes_a_spec_that_runs_as_it_is_and_never_overwrites() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("new.yaml");
    let o = run(&["init", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let o = run(&["run", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    std::fs::write(&spec, "edited by hand\n").unwrap();
    let o = run(&["init", spec.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(std::fs::read_to_string(&spec).unwrap(), "edited by hand\n");
}

#[test]
fn methods_json_lists_the_catalogue() {
    let o = run(&["methods", "--json"]);
    assert!(o.status.success());
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let ids: Vec<&str> = v["methods"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["id"].as_str().unwrap())
        .collect();
    // The catalogue order of src/bounds/mod.rs: binary-count methods first.
    assert_eq!(
        ids,
        [
            "exact",
            "chernoff-kl",
            "hoeffding",
            "bernstein-empirical",
            "bernstein-unexpected",
            "split-kl",
            "betting",
            "betting-sequence",
            "beta-binomial-mixture",
            "eb-sequence"
        ]
    );
    assert_eq!(
        v["methods"][6]["needs"],
        "every value in trial order (a data file)"
    );
}

#[test]
fn a_missing_spec_is_bad_input() {
    let o = run(&["run", "no-such-file.yaml"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no-such-file.yaml"));
}

#[test]
fn a_quadrillion_trials_are_counted_exactly() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(
        &spec,
        with("trials: 1000", "trials: 1e15").replace("events: 2", "events: 500000"),
    )
    .unwrap();
    let o = run(&["run", spec.to_str().unwrap(), "--json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let arm = &v["arms"][0];
    assert_eq!(arm["n"].as_u64(), Some(1_000_000_000_000_000));
    let (lower, upper) = (
        arm["primary"]["lower"].as_f64().unwrap(),
        arm["primary"]["upper"].as_f64().unwrap(),
    );
    // The observed rate 5e-10 lies inside; Chernoff-kl is never tighter than exact (METHODS.md §2).
    assert!(lower < 5e-10 && 5e-10 < upper, "{lower} {upper}");
    assert!(upper <= arm["compare"][0]["upper"].as_f64().unwrap());
}

// The spec shown in README.md must stay a valid spec.
#[test]
fn the_readme_spec_example_is_valid() {
    let readme =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("README.md")).unwrap();
    let start = readme.find("```yaml\n").expect("README has a yaml block") + 8;
    let end = start + readme[start..].find("```").unwrap();
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(&spec, &readme[start..end]).unwrap();
    let o = run(&["check", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

const PLANNED: &str = "surety: 1
study: {id: PLAN-7, title: Seal leak rate, date: 2026-11-30}
claim: {quantity: leak rate, side: upper, limit: 0.01, confidence: 0.95}
outcome: {type: binary, event: leak}
data: {trials: 473, events: 1}
plan:
  assumed_rate: 0.002
  pass_probability: 0.9
REGISTERED";

fn criteria_item(dir: &Path) -> serde_json::Value {
    let r = results(dir);
    r["checklist"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["id"] == "criteria-registered")
        .cloned()
        .expect("the checklist always has the registration item")
}

// The registration contract of the plan section: `surety plan` prints the digest, `surety run`
// recomputes it, marks it checked when it matches and flags a changed claim on stderr.
#[test]
fn registered_criteria_are_rechecked_by_run() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(&spec, PLANNED.replace("REGISTERED", "")).unwrap();
    let out = dir.path().join("out");
    let o = run(&[
        "run",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success());
    let item = criteria_item(&out);
    assert_eq!(item["status"], "open");
    // The run report carries the sample-size rationale (the plan section is shared with the
    // plan report): 299 and 473 trials for 0 and 1 events at 95 % / 1 % (plan_values.json).
    let text = Command::new("pdftotext")
        .arg(out.join("report.pdf"))
        .arg("-")
        .output()
        .expect("pdftotext runs");
    let text = String::from_utf8_lossy(&text.stdout);
    assert!(text.contains("Sample-size rationale"), "{text}");
    assert!(text.contains("Demonstration plans") && text.contains("473"));
    assert!(
        item["evidence"]
            .as_str()
            .unwrap()
            .starts_with("criteria not registered before testing")
    );

    let o = run(&["plan", spec.to_str().unwrap()]);
    assert!(o.status.success());
    let text = String::from_utf8_lossy(&o.stdout).into_owned();
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("registered: "))
        .expect("plan prints the registration line");
    let digest = line.trim().trim_start_matches("registered: ").to_string();
    assert_eq!(digest.len(), 64);
    let registered = PLANNED.replace("REGISTERED", &format!("  registered: {digest}\n"));
    std::fs::write(&spec, &registered).unwrap();
    let o = run(&[
        "run",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success());
    assert_eq!(criteria_item(&out)["status"], "checked");
    assert!(!String::from_utf8_lossy(&o.stderr).contains("warning"));

    // Moving the limit after a recorded look is a second look at the same data, which a
    // single planned fixed-n look cannot pay for: refused, and the ledger is left as it was
    // (the runs so far were one look and its re-issues).
    let ledger_path = spec.with_file_name("study.ledger.jsonl");
    let before = std::fs::read_to_string(&ledger_path).unwrap();
    assert!(
        before
            .lines()
            .skip(1)
            .all(|l| l.contains("\"kind\":\"re-issue\""))
    );
    std::fs::write(&spec, registered.replace("limit: 0.01", "limit: 0.015")).unwrap();
    let o = run(&[
        "run",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("look 2 of a study planned for 1 look"),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert_eq!(std::fs::read_to_string(&ledger_path).unwrap(), before);
    // Explored without the ledger, the moved criteria are flagged in the results and on stderr.
    let o = run(&[
        "run",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--no-ledger",
    ]);
    assert!(o.status.success());
    assert_eq!(criteria_item(&out)["status"], "open");
    assert!(
        String::from_utf8_lossy(&o.stderr).contains("warning: the claim or plan changed"),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    // Layout and comments do not change the digest.
    std::fs::write(
        &spec,
        registered.replace("plan:\n", "# criteria fixed on 2026-11-01\nplan:\n"),
    )
    .unwrap();
    let o = run(&[
        "run",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success());
    assert_eq!(criteria_item(&out)["status"], "checked");
}

// 95 % / 99 % with c = 0 needs 299 trials (success-run rule, common practice); the plan's
// other rows come from tests/reference/plan_values.json via the plan module's own tests.
#[test]
fn plan_prints_the_demonstration_table_and_json() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(&spec, PLANNED.replace("REGISTERED", "")).unwrap();
    let o = run(&["plan", spec.to_str().unwrap(), "--json"]);
    assert!(o.status.success());
    let p: serde_json::Value = serde_json::from_slice(&o.stdout).expect("one JSON document");
    assert_eq!(p["format"], "surety-plan/1");
    assert_eq!(p["demonstration"][0]["allowed_events"], 0);
    assert_eq!(p["demonstration"][0]["trials"], 299);
    // 473 trials with one event: the exact bound at 95 % is just below 1 % (plan row c = 1).
    assert_eq!(p["demonstration"][1]["trials"], 473);
    assert!(p["still_needed"].is_object());
}

#[test]
fn a_plan_that_cannot_reach_its_target_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(
        &spec,
        PLANNED
            .replace("REGISTERED", "")
            .replace("assumed_rate: 0.002", "assumed_rate: 0.01"),
    )
    .unwrap();
    let o = run(&["plan", spec.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("no sample size reaches the target"), "{text}");
}

// The bounded example: mean and Hoeffding bound recomputed from the data file with Python
// (`csv` + `math.fsum`: mean 0.29615824999999996 over 240,000 rows; Hoeffding
// 0.29615825 + 2.5·sqrt(ln 20 / 480000) = 0.3024038028694611).
#[test]
fn bounded_example_shows_every_method_side_by_side() {
    let (o, out) = run_example("dock-approach", &[]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let r = results(out.path());
    assert_eq!(r["outcome"]["type"], "bounded");
    let arm = &r["arms"][0];
    assert_eq!(arm["n"], 240_000);
    assert!(rel(arm["mean"].as_f64().unwrap(), 0.29615824999999996) < 1e-12);
    assert_eq!(arm["primary"]["method"], "betting");
    let compare: Vec<&str> = arm["compare"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["method"].as_str().unwrap())
        .collect();
    for m in [
        "chernoff-kl",
        "hoeffding",
        "bernstein-empirical",
        "bernstein-unexpected",
        "split-kl",
    ] {
        assert!(compare.contains(&m), "{m} missing from {compare:?}");
    }
    let hoeffding = arm["compare"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["method"] == "hoeffding")
        .unwrap();
    let h = hoeffding["upper"].as_f64().unwrap();
    assert!(
        h >= 0.3024038028694611 && rel(h, 0.3024038028694611) < 1e-12,
        "{h}"
    );
    // The variance-adaptive primary passes where Hoeffding cannot.
    assert_eq!(arm["verdict"], "pass");
    assert!(arm["primary"]["upper"].as_f64().unwrap() < 0.30);
    let inputs = &r["provenance"]["inputs"][0];
    assert_eq!(inputs["path"], "approach-errors.csv");
    assert_eq!(inputs["rows"], 240_000);
}

// Bad data in a file: exit 2, the file's own line and column in the message, nothing written.
#[test]
fn bad_data_files_are_refused_with_their_line_and_nothing_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("study.yaml");
    std::fs::write(
        &spec,
        "surety: 1
study: {id: T-9, title: Stop error}
claim: {quantity: mean stop error, side: upper, limit: 0.3, confidence: 0.95}
outcome: {type: bounded, range: [0, 2.5], unit: m}
data: {file: errors.csv, column: error_m}
",
    )
    .unwrap();
    let cases: &[(&str, &str)] = &[
        (
            "error_m\n0.2\n2.7\n0.1\n",
            "errors.csv:3:1: value `2.7` is outside the declared range [0, 2.5] in column `error_m`",
        ),
        ("error_m\n0.2\n\n", "errors.csv:3"),
        (
            "error_m\n0.2\nNaN\n",
            "errors.csv:3:1: value `NaN` in column `error_m` is not a finite number",
        ),
        (
            "error_m\n0.2\n0,3\n",
            "errors.csv:3:2: this row has 2 fields but the header has 1",
        ),
        ("stop\n0.2\n", "no column named `error_m`"),
    ];
    for (csv, fragment) in cases {
        std::fs::write(dir.path().join("errors.csv"), csv).unwrap();
        let out = dir.path().join("out");
        let o = run(&[
            "run",
            spec.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]);
        let stderr = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{csv:?}: {stderr}");
        assert!(stderr.contains(fragment), "{csv:?}: {stderr}");
        assert!(!out.exists(), "{csv:?}: an output folder was left behind");
    }
}
