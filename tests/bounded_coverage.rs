//! Coverage of the bounded-mean methods: exact enumeration on two-point laws, seeded simulation
//! on continuous and ternary laws and on a dependent sequence with constant conditional mean.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use surety::bounds::{self, BoundedBounds, Needs, Sample, Summary};

/// Every catalogue method with bounds on bounded observations, by id.
fn bounded_methods() -> Vec<(&'static str, BoundedBounds)> {
    bounds::CATALOGUE
        .iter()
        .filter_map(|m| m.bounded.map(|b| (m.id, b)))
        .collect()
}

/// Binomial(n, p) probabilities in f64 by the multiplicative recurrence, independent of the
/// library (accurate to ~1e-13 for the n and p used here).
fn binomial_pmf(n: usize, p: f64) -> Vec<f64> {
    let q = 1.0 - p;
    let mut ln_t = n as f64 * q.ln();
    let mut out = Vec::with_capacity(n + 1);
    for j in 0..=n {
        out.push(ln_t.exp());
        if j < n {
            ln_t += ((n - j) as f64 / (j + 1) as f64).ln() + p.ln() - q.ln();
        }
    }
    out
}

/// A sample of `j` values `hi` and `n - j` values `lo`, the highs spread evenly through it.
fn two_point_sample(lo: f64, hi: f64, j: usize, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| {
            if ((i + 1) * j) / n > (i * j) / n {
                hi
            } else {
                lo
            }
        })
        .collect()
}

/// Largest miss probability of one-sided bounds `ups`/`los` (indexed by the number of highs) over
/// the means tried: a grid, and just past every bound value.
fn worst_miss(lo: f64, hi: f64, n: usize, ups: &[f64], los: &[f64]) -> (f64, f64) {
    let mut means: Vec<f64> = (1..50).map(|i| lo + (hi - lo) * i as f64 / 50.0).collect();
    for j in 0..=n {
        means.push(ups[j] * (1.0 + 1e-9));
        means.push(los[j] * (1.0 - 1e-9));
    }
    let mut worst = (0.0f64, 0.0f64);
    for &mu in &means {
        if !(mu > lo && mu < hi) {
            continue;
        }
        let w = (mu - lo) / (hi - lo);
        let pmf = binomial_pmf(n, w);
        let miss_up: f64 = (0..=n).filter(|&j| ups[j] < mu).map(|j| pmf[j]).sum();
        let miss_lo: f64 = (0..=n).filter(|&j| los[j] > mu).map(|j| pmf[j]).sum();
        worst = (worst.0.max(miss_up), worst.1.max(miss_lo));
    }
    worst
}

#[test]
fn enumeration_detects_an_undercovering_bound() {
    // Control: the normal-approximation bound p̂ ± 1.2816 sqrt(p̂(1 − p̂)/n) (one-sided 90 %,
    // common practice) is known to under-cover for small n; the enumeration must say so.
    let n = 30;
    let z = 1.2816;
    let ups: Vec<f64> = (0..=n)
        .map(|j| {
            let p = j as f64 / n as f64;
            (p + z * (p * (1.0 - p) / n as f64).sqrt()).min(1.0)
        })
        .collect();
    let los: Vec<f64> = ups.iter().rev().map(|u| 1.0 - u).collect();
    let (up, lo) = worst_miss(0.0, 1.0, n, &ups, &los);
    assert!(up > 0.1 && lo > 0.1, "{up} {lo}");
}

#[test]
fn two_point_laws_by_exact_enumeration() {
    // For a law on {lo, hi} the summary-based methods see only the number J of highs, which is
    // Binomial(n, w), so P(miss) = Σ_j P(J = j) 1[bound(j) misses the mean] exactly. The miss
    // probability is largest just past a bound value, so the means tried include every
    // U(j)·(1 + 1e-9) and L(j)·(1 − 1e-9): a bound that is too narrow by any amount that moves
    // the miss probability above δ fails here. (Betting depends on the order; it is simulated
    // below.)
    let laws = [(0.0, 1.0), (0.15, 0.95), (0.0, 0.5), (0.5, 1.0), (0.2, 0.3)];
    for (id, b) in bounded_methods() {
        if b.needs == Needs::Observations {
            continue;
        }
        let mut worst_rate = 0.0f64;
        for &(lo, hi) in &laws {
            for &n in &[10usize, 30, 100] {
                for &delta in &[0.2, 0.05, 0.01] {
                    let mut ups = Vec::with_capacity(n + 1);
                    let mut los = Vec::with_capacity(n + 1);
                    for j in 0..=n {
                        let xs = two_point_sample(lo, hi, j, n);
                        assert_eq!(xs.iter().filter(|&&x| x == hi).count(), j);
                        let sample = Sample {
                            summary: Summary::from_values(&xs).expect("in [0, 1]"),
                            observations: Some(&xs),
                        };
                        ups.push((b.upper)(&sample, delta));
                        los.push((b.lower)(&sample, delta));
                    }
                    let (miss_up, miss_lo) = worst_miss(lo, hi, n, &ups, &los);
                    // tolerance: rounding of the f64 pmf sum
                    assert!(
                        miss_up <= delta * (1.0 + 1e-9),
                        "{id} upper {{{lo}, {hi}}} n={n} δ={delta}: miss {miss_up}"
                    );
                    assert!(
                        miss_lo <= delta * (1.0 + 1e-9),
                        "{id} lower {{{lo}, {hi}}} n={n} δ={delta}: miss {miss_lo}"
                    );
                    worst_rate = worst_rate.max(miss_up.max(miss_lo) / delta);
                }
            }
        }
        eprintln!("{id}: largest miss probability {worst_rate:.3} δ");
    }
}

