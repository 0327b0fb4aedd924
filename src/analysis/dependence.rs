//! The declared dependence between trials, and what it changes: which methods are valid, what
//! the bound is a bound on, and which assumption the checklist asks about.

use super::model::DependenceInfo;
use crate::bounds::{self, OutcomeKind};
use crate::spec::{self, DependenceModel, Spec};

/// The catalogue's name for the spec's dependence model.
pub fn catalogue_model(spec: &Spec) -> bounds::Dependence {
    match spec.dependence.model {
        DependenceModel::Independent => bounds::Dependence::Independent,
        DependenceModel::Martingale => bounds::Dependence::Martingale,
        DependenceModel::Clustered => bounds::Dependence::Clustered,
        DependenceModel::MDependent => bounds::Dependence::MDependent,
    }
}

/// The kind of value the methods see: cluster means are fractions even when each trial is
/// binary, so a clustered analysis is always one of bounded values.
pub fn analysed_outcome(spec: &Spec) -> OutcomeKind {
    match (spec.dependence.model, spec.outcome.kind) {
        (DependenceModel::Clustered, _) => OutcomeKind::Bounded,
        (_, spec::OutcomeKind::Binary) => OutcomeKind::Binary,
        (_, spec::OutcomeKind::Bounded) => OutcomeKind::Bounded,
    }
}

/// The words for the model in messages: "from independent trials", ….
pub fn words(spec: &Spec) -> String {
    match spec.dependence.model {
        DependenceModel::Independent => "from independent trials".to_string(),
        DependenceModel::Martingale => {
            "from trials with a constant conditional mean (martingale model)".to_string()
        }
        DependenceModel::Clustered => "on cluster means (clustered model)".to_string(),
        DependenceModel::MDependent => {
            format!("from {}-dependent trials", spec.dependence.m.unwrap_or(1))
        }
    }
}

/// The assumption that stands for the dependence model in the checklist, in place of
/// `independent-trials`.
pub fn assumption_id(spec: &Spec) -> &'static str {
    match spec.dependence.model {
        DependenceModel::Independent => "independent-trials",
        DependenceModel::Martingale => "constant-conditional-mean",
        DependenceModel::Clustered => "independent-clusters",
        DependenceModel::MDependent => "m-dependent-trials",
    }
}

/// The dependence section of the results.
pub fn info(spec: &Spec, rate: bool) -> DependenceInfo {
    let what = if rate { "rate" } else { "mean" };
    let d = &spec.dependence;
    let (model, estimand, treatment) = match d.model {
        DependenceModel::Independent => (
            "independent",
            format!("the {what} per trial, common to all trials"),
            "trials taken as independent; each trial counts once".to_string(),
        ),
        DependenceModel::Martingale => (
            "martingale",
            format!("the {what} per trial, which every trial has given the trials before it"),
            "only methods valid for a constant conditional mean are used; trials may \
             influence each other's spread but not their mean"
                .to_string(),
        ),
        DependenceModel::Clustered => (
            "clustered",
            format!(
                "the {what} over clusters: the average of the cluster means, each cluster \
                 weighted equally whatever its size"
            ),
            "the bounds are computed on one value per cluster (its mean), so the effective \
             sample size is the number of clusters, not of trials; trials inside a cluster \
             may depend on each other in any way"
                .to_string(),
        ),
        DependenceModel::MDependent => {
            let m = d.m.unwrap_or(1);
            (
                "m-dependent",
                format!("the average {what} per trial over the trials run"),
                format!(
                    "trials more than {m} apart in run order are taken as independent; \
                     Hoeffding's bound in Janson's form widens by √{} = √(m + 1), as if there \
                     were n/{} trials",
                    m + 1,
                    m + 1
                ),
            )
        }
    };
    DependenceInfo {
        model: model.to_string(),
        m: d.m,
        rationale: d.rationale.clone(),
        estimand,
        treatment,
    }
}
