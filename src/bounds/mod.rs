//! The method catalogue: every published bound surety can report, declared once.
//!
//! `surety methods`, the `auto` rule, the assumption checklist and the report's method appendix
//! all read [`CATALOGUE`] and [`ASSUMPTIONS`]. Adding a method is one new file in this folder plus
//! one entry in [`CATALOGUE`].

pub mod bernstein_empirical;
pub mod bernstein_unexpected;
pub mod beta_binomial;
pub mod betting;
pub mod betting_sequence;
mod checkpoints;
pub mod chernoff_kl;
pub mod eb_sequence;
pub mod exact;
pub mod hoeffding;
pub mod sample;
pub mod split_kl;

pub use sample::{Needs, Sample, Summary};

use serde::Serialize;

/// Kind of outcome a method accepts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum OutcomeKind {
    /// One trial yields 0 or 1 (an event or not).
    Binary,
    /// One trial yields a value in a declared range [a, b].
    Bounded,
}

/// Dependence structure between trials a method tolerates.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Dependence {
    /// Independent trials.
    Independent,
    /// Constant conditional mean given the past.
    Martingale,
    /// Trials grouped in clusters, analysed on cluster means.
    Clustered,
    /// Trials more than m apart are independent.
    MDependent,
}

/// Whether a bound may be read once at a pre-set sample size or at any time.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Guarantee {
    /// Valid at a number of trials fixed before seeing the data.
    FixedN,
    /// Valid simultaneously at every number of trials (a confidence sequence).
    Anytime,
}

impl Guarantee {
    /// The id written in results and reports.
    pub fn id(self) -> &'static str {
        match self {
            Guarantee::FixedN => "fixed-n",
            Guarantee::Anytime => "anytime",
        }
    }
}

/// How an assumption can be confirmed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Confirmation {
    /// The data themselves show whether it holds.
    Data,
    /// Only a person who knows how the trials were run can confirm it.
    Attestation,
}

/// A condition a method needs for its guarantee to hold.
#[derive(Debug, Clone, Serialize)]
pub struct Assumption {
    /// Stable id, used as the key under `attestations:` in a spec.
    pub id: &'static str,
    /// The condition in words.
    pub text: &'static str,
    /// What goes wrong when it fails.
    pub consequence: &'static str,
    /// Whether the data can check it.
    pub confirmation: Confirmation,
}

/// One-sided bounds on a binary rate from counts: `(events, trials, delta) -> bound`.
///
/// Each function returns a bound that covers the true rate with probability at least 1 − delta
/// (upper: rate ≤ bound; lower: rate ≥ bound), given trials ≥ 1, events ≤ trials, 0 < delta < 1.
#[derive(Debug, Clone, Copy)]
pub struct CountBounds {
    /// One-sided upper bound.
    pub upper: fn(u64, u64, f64) -> f64,
    /// One-sided lower bound.
    pub lower: fn(u64, u64, f64) -> f64,
    /// A two-sided interval `(lower, upper)` at total error delta, for methods built
    /// two-sided.
    pub interval: Option<CountIntervalFn>,
}

/// A two-sided interval `(lower, upper)` on a binary rate from counts at total error `delta`:
/// `(events, trials, delta) -> (lower, upper)` with `P(lower <= rate <= upper) >= 1 - delta`.
pub type CountIntervalFn = fn(u64, u64, f64) -> (f64, f64);

/// Which end of a bound a path follows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum End {
    /// The upper bound (running minimum).
    Upper,
    /// The lower bound (running maximum).
    Lower,
}

/// Running bound over a growing prefix of ordered observations in [0, 1]:
/// `(x, delta, end, two_sided, checkpoints) -> one value per checkpoint`.
///
/// `checkpoints` are ascending trial counts t with 1 <= t <= x.len(); the value at t is the
/// bound after the first t observations, intersected over every s <= t (running minimum of upper
/// ends / running maximum of lower ends). `two_sided`: for a method built two-sided, the
/// requested end of its interval at total error delta; otherwise the one-sided bound at delta.
/// For an anytime method every value holds at once with probability at least 1 − delta.
/// Checkpoints outside 1..=x.len(), and every checkpoint on invalid input, get the vacuous value
/// (1 for an upper end, 0 for a lower one).
pub type PathFn = fn(&[f64], f64, End, bool, &[u64]) -> Vec<f64>;

