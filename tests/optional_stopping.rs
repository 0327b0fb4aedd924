//! Seeded simulations of what the anytime-valid methods are for: a campaign that looks at its
//! data many times and stops as soon as the claim passes, and coverage at every number of
//! trials at once.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use surety::bounds::{self, End, PathFn};

/// Allowance above δ for a miss rate estimated from `reps` replicates: three standard errors of
/// a binomial proportion equal to δ. If a method's true rate were exactly δ, a check would fail
/// by chance with probability about 0.13 %; the methods checked here sit well below δ, so their
/// checks fail by chance far less often than that.
fn slack(delta: f64, reps: usize) -> f64 {
    3.0 * (delta * (1.0 - delta) / reps as f64).sqrt()
}

fn path_of(id: &str) -> PathFn {
    bounds::find(id)
        .and_then(|m| m.path)
        .unwrap_or_else(|| panic!("{id} has a path"))
}

/// Cumulative trial counts of the 28 looks: increments between 50 and 200, fixed in advance.
fn looks() -> Vec<u64> {
    let mut n = 0;
    (0..28u64)
        .map(|l| {
            n += 50 + (l * 37) % 151;
            n
        })
        .collect()
}

/// One campaign's data: `n` draws from `law`, with its own seed so that the replicates do not
/// depend on how they are spread over threads.
fn campaign(seed: u64, n: usize, law: impl Fn(&mut ChaCha8Rng) -> f64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..n).map(|_| law(&mut rng)).collect()
}

/// Whether the campaign passes at some look (the first look whose upper bound is ≤ the limit
/// ends it, so "passes at some look" is the stopping rule's verdict).
fn passes_somewhere(values: &[f64]) -> bool {
    values.iter().any(|&u| u <= LIMIT)
}

/// The limit of the claim "mean ≤ LIMIT"; the true mean sits at it, so every pass is false.
const LIMIT: f64 = 0.05;
const DELTA: f64 = 0.05;
const REPS: usize = 1500;

#[test]
fn optional_stopping_keeps_the_false_pass_rate_for_anytime_methods() {
    let looks = looks();
    let n = *looks.last().expect("looks") as usize;
    let l = looks.len() as f64;
    let exact = bounds::find("exact").and_then(|m| m.counts).expect("exact");
    let mixture = bounds::find("beta-binomial-mixture")
        .and_then(|m| m.counts)
        .expect("mixture");
    let betting = path_of("betting-sequence");
    let eb = path_of("eb-sequence");
    // Per replicate: false pass of [mixture, betting-seq, eb-seq, exact δ/L, exact δ] on binary
    // trials at the limit, then [betting-seq, eb-seq] on a bounded law with mean at the limit.
    let outcomes: Vec<[bool; 7]> = (0..REPS as u64)
        .into_par_iter()
        .map(|rep| {
            let binary = campaign(0xB1A5 + rep, n, |r| f64::from(r.random_bool(LIMIT)));
            let mut events = 0u64;
            let mut seen = 0usize;
            let mut counts = Vec::with_capacity(looks.len());
            for &t in &looks {
                events += binary[seen..t as usize]
                    .iter()
                    .filter(|&&x| x == 1.0)
                    .count() as u64;
                seen = t as usize;
                counts.push(events);
            }
            let mix: Vec<f64> = looks
                .iter()
                .zip(&counts)
                .map(|(&t, &k)| (mixture.upper)(k, t, DELTA))
                .collect();
            // Planned spending: δ/L at each look, reported as the running minimum (METHODS.md
            // §11); the unadjusted bound spends δ at every look.
            let mut running = 1.0f64;
            let spent: Vec<f64> = looks
                .iter()
                .zip(&counts)
                .map(|(&t, &k)| {
                    running = running.min((exact.upper)(k, t, DELTA / l));
                    running
                })
                .collect();
            let naive: Vec<f64> = looks
                .iter()
                .zip(&counts)
                .map(|(&t, &k)| (exact.upper)(k, t, DELTA))
                .collect();
            // A bounded law with mean LIMIT: 3 LIMIT U², U uniform (E U² = 1/3).
            let bounded = campaign(0x5EC0 + rep, n, |r| {
                let u = r.random::<f64>();
                3.0 * LIMIT * u * u
            });
            [
                passes_somewhere(&mix),
                passes_somewhere(&betting(&binary, DELTA, End::Upper, false, &looks)),
                passes_somewhere(&eb(&binary, DELTA, End::Upper, false, &looks)),
                passes_somewhere(&spent),
                passes_somewhere(&naive),
                passes_somewhere(&betting(&bounded, DELTA, End::Upper, false, &looks)),
                passes_somewhere(&eb(&bounded, DELTA, End::Upper, false, &looks)),
            ]
        })
        .collect();
    let rate = |i: usize| outcomes.iter().filter(|o| o[i]).count() as f64 / REPS as f64;
    let names = [
        "beta-binomial-mixture (binary)",
        "betting-sequence (binary)",
        "eb-sequence (binary)",
        "exact at δ/L per look (binary)",
        "exact at δ every look (binary)",
        "betting-sequence (bounded)",
        "eb-sequence (bounded)",
    ];
    for (i, name) in names.iter().enumerate() {
        eprintln!("{name}: false-pass rate {:.4}", rate(i));
    }
    let allowed = DELTA + slack(DELTA, REPS);
    for i in [0, 1, 2, 3, 5, 6] {
        assert!(
            rate(i) <= allowed,
            "{}: false-pass rate {} > {allowed}",
            names[i],
            rate(i)
        );
    }
    // The control: the fixed-n bound read at every look without adjustment must visibly exceed
    // δ, or this test could not tell a valid method from an invalid one.
    assert!(rate(4) > 2.0 * DELTA, "unadjusted exact: {}", rate(4));
}

