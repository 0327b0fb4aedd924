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
mod extract;
mod ledger;
mod plan;
mod plan_report;
mod properties;
mod python;
mod report;
mod robustness;
mod schema;
mod spec_loading;
mod verify;
