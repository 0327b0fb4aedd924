//! The anytime-valid methods and the m-dependent Hoeffding bound against the mpmath fixture and
//! the computed examples in METHODS.md.

use serde_json::Value;
use surety::bounds::{self, End, Method, Sample, Summary};

/// Fixture written by tests/reference/sequence_reference.py (mpmath, mp.dps = 50).
const FIXTURE: &str = include_str!("reference/sequence_bounds.json");

/// Largest relative difference allowed from the 50-digit value.
///
/// * betting-sequence: the root-finder of the fixed-n betting bound, so its budget
///   (tests/bounded_accuracy.rs): the bracket closes to 2e-15 relative, the log-capital margin
///   is ~1e-13 absolute at these n, ~2e-13 relative on ends near 1e-3; 1e-12. Path points close
///   the bracket only to 1e-9 relative (src/bounds/betting_sequence.rs), so 2e-9 for them.
/// * eb-sequence: a closed form moved outwards by 32 units of 2^-53 of the upper bound's
///   numerator (3.6e-15 relative). A lower bound is moved by that much of the upper bound's
///   value, which relative to a lower bound of 0.01 under an upper bound near 1 is 3.6e-13;
///   1e-12, with 1e-15 absolute for lower bounds near 0.
/// * beta-binomial-mixture: the target of the method (relative error at most 1e-10 up to
///   n = 1e12 and δ = 1e-12); its evaluation allowance moves the root by about 1e-13 relative.
/// * hoeffding-m-dependent: a closed form moved outwards by two ulps of the bound plus one:
///   1e-14.
fn tolerance(method: &str, side: &str) -> (f64, f64) {
    match (method, side.starts_with("path")) {
        ("betting-sequence", true) => (2e-9, 0.0),
        ("betting-sequence", false) => (1e-12, 0.0),
        ("eb-sequence", _) => (1e-12, 1e-15),
        ("beta-binomial-mixture", _) => (1e-10, 0.0),
        _ => (1e-14, 0.0),
    }
}

fn parse(v: &Value) -> f64 {
    v.as_str()
        .expect("decimal string")
        .parse()
        .expect("parses as f64")
}

fn count(v: &Value) -> u64 {
    v.as_str()
        .expect("integer string")
        .parse()
        .expect("parses as u64")
}

fn method(id: &str) -> &'static Method {
    bounds::find(id).unwrap_or_else(|| panic!("{id} in the catalogue"))
}

/// The library's value for one fixture case, read through the catalogue.
fn library_value(case: &Value, data: &serde_json::Map<String, Value>) -> f64 {
    let id = case["method"].as_str().expect("method");
    let side = case["side"].as_str().expect("side");
    let delta = parse(&case["delta"]);
    if id == "hoeffding-m-dependent" {
        let m = method("hoeffding")
            .m_dependent
            .expect("hoeffding has the m-dependent form");
        let (mean, n, lag) = (
            parse(&case["mean"]),
            count(&case["trials"]),
            count(&case["m"]),
        );
        return match side {
            "upper" => (m.upper)(mean, n, lag, delta),
            _ => (m.lower)(mean, n, lag, delta),
        };
    }
    let entry = method(id);
    if case.get("events").is_some() {
        let c = entry.counts.expect("counts");
        let (k, n) = (count(&case["events"]), count(&case["trials"]));
        return match side {
            "upper" => (c.upper)(k, n, delta),
            "lower" => (c.lower)(k, n, delta),
            "interval-lower" => (c.interval.expect("built two-sided"))(k, n, delta).0,
            "interval-upper" => (c.interval.expect("built two-sided"))(k, n, delta).1,
            other => panic!("unknown side {other}"),
        };
    }
    let name = case["dataset"].as_str().expect("dataset");
    let values: Vec<f64> = data[name]
        .as_array()
        .expect("values")
        .iter()
        .map(parse)
        .collect();
    let t = case["prefix"].as_u64().expect("prefix") as usize;
    if let Some(rest) = side.strip_prefix("path-") {
        let path = entry.path.expect("has a path");
        let (end, two_sided) = match rest {
            "upper" => (End::Upper, false),
            "lower" => (End::Lower, false),
            "interval-upper" => (End::Upper, true),
            "interval-lower" => (End::Lower, true),
            other => panic!("unknown side {other}"),
        };
        return path(&values, delta, end, two_sided, &[t as u64])[0];
    }
    let prefix = &values[..t];
    let sample = Sample {
        summary: Summary::from_values(prefix).expect("values in [0, 1]"),
        observations: Some(prefix),
    };
    let b = entry.bounded.expect("bounded bounds");
    assert!(sample.provides(b.needs));
    match side {
        "upper" => (b.upper)(&sample, delta),
        "lower" => (b.lower)(&sample, delta),
        "interval-lower" => (b.interval.expect("built two-sided"))(&sample, delta).0,
        "interval-upper" => (b.interval.expect("built two-sided"))(&sample, delta).1,
        other => panic!("unknown side {other}"),
    }
}

