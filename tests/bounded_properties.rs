//! Structural properties and relations of the bounded-mean methods.

use proptest::prelude::*;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use surety::bounds::{
    self, BoundedBounds, Needs, Sample, Summary, bernstein_unexpected, betting, chernoff_kl,
    hoeffding, split_kl,
};

fn method(id: &str) -> BoundedBounds {
    bounds::find(id)
        .and_then(|m| m.bounded)
        .unwrap_or_else(|| panic!("{id} has bounded bounds"))
}

/// The closed-form (summary-based) methods, whose bounds bracket the sample mean.
const CLOSED_FORMS: [&str; 5] = [
    "hoeffding",
    "chernoff-kl",
    "bernstein-empirical",
    "bernstein-unexpected",
    "split-kl",
];

/// Values on the grid k/1024, with the ends and the middle often: 1 − x is then exact, so the
/// reflection of a sample is exactly the sample of the reflected values.
fn values() -> impl Strategy<Value = Vec<f64>> {
    let one = prop_oneof![
        Just(0.0f64),
        Just(0.5),
        Just(1.0),
        (0u32..=1024).prop_map(|k| k as f64 / 1024.0),
        (0u32..=64).prop_map(|k| k as f64 / 1024.0),
    ];
    prop::collection::vec(one, 2..80)
}

/// delta: log-uniform over 1e-9 ..= 0.5.
fn delta() -> impl Strategy<Value = f64> {
    (-9.0f64..(0.5f64).log10()).prop_map(|e| 10f64.powf(e))
}

fn both(b: &BoundedBounds, xs: &[f64], d: f64) -> (f64, f64) {
    let sample = Sample {
        summary: Summary::from_values(xs).expect("values in [0, 1]"),
        observations: Some(xs),
    };
    ((b.lower)(&sample, d), (b.upper)(&sample, d))
}

