//! Loading study specs: every refusal names file:line:column, the dotted key, and what was
//! expected; every expected location below is computed from the test's own YAML text.

use surety::spec::{
    ArmSummary, DataSource, Date, DependenceModel, EmbedData, LookMode, OutcomeKind, Scope, Side,
    Spec, SpecError, Spending, SummaryStats, load, parse, parse_bytes,
};

// Source of the rules and expected values: DESIGN.md §5 (spec format 1 and its example), and the
// YAML traps listed in notes/USERS.md §3 items 5 and 26 (level vs alpha; YAML 1.1 booleans, octal
// numbers, duplicate keys). YAML 1.1 vs 1.2 readings are from the YAML 1.2.2 specification,
// §10.3 core schema (common practice).

/// The DESIGN.md §5 example, restricted to the keys of a binary outcome (no `range`, `unit`,
/// `assumed_sd`; no `m` under an independent model), comments kept.
pub(crate) const BASE: &str = r#"surety: 1
study:
  id: VER-0117                  # document id, printed on every page
  title: Gripper drop rate, firmware 4.2
  owner: Reliability engineering
  requirement: "SYS-31: fewer than 1 dropped load per 100 picks"
  date: 2026-11-30              # optional; else SOURCE_DATE_EPOCH; else today
  description: free text
claim:
  quantity: dropped-load rate per pick
  side: upper                   # upper | lower | two-sided
  limit: 0.01
  confidence: 0.95
  scope: each
outcome:
  type: binary                  # binary | bounded
  event: dropped load           # binary: what a 1 means
data:                           # exactly one of: trials/events, arms, file
  trials: 4600
  events: 12
dependence:
  model: independent            # independent | clustered | martingale | m-dependent
  rationale: free text          # printed in the checklist
looks:
  mode: planned
  planned: 1
  spending: equal
  ledger: study.ledger.jsonl
method:
  primary: auto                 # or a method id from `surety methods`
  compare: [chernoff-kl, hoeffding]
plan:
  assumed_rate: 0.003
  pass_probability: 0.9
  allowed_events: [0, 1, 2, 3]
attestations:
  identical-conditions: {by: Test lead, date: 2026-11-28, note: free text}
signatures:
  - {role: Author, name: free text, meaning: authored}
report:
  template: default
  embed_data: auto
"#;

/// `text` with `old` replaced by `new`; `old` must occur exactly once, so a test cannot pass
/// because its edit silently did nothing.
pub(crate) fn edit(text: &str, old: &str, new: &str) -> String {
    assert_eq!(
        text.matches(old).count(),
        1,
        "`{old}` must occur exactly once"
    );
    text.replacen(old, new, 1)
}

fn ok(text: &str) -> Spec {
    match parse("study.yaml", text) {
        Ok(spec) => spec,
        Err(e) => panic!("expected the spec to load, got:\n{e}"),
    }
}

fn err(text: &str) -> SpecError {
    match parse("study.yaml", text) {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => e,
    }
}

/// (line, column), 1-based, of `token` on the first line containing `line_marker`.
fn pos(text: &str, line_marker: &str, token: &str) -> (usize, usize) {
    let (i, line) = text
        .lines()
        .enumerate()
        .find(|(_, l)| l.contains(line_marker))
        .unwrap_or_else(|| panic!("no line contains `{line_marker}`"));
    let byte = line
        .find(token)
        .unwrap_or_else(|| panic!("`{token}` not on line `{line}`"));
    (i + 1, line[..byte].chars().count() + 1)
}

/// Checks place, key and that the message or the hint contains `fragment`.
#[track_caller]
fn check(e: &SpecError, at: (usize, usize), key: Option<&str>, fragment: &str) {
    let loc = e
        .location
        .as_ref()
        .unwrap_or_else(|| panic!("no location in: {e}"));
    assert_eq!(loc.file, "study.yaml", "{e}");
    assert_eq!((loc.line, loc.column), at, "wrong place in: {e}");
    assert_eq!(e.key.as_deref(), key, "wrong key in: {e}");
    let all = format!("{} {}", e.message, e.hint.as_deref().unwrap_or(""));
    assert!(all.contains(fragment), "`{fragment}` not in: {e}");
}

// ---------------------------------------------------------------- positive

#[test]
fn design_example_loads_with_its_values() {
    let spec = ok(BASE);
    assert_eq!(spec.format, 1);
    assert_eq!(spec.study.id, "VER-0117");
    assert_eq!(spec.study.title, "Gripper drop rate, firmware 4.2");
    assert_eq!(spec.study.owner.as_deref(), Some("Reliability engineering"));
    assert_eq!(
        spec.study.requirement.as_deref(),
        Some("SYS-31: fewer than 1 dropped load per 100 picks")
    );
    assert_eq!(
        spec.study.date,
        Some(Date {
            year: 2026,
            month: 11,
            day: 30
        })
    );
    assert_eq!(
        spec.study.date.map(|d| d.to_string()).as_deref(),
        Some("2026-11-30")
    );
    assert_eq!(spec.claim.quantity, "dropped-load rate per pick");
    assert_eq!(spec.claim.side, Side::Upper);
    assert_eq!(spec.claim.limit, 0.01);
    assert_eq!(spec.claim.confidence, 0.95);
    assert_eq!(spec.claim.confidence_text, "0.95");
    assert_eq!(spec.claim.scope, Scope::Each);
    assert_eq!(spec.outcome.kind, OutcomeKind::Binary);
    assert_eq!(spec.outcome.event.as_deref(), Some("dropped load"));
    assert_eq!(spec.outcome.range, None);
    assert_eq!(
        spec.data.source,
        DataSource::Counts {
            trials: 4600,
            events: 12
        }
    );
    assert_eq!(spec.dependence.model, DependenceModel::Independent);
    assert_eq!(spec.dependence.rationale.as_deref(), Some("free text"));
    assert_eq!(spec.looks.mode, LookMode::Planned);
    assert_eq!(spec.looks.planned, 1);
    assert_eq!(spec.looks.spending, Spending::Equal);
    assert_eq!(
        spec.looks.ledger.as_deref(),
        Some(std::path::Path::new("study.ledger.jsonl"))
    );
    assert_eq!(spec.method.primary, "auto");
    assert_eq!(spec.method.compare, ["chernoff-kl", "hoeffding"]);
    let plan = spec.plan.as_ref().expect("plan");
    assert_eq!(plan.assumed_rate, Some(0.003));
    assert_eq!(plan.pass_probability, Some(0.9));
    assert_eq!(plan.allowed_events, [0, 1, 2, 3]);
    let att = &spec.attestations["identical-conditions"];
    assert_eq!(att.by, "Test lead");
    assert_eq!(
        att.date,
        Some(Date {
            year: 2026,
            month: 11,
            day: 28
        })
    );
    assert_eq!(att.note.as_deref(), Some("free text"));
    assert_eq!(spec.signatures.len(), 1);
    assert_eq!(spec.signatures[0].role, "Author");
    assert_eq!(spec.signatures[0].name.as_deref(), Some("free text"));
    assert_eq!(spec.signatures[0].meaning, "authored");
    assert_eq!(spec.report.template, None);
    assert_eq!(spec.report.embed_data, EmbedData::Auto);
}