/// The same case read as a point of the path over the whole dataset, for the bounded methods
/// (the path at t must be the bound of the first t values).
fn path_value(case: &Value, data: &serde_json::Map<String, Value>) -> Option<f64> {
    let id = case["method"].as_str()?;
    let side = case["side"].as_str()?;
    let path = bounds::find(id)?.path?;
    if side.starts_with("path-") || case.get("dataset").is_none() {
        return None;
    }
    let values: Vec<f64> = data[case["dataset"].as_str()?]
        .as_array()?
        .iter()
        .map(parse)
        .collect();
    let t = case["prefix"].as_u64()?;
    let (end, two_sided) = match side {
        "upper" => (End::Upper, false),
        "lower" => (End::Lower, false),
        "interval-upper" => (End::Upper, true),
        _ => (End::Lower, true),
    };
    Some(path(&values, parse(&case["delta"]), end, two_sided, &[t])[0])
}

#[test]
fn fixture_sequence_methods() {
    let root: Value = serde_json::from_str(FIXTURE).expect("fixture is JSON");
    assert!(
        root["source"].as_str().unwrap_or("").contains("mpmath"),
        "fixture names its source"
    );
    assert_eq!(
        root["truncation"].as_str().map(|s| s.parse::<f64>().ok()),
        Some(Some(bounds::betting::TRUNCATION))
    );
    assert_eq!(bounds::eb_sequence::TRUNCATION, bounds::betting::TRUNCATION);
    let data = root["datasets"].as_object().expect("datasets");
    let cases = root["cases"].as_array().expect("cases");
    assert!(cases.len() >= 400, "fixture too small: {}", cases.len());
    let mut worst: Vec<(String, f64, String)> = Vec::new();
    for case in cases {
        let id = case["method"].as_str().expect("method");
        let side = case["side"].as_str().expect("side");
        let want = parse(&case["value"]);
        let bets = case["bets"].as_str().unwrap_or("");
        let mut got = vec![("", library_value(case, data))];
        if let Some(p) = path_value(case, data) {
            got.push(("path ", p));
        }
        for (how, got) in got {
            let at = format!("{how}{id} {side} {case}: got {got:e}, want {want:e}");
            assert!(got.is_finite() && (0.0..=1.0).contains(&got), "{at}");
            if want == 0.0 || want == 1.0 {
                // Vacuous or exact ends: the library must hit them exactly.
                assert_eq!(got, want, "{at}");
                continue;
            }
            let (rel, abs) = if how.is_empty() {
                tolerance(id, side)
            } else {
                tolerance(id, "path")
            };
            let err = (got - want).abs();
            assert!(err <= rel * want + abs, "{at}: error {:e}", err / want);
            // Conservative side, with one ulp for the rounding of the 25-digit reference to
            // the nearest double; the 50-digit bets of betting-sequence are a different (equally
            // valid) bet sequence, so for them only closeness is required.
            if bets != "mp" {
                let upper_side = side.ends_with("upper");
                if upper_side {
                    assert!(got >= want.next_down(), "{at}: below the reference");
                } else {
                    assert!(got <= want.next_up(), "{at}: above the reference");
                }
            }
            let key = format!("{how}{id} {side}");
            let err = err / want;
            match worst.iter_mut().find(|w| w.0 == key) {
                Some(w) if err > w.1 => {
                    w.1 = err;
                    w.2 = at;
                }
                Some(_) => {}
                None => worst.push((key, err, at)),
            }
        }
    }
    for (key, err, at) in &worst {
        eprintln!("worst {key}: {err:.2e} ({at})");
    }
}

#[test]
fn methods_md_beta_binomial_table() {
    // METHODS.md §8, "Examples (computed, α = 0.05, evaluated at t = n)", printed to 12
    // decimals: (S, t, two-sided Beta(1,1) upper end, one-sided truncated uniform).
    let c = method("beta-binomial-mixture").counts.expect("counts");
    for (s, t, two, one) in [
        (0u64, 1000u64, 0.009855599157, 0.004502093744),
        (10, 1000, 0.027941747444, 0.021664418420),
        (0, 100, 0.073284373403, 0.043978680326),
        (5, 100, 0.160258873767, 0.134389372975),
    ] {
        let got_two = (c.interval.expect("two-sided"))(s, t, 0.05).1;
        let got_one = (c.upper)(s, t, 0.05);
        assert!(
            (got_two - two).abs() <= 5e-13,
            "two-sided S={s} t={t}: {got_two}"
        );
        assert!(
            (got_one - one).abs() <= 5e-13,
            "one-sided S={s} t={t}: {got_one}"
        );
    }
}

#[test]
fn methods_md_janson_example() {
    // METHODS.md §10 (computed): m = 4, n = 1000, mean 0.01, δ = 0.05 gives 0.096540919130.
    let m = method("hoeffding").m_dependent.expect("m-dependent form");
    let got = (m.upper)(0.01, 1000, 4, 0.05);
    assert!((got - 0.096540919130).abs() <= 5e-13, "{got}");
    // m = 0 is Hoeffding itself, bit for bit (its radius is multiplied by exactly 1).
    for (mean, n, d) in [(0.3, 1000u64, 0.05), (0.001, 10u64.pow(9), 1e-12)] {
        assert_eq!(
            (m.upper)(mean, n, 0, d),
            bounds::hoeffding::upper_mean(mean, n, d)
        );
        assert_eq!(
            (m.lower)(mean, n, 0, d),
            bounds::hoeffding::lower_mean(mean, n, d)
        );
    }
}
