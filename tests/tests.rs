//! The one integration-test binary; each module covers one area.
// Reference values are written with all the digits their source printed.
#![allow(clippy::excessive_precision)]

mod accuracy;
mod bounded_accuracy;
mod bounded_coverage;
mod bounded_properties;
mod cli;
mod coverage;
mod data_reading;
mod dependence;
mod extract;
mod ledger;
mod looks;
mod optional_stopping;
mod plan;
mod plan_report;
mod properties;
mod python;
mod report;
mod robustness;
mod schema;
mod sequence_accuracy;
mod spec_loading;
mod support;
mod verify;
