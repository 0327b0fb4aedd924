//! Sample-size planning (src/plan) against published practice, the reference script and bad
//! inputs.

use serde_json::Value;
use surety::bounds::{chernoff_kl, exact, hoeffding};
use surety::plan::model::{BinaryRequest, BoundedRequest, binary_plan, bounded_plan};
use surety::plan::operating::sawtooth;
use surety::plan::simulate::{SimConfig, pass_fraction, simulate_n_with};
use surety::plan::{
    AssumedLaw, AtObservedRate, LawKind, MAX_TRIALS, PlanError, PlanResults, Unreachable,
    allowed_events, bounded_sizes, exact_test_passes, min_trials, operating, pass_probability,
    simulate_n, standard_table, still_needed, target_trials,
};

/// Fixture written by tests/reference/plan_reference.py (mpmath at mp.dps = 50 with exact
/// binomial sums, fractions for decimal ties, scipy brute-force scans rechecked with mpmath).
const FIXTURE: &str = include_str!("reference/plan_values.json");

fn fixture() -> Value {
    let root: Value = serde_json::from_str(FIXTURE).expect("fixture is JSON");
    assert!(
        root["source"].as_str().unwrap_or("").contains("mpmath"),
        "fixture names its source"
    );
    root
}

fn rows<'a>(root: &'a Value, key: &str) -> &'a Vec<Value> {
    let rows = root[key]
        .as_array()
        .unwrap_or_else(|| panic!("fixture section {key}"));
    assert!(!rows.is_empty(), "fixture section {key} is empty");
    rows
}

fn f(v: &Value) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("number expected, found {v}"))
}

fn u(v: &Value) -> u64 {
    v.as_u64()
        .unwrap_or_else(|| panic!("whole number expected, found {v}"))
}

fn rel(got: f64, want: f64) -> f64 {
    if got == want {
        0.0
    } else {
        ((got - want) / want).abs()
    }
}

// ---------------------------------------------------------------------------------------------
// Demonstration plans
// ---------------------------------------------------------------------------------------------

#[test]
fn success_run_rule_of_the_trade() {
    // Zero-failure plans at 95 % confidence for 90 %, 95 % and 99 % reliability: 29, 59 and 299
    // trials (common practice; 29 also in METHODS §14.1 as the widely quoted success-run rule).
    assert_eq!(min_trials(0, 0.10, 0.05), Ok(29));
    assert_eq!(min_trials(0, 0.05, 0.05), Ok(59));
    assert_eq!(min_trials(0, 0.01, 0.05), Ok(299));
}

#[test]
fn standard_table_matches_reference() {
    let root = fixture();
    let want = rows(&root, "standard");
    let got = standard_table().expect("standard table");
    assert_eq!(got.len(), want.len());
    for (g, w) in got.iter().zip(want) {
        // Values: tests/reference/plan_reference.py, section "standard" (mpmath sums).
        assert_eq!(u64::from(g.confidence_percent), u(&w["confidence_percent"]));
        assert_eq!(
            u64::from(g.reliability_percent),
            u(&w["reliability_percent"])
        );
        assert_eq!(g.delta, f(&w["delta"]));
        assert_eq!(g.limit, f(&w["limit"]));
        let wt: Vec<u64> = w["trials"].as_array().unwrap().iter().map(u).collect();
        assert_eq!(
            g.trials, wt,
            "{}/{}",
            g.confidence_percent, g.reliability_percent
        );
    }
}

