//! Outcome data, whatever their source, as the analysis sees them: one entry per arm with its
//! counts (binary outcomes) or its rescaled summary and observation stream (bounded outcomes).
//!
//! Inline data come from the spec itself ([`inline`]); data files are read by the readers in
//! this folder. Either way the analysis receives a [`Dataset`] and never touches a file.
//!
//! Under `dependence: {model: clustered}` trials of one cluster may depend on each other, so
//! only clusters count as independent draws: each arm is then the arm of its cluster means
//! (each a value in [0, 1] after rescaling), with the trials behind it kept in [`Nominal`].

mod collect;
mod delimited;
pub mod error;
pub mod file;
mod parquet;
mod source;
mod tally;

pub use error::{DataError, Place, Problem, ProblemKind};
use file::empty;
pub use file::{
    ArmData, ClusterTotal, FileData, Format, HISTOGRAM_BINS, ReadOptions, ValueKind, read_file,
};

use crate::bounds::Summary;
use crate::bounds::sample::Accumulator;
use crate::spec::{DataSource, DependenceModel, OutcomeKind, Spec, SummaryStats};
use std::path::Path;

/// Every arm's data, plus the files they came from.
#[derive(Debug, Clone, Default)]
pub struct Dataset {
    /// One entry per arm, in the order of the spec (or of first appearance in a file).
    pub arms: Vec<Arm>,
    /// Data files read, with their digests (empty for inline data).
    pub inputs: Vec<FileInput>,
}

/// One arm's data.
#[derive(Debug, Clone)]
pub struct Arm {
    /// The arm's name (`all` for a single unnamed arm).
    pub name: String,
    /// Number of independent draws the analysis counts: trials, or clusters when `nominal`
    /// is set.
    pub n: u64,
    /// What the trials (or, when `nominal` is set, the cluster means) yielded.
    pub values: Values,
    /// `Some` exactly when the analysis runs on cluster means: the trials behind them.
    pub nominal: Option<Nominal>,
    /// Binary outcomes read from a file, as 0 and 1 in trial order, when the stream was asked
    /// for (bounded outcomes keep theirs in [`BoundedValues::observations`]).
    pub ordered: Option<Vec<f64>>,
}

/// The trials behind an arm of cluster means, for the report to set nominal trials beside the
/// effective sample size (the number of clusters).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Nominal {
    /// Number of trials (rows) in the arm; the sum of the cluster sizes.
    pub trials: u64,
    /// Binary outcomes: trials with the event. `None` for bounded outcomes.
    pub events: Option<u64>,
    /// Number of clusters in the arm; equals the arm's `n`, at least 1.
    pub clusters: u64,
    /// Trials in the smallest cluster.
    pub smallest_cluster: u64,
    /// Trials in the largest cluster.
    pub largest_cluster: u64,
}

/// What the trials of one arm yielded.
#[derive(Debug, Clone)]
pub enum Values {
    /// Binary outcomes: the number of events among the `n` trials.
    Counts {
        /// Trials with the event.
        events: u64,
    },
    /// Bounded outcomes, rescaled to [0, 1] by the declared range; also every arm of cluster
    /// means, binary outcomes included (a cluster's event fraction lies in [0, 1]).
    Bounded(BoundedValues),
}

/// Bounded observations of one arm.
#[derive(Debug, Clone)]
pub struct BoundedValues {
    /// One-pass summary in [0, 1] units (of the cluster means, for an arm of cluster means).
    pub summary: Summary,
    /// The observations in [0, 1] units and trial order, when kept; for an arm of cluster
    /// means, the cluster means in trial order of each cluster's first trial.
    pub observations: Option<Vec<f64>>,
    /// Counts of raw values (or of cluster means) in [`HISTOGRAM_BINS`] equal bins over the
    /// declared range ([0, 1] for binary outcomes), when read from a file.
    pub histogram: Option<Vec<u64>>,
    /// Sample standard deviation in data units, when the spec gave it instead of raw data.
    pub stated_sd: Option<f64>,
}

/// A data file that was read, as recorded in provenance.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FileInput {
    /// The path as written in the spec (relative to the spec's folder).
    pub path: String,
    /// SHA-256 of the file's bytes.
    pub sha256: String,
    /// Size in bytes.
    pub bytes: u64,
    /// Number of data rows (trials).
    pub rows: u64,
}

/// An arm given as n, mean and sd (data units), as the bounded methods see it: rescaled to
/// [0, 1] with the sum of squares recovered from the sample variance,
/// Σx² = (n − 1)·s² + n·x̄². The extremes are unknown, so they are taken as the range's ends.
fn summary_arm(name: &str, stats: &SummaryStats, spec: &Spec) -> Arm {
    let (a, b) = spec.outcome.range.unwrap_or((0.0, 1.0));
    let w = b - a;
    let n = stats.n as f64;
    let mean = ((stats.mean - a) / w).clamp(0.0, 1.0);
    let sd = stats.sd / w;
    Arm {
        name: name.to_string(),
        n: stats.n,
        values: Values::Bounded(BoundedValues {
            summary: Summary {
                n: stats.n,
                sum: n * mean,
                sum_sq: ((n - 1.0) * sd * sd + n * mean * mean).min(n * mean),
                min: 0.0,
                max: 1.0,
                split: None,
            },
            observations: None,
            histogram: None,
            stated_sd: Some(stats.sd),
        }),
        nominal: None,
        ordered: None,
    }
}