/// Hoeffding in Janson's (2004) dependency-graph form for m-dependent trials:
/// `(mean, n, m, delta) -> bound`, U = mean + sqrt((m + 1) ln(1/delta) / (2 n)).
///
/// Each function covers the average mean of n observations in [0, 1] with probability at least
/// 1 − delta when observations more than m apart are independent (n and m fixed in advance).
#[derive(Debug, Clone, Copy)]
pub struct MDependentBounds {
    /// One-sided upper bound.
    pub upper: fn(f64, u64, u64, f64) -> f64,
    /// One-sided lower bound.
    pub lower: fn(f64, u64, u64, f64) -> f64,
}

/// A two-sided interval `(lower, upper)` on the mean of values rescaled to [0, 1] at total
/// error `delta`: `P(lower <= mean <= upper) >= 1 - delta`.
pub type IntervalFn = fn(&Sample, f64) -> (f64, f64);

/// One-sided bounds (and, for methods built two-sided, an interval) on the mean of values
/// rescaled to [0, 1]: `(sample, delta) -> bound`.
///
/// Each bound covers the true mean with probability at least 1 − delta when the sample holds
/// what [`BoundedBounds::needs`] says; given less, it returns the vacuous bound (1 or 0).
#[derive(Debug, Clone, Copy)]
pub struct BoundedBounds {
    /// What the method must be given.
    pub needs: Needs,
    /// One-sided upper bound.
    pub upper: fn(&Sample, f64) -> f64,
    /// One-sided lower bound.
    pub lower: fn(&Sample, f64) -> f64,
    /// A two-sided interval at total error delta, for methods built two-sided.
    pub interval: Option<IntervalFn>,
}

/// A catalogue entry: everything the program knows about one method.
#[derive(Debug, Clone, Serialize)]
pub struct Method {
    /// Id used in specs and results.
    pub id: &'static str,
    /// Display name.
    pub name: &'static str,
    /// What the method guarantees, in words.
    pub statement: &'static str,
    /// The bound in typst math markup (constant text of ours, never user input).
    pub formula_typst: &'static str,
    /// Primary publication.
    pub citation: &'static str,
    /// Outcomes it is valid for.
    pub outcomes: &'static [OutcomeKind],
    /// Dependence models it is valid under.
    pub dependence: &'static [Dependence],
    /// Fixed-n or anytime.
    pub guarantee: Guarantee,
    /// Whether the method builds a two-sided interval itself (otherwise δ/2 goes to each side).
    pub two_sided_built: bool,
    /// Ids of the assumptions in [`ASSUMPTIONS`] its guarantee rests on.
    pub assumptions: &'static [&'static str],
    /// Bounds from counts, for binary outcomes.
    #[serde(skip)]
    pub counts: Option<CountBounds>,
    /// Bounds from bounded observations rescaled to [0, 1].
    #[serde(skip)]
    pub bounded: Option<BoundedBounds>,
    /// The bound along the trials, for methods that can follow a stream of observations.
    #[serde(skip)]
    pub path: Option<PathFn>,
    /// Bounds for m-dependent trials, for methods that have a dependency-graph form.
    #[serde(skip)]
    pub m_dependent: Option<MDependentBounds>,
}

impl Method {
    /// Whether the method may be used for this outcome and dependence model.
    pub fn valid_for(&self, outcome: OutcomeKind, dependence: Dependence) -> bool {
        self.outcomes.contains(&outcome) && self.dependence.contains(&dependence)
    }
}

