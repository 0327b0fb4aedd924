//! Turning an [`Analysis`](crate::analysis::model::Analysis) into artifacts a person reads:
//! results.json ([`json`]), the terminal summary ([`summary`]) and the PDF report.
//!
//! The PDF is built in memory: [`plots`] draws SVGs, [`template`] turns the report template into
//! typst source that reads every value from the results JSON, [`world`] serves those files and
//! the embedded [`fonts`] to typst, and [`pdf`] compiles and exports the document. The plan
//! report ([`plan_pdf`]) is made the same way from a plan, with its own charts.

pub mod extract;
pub mod fonts;
pub mod json;
pub mod pdf;
pub mod plan_pdf;
mod plan_plots;
pub mod plan_summary;
mod plots;
pub mod summary;
pub mod template;
mod world;

pub use fonts::fonts_sha256;
pub use pdf::{Diagnostic, Location, ReportError, ReportInputs, Stage, render_pdf};
pub use plan_pdf::{PlanInputs, plan_display, render_plan_pdf};
pub use template::{default_template, template_sha256};