/// max over t ≤ n of ln K⁻_t(m), the capital betting against "mean = m" from above, with the
/// plug-in bets of METHODS.md §7 (fixed-n tuning ln(1/δ), truncation ½). Written here from the
/// formulas, in plain f64 with one ln_1p per factor, as an independent check of the library's
/// blocked evaluation.
fn max_log_capital_minus(xs: &[f64], m: f64, delta: f64) -> f64 {
    let n = xs.len() as f64;
    let l = -delta.ln();
    let (mut sum, mut sq) = (0.5, 0.25);
    let (mut total, mut best) = (0.0f64, 0.0f64);
    for (i, &x) in xs.iter().enumerate() {
        let t = (i + 1) as f64;
        let bet = (2.0 * l / (n * (sq / t))).sqrt();
        let bet = if m < 1.0 {
            bet.min(0.5 / (1.0 - m))
        } else {
            bet
        };
        total += (bet * (m - x)).ln_1p();
        best = best.max(total);
        sum += x;
        let d = x - sum / (t + 1.0);
        sq += d * d;
    }
    best
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn finite_in_unit_interval_and_around_the_mean(xs in values(), d in delta()) {
        let mean = Summary::from_values(&xs).expect("valid").mean();
        for id in CLOSED_FORMS {
            let (l, u) = both(&method(id), &xs, d);
            prop_assert!((0.0..=1.0).contains(&l) && (0.0..=1.0).contains(&u), "{id}: {l} {u}");
            prop_assert!(l <= mean && mean <= u, "{id}: {l} {mean} {u}");
        }
        // Betting: the running maximum over t may exclude the sample mean when early and late
        // values disagree, so only the range is a structural property.
        let (l, u) = both(&method("betting"), &xs, d);
        prop_assert!((0.0..=1.0).contains(&l) && (0.0..=1.0).contains(&u), "betting: {l} {u}");
    }

    #[test]
    fn more_confidence_widens(xs in values(), d in delta(), f in 0.05f64..0.99) {
        let d2 = d * f;
        let s = Summary::from_values(&xs).expect("valid");
        for id in CLOSED_FORMS {
            if id == "bernstein-unexpected"
                && bernstein_unexpected::grid_size(s.n, -d.ln())
                    != bernstein_unexpected::grid_size(s.n, -d2.ln())
            {
                // The grid size depends on δ; where it changes, ln k drops by ln(k/(k−1)) and
                // the bound can shrink slightly as δ decreases (see the method's notes).
                continue;
            }
            let (l1, u1) = both(&method(id), &xs, d);
            let (l2, u2) = both(&method(id), &xs, d2);
            prop_assert!(u2 >= u1 && l2 <= l1, "{id} δ {d} -> {d2}: [{l1}, {u1}] -> [{l2}, {u2}]");
        }
    }

    #[test]
    fn lower_is_the_reflection_of_upper(xs in values(), d in delta()) {
        let ys: Vec<f64> = xs.iter().map(|x| 1.0 - x).collect();
        for id in CLOSED_FORMS.iter().copied().chain(["betting"]) {
            let b = method(id);
            let (l, u) = both(&b, &xs, d);
            let (lr, ur) = both(&b, &ys, d);
            // Equal in exact arithmetic; each side carries its own outward margins of a few
            // ulps of 1 (and betting its root-finder tolerance of 2e-15 relative).
            prop_assert!((u - (1.0 - lr)).abs() <= 1e-13, "{id}: {u} vs 1 - {lr}");
            prop_assert!((l - (1.0 - ur)).abs() <= 1e-13, "{id}: {l} vs 1 - {ur}");
        }
    }

    #[test]
    fn betting_upper_is_the_edge_of_the_rejected_set(xs in values(), d in delta()) {
        // METHODS.md §7: U = inf{m : max_t K⁻_t(m) >= 1/δ}, and the capital is non-decreasing
        // in m. So the capital reaches 1/δ at U, and stays below it a little further down.
        let u = betting::upper_values(&xs, d);
        let l = -d.ln();
        if u < 1.0 {
            prop_assert!(max_log_capital_minus(&xs, u, d) >= l - 1e-9, "at {u}");
            let below = u - 1e-9 * u.max(1e-6);
            prop_assert!(max_log_capital_minus(&xs, below, d) < l + 1e-9, "below {u}");
        } else {
            prop_assert!(max_log_capital_minus(&xs, 1.0 - 1e-9, d) < l + 1e-9);
        }
    }

    #[test]
    fn betting_interval_is_two_one_sided_bounds_at_half_delta(xs in values(), d in delta()) {
        // With θ = ½ the hedged interval's ends are the one-sided problems at δ/2 with the
        // same bets (module documentation of bounds::betting); the library computes them once.
        // same bets: ln(2/δ) is formed as ln 2 − ln δ there and as −ln(δ/2) here, which may
        // differ in the last bit, hence a tolerance at the level of the root-finder's.
        let (l, u) = betting::interval_values(&xs, d);
        let (l1, u1) = (betting::lower_values(&xs, d / 2.0), betting::upper_values(&xs, d / 2.0));
        prop_assert!((l - l1).abs() <= 1e-13 * l1.max(1e-3), "{l} vs {l1}");
        prop_assert!((u - u1).abs() <= 1e-13 * u1.max(1e-3), "{u} vs {u1}");
    }
}

#[test]
fn summary_matches_its_definitions() {
    // Definitions of the fields (bounds::sample), against a plain two-pass computation.
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let xs: Vec<f64> = (0..1000).map(|_| rng.random::<f64>().powi(3)).collect();
    let s = Summary::from_values(&xs).expect("valid");
    let n = xs.len() as f64;
    let mean = xs.iter().sum::<f64>() / n;
    let var = xs.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (n - 1.0);
    let above: f64 = xs.iter().map(|x| (x - 0.5).max(0.0)).sum();
    let below: f64 = xs.iter().map(|x| (0.5 - x).max(0.0)).sum();
    assert!((s.mean() - mean).abs() < 1e-15);
    assert!((s.variance() / var - 1.0).abs() < 1e-12);
    let (a, b) = s.split.expect("split parts");
    assert!((a - above).abs() < 1e-12 && (b - below).abs() < 1e-12);
    // Σx = n/2 + Σ(x − ½)⁺ − Σ(½ − x)⁺
    assert!((s.sum - (n / 2.0 + a - b)).abs() < 1e-10);
    let r = s.reflected();
    let ys: Vec<f64> = xs.iter().map(|x| 1.0 - x).collect();
    let direct = Summary::from_values(&ys).expect("valid");
    assert!((r.sum - direct.sum).abs() < 1e-12 * n);
    assert!((r.sum_sq - direct.sum_sq).abs() < 1e-12 * n);
    assert_eq!((r.min, r.max), (1.0 - s.max, 1.0 - s.min));
    assert!((r.variance() / s.variance() - 1.0).abs() < 1e-10);
}