#[test]
fn defaults_when_sections_are_left_out() {
    let text = "surety: 1\nstudy: {id: A-1, title: T}\nclaim: {quantity: q, side: lower, limit: 0.9, confidence: 0.99}\n\
                outcome: {type: binary}\ndata: {trials: 10, events: 10}\n";
    let spec = ok(text);
    assert_eq!(spec.dependence.model, DependenceModel::Independent);
    assert_eq!(
        (
            spec.looks.mode,
            spec.looks.planned,
            &spec.looks.spending,
            &spec.looks.ledger
        ),
        (LookMode::Planned, 1, &Spending::Equal, &None)
    );
    assert_eq!(
        (spec.method.primary.as_str(), spec.method.compare.len()),
        ("auto", 0)
    );
    assert_eq!(spec.plan, None);
    assert!(spec.attestations.is_empty() && spec.signatures.is_empty());
    assert_eq!(spec.report.embed_data, EmbedData::Auto);
    assert_eq!(spec.claim.scope, Scope::Each);
}

#[test]
fn arms_form() {
    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: fw-4.2.0, trials: 1500, events: 4}\n    - name: fw-4.2.1\n      trials: 3100\n      events: 8\n",
    );
    let spec = ok(&text);
    let DataSource::Arms(arms) = &spec.data.source else {
        panic!("arms expected")
    };
    assert_eq!(arms.len(), 2);
    assert_eq!(
        (arms[0].name.as_str(), arms[0].trials, arms[0].events),
        ("fw-4.2.0", 1500, 4)
    );
    assert_eq!(
        (arms[1].name.as_str(), arms[1].trials, arms[1].events),
        ("fw-4.2.1", 3100, 8)
    );
    // Later stages place their own errors through the recorded locations.
    let loc = spec.locate("data.arms[1].events").expect("recorded");
    assert_eq!((loc.line, loc.column), pos(&text, "      events: 8", "8"));
}

#[test]
fn file_form_with_columns_and_clustered_model() {
    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  file: picks.csv\n  column: dropped\n  arm_column: build\n  cluster_column: tote\n  order_column: cycle\n",
    );
    let text = edit(&text, "  model: independent ", "  model: clustered ");
    let spec = ok(&text);
    assert_eq!(spec.data.source, DataSource::File("picks.csv".into()));
    assert_eq!(spec.data.column.as_deref(), Some("dropped"));
    assert_eq!(spec.data.arm_column.as_deref(), Some("build"));
    assert_eq!(spec.data.cluster_column.as_deref(), Some("tote"));
    assert_eq!(spec.data.order_column.as_deref(), Some("cycle"));
    assert_eq!(spec.dependence.model, DependenceModel::Clustered);
}

#[test]
fn bounded_outcome_loads() {
    let text = edit(
        BASE,
        "  type: binary                  # binary | bounded\n  event: dropped load           # binary: what a 1 means\n",
        "  type: bounded\n  range: [0, 2.5]\n  unit: m\n",
    );
    let text = edit(&text, "  limit: 0.01", "  limit: 1.2");
    let text = edit(
        &text,
        "  allowed_events: [0, 1, 2, 3]\n",
        "  assumed_sd: 0.4\n",
    );
    let text = edit(&text, "  assumed_rate: 0.003", "  assumed_rate: 0.8");
    let spec = ok(&text);
    assert_eq!(spec.outcome.kind, OutcomeKind::Bounded);
    assert_eq!(spec.outcome.range, Some((0.0, 2.5)));
    assert_eq!(spec.outcome.unit.as_deref(), Some("m"));
    assert_eq!(spec.claim.limit, 1.2);
    assert_eq!(spec.plan.as_ref().and_then(|p| p.assumed_sd), Some(0.4));
}

#[test]
fn confidence_as_percentage() {
    let spec = ok(&edit(BASE, "confidence: 0.95", "confidence: \"95%\""));
    assert_eq!(spec.claim.confidence_text, "95%");
    // δ = 1 − 0.95 (definition, DESIGN.md §2); the f64 nearest 0.05.
    assert_eq!(spec.claim.delta, 0.05_f64);
    assert_eq!(spec.claim.confidence, 0.95);
    let spec = ok(&edit(BASE, "confidence: 0.95", "confidence: \"99.9%\""));
    assert_eq!(spec.claim.delta, 0.001_f64);
    assert_eq!(spec.claim.confidence_text, "99.9%");
    // An unquoted percentage is a YAML string too.
    assert_eq!(
        ok(&edit(BASE, "confidence: 0.95", "confidence: 90%"))
            .claim
            .delta,
        0.1_f64
    );
}

#[test]
fn delta_is_exact_from_the_decimal_text() {
    // 1 − 0.999999999999 = 1e-12 exactly in decimal (arithmetic). Subtracting in f64 gives
    // 9.999778782798785e-13 instead, 2e-5 relative off (Python 3.11 float: 1.0-0.999999999999),
    // so this test fails for an f64 subtraction.
    let spec = ok(&edit(
        BASE,
        "confidence: 0.95",
        "confidence: 0.999999999999",
    ));
    assert_eq!(spec.claim.delta, 1e-12_f64);
    assert_ne!(1.0 - 0.999999999999_f64, 1e-12_f64);
    let spec = ok(&edit(BASE, "confidence: 0.95", "confidence: 0.95"));
    assert_eq!(spec.claim.delta, 0.05_f64);
    assert_ne!(1.0 - 0.95_f64, 0.05_f64);
    // Trailing zeros change nothing; the text is kept as written.
    let spec = ok(&edit(BASE, "confidence: 0.95", "confidence: 0.9500"));
    assert_eq!(
        (spec.claim.delta, spec.claim.confidence_text.as_str()),
        (0.05_f64, "0.9500")
    );
    assert_eq!(
        ok(&edit(BASE, "confidence: 0.95", "confidence: .99"))
            .claim
            .delta,
        0.01_f64
    );
}

#[test]
fn huge_exact_counts() {
    let spec = ok(&edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  trials: 1e15\n  events: 2.5e6\n",
    ));
    assert_eq!(
        spec.data.source,
        DataSource::Counts {
            trials: 1_000_000_000_000_000,
            events: 2_500_000
        }
    );
    // u64::MAX (18446744073709551615, Rust reference) is accepted exactly; through f64 it would
    // round to 2^64 and overflow.
    let spec = ok(&edit(
        BASE,
        "  trials: 4600\n",
        "  trials: 18446744073709551615\n",
    ));
    assert_eq!(
        spec.data.source,
        DataSource::Counts {
            trials: u64::MAX,
            events: 12
        }
    );
    // 2^53 + 1 is the smallest integer an f64 cannot hold (IEEE 754 binary64, common practice).
    let spec = ok(&edit(
        BASE,
        "  trials: 4600\n",
        "  trials: 9007199254740993\n",
    ));
    assert_eq!(
        spec.data.source,
        DataSource::Counts {
            trials: 9_007_199_254_740_993,
            events: 12
        }
    );
}

#[test]
fn anchors_and_aliases_are_accepted() {
    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a, trials: &n 1500, events: 4}\n    - {name: b, trials: *n, events: 2}\n",
    );
    let DataSource::Arms(arms) = ok(&text).data.source else {
        panic!("arms expected")
    };
    assert_eq!((arms[0].trials, arms[1].trials), (1500, 1500));
}

#[test]
fn free_text_fields_take_numbers_as_written() {
    let spec = ok(&edit(
        BASE,
        "  title: Gripper drop rate, firmware 4.2",
        "  title: 2026",
    ));
    assert_eq!(spec.study.title, "2026");
    let spec = ok(&edit(
        BASE,
        "  description: free text",
        "  description: 0.50",
    ));
    assert_eq!(spec.study.description.as_deref(), Some("0.50"));
    let spec = ok(&edit(BASE, "  id: VER-0117 ", "  id: \"0117\" "));
    assert_eq!(spec.study.id, "0117");
}

