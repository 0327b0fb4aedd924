//! Bounded-mean methods against the mpmath fixture and the computed examples in METHODS.md.

use serde_json::Value;
use surety::bounds::{self, Sample, Summary, bernstein_empirical, bernstein_unexpected, betting};

/// Fixture written by tests/reference/bounded_reference.py (mpmath, mp.dps = 50).
const FIXTURE: &str = include_str!("reference/bounded_bounds.json");

/// Largest relative difference allowed from the 50-digit value, per method.
///
/// * Hoeffding and unexpected Bernstein: a few roundings plus outward margins of 4–16 ulps
///   (observed: at most 1.1e-14, on a Hoeffding lower bound of 0.019, where a margin in ulps of
///   the mean is larger relative to the bound): 1e-13.
/// * Empirical Bernstein: as above, plus the variance padded by 16 ulps of the mean square
///   (on the low-variance sample that is ~1e-14 of the variance; observed 7e-14): 1e-12.
/// * kl inverses (Chernoff-kl, split-kl): Newton to ~1e-15 plus outward rounding in ulps of the
///   parts; on lower bounds near 5e-4 that reaches ~2e-13 relative (observed 1.7e-13): 1e-12.
/// * Betting: the root-finder closes the bracket to 2e-15 relative and the log-capital margin
///   is ~1e-13 absolute for these n; on ends near 1e-3 the two give ~2e-13 relative (observed
///   2.2e-13): 1e-12. The same holds against the 50-digit bets, which differ from the
///   library's double-precision bets by ~1e-16 relative.
fn tolerance(method: &str) -> f64 {
    match method {
        "hoeffding" | "bernstein-unexpected" => 1e-13,
        _ => 1e-12,
    }
}

fn parse(v: &Value) -> f64 {
    v.as_str()
        .expect("decimal string")
        .parse()
        .expect("parses as f64")
}

struct Data {
    name: String,
    values: Vec<f64>,
}

fn fixture() -> (Vec<Data>, Vec<Value>) {
    let root: Value = serde_json::from_str(FIXTURE).expect("fixture is JSON");
    assert!(
        root["source"].as_str().unwrap_or("").contains("mpmath"),
        "fixture names its source"
    );
    assert_eq!(
        root["truncation"].as_str(),
        Some("0.5"),
        "fixture made for this truncation"
    );
    assert_eq!(
        root["truncation"].as_str().map(|s| s.parse::<f64>().ok()),
        Some(Some(betting::TRUNCATION))
    );
    let data = root["datasets"]
        .as_object()
        .expect("datasets")
        .iter()
        .map(|(k, v)| Data {
            name: k.clone(),
            values: v.as_array().expect("values").iter().map(parse).collect(),
        })
        .collect();
    let cases = root["cases"].as_array().expect("cases").clone();
    assert!(cases.len() >= 250, "fixture too small: {}", cases.len());
    (data, cases)
}

/// The library's value for one fixture case, read through the catalogue.
fn library_value(method: &str, side: &str, sample: &Sample, delta: f64) -> f64 {
    let entry = bounds::find(method).unwrap_or_else(|| panic!("{method} in the catalogue"));
    let b = entry
        .bounded
        .unwrap_or_else(|| panic!("{method} has bounded bounds"));
    assert!(
        sample.provides(b.needs),
        "{method}: sample provides what it needs"
    );
    match side {
        "upper" => (b.upper)(sample, delta),
        "lower" => (b.lower)(sample, delta),
        "interval-lower" => (b.interval.expect("built two-sided"))(sample, delta).0,
        "interval-upper" => (b.interval.expect("built two-sided"))(sample, delta).1,
        other => panic!("unknown side {other}"),
    }
}

