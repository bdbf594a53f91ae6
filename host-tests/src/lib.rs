//! The deltakin host harness: the robot file, an independent f64
//! reference, workspace sweeps, the report and the CLI. std only.

pub mod bounds;
pub mod config;
pub mod plan;
pub mod reference;