/// Every assumption any method or dependence model may rest on.
pub static ASSUMPTIONS: &[Assumption] = &[
    Assumption {
        id: "whole-counts",
        text: "Every trial is counted once, as an event or not: whole numbers with events \
               not exceeding trials.",
        consequence: "A binomial bound has no meaning for weighted or fractional counts.",
        confirmation: Confirmation::Data,
    },
    Assumption {
        id: "independent-trials",
        text: "The outcome of one trial carries no information about another: no shared \
               fixture, lot, specimen or operator effect links them.",
        consequence: "Dependent trials carry less information than their number suggests; \
                      the bound can be too narrow and the false-pass risk larger than stated.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "identical-conditions",
        text: "All trials measure one and the same rate: same design, build, configuration \
               and test conditions throughout the campaign.",
        consequence: "If the rate drifted, the exact bound may not hold for any single \
                      condition, including the one in the field.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "identical-distribution",
        text: "Every trial draws its value from one and the same distribution: same design, \
               build, configuration and test conditions throughout the campaign.",
        consequence: "These bounds estimate the spread from the sample itself; if conditions \
                      changed, that estimate can understate it and the bound can be too narrow.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "constant-conditional-mean",
        text: "Whatever happened in earlier trials, the expected value of the next one is the \
               same number: trials may influence each other's spread, but not their mean.",
        consequence: "If the mean drifts or follows earlier results, the bound may not hold \
                      for any single value of the mean, including the one in use.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "values-in-range",
        text: "Every observed value lies inside the declared range [a, b], and the range was \
               fixed before the data were seen.",
        consequence: "The bounds rest on the range alone in place of a distribution; a value \
                      outside it voids the guarantee, and a range chosen from the data can be \
                      too narrow for the values it must cover.",
        confirmation: Confirmation::Data,
    },
    Assumption {
        id: "fixed-sample-size",
        text: "The number of trials was fixed before testing, and testing did not stop or \
               continue because of the results seen.",
        consequence: "Stopping when the results look good raises the false-pass risk above \
                      the stated error budget.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "complete-records",
        text: "No trial was excluded, repeated or reclassified after its outcome was known.",
        consequence: "Dropping or retesting failures biases the counts toward passing.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "representative-trials",
        text: "The units and conditions tested represent the population and use the claim \
               is about, and the system was not tuned on these trials.",
        consequence: "The guarantee then holds for the tested population only, not for the \
                      product in use.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "criteria-registered",
        text: "The claim and the plan (limit, confidence, scope, planned trials) were fixed \
               and registered before the test data were seen.",
        consequence: "Criteria chosen or moved after seeing the data can make almost any \
                      result pass; the stated false-pass risk then no longer holds.",
        confirmation: Confirmation::Data,
    },
    Assumption {
        id: "independent-clusters",
        text: "The clusters named in the cluster column are independent of each other: no \
               fixture, lot, operator or other shared cause links two clusters, and every \
               trial belongs to exactly one cluster.",
        consequence: "Clusters that share a cause carry less information than their number \
                      suggests; the bound can then be too narrow.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "m-dependent-trials",
        text: "In run order, trials more than m apart are independent of each other, and m \
               was fixed before the data were seen.",
        consequence: "Dependence reaching further than m trials makes the bound too narrow.",
        confirmation: Confirmation::Attestation,
    },
    Assumption {
        id: "looks-recorded",
        text: "Every analysis of these data is recorded as a look in the study's ledger, and \
               δ is spent over the looks as planned.",
        consequence: "Unrecorded looks are unpaid for: stopping at a look that happened to \
                      pass raises the false-pass risk above δ.",
        confirmation: Confirmation::Data,
    },
];