#[test]
fn floating_tie_passes() {
    // METHODS §12: confidence 0.3439 and reliability 0.9 need exactly 4 trials (0.9^4 = 0.6561),
    // but ln(1 − C)/ln R evaluates to 4.000000000000001 in f64, so a plain ceiling says 5.
    let naive = (0.6561f64.ln() / 0.9f64.ln()).ceil();
    assert_eq!(naive, 5.0, "the pitfall this test guards against");
    assert_eq!(min_trials(0, 0.1, 0.6561), Ok(4));
    assert!(exact_test_passes(0, 4, 0.1, 0.6561));
    assert!(!exact_test_passes(0, 3, 0.1, 0.6561));
    // 0.9^3 = 0.729: here the doubles land on the failing side of the tie, by one unit in the
    // last place, so a comparison without the tie allowance would ask for a fourth trial.
    assert!(
        3.0 * (-0.1f64).ln_1p() > 0.729f64.ln(),
        "the rounding this test relies on"
    );
    assert_eq!(min_trials(0, 0.1, 0.729), Ok(3));

    // Exact decimal ties from tests/reference/plan_reference.py, section "ties" (rational
    // arithmetic on the decimals as written; a tie passes).
    let root = fixture();
    for w in rows(&root, "ties") {
        let label = w["label"].as_str().unwrap();
        let got = min_trials(u(&w["events"]), f(&w["limit"]), f(&w["delta"]));
        assert_eq!(got, Ok(u(&w["trials"])), "{label}");
    }
}

#[test]
fn demonstration_matches_reference_at_extremes() {
    let root = fixture();
    for w in rows(&root, "demonstration") {
        // Values: tests/reference/plan_reference.py, section "demonstration" (mpmath sums).
        let (c, l, d) = (u(&w["events"]), f(&w["limit"]), f(&w["delta"]));
        let n = u(&w["trials"]);
        assert_eq!(
            min_trials(c, l, d),
            Ok(n),
            "c = {c}, limit = {l}, delta = {d}"
        );
        assert_eq!(allowed_events(n, l, d), Ok(Some(c)), "c = {c}, limit = {l}");
        if n > 1 {
            assert_eq!(
                allowed_events(n - 1, l, d),
                Ok(c.checked_sub(1)),
                "c = {c}, limit = {l}, n - 1"
            );
        }
    }
}