#[test]
fn spending_weights_are_normalised() {
    let text = edit(
        BASE,
        "  planned: 1\n  spending: equal\n",
        "  planned: 3\n  spending: [1, 1, 2]\n",
    );
    let spec = ok(&text);
    assert_eq!(spec.looks.planned, 3);
    assert_eq!(
        spec.looks.spending,
        Spending::Weights(vec![0.25, 0.25, 0.5])
    );
    assert_eq!(
        (
            spec.looks.share(1),
            spec.looks.share(3),
            spec.looks.share(4)
        ),
        (Some(0.25), Some(0.5), None)
    );
    let spec = ok(&edit(BASE, "  planned: 1\n", "  planned: 4\n"));
    assert_eq!(
        (spec.looks.share(1), spec.looks.share(4)),
        (Some(0.25), Some(0.25))
    );
}

#[test]
fn embed_data_true_and_false() {
    assert_eq!(
        ok(&edit(BASE, "embed_data: auto", "embed_data: true"))
            .report
            .embed_data,
        EmbedData::Always
    );
    assert_eq!(
        ok(&edit(BASE, "embed_data: auto", "embed_data: false"))
            .report
            .embed_data,
        EmbedData::Never
    );
}

#[test]
fn starter_template_loads() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("templates/init-binary.yaml");
    let spec = load(&path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(spec.outcome.kind, OutcomeKind::Binary);
    assert!(matches!(spec.data.source, DataSource::Counts { .. }));
    assert!(spec.claim.limit > 0.0 && spec.claim.limit < 1.0);
}

#[test]
fn locate_and_error_at() {
    let spec = ok(BASE);
    let loc = spec.locate("claim.confidence").expect("recorded");
    assert_eq!(
        (loc.file.as_str(), loc.line, loc.column),
        (
            "study.yaml",
            pos(BASE, "confidence:", "0.95").0,
            pos(BASE, "confidence:", "0.95").1
        )
    );
    let key = spec.locate_key("claim.confidence").expect("recorded");
    assert_eq!(
        (key.line, key.column),
        pos(BASE, "confidence:", "confidence")
    );
    let e = spec.error_at(
        "data.events",
        "too many events for this method",
        Some("try another method".into()),
    );
    assert_eq!(
        e.to_string(),
        format!(
            "study.yaml:{}:{}: data.events: too many events for this method\n  hint: try another method",
            pos(BASE, "events: 12", "12").0,
            pos(BASE, "events: 12", "12").1
        )
    );
    // A defaulted key is placed at its nearest written parent.
    let e = spec.error_at("dependence.m", "x", None);
    assert_eq!(
        e.location.map(|l| l.line),
        Some(pos(BASE, "  model: independent", "model").0)
    );
    assert_eq!(
        spec.locate("method.compare[1]").map(|l| (l.line, l.column)),
        Some(pos(BASE, "compare:", "hoeffding"))
    );
}

// ---------------------------------------------------------------- file level

#[test]
fn not_utf8() {
    let mut bytes = BASE.as_bytes().to_vec();
    let at = BASE.find("Reliability").expect("present");
    bytes[at] = 0xE9; // Latin-1 é
    let e = parse_bytes("study.yaml", &bytes).expect_err("not UTF-8");
    check(&e, pos(BASE, "owner:", "Reliability"), None, "not UTF-8");
    assert!(e.hint.as_deref().unwrap_or("").contains("UTF-8"));
    // The same through the file system.
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("study.yaml");
    std::fs::write(&path, &bytes).expect("write");
    let e = load(&path).expect_err("not UTF-8");
    assert!(e.to_string().contains("not UTF-8"), "{e}");
    assert_eq!(
        e.location.map(|l| l.line),
        Some(pos(BASE, "owner:", "Reliability").0)
    );
}

#[test]
fn unreadable_file() {
    let dir = tempfile::tempdir().expect("tempdir");
    let e = load(&dir.path().join("missing.yaml")).expect_err("missing file");
    assert!(
        e.location.is_none() && e.message.contains("cannot read"),
        "{e}"
    );
}

#[test]
fn empty_file() {
    for text in ["", "\n\n", "# only a comment\n", "---\n"] {
        let e = err(text);
        check(&e, (1, 1), None, "empty");
    }
}

#[test]
fn more_than_one_document() {
    let text = format!("{BASE}---\nsurety: 1\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "---", "---"),
        None,
        "more than one YAML document",
    );
}

#[test]
fn top_level_not_a_mapping() {
    let e = err("- surety: 1\n- study: x\n");
    check(&e, (1, 1), None, "must be a mapping");
    check(
        &err("just some text\n"),
        (1, 1),
        None,
        "found the string `just some text`",
    );
}

#[test]
fn yaml_syntax_error_is_located() {
    // An unclosed flow list: the scanner stops at the first `:` it cannot place, on the next key.
    let text = edit(
        BASE,
        "  compare: [chernoff-kl, hoeffding]\n",
        "  compare: [chernoff-kl, hoeffding\n",
    );
    check(
        &err(&text),
        pos(&text, "plan:", ":"),
        None,
        "YAML syntax error",
    );
    // A key indented by one space too few.
    let text = edit(BASE, "  events: 12\n", "  events: 12\n events2: 3\n");
    check(
        &err(&text),
        pos(&text, " events2", "events2"),
        None,
        "YAML syntax error",
    );
    // A value followed by a nested key.
    let text = "surety: 1\nstudy:\n  id: a\n    title: b\n";
    check(
        &err(text),
        pos(text, "title", ":"),
        None,
        "mapping values are not allowed",
    );
    // An unclosed quote is found at the end of the stream; the hint says what to look for.
    let text = "surety: 1\nstudy:\n  id: \"VER-1\n";
    check(&err(text), pos(text, "id:", "\""), None, "missing quote");
    let text = "surety: 1\nstudy:\n\tid: a\n";
    check(&err(text), (3, 2), None, "tab characters");
}

#[test]
fn surety_key_missing_or_wrong() {
    let text = BASE.replacen("surety: 1\n", "", 1);
    check(
        &err(&text),
        pos(&text, "study:", "study"),
        Some("surety"),
        "this file is not a surety study spec",
    );
    let text = edit(BASE, "surety: 1", "surety: 2");
    check(
        &err(&text),
        pos(&text, "surety:", "2"),
        Some("surety"),
        "format 2 is not known to this version",
    );
    let text = edit(BASE, "surety: 1", "surety: yes");
    check(
        &err(&text),
        pos(&text, "surety:", "yes"),
        Some("surety"),
        "not a surety study spec",
    );
    let text = edit(BASE, "surety: 1", "surety: \"1\"");
    check(
        &err(&text),
        pos(&text, "surety:", "\"1\""),
        Some("surety"),
        "not a surety study spec",
    );
    // A foreign YAML file is told it is not a spec, not given a list of unknown keys.
    check(
        &err("name: build\non: [push]\n"),
        (1, 1),
        Some("surety"),
        "not a surety study spec",
    );
}

// ---------------------------------------------------------------- keys

