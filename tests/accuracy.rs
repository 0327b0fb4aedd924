//! Accuracy against the mpmath fixture and against published values.

use serde_json::Value;
use surety::bounds::{chernoff_kl, exact, hoeffding};

/// Fixture written by tests/reference/binomial_reference.py (mpmath, mp.dps = 60).
const FIXTURE: &str = include_str!("reference/binary_bounds.json");

const EXACT_TOL: f64 = 1e-10;
const KL_TOL: f64 = 1e-10;
const HOEFFDING_TOL: f64 = 1e-12;

struct Worst {
    name: &'static str,
    err: f64,
    at: String,
}

impl Worst {
    fn new(name: &'static str) -> Self {
        Worst {
            name,
            err: 0.0,
            at: String::new(),
        }
    }

    fn record(&mut self, got: f64, want: f64, exact_end: bool, case: &str) {
        let err = if exact_end {
            // The reference is exactly 0 or 1 (no events, or all events): so must we be.
            if got == want { 0.0 } else { f64::INFINITY }
        } else {
            ((got - want) / want).abs()
        };
        let err = if err.is_nan() { f64::INFINITY } else { err };
        if err > self.err {
            self.err = err;
            self.at = format!("{case}: got {got:e}, want {want:e}");
        }
    }

    fn check(&self, tol: f64) {
        assert!(
            self.err <= tol,
            "{}: worst relative error {:e} > {tol:e} at {}",
            self.name,
            self.err,
            self.at
        );
    }
}

fn parse(v: &Value, key: &str) -> f64 {
    v[key]
        .as_str()
        .unwrap_or_else(|| panic!("missing {key}"))
        .parse()
        .expect("decimal string")
}

fn cases() -> Vec<Value> {
    let root: Value = serde_json::from_str(FIXTURE).expect("fixture is JSON");
    assert!(
        root["source"].as_str().unwrap_or("").contains("mpmath"),
        "fixture names its source"
    );
    let cases = root["cases"].as_array().expect("cases").clone();
    assert!(cases.len() >= 300, "fixture too small: {}", cases.len());
    cases
}

#[test]
fn fixture_all_bounds() {
    let mut worst = [
        Worst::new("exact upper"),
        Worst::new("exact lower"),
        Worst::new("kl upper"),
        Worst::new("kl lower"),
        Worst::new("hoeffding upper"),
        Worst::new("hoeffding lower"),
    ];
    // Upper bounds may only err upwards and lower bounds downwards.
    let mut wrong_side = Vec::new();
    for c in cases() {
        let k = c["k"].as_u64().unwrap();
        let n = c["n"].as_u64().unwrap();
        let delta: f64 = c["delta"].as_str().unwrap().parse().unwrap();
        let id = format!("k={k} n={n} delta={delta:e}");
        let got = [
            exact::upper(k, n, delta),
            exact::lower(k, n, delta),
            chernoff_kl::upper(k, n, delta),
            chernoff_kl::lower(k, n, delta),
            hoeffding::upper(k, n, delta),
            hoeffding::lower(k, n, delta),
        ];
        let keys = [
            "exact_upper",
            "exact_lower",
            "kl_upper",
            "kl_lower",
            "hoeffding_upper",
            "hoeffding_lower",
        ];
        for (i, key) in keys.iter().enumerate() {
            let want = parse(&c, key);
            let text = c[key].as_str().unwrap();
            worst[i].record(got[i], want, text == "0" || text == "1", &id);
            let upper_side = i % 2 == 0;
            if (upper_side && got[i] < want) || (!upper_side && got[i] > want) {
                wrong_side.push(format!("{key} {id}: got {:e}, want {want:e}", got[i]));
            }
        }
    }
    for w in &worst {
        eprintln!("{}: worst relative error {:.3e} at {}", w.name, w.err, w.at);
    }
    for w in &worst[0..2] {
        w.check(EXACT_TOL);
    }
    for w in &worst[2..4] {
        w.check(KL_TOL);
    }
    for w in &worst[4..6] {
        w.check(HOEFFDING_TOL);
    }
    assert!(
        wrong_side.is_empty(),
        "{} bounds on the anti-conservative side, e.g. {:?}",
        wrong_side.len(),
        &wrong_side[..wrong_side.len().min(5)]
    );
}

