//! `surety schema`: the JSON Schema agrees with the loader, checked with an independent
//! validator (Python `jsonschema`, draft 2020-12, through tests/reference/check_schema.py).

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use serde_json::Value;
use surety::spec::{parse, schema};

use crate::python;
use crate::spec_loading::{BASE, SUMMARY, bounded_with, edit};

// Source of the rules: DESIGN.md §5 (spec format 1) and the loader's own refusals, which
// tests/spec_loading.rs checks one by one; the validator is the `jsonschema` package, an
// implementation of JSON Schema draft 2020-12 independent of this project.

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Every example spec shipped with surety, and the starter written by `surety init`.
fn shipped_specs() -> Vec<PathBuf> {
    let mut specs: Vec<PathBuf> = std::fs::read_dir(root().join("examples"))
        .expect("examples folder")
        .filter_map(|e| e.ok().map(|e| e.path().join("study.yaml")))
        .filter(|p| p.is_file())
        .collect();
    specs.sort();
    specs.push(root().join("templates/init-binary.yaml"));
    assert!(specs.len() >= 4, "{specs:?}");
    specs
}

/// Specs the loader accepts, by name.
fn valid_specs() -> Vec<(&'static str, String)> {
    let file = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  file: picks.csv\n  column: dropped\n  cluster_column: tote\n  order_column: cycle\n",
    );
    vec![
        ("design example", BASE.to_owned()),
        ("bounded summary", bounded_with(SUMMARY)),
        (
            "bounded arm summaries",
            bounded_with("  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3}\n    - {name: b, n: 41, mean: 1.3, sd: 0.2}\n"),
        ),
        (
            "file, clustered",
            edit(&file, "  model: independent ", "  model: clustered "),
        ),
        (
            "m-dependent",
            edit(
                BASE,
                "  model: independent            # independent | clustered | martingale | m-dependent\n",
                "  model: m-dependent\n  m: 2\n",
            ),
        ),
        (
            "anytime looks",
            edit(
                BASE,
                "  mode: planned\n  planned: 1\n  spending: equal\n",
                "  mode: anytime\n",
            ),
        ),
        (
            "weights for three looks",
            edit(BASE, "  planned: 1\n  spending: equal", "  planned: 3\n  spending: [1, 1, 2]"),
        ),
        (
            "one weight, planned left out",
            edit(BASE, "  planned: 1\n  spending: equal", "  spending: [1]"),
        ),
        ("percent confidence", edit(BASE, "confidence: 0.95", "confidence: \"99.9%\"")),
        ("confidence 0.5", edit(BASE, "confidence: 0.95", "confidence: 0.5")),
        ("huge counts", edit(BASE, "  trials: 4600\n", "  trials: 1e15\n")),
        ("empty optional text", edit(BASE, "  owner: Reliability engineering\n", "  owner:\n")),
        ("embed_data false", edit(BASE, "embed_data: auto", "embed_data: false")),
        (
            "two-sided, scope best, arms",
            edit(
                &edit(BASE, "  side: upper ", "  side: two-sided "),
                "  trials: 4600\n  events: 12\n",
                "  arms:\n    - {name: a, trials: 100, events: 1}\n    - {name: b, trials: 90, events: 0}\n",
            )
            .replace("  scope: each", "  scope: best"),
        ),
        (
            "minimal",
            "surety: 1\nstudy: {id: A-1, title: T}\nclaim: {quantity: q, side: lower, limit: 0.9, confidence: 0.99}\noutcome: {type: binary}\ndata: {trials: 10, events: 10}\n".to_owned(),
        ),
    ]
}

