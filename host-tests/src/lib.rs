//! The deltakin host harness: the robot file, an independent f64
//! reference, workspace sweeps, the cross-check report and the CLI. std only.

pub mod bounds;
pub mod calibrate;
pub mod cli;
pub mod config;
pub mod contract;
pub mod crosscheck;
pub mod drive;
pub mod gates;
pub mod numtext;
pub mod plan;
pub mod plots;
pub mod progress;
pub mod reference;
pub mod report;
pub mod simulate;
pub mod size;
pub mod stats;
pub mod sweep;
pub mod timing;
pub mod torque_error;
pub mod volume;