#[test]
fn unknown_key_with_suggestion() {
    let text = edit(BASE, "  confidence: 0.95", "  confidnce: 0.95");
    let e = err(&text);
    check(
        &e,
        pos(&text, "confidnce", "confidnce"),
        Some("claim.confidnce"),
        "unknown key `confidnce`",
    );
    assert!(
        e.message.contains("`confidence`") && e.message.contains("`quantity`"),
        "lists allowed keys: {e}"
    );
    assert_eq!(e.hint.as_deref(), Some("did you mean `confidence`?"));

    let text = edit(BASE, "  embed_data: auto", "  embed-data: auto");
    let e = err(&text);
    check(
        &e,
        pos(&text, "embed-data", "embed-data"),
        Some("report.embed-data"),
        "did you mean `embed_data`?",
    );

    let text = format!("{BASE}colour: blue\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "colour", "colour"),
        Some("colour"),
        "unknown key `colour`",
    );
    assert!(e.hint.is_none(), "no far-fetched suggestion: {e}");

    let text = edit(
        BASE,
        "  - {role: Author, name: free text, meaning: authored}",
        "  - {role: Author, nmae: free text, meaning: authored}",
    );
    check(
        &err(&text),
        pos(&text, "nmae", "nmae"),
        Some("signatures[0].nmae"),
        "did you mean `name`?",
    );
}

#[test]
fn duplicate_key() {
    let text = edit(BASE, "  limit: 0.01\n", "  limit: 0.01\n  side: lower\n");
    let e = err(&text);
    let first = pos(&text, "side: upper", "side").0;
    check(
        &e,
        pos(&text, "side: lower", "side"),
        Some("claim.side"),
        &format!("already given on line {first}"),
    );
    let text = format!("{BASE}claim: {{}}\n");
    let e = err(&text);
    check(
        &e,
        (text.lines().count(), 1),
        Some("claim"),
        &format!("line {}", pos(&text, "claim:", "claim").0),
    );
}

#[test]
fn missing_required_keys_are_placed_at_the_mapping() {
    let cases = [
        (
            "  id: VER-0117                  # document id, printed on every page\n",
            "study.id",
            "  title:",
            "title",
        ),
        (
            "  title: Gripper drop rate, firmware 4.2\n",
            "study.title",
            "  id: VER",
            "id",
        ),
        (
            "  quantity: dropped-load rate per pick\n",
            "claim.quantity",
            "  side: upper",
            "side",
        ),
        (
            "  side: upper                   # upper | lower | two-sided\n",
            "claim.side",
            "  quantity:",
            "quantity",
        ),
        ("  limit: 0.01\n", "claim.limit", "  quantity:", "quantity"),
        (
            "  confidence: 0.95\n",
            "claim.confidence",
            "  quantity:",
            "quantity",
        ),
        (
            "  type: binary                  # binary | bounded\n",
            "outcome.type",
            "  event: dropped",
            "event",
        ),
    ];
    for (line, key, mapping_line, mapping_token) in cases {
        let text = edit(BASE, line, "");
        let e = err(&text);
        let field = key.rsplit('.').next().unwrap_or(key);
        check(
            &e,
            pos(&text, mapping_line, mapping_token),
            Some(key),
            &format!("missing key `{field}`"),
        );
        assert!(e.hint.is_some(), "a hint for {key}: {e}");
    }
    let text = edit(
        BASE,
        "data:                           # exactly one of: trials/events, arms, file\n  trials: 4600\n  events: 12\n",
        "",
    );
    check(&err(&text), (1, 1), Some("data"), "missing key `data`");
}

// ---------------------------------------------------------------- YAML 1.1 traps

#[test]
fn yaml11_booleans_are_refused() {
    for word in ["yes", "no", "on", "off", "y", "n", "Yes", "NO", "Off", "Y"] {
        let text = edit(BASE, "embed_data: auto", &format!("embed_data: {word}"));
        let e = err(&text);
        check(
            &e,
            pos(&text, "embed_data", word),
            Some("report.embed_data"),
            "write true or false",
        );
    }
    let text = edit(BASE, "embed_data: auto", "embed_data: \"true\"");
    check(
        &err(&text),
        pos(&text, "embed_data", "\"true\""),
        Some("report.embed_data"),
        "expected auto, true or false",
    );
}

#[test]
fn yaml11_directive_is_refused() {
    let text = format!("# spec\n%YAML 1.1\n---\n{BASE}");
    check(
        &err(&text),
        pos(&text, "%YAML", "%"),
        None,
        "read as YAML 1.2",
    );
    ok(&format!("%YAML 1.2\n---\n{BASE}"));
}

