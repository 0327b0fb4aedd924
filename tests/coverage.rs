//! Coverage: exact enumeration for small n, and seeded simulation at the hardest rates.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use surety::bounds::{chernoff_kl, exact, hoeffding};

/// Binomial(n, p) probabilities by the multiplicative recurrence, written independently
/// of the library (plain f64, fine for n <= 300 and p not extreme).
fn pmf_table(n: u64, p: f64) -> Vec<f64> {
    let q = 1.0 - p;
    // start from the log of P(K = 0) to avoid underflow for larger n
    let mut ln_t = n as f64 * q.ln();
    let mut out = Vec::with_capacity(n as usize + 1);
    for j in 0..=n {
        out.push(ln_t.exp());
        if j < n {
            ln_t += ((n - j) as f64 / (j + 1) as f64).ln() + p.ln() - q.ln();
        }
    }
    out
}

/// P_p(upper bound < p) + and P_p(lower bound > p), by summing over every outcome.
fn miss_probabilities(n: u64, p: f64, uppers: &[f64], lowers: &[f64]) -> (f64, f64) {
    let pmf = pmf_table(n, p);
    let mut miss_up = 0.0;
    let mut miss_lo = 0.0;
    for k in 0..=n as usize {
        if uppers[k] < p {
            miss_up += pmf[k];
        }
        if lowers[k] > p {
            miss_lo += pmf[k];
        }
    }
    (miss_up, miss_lo)
}

#[test]
fn exact_enumeration_at_and_between_the_bounds() {
    // The miss probability of the upper bound is largest just above each U(k), where it
    // equals delta in exact arithmetic: a bound that is too low by any amount fails here.
    for &n in &[1u64, 2, 3, 5, 8, 13, 20, 30, 50, 100, 200] {
        for &delta in &[0.3, 0.05, 0.01, 1e-4] {
            let ups: Vec<f64> = (0..=n).map(|k| exact::upper(k, n, delta)).collect();
            let los: Vec<f64> = (0..=n).map(|k| exact::lower(k, n, delta)).collect();
            let mut rates = Vec::new();
            for k in 0..=n as usize {
                for &v in &[ups[k], los[k]] {
                    if v > 0.0 && v < 1.0 {
                        rates.push(v.next_up());
                        rates.push(v.next_down());
                        rates.push(v * (1.0 + 1e-6));
                        rates.push(v * (1.0 - 1e-6));
                    }
                }
            }
            rates.extend((1..200).map(|i| i as f64 / 200.0));
            for &p in &rates {
                if !(p > 0.0 && p < 1.0) {
                    continue;
                }
                let (mu, ml) = miss_probabilities(n, p, &ups, &los);
                // tolerance: rounding of the f64 pmf sum
                assert!(
                    mu <= delta * (1.0 + 1e-12),
                    "upper n={n} delta={delta} p={p}: miss {mu}"
                );
                assert!(
                    ml <= delta * (1.0 + 1e-12),
                    "lower n={n} delta={delta} p={p}: miss {ml}"
                );
            }
        }
    }
}

#[test]
fn exact_enumeration_is_tight() {
    // Clopper-Pearson is exact: just above U(k) the miss probability is delta up to
    // the accuracy of the bound (so a bound that is grossly conservative also fails).
    for &(n, k, delta) in &[
        (20u64, 3u64, 0.05),
        (100, 10, 0.01),
        (7, 0, 0.1),
        (50, 49, 0.05),
    ] {
        let ups: Vec<f64> = (0..=n).map(|j| exact::upper(j, n, delta)).collect();
        let los: Vec<f64> = (0..=n).map(|j| exact::lower(j, n, delta)).collect();
        let p = ups[k as usize] * (1.0 + 1e-9);
        let (mu, _) = miss_probabilities(n, p, &ups, &los);
        assert!(
            (mu / delta - 1.0).abs() < 1e-6,
            "n={n} k={k}: miss {mu} vs {delta}"
        );
    }
}

fn simulate(n: u64, p: f64, reps: u32, rng: &mut ChaCha8Rng) -> Vec<u64> {
    (0..reps)
        .map(|_| (0..n).filter(|_| rng.random_bool(p)).count() as u64)
        .collect()
}

#[test]
fn simulated_coverage_at_hard_rates() {
    let mut rng = ChaCha8Rng::seed_from_u64(20240611);
    let reps = 20_000u32;
    for &(n, delta, k0) in &[
        (40u64, 0.05, 3u64),
        (200, 0.1, 12),
        (500, 0.05, 0),
        (60, 0.2, 30),
    ] {
        let at = exact::upper(k0, n, delta);
        for &p in &[at.next_up(), at * 1.01, at * 0.99] {
            let ks = simulate(n, p, reps, &mut rng);
            let se = (delta * (1.0 - delta) / reps as f64).sqrt();
            for (name, up) in [
                ("exact", exact::upper as fn(u64, u64, f64) -> f64),
                ("kl", chernoff_kl::upper),
                ("hoeffding", hoeffding::upper),
            ] {
                let misses =
                    ks.iter().filter(|&&k| up(k, n, delta) < p).count() as f64 / reps as f64;
                assert!(
                    misses <= delta + 4.0 * se,
                    "{name} n={n} delta={delta} p={p}: {misses}"
                );
            }
            // the lower bound, at the mirrored rate
            let q = 1.0 - p;
            let ks: Vec<u64> = ks.iter().map(|&k| n - k).collect();
            for (name, lo) in [
                ("exact", exact::lower as fn(u64, u64, f64) -> f64),
                ("kl", chernoff_kl::lower),
                ("hoeffding", hoeffding::lower),
            ] {
                let misses =
                    ks.iter().filter(|&&k| lo(k, n, delta) > q).count() as f64 / reps as f64;
                assert!(
                    misses <= delta + 4.0 * se,
                    "{name} lower n={n} delta={delta} q={q}: {misses}"
                );
            }
        }
    }
}

#[test]
fn simulated_coverage_two_point_law() {
    // Non-binary [0, 1] data: X takes 0.15 or 0.95. The kl and Hoeffding mean bounds hold
    // for any such law (the exact binomial bound is not meant for it).
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    let (lo_v, hi_v) = (0.15f64, 0.95f64);
    let reps = 20_000u32;
    for &(n, delta, w) in &[(30u64, 0.05, 0.1), (200, 0.1, 0.02), (100, 0.05, 0.5)] {
        let mean = lo_v + (hi_v - lo_v) * w;
        let se = (delta * (1.0 - delta) / reps as f64).sqrt();
        let mut miss = [0u32; 4];
        for _ in 0..reps {
            let s: f64 = (0..n)
                .map(|_| if rng.random_bool(w) { hi_v } else { lo_v })
                .sum();
            let m = s / n as f64;
            miss[0] += (chernoff_kl::upper_mean(m, n, delta) < mean) as u32;
            miss[1] += (chernoff_kl::lower_mean(m, n, delta) > mean) as u32;
            miss[2] += (hoeffding::upper_mean(m, n, delta) < mean) as u32;
            miss[3] += (hoeffding::lower_mean(m, n, delta) > mean) as u32;
        }
        for (i, &c) in miss.iter().enumerate() {
            let frac = c as f64 / reps as f64;
            assert!(
                frac <= delta + 4.0 * se,
                "bound {i} n={n} delta={delta}: {frac}"
            );
        }
    }
}
