//! surety: finite-sample, distribution-free guarantees that a failure rate stays below a limit
//! with stated confidence, from a YAML study spec to results.json and a PDF report.
//!
//! Data flow: [`spec`] → [`analysis`] (pure, using [`bounds`], [`stats`] and [`adjust`]) →
//! [`report`] (JSON, PDF, terminal). [`study`] strings these together for one spec file;
//! [`cli`] only parses arguments and dispatches.

pub mod adjust;
pub mod analysis;
pub mod bounds;
pub mod cli;
pub mod data;
pub mod error;
pub mod ledger;
pub mod output;
pub mod plan;
pub mod provenance;
pub mod report;
pub mod spec;
pub mod stats;
pub mod study;
pub mod verify;