#[test]
fn invalid_samples_are_vacuous() {
    let xs = [0.2, 0.4, 0.6];
    let good = Summary::from_values(&xs).expect("valid");
    let mut bad_sum = good;
    bad_sum.sum = 5.0; // more than n
    let mut nan = good;
    nan.sum_sq = f64::NAN;
    let empty = Summary {
        n: 0,
        sum: 0.0,
        sum_sq: 0.0,
        min: 0.0,
        max: 0.0,
        split: Some((0.0, 0.0)),
    };
    for m in bounds::CATALOGUE.iter() {
        let Some(b) = m.bounded else { continue };
        for s in [bad_sum, nan, empty] {
            let sample = Sample {
                summary: s,
                observations: None,
            };
            assert_eq!((b.upper)(&sample, 0.05), 1.0, "{}", m.id);
            assert_eq!((b.lower)(&sample, 0.05), 0.0, "{}", m.id);
        }
        let sample = Sample {
            summary: good,
            observations: Some(&xs),
        };
        for d in [0.0, 1.0, -1.0, f64::NAN] {
            assert_eq!((b.upper)(&sample, d), 1.0, "{} δ={d}", m.id);
            assert_eq!((b.lower)(&sample, d), 0.0, "{} δ={d}", m.id);
        }
    }
    // Betting needs the stream, and the stream must match the summary.
    let b = method("betting");
    assert_eq!(b.needs, Needs::Observations);
    let no_stream = Sample {
        summary: good,
        observations: None,
    };
    assert_eq!((b.upper)(&no_stream, 0.05), 1.0);
    let short = Sample {
        summary: good,
        observations: Some(&xs[..2]),
    };
    assert_eq!((b.upper)(&short, 0.05), 1.0);
    assert_eq!(betting::interval(&short, 0.05), (0.0, 1.0));
}

#[test]
fn chernoff_kl_on_binary_samples_is_the_count_bound() {
    // The sample form reads the mean; on binary data it is k/n, and the bound must be the
    // count-based one (METHODS.md §2), bit for bit.
    for &(k, n) in &[
        (0u64, 1u64),
        (0, 50),
        (3, 50),
        (10, 100),
        (99, 100),
        (100, 100),
        (7, 1000),
    ] {
        let xs: Vec<f64> = (0..n).map(|i| if i < k { 1.0 } else { 0.0 }).collect();
        let sample = Sample {
            summary: Summary::from_values(&xs).expect("valid"),
            observations: Some(&xs),
        };
        for d in [0.2, 0.05, 1e-6] {
            assert_eq!(
                chernoff_kl::upper_sample(&sample, d),
                chernoff_kl::upper(k, n, d),
                "k={k} n={n}"
            );
            assert_eq!(
                chernoff_kl::lower_sample(&sample, d),
                chernoff_kl::lower(k, n, d),
                "k={k} n={n}"
            );
        }
    }
}