#[test]
fn fixture_all_bounded_methods() {
    let (data, cases) = fixture();
    let mut worst: Vec<(String, f64, String)> = Vec::new();
    for case in &cases {
        let method = case["method"].as_str().expect("method");
        let side = case["side"].as_str().expect("side");
        let name = case["dataset"].as_str().expect("dataset");
        let delta = parse(&case["delta"]);
        let want = parse(&case["value"]);
        let bets = case["bets"].as_str().unwrap_or("");
        let values = &data
            .iter()
            .find(|d| d.name == name)
            .expect("dataset in fixture")
            .values;
        let summary = Summary::from_values(values).expect("values in [0, 1]");
        let sample = Sample {
            summary,
            observations: Some(values),
        };
        let got = library_value(method, side, &sample, delta);
        let at =
            format!("{method} {side} {name} δ={delta} bets={bets}: got {got:e}, want {want:e}");
        assert!(got.is_finite() && (0.0..=1.0).contains(&got), "{at}");
        if want == 0.0 || want == 1.0 {
            // Vacuous or exact ends: the library must hit them exactly.
            assert_eq!(got, want, "{at}");
            continue;
        }
        let err = ((got - want) / want).abs();
        assert!(err <= tolerance(method), "{at}: relative error {err:e}");
        // Conservative side. The reference's 25 digits were rounded to the nearest double, so
        // one ulp is allowed for that rounding; the 50-digit bets are a different (equally
        // valid) bet sequence, so for them only closeness is required.
        if bets != "mp" {
            let upper_side = side == "upper" || side == "interval-upper";
            if upper_side {
                assert!(got >= want.next_down(), "{at}: below the reference");
            } else {
                assert!(got <= want.next_up(), "{at}: above the reference");
            }
        }
        let key = format!("{method} {side}");
        match worst.iter_mut().find(|w| w.0 == key) {
            Some(w) if err > w.1 => {
                w.1 = err;
                w.2 = at;
            }
            Some(_) => {}
            None => worst.push((key, err, at)),
        }
    }
    for (key, err, at) in &worst {
        eprintln!("worst {key}: {err:.2e} ({at})");
    }
}

/// A binary summary with `k` ones among `n`.
fn binary(k: u64, n: u64) -> Summary {
    let values: Vec<f64> = (0..n).map(|i| if i < k { 1.0 } else { 0.0 }).collect();
    Summary::from_values(&values).expect("binary values")
}

#[test]
fn methods_md_computed_examples() {
    // METHODS.md §5, "Examples (computed, δ = 0.05)", printed to 12 decimals.
    for (k, n, want) in [
        (10u64, 100u64, 0.212407025194),
        (10, 1000, 0.022626996881),
        (0, 1000, 0.008764053269),
    ] {
        let got = bernstein_unexpected::upper_summary(&binary(k, n), 0.05);
        assert!(
            (got - want).abs() <= 5e-13 && got >= want - 5e-13,
            "unexpected Bernstein k={k} n={n}: {got}"
        );
    }
    // METHODS.md §4b (computed): k = 0, n = 1000, δ = 0.05 gives 0.008616 (4 digits).
    let got = bernstein_empirical::upper_summary(&binary(0, 1000), 0.05);
    assert!((got - 0.008616).abs() <= 5e-7, "Maurer-Pontil k=0: {got}");
    // METHODS.md §2 (computed): p̂ = 0.1, n = 100, δ = 0.05: kl⁻¹₊ = 0.188829337848 and
    // Hoeffding = 0.222387341534, here from a sample of 100 binary values.
    let s = binary(10, 100);
    let values: Vec<f64> = (0..100).map(|i| if i < 10 { 1.0 } else { 0.0 }).collect();
    let sample = Sample {
        summary: s,
        observations: Some(&values),
    };
    let kl = surety::bounds::chernoff_kl::upper_sample(&sample, 0.05);
    assert!((kl - 0.188829337848).abs() <= 5e-13, "{kl}");
    let h = surety::bounds::hoeffding::upper_sample(&sample, 0.05);
    assert!((h - 0.222387341534).abs() <= 5e-13, "{h}");
}

#[test]
fn betting_all_zeros_against_methods_md() {
    // METHODS.md §7 (computed): binary data with k = 0, n = 1000, α = 0.05: 0.005965. That
    // figure is the bound with every bet at the cap c/(1 − m), where n ln(1 + c m/(1 − m)) =
    // ln(1/α). The plug-in bets of §7 start below the cap (σ̂²_0 = ¼ gives λ̇_1 ≈ 0.155), and on
    // an all-zero sample a smaller bet only lowers the capital, so the plug-in bound must lie
    // above it, by little: the bets reach the cap after 16 trials.
    let u = betting::upper_values(&[0.0; 1000], 0.05);
    let y = ((1.0f64 / 0.05).ln() / 1000.0).exp_m1();
    let capped = y / (betting::TRUNCATION + y);
    assert!((capped - 0.005965).abs() < 5e-7, "{capped}");
    assert!(u > capped && u < 1.01 * capped, "{u} vs {capped}");
}