/// The methods, in the order `surety methods` lists them.
pub static CATALOGUE: &[Method] = &[
    Method {
        id: "exact",
        name: "Exact binomial (Clopper–Pearson)",
        statement: "For k events in n independent trials with a common rate p, the upper bound \
                    is the largest rate at which k or fewer events still have probability \
                    above δ; the lower bound mirrors it. Coverage is at least 1 − δ for every \
                    true rate.",
        formula_typst: "U = sup {p : sum_(j=0)^k binom(n, j) p^j (1-p)^(n-j) > delta}, quad \
                        L = inf {p : sum_(j=k)^n binom(n, j) p^j (1-p)^(n-j) > delta}",
        citation: "C. J. Clopper and E. S. Pearson (1934), \"The use of confidence or fiducial \
                   limits illustrated in the case of the binomial\", Biometrika 26(4):404–413.",
        outcomes: &[OutcomeKind::Binary],
        dependence: &[Dependence::Independent, Dependence::Martingale],
        guarantee: Guarantee::FixedN,
        two_sided_built: false,
        assumptions: &[
            "whole-counts",
            "independent-trials",
            "identical-conditions",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: Some(CountBounds {
            upper: exact::upper,
            lower: exact::lower,
            interval: None,
        }),
        bounded: None,
        path: None,
        m_dependent: None,
    },
    Method {
        id: "chernoff-kl",
        name: "Chernoff-kl (binary relative entropy)",
        statement: "The observed mean of n independent values in [0, 1] falls short of the true \
                    mean by an amount whose probability is at most exp(−n·kl); inverting the \
                    relative entropy kl gives the bound. Valid for any values in [0, 1], so \
                    never tighter than the exact bound on binary data.",
        formula_typst: "U = max {q >= hat(p) : n dot \"kl\"(hat(p) || q) <= ln(1 slash delta)}, \
                        quad \"kl\"(p || q) = p ln p/q + (1-p) ln (1-p)/(1-q)",
        citation: "W. Hoeffding (1963), \"Probability inequalities for sums of bounded random \
                   variables\", J. Amer. Statist. Assoc. 58(301):13–30; H. Chernoff (1952), \
                   Ann. Math. Statist. 23(4):493–507.",
        outcomes: &[OutcomeKind::Binary, OutcomeKind::Bounded],
        dependence: &[
            Dependence::Independent,
            Dependence::Martingale,
            Dependence::Clustered,
        ],
        guarantee: Guarantee::FixedN,
        two_sided_built: false,
        assumptions: &[
            "independent-trials",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: Some(CountBounds {
            upper: chernoff_kl::upper,
            lower: chernoff_kl::lower,
            interval: None,
        }),
        bounded: Some(BoundedBounds {
            needs: Needs::Mean,
            upper: chernoff_kl::upper_sample,
            lower: chernoff_kl::lower_sample,
            interval: None,
        }),
        path: None,
        m_dependent: None,
    },
    Method {
        id: "hoeffding",
        name: "Hoeffding",
        statement: "The mean of n independent values in [0, 1] exceeds its observed value by \
                    more than t with probability at most exp(−2nt²). It ignores the variance, \
                    so it is the loosest method whenever the values spread little (small rates \
                    included).",
        formula_typst: "U = hat(p) + sqrt(ln(1 slash delta) / (2 n)), quad \
                        L = hat(p) - sqrt(ln(1 slash delta) / (2 n))",
        citation: "W. Hoeffding (1963), \"Probability inequalities for sums of bounded random \
                   variables\", J. Amer. Statist. Assoc. 58(301):13–30, Theorem 2.",
        outcomes: &[OutcomeKind::Binary, OutcomeKind::Bounded],
        dependence: &[
            Dependence::Independent,
            Dependence::Martingale,
            Dependence::Clustered,
            Dependence::MDependent,
        ],
        guarantee: Guarantee::FixedN,
        two_sided_built: false,
        assumptions: &[
            "independent-trials",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: Some(CountBounds {
            upper: hoeffding::upper,
            lower: hoeffding::lower,
            interval: None,
        }),
        bounded: Some(BoundedBounds {
            needs: Needs::Mean,
            upper: hoeffding::upper_sample,
            lower: hoeffding::lower_sample,
            interval: None,
        }),
        path: None,
        m_dependent: Some(MDependentBounds {
            upper: hoeffding::upper_m_dependent,
            lower: hoeffding::lower_m_dependent,
        }),
    },
    Method {
        id: "bernstein-empirical",
        name: "Empirical Bernstein (Maurer–Pontil)",
        statement: "For n ≥ 2 independent values in [0, 1] from one distribution, the true mean \
                    exceeds the sample mean by more than a variance term and a range term with \
                    probability at most δ. The sample variance stands in for the unknown one, \
                    which costs ln(2/δ) in place of ln(1/δ) and the constant 7/3.",
        formula_typst: "U = overline(x) + sqrt((2 V_n ln(2 slash delta)) / n) \
                        + (7 ln(2 slash delta)) / (3 (n - 1)), quad \
                        V_n = 1/(n-1) sum_(i=1)^n (x_i - overline(x))^2",
        citation: "A. Maurer and M. Pontil (2009), \"Empirical Bernstein bounds and sample \
                   variance penalization\", Proc. 22nd Conference on Learning Theory (COLT), \
                   Theorem 4 (arXiv:0907.3740).",
        outcomes: &[OutcomeKind::Bounded],
        dependence: &[Dependence::Independent],
        guarantee: Guarantee::FixedN,
        two_sided_built: false,
        assumptions: &[
            "values-in-range",
            "independent-trials",
            "identical-distribution",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: None,
        bounded: Some(BoundedBounds {
            needs: Needs::Moments,
            upper: bernstein_empirical::upper,
            lower: bernstein_empirical::lower,
            interval: None,
        }),
        path: None,
        m_dependent: None,
    },
    Method {
        id: "bernstein-unexpected",
        name: "Unexpected Bernstein (grid of rates)",
        statement: "For independent values in [0, 1] and any rate η in (0, 1), \
                    exp(η(μ − X) − ψ(−η)X²) has expectation at most 1, with \
                    ψ(u) = u − ln(1 + u). The k rates 1/2, 1/4, …, 1/2^k are fixed from n and δ \
                    alone; they share δ by a union bound and the smallest of the k bounds is \
                    reported.",
        formula_typst: "U = min_(eta in {2^(-1), ..., 2^(-k)}) [overline(x) \
                        + psi(-eta) / eta dot overline(x^2) + ln(k slash delta) / (eta n)], \
                        quad psi(u) = u - ln(1 + u), quad \
                        k = max(1, ceil(log_2 (1/2 sqrt(n slash ln(1 slash delta)))))",
        citation: "Z. Mhammedi, P. Grünwald and B. Guedj (2019), \"PAC-Bayes un-expected \
                   Bernstein inequality\", Advances in Neural Information Processing Systems \
                   32:12202–12213; X. Fan, I. Grama and Q. Liu (2012), \"Hoeffding's \
                   inequality for supermartingales\", Stochastic Process. Appl. \
                   122(10):3545–3559.",
        outcomes: &[OutcomeKind::Bounded],
        dependence: &[Dependence::Independent],
        guarantee: Guarantee::FixedN,
        two_sided_built: false,
        assumptions: &[
            "values-in-range",
            "independent-trials",
            "identical-distribution",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: None,
        bounded: Some(BoundedBounds {
            needs: Needs::Moments,
            upper: bernstein_unexpected::upper,
            lower: bernstein_unexpected::lower,
            interval: None,
        }),
        path: None,
        m_dependent: None,
    },
    Method {
        id: "split-kl",
        name: "Split-kl",
        statement: "Each value in [0, 1] is split at ½ into the part above and the part below; \
                    each part, doubled, is a [0, 1] variable with its own Chernoff-kl bound at \
                    δ/2. Tight when the values sit on 0, ½ and 1, where both parts are binary; \
                    on binary data it equals Chernoff-kl at δ/2.",
        formula_typst: "U = 1/2 + 1/2 \"kl\"_+^(-1)(2 hat(p)^+, epsilon) \
                        - 1/2 \"kl\"_-^(-1)(2 hat(p)^-, epsilon), quad \
                        epsilon = ln(2 slash delta) / n, quad \
                        hat(p)^(plus.minus) = 1/n sum_(i=1)^n max(0, plus.minus (x_i - 1/2))",
        citation: "Y.-S. Wu and Y. Seldin (2022), \"Split-kl and PAC-Bayes-split-kl \
                   inequalities for ternary random variables\", Advances in Neural \
                   Information Processing Systems 35 (arXiv:2206.00706).",
        outcomes: &[OutcomeKind::Bounded],
        dependence: &[Dependence::Independent],
        guarantee: Guarantee::FixedN,
        two_sided_built: false,
        assumptions: &[
            "values-in-range",
            "independent-trials",
            "identical-distribution",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: None,
        bounded: Some(BoundedBounds {
            needs: Needs::Split,
            upper: split_kl::upper,
            lower: split_kl::lower,
            interval: None,
        }),
        path: None,
        m_dependent: None,
    },
    Method {
        id: "betting",
        name: "Betting (Waudby-Smith–Ramdas)",
        statement: "For every candidate mean m, a gambler bets against it with stakes set from \
                    earlier values only. Under the true mean the capital is a fair game, so by \
                    Ville's inequality it ever reaches 1/δ with probability at most δ. The bound \
                    is the edge of the candidates whose capital stayed below 1/δ throughout the \
                    n trials. Trials may depend on each other, provided each has the same mean \
                    given the past.",
        formula_typst: "U = inf {m : max_(t <= n) product_(i=1)^t (1 + lambda_i (m) (m - x_i)) \
                        >= 1 slash delta}, quad lambda_i (m) = min(sqrt((2 ln(1 slash delta)) \
                        / (n hat(sigma)_(i-1)^2)), 1 / (2 (1 - m)))",
        citation: "I. Waudby-Smith and A. Ramdas (2024), \"Estimating means of bounded random \
                   variables by betting\", J. R. Stat. Soc. B 86(1):1–27 (arXiv:2010.09686).",
        outcomes: &[OutcomeKind::Bounded],
        dependence: &[
            Dependence::Independent,
            Dependence::Martingale,
            Dependence::Clustered,
        ],
        guarantee: Guarantee::FixedN,
        two_sided_built: true,
        assumptions: &[
            "values-in-range",
            "constant-conditional-mean",
            "fixed-sample-size",
            "complete-records",
            "representative-trials",
        ],
        counts: None,
        bounded: Some(BoundedBounds {
            needs: Needs::Observations,
            upper: betting::upper,
            lower: betting::lower,
            interval: Some(betting::interval),
        }),
        path: None,
        m_dependent: None,
    },
    Method {
        id: "betting-sequence",
        name: "Betting confidence sequence (Waudby-Smith–Ramdas)",
        statement: "As for the betting bound, a gambler bets against every candidate mean with \
                    stakes set from earlier values only, but the stakes shrink with the number \
                    of trials seen instead of a planned total. The capital is then a fair game \
                    however long testing runs, and by Ville's inequality it ever reaches 1/δ \
                    with probability at most δ: the bound holds at every number of trials at \
                    once, so testing may stop or continue because of the results seen. The \
                    bound after t trials is the edge of the candidates whose capital stayed \
                    below 1/δ at every trial so far.",
        formula_typst: "U_t = inf {m : max_(s <= t) product_(i=1)^s (1 + lambda_i (m) (m - x_i)) \
                        >= 1 slash delta}, quad lambda_i (m) = min(sqrt((2 ln(1 slash delta)) \
                        / (hat(sigma)_(i-1)^2 dot i ln(1 + i))), 1 / (2 (1 - m)))",
        citation: "I. Waudby-Smith and A. Ramdas (2024), \"Estimating means of bounded random \
                   variables by betting\", J. R. Stat. Soc. B 86(1):1–27 (arXiv:2010.09686); \
                   J. Ville (1939), Étude critique de la notion de collectif, Gauthier-Villars.",
        outcomes: &[OutcomeKind::Bounded],
        dependence: &[
            Dependence::Independent,
            Dependence::Martingale,
            Dependence::Clustered,
        ],
        guarantee: Guarantee::Anytime,
        two_sided_built: true,
        assumptions: &[
            "values-in-range",
            "constant-conditional-mean",
            "complete-records",
            "representative-trials",
        ],
        counts: None,
        bounded: Some(BoundedBounds {
            needs: Needs::Observations,
            upper: betting_sequence::upper,
            lower: betting_sequence::lower,
            interval: Some(betting_sequence::interval),
        }),
        path: Some(betting_sequence::path),
        m_dependent: None,
    },
    Method {
        id: "beta-binomial-mixture",
        name: "Beta-binomial mixture (Robbins)",
        statement: "For every candidate rate p, the likelihood of the trials so far under an \
                    alternative rate, averaged over a uniform prior fixed in advance and divided \
                    by their likelihood under p, is a fair game when p is the true rate. By \
                    Ville's inequality it ever reaches 1/δ with probability at most δ, so the \
                    rates it has never rejected form a bound that holds at every number of \
                    trials at once: testing may stop or continue because of the results seen. \
                    The one-sided bound averages over alternatives on one side of p only; the \
                    two-sided interval averages over all of them at total error δ.",
        formula_typst: "U_t = sup {p : (integral_0^p q^(S_t) (1-q)^(t - S_t) dif q) \
                        / (p^(S_t + 1) (1-p)^(t - S_t)) < 1 slash delta}, quad \
                        \"two-sided:\" {p : B(1 + S_t, 1 + t - S_t) \
                        / (p^(S_t) (1-p)^(t - S_t)) < 1 slash delta}",
        citation: "H. Robbins (1970), \"Statistical methods related to the law of the iterated \
                   logarithm\", Ann. Math. Statist. 41(5):1397–1409; S. R. Howard, A. Ramdas, \
                   J. McAuliffe and J. Sekhon (2021), \"Time-uniform, nonparametric, \
                   nonasymptotic confidence sequences\", Ann. Statist. 49(2):1055–1080.",
        outcomes: &[OutcomeKind::Binary],
        dependence: &[Dependence::Independent, Dependence::Martingale],
        guarantee: Guarantee::Anytime,
        two_sided_built: true,
        assumptions: &[
            "whole-counts",
            "constant-conditional-mean",
            "complete-records",
            "representative-trials",
        ],
        counts: Some(CountBounds {
            upper: beta_binomial::upper,
            lower: beta_binomial::lower,
            interval: Some(beta_binomial::interval),
        }),
        bounded: None,
        path: Some(beta_binomial::path),
        m_dependent: None,
    },
    Method {
        id: "eb-sequence",
        name: "Empirical-Bernstein confidence sequence (Waudby-Smith–Ramdas)",
        statement: "A closed form valid at every number of trials at once: each trial's \
                    deviation from the mean is weighted by a rate set from earlier values only, \
                    and a variance term estimated from the trials so far pays for the spread. \
                    The product of the resulting factors never grows on average under the true \
                    mean, so by Ville's inequality it ever reaches 1/δ with probability at most \
                    δ, and testing may stop or continue because of the results seen. The centre \
                    is a weighted mean of the values, not their plain average.",
        formula_typst: "U_t = min_(s <= t) (sum_(i=1)^s lambda_i x_i + ln(1 slash delta) \
                        + sum_(i=1)^s (x_i - hat(mu)_(i-1))^2 psi(lambda_i)) \
                        / (sum_(i=1)^s lambda_i), quad psi(lambda) = -ln(1 - lambda) - lambda, \
                        quad lambda_i = min(sqrt((2 ln(1 slash delta)) \
                        / (hat(sigma)_(i-1)^2 dot i ln(1 + i))), 1/2)",
        citation: "I. Waudby-Smith and A. Ramdas (2024), \"Estimating means of bounded random \
                   variables by betting\", J. R. Stat. Soc. B 86(1):1–27 (arXiv:2010.09686), \
                   predictable plug-in empirical-Bernstein confidence sequence; X. Fan, \
                   I. Grama and Q. Liu (2012), \"Hoeffding's inequality for supermartingales\", \
                   Stochastic Process. Appl. 122(10):3545–3559.",
        outcomes: &[OutcomeKind::Bounded],
        dependence: &[
            Dependence::Independent,
            Dependence::Martingale,
            Dependence::Clustered,
        ],
        guarantee: Guarantee::Anytime,
        two_sided_built: false,
        assumptions: &[
            "values-in-range",
            "constant-conditional-mean",
            "complete-records",
            "representative-trials",
        ],
        counts: None,
        bounded: Some(BoundedBounds {
            needs: Needs::Observations,
            upper: eb_sequence::upper,
            lower: eb_sequence::lower,
            interval: None,
        }),
        path: Some(eb_sequence::path),
        m_dependent: None,
    },
];

/// The catalogue entry with this id.
pub fn find(id: &str) -> Option<&'static Method> {
    CATALOGUE.iter().find(|m| m.id == id)
}

/// The assumption with this id.
pub fn assumption(id: &str) -> Option<&'static Assumption> {
    ASSUMPTIONS.iter().find(|a| a.id == id)
}