/// The arm of cluster means of `a`, whose `clusters` are its per-cluster totals: one value per
/// cluster, its mean in [0, 1], in the clusters' order; `n` is the number of clusters.
fn cluster_arm(a: ArmData, clusters: &[ClusterTotal], keep_observations: bool) -> Arm {
    let mut acc = Accumulator::new();
    let mut histogram = vec![0u64; HISTOGRAM_BINS];
    let mut means = Vec::with_capacity(if keep_observations { clusters.len() } else { 0 });
    for c in clusters {
        // The compensated sum may exceed n by an ulp or so; the mean of values in [0, 1]
        // cannot, so clamping only undoes rounding.
        let mean = (c.sum / c.n.max(1) as f64).clamp(0.0, 1.0);
        acc.push(mean);
        // The same binning as the readers' (bin i holds [i/40, (i+1)/40), the last also 1).
        let bin = ((mean * HISTOGRAM_BINS as f64) as usize).min(HISTOGRAM_BINS - 1);
        histogram[bin] += 1;
        if keep_observations {
            means.push(mean);
        }
    }
    // Every arm read from a file has a trial, hence a cluster; an empty summary only stands in
    // so that this function needs no panic path.
    let summary = acc.finish().unwrap_or(Summary {
        n: 0,
        sum: 0.0,
        sum_sq: 0.0,
        min: 0.0,
        max: 0.0,
        split: Some((0.0, 0.0)),
    });
    let sizes = clusters.iter().map(|c| c.n);
    Arm {
        name: a.name,
        n: summary.n,
        values: Values::Bounded(BoundedValues {
            summary,
            observations: keep_observations.then_some(means),
            histogram: Some(histogram),
            stated_sd: None,
        }),
        nominal: Some(Nominal {
            trials: a.summary.n,
            events: a.events,
            clusters: clusters.len() as u64,
            smallest_cluster: sizes.clone().min().unwrap_or(0),
            largest_cluster: sizes.max().unwrap_or(0),
        }),
        ordered: None,
    }
}

/// The dataset written inline in the spec; `None` when the spec names a data file.
pub fn inline(spec: &Spec) -> Option<Dataset> {
    let arms = match &spec.data.source {
        DataSource::Counts { trials, events } => vec![Arm {
            name: "all".to_string(),
            n: *trials,
            values: Values::Counts { events: *events },
            nominal: None,
            ordered: None,
        }],
        DataSource::Arms(arms) => arms
            .iter()
            .map(|a| Arm {
                name: a.name.clone(),
                n: a.trials,
                values: Values::Counts { events: a.events },
                nominal: None,
                ordered: None,
            })
            .collect(),
        DataSource::Summary(stats) => vec![summary_arm("all", stats, spec)],
        DataSource::ArmSummaries(arms) => arms
            .iter()
            .map(|a| summary_arm(&a.name, &a.summary, spec))
            .collect(),
        DataSource::File(_) => return None,
    };
    Some(Dataset {
        arms,
        inputs: Vec::new(),
    })
}

/// Read the data file a spec names (relative to `base`, the spec's folder) into a [`Dataset`].
///
/// `keep_observations` asks for the ordered stream (methods such as betting need it); without
/// it memory does not grow with the number of rows (only with the number of clusters).
/// `progress(bytes_done, total)` is called every few megabytes. Returns `None` when the spec's
/// data are inline.
///
/// Under a clustered dependence model every arm is the arm of its cluster means (see
/// [`Nominal`]), for binary outcomes too.
pub fn read(
    spec: &Spec,
    base: &Path,
    keep_observations: bool,
    progress: &mut dyn FnMut(u64, u64),
) -> Option<Result<Dataset, DataError>> {
    let DataSource::File(path) = &spec.data.source else {
        return None;
    };
    let written = path.to_string_lossy().replace('\\', "/");
    let kind = match (spec.outcome.kind, spec.outcome.range) {
        (OutcomeKind::Bounded, Some((low, high))) => ValueKind::Bounded { low, high },
        _ => ValueKind::Binary,
    };
    let column = spec.data.column.as_deref().unwrap_or("");
    let opts = ReadOptions {
        column,
        arm_column: spec.data.arm_column.as_deref(),
        order_column: spec.data.order_column.as_deref(),
        cluster_column: spec.data.cluster_column.as_deref(),
        kind,
        keep_observations,
        expected_arms: None,
    };
    let resolved = base.join(path);
    let clustered = spec.dependence.model == DependenceModel::Clustered;
    Some(read_file(&written, &resolved, &opts, progress).map(|f| {
        Dataset {
            arms: f
                .arms
                .into_iter()
                .map(|mut a| {
                    if clustered && let Some(clusters) = a.clusters.take() {
                        return cluster_arm(a, &clusters, keep_observations);
                    }
                    let n = a.summary.n;
                    let (values, ordered) = match (kind, a.events) {
                        (ValueKind::Binary, Some(events)) => {
                            (Values::Counts { events }, a.observations)
                        }
                        _ => (
                            Values::Bounded(BoundedValues {
                                summary: a.summary,
                                observations: a.observations,
                                histogram: Some(a.histogram),
                                stated_sd: None,
                            }),
                            None,
                        ),
                    };
                    Arm {
                        name: a.name,
                        n,
                        values,
                        nominal: None,
                        ordered,
                    }
                })
                .collect(),
            inputs: vec![f.input],
        }
    }))
}
