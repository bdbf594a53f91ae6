//! The deltakin host harness: the robot file, an independent f64
//! reference, workspace sweeps, the cross-check report and the CLI. std only.

pub mod bounds;
pub mod cli;
pub mod config;
pub mod crosscheck;
pub mod plan;
pub mod reference;
pub mod report;
pub mod stats;
pub mod sweep;
pub mod volume;