#[test]
fn octal_looking_integers_are_refused() {
    let text = edit(BASE, "  trials: 4600", "  trials: 04600");
    let e = err(&text);
    check(
        &e,
        pos(&text, "trials:", "04600"),
        Some("data.trials"),
        "leading zero",
    );
    assert!(
        e.hint.as_deref().unwrap_or("").contains("write 4600"),
        "{e}"
    );
    let text = edit(BASE, "  planned: 1", "  planned: 01");
    check(
        &err(&text),
        pos(&text, "planned:", "01"),
        Some("looks.planned"),
        "octal",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: 001");
    check(
        &err(&text),
        pos(&text, "limit:", "001"),
        Some("claim.limit"),
        "leading zero",
    );
}

#[test]
fn custom_tags_are_refused() {
    let text = edit(BASE, "  trials: 4600", "  trials: !count 4600");
    let at = pos(&text, "trials:", "!count");
    check(
        &err(&text),
        at,
        Some("data.trials"),
        "tags such as `!count`",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: !!float 0.01");
    let at = pos(&text, "limit:", "!!float");
    check(&err(&text), at, Some("claim.limit"), "are not used");
    let text = edit(
        BASE,
        "[chernoff-kl, hoeffding]",
        "!ids [chernoff-kl, hoeffding]",
    );
    let at = pos(&text, "compare:", "!ids");
    check(&err(&text), at, Some("method.compare"), "`!ids`");
    let text = edit(
        BASE,
        "[chernoff-kl, hoeffding]",
        "[chernoff-kl, !x hoeffding]",
    );
    let at = pos(&text, "compare:", "!x");
    check(&err(&text), at, Some("method.compare[1]"), "`!x`");
}

#[test]
fn id_that_looks_like_a_number_must_be_quoted() {
    let text = edit(BASE, "  id: VER-0117 ", "  id: 0117 ");
    let e = err(&text);
    check(
        &e,
        pos(&text, "  id:", "0117"),
        Some("study.id"),
        "expected text, found the number `0117`",
    );
    assert!(e.hint.as_deref().unwrap_or("").contains("\"0117\""), "{e}");
    let text = edit(
        BASE,
        "  compare: [chernoff-kl, hoeffding]",
        "  compare: [chernoff-kl, true]",
    );
    check(
        &err(&text),
        pos(&text, "compare:", "true"),
        Some("method.compare[1]"),
        "quote it",
    );
}

// ---------------------------------------------------------------- types and counts

#[test]
fn wrong_types() {
    let text = edit(BASE, "  trials: 4600", "  trials: abc");
    check(
        &err(&text),
        pos(&text, "trials:", "abc"),
        Some("data.trials"),
        "expected a whole number, found the string `abc`",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: [0.01]");
    check(
        &err(&text),
        pos(&text, "limit:", "["),
        Some("claim.limit"),
        "expected a number, found a list",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: \"0.01\"");
    check(
        &err(&text),
        pos(&text, "limit:", "\"0.01\""),
        Some("claim.limit"),
        "remove the quotes",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: 1%");
    check(
        &err(&text),
        pos(&text, "limit:", "1%"),
        Some("claim.limit"),
        "write it as a fraction: 0.01",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: .inf");
    check(
        &err(&text),
        pos(&text, "limit:", ".inf"),
        Some("claim.limit"),
        "finite",
    );
    let text = edit(BASE, "  side: upper ", "  side: uper ");
    let e = err(&text);
    check(
        &e,
        pos(&text, "side:", "uper"),
        Some("claim.side"),
        "expected one of `upper`, `lower`, `two-sided`",
    );
    assert_eq!(e.hint.as_deref(), Some("did you mean `upper`?"));
    let text = edit(
        BASE,
        "  compare: [chernoff-kl, hoeffding]",
        "  compare: chernoff-kl",
    );
    check(
        &err(&text),
        pos(&text, "compare:", "chernoff-kl"),
        Some("method.compare"),
        "expected a list",
    );
    let text = edit(BASE, "  title: Gripper drop rate, firmware 4.2", "  title:");
    check(
        &err(&text),
        pos(&text, "  title:", ":"),
        Some("study.title"),
        "expected text, found nothing",
    );
    let text = edit(BASE, "  scope: each", "  scope: {each: 1}");
    check(
        &err(&text),
        pos(&text, "scope:", "{"),
        Some("claim.scope"),
        "found a mapping",
    );
}

#[test]
fn bad_counts() {
    for (value, fragment) in [
        ("-5", "not negative"),
        ("4600.5", "fractional"),
        ("1e-3", "fractional"),
        ("many", "found the string `many`"),
        ("1_000", "plain decimal digits"),
        ("0x10", "plain decimal digits"),
        ("18446744073709551616", "too large"),
        ("1e20", "too large"),
        (".nan", "expected a whole number"),
        ("\"4600\"", "remove the quotes"),
    ] {
        let text = edit(BASE, "  trials: 4600", &format!("  trials: {value}"));
        check(
            &err(&text),
            pos(&text, "trials:", value),
            Some("data.trials"),
            fragment,
        );
    }
    let text = edit(
        BASE,
        "  allowed_events: [0, 1, 2, 3]",
        "  allowed_events: [0, 1, -2, 3]",
    );
    check(
        &err(&text),
        pos(&text, "allowed_events", "-2"),
        Some("plan.allowed_events[2]"),
        "not negative",
    );
    let text = edit(BASE, "  planned: 1", "  planned: 4294967296");
    check(
        &err(&text),
        pos(&text, "planned:", "4294967296"),
        Some("looks.planned"),
        "at most 4294967295",
    );
}

#[test]
fn zero_trials_and_too_many_events() {
    let text = edit(BASE, "  trials: 4600", "  trials: 0");
    check(
        &err(&text),
        pos(&text, "trials:", "0"),
        Some("data.trials"),
        "at least 1",
    );
    let text = edit(BASE, "  events: 12", "  events: 4601");
    check(
        &err(&text),
        pos(&text, "events:", "4601"),
        Some("data.events"),
        "events (4601) cannot exceed trials (4600)",
    );
    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a, trials: 5, events: 1}\n    - {name: b, trials: 5, events: 6}\n",
    );
    check(
        &err(&text),
        pos(&text, "name: b", "6"),
        Some("data.arms[1].events"),
        "events (6) cannot exceed trials (5)",
    );
}

// ---------------------------------------------------------------- data forms

#[test]
fn data_forms() {
    let text = edit(BASE, "  trials: 4600\n  events: 12\n", "  column: x\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "  column: x", "column"),
        Some("data"),
        "exactly one of",
    );

    let text = edit(BASE, "  events: 12\n", "  events: 12\n  file: picks.csv\n");
    check(
        &err(&text),
        pos(&text, "file:", "file"),
        Some("data.file"),
        "gives both inline counts (`trials` and `events`) and `file`",
    );

    let text = edit(BASE, "  events: 12\n", "");
    check(
        &err(&text),
        pos(&text, "  trials: 4600", "trials"),
        Some("data.events"),
        "missing key `events`",
    );

    let text = edit(BASE, "  trials: 4600\n", "");
    check(
        &err(&text),
        pos(&text, "  events: 12", "events"),
        Some("data.trials"),
        "missing key `trials`",
    );

    let text = edit(BASE, "  trials: 4600\n  events: 12\n", "  arms: []\n");
    check(
        &err(&text),
        pos(&text, "arms:", "["),
        Some("data.arms"),
        "at least one arm",
    );

    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a, trials: 5, events: 1}\n    - {name: a, trials: 5, events: 2}\n",
    );
    check(
        &err(&text),
        pos(&text, "events: 2}", "a,"),
        Some("data.arms[1].name"),
        "already used by data.arms[0]",
    );

    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: \"\", trials: 5, events: 1}\n",
    );
    check(
        &err(&text),
        pos(&text, "name:", "\"\""),
        Some("data.arms[0].name"),
        "must not be empty",
    );

    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a, trials: 5}\n",
    );
    check(
        &err(&text),
        pos(&text, "name: a", "{"),
        Some("data.arms[0].events"),
        "missing key `events`",
    );

    let text = edit(
        BASE,
        "data:                           # exactly one of: trials/events, arms, file\n  trials: 4600\n  events: 12\n",
        "data: picks.csv\n",
    );
    check(
        &err(&text),
        pos(&text, "data:", "picks"),
        Some("data"),
        "write `trials:` and `events:`, `arms:`, or `file:`",
    );

    let text = edit(BASE, "  events: 12\n", "  events: 12\n  column: dropped\n");
    check(
        &err(&text),
        pos(&text, "column:", "column"),
        Some("data.column"),
        "only to data read from a `file`",
    );
}

// ---------------------------------------------------------------- confidence

#[test]
fn confidence_mistakes() {
    for (value, fragment) in [
        ("95", "did you mean 0.95 or \"95%\"?"),
        ("95.0", "did you mean 0.95 or \"95%\"?"),
        ("99.9", "did you mean 0.999 or \"99.9%\"?"),
        (
            "0.05",
            "looks like an error budget (alpha); confidence is 1 - alpha: did you mean 0.95?",
        ),
        ("0.3", "did you mean 0.7?"),
        ("\"5%\"", "did you mean \"95%\"?"),
        ("1", "cannot be demonstrated"),
        ("1.0", "cannot be demonstrated"),
        ("0", "claims nothing"),
        ("-0.95", "cannot be negative"),
        ("\"95\"", "did you mean 0.95 or \"95%\"?"),
        ("\"0.95\"", "without quotes"),
        ("\"abc\"", "percentage ending in %"),
        ("abc", "expected a confidence such as 0.95"),
        ("\"100%\"", "below 100%"),
        ("150", "between 0.5 and 1"),
        ("9.5e-1", "plain decimal"),
        ("[0.95]", "found a list"),
    ] {
        let text = edit(
            BASE,
            "  confidence: 0.95",
            &format!("  confidence: {value}"),
        );
        let e = err(&text);
        check(
            &e,
            pos(&text, "confidence:", value),
            Some("claim.confidence"),
            fragment,
        );
    }
}

// ---------------------------------------------------------------- limit and outcome

