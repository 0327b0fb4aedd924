//! End-to-end checks of the PDF report: the real typst pipeline on the sample results, read
//! back with poppler's command-line tools (pdftotext, pdfinfo, pdfdetach from poppler-utils),
//! which are independent of typst.
//!
//! Set SURETY_REPORT_OUT=<dir> to keep the rendered PDFs for inspection.

use std::path::{Path, PathBuf};
use std::process::Command;

use surety::analysis::model::Analysis;
use surety::report::{ReportError, ReportInputs, Stage, default_template, render_pdf};

const SAMPLE: &str = include_str!("data/sample-results.json");
/// A bounded outcome (values in [0, 2.5] m); hand-made, its numbers are placeholders.
const BOUNDED: &str = include_str!("data/bounded-sample-results.json");
const SPEC: &[u8] =
    b"surety: 1\nstudy:\n  id: VER-0117\n  title: Gripper drop rate, firmware 4.2\n";

fn sample() -> Analysis {
    serde_json::from_str(SAMPLE).expect("sample results deserialize into the model")
}

fn bounded() -> Analysis {
    serde_json::from_str(BOUNDED).expect("bounded sample deserializes into the model")
}

/// `s` with its whitespace collapsed the way [`text_of`] collapses the PDF's (display strings
/// join a number and its unit with a no-break space).
fn norm(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

fn render(a: &Analysis, template: Option<&str>) -> Result<Vec<u8>, ReportError> {
    let json = serde_json::to_vec_pretty(a).expect("model serializes");
    render_pdf(&ReportInputs {
        analysis: a,
        results_json: &json,
        spec_name: "study.yaml",
        spec_bytes: SPEC,
        template,
        data_files: &[],
    })
}

fn tmp_dir(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("surety-report-test-{}-{tag}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

fn keep(name: &str, pdf: &[u8]) {
    if let Ok(dir) = std::env::var("SURETY_REPORT_OUT") {
        std::fs::create_dir_all(&dir).expect("output dir");
        std::fs::write(Path::new(&dir).join(name), pdf).expect("write pdf");
    }
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

/// The PDF's text with all whitespace collapsed to single spaces.
fn text_of(pdf: &[u8], tag: &str) -> String {
    let path = tmp_dir(tag).join("r.pdf");
    std::fs::write(&path, pdf).expect("write pdf");
    let raw = tool("pdftotext", &[path.to_str().unwrap(), "-"]);
    let _ = std::fs::remove_dir_all(path.parent().unwrap());
    raw.split_whitespace().collect::<Vec<_>>().join(" ")
}

fn info_of(pdf: &[u8], tag: &str) -> String {
    let path = tmp_dir(tag).join("i.pdf");
    std::fs::write(&path, pdf).expect("write pdf");
    let info = tool("pdfinfo", &[path.to_str().unwrap()]);
    let _ = std::fs::remove_dir_all(path.parent().unwrap());
    info
}

fn pages(info: &str) -> usize {
    info.lines()
        .find_map(|l| l.strip_prefix("Pages:"))
        .and_then(|v| v.trim().parse().ok())
        .expect("pdfinfo prints Pages")
}

#[test]
fn sample_renders_to_a_plausible_report() {
    let a = sample();
    let pdf = render(&a, None).expect("sample renders");
    keep("report.pdf", &pdf);
    assert!(pdf.starts_with(b"%PDF-"), "PDF header");

    let info = info_of(&pdf, "sample");
    let n = pages(&info);
    assert!((3..=6).contains(&n), "expected 3 to 6 pages, got {n}");
    // A4 is 595.28 x 841.89 pt (ISO 216; common practice).
    assert!(info.contains("595.276 x 841.89"), "A4 pages: {info}");
    assert!(info.contains("Creator:         surety "), "creator: {info}");

    let text = text_of(&pdf, "sample");
    for needle in [
        a.statement.as_str(),
        "page 1 of",
        &format!("page {n} of {n}"),
        a.study.id.as_str(),
        "Exact binomial (Clopper–Pearson)",
        "PASS",
        "for information, not the guarantee",
        "fixed-sample-size",
        "OPEN",
        "Attention before sign-off",
        "sha256sum",
        "surety run",
        // The curve plot and, since the sample has compare methods, the method comparison.
        "Upper 95 % confidence bound against number of trials",
        "Upper bound by method (95 % confidence)",
        "Exact binomial (primary)",
    ] {
        assert!(text.contains(needle), "report text lacks {needle:?}");
    }
    // Every printed bound comes from the display strings.
    for arm in &a.arms {
        for b in std::iter::once(&arm.primary).chain(&arm.compare) {
            for s in [&b.display.upper, &b.display.lower].into_iter().flatten() {
                assert!(text.contains(s.as_str()), "bound {s} not printed");
            }
        }
    }
}

#[test]
fn pdf_is_pdfa3b_and_carries_spec_and_results() {
    let a = sample();
    let json = serde_json::to_vec_pretty(&a).unwrap();
    let pdf = render_pdf(&ReportInputs {
        analysis: &a,
        results_json: &json,
        spec_name: "specs/study.yaml",
        spec_bytes: SPEC,
        template: None,
        data_files: &[],
    })
    .expect("renders");
    let raw = String::from_utf8_lossy(&pdf);
    // XMP identification schema for PDF/A-3b (ISO 19005-3): part 3, conformance B.
    assert!(raw.contains("<pdfaid:part>3</pdfaid:part>"), "PDF/A part");
    assert!(
        raw.contains("<pdfaid:conformance>B</pdfaid:conformance>"),
        "PDF/A conformance"
    );
    assert!(raw.contains("/AFRelationship /Source") || raw.contains("/AFRelationship/Source"));

    let dir = tmp_dir("attach");
    let path = dir.join("a.pdf");
    std::fs::write(&path, &pdf).unwrap();
    let list = tool("pdfdetach", &["-list", path.to_str().unwrap()]);
    assert!(
        list.contains("study.yaml") && list.contains("results.json"),
        "{list}"
    );
    tool(
        "pdfdetach",
        &[
            "-saveall",
            "-o",
            dir.to_str().unwrap(),
            path.to_str().unwrap(),
        ],
    );
    assert_eq!(
        std::fs::read(dir.join("results.json")).unwrap(),
        json,
        "results attached as given"
    );
    assert_eq!(
        std::fs::read(dir.join("study.yaml")).unwrap(),
        SPEC,
        "spec attached as given"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn same_inputs_give_identical_bytes() {
    let a = sample();
    let first = render(&a, None).unwrap();
    let second = render(&a, None).unwrap();
    assert!(first == second, "two renders differ");
    // And the digest of the results changes the document identifier, so the bytes differ.
    let mut b = a.clone();
    b.provenance.results_sha256 = "4".repeat(64);
    assert!(render(&b, None).unwrap() != first);
}

/// Text full of typst and template syntax; `tag` keeps each field's copy distinct.
fn hostile(tag: &str) -> String {
    format!(
        "{tag} #set page(width: 1cm) #import \"@preview/x:1.0\" {{{{ 7*7 }}}} {{% if %}} $x^2$ *bold* <lbl> @ref \\ ] _u_ #{tag}"
    )
}

#[test]
fn user_text_is_shown_literally() {
    let mut a = sample();
    a.study.title = hostile("TTL");
    a.study.owner = Some(hostile("OWN"));
    a.study.requirement = Some(hostile("REQ"));
    a.study.description = Some(hostile("DSC"));
    a.checklist[0].evidence = Some(hostile("NOTE"));
    a.arms[0].name = hostile("ARM");
    a.signatures[0].name = Some(hostile("SIG"));
    let pdf = render(&a, None).expect("hostile text renders");
    keep("escaping.pdf", &pdf);
    let text = text_of(&pdf, "hostile");
    for tag in ["TTL", "OWN", "REQ", "DSC", "NOTE", "ARM", "SIG"] {
        let expected = hostile(tag);
        assert!(
            text.contains(&expected),
            "{tag}: {expected:?} not printed literally"
        );
    }
    assert!(!text.contains(" 49 "), "template expression was evaluated");
    // `#set page(width: 1cm)` did not run: pages are still A4.
    assert!(info_of(&pdf, "hostile").contains("595.276 x 841.89"));
}

#[test]
fn several_arms_render() {
    let mut a = sample();
    let base = a.arms[0].clone();
    a.arms = (0..6)
        .map(|i| {
            let mut arm = base.clone();
            arm.name = format!("fw-4.2.{i} station {}", i % 3);
            arm.n = 4600 + 400 * i as u64;
            arm.display.n = format!("{},{:03}", arm.n / 1000, arm.n % 1000);
            arm
        })
        .collect();
    a.arms[5].name = "a rather long arm name that must not break the layout".into();
    a.adjustments.arms = 6;
    let pdf = render(&a, None).expect("six arms render");
    keep("arms.pdf", &pdf);
    let text = text_of(&pdf, "arms");
    assert!(
        text.contains("Deciding upper bound by arm"),
        "per-arm chart present"
    );
    for i in 0..5 {
        assert!(
            text.contains(&format!("fw-4.2.{i} station")),
            "arm {i} listed"
        );
    }
    let n = pages(&info_of(&pdf, "arms"));
    assert!((4..=9).contains(&n), "six arms on {n} pages");
}

#[test]
fn broken_user_template_gives_a_located_error() {
    let a = sample();
    let err = render(&a, Some("line one\n{% if %}\n")).expect_err("jinja syntax error");
    match &err {
        ReportError::Template {
            user: true,
            line: Some(2),
            ..
        } => {}
        other => panic!("unexpected error {other:?}"),
    }
    assert!(err.to_string().contains("template line 2"), "{err}");

    // Valid template, broken typst: located in the generated main.typ, blamed on the template.
    let err = render(&a, Some("= Report\n\n#let x = (1, 2\n")).expect_err("typst syntax error");
    match &err {
        ReportError::Typst {
            stage: Stage::Layout,
            internal: false,
            user_template: true,
            diagnostics,
        } => {
            let loc = diagnostics[0].location.as_ref().expect("located");
            assert_eq!((loc.path.as_str(), loc.line), ("main.typ", 3), "{err}");
        }
        other => panic!("unexpected error {other:?}"),
    }
    assert!(err.to_string().contains("@ main.typ:3:"), "{err}");

    // Strict undefined: a misspelt context variable is an error, not an empty string.
    let err = render(&a, Some("{{ arm_cuont }}")).expect_err("undefined variable");
    assert!(
        matches!(
            err,
            ReportError::Template {
                user: true,
                line: Some(1),
                ..
            }
        ),
        "{err:?}"
    );
}

#[test]
fn packages_and_host_files_are_unreachable() {
    let a = sample();
    let err = render(&a, Some("#import \"@preview/example:1.0.0\": *\n")).expect_err("no packages");
    assert!(err.to_string().contains("packages are disabled"), "{err}");
    let err = render(&a, Some("#read(\"/etc/hostname\")\n")).expect_err("no host files");
    assert!(err.to_string().contains("not found"), "{err}");
}

#[test]
fn a_minimal_user_template_works_and_reads_data() {
    let a = sample();
    let t = "#set text(font: \"Noto Sans\")\n#let R = json(\"data/results.json\")\n= #R.study.id\n{% for arm in arms %}#R.arms.at({{ arm.index }}).name\n{% endfor %}";
    let pdf = render(&a, Some(t)).expect("user template renders");
    let text = text_of(&pdf, "user");
    assert!(text.contains("VER-0117") && text.contains("all"), "{text}");
    // An unknown font family would silently change the look: it is refused.
    let err = render(&a, Some("#set text(font: \"Nonexistent Sans\")\nx\n")).expect_err("font");
    assert!(err.to_string().contains("unknown font family"), "{err}");
    assert!(!default_template().is_empty());
}

#[test]
fn mismatched_results_are_refused() {
    let a = sample();
    let mut other = a.clone();
    other.arms.push(other.arms[0].clone());
    let json = serde_json::to_vec(&other).unwrap();
    let err = render_pdf(&ReportInputs {
        analysis: &a,
        results_json: &json,
        spec_name: "study.yaml",
        spec_bytes: SPEC,
        template: None,
        data_files: &[],
    })
    .expect_err("arm counts differ");
    assert!(matches!(err, ReportError::Results(_)), "{err:?}");
}

#[test]
fn a_fault_in_generated_files_is_reported_as_ours() {
    // The method formula is our own constant typst math; a broken one is a surety defect and
    // must be reported as such, located in the generated main.typ.
    let mut a = sample();
    a.methods[0].formula_typst = "U = #no-such-function(1)".into();
    let err = render(&a, None).expect_err("broken formula");
    assert!(
        matches!(
            err,
            ReportError::Typst {
                internal: true,
                user_template: false,
                ..
            }
        ),
        "{err:?}"
    );
    let text = err.to_string();
    assert!(
        text.starts_with("internal error in the report template: "),
        "{text}"
    );
    assert!(text.contains("@ main.typ:"), "{text}");
}

#[test]
fn optional_parts_render() {
    let mut a = sample();
    a.study.owner = None;
    a.study.requirement = None;
    a.study.description = None;
    a.outcome.kind = "bounded".into();
    a.outcome.event = None;
    a.outcome.unit = Some("m".into());
    a.arms[0].events = None;
    a.arms[0].display.events = None;
    a.arms[0].compare.clear();
    a.warnings = vec!["The Hoeffding bound is vacuous at this sample size.".into()];
    a.adjustments.steps = vec![surety::analysis::model::AdjustmentStep {
        reason: "two planned looks, equal spending".into(),
        divisor: 2.0,
        delta_after: 0.025,
        display_delta_after: "0.025".into(),
    }];
    a.provenance.inputs = vec![surety::analysis::model::FileDigest {
        path: "data/picks-2026-11.csv".into(),
        sha256: "5".repeat(64),
        bytes: Some(123_456),
        rows: Some(4_600),
    }];
    a.signatures.clear();
    a.checklist
        .iter_mut()
        .for_each(|c| c.status = "checked".into());
    let pdf = render(&a, None).expect("optional parts render");
    keep("optional.pdf", &pdf);
    let text = text_of(&pdf, "optional");
    for needle in [
        "The Hoeffding bound is vacuous at this sample size.",
        "two planned looks, equal spending",
        "data/picks-2026-11.csv",
        "No signature blocks were requested",
        "Observed mean",
    ] {
        assert!(text.contains(needle), "report text lacks {needle:?}");
    }
    // Nothing open: no open-assumption notice, but the warning is flagged on page one.
    assert!(!text.contains("assumption is open"));
    assert!(text.contains("Attention before sign-off"));
}

#[test]
fn bounded_sample_renders_in_data_units() {
    let a = bounded();
    let pdf = render(&a, None).expect("bounded sample renders");
    keep("bounded.pdf", &pdf);
    let n = pages(&info_of(&pdf, "bounded"));
    // Six methods in the appendix and three signature blocks: more pages than the binary sample.
    assert!((4..=9).contains(&n), "expected 4 to 9 pages, got {n}");
    let text = text_of(&pdf, "bounded");
    let arm = &a.arms[0];
    let values = arm.values.as_ref().expect("sample has a value summary");
    // Expected values: the display strings of tests/data/bounded-sample-results.json.
    for needle in [
        arm.display.n.as_str(),                    // 198,164 trials
        arm.display.mean.as_str(),                 // 0.2812 m
        values.display.sd.as_str(),                // 0.1203 m
        values.display.min.as_deref().unwrap(),    // 0.001200 m
        values.display.max.as_deref().unwrap(),    // 1.402 m
        a.claim.display.limit.as_str(),            // 0.35 m
        "[0, 2.5] m",                              // outcome.range and outcome.unit
        "approach-errors.csv (198,164 data rows)", // provenance.inputs[0]
        "Betting (Waudby-Smith–Ramdas)",           // methods[0].name
        "Observed mean",
        "SD",
        "Upper bound by method (95 % confidence)", // comparison chart title
        "Betting (primary)",
        "axis does not start at 0",
        "Observed values across the declared range", // histogram title
        "values in 40 bins",
    ] {
        assert!(text.contains(&norm(needle)), "report text lacks {needle:?}");
    }
    assert!(
        text.contains(&norm(&format!("observed mean {}", arm.display.mean))),
        "histogram legend names the mean"
    );
    // Every bound is printed in the table; each deciding (upper) bound also beside its bar in
    // the comparison chart, so at least twice.
    for b in std::iter::once(&arm.primary).chain(&arm.compare) {
        for s in [&b.display.upper, &b.display.lower].into_iter().flatten() {
            assert!(text.contains(&norm(s)), "bound {s} not printed");
        }
        let upper = norm(b.display.upper.as_deref().unwrap());
        let times = text.matches(&format!("{upper} ")).count();
        assert!(times >= 2, "{upper} printed {times} times");
    }
    // Nothing of the binary layout leaks in: no events, no curve.
    for absent in ["Events (", "no further events", "against number of trials"] {
        assert!(!text.contains(absent), "bounded report shows {absent:?}");
    }
}

#[test]
fn several_bounded_arms_and_omitted_methods_render() {
    let mut a = bounded();
    let base = a.arms[0].clone();
    a.arms = ["dock-a", "dock-b", "dock-c"]
        .iter()
        .map(|name| {
            let mut arm = base.clone();
            arm.name = (*name).into();
            arm
        })
        .collect();
    // The third arm was read as summary statistics only: no minimum, maximum or histogram.
    if let Some(v) = a.arms[2].values.as_mut() {
        v.min = None;
        v.max = None;
        v.histogram = None;
        v.display.min = None;
        v.display.max = None;
    }
    a.adjustments.arms = 3;
    a.omitted_methods = vec![surety::analysis::model::OmittedMethod {
        method: "split-kl".into(),
        reason: "needs raw data: the values one by one, not their summary".into(),
    }];
    let pdf = render(&a, None).expect("three bounded arms render");
    keep("bounded-arms.pdf", &pdf);
    let text = text_of(&pdf, "bounded-arms");
    for needle in [
        "Deciding upper bound by arm",
        "observed mean",
        "mean (m)",
        "Upper bound by method (95 % confidence)",
        "Arm dock-a",
        "Arm dock-c",
        "Compare methods not computed.",
        "Split-kl split-kl — needs raw data: the values one by one, not their summary",
        "Vertical scales differ between arms",
    ] {
        assert!(text.contains(needle), "report text lacks {needle:?}");
    }
    // Two histograms (dock-a, dock-b); dock-c has none.
    assert_eq!(
        text.matches("observed values across the declared range.")
            .count(),
        2
    );
    let n = pages(&info_of(&pdf, "bounded-arms"));
    assert!((4..=9).contains(&n), "three arms on {n} pages");
}

#[test]
fn terminal_summary_shows_bounded_arms_in_units() {
    let a = bounded();
    let text = surety::report::summary::summary(&a);
    // Display strings of tests/data/bounded-sample-results.json: mean 0.2812 m, sd 0.1203 m.
    assert!(norm(&text).contains("0.2812 ± 0.1203 m"), "{text}");
    assert!(text.contains("mean ± sd"), "{text}");
    assert!(
        text.contains("values in the declared range [0, 2.5] m"),
        "{text}"
    );
    assert!(!text.contains("events"), "no event column: {text}");
    // Five compare methods would make one very wide table: they get a table of their own,
    // and no line but the statement is wider than 110 characters (our layout rule).
    assert!(
        text.contains("upper bounds of the compare methods"),
        "{text}"
    );
    assert!(
        text.lines()
            .filter(|l| !l.contains(&a.statement))
            .all(|l| l.chars().count() <= 110),
        "{text}"
    );
    for b in std::iter::once(&a.arms[0].primary).chain(&a.arms[0].compare) {
        assert!(text.contains(b.display.upper.as_deref().unwrap()), "{text}");
    }
    // Binary summaries keep their event counts (sample-results.json: 12 events).
    let binary = surety::report::summary::summary(&sample());
    assert!(
        binary.contains("events") && binary.contains(" 12 "),
        "{binary}"
    );
}

#[test]
fn lower_and_two_sided_bounded_claims_render() {
    // Layout check only: the compare methods' lower bounds are placeholders mirrored from
    // their upper bounds about the mean (the sample carries none), with matching display text.
    let mut a = bounded();
    let mean = a.arms[0].mean;
    for b in a.arms[0].compare.iter_mut() {
        let up = b.upper.expect("sample has upper bounds");
        b.lower = Some(2.0 * mean - up);
        b.display.lower = Some(format!("{:.4} m", 2.0 * mean - up));
    }
    let expected: Vec<String> = std::iter::once(&a.arms[0].primary)
        .chain(&a.arms[0].compare)
        .map(|b| norm(b.display.lower.as_deref().unwrap()))
        .collect();

    let mut lower = a.clone();
    lower.claim.side = "lower".into();
    lower.claim.limit = 0.2;
    let pdf = render(&lower, None).expect("lower-side claim renders");
    keep("bounded-lower.pdf", &pdf);
    let text = text_of(&pdf, "bounded-lower");
    assert!(
        text.contains("Lower bound by method (95 % confidence)"),
        "chart title"
    );
    for s in &expected {
        assert!(
            text.matches(&format!("{s} ")).count() >= 2,
            "{s} in table and chart"
        );
    }

    let mut both = a;
    both.claim.side = "two-sided".into();
    let pdf = render(&both, None).expect("two-sided claim renders");
    keep("bounded-two-sided.pdf", &pdf);
    let text = text_of(&pdf, "bounded-two-sided");
    assert!(
        text.contains("Bounds by method (95 % confidence)"),
        "chart title"
    );
    assert!(
        text.contains("Each segment spans the two bounds"),
        "caption"
    );
}

// Fixtures written by `surety run` (this build) in a scratch folder, then trimmed as noted.
// Each run used a copy of an example under examples/ with the changes named here.
//
// looks-planned-results.json: examples/release-signoff with `looks: {mode: planned, planned: 3}`,
//   run three times with data 800 trials / 0 events, 1,600 / 1, 2,300 / 1; the third look.
// looks-anytime-results.json: examples/dock-approach with `looks: {mode: anytime}`, run on the
//   first 60,000, 150,000 and then all 240,000 rows of approach-errors.csv; the third look,
//   with `plan` set to null (the sample-size rationale is tested elsewhere).
// clustered-looks-results.json: an invented two-arm leak test (leak rate per seal ≤ 4 %, scope
//   all, `dependence: {model: clustered}` on a fixture column, `looks: {planned: 2}`), 40
//   fixtures of 20 to 90 seals per line; looks on the first 20 fixtures, then all 40.
// not-registered-results.json: examples/dock-approach with `dependence: {model: m-dependent,
//   m: 3}`, run with `--no-ledger`; `plan` set to null.
const LOOKS_PLANNED: &str = include_str!("data/looks-planned-results.json");
const LOOKS_ANYTIME: &str = include_str!("data/looks-anytime-results.json");
const CLUSTERED: &str = include_str!("data/clustered-looks-results.json");
const NOT_REGISTERED: &str = include_str!("data/not-registered-results.json");

fn load(text: &str) -> Analysis {
    serde_json::from_str(text).expect("fixture deserializes into the model")
}

/// The text of one page (1-based), whitespace collapsed like [`text_of`].
fn page_text(pdf: &[u8], page: usize, tag: &str) -> String {
    let path = tmp_dir(tag).join("p.pdf");
    std::fs::write(&path, pdf).expect("write pdf");
    let p = page.to_string();
    let raw = tool(
        "pdftotext",
        &["-f", &p, "-l", &p, path.to_str().unwrap(), "-"],
    );
    let _ = std::fs::remove_dir_all(path.parent().unwrap());
    raw.split_whitespace().collect::<Vec<_>>().join(" ")
}

#[test]
fn three_planned_looks_are_tabled_and_drawn() {
    let a = load(LOOKS_PLANNED);
    let pdf = render(&a, None).expect("three looks render");
    keep("looks-planned.pdf", &pdf);
    let text = text_of(&pdf, "looks-planned");
    for needle in [
        "Looks and the ledger",
        "look 3 of 3 planned, registered in study.ledger.jsonl",
        "This report is look 3 of the 3 looks planned",
        "Upper bound over looks",
        "trials at each look",
        // The ledger's times of looks 1 and 2 (history[0..2].time), shortened; look 3 is this one.
        "2026-12-02 04:26:06 UTC",
        "2026-12-02 04:26:07 UTC",
        "this report",
        // Own upper bounds of looks 1 to 3 (history[].arms[0].upper: 0.0051049, 0.0037734,
        // 0.0026262) in percent, rounded up to three significant digits by hand.
        "0.511 %",
        "0.378 %",
        "0.263 %",
        // δ/3 per look, rounded up (0.05 / 3 = 0.016667).
        "0.01667",
        a.looks.rule.as_str(),
    ] {
        assert!(text.contains(&norm(needle)), "report text lacks {needle:?}");
    }
    // One table row per earlier look, read left to right: number, time, trials, own and
    // running bound, δ of the look and δ spent, verdict (history[0] and history[1]).
    for row in [
        "1 2026-12-02 04:26:06 UTC 800 0.511 % 0.511 % 0.01667 0.01667 INCONCLUSIVE",
        "2 2026-12-02 04:26:07 UTC 1,600 0.378 % 0.378 % 0.01667 0.01667 PASS",
        "3 this report",
    ] {
        assert!(
            text.contains(&norm(row)),
            "look table lacks the row {row:?}"
        );
    }
    // A registered look carries no exploration warning; page one names the look.
    assert!(!text.contains("Not a registered look"));
    assert!(page_text(&pdf, 1, "looks-planned-p1").contains("look 3 of 3 planned"));
}

#[test]
fn a_look_that_is_not_registered_is_flagged_on_the_first_page() {
    let a = load(NOT_REGISTERED);
    assert_eq!(a.looks.ledger.status, "not-registered");
    let pdf = render(&a, None).expect("renders");
    keep("not-registered.pdf", &pdf);
    let first = page_text(&pdf, 1, "not-registered-p1");
    // The warning block and the Look line of the first page.
    assert!(
        first
            .matches("Not a registered look — exploration only")
            .count()
            >= 2,
        "{first}"
    );
    assert!(first.contains("--no-ledger"), "{first}");
    let text = text_of(&pdf, "not-registered");
    for needle in [
        "Not a registered look — exploration only. This analysis was run with --no-ledger",
        // dependence.model and m of the fixture, and its treatment sentence.
        "m-dependent — a trial may depend on its nearest neighbours in run order; m = 3",
        a.dependence.treatment.as_str(),
        a.dependence.estimand.as_str(),
    ] {
        assert!(text.contains(&norm(needle)), "report text lacks {needle:?}");
    }
    let summary = surety::report::summary::summary(&a);
    assert!(
        summary.contains("look     not registered (--no-ledger): exploration only"),
        "{summary}"
    );
    assert!(
        summary.contains("dependence m-dependent with m = 3"),
        "{summary}"
    );
}

#[test]
fn an_anytime_path_is_drawn_with_its_looks() {
    let a = load(LOOKS_ANYTIME);
    let pdf = render(&a, None).expect("renders");
    keep("looks-anytime.pdf", &pdf);
    let text = text_of(&pdf, "looks-anytime");
    for needle in [
        "look 3, anytime-valid, registered in study.ledger.jsonl",
        "bound along the trials",
        "number of trials (log scale)",
        "recorded looks, this one last",
        "look 3",
        "The bound is anytime-valid",
        // Own upper bounds of looks 1 to 3 (0.297847, 0.297383, 0.297097 m), rounded up to four
        // significant digits by hand.
        "0.2979 m",
        "0.2974 m",
        "0.2971 m",
    ] {
        assert!(text.contains(&norm(needle)), "report text lacks {needle:?}");
    }
    assert!(
        render(&a, None).expect("renders again") == pdf,
        "reproducible bytes"
    );
    let summary = surety::report::summary::summary(&a);
    assert!(
        summary.contains(
            "look     3, anytime-valid (registered in study.ledger.jsonl; looking again spends nothing)"
        ),
        "{summary}"
    );
}

#[test]
fn clustered_arms_show_nominal_and_effective_sizes() {
    let a = load(CLUSTERED);
    let pdf = render(&a, None).expect("renders");
    keep("clustered.pdf", &pdf);
    let text = text_of(&pdf, "clustered");
    // The fixture's nominal block: line-1 2,134 trials, 33 events, 40 clusters of 21 to 88
    // (53.4 on average); line-2 2,225 trials, 43 events, 40 clusters of 24 to 88.
    for needle in [
        "Clusters (effective n)",
        "line-1 2,134 33 40 53.4 21 88",
        "line-2 2,225 43 40 55.6 24 88",
        "clustered — trials fall into clusters",
        a.dependence.estimand.as_str(),
        "clusters at each look",
        // Two looks of two arms; own bounds of look 1 (0.33987, 0.34629) rounded up by hand.
        "34.0 %",
        "34.7 %",
        "Arm line-1",
        "Arm line-2",
        "scope all: 2 arms certified simultaneously",
    ] {
        assert!(text.contains(&norm(needle)), "report text lacks {needle:?}");
    }
    let summary = surety::report::summary::summary(&a);
    assert!(
        summary.contains(
            "line-1: 2,134 trials (33 events) in 40 clusters, 53.4 per cluster (21 to 88); effective n = 40"
        ),
        "{summary}"
    );
    assert!(summary.contains("arm     clusters"), "{summary}");
    assert!(summary.contains("look     2 of 2 planned (registered in study.ledger.jsonl)"));

    // Scope best: the per-arm chart's caption names the arm the analysis selected.
    let mut best = a.clone();
    best.claim.scope = "best".into();
    best.selected_arm = Some(0);
    let text = text_of(&render(&best, None).expect("renders"), "clustered-best");
    assert!(
        text.contains("The shaded row is arm line-1, selected as the best"),
        "{text}"
    );
}

#[test]
fn a_reissued_look_says_so() {
    let mut a = load(LOOKS_PLANNED);
    a.looks.ledger.status = "re-issue".into();
    let summary = surety::report::summary::summary(&a);
    assert!(
        summary.contains("look     3 of 3 planned, re-issued (already in study.ledger.jsonl; nothing further spent)"),
        "{summary}"
    );
    let text = text_of(&render(&a, None).expect("renders"), "reissue");
    assert!(text.contains("This report re-issues look 3"), "{text}");
    assert!(text.contains("re-issue of look 3 of 3 planned"));
}