/// Specs the loader refuses that the schema must refuse too, by name.
fn broken_specs() -> Vec<(&'static str, String)> {
    let bounded = bounded_with(SUMMARY);
    vec![
        (
            "misspelt key",
            edit(BASE, "  confidence: 0.95", "  confidnce: 0.95"),
        ),
        ("unknown top-level key", format!("{BASE}colour: blue\n")),
        ("missing claim.limit", edit(BASE, "  limit: 0.01\n", "")),
        (
            "missing data",
            edit(
                BASE,
                "data:                           # exactly one of: trials/events, arms, file\n  trials: 4600\n  events: 12\n",
                "",
            ),
        ),
        ("format 2", edit(BASE, "surety: 1", "surety: 2")),
        ("format as text", edit(BASE, "surety: 1", "surety: \"1\"")),
        (
            "confidence 95",
            edit(BASE, "confidence: 0.95", "confidence: 95"),
        ),
        (
            "confidence 0.05 (alpha)",
            edit(BASE, "confidence: 0.95", "confidence: 0.05"),
        ),
        (
            "confidence 1",
            edit(BASE, "confidence: 0.95", "confidence: 1"),
        ),
        (
            "confidence \"100%\"",
            edit(BASE, "confidence: 0.95", "confidence: \"100%\""),
        ),
        (
            "confidence \"5%\"",
            edit(BASE, "confidence: 0.95", "confidence: \"5%\""),
        ),
        (
            "confidence quoted fraction",
            edit(BASE, "confidence: 0.95", "confidence: \"0.95\""),
        ),
        (
            "side misspelt",
            edit(BASE, "  side: upper ", "  side: uper "),
        ),
        ("scope unknown", edit(BASE, "  scope: each", "  scope: any")),
        ("binary limit 5", edit(BASE, "  limit: 0.01", "  limit: 5")),
        ("binary limit 0", edit(BASE, "  limit: 0.01", "  limit: 0")),
        (
            "quoted limit",
            edit(BASE, "  limit: 0.01", "  limit: \"0.01\""),
        ),
        (
            "id as a number",
            edit(BASE, "  id: VER-0117 ", "  id: 117 "),
        ),
        (
            "blank title",
            edit(
                BASE,
                "  title: Gripper drop rate, firmware 4.2",
                "  title: \"  \"",
            ),
        ),
        (
            "date not YYYY-MM-DD",
            edit(BASE, "  date: 2026-11-30", "  date: 30.11.2026"),
        ),
        (
            "month 13",
            edit(BASE, "date: 2026-11-28", "date: \"2026-13-01\""),
        ),
        ("zero trials", edit(BASE, "  trials: 4600", "  trials: 0")),
        (
            "fractional trials",
            edit(BASE, "  trials: 4600", "  trials: 4600.5"),
        ),
        (
            "negative events",
            edit(BASE, "  events: 12", "  events: -1"),
        ),
        (
            "counts and file",
            edit(BASE, "  events: 12\n", "  events: 12\n  file: picks.csv\n"),
        ),
        ("events without trials", edit(BASE, "  trials: 4600\n", "")),
        (
            "column without file",
            edit(BASE, "  events: 12\n", "  events: 12\n  column: dropped\n"),
        ),
        (
            "empty arms",
            edit(BASE, "  trials: 4600\n  events: 12\n", "  arms: []\n"),
        ),
        (
            "arm without events",
            edit(
                BASE,
                "  trials: 4600\n  events: 12\n",
                "  arms:\n    - {name: a, trials: 5}\n",
            ),
        ),
        (
            "binary outcome with a summary",
            edit(BASE, "  trials: 4600\n  events: 12\n", SUMMARY),
        ),
        (
            "binary arm with a summary",
            edit(
                BASE,
                "  trials: 4600\n  events: 12\n",
                "  arms:\n    - {name: a, n: 40, mean: 0.2, sd: 0.3}\n",
            ),
        ),
        (
            "counts and summary",
            bounded_with("  trials: 400\n  events: 3\n  mean: 1.12\n"),
        ),
        (
            "summary without sd",
            bounded_with("  n: 400\n  mean: 1.12\n"),
        ),
        ("summary n 1", edit(&bounded, "  n: 400", "  n: 1")),
        (
            "summary sd negative",
            edit(&bounded, "  sd: 0.21", "  sd: -0.21"),
        ),
        (
            "arms in two forms",
            bounded_with(
                "  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3}\n    - {name: b, trials: 40, events: 2}\n",
            ),
        ),
        (
            "arm in both forms",
            bounded_with("  arms:\n    - {name: a, n: 40, mean: 1.2, sd: 0.3, events: 2}\n"),
        ),
        (
            "bounded without range",
            edit(&bounded, "  range: [0, 2.5]\n", ""),
        ),
        (
            "range of three numbers",
            edit(&bounded, "  range: [0, 2.5]", "  range: [0, 1, 2.5]"),
        ),
        (
            "bounded with event",
            edit(&bounded, "  unit: m\n", "  unit: m\n  event: gap\n"),
        ),
        (
            "binary with range",
            edit(
                BASE,
                "  event: dropped load           # binary: what a 1 means\n",
                "  event: dropped load\n  range: [0, 1]\n",
            ),
        ),
        (
            "bounded with allowed_events",
            edit(
                &bounded,
                "  pass_probability: 0.9\n",
                "  pass_probability: 0.9\n  allowed_events: [0]\n",
            ),
        ),
        (
            "binary with assumed_sd",
            edit(
                BASE,
                "  assumed_rate: 0.003",
                "  assumed_rate: 0.003\n  assumed_sd: 0.1",
            ),
        ),
        (
            "assumed rate 0",
            edit(BASE, "  assumed_rate: 0.003", "  assumed_rate: 0"),
        ),
        (
            "pass probability 90",
            edit(BASE, "  pass_probability: 0.9", "  pass_probability: 90"),
        ),
        (
            "allowed events repeated",
            edit(
                BASE,
                "  allowed_events: [0, 1, 2, 3]",
                "  allowed_events: [0, 1, 1]",
            ),
        ),
        (
            "m-dependent without m",
            edit(BASE, "  model: independent ", "  model: m-dependent "),
        ),
        (
            "m with independent model",
            edit(
                BASE,
                "  model: independent            # independent | clustered | martingale | m-dependent\n",
                "  model: independent\n  m: 2\n",
            ),
        ),
        (
            "m 0",
            edit(
                BASE,
                "  model: independent            # independent | clustered | martingale | m-dependent\n",
                "  model: m-dependent\n  m: 0\n",
            ),
        ),
        (
            "clustered with inline counts",
            edit(BASE, "  model: independent ", "  model: clustered "),
        ),
        (
            "clustered file without cluster_column",
            edit(
                &edit(
                    BASE,
                    "  trials: 4600\n  events: 12\n",
                    "  file: picks.csv\n",
                ),
                "  model: independent ",
                "  model: clustered ",
            ),
        ),
        (
            "cluster_column with independent model",
            edit(
                BASE,
                "  trials: 4600\n  events: 12\n",
                "  file: picks.csv\n  cluster_column: tote\n",
            ),
        ),
        (
            "anytime with planned",
            edit(BASE, "  mode: planned", "  mode: anytime"),
        ),
        (
            "zero planned looks",
            edit(BASE, "  planned: 1", "  planned: 0"),
        ),
        (
            "two weights for the default single look",
            edit(
                BASE,
                "  planned: 1\n  spending: equal",
                "  spending: [1, 2]",
            ),
        ),
        (
            "zero weight",
            edit(
                BASE,
                "  planned: 1\n  spending: equal",
                "  planned: 2\n  spending: [1, 0]",
            ),
        ),
        (
            "spending misspelt",
            edit(BASE, "  spending: equal", "  spending: equl"),
        ),
        (
            "compare repeated",
            edit(
                BASE,
                "  compare: [chernoff-kl, hoeffding]",
                "  compare: [hoeffding, hoeffding]",
            ),
        ),
        (
            "compare not a list",
            edit(
                BASE,
                "  compare: [chernoff-kl, hoeffding]",
                "  compare: hoeffding",
            ),
        ),
        (
            "attestation without by",
            edit(
                BASE,
                "{by: Test lead, date: 2026-11-28, note: free text}",
                "{date: 2026-11-28}",
            ),
        ),
        (
            "signature without meaning",
            edit(
                BASE,
                "  - {role: Author, name: free text, meaning: authored}",
                "  - {role: Author}",
            ),
        ),
        (
            "embed_data yes",
            edit(BASE, "embed_data: auto", "embed_data: yes"),
        ),
        (
            "embed_data quoted true",
            edit(BASE, "embed_data: auto", "embed_data: \"true\""),
        ),
        (
            "empty template",
            edit(BASE, "  template: default", "  template: \"\""),
        ),
    ]
}

