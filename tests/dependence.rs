//! Dependence models: which methods each allows, what they compute, and — by simulation — that
//! analysing cluster means keeps its coverage where treating tied trials as independent loses it.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::path::Path;
use surety::analysis::{self, Context, model::Analysis};

fn context() -> Context {
    Context {
        date: surety::provenance::resolve_date(Some((2026, 12, 1)), None, 0).unwrap(),
        spec_name: "study.yaml".into(),
        spec_sha256: String::new(),
        template_sha256: String::new(),
        fonts_sha256: String::new(),
        looks: analysis::looks::LookContext::unregistered(),
    }
}

/// Parse `yaml` (with data files under `base`) and analyse it, or return the error text.
fn analyse_in(base: &Path, yaml: &str) -> Result<Analysis, String> {
    let spec = surety::spec::parse("study.yaml", yaml).map_err(|e| e.to_string())?;
    let data = match surety::data::inline(&spec) {
        Some(d) => d,
        None => surety::data::read(&spec, base, true, &mut |_, _| {})
            .expect("a data file")
            .map_err(|e| e.to_string())?,
    };
    analysis::analyse(&spec, &data, &context()).map_err(|e| e.to_string())
}

fn analyse(yaml: &str) -> Result<Analysis, String> {
    analyse_in(Path::new("."), yaml)
}

const HEAD: &str = "surety: 1
study: {id: D-1, title: dependence}
claim: {quantity: failure rate, side: upper, limit: 0.2, confidence: 0.95}
outcome: {type: binary, event: failure}
";

// METHODS.md §10 worked example (computed there): m = 4, n = 1000, mean 0.01, δ = 0.05 gives
// U = 0.096540919130 for Hoeffding in Janson's form.
#[test]
fn m_dependent_trials_use_janson_hoeffding() {
    let a = analyse(&format!(
        "{HEAD}data: {{trials: 1000, events: 10}}\ndependence: {{model: m-dependent, m: 4}}\n"
    ))
    .unwrap();
    assert_eq!(a.methods[0].id, "hoeffding");
    assert!(a.methods[0].citation.contains("Janson"));
    let u = a.arms[0].primary.upper.unwrap();
    assert!(u >= 0.096540919130 && (u - 0.096540919130) < 1e-11, "{u}");
    assert_eq!(a.dependence.model, "m-dependent");
    assert!(a.checklist.iter().any(|c| c.id == "m-dependent-trials"));
    assert!(!a.checklist.iter().any(|c| c.id == "independent-trials"));
}

#[test]
fn a_primary_the_model_rules_out_is_refused_with_the_valid_ones() {
    let err = analyse(&format!(
        "{HEAD}data: {{trials: 1000, events: 10}}\ndependence: {{model: m-dependent, m: 2}}\n\
         method: {{primary: exact}}\n"
    ))
    .unwrap_err();
    assert!(
        err.contains("`exact` cannot be the primary method"),
        "{err}"
    );
    assert!(err.contains("valid methods here: hoeffding"), "{err}");
    // A fixed-n primary cannot be read at any time.
    let err = analyse(&format!(
        "{HEAD}data: {{trials: 1000, events: 10}}\nlooks: {{mode: anytime}}\n\
         method: {{primary: exact}}\n"
    ))
    .unwrap_err();
    assert!(err.contains("fixed in advance"), "{err}");
    assert!(err.contains("beta-binomial-mixture"), "{err}");
}

#[test]
fn compare_methods_the_model_rules_out_are_omitted_with_a_note() {
    let a = analyse(
        "surety: 1
study: {id: D-2, title: martingale}
claim: {quantity: mean error, side: upper, limit: 0.6, confidence: 0.95}
outcome: {type: bounded, range: [0, 1]}
data: {n: 400, mean: 0.4, sd: 0.2}
dependence: {model: martingale}
method: {primary: hoeffding, compare: [bernstein-empirical, chernoff-kl]}
",
    )
    .unwrap();
    assert_eq!(a.arms[0].compare.len(), 1);
    assert_eq!(a.arms[0].compare[0].method, "chernoff-kl");
    assert_eq!(a.omitted_methods.len(), 1);
    assert_eq!(a.omitted_methods[0].method, "bernstein-empirical");
    assert!(a.omitted_methods[0].reason.contains("martingale"));
}