/// Laws on [0, 1] with their means, sampled from uniforms.
#[derive(Clone, Copy, Debug)]
enum Law {
    /// Beta(2, 5): the second smallest of six uniforms (an order statistic), mean 2/7.
    Beta25,
    /// Arcsine law Beta(½, ½): sin²(πU/2), mean ½, mass piled at both ends.
    Arcsine,
    /// U², mean ⅓ (Beta(½, 1)).
    Square,
    /// {0, ½, 1} with probabilities 0.6, 0.3, 0.1, mean 0.25.
    Ternary,
    /// Uniform on [0.45, 0.55], mean ½, variance 1/1200.
    Narrow,
    /// {0, 1} with P(1) = w (the mean).
    Bernoulli(f64),
}

impl Law {
    fn mean(self) -> f64 {
        match self {
            Law::Beta25 => 2.0 / 7.0,
            Law::Arcsine => 0.5,
            Law::Square => 1.0 / 3.0,
            Law::Ternary => 0.25,
            Law::Narrow => 0.5,
            Law::Bernoulli(w) => w,
        }
    }

    fn draw(self, rng: &mut ChaCha8Rng) -> f64 {
        match self {
            Law::Beta25 => {
                let mut u: [f64; 6] = std::array::from_fn(|_| rng.random::<f64>());
                u.sort_by(f64::total_cmp);
                u[1]
            }
            Law::Arcsine => {
                let s = (std::f64::consts::FRAC_PI_2 * rng.random::<f64>()).sin();
                s * s
            }
            Law::Square => {
                let u = rng.random::<f64>();
                u * u
            }
            Law::Ternary => {
                let u = rng.random::<f64>();
                if u < 0.6 {
                    0.0
                } else if u < 0.9 {
                    0.5
                } else {
                    1.0
                }
            }
            Law::Narrow => 0.45 + 0.1 * rng.random::<f64>(),
            Law::Bernoulli(w) => {
                if rng.random_bool(w) {
                    1.0
                } else {
                    0.0
                }
            }
        }
    }
}