#[test]
fn limit_rules() {
    let text = edit(BASE, "  limit: 0.01", "  limit: 1");
    let e = err(&text);
    check(
        &e,
        pos(&text, "limit:", "1"),
        Some("claim.limit"),
        "strictly between 0 and 1",
    );
    assert_eq!(
        e.hint.as_deref(),
        Some("a rate is a fraction: did you mean 0.01 for 1 %?")
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: 5");
    check(
        &err(&text),
        pos(&text, "limit:", "5"),
        Some("claim.limit"),
        "did you mean 0.05 for 5 %?",
    );
    let text = edit(BASE, "  limit: 0.01", "  limit: 0");
    check(
        &err(&text),
        pos(&text, "limit:", "0"),
        Some("claim.limit"),
        "strictly between 0 and 1",
    );

    let bounded = edit(
        BASE,
        "  type: binary                  # binary | bounded\n  event: dropped load           # binary: what a 1 means\n",
        "  type: bounded\n  range: [0, 2.5]\n",
    );
    let bounded = edit(&bounded, "  allowed_events: [0, 1, 2, 3]\n", "");
    let text = edit(&bounded, "  limit: 0.01", "  limit: 3");
    check(
        &err(&text),
        pos(&text, "limit:", "3"),
        Some("claim.limit"),
        "inside the outcome range [0, 2.5]",
    );
    let text = edit(&bounded, "  limit: 0.01", "  limit: 2.5");
    check(
        &err(&text),
        pos(&text, "limit:", "2.5"),
        Some("claim.limit"),
        "strictly inside",
    );
}

#[test]
fn outcome_rules() {
    let bounded = edit(
        BASE,
        "  type: binary                  # binary | bounded\n  event: dropped load           # binary: what a 1 means\n",
        "  type: bounded\n  range: [0, 2.5]\n",
    );
    let bounded = edit(&bounded, "  allowed_events: [0, 1, 2, 3]\n", "");
    ok(&bounded);

    let text = edit(&bounded, "  range: [0, 2.5]\n", "");
    check(
        &err(&text),
        pos(&text, "  type: bounded", "type"),
        Some("outcome.range"),
        "missing key `range`",
    );
    let text = edit(&bounded, "  range: [0, 2.5]", "  range: [2.5, 0]");
    check(
        &err(&text),
        pos(&text, "range:", "["),
        Some("outcome.range"),
        "low end must be below the high end",
    );
    let text = edit(&bounded, "  range: [0, 2.5]", "  range: [0, 1, 2]");
    check(
        &err(&text),
        pos(&text, "range:", "["),
        Some("outcome.range"),
        "[low, high]",
    );
    let text = edit(&bounded, "  range: [0, 2.5]", "  range: [0, .inf]");
    check(
        &err(&text),
        pos(&text, "range:", ".inf"),
        Some("outcome.range[1]"),
        "finite",
    );
    let text = edit(
        &bounded,
        "  range: [0, 2.5]\n",
        "  range: [0, 2.5]\n  event: too deep\n",
    );
    check(
        &err(&text),
        pos(&text, "event:", "event"),
        Some("outcome.event"),
        "only to binary outcomes",
    );

    let text = edit(
        BASE,
        "  event: dropped load           # binary: what a 1 means\n",
        "  event: dropped load\n  range: [0, 1]\n",
    );
    check(
        &err(&text),
        pos(&text, "range:", "range"),
        Some("outcome.range"),
        "only to bounded outcomes",
    );
    let text = edit(
        BASE,
        "  event: dropped load           # binary: what a 1 means\n",
        "  event: dropped load\n  unit: m\n",
    );
    check(
        &err(&text),
        pos(&text, "unit:", "unit"),
        Some("outcome.unit"),
        "only to bounded outcomes",
    );
    let text = edit(BASE, "  type: binary ", "  type: count ");
    check(
        &err(&text),
        pos(&text, "type:", "count"),
        Some("outcome.type"),
        "expected one of `binary`, `bounded`",
    );
}

// ---------------------------------------------------------------- looks, dependence, plan

#[test]
fn looks_rules() {
    let text = edit(BASE, "  planned: 1", "  planned: 0");
    check(
        &err(&text),
        pos(&text, "planned:", "0"),
        Some("looks.planned"),
        "at least 1 look",
    );
    let text = edit(BASE, "  spending: equal", "  spending: [1, 2]");
    let e = err(&text);
    check(
        &e,
        pos(&text, "spending:", "["),
        Some("looks.spending"),
        "2 weight(s) given for 1 planned look(s)",
    );
    assert!(
        e.hint.as_deref().unwrap_or("").contains("planned: 2"),
        "{e}"
    );
    let text = edit(
        BASE,
        "  planned: 1\n  spending: equal",
        "  planned: 3\n  spending: [1, 0, 2]",
    );
    check(
        &err(&text),
        pos(&text, "spending:", "0"),
        Some("looks.spending[1]"),
        "must be positive",
    );
    let text = edit(
        BASE,
        "  planned: 1\n  spending: equal",
        "  planned: 2\n  spending: [1, -1]",
    );
    check(
        &err(&text),
        pos(&text, "spending:", "-1"),
        Some("looks.spending[1]"),
        "must be positive",
    );
    let text = edit(BASE, "  spending: equal", "  spending: equl");
    check(
        &err(&text),
        pos(&text, "spending:", "equl"),
        Some("looks.spending"),
        "expected `equal` or a list of weights",
    );
    let text = edit(BASE, "  mode: planned", "  mode: anytime");
    check(
        &err(&text),
        pos(&text, "  planned: 1", "planned"),
        Some("looks.planned"),
        "only to mode: planned",
    );
}

#[test]
fn dependence_rules() {
    let text = edit(BASE, "  model: independent ", "  model: m-dependent ");
    check(
        &err(&text),
        pos(&text, "model:", "model"),
        Some("dependence.m"),
        "missing key `m`",
    );
    let text = edit(
        BASE,
        "  model: independent            # independent | clustered | martingale | m-dependent\n",
        "  model: m-dependent\n  m: 2\n",
    );
    assert_eq!(ok(&text).dependence.m, Some(2));
    let text = edit(
        BASE,
        "  model: independent            # independent | clustered | martingale | m-dependent\n",
        "  model: independent\n  m: 2\n",
    );
    check(
        &err(&text),
        pos(&text, "  m: 2", "m"),
        Some("dependence.m"),
        "only to model: m-dependent",
    );
    let text = edit(BASE, "  model: independent ", "  model: clustered ");
    check(
        &err(&text),
        pos(&text, "model:", "clustered"),
        Some("dependence.model"),
        "give the data as `data.file` with `data.cluster_column`",
    );
    let file = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  file: picks.csv\n",
    );
    let text = edit(&file, "  model: independent ", "  model: clustered ");
    check(
        &err(&text),
        pos(&text, "file: picks", "file"),
        Some("data.cluster_column"),
        "missing key `cluster_column`",
    );
    let text = edit(
        &file,
        "  file: picks.csv\n",
        "  file: picks.csv\n  cluster_column: tote\n",
    );
    check(
        &err(&text),
        pos(&text, "cluster_column", "cluster_column"),
        Some("data.cluster_column"),
        "dependence.model is independent",
    );
}

#[test]
fn plan_rules() {
    let text = edit(BASE, "  pass_probability: 0.9", "  pass_probability: 90");
    check(
        &err(&text),
        pos(&text, "pass_probability:", "90"),
        Some("plan.pass_probability"),
        "did you mean 0.9?",
    );
    let text = edit(BASE, "  pass_probability: 0.9", "  pass_probability: 1");
    check(
        &err(&text),
        pos(&text, "pass_probability:", "1"),
        Some("plan.pass_probability"),
        "strictly between 0 and 1",
    );
    let text = edit(BASE, "  assumed_rate: 0.003", "  assumed_rate: 0");
    check(
        &err(&text),
        pos(&text, "assumed_rate:", "0"),
        Some("plan.assumed_rate"),
        "strictly between 0 and 1",
    );
    let text = edit(
        BASE,
        "  allowed_events: [0, 1, 2, 3]",
        "  allowed_events: [0, 1.5]",
    );
    check(
        &err(&text),
        pos(&text, "allowed_events:", "1.5"),
        Some("plan.allowed_events[1]"),
        "fractional",
    );
    let text = edit(
        BASE,
        "  allowed_events: [0, 1, 2, 3]",
        "  allowed_events: [0, 1, 1]",
    );
    check(
        &err(&text),
        pos(&text, "allowed_events:", "1]"),
        Some("plan.allowed_events[2]"),
        "already listed",
    );
    let text = edit(
        BASE,
        "  assumed_rate: 0.003",
        "  assumed_rate: 0.003\n  assumed_sd: 0.1",
    );
    check(
        &err(&text),
        pos(&text, "assumed_sd", "assumed_sd"),
        Some("plan.assumed_sd"),
        "only to bounded outcomes",
    );
}