fn rel(got: f64, want: f64) -> f64 {
    ((got - want) / want).abs()
}

#[test]
fn scipy_binomtest_documented_interval() {
    // SciPy documentation, scipy.stats.binomtest: binomtest(k=7, n=50).proportion_ci()
    // (exact, 95 % two-sided) = (0.05819170033997342, 0.26739600249700846). SciPy's lower
    // end differs from the true value by about 7e-12 relative (METHODS.md 14.1).
    assert!(rel(exact::lower(7, 50, 0.025), 0.05819170033997342) < 1e-10);
    assert!(rel(exact::upper(7, 50, 0.025), 0.26739600249700846) < 1e-10);
}

#[test]
fn genbinomapps_one_sided_upper() {
    // R package GenBinomApps documentation: clopper.pearson.ci(5, 100000, alpha = 0.05),
    // one-sided upper limit 0.0001051275 (published with 7 significant digits, so it is
    // only good to half a unit in the last digit: 5e-7 relative).
    assert!(rel(exact::upper(5, 100_000, 0.05), 0.0001051275) < 5e-7);
}

#[test]
fn r_binom_test_outputs() {
    // R binom.test(9, 24): 95 % interval 0.1879929 0.5940636, and
    // binom.test(1, 1497, conf.level = 0.9): 3.426347e-05 3.164954e-03.
    // Secondary source: a public blog page reproducing R's output (7 significant digits).
    assert!(rel(exact::lower(9, 24, 0.025), 0.1879929) < 5e-7);
    assert!(rel(exact::upper(9, 24, 0.025), 0.5940636) < 5e-7);
    assert!(rel(exact::lower(1, 1497, 0.05), 3.426347e-05) < 5e-7);
    assert!(rel(exact::upper(1, 1497, 0.05), 3.164954e-03) < 5e-7);
}

#[test]
fn rule_of_three() {
    // Hanley & Lippman-Hand (1983), JAMA 249:1743: with no events in n trials the 95 %
    // upper limit is about 3/n. Exactly it is 1 - 0.05^(1/n) = -ln(0.05)/n (1 - O(1/n)),
    // with -ln(0.05) = 2.9957; so n * upper approaches 2.9957 from below and stays < 3.
    for &n in &[300u64, 1000, 1500, 10_000, 1_000_000, 1_000_000_000_000] {
        let u = exact::upper(0, n, 0.05);
        assert!(u <= 3.0 / n as f64, "n = {n}");
        let nu = u * n as f64;
        assert!(
            (nu - 2.9957).abs() < 2.9957 * 2.0 / n as f64 + 1e-4,
            "n = {n}: n*u = {nu}"
        );
    }
    // Wikipedia, "Rule of three (statistics)": 1500 subjects -> exact 0.00199516186,
    // 300 parachutes -> 0.00993608194 (values as recomputed in METHODS.md 14.1, 9
    // significant digits: good to 3e-9 relative).
    assert!(rel(exact::upper(0, 1500, 0.05), 0.00199516186) < 3e-9);
    assert!(rel(exact::upper(0, 300, 0.05), 0.00993608194) < 3e-9);
}

#[test]
fn zero_failure_demonstration_sizes() {
    // Success-run sample sizes (common practice; from the binomial, n = ceil(ln(1-C)/ln R)):
    // confidence 95 % and reliability 90 % -> 29, 95 % -> 59, 99 % -> 299.
    for &(reliability, n) in &[(0.90f64, 29u64), (0.95, 59), (0.99, 299)] {
        let limit = 1.0 - reliability;
        assert!(
            exact::upper(0, n, 0.05) <= limit,
            "n = {n} should demonstrate R = {reliability}"
        );
        assert!(
            exact::upper(0, n - 1, 0.05) > limit,
            "n - 1 = {} should not",
            n - 1
        );
    }
}