/// Refused by the loader and, by design, not by the schema: rules JSON Schema cannot state
/// (relations between values, YAML 1.1 readings). Each is named in the schema's `$comment`.
fn loader_only_specs() -> Vec<(&'static str, &'static str, String)> {
    let bounded = bounded_with(SUMMARY);
    vec![
        (
            "events above trials",
            "events at most trials",
            edit(BASE, "  events: 12", "  events: 4601"),
        ),
        (
            "limit outside the range",
            "inside the declared range",
            edit(&bounded, "  limit: 0.01", "  limit: 3"),
        ),
        (
            "sd above what the range allows",
            "no larger than the range allows",
            edit(&bounded, "  sd: 0.21", "  sd: 1.3"),
        ),
        (
            "duplicate arm names",
            "unique arm names",
            edit(
                BASE,
                "  trials: 4600\n  events: 12\n",
                "  arms:\n    - {name: a, trials: 5, events: 1}\n    - {name: a, trials: 5, events: 2}\n",
            ),
        ),
        (
            "weights not matching planned",
            "one spending weight per planned look",
            edit(
                BASE,
                "  planned: 1\n  spending: equal",
                "  planned: 3\n  spending: [1, 2]",
            ),
        ),
        (
            "no such day",
            "calendar days that exist",
            edit(BASE, "  date: 2026-11-30", "  date: \"2026-02-30\""),
        ),
        (
            "YAML 1.1 boolean as text",
            "YAML 1.1 booleans",
            edit(BASE, "  id: VER-0117 ", "  id: no "),
        ),
    ]
}