/// `clusters` clusters of `size` trials, every trial of a cluster sharing one Bernoulli(p)
/// outcome: the fully tied case, where a cluster carries the information of one trial.
fn tied_csv(rng: &mut ChaCha8Rng, clusters: usize, size: usize, p: f64) -> String {
    let mut text = String::from("fixture,failed\n");
    for c in 0..clusters {
        let v = u8::from(rng.random::<f64>() < p);
        for _ in 0..size {
            text.push_str(&format!("F{c},{v}\n"));
        }
    }
    text
}

// Tied trials: 30 fixtures of 20 identical trials each, true rate 0.1. Treated as 600
// independent trials the exact bound misses the true rate far more often than δ (a miss needs
// only 2 or fewer failing fixtures, probability 0.41 for Bin(30, 0.1)); run on the 30 fixture
// means it covers. Both directions are asserted, so the test can fail either way.
#[test]
fn tied_trials_keep_coverage_only_when_clustered() {
    let dir = tempfile::tempdir().unwrap();
    let (p, delta, replicates) = (0.1, 0.05, 300);
    let spec = |model: &str| {
        format!(
            "surety: 1
study: {{id: D-3, title: tied trials}}
claim: {{quantity: failure rate, side: upper, limit: 0.2, confidence: 0.95}}
outcome: {{type: binary, event: failure}}
data: {{file: trials.csv, column: failed{}}}
dependence: {{model: {model}}}
",
            if model == "clustered" {
                ", cluster_column: fixture"
            } else {
                ""
            }
        )
    };
    let (clustered, independent) = (spec("clustered"), spec("independent"));
    let mut rng = ChaCha8Rng::seed_from_u64(20261202);
    let (mut miss_clustered, mut miss_independent) = (0u32, 0u32);
    for _ in 0..replicates {
        std::fs::write(dir.path().join("trials.csv"), tied_csv(&mut rng, 30, 20, p)).unwrap();
        let a = analyse_in(dir.path(), &clustered).unwrap();
        assert_eq!(a.arms[0].n, 30);
        assert_eq!(a.arms[0].nominal.as_ref().unwrap().trials, 600);
        if a.arms[0].primary.upper.unwrap() < p {
            miss_clustered += 1;
        }
        let b = analyse_in(dir.path(), &independent).unwrap();
        assert_eq!(b.arms[0].n, 600);
        if b.arms[0].primary.upper.unwrap() < p {
            miss_independent += 1;
        }
    }
    let rate = |m: u32| f64::from(m) / f64::from(replicates);
    // Allowance: δ plus three binomial standard errors at δ for this many replicates.
    let slack = 3.0 * (delta * (1.0 - delta) / f64::from(replicates)).sqrt();
    assert!(
        rate(miss_clustered) <= delta + slack,
        "clustered miss rate {}",
        rate(miss_clustered)
    );
    assert!(
        rate(miss_independent) > 4.0 * delta,
        "independent miss rate {}",
        rate(miss_independent)
    );
}

#[test]
fn clustered_results_state_nominal_and_effective_sizes() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("trials.csv"),
        "lot,failed\nL1,0\nL1,0\nL1,1\nL2,0\nL3,1\nL3,1\n",
    )
    .unwrap();
    let a = analyse_in(
        dir.path(),
        "surety: 1
study: {id: D-4, title: lots}
claim: {quantity: failure rate, side: upper, limit: 0.9, confidence: 0.9}
outcome: {type: binary, event: failure}
data: {file: trials.csv, column: failed, cluster_column: lot}
dependence: {model: clustered}
",
    )
    .unwrap();
    let arm = &a.arms[0];
    let nominal = arm.nominal.as_ref().unwrap();
    // Counted by hand from the six rows above: 3 lots of 3, 1 and 2 trials, 3 failures.
    assert_eq!((arm.n, nominal.trials, nominal.events), (3, 6, Some(3)));
    assert_eq!((nominal.smallest_cluster, nominal.largest_cluster), (1, 3));
    // Mean over clusters: (1/3 + 0 + 1)/3 = 4/9, not the trial-level 1/2.
    assert!((arm.mean - 4.0 / 9.0).abs() < 1e-12, "{}", arm.mean);
    // auto for pass/fail trials in clusters: Chernoff-kl on the cluster means.
    assert_eq!(a.methods[0].id, "chernoff-kl");
    assert!(a.checklist.iter().any(|c| c.id == "independent-clusters"));
    assert!(a.dependence.estimand.contains("over clusters"));
}
