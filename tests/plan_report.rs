//! End-to-end checks of the plan report: `surety plan SPEC --out DIR` writes plan.pdf beside
//! plan.json, read back with poppler's command-line tools (pdftotext, pdfinfo, pdfdetach from
//! poppler-utils), which are independent of typst. Expected numbers come from the plan fixture
//! written by tests/reference/plan_reference.py (mpmath) or are facts of the trade.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

/// Fixture written by tests/reference/plan_reference.py (mpmath at mp.dps = 50, exact binomial
/// sums).
const FIXTURE: &str = include_str!("reference/plan_values.json");

fn fixture() -> Value {
    let root: Value = serde_json::from_str(FIXTURE).expect("fixture is JSON");
    assert!(root["source"].as_str().unwrap_or("").contains("mpmath"));
    root
}

fn surety() -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_surety"));
    cmd.env_remove("SOURCE_DATE_EPOCH");
    cmd
}

/// A spec at 95 % confidence that the failure rate is at most 10 % (95 % reliability of the
/// 95/90 plans), with an invented scenario and a fixed date.
const SPEC_95_90: &str = "\
surety: 1
study:
  id: PLN-0042
  title: Hinge fatigue cracks, cover assembly
  owner: Design verification
  requirement: \"HW-12: cracks in fewer than 10 % of hinges after 20,000 cycles\"
  date: 2026-06-15
claim:
  quantity: hinge crack rate
  side: upper
  limit: 0.1
  confidence: 0.95
outcome:
  type: binary
  event: crack
data:
  trials: 12
  events: 0
plan:
  assumed_rate: 0.02
  pass_probability: 0.9
  allowed_events: [0, 1, 2, 3]
";

fn write_spec(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).expect("write spec");
    path
}