struct Verdict {
    valid: bool,
    errors: Vec<String>,
}

/// Validates each text with the reference validator; `None` when it cannot run here.
fn validate(texts: &[(String, String)]) -> Option<Vec<(String, Verdict)>> {
    let dir = tempfile::tempdir().expect("tempdir");
    let schema_path = dir.path().join("schema.json");
    let schema_text = serde_json::to_string_pretty(&schema()).expect("serialise");
    std::fs::write(&schema_path, schema_text).expect("write schema");
    let mut args = vec![schema_path.into_os_string()];
    for (i, (_, text)) in texts.iter().enumerate() {
        let p = dir.path().join(format!("spec-{i:03}.yaml"));
        std::fs::write(&p, text).expect("write spec");
        args.push(p.into_os_string());
    }
    let refs: Vec<&std::ffi::OsStr> = args.iter().map(|a| a.as_os_str()).collect();
    let out = python::run("check_schema.py", &refs)?;
    let stdout = String::from_utf8(out.stdout).expect("UTF-8");
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines.len(), texts.len(), "{stdout}");
    Some(
        lines
            .iter()
            .zip(texts)
            .map(|(line, (name, _))| {
                let v: Value = serde_json::from_str(line).expect("one JSON object per line");
                let errors = v["errors"]
                    .as_array()
                    .map(|a| {
                        a.iter()
                            .filter_map(|e| e.as_str().map(str::to_owned))
                            .collect()
                    })
                    .unwrap_or_default();
                (
                    name.clone(),
                    Verdict {
                        valid: v["valid"] == Value::Bool(true),
                        errors,
                    },
                )
            })
            .collect(),
    )
}

#[test]
fn shipped_and_valid_specs_validate() {
    let mut texts: Vec<(String, String)> = shipped_specs()
        .iter()
        .map(|p| {
            let name = p.strip_prefix(root()).unwrap_or(p).display().to_string();
            (name, std::fs::read_to_string(p).expect("read spec"))
        })
        .collect();
    texts.extend(valid_specs().into_iter().map(|(n, t)| (n.to_owned(), t)));
    for (name, text) in &texts {
        if let Err(e) = parse("study.yaml", text) {
            panic!("the loader refuses `{name}`:\n{e}");
        }
    }
    let Some(verdicts) = validate(&texts) else {
        return;
    };
    let refused: Vec<String> = verdicts
        .iter()
        .filter(|(_, v)| !v.valid)
        .map(|(n, v)| format!("{n}: {}", v.errors.join("; ")))
        .collect();
    assert!(
        refused.is_empty(),
        "the schema refuses specs the loader accepts:\n{}",
        refused.join("\n")
    );
}

#[test]
fn broken_specs_are_refused_by_both() {
    let texts: Vec<(String, String)> = broken_specs()
        .into_iter()
        .map(|(n, t)| (n.to_owned(), t))
        .collect();
    for (name, text) in &texts {
        assert!(
            parse("study.yaml", text).is_err(),
            "the loader accepts `{name}`"
        );
    }
    let Some(verdicts) = validate(&texts) else {
        return;
    };
    let accepted: Vec<&str> = verdicts
        .iter()
        .filter(|(_, v)| v.valid)
        .map(|(n, _)| n.as_str())
        .collect();
    assert!(
        accepted.is_empty(),
        "the schema accepts specs the loader refuses: {accepted:?}"
    );
}

#[test]
fn what_only_the_loader_checks_is_documented() {
    let comment = schema()["$comment"].as_str().unwrap_or_default().to_owned();
    let cases = loader_only_specs();
    for (name, words, text) in &cases {
        assert!(
            parse("study.yaml", text).is_err(),
            "the loader accepts `{name}`"
        );
        assert!(
            comment.contains(words),
            "`{words}` ({name}) is not in the schema's $comment"
        );
    }
    let texts: Vec<(String, String)> = cases
        .iter()
        .map(|(n, _, t)| ((*n).to_owned(), t.clone()))
        .collect();
    let Some(verdicts) = validate(&texts) else {
        return;
    };
    for (name, v) in verdicts {
        // If this fails, the schema has learnt the rule: drop it from $comment and move the
        // case to broken_specs.
        assert!(
            v.valid,
            "`{name}` is now refused by the schema too: {:?}",
            v.errors
        );
    }
}