#[test]
fn methods_worked_example_kl_and_hoeffding() {
    // Worked example computed by the method notes' own mpmath script (METHODS.md 2):
    // p_hat = 0.1, n = 100, delta = 0.05: kl inverse 0.188829337848, Hoeffding 0.222387341534.
    assert!(rel(chernoff_kl::upper(10, 100, 0.05), 0.188829337848) < 1e-11);
    assert!(rel(chernoff_kl::upper_mean(0.1, 100, 0.05), 0.188829337848) < 1e-11);
    assert!(rel(hoeffding::upper(10, 100, 0.05), 0.222387341534) < 1e-11);
    assert!(rel(hoeffding::upper_mean(0.1, 100, 0.05), 0.222387341534) < 1e-11);
}

#[test]
fn methods_pitfall_values() {
    // METHODS.md 0.5 (computed there with mpmath): n = 1e12, delta = 1e-12 gives
    // 1 - delta^(1/n) = 2.763102111554681e-11.
    assert!(
        rel(
            exact::upper(0, 1_000_000_000_000, 1e-12),
            2.763102111554681e-11
        ) < 1e-14
    );
}

/// Second fixture from the same script: special functions at extreme arguments.
const SPECIAL: &str = include_str!("reference/special_values.json");

/// Compare logs: absolute error of a log is the relative error of the quantity.
fn log_err(got: f64, want: f64) -> f64 {
    if want == 0.0 {
        return got.abs();
    }
    (got - want).abs() / want.abs().max(1.0)
}

#[test]
fn special_functions_fixture() {
    use surety::stats;
    let root: Value = serde_json::from_str(SPECIAL).expect("special fixture is JSON");
    let num = |v: &Value| -> f64 { v.as_str().expect("string").parse().expect("number") };
    let mut failures = Vec::new();
    let mut check = |what: String, got: f64, want: f64, tol: f64| {
        let e = log_err(got, want);
        if e.is_nan() || e > tol {
            failures.push(format!("{what}: got {got:e}, want {want:e} (error {e:e})"));
        }
    };
    for c in root["ln_gamma"].as_array().unwrap() {
        let x = num(&c["x"]);
        check(
            format!("ln_gamma({x})"),
            stats::ln_gamma(x),
            num(&c["value"]),
            4e-15,
        );
    }
    for c in root["ln_beta"].as_array().unwrap() {
        let (a, b) = (num(&c["a"]), num(&c["b"]));
        check(
            format!("ln_beta({a}, {b})"),
            stats::ln_beta(a, b),
            num(&c["value"]),
            4e-15,
        );
    }
    for c in root["ln_choose"].as_array().unwrap() {
        let (n, k) = (c["n"].as_u64().unwrap(), c["k"].as_u64().unwrap());
        check(
            format!("ln_choose({n}, {k})"),
            stats::ln_choose(n, k),
            num(&c["value"]),
            4e-15,
        );
    }
    for c in root["ln_binom"].as_array().unwrap() {
        let (k, n, p) = (
            c["k"].as_u64().unwrap(),
            c["n"].as_u64().unwrap(),
            num(&c["p"]),
        );
        let id = format!("k={k} n={n} p={p}");
        check(
            format!("ln_pmf {id}"),
            stats::ln_binom_pmf(k, n, p),
            num(&c["ln_pmf"]),
            1e-13,
        );
        check(
            format!("ln_cdf {id}"),
            stats::ln_binom_cdf(k, n, p),
            num(&c["ln_cdf"]),
            1e-13,
        );
        check(
            format!("ln_sf {id}"),
            stats::ln_binom_sf(k, n, p),
            num(&c["ln_sf"]),
            1e-13,
        );
    }
    assert!(
        failures.is_empty(),
        "{} special values off: {:#?}",
        failures.len(),
        failures
    );
}