fn plan_into(spec: &Path, out: &Path, envs: &[(&str, &str)]) -> Output {
    let mut cmd = surety();
    cmd.args([
        "plan",
        spec.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    for (k, v) in envs {
        cmd.env(k, v);
    }
    let o = cmd.output().expect("the binary starts");
    assert!(
        o.status.success(),
        "surety plan failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    o
}

fn tool(name: &str, args: &[&str]) -> String {
    let out = Command::new(name).args(args).output().unwrap_or_else(|e| {
        panic!("{name} is needed for this test (Debian package poppler-utils): {e}")
    });
    assert!(
        out.status.success(),
        "{name} {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// The PDF's text in layout order (table rows stay on one line), whitespace collapsed.
fn text_of(pdf: &Path) -> String {
    let raw = tool("pdftotext", &["-layout", pdf.to_str().unwrap(), "-"]);
    raw.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// The 64-hex-digit digest the command prints after `registered:`.
fn printed_digest(o: &Output) -> String {
    let stdout = String::from_utf8_lossy(&o.stdout);
    let line = stdout
        .lines()
        .find_map(|l| l.trim().strip_prefix("registered: "))
        .expect("the command prints the registration line");
    assert_eq!(line.len(), 64, "a SHA-256 in hex");
    line.to_string()
}

fn standard_row(root: &Value, confidence: u64, reliability: u64) -> Vec<u64> {
    root["standard"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["confidence_percent"] == confidence && r["reliability_percent"] == reliability)
        .expect("fixture row")["trials"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_u64().unwrap())
        .collect()
}

#[test]
fn plan_out_writes_the_pdf_beside_plan_json() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", SPEC_95_90);
    let out = dir.path().join("out");
    let o = plan_into(&spec, &out, &[]);

    let json = std::fs::read(out.join("plan.json")).expect("plan.json written");
    let plan: Value = serde_json::from_slice(&json).unwrap();
    assert_eq!(plan["format"], "surety-plan/1");
    // plan.json is the document `--json` prints.
    let printed = surety()
        .args(["plan", spec.to_str().unwrap(), "--json"])
        .output()
        .unwrap();
    assert_eq!(printed.stdout, json);

    let pdf = out.join("plan.pdf");
    assert!(std::fs::read(&pdf).unwrap().starts_with(b"%PDF-"));
    let text = text_of(&pdf);

    // 29, 46, 61 and 76 trials for c = 0…3 at 95 % confidence / 90 % reliability: common
    // practice, and the fixture's "standard" section (mpmath).
    let trials = standard_row(&fixture(), 95, 90);
    assert_eq!(trials, [29, 46, 61, 76]);
    for (c, n) in trials.iter().enumerate() {
        assert!(
            text.contains(&format!(" {c} {n} ")),
            "demonstration row c = {c}, n = {n} missing"
        );
    }
    // The same numbers in the usual-plans table, row 95 % / 90 %.
    assert!(text.contains("95 % 90 % 29 46 61 76"), "usual table row");

    // The registration line carries the digest the command printed.
    let digest = printed_digest(&o);
    assert!(text.contains(&format!("plan.registered: {digest}")));
    assert!(text.contains("The spec does not carry it yet"));

    // Assumed rate 2 %, wanted chance 90 %: first reached at 76 trials, held from 89 (fixture
    // section "sawtooth", brute-force scan rechecked with mpmath).
    let saw = fixture()["sawtooth"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| {
            s["limit"] == 0.1
                && s["delta"] == 0.05
                && s["assumed_rate"] == 0.02
                && s["target"] == 0.9
        })
        .cloned()
        .expect("fixture case");
    let (first, held) = (
        saw["first_reached"].as_u64().unwrap(),
        saw["held"].as_u64().unwrap(),
    );
    assert!(
        text.contains(&format!(
            "Reached first at {first} trials, but held only from {held}."
        )),
        "sawtooth explanation"
    );
    assert!(text.contains("Chance of passing at the assumed rate, by number of trials"));
    // The usual cautions.
    assert!(text.contains("A plan is only as good as its assumed rate"));
    assert!(text.contains("review of a qualified statistician"));

    // Page header: study id and "page x of y".
    let info = tool("pdfinfo", &[pdf.to_str().unwrap()]);
    let pages: usize = info
        .lines()
        .find_map(|l| l.strip_prefix("Pages:"))
        .and_then(|v| v.trim().parse().ok())
        .unwrap();
    assert!(text.contains("PLN-0042"));
    assert!(text.contains(&format!("page {pages} of {pages}")));
}

#[test]
fn the_pdf_is_archival_and_carries_the_spec_and_plan_json() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", SPEC_95_90);
    let out = dir.path().join("out");
    plan_into(&spec, &out, &[]);
    let pdf = out.join("plan.pdf");
    let bytes = std::fs::read(&pdf).unwrap();
    // PDF/A-3b identification in the XMP metadata (ISO 19005-3: part 3, conformance B).
    let xmp = String::from_utf8_lossy(&bytes);
    assert!(xmp.contains("pdfaid:part>3<") && xmp.contains("pdfaid:conformance>B<"));
    let info = tool("pdfinfo", &[pdf.to_str().unwrap()]);
    assert!(info.contains("Creator:         surety "), "{info}");
    // The date is the study's (2026-06-15), at midnight UTC.
    assert!(info.contains("Jun 15 00:00:00 2026"), "{info}");

    let list = tool("pdfdetach", &["-list", pdf.to_str().unwrap()]);
    assert!(
        list.contains("hinge.yaml") && list.contains("plan.json"),
        "{list}"
    );
    let saved = dir.path().join("saved");
    std::fs::create_dir_all(&saved).unwrap();
    tool(
        "pdfdetach",
        &[
            "-saveall",
            "-o",
            saved.to_str().unwrap(),
            pdf.to_str().unwrap(),
        ],
    );
    assert_eq!(
        std::fs::read(saved.join("hinge.yaml")).unwrap(),
        SPEC_95_90.as_bytes()
    );
    assert_eq!(
        std::fs::read(saved.join("plan.json")).unwrap(),
        std::fs::read(out.join("plan.json")).unwrap()
    );
}

#[test]
fn two_runs_give_identical_bytes() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", SPEC_95_90);
    let (a, b) = (dir.path().join("a"), dir.path().join("b"));
    plan_into(&spec, &a, &[]);
    plan_into(&spec, &b, &[]);
    for name in ["plan.pdf", "plan.json"] {
        assert_eq!(
            std::fs::read(a.join(name)).unwrap(),
            std::fs::read(b.join(name)).unwrap(),
            "{name} differs between runs"
        );
    }

    // Without study.date the date comes from SOURCE_DATE_EPOCH: 1_700_000_000 s is
    // 2023-11-14 22:13:20 UTC (Unix time, common practice).
    let undated = SPEC_95_90.replace("  date: 2026-06-15\n", "");
    let spec = write_spec(dir.path(), "undated.yaml", &undated);
    let (c, d) = (dir.path().join("c"), dir.path().join("d"));
    plan_into(&spec, &c, &[("SOURCE_DATE_EPOCH", "1700000000")]);
    plan_into(&spec, &d, &[("SOURCE_DATE_EPOCH", "1700000000")]);
    let pdf = std::fs::read(c.join("plan.pdf")).unwrap();
    assert_eq!(pdf, std::fs::read(d.join("plan.pdf")).unwrap());
    let text = text_of(&c.join("plan.pdf"));
    assert!(text.contains("2023-11-14 (from SOURCE_DATE_EPOCH)"));
}

#[test]
fn a_registered_spec_is_recognised() {
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", SPEC_95_90);
    let o = plan_into(&spec, &dir.path().join("first"), &[]);
    let digest = printed_digest(&o);
    // The digest leaves out plan.registered itself, so keeping it does not change it.
    let registered = format!("{SPEC_95_90}  registered: {digest}\n");
    let spec = write_spec(dir.path(), "hinge.yaml", &registered);
    let out = dir.path().join("second");
    let o = plan_into(&spec, &out, &[]);
    assert_eq!(printed_digest(&o), digest);
    let text = text_of(&out.join("plan.pdf"));
    assert!(text.contains("The spec already carries this digest"));
    // A changed claim no longer matches the recorded value.
    let changed = registered.replace("confidence: 0.95", "confidence: 0.9");
    let spec = write_spec(dir.path(), "hinge.yaml", &changed);
    let out = dir.path().join("third");
    plan_into(&spec, &out, &[]);
    assert!(text_of(&out.join("plan.pdf")).contains("The spec carries a different value"));
}

#[test]
fn a_bounded_plan_renders_its_sizes_per_method() {
    // Fixture section "bounded", first case (mpmath): range [0, 2.5], mean 1.0, sd 0.4,
    // limit 1.2, δ = 0.05.
    let root = fixture();
    let case = &root["bounded"][0];
    assert_eq!(case["high"], 2.5);
    assert_eq!(case["limit"], 1.2);
    let spec = "\
surety: 1
study: {id: PLN-0043, title: Seal compression set, date: 2026-06-15}
claim: {quantity: mean compression set, side: upper, limit: 1.2, confidence: 0.95}
outcome: {type: bounded, range: [0, 2.5], unit: mm}
data: {trials: 10, events: 0}
plan: {assumed_rate: 1.0, assumed_sd: 0.4}
";
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "seal.yaml", spec);
    let out = dir.path().join("out");
    plan_into(&spec, &out, &[]);
    let text = text_of(&out.join("plan.pdf"));
    assert!(text.contains("Sample size per method"));
    assert!(text.contains(&format!(
        "Hoeffding {} ",
        case["hoeffding"].as_u64().unwrap()
    )));
    // Catalogue names may wrap in their cells; the names and their numbers still appear.
    for (name, key) in [
        ("Empirical Bernstein", "empirical_bernstein"),
        ("Bernstein with a known", "bernstein"),
    ] {
        let n = case[key].as_u64().unwrap();
        assert!(text.contains(name), "{name} missing");
        assert!(text.contains(&format!(" {n} ")), "{name}: {n} missing");
    }
    // The Chernoff-kl name may wrap in its cell; its number still appears in the table.
    assert!(text.contains(&format!(" {} ", case["chernoff_kl"].as_u64().unwrap())));
    // No binary-only parts.
    assert!(!text.contains("Demonstration plans"));
    assert!(!text.contains("Usual demonstration plans"));
}

#[test]
fn an_assumed_rate_at_the_limit_explains_why_no_size_reaches_the_target() {
    let at_limit = SPEC_95_90.replace("assumed_rate: 0.02", "assumed_rate: 0.1");
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", &at_limit);
    let out = dir.path().join("out");
    plan_into(&spec, &out, &[]);
    let text = text_of(&out.join("plan.pdf"));
    assert!(text.contains("No sample size reaches the wanted chance of passing."));
    assert!(text.contains("The assumed rate 10 % is not below the limit 10 %"));
    // The demonstration plans are still there (29 … 76: common practice, fixture "standard").
    assert!(text.contains("95 % 90 % 29 46 61 76"));
    assert!(!text.contains("Reached first at"));
}

#[test]
fn trials_still_needed_match_the_reference() {
    // Fixture section "still_needed", first case (mpmath): 3 events in 100 trials against
    // 5 % at δ = 0.05 need 53 more trials with no further event, or 261 more (11 events in
    // all) at the observed rate.
    let root = fixture();
    let case = &root["still_needed"][0];
    let (k, n) = (
        case["events"].as_u64().unwrap(),
        case["trials"].as_u64().unwrap(),
    );
    assert_eq!(
        (case["limit"].as_f64(), case["delta"].as_f64()),
        (Some(0.05), Some(0.05))
    );
    let spec = SPEC_95_90
        .replace("limit: 0.1", "limit: 0.05")
        .replace(
            "trials: 12\n  events: 0",
            &format!("trials: {n}\n  events: {k}"),
        )
        .replace("assumed_rate: 0.02", "assumed_rate: 0.01");
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", &spec);
    let out = dir.path().join("out");
    plan_into(&spec, &out, &[]);
    let text = text_of(&out.join("plan.pdf"));
    let zero = case["zero_further_events"].as_u64().unwrap();
    let more = case["at_observed_rate"].as_u64().unwrap();
    let events = case["at_observed_rate_events"].as_u64().unwrap();
    assert!(text.contains(&format!("{zero} more trials ({} in all)", n + zero)));
    assert!(text.contains(&format!(
        "{more} more trials ({} in all, with {events} events projected)",
        n + more
    )));
}

#[test]
fn a_lower_claim_is_planned_on_its_complement() {
    // At least 90 % reliability is at most 10 % failures: the 95/90 plans 29 … 76 (common
    // practice, fixture "standard").
    let lower = SPEC_95_90
        .replace(
            "quantity: hinge crack rate",
            "quantity: hinge survival rate",
        )
        .replace("event: crack", "event: survived")
        .replace("side: upper", "side: lower")
        .replace("limit: 0.1", "limit: 0.9")
        .replace("trials: 12\n  events: 0", "trials: 12\n  events: 12")
        .replace("assumed_rate: 0.02", "assumed_rate: 0.98");
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", &lower);
    let out = dir.path().join("out");
    plan_into(&spec, &out, &[]);
    let text = text_of(&out.join("plan.pdf"));
    assert!(text.contains("planned on its complement"));
    for (c, n) in [29, 46, 61, 76].iter().enumerate() {
        assert!(text.contains(&format!(" {c} {n} ")), "c = {c}");
    }
}

#[test]
fn a_failed_plan_leaves_no_files() {
    let bad = SPEC_95_90.replace("pass_probability: 0.9", "pass_probability: 1.5");
    let dir = tempfile::tempdir().unwrap();
    let spec = write_spec(dir.path(), "hinge.yaml", &bad);
    let out = dir.path().join("out");
    let o = surety()
        .args([
            "plan",
            spec.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "bad input exits 2 (DESIGN.md §4)");
    assert!(!out.join("plan.pdf").exists() && !out.join("plan.json").exists());
}