#[test]
fn split_kl_on_binary_data_is_chernoff_kl_at_half_delta() {
    // On {0, 1} the parts are ½·1[x = 1] and ½·1[x = 0], so (Wu & Seldin 2022, and
    // kl(1 − p ‖ 1 − q) = kl(p ‖ q)) the bound is kl⁻¹₊(k/n, ln(2/δ)/n): Chernoff-kl at δ/2.
    for &(k, n) in &[
        (0u64, 20u64),
        (1, 20),
        (10, 100),
        (50, 100),
        (97, 100),
        (3, 5000),
    ] {
        let xs: Vec<f64> = (0..n).map(|i| if i < k { 1.0 } else { 0.0 }).collect();
        let s = Summary::from_values(&xs).expect("valid");
        for d in [0.2, 0.05, 1e-6] {
            let u = split_kl::upper_summary(&s, d);
            let want = chernoff_kl::upper(k, n, d / 2.0);
            // Split-kl moves each part mean outwards by 3 ulps to cover its rounding; at a part
            // mean of exactly 1 (no events) the kl inverse is steep in it, which shows at
            // ~1e-13 relative.
            assert!(
                (u - want).abs() <= 1e-12 * want.max(1e-300),
                "upper k={k} n={n}: {u} vs {want}"
            );
            let l = split_kl::lower_summary(&s, d);
            let want = chernoff_kl::lower(k, n, d / 2.0);
            // The lower bound reads the part below ½ (mean 1 − k/n, held as itself, not as its
            // complement), so its rounding also enters in absolute terms: 1e-17 allows for the
            // 3-ulp move times the slope of the inverse there.
            assert!(
                (l - want).abs() <= 1e-12 * want + 1e-17,
                "lower k={k} n={n}: {l} vs {want}"
            );
        }
    }
}

#[test]
fn variance_adaptive_methods_beat_hoeffding_on_low_variance_data() {
    // A narrow spread against Hoeffding's implicit worst case (sd 0.5): every method that adapts
    // to the spread must give a narrower bound on both sides (common practice: the reason these
    // methods exist). Near 0 (uniform on [0, 0.02]) all four adapt; around ½ (uniform on
    // [0.49, 0.51]) unexpected Bernstein does not, since it is applied to X itself and adapts to
    // the mean square E X² ≈ ¼, not to the variance (METHODS.md §5: centring needs Z = X − c).
    let mut rng = ChaCha8Rng::seed_from_u64(5);
    let near_zero: Vec<f64> = (0..400).map(|_| 0.02 * rng.random::<f64>()).collect();
    let near_half: Vec<f64> = (0..400)
        .map(|_| 0.49 + 0.02 * rng.random::<f64>())
        .collect();
    let cases: [(&[f64], &[&str]); 2] = [
        (
            &near_zero,
            &[
                "bernstein-empirical",
                "bernstein-unexpected",
                "split-kl",
                "betting",
            ],
        ),
        (&near_half, &["bernstein-empirical", "split-kl", "betting"]),
    ];
    for (xs, ids) in cases {
        let sample = Sample {
            summary: Summary::from_values(xs).expect("valid"),
            observations: Some(xs),
        };
        for d in [0.1, 0.01, 1e-6] {
            let hu = hoeffding::upper_sample(&sample, d);
            let hl = hoeffding::lower_sample(&sample, d);
            for id in ids {
                let b = method(id);
                let (l, u) = ((b.lower)(&sample, d), (b.upper)(&sample, d));
                // Near 0 Hoeffding's lower bound is clamped at 0, as is everyone's.
                assert!(
                    u < hu && (l > hl || hl == 0.0),
                    "{id} δ={d}: [{l}, {u}] vs Hoeffding [{hl}, {hu}]"
                );
            }
        }
    }
}

#[test]
fn catalogue_entries_for_bounded_data() {
    for id in [
        "hoeffding",
        "chernoff-kl",
        "bernstein-empirical",
        "bernstein-unexpected",
        "split-kl",
        "betting",
    ] {
        let m = bounds::find(id).unwrap_or_else(|| panic!("{id}"));
        assert!(m.outcomes.contains(&bounds::OutcomeKind::Bounded), "{id}");
        assert!(m.bounded.is_some(), "{id}");
        for a in m.assumptions {
            assert!(
                bounds::assumption(a).is_some(),
                "{id}: unknown assumption {a}"
            );
        }
    }
    let betting = bounds::find("betting").expect("betting");
    assert!(betting.dependence.contains(&bounds::Dependence::Martingale));
    assert!(betting.two_sided_built && betting.bounded.and_then(|b| b.interval).is_some());
    for id in ["bernstein-empirical", "bernstein-unexpected", "split-kl"] {
        let m = bounds::find(id).expect("id");
        assert_eq!(m.dependence, &[bounds::Dependence::Independent], "{id}");
        assert!(m.counts.is_none(), "{id}");
    }
}