#[test]
fn demonstration_agrees_with_the_exact_bound() {
    // U_CP(c, n, δ) ≤ L exactly when P(Bin(n, L) ≤ c) ≤ δ (METHODS §1), so the plans must sit
    // where the exact bound crosses the limit: at most a rounding above it at n, above it at n − 1.
    let root = fixture();
    let mut cases: Vec<(u64, f64, f64)> = rows(&root, "demonstration")
        .iter()
        .map(|w| (u(&w["events"]), f(&w["limit"]), f(&w["delta"])))
        .collect();
    for l in [0.3, 0.1, 0.02, 1e-3, 1e-5] {
        for d in [0.2, 0.05, 1e-3, 1e-8] {
            for c in [0, 1, 2, 5, 13] {
                cases.push((c, l, d));
            }
        }
    }
    for (c, l, d) in cases {
        let n = min_trials(c, l, d).unwrap();
        let at = exact::upper(c, n, d);
        assert!(
            at <= l * (1.0 + 1e-9),
            "c = {c}, L = {l}, δ = {d}: U(n = {n}) = {at}"
        );
        if n > c + 1 {
            let before = exact::upper(c, n - 1, d);
            assert!(before > l, "c = {c}, L = {l}, δ = {d}: U(n − 1) = {before}");
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Operating characteristics
// ---------------------------------------------------------------------------------------------

#[test]
fn operating_curves_match_reference() {
    let root = fixture();
    for w in rows(&root, "operating") {
        // Values: tests/reference/plan_reference.py, section "operating" (mpmath sums).
        let (n, l, d) = (u(&w["trials"]), f(&w["limit"]), f(&w["delta"]));
        let o = operating(n, l, d, None).unwrap();
        assert_eq!(o.allowed_events, u(&w["allowed_events"]), "n = {n}");
        assert!(
            rel(o.consumer_risk, f(&w["consumer_risk"])) < 1e-10,
            "n = {n}"
        );
        // The consumer's risk is at most δ (up to the tie band exp(1e-12)).
        assert!(o.consumer_risk <= d * (1.0 + 2e-12), "n = {n}");
        for p in w["points"].as_array().unwrap() {
            let (rate, want) = (f(&p[0]), f(&p[1]));
            let got = pass_probability(n, l, d, rate).unwrap();
            let err = if want < 1e-300 {
                (got - want).abs()
            } else {
                rel(got, want)
            };
            assert!(err < 1e-10, "n = {n}, rate = {rate}: {got} vs {want}");
        }
    }
}

#[test]
fn operating_curve_is_fit_for_a_plot() {
    for &(n, l, d, a) in &[
        (46u64, 0.1, 0.05, 0.02),
        (473, 0.01, 0.05, 0.002),
        (5000, 0.2, 0.01, 0.15),
        (3_000_000, 1e-6, 0.05, 0.0),
    ] {
        let o = operating(n, l, d, Some(a)).unwrap();
        let curve = &o.curve;
        assert!(curve.len() >= 40, "n = {n}: {} points", curve.len());
        assert_eq!(curve[0], [0.0, 1.0], "starts at rate 0, sure pass");
        assert!(
            curve
                .windows(2)
                .all(|w| w[0][0] < w[1][0] && w[0][1] >= w[1][1])
        );
        assert!(
            curve.last().unwrap()[1] < 1e-4,
            "n = {n}: the curve runs to the far tail"
        );
        assert!(curve.iter().any(|p| p[0] == l), "limit is a point");
        assert!(
            a == 0.0 || curve.iter().any(|p| p[0] == a),
            "assumed rate is a point"
        );
        let at_limit = curve.iter().find(|p| p[0] == l).unwrap()[1];
        assert_eq!(at_limit, o.consumer_risk);
        // Pass + fail = 1 (the two tails are computed separately).
        let pass = o.pass_probability_at_assumed.unwrap();
        let fail = o.producer_risk.unwrap();
        assert!((pass + fail - 1.0).abs() < 1e-12, "n = {n}");
        // Points are crowded where the curve falls: at least 15 between 0.99 and 0.01.
        let steep = curve.iter().filter(|p| p[1] < 0.99 && p[1] > 0.01).count();
        assert!(steep >= 15, "n = {n}: {steep} points on the steep part");
    }
}

#[test]
fn sawtooth_and_held_sample_size_match_brute_force() {
    let root = fixture();
    let mut with_dip = 0;
    for w in rows(&root, "sawtooth") {
        // Values: tests/reference/plan_reference.py, section "sawtooth": a scan of every n up
        // to n_max (at least three times the answer) with scipy, rechecked with mpmath.
        let (l, d, a, t) = (
            f(&w["limit"]),
            f(&w["delta"]),
            f(&w["assumed_rate"]),
            f(&w["target"]),
        );
        let case = format!("L = {l}, δ = {d}, p0 = {a}, t = {t}");
        let got = target_trials(l, d, a, t).unwrap();
        assert_eq!(got.first_reached, u(&w["first_reached"]), "{case}");
        assert_eq!(got.trials, u(&w["held"]), "{case}");
        assert_eq!(
            got.allowed_events,
            u(&w["allowed_events_at_held"]),
            "{case}"
        );
        assert!(got.pass_probability_at_trials >= t);
        assert!(got.pass_probability_at_first_reached >= t);
        // The brute-force scan covers everything the search settled exactly, and beyond.
        assert!(
            got.proven_from <= u(&w["n_max"]),
            "{case}: proven from {}",
            got.proven_from
        );
        if got.first_reached < got.trials {
            with_dip += 1;
        }
        for s in w["samples"].as_array().unwrap() {
            let n = u(&s[0]);
            let point = &sawtooth(l, d, a, n, n).unwrap()[0];
            let want_c = s[1].as_i64().unwrap();
            assert_eq!(
                point.allowed_events.map_or(-1, |c| c as i64),
                want_c,
                "{case}, n = {n}"
            );
            let want_p = f(&s[2]);
            assert!(
                rel(point.pass_probability, want_p) < 1e-10,
                "{case}, n = {n}: {} vs {want_p}",
                point.pass_probability
            );
        }
    }
    // The fixture shows the sawtooth: several cases reach the target before they hold it.
    assert!(with_dip >= 4, "{with_dip} cases with first < held");
}

#[test]
fn sawtooth_scan_agrees_with_the_search() {
    // Internal consistency over a long stretch: the held answer is the point after the last
    // dip below the target, and the first answer the first point at or above it.
    let (l, d, a, t) = (0.05, 0.1, 0.03, 0.5);
    let got = target_trials(l, d, a, t).unwrap();
    let scan = sawtooth(l, d, a, 1, 3 * got.proven_from).unwrap();
    let first = scan
        .iter()
        .find(|p| p.pass_probability >= t)
        .unwrap()
        .trials;
    let last_dip = scan
        .iter()
        .rev()
        .find(|p| p.pass_probability < t)
        .unwrap()
        .trials;
    assert_eq!(got.first_reached, first);
    assert_eq!(got.trials, last_dip + 1);
    // c(n) never falls and never steps by more than one.
    assert!(scan.windows(2).all(|w| {
        let (x, y) = (w[0].allowed_events, w[1].allowed_events);
        match (x, y) {
            (None, _) => true,
            (Some(x), Some(y)) => y == x || y == x + 1,
            (Some(_), None) => false,
        }
    }));
}

#[test]
fn target_is_found_quickly_near_the_limit() {
    // Assumed rate 99 % of the limit: about 8.5 million trials (normal approximation
    // (z_0.95 + z_0.9)^2 p(1 − p)/(L − p)^2 ≈ 8.6e6, common practice), with c(n) in the 80 000s.
    let got = target_trials(0.01, 0.05, 0.0099, 0.9).unwrap();
    assert!(
        (8.0e6..9.0e6).contains(&(got.trials as f64)),
        "{}",
        got.trials
    );
    assert!(got.first_reached <= got.trials);
    assert!(got.pass_probability_at_trials >= 0.9);
    // Just before `trials` the chance dips below the target (else `trials` would not be least).
    let before = sawtooth(0.01, 0.05, 0.0099, got.trials - 1, got.trials - 1).unwrap();
    assert!(before[0].pass_probability < 0.9);
}

// ---------------------------------------------------------------------------------------------
// Trials still needed
// ---------------------------------------------------------------------------------------------

#[test]
fn still_needed_matches_reference() {
    let root = fixture();
    for w in rows(&root, "still_needed") {
        // Values: tests/reference/plan_reference.py, section "still_needed" (mpmath
        // demonstration search; scan of N with scipy, rechecked with mpmath).
        let (k, n, l, d) = (
            u(&w["events"]),
            u(&w["trials"]),
            f(&w["limit"]),
            f(&w["delta"]),
        );
        let got = still_needed(k, n, l, d).unwrap();
        assert_eq!(
            got.zero_further_events,
            u(&w["zero_further_events"]),
            "{k}/{n}"
        );
        match (&w["at_observed_rate"], got.at_observed_rate) {
            (
                Value::Null,
                AtObservedRate::Unreachable(Unreachable::ObservedNotBelowLimit { .. }),
            ) => {}
            (m, AtObservedRate::Reached { further, events }) if !m.is_null() => {
                assert_eq!(further, u(m), "{k}/{n}");
                assert_eq!(events, u(&w["at_observed_rate_events"]), "{k}/{n}");
            }
            (m, g) => panic!("{k}/{n}: want {m}, got {g:?}"),
        }
    }
}

#[test]
fn zero_events_so_far_need_the_success_run() {
    // With no events yet, the trials still needed are the success-run plan minus those run:
    // 59 − 20 = 39 at 95 %/95 % (common practice for the 59).
    let s = still_needed(0, 20, 0.05, 0.05).unwrap();
    assert_eq!(s.zero_further_events, 39);
    assert_eq!(s.at_observed_rate.further(), Some(39));
    let done = still_needed(0, 59, 0.05, 0.05).unwrap();
    assert_eq!(done.zero_further_events, 0);
}

// ---------------------------------------------------------------------------------------------
// Bounded outcomes
// ---------------------------------------------------------------------------------------------

#[test]
fn bounded_plug_in_sizes_match_reference() {
    let root = fixture();
    for w in rows(&root, "bounded") {
        // Values: tests/reference/plan_reference.py, section "bounded" (mpmath).
        let law = AssumedLaw::new(f(&w["low"]), f(&w["high"]), f(&w["mean"]), f(&w["sd"])).unwrap();
        let (l, d) = (f(&w["limit"]), f(&w["delta"]));
        let sizes = bounded_sizes(&law, l, d).unwrap();
        let get = |id: &str| sizes.iter().find(|s| s.method == id).unwrap();
        let case = format!("mean {} sd {} limit {l}", law.mean, law.sd);
        assert_eq!(get("hoeffding").trials, u(&w["hoeffding"]), "{case}");
        assert_eq!(get("chernoff-kl").trials, u(&w["chernoff_kl"]), "{case}");
        assert_eq!(
            get("bernstein-empirical").trials,
            u(&w["empirical_bernstein"]),
            "{case}"
        );
        assert_eq!(
            get("bernstein-known-sd").trials,
            u(&w["bernstein"]),
            "{case}"
        );
        assert!(rel(get("hoeffding").closed_form.unwrap(), f(&w["hoeffding_x"])) < 1e-12);
        assert!(
            rel(
                get("chernoff-kl").closed_form.unwrap(),
                f(&w["chernoff_kl_x"])
            ) < 1e-12
        );
    }
}

fn hoeffding_bound(x: &[f64], d: f64) -> f64 {
    let m = x.iter().sum::<f64>() / x.len() as f64;
    hoeffding::upper_mean(m, x.len() as u64, d)
}

fn kl_bound(x: &[f64], d: f64) -> f64 {
    let m = x.iter().sum::<f64>() / x.len() as f64;
    chernoff_kl::upper_mean(m.clamp(0.0, 1.0), x.len() as u64, d)
}

#[test]
fn simulated_median_pass_agrees_with_plug_in() {
    // At the plug-in n the sample mean sits at the assumed mean, so about half of the datasets
    // pass there: the simulated n for a 50 % chance should be within 10 % of it (the plug-in
    // heuristic; its sampling error is a few percent of n with 1000 replications).
    let law = AssumedLaw::new(0.0, 2.5, 1.0, 0.4).unwrap();
    let sizes = bounded_sizes(&law, 1.2, 0.05).unwrap();
    for (id, bound) in [
        ("hoeffding", &hoeffding_bound as &surety::plan::MeanBound),
        ("chernoff-kl", &kl_bound),
    ] {
        let plug = sizes.iter().find(|s| s.method == id).unwrap().trials as f64;
        let sim = simulate_n(bound, &law, 0.5, 0.05, 1.2, 11).unwrap();
        let ratio = sim.trials as f64 / plug;
        assert!(
            (0.9..1.1).contains(&ratio),
            "{id}: simulated {} vs plug-in {plug}",
            sim.trials
        );
        assert!(sim.pass_fraction >= 0.5);
        assert!(sim.pass_fraction_below.unwrap() < 0.5);
        // Reproducible from the seed.
        assert_eq!(simulate_n(bound, &law, 0.5, 0.05, 1.2, 11).unwrap(), sim);
    }
}

#[test]
fn simulated_fraction_matches_the_two_point_law() {
    let root = fixture();
    for w in rows(&root, "two_point") {
        // Values: tests/reference/plan_reference.py, section "two_point" (exact binomial sum
        // for Hoeffding's chance of passing under the two-point law on {0, 1}).
        let (m, l, d, n) = (
            f(&w["mean"]),
            f(&w["limit"]),
            f(&w["delta"]),
            u(&w["trials"]),
        );
        let law = AssumedLaw::new(0.0, 1.0, m, (m * (1.0 - m)).sqrt()).unwrap();
        assert_eq!(law.kind, LawKind::TwoPoint);
        let reps = 4000;
        let got = pass_fraction(&hoeffding_bound, &law, n, d, l, 5, reps).unwrap();
        let want = f(&w["pass_probability"]);
        let se = (want * (1.0 - want) / f64::from(reps)).sqrt();
        assert!(
            (got - want).abs() < 4.0 * se,
            "m = {m}: simulated {got}, exact {want}"
        );
    }
}

#[test]
fn higher_target_needs_more_trials() {
    let law = AssumedLaw::new(0.0, 1.0, 0.1, 0.05).unwrap();
    let cfg = SimConfig {
        replications: 400,
        ..SimConfig::default()
    };
    let half = simulate_n_with(&hoeffding_bound, &law, 0.5, 0.05, 0.15, 3, &cfg).unwrap();
    let most = simulate_n_with(&hoeffding_bound, &law, 0.9, 0.05, 0.15, 3, &cfg).unwrap();
    assert!(
        most.trials > half.trials,
        "{} vs {}",
        most.trials,
        half.trials
    );
    assert!(most.evaluated.windows(2).all(|w| w[0][0] < w[1][0]));
}

// ---------------------------------------------------------------------------------------------
// Bad input
// ---------------------------------------------------------------------------------------------

#[test]
fn pass_probability_outside_the_open_unit_interval_is_refused() {
    for p in [0.0, 1.0, 1.5, -0.1, f64::NAN] {
        let e = target_trials(0.1, 0.05, 0.02, p).unwrap_err();
        assert!(matches!(e, PlanError::PassProbability(_)), "{p}: {e:?}");
        let msg = e.to_string();
        assert!(
            msg.contains("pass_probability") && msg.contains("between 0 and 1"),
            "{msg}"
        );
    }
    let law = AssumedLaw::new(0.0, 1.0, 0.1, 0.05).unwrap();
    let e = simulate_n(&hoeffding_bound, &law, 1.0, 0.05, 0.15, 1).unwrap_err();
    assert!(matches!(e, PlanError::PassProbability(_)));
}

#[test]
fn assumed_rate_at_or_above_the_limit_is_unreachable() {
    for a in [0.1, 0.2] {
        let e = target_trials(0.1, 0.05, a, 0.9).unwrap_err();
        assert!(
            matches!(
                e,
                PlanError::Unreachable(Unreachable::AssumedNotBelowLimit { .. })
            ),
            "{e:?}"
        );
        let msg = e.to_string();
        assert!(msg.contains("no sample size reaches the target"), "{msg}");
        assert!(msg.contains("at most δ = 0.05"), "{msg}");
    }
    assert_eq!(
        target_trials(0.1, 0.05, 1.0, 0.9),
        Err(PlanError::AssumedRate(1.0))
    );
    // The same for a bounded mean.
    let law = AssumedLaw::new(0.0, 10.0, 6.0, 1.0).unwrap();
    let e = bounded_sizes(&law, 5.0, 0.05).unwrap_err();
    assert!(matches!(e, PlanError::Unreachable(_)), "{e:?}");
    // And the plan document records the reason instead of failing.
    let plan = binary_plan(&BinaryRequest {
        limit: 0.1,
        delta: 0.05,
        confidence: 0.95,
        allowed_events: &[],
        assumed_rate: Some(0.15),
        pass_probability: Some(0.9),
        observed: None,
    })
    .unwrap();
    let target = plan.target.unwrap();
    assert_eq!(target.trials, None);
    assert!(target.unreachable.unwrap().contains("not below the limit"));
}

#[test]
fn impossible_sd_is_refused() {
    // Bhatia–Davis: on [0, 1] with mean 0.1 the variance is at most 0.1 · 0.9 = 0.09, sd 0.3.
    let e = AssumedLaw::new(0.0, 1.0, 0.1, 0.31).unwrap_err();
    match e {
        PlanError::AssumedSd { sd, max } => {
            assert_eq!(sd, 0.31);
            assert!((max - 0.3).abs() < 1e-15);
        }
        other => panic!("{other:?}"),
    }
    let msg = e.to_string();
    assert!(
        msg.contains("no distribution on the declared range"),
        "{msg}"
    );
    assert!(msg.contains("largest possible is 0.3"), "{msg}");
    // In data units: range [10, 20], mean 12 → sd at most sqrt(2 · 8) = 4.
    assert!(matches!(
        AssumedLaw::new(10.0, 20.0, 12.0, 4.5),
        Err(PlanError::AssumedSd { .. })
    ));
    assert_eq!(
        AssumedLaw::new(10.0, 20.0, 12.0, 4.0).unwrap().kind,
        LawKind::TwoPoint
    );
    assert_eq!(
        AssumedLaw::new(10.0, 20.0, 12.0, 0.0).unwrap().kind,
        LawKind::Point
    );
    for sd in [-1.0, f64::NAN, f64::INFINITY] {
        assert!(matches!(
            AssumedLaw::new(0.0, 1.0, 0.5, sd),
            Err(PlanError::AssumedSd { .. })
        ));
    }
    // A mean at the end of the range allows only sd = 0.
    assert!(AssumedLaw::new(0.0, 1.0, 0.0, 0.01).is_err());
    assert!(matches!(
        AssumedLaw::new(0.0, 1.0, 1.5, 0.1),
        Err(PlanError::AssumedMean { .. })
    ));
    assert!(matches!(
        AssumedLaw::new(1.0, 1.0, 1.0, 0.0),
        Err(PlanError::Range { .. })
    ));
}

#[test]
fn other_bad_inputs_are_typed_errors() {
    for d in [0.0, 1.0, -0.5, f64::NAN] {
        assert!(
            matches!(min_trials(0, 0.1, d), Err(PlanError::Delta(_))),
            "{d}"
        );
        let e = target_trials(0.1, d, 0.02, 0.9).unwrap_err();
        assert!(e.to_string().contains("δ = 1 − confidence"), "{e}");
    }
    for l in [0.0, 1.0, 1.5, f64::NAN] {
        assert!(
            matches!(min_trials(0, l, 0.05), Err(PlanError::Limit { .. })),
            "{l}"
        );
    }
    assert_eq!(
        still_needed(5, 4, 0.1, 0.05),
        Err(PlanError::EventsExceedTrials {
            events: 5,
            trials: 4
        })
    );
    assert_eq!(still_needed(0, 0, 0.1, 0.05), Err(PlanError::NoTrials));
    let e = operating(20, 0.1, 0.05, None).unwrap_err();
    assert_eq!(
        e,
        PlanError::TooFewTrials {
            trials: 20,
            minimum: 29
        }
    );
    assert!(e.to_string().contains("at least 29 trials"));
    let law = AssumedLaw::new(0.0, 1.0, 0.1, 0.05).unwrap();
    assert!(matches!(
        bounded_sizes(&law, 1.0, 0.05),
        Err(PlanError::Limit { .. })
    ));
    let cfg = SimConfig {
        replications: 0,
        ..SimConfig::default()
    };
    assert_eq!(
        simulate_n_with(&hoeffding_bound, &law, 0.5, 0.05, 0.15, 1, &cfg),
        Err(PlanError::Replications)
    );
}

#[test]
fn beyond_the_cap_is_an_error_not_a_hang() {
    let cap = PlanError::TooManyTrials { cap: MAX_TRIALS };
    // ln(20)/1e-300 trials, and 5 events at a limit of 1e-14: both far beyond 10^15.
    assert_eq!(min_trials(0, 1e-300, 0.05), Err(cap));
    assert_eq!(min_trials(5, 1e-14, 1e-15), Err(cap));
    assert_eq!(still_needed(3, 10, 1e-300, 0.05), Err(cap));
    // An assumed rate a hair below the limit needs about 1e15 trials before the proof closes.
    assert_eq!(
        target_trials(0.01, 0.05, 0.01 * (1.0 - 1e-7), 0.9),
        Err(cap)
    );
    let law = AssumedLaw::new(0.0, 1.0, 0.5, 0.1).unwrap();
    assert_eq!(bounded_sizes(&law, 0.5 + 1e-12, 0.05), Err(cap));
}

// ---------------------------------------------------------------------------------------------
// The plan document
// ---------------------------------------------------------------------------------------------

#[test]
fn plan_document_has_the_contract_fields_and_round_trips() {
    let plan = binary_plan(&BinaryRequest {
        limit: 0.1,
        delta: 0.05,
        confidence: 0.95,
        allowed_events: &[1, 0],
        assumed_rate: Some(0.02),
        pass_probability: Some(0.9),
        observed: Some((1, 20)),
    })
    .unwrap();
    let v = serde_json::to_value(&plan).unwrap();
    // DESIGN §6, surety-plan/1: 29 and 46 trials for 0 and 1 events at 95 %/90 % (common
    // practice, as in the DESIGN example).
    assert_eq!(v["format"], "surety-plan/1");
    assert_eq!(v["claim"]["side"], "upper");
    assert_eq!(v["claim"]["limit"], 0.1);
    assert_eq!(v["claim"]["confidence"], 0.95);
    assert_eq!(v["demonstration"][0]["allowed_events"], 0);
    assert_eq!(v["demonstration"][0]["trials"], 29);
    assert_eq!(v["demonstration"][1]["allowed_events"], 1);
    assert_eq!(v["demonstration"][1]["trials"], 46);
    let op = &v["operating"][1];
    assert_eq!(op["trials"], 46);
    assert_eq!(op["allowed_events"], 1);
    assert!(op["pass_probability_at_assumed"].as_f64().unwrap() > 0.5);
    assert!(op["consumer_risk"].as_f64().unwrap() <= 0.05);
    assert!(op["curve"].as_array().unwrap().len() > 40);
    // Same values as the fixture's brute-force scan: held from 89, first reached at 76.
    assert_eq!(v["target"]["trials"], 89);
    assert_eq!(v["target"]["first_reached"], 76);
    assert!(
        v["operating"]
            .as_array()
            .unwrap()
            .iter()
            .any(|o| o["trials"] == 89)
    );
    assert_eq!(v["still_needed"]["zero_further_events"], 26);
    assert_eq!(v["still_needed"]["at_observed_rate"], 96);
    // Full precision survives the round trip.
    let text = serde_json::to_string(&plan).unwrap();
    let back: PlanResults = serde_json::from_str(&text).unwrap();
    assert_eq!(back, plan);
}

#[test]
fn bounded_plan_document() {
    let bound: &surety::plan::MeanBound = &hoeffding_bound;
    let sims = [("hoeffding", bound)];
    let plan = bounded_plan(&BoundedRequest {
        low: 0.0,
        high: 2.5,
        limit: 1.2,
        delta: 0.05,
        confidence: 0.95,
        assumed_mean: 1.0,
        assumed_sd: 0.4,
        pass_probability: Some(0.5),
        simulate: &sims,
        seed: 2,
        config: SimConfig {
            replications: 300,
            ..SimConfig::default()
        },
    })
    .unwrap();
    let b = plan.bounded.as_ref().unwrap();
    assert_eq!(b.law, "beta");
    // Hoeffding plug-in: 2.5² ln 20 / (2 · 0.2²) = 234.04 → 235 (the closed form).
    assert_eq!(b.sizes[0].method, "hoeffding");
    assert_eq!(b.sizes[0].trials, 235);
    assert_eq!(b.simulated.len(), 1);
    let text = serde_json::to_string(&plan).unwrap();
    let back: PlanResults = serde_json::from_str(&text).unwrap();
    assert_eq!(back, plan);
}

// Two planned looks with equal spending: the plan is for the last look, at δ/2 = 0.025. The
// zero-failure size for a 10 % rate is then ⌈ln 0.025 / ln 0.9⌉ = ⌈35.01⌉ = 36 (success-run
// rule, METHODS.md §12), not the single-look 29; an anytime study is not planned at all.
#[test]
fn planned_looks_are_planned_at_the_last_look_share() {
    let yaml = |looks: &str| {
        format!(
            "surety: 1
study: {{id: P-2, title: two looks}}
claim: {{quantity: failure rate, side: upper, limit: 0.1, confidence: 0.95}}
outcome: {{type: binary, event: failure}}
data: {{trials: 10, events: 0}}
looks: {looks}
plan: {{assumed_rate: 0.01, pass_probability: 0.8, allowed_events: [0]}}
"
        )
    };
    let spec = surety::spec::parse("p.yaml", &yaml("{mode: planned, planned: 2}")).unwrap();
    let plan = surety::plan::from_spec::plan(&spec, None).unwrap();
    assert_eq!(plan.demonstration[0].trials, 36);
    let spec = surety::spec::parse("p.yaml", &yaml("{mode: anytime}")).unwrap();
    let err = surety::plan::from_spec::plan(&spec, None).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("looks.mode"));
}