/// Miss counts of every method (upper, lower) and of two-sided intervals, over `reps` samples.
fn simulate(
    methods: &[(&'static str, BoundedBounds)],
    draw: &mut dyn FnMut(&mut ChaCha8Rng, &mut Vec<f64>),
    mean: f64,
    reps: u32,
    delta: f64,
    rng: &mut ChaCha8Rng,
) -> Vec<(String, u32)> {
    let mut miss: Vec<(String, u32)> = Vec::new();
    for (id, b) in methods {
        miss.push((format!("{id} upper"), 0));
        miss.push((format!("{id} lower"), 0));
        if b.interval.is_some() {
            miss.push((format!("{id} interval"), 0));
        }
    }
    let mut xs = Vec::new();
    for _ in 0..reps {
        draw(rng, &mut xs);
        let sample = Sample {
            summary: Summary::from_values(&xs).expect("in [0, 1]"),
            observations: Some(&xs),
        };
        let mut k = 0;
        for (_, b) in methods {
            miss[k].1 += ((b.upper)(&sample, delta) < mean) as u32;
            miss[k + 1].1 += ((b.lower)(&sample, delta) > mean) as u32;
            k += 2;
            if let Some(interval) = b.interval {
                let (l, u) = interval(&sample, delta);
                miss[k].1 += (l > mean || u < mean) as u32;
                k += 1;
            }
        }
    }
    miss
}

fn check(miss: &[(String, u32)], reps: u32, delta: f64, what: &str) {
    // One-sided binomial allowance: 4 standard errors of a miss rate equal to δ.
    let se = (delta * (1.0 - delta) / reps as f64).sqrt();
    let worst = miss.iter().map(|m| m.1).max().unwrap_or(0) as f64 / reps as f64;
    eprintln!("{what}: largest miss rate {worst:.4} (δ = {delta})");
    for (name, count) in miss {
        let rate = *count as f64 / reps as f64;
        assert!(
            rate <= delta + 4.0 * se,
            "{name} on {what}: miss rate {rate} > {delta}"
        );
    }
}

#[test]
fn simulated_coverage_on_bounded_laws() {
    let mut rng = ChaCha8Rng::seed_from_u64(0x00B0_0DED);
    let methods = bounded_methods();
    let reps = 1500u32;
    let delta = 0.1;
    for law in [
        Law::Beta25,
        Law::Arcsine,
        Law::Square,
        Law::Ternary,
        Law::Narrow,
        Law::Bernoulli(0.03),
    ] {
        for &n in &[25usize, 150] {
            let mut draw = |rng: &mut ChaCha8Rng, xs: &mut Vec<f64>| {
                xs.clear();
                xs.extend((0..n).map(|_| law.draw(rng)));
            };
            let miss = simulate(&methods, &mut draw, law.mean(), reps, delta, &mut rng);
            check(&miss, reps, delta, &format!("{law:?} n={n}"));
        }
    }
}

#[test]
fn simulated_betting_coverage_at_its_own_bound() {
    // Two-point laws whose mean sits just above the betting bound of a typical sample: a
    // sample of n values with j0 highs spread evenly. Samples with that many highs or fewer
    // then miss whenever their bound is no larger, which is where the miss rate peaks.
    let mut rng = ChaCha8Rng::seed_from_u64(20261202);
    let methods: Vec<_> = bounded_methods()
        .into_iter()
        .filter(|(_, b)| b.needs == Needs::Observations)
        .collect();
    assert!(!methods.is_empty());
    let reps = 3000u32;
    for &(lo, hi, n, j0, delta) in &[
        (0.0, 1.0, 60usize, 2usize, 0.1),
        (0.15, 0.95, 40, 8, 0.1),
        (0.0, 0.5, 100, 30, 0.05),
    ] {
        let xs = two_point_sample(lo, hi, j0, n);
        let summary = Summary::from_values(&xs).expect("in [0, 1]");
        let at = (methods[0].1.upper)(
            &Sample {
                summary,
                observations: Some(&xs),
            },
            delta,
        );
        let mean = at * (1.0 + 1e-9);
        let w = (mean - lo) / (hi - lo);
        let mut draw = |rng: &mut ChaCha8Rng, xs: &mut Vec<f64>| {
            xs.clear();
            xs.extend((0..n).map(|_| if rng.random_bool(w) { hi } else { lo }));
        };
        let miss = simulate(&methods, &mut draw, mean, reps, delta, &mut rng);
        check(
            &miss,
            reps,
            delta,
            &format!("{{{lo}, {hi}}} n={n} at the bound {at}"),
        );
    }
}

#[test]
fn simulated_coverage_under_martingale_dependence() {
    // X_t given the past has mean μ = 0.3 always, but its law depends on X_{t-1}: after a value
    // at or above μ it is 0.3 ± 0.25 (each with probability ½), otherwise {0, 1} with P(1) = 0.3.
    // The conditional mean is constant (condition (M) of METHODS.md §0.3) while the variance
    // switches with the past; the methods valid under (M) must still cover μ.
    let mut rng = ChaCha8Rng::seed_from_u64(0x3A27);
    let mu = 0.3;
    let methods: Vec<_> = bounds::CATALOGUE
        .iter()
        .filter(|m| m.dependence.contains(&bounds::Dependence::Martingale))
        .filter_map(|m| m.bounded.map(|b| (m.id, b)))
        .collect();
    assert!(methods.iter().any(|(id, _)| *id == "betting"));
    let reps = 2000u32;
    let delta = 0.1;
    for &n in &[40usize, 200] {
        let mut draw = |rng: &mut ChaCha8Rng, xs: &mut Vec<f64>| {
            xs.clear();
            let mut prev = 0.0;
            for _ in 0..n {
                let x = if prev >= mu {
                    if rng.random_bool(0.5) {
                        mu + 0.25
                    } else {
                        mu - 0.25
                    }
                } else if rng.random_bool(mu) {
                    1.0
                } else {
                    0.0
                };
                xs.push(x);
                prev = x;
            }
        };
        let miss = simulate(&methods, &mut draw, mu, reps, delta, &mut rng);
        check(&miss, reps, delta, &format!("martingale n={n}"));
    }
}