/// 40 checkpoints from 1 to n, spaced evenly in ln t.
fn log_checkpoints(n: u64) -> Vec<u64> {
    let hi = (n as f64).ln();
    let mut t: Vec<u64> = (0..40)
        .map(|i| (hi * i as f64 / 39.0).exp().round() as u64)
        .collect();
    t.dedup();
    t
}

#[test]
fn sequences_cover_at_every_trial_at_once() {
    // Under each law, the running bounds must contain the mean at every checkpoint of the
    // stream in at least 1 − δ of the replicates (one miss anywhere counts as a miss). Because
    // each value is the intersection over every earlier trial, containing the mean at the last
    // checkpoint means containing it at every trial; the earlier checkpoints are checked too,
    // and so is that the values never widen.
    let delta = 0.1;
    let reps = 800usize;
    let n = 1000usize;
    let ts = log_checkpoints(n as u64);
    assert!(ts.len() > 30 && ts[0] == 1 && *ts.last().expect("ts") == n as u64);
    // (name, mean, law); the third has the variance switch with the past while the conditional
    // mean stays 0.3 (condition (M) of METHODS.md §0.3).
    type Law = fn(&mut ChaCha8Rng, f64) -> f64;
    let laws: [(&str, f64, Law); 3] = [
        ("Bernoulli(0.1)", 0.1, |r, _| f64::from(r.random_bool(0.1))),
        ("Beta(2, 5)", 2.0 / 7.0, |r, _| {
            let mut u: [f64; 6] = std::array::from_fn(|_| r.random::<f64>());
            u.sort_by(f64::total_cmp);
            u[1]
        }),
        ("martingale", 0.3, |r, prev| {
            if prev >= 0.3 {
                if r.random_bool(0.5) { 0.55 } else { 0.05 }
            } else {
                f64::from(r.random_bool(0.3))
            }
        }),
    ];
    // (method, two-sided): one-sided bounds are checked at δ on each side separately, the
    // two-sided interval at total δ.
    let mut methods: Vec<(&str, bool)> = vec![
        ("betting-sequence", false),
        ("betting-sequence", true),
        ("eb-sequence", false),
    ];
    for (law_name, mean, law) in laws {
        let binary = law_name.starts_with("Bernoulli");
        if binary {
            methods.push(("beta-binomial-mixture", false));
            methods.push(("beta-binomial-mixture", true));
        }
        // Per replicate and method: (upper end missed somewhere, lower end missed somewhere).
        let misses: Vec<Vec<(bool, bool)>> = (0..reps as u64)
            .into_par_iter()
            .map(|rep| {
                let mut rng = ChaCha8Rng::seed_from_u64(0xC0FE + rep);
                let mut prev = 0.0;
                let x: Vec<f64> = (0..n)
                    .map(|_| {
                        prev = law(&mut rng, prev);
                        prev
                    })
                    .collect();
                methods
                    .iter()
                    .map(|&(id, two_sided)| {
                        let path = path_of(id);
                        let up = path(&x, delta, End::Upper, two_sided, &ts);
                        let lo = path(&x, delta, End::Lower, two_sided, &ts);
                        assert!(up.windows(2).all(|w| w[1] <= w[0]), "{id} widens: {up:?}");
                        assert!(lo.windows(2).all(|w| w[1] >= w[0]), "{id} widens: {lo:?}");
                        (up.iter().any(|&u| u < mean), lo.iter().any(|&l| l > mean))
                    })
                    .collect()
            })
            .collect();
        let allowed = delta + slack(delta, reps);
        for (j, &(id, two_sided)) in methods.iter().enumerate() {
            let count = |f: fn(&(bool, bool)) -> bool| {
                misses.iter().filter(|m| f(&m[j])).count() as f64 / reps as f64
            };
            let rates = if two_sided {
                vec![("interval", count(|m| m.0 || m.1))]
            } else {
                vec![("upper", count(|m| m.0)), ("lower", count(|m| m.1))]
            };
            for (what, rate) in rates {
                eprintln!("{law_name} {id} {what}: miss rate {rate:.4}");
                assert!(
                    rate <= allowed,
                    "{law_name} {id} {what}: miss rate {rate} > {allowed}"
                );
            }
        }
        if binary {
            methods.truncate(3);
        }
    }
}