// ---------------------------------------------------------------- dates

#[test]
fn dates_must_be_calendar_dates() {
    let text = edit(BASE, "  date: 2026-11-30", "  date: 2026-02-30");
    check(
        &err(&text),
        pos(&text, "  date:", "2026"),
        Some("study.date"),
        "not a calendar date",
    );
    let text = edit(BASE, "  date: 2026-11-30", "  date: 30.11.2026");
    check(
        &err(&text),
        pos(&text, "  date:", "30"),
        Some("study.date"),
        "YYYY-MM-DD",
    );
    let text = edit(BASE, "date: 2026-11-28", "date: 2026-13-01");
    check(
        &err(&text),
        pos(&text, "date: 2026-13", "2026-13"),
        Some("attestations.identical-conditions.date"),
        "no month 13",
    );
    assert_eq!(
        ok(&edit(BASE, "  date: 2026-11-30", "  date: \"2024-02-29\""))
            .study
            .date,
        Some(Date {
            year: 2024,
            month: 2,
            day: 29
        })
    );
}

// ---------------------------------------------------------------- rendering

#[test]
fn display_is_one_rendering() {
    let text = edit(BASE, "  confidence: 0.95", "  confidence: 95");
    let e = err(&text);
    let (line, col) = pos(&text, "confidence:", "95");
    assert_eq!(
        e.to_string(),
        format!(
            "study.yaml:{line}:{col}: claim.confidence: {}\n  hint: did you mean 0.95 or \"95%\"?",
            e.message
        )
    );
    let _: &dyn std::error::Error = &e;
}

// ---------------------------------------------------------------- summaries of bounded values

// Source of the rules: the summary form of `data` (n, mean and sample sd with n − 1, in data
// units, for bounded outcomes). Largest possible sd: the derivation beside `max_sample_sd` in
// src/spec/validate.rs; each value below is also worked by hand in its comment.

/// BASE turned into a bounded outcome on [0, 2.5] whose data are `data` (the lines under
/// `data:`).
pub(crate) fn bounded_with(data: &str) -> String {
    let text = edit(
        BASE,
        "  type: binary                  # binary | bounded\n  event: dropped load           # binary: what a 1 means\n",
        "  type: bounded\n  range: [0, 2.5]\n  unit: m\n",
    );
    let text = edit(&text, "  allowed_events: [0, 1, 2, 3]\n", "");
    let text = edit(&text, "  assumed_rate: 0.003", "  assumed_rate: 1.1");
    edit(&text, "  trials: 4600\n  events: 12\n", data)
}

pub(crate) const SUMMARY: &str = "  n: 400\n  mean: 1.12\n  sd: 0.21\n";

#[test]
fn summary_form_loads() {
    let text = bounded_with(SUMMARY);
    let spec = ok(&text);
    assert_eq!(
        spec.data.source,
        DataSource::Summary(SummaryStats {
            n: 400,
            mean: 1.12,
            sd: 0.21
        })
    );
    let loc = spec.locate("data.sd").expect("recorded");
    assert_eq!((loc.line, loc.column), pos(&text, "  sd: 0.21", "0.21"));
    // The flow form of the same summary.
    let flow = edit(
        &text,
        "data:                           # exactly one of: trials/events, arms, file\n  n: 400\n  mean: 1.12\n  sd: 0.21\n",
        "data: {n: 400, mean: 1.12, sd: 0.21}\n",
    );
    assert_eq!(ok(&flow).data.source, spec.data.source);
    // A mean at an end of the range with no spread; a whole-number mean is taken as exact.
    let spec = ok(&bounded_with("  n: 2\n  mean: 0\n  sd: 0\n"));
    assert_eq!(
        spec.data.source,
        DataSource::Summary(SummaryStats {
            n: 2,
            mean: 0.0,
            sd: 0.0
        })
    );
}

#[test]
fn arm_summaries_load() {
    let text = bounded_with(
        "  arms:\n    - {name: line-1, n: 120, mean: 0.84, sd: 0.30}\n    - name: line-2\n      n: 95\n      mean: 0.91\n      sd: 0.27\n",
    );
    let spec = ok(&text);
    let DataSource::ArmSummaries(arms) = &spec.data.source else {
        panic!("arm summaries expected, got {:?}", spec.data.source)
    };
    assert_eq!(
        arms,
        &[
            ArmSummary {
                name: "line-1".into(),
                summary: SummaryStats {
                    n: 120,
                    mean: 0.84,
                    sd: 0.30
                }
            },
            ArmSummary {
                name: "line-2".into(),
                summary: SummaryStats {
                    n: 95,
                    mean: 0.91,
                    sd: 0.27
                }
            },
        ]
    );
    let loc = spec.locate("data.arms[1].sd").expect("recorded");
    assert_eq!((loc.line, loc.column), pos(&text, "      sd: 0.27", "0.27"));
}

#[test]
fn summary_values_are_checked() {
    for (old, new, token, key, fragment) in [
        ("  n: 400", "  n: 1", "1", "data.n", "n of at least 2"),
        ("  n: 400", "  n: 0", "0", "data.n", "n of at least 2"),
        ("  n: 400", "  n: 400.5", "400.5", "data.n", "fractional"),
        ("  n: 400", "  n: -3", "-3", "data.n", "not negative"),
        (
            "  mean: 1.12",
            "  mean: 2.6",
            "2.6",
            "data.mean",
            "inside the outcome range [0, 2.5]",
        ),
        (
            "  mean: 1.12",
            "  mean: -0.1",
            "-0.1",
            "data.mean",
            "inside the outcome range",
        ),
        (
            "  mean: 1.12",
            "  mean: \"1.12\"",
            "\"1.12\"",
            "data.mean",
            "remove the quotes",
        ),
        (
            "  sd: 0.21",
            "  sd: -0.21",
            "-0.21",
            "data.sd",
            "cannot be negative",
        ),
        ("  sd: 0.21", "  sd: .inf", ".inf", "data.sd", "finite"),
        (
            "  sd: 0.21",
            "  sd:",
            ":",
            "data.sd",
            "expected a number, found nothing",
        ),
    ] {
        let text = edit(&bounded_with(SUMMARY), old, new);
        let line = new.trim().split(':').next().unwrap_or_default().to_owned() + ":";
        check(
            &err(&text),
            pos(&text, &format!("  {line}"), token),
            Some(key),
            fragment,
        );
    }
    // A key left out is reported at the mapping that should hold it.
    let text = bounded_with("  n: 400\n  mean: 1.12\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "  n: 400", "n"),
        Some("data.sd"),
        "missing key `sd`",
    );
    assert!(e.hint.as_deref().unwrap_or("").contains("n − 1"), "{e}");
    let text = bounded_with("  mean: 1.12\n  sd: 0.21\n");
    check(
        &err(&text),
        pos(&text, "  mean: 1.12", "mean"),
        Some("data.n"),
        "missing key `n`",
    );
    // An unknown key lists the summary keys among those allowed.
    let text = bounded_with("  n: 400\n  mean: 1.12\n  stdev: 0.21\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "stdev", "stdev"),
        Some("data.stdev"),
        "unknown key `stdev`",
    );
    assert!(e.message.contains("`sd`"), "{e}");
}

