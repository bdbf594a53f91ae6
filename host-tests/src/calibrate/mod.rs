//! `deltakin calibrate`: identify a built machine's per-arm parameters
//! from measured platform positions.
//!
//! * [`model`]: the parameter vector (18 per-arm parameters plus the
//!   instrument or plate nuisance parameters), its scaling, and the
//!   residuals `measured - predicted`.
//! * [`jacobian`]: the analytic identification Jacobian, by implicit
//!   differentiation of the closure equations `|E_i - P_i| = l_i`.
//! * [`identify`]: singular values of the scaled Jacobian, the parameter
//!   combinations the data cannot separate, the observability index.
//! * [`fit`]: Levenberg-Marquardt (the `levenberg-marquardt` crate) on the
//!   identifiable subspace, standard deviations from the covariance.
//! * [`poses`]: greedy pose suggestion inside the guarded workspace.
//! * [`measurements`]: the measurement CSV, with line numbers for bad rows.
//! * [`output`]: the text and JSON report and the calibrated robot file.
//! * [`plot`]: residuals per point before and after, as SVG.

pub mod fit;
pub mod identify;
pub mod jacobian;
pub mod measurements;
pub mod model;
pub mod output;
pub mod plot;
pub mod poses;