/// The keys the loader allows in a section, read from its own message for an unknown key.
fn loader_keys(text: &str) -> BTreeSet<String> {
    let e = parse("study.yaml", text).expect_err("unknown key");
    let list = e
        .message
        .split_once("the keys allowed here are ")
        .map(|(_, l)| l.to_owned())
        .unwrap_or_else(|| panic!("no key list in: {e}"));
    list.split('`')
        .skip(1)
        .step_by(2)
        .map(str::to_owned)
        .collect()
}

fn schema_keys(schema: &Value, pointer: &str) -> BTreeSet<String> {
    let mut keys = BTreeSet::new();
    let mut collect = |v: &Value| {
        if let Some(m) = v.get("properties").and_then(Value::as_object) {
            keys.extend(m.keys().cloned());
        }
    };
    let at = schema
        .pointer(pointer)
        .unwrap_or_else(|| panic!("{pointer}"));
    collect(at);
    // `data` lists its keys in the branches of its one-of.
    for branch in at
        .get("oneOf")
        .and_then(Value::as_array)
        .into_iter()
        .flatten()
    {
        if let Some(r) = branch.get("$ref").and_then(Value::as_str) {
            collect(schema.pointer(r.trim_start_matches('#')).expect("ref"));
        }
    }
    keys
}

#[test]
fn schema_keys_match_the_loader() {
    let s = schema();
    // BASE with an unknown key `zzz` added after `anchor`, indented into its section.
    let unknown =
        |indent: &str, anchor: &str| edit(BASE, anchor, &format!("{anchor}{indent}zzz: 1\n"));
    let cases = [
        ("", unknown("", "  embed_data: auto\n")),
        (
            "/properties/study",
            unknown("  ", "  description: free text\n"),
        ),
        ("/properties/claim", unknown("  ", "  scope: each\n")),
        (
            "/properties/outcome",
            unknown(
                "  ",
                "  event: dropped load           # binary: what a 1 means\n",
            ),
        ),
        ("/properties/data", unknown("  ", "  events: 12\n")),
        (
            "/properties/dependence",
            unknown(
                "  ",
                "  rationale: free text          # printed in the checklist\n",
            ),
        ),
        (
            "/properties/looks",
            unknown("  ", "  ledger: study.ledger.jsonl\n"),
        ),
        (
            "/properties/method",
            unknown("  ", "  compare: [chernoff-kl, hoeffding]\n"),
        ),
        (
            "/properties/plan",
            unknown("  ", "  allowed_events: [0, 1, 2, 3]\n"),
        ),
        ("/properties/report", unknown("  ", "  template: default\n")),
    ];
    for (pointer, text) in cases {
        let expected = loader_keys(&text);
        assert_eq!(schema_keys(&s, pointer), expected, "keys of `{pointer}`");
    }
    let arm = edit(
        BASE,
        "  trials: 4600\n  events: 12\n",
        "  arms:\n    - {name: a, trials: 5, events: 1, zzz: 1}\n",
    );
    let mut arm_keys = schema_keys(&s, "/$defs/arm-counts");
    arm_keys.extend(schema_keys(&s, "/$defs/arm-summary"));
    assert_eq!(arm_keys, loader_keys(&arm));
    let att = edit(BASE, "note: free text}", "note: free text, zzz: 1}");
    assert_eq!(
        schema_keys(&s, "/properties/attestations/additionalProperties"),
        loader_keys(&att)
    );
    let sig = edit(BASE, "meaning: authored}", "meaning: authored, zzz: 1}");
    assert_eq!(
        schema_keys(&s, "/properties/signatures/items"),
        loader_keys(&sig)
    );
}

#[test]
fn identity_and_determinism() {
    let s = schema();
    assert_eq!(s["$schema"], "https://json-schema.org/draft/2020-12/schema");
    assert_eq!(s["$id"], surety::spec::SCHEMA_ID);
    assert_eq!(s["properties"]["surety"]["const"], 1);
    let a = serde_json::to_vec(&s).expect("serialise");
    let b = serde_json::to_vec(&schema()).expect("serialise");
    assert_eq!(a, b);
}
