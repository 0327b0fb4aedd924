//! The one integration-test binary; each module covers one area.
// Reference values are written with all the digits their source printed.
#![allow(clippy::excessive_precision)]

mod accuracy;
mod cli;
mod coverage;
mod properties;
mod report;
mod robustness;
mod spec_loading;
