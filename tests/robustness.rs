//! The spec loader and the analysis never panic, whatever bytes they are given: every input
//! either analyses or yields a located error (DESIGN.md §3: no panics on user input).

use proptest::prelude::*;

const VALID: &str = "surety: 1
study:
  id: R-1
  title: Robustness
claim:
  quantity: failure rate
  side: upper
  limit: 0.01
  confidence: 0.95
  scope: all
outcome:
  type: binary
data:
  arms:
    - {name: a, trials: 1000, events: 2}
    - {name: b, trials: 500, events: 0}
";

fn analyse(text: &str) {
    if let Ok(spec) = surety::spec::parse("r.yaml", text) {
        let ctx = surety::analysis::Context {
            date: surety::provenance::resolve_date(Some((2026, 1, 1)), None, 0).unwrap(),
            spec_name: "r.yaml".into(),
            spec_sha256: String::new(),
            template_sha256: String::new(),
            fonts_sha256: String::new(),
            looks: surety::analysis::looks::LookContext::unregistered(),
        };
        let data = surety::data::inline(&spec).unwrap_or_default();
        if let Ok(a) = surety::analysis::analyse(&spec, &data, &ctx) {
            for arm in &a.arms {
                let u = arm.primary.upper.unwrap();
                let l = arm.primary.lower.unwrap();
                assert!(
                    u.is_finite() && l.is_finite() && (0.0..=1.0).contains(&u),
                    "{u} {l}"
                );
            }
        }
    } else if let Err(e) = surety::spec::parse("r.yaml", text) {
        // Every error from text that was read carries a location.
        assert!(e.location.is_some(), "unlocated error: {e}");
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,200}") {
        analyse(&text);
    }

    #[test]
    fn edited_specs_never_panic(pos in 0usize..VALID.len(), len in 0usize..6, insert in "[ -~\\n\\t]{0,6}") {
        // VALID is ASCII, so every byte offset is a character boundary.
        let start = pos;
        let end = (start + len).min(VALID.len());
        let mut text = String::from(&VALID[..start]);
        text.push_str(&insert);
        text.push_str(&VALID[end..]);
        analyse(&text);
    }

    #[test]
    fn any_counts_analyse_or_are_refused(trials in any::<u64>(), events in any::<u64>()) {
        let text = VALID.replace("trials: 1000, events: 2", &format!("trials: {trials}, events: {events}"));
        analyse(&text);
    }
}
