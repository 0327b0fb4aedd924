//! The spec as written: the shape serde checks (known keys, required keys, value types) before
//! `validate` checks the meaning and builds the typed [`Spec`](super::Spec).
//!
//! Leaf types say how a scalar is read: `String` is text that must not look like anything else
//! (ids, names, paths), [`Text`] is free prose that takes a scalar as written, [`Scalar`] is raw
//! text that validation reads itself (confidence, dates, `embed_data`).

use std::collections::BTreeMap;
use std::fmt;

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};

use super::model::{DependenceModel, LookMode, OutcomeKind, Scope, Side};

/// Free text: any non-empty scalar, exactly as written (`title: 2026` is the text "2026").
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Text(pub String);

impl<'de> Deserialize<'de> for Text {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Text;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("text")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Text, E> {
                Ok(Text(v.to_owned()))
            }
        }
        d.deserialize_any(V)
    }
}

/// A single scalar as written; a null value reads as the empty string.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Scalar(pub String);

impl<'de> Deserialize<'de> for Scalar {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = Scalar;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("a single value")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Scalar, E> {
                Ok(Scalar(v.to_owned()))
            }
            fn visit_unit<E: de::Error>(self) -> Result<Scalar, E> {
                Ok(Scalar(String::new()))
            }
        }
        d.deserialize_any(V)
    }
}

/// `spending`: the word `equal` or a list of weights.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum RawSpending {
    Equal,
    Weights(Vec<f64>),
}

impl<'de> Deserialize<'de> for RawSpending {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = RawSpending;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("`equal` or a list of weights, one per planned look")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<RawSpending, E> {
                if v == "equal" {
                    Ok(RawSpending::Equal)
                } else {
                    Err(E::invalid_value(de::Unexpected::Str(v), &self))
                }
            }
            fn visit_seq<A: de::SeqAccess<'de>>(self, mut seq: A) -> Result<RawSpending, A::Error> {
                let mut weights = Vec::new();
                while let Some(w) = seq.next_element::<f64>()? {
                    weights.push(w);
                }
                Ok(RawSpending::Weights(weights))
            }
        }
        d.deserialize_any(V)
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSpec {
    pub surety: u32,
    pub study: RawStudy,
    pub claim: RawClaim,
    pub outcome: RawOutcome,
    pub data: RawData,
    pub dependence: Option<RawDependence>,
    pub looks: Option<RawLooks>,
    pub method: Option<RawMethod>,
    pub plan: Option<RawPlan>,
    pub attestations: Option<BTreeMap<String, RawAttestation>>,
    pub signatures: Option<Vec<RawSignature>>,
    pub report: Option<RawReport>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawStudy {
    pub id: String,
    pub title: Text,
    pub owner: Option<Text>,
    pub requirement: Option<Text>,
    pub date: Option<Scalar>,
    pub description: Option<Text>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawClaim {
    pub quantity: Text,
    pub side: Side,
    pub limit: f64,
    pub confidence: Scalar,
    pub scope: Option<Scope>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawOutcome {
    #[serde(rename = "type")]
    pub kind: OutcomeKind,
    pub event: Option<Text>,
    pub range: Option<Vec<f64>>,
    pub unit: Option<Text>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawData {
    pub trials: Option<u64>,
    pub events: Option<u64>,
    pub n: Option<u64>,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    pub arms: Option<Vec<RawArm>>,
    pub file: Option<String>,
    pub column: Option<String>,
    pub arm_column: Option<String>,
    pub cluster_column: Option<String>,
    pub order_column: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawArm {
    pub name: String,
    // Either counts or a summary; which keys belong together is checked in `validate`, so that
    // a mixed or half-written arm gets a message about the two forms, not a bare missing key.
    pub trials: Option<u64>,
    pub events: Option<u64>,
    pub n: Option<u64>,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawDependence {
    pub model: Option<DependenceModel>,
    pub m: Option<u64>,
    pub rationale: Option<Text>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawLooks {
    pub mode: Option<LookMode>,
    pub planned: Option<u32>,
    pub spending: Option<RawSpending>,
    pub ledger: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawMethod {
    pub primary: Option<String>,
    pub compare: Option<Vec<String>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawPlan {
    pub assumed_rate: Option<f64>,
    pub assumed_sd: Option<f64>,
    pub pass_probability: Option<f64>,
    pub allowed_events: Option<Vec<u64>>,
    pub registered: Option<Text>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawAttestation {
    pub by: Text,
    pub date: Option<Scalar>,
    pub note: Option<Text>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSignature {
    pub role: Text,
    pub name: Option<Text>,
    pub meaning: Text,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawReport {
    pub template: Option<String>,
    pub embed_data: Option<Scalar>,
}
