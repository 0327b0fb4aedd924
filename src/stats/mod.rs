//! Special functions and distributions, written for accuracy at counts up to 1e15:
//! log-gamma and log-beta, the binomial distribution and the incomplete beta function in
//! log space, the binary kl divergence and its inverses, and compensated summation.

mod beta;
pub mod kl;
mod normal;
mod prob;
mod special;
pub mod sum;
mod tables;

pub(crate) use beta::{BetaTail, ln_binom_pmf_at};
pub use beta::{ln_beta_inc, ln_beta_inc_complement, ln_binom_cdf, ln_binom_pmf, ln_binom_sf};
pub(crate) use normal::norm_isf_approx;
pub use normal::{ln_norm_sf, mills_ratio};
pub use prob::Prob;
pub use special::{ln_beta, ln_choose, ln_gamma, ln1pmx, stirling_err};