#[test]
fn summary_sd_cannot_exceed_what_the_range_allows() {
    // n = 2 in [0, 2.5] with mean 1.25: the two values are 0 and 2.5, s = 2.5/√2 = 1.7677670
    // (arithmetic). Rounded to the digits written, 1.76777 and 1.77 are possible; 1.78 is not.
    for sd in ["1.76777", "1.77", "1.7677670"] {
        ok(&bounded_with(&format!(
            "  n: 2\n  mean: 1.25\n  sd: {sd}\n"
        )));
    }
    let text = bounded_with("  n: 2\n  mean: 1.25\n  sd: 1.78\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "  sd:", "1.78"),
        Some("data.sd"),
        "the largest possible is 1.76777",
    );
    assert!(
        !e.hint.as_deref().unwrap_or("").contains("variance"),
        "just above the bound: {e}"
    );
    // n = 3 in [0, 2.5] with mean 1.25: the extreme set is {0, 1.25, 2.5}, s = 1.25 (hand
    // arithmetic: (1.5625 + 0 + 1.5625)/2 = 1.5625). The bound without the middle value,
    // 2.5·√(3·¼/2) = 1.5309, would let 1.4 through.
    ok(&bounded_with("  n: 3\n  mean: 1.25\n  sd: 1.25\n"));
    let text = bounded_with("  n: 3\n  mean: 1.25\n  sd: 1.4\n");
    check(
        &err(&text),
        pos(&text, "  sd:", "1.4"),
        Some("data.sd"),
        "largest possible is 1.25",
    );
    // A mean written at the end of the range to three decimals leaves room for about 0.01 of
    // spread among 400 values (0.02 % of them just below 2.5); 0.1 is impossible.
    let text = bounded_with("  n: 400\n  mean: 2.500\n  sd: 0.1\n");
    check(
        &err(&text),
        pos(&text, "  sd:", "0.1"),
        Some("data.sd"),
        "the largest possible is 0",
    );
    let text = bounded_with("  n: 400\n  mean: 0\n  sd: 0.01\n");
    check(
        &err(&text),
        pos(&text, "  sd:", "0.01"),
        Some("data.sd"),
        "largest possible is 0",
    );
    // A variance given as the sd: its square root is offered.
    let wide = edit(
        &bounded_with("  n: 50\n  mean: 50\n  sd: 900\n"),
        "  range: [0, 2.5]",
        "  range: [0, 100]",
    );
    let wide = edit(&wide, "  limit: 0.01", "  limit: 60");
    let wide = edit(&wide, "  assumed_rate: 1.1", "  assumed_rate: 55");
    let e = err(&wide);
    check(
        &e,
        pos(&wide, "  sd:", "900"),
        Some("data.sd"),
        "may be the variance",
    );
    assert!(
        e.hint.as_deref().unwrap_or("").ends_with("square root, 30"),
        "{e}"
    );
    // An exponent does not buy unlimited imprecision.
    let text = bounded_with("  n: 400\n  mean: 1.12\n  sd: 1e300\n");
    check(
        &err(&text),
        pos(&text, "  sd:", "1e300"),
        Some("data.sd"),
        "largest possible",
    );
}

#[test]
fn summaries_need_a_bounded_outcome_and_one_form() {
    // Binary outcome with a summary.
    let text = edit(BASE, "  trials: 4600\n  events: 12\n", SUMMARY);
    let e = err(&text);
    check(
        &e,
        pos(&text, "  n: 400", "n"),
        Some("data.n"),
        "this outcome is binary",
    );
    assert!(
        e.hint
            .as_deref()
            .unwrap_or("")
            .contains("outcome.type: bounded"),
        "{e}"
    );
    // Counts and a summary together.
    let text = bounded_with("  trials: 400\n  events: 3\n  mean: 1.12\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "  mean:", "mean"),
        Some("data.mean"),
        "gives both inline counts (`trials` and `events`) and a summary (`n`, `mean` and `sd`)",
    );
    assert!(
        e.hint
            .as_deref()
            .unwrap_or("")
            .contains("matches outcome.type"),
        "{e}"
    );
    // A summary and a file.
    let text = bounded_with("  file: values.csv\n  n: 400\n");
    check(
        &err(&text),
        pos(&text, "  n: 400", "n"),
        Some("data.n"),
        "gives both `file` and a summary",
    );
    // Columns belong to files.
    let text = bounded_with("  n: 400\n  mean: 1.12\n  sd: 0.21\n  column: gap\n");
    check(
        &err(&text),
        pos(&text, "column:", "column"),
        Some("data.column"),
        "only to data read from a `file`",
    );
    // No form at all: the hint of a bounded outcome shows the summary.
    let text = bounded_with("  column: gap\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "  column: gap", "column"),
        Some("data"),
        "exactly one of",
    );
    assert!(
        e.hint.as_deref().unwrap_or("").contains("`sd: 0.21`"),
        "{e}"
    );
}

#[test]
fn arm_summary_mistakes() {
    // One arm with both forms.
    let text = bounded_with("  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3, events: 2}\n");
    check(
        &err(&text),
        pos(&text, "name: a", "events"),
        Some("data.arms[0].events"),
        "both counts",
    );
    // Arms written in different forms.
    let text = bounded_with(
        "  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3}\n    - {name: b, trials: 40, events: 2}\n",
    );
    check(
        &err(&text),
        pos(&text, "name: b", "trials"),
        Some("data.arms[1].trials"),
        "all arms are given the same way",
    );
    // A summary arm for a binary outcome.
    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a, n: 40, mean: 0.2, sd: 0.3}\n",
    );
    check(
        &err(&text),
        pos(&text, "name: a", "n:"),
        Some("data.arms[0].n"),
        "this outcome is binary",
    );
    // Values are checked per arm.
    let text = bounded_with(
        "  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3}\n    - {name: b, n: 1, mean: 1.2, sd: 0.3}\n",
    );
    check(
        &err(&text),
        pos(&text, "name: b", "1,"),
        Some("data.arms[1].n"),
        "at least 2",
    );
    let text = bounded_with("  arms:\n    - {name: a, n: 40, mean: 1.2}\n");
    check(
        &err(&text),
        pos(&text, "name: a", "{"),
        Some("data.arms[0].sd"),
        "missing key `sd`",
    );
    let text = bounded_with("  arms:\n    - {name: a}\n");
    let e = err(&text);
    check(
        &e,
        pos(&text, "name: a", "{"),
        Some("data.arms[0].n"),
        "missing key `n`",
    );
    assert!(e.hint.as_deref().unwrap_or("").contains("sd: 0.3"), "{e}");
    let text = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a}\n",
    );
    let e = err(&text);
    check(
        &e,
        pos(&text, "name: a", "{"),
        Some("data.arms[0].trials"),
        "missing key `trials`",
    );
    assert_eq!(
        e.hint.as_deref(),
        Some("each arm is written {name: A, trials: 100, events: 1}")
    );
    let text = bounded_with(
        "  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3}\n    - {name: a, n: 41, mean: 1.2, sd: 0.3}\n",
    );
    check(
        &err(&text),
        pos(&text, "n: 41", "a,"),
        Some("data.arms[1].name"),
        "already used",
    );
}
