//! The calibration model: parameters, scaling and residuals.
//!
//! The parameter vector is, in this order, the per-arm corrections of
//! [`deltakin::ArmCorrection`] for arms 0, 1, 2 (joint offset, upper arm,
//! lower arm, radial difference, azimuth, axis height: six per arm), then
//! the nuisance parameters of the measurement:
//!
//! * [`Mode::Position`] (an instrument measuring x, y, z in its own frame):
//!   `q = R0 Rz(rz) Ry(ry) Rx(rx) p + t`, six parameters `rx, ry, rz, tx,
//!   ty, tz`, with `R0` a fixed first rotation from a rigid alignment of
//!   the nominal model to the data (so the small angles stay small).
//! * [`Mode::Probe`] (z only, touched on a flat plate of unknown height
//!   and tilt): `z = p_z + h + a p_x + b p_y`, three parameters `h, a, b`.
//!
//! Everything the fit sees is scaled ([`scales`]): lengths in units of
//! [`LENGTH_SCALE_MM`], angles in units of the angle that moves the end of
//! a lower arm by that much, so one unit of any parameter moves the
//! platform by about the same amount.

use deltakin::{ArmCorrection, Geometry};
use nalgebra::{Matrix3, Vector3};

use crate::reference::{self, PerArmMachine};

/// Scale of every length parameter (mm): the expected size of a build error.
pub const LENGTH_SCALE_MM: f64 = 1.0;

/// Per-arm parameters per arm.
pub const PER_ARM: usize = 6;
/// Per-arm parameters of the whole machine.
pub const ARM_PARAMETERS: usize = 3 * PER_ARM;

/// Names of the six per-arm parameters, with their units as printed.
pub const ARM_PARAMETER_NAMES: [&str; PER_ARM] =
    ["joint_offset_deg", "upper_arm_mm", "lower_arm_mm", "radial_difference_mm", "azimuth_deg", "axis_height_mm"];

/// Words for the six per-arm parameters (for combinations).
pub const ARM_PARAMETER_WORDS: [&str; PER_ARM] =
    ["joint offset", "upper arm length", "lower arm length", "radial difference", "azimuth", "axis height"];

/// What the instrument measures.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mode {
    /// x, y, z in an instrument frame of unknown pose (6 nuisance parameters).
    Position,
    /// z only, on a flat plate of unknown height and tilt (3 nuisance parameters).
    Probe,
}

impl Mode {
    /// Measured components per point.
    #[must_use]
    pub const fn components(self) -> usize {
        match self {
            Mode::Position => 3,
            Mode::Probe => 1,
        }
    }
    /// Nuisance parameters.
    #[must_use]
    pub const fn nuisance(self) -> usize {
        match self {
            Mode::Position => 6,
            Mode::Probe => 3,
        }
    }
    /// All parameters.
    #[must_use]
    pub const fn parameters(self) -> usize {
        ARM_PARAMETERS + self.nuisance()
    }
    /// Names of the nuisance parameters with their units.
    #[must_use]
    pub const fn nuisance_names(self) -> &'static [&'static str] {
        match self {
            Mode::Position => &[
                "instrument_rx_deg",
                "instrument_ry_deg",
                "instrument_rz_deg",
                "instrument_tx_mm",
                "instrument_ty_mm",
                "instrument_tz_mm",
            ],
            Mode::Probe => &["plate_height_mm", "plate_tilt_x_deg", "plate_tilt_y_deg"],
        }
    }
    /// Words for the nuisance parameters.
    #[must_use]
    pub const fn nuisance_words(self) -> &'static [&'static str] {
        match self {
            Mode::Position => &[
                "instrument rotation about x",
                "instrument rotation about y",
                "instrument rotation about z",
                "instrument x translation",
                "instrument y translation",
                "instrument z translation",
            ],
            Mode::Probe => &["plate height", "plate tilt along x", "plate tilt along y"],
        }
    }
}

/// One measured point: joint readings (rad) and the measured components
/// (mm; x, y, z or z alone).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Point {
    /// Joint readings, before any offset (rad).
    pub joints: [f64; 3],
    /// Measured position (mm); in probe mode only `measured[2]` is used.
    pub measured: [f64; 3],
}

/// Whether parameter `k` is an angle (stored in rad, printed in deg).
#[must_use]
pub fn is_angle(mode: Mode, k: usize) -> bool {
    if k < ARM_PARAMETERS {
        matches!(k % PER_ARM, 0 | 4)
    } else {
        match mode {
            Mode::Position => k - ARM_PARAMETERS < 3,
            Mode::Probe => k - ARM_PARAMETERS > 0,
        }
    }
}

/// Name of parameter `k` with its unit (`arm1_upper_arm_mm`, `instrument_tz_mm`).
#[must_use]
pub fn name(mode: Mode, k: usize) -> String {
    if k < ARM_PARAMETERS {
        format!("arm{}_{}", k / PER_ARM, ARM_PARAMETER_NAMES[k % PER_ARM])
    } else {
        mode.nuisance_names()[k - ARM_PARAMETERS].to_owned()
    }
}

/// Parameter `k` in words ("arm 1 upper arm length").
#[must_use]
pub fn words(mode: Mode, k: usize) -> String {
    if k < ARM_PARAMETERS {
        format!("arm {} {}", k / PER_ARM, ARM_PARAMETER_WORDS[k % PER_ARM])
    } else {
        mode.nuisance_words()[k - ARM_PARAMETERS].to_owned()
    }
}

/// Scale of each parameter (mm or rad per scaled unit).
#[must_use]
pub fn scales(mode: Mode, g: &Geometry<f64>) -> Vec<f64> {
    let angle = LENGTH_SCALE_MM / g.lower_arm;
    (0..mode.parameters()).map(|k| if is_angle(mode, k) { angle } else { LENGTH_SCALE_MM }).collect()
}

/// Physical value (mm, rad) to printed value (mm, deg).
#[must_use]
pub fn printed(mode: Mode, k: usize, v: f64) -> f64 {
    if is_angle(mode, k) { v.to_degrees() } else { v }
}

/// The per-arm corrections held in the first 18 physical parameters.
#[must_use]
pub fn corrections(params: &[f64]) -> [ArmCorrection<f64>; 3] {
    [0, 1, 2].map(|i| {
        let c = &params[PER_ARM * i..PER_ARM * (i + 1)];
        ArmCorrection {
            joint_offset: c[0],
            upper_arm: c[1],
            lower_arm: c[2],
            radial_difference: c[3],
            azimuth: c[4],
            axis_height: c[5],
        }
    })
}

/// The 18 physical per-arm parameters of `c`.
#[must_use]
pub fn arm_vector(c: &[ArmCorrection<f64>; 3]) -> Vec<f64> {
    c.iter()
        .flat_map(|a| [a.joint_offset, a.upper_arm, a.lower_arm, a.radial_difference, a.azimuth, a.axis_height])
        .collect()
}

/// Rotation about x, y or z (`axis` 0, 1, 2) by `a` (rad), and its derivative.
#[must_use]
pub fn rotation(axis: usize, a: f64) -> (Matrix3<f64>, Matrix3<f64>) {
    let (s, c) = a.sin_cos();
    match axis {
        0 => (Matrix3::new(1.0, 0.0, 0.0, 0.0, c, -s, 0.0, s, c), Matrix3::new(0.0, 0.0, 0.0, 0.0, -s, -c, 0.0, c, -s)),
        1 => (Matrix3::new(c, 0.0, s, 0.0, 1.0, 0.0, -s, 0.0, c), Matrix3::new(-s, 0.0, c, 0.0, 0.0, 0.0, -c, 0.0, -s)),
        _ => (Matrix3::new(c, -s, 0.0, s, c, 0.0, 0.0, 0.0, 1.0), Matrix3::new(-s, -c, 0.0, c, -s, 0.0, 0.0, 0.0, 0.0)),
    }
}

/// The measurement model of one mode: nominal geometry, fixed first
/// rotation `r0` (position mode), and the parameters' scales.
#[derive(Clone, Debug)]
pub struct Model {
    /// Measurement mode.
    pub mode: Mode,
    /// Nominal geometry.
    pub geometry: Geometry<f64>,
    /// Fixed first rotation of the instrument frame (position mode).
    pub r0: Matrix3<f64>,
    /// Scale of each parameter (mm or rad per scaled unit).
    pub scales: Vec<f64>,
}

impl Model {
    /// A model with `r0` the identity.
    #[must_use]
    pub fn new(mode: Mode, geometry: Geometry<f64>) -> Self {
        Self { mode, geometry, r0: Matrix3::identity(), scales: scales(mode, &geometry) }
    }

    /// Physical parameters from scaled ones.
    #[must_use]
    pub fn physical(&self, x: &[f64]) -> Vec<f64> {
        x.iter().zip(&self.scales).map(|(v, s)| v * s).collect()
    }

    /// Scaled parameters from physical ones.
    #[must_use]
    pub fn scaled(&self, p: &[f64]) -> Vec<f64> {
        p.iter().zip(&self.scales).map(|(v, s)| v / s).collect()
    }

    /// The machine of physical parameters `params`.
    #[must_use]
    pub fn machine(&self, params: &[f64]) -> PerArmMachine {
        PerArmMachine::new(&self.geometry, &corrections(params))
    }

    /// The instrument rotation `R0 Rz Ry Rx` of physical nuisance angles.
    #[must_use]
    pub fn instrument_rotation(&self, params: &[f64]) -> Matrix3<f64> {
        let n = &params[ARM_PARAMETERS..];
        self.r0 * rotation(2, n[2]).0 * rotation(1, n[1]).0 * rotation(0, n[0]).0
    }

    /// Predicted measurement (mm; one or three components) of base-frame
    /// platform position `p` under physical parameters `params`.
    #[must_use]
    pub fn observe(&self, params: &[f64], p: [f64; 3]) -> Vec<f64> {
        let n = &params[ARM_PARAMETERS..];
        match self.mode {
            Mode::Position => {
                let q = self.instrument_rotation(params) * Vector3::from(p) + Vector3::new(n[3], n[4], n[5]);
                vec![q[0], q[1], q[2]]
            }
            Mode::Probe => vec![p[2] + n[0] + n[1].tan() * p[0] + n[2].tan() * p[1]],
        }
    }

    /// Residuals `measured - predicted` (mm), point by point, or `None`
    /// when a point's loops cannot be closed under these parameters.
    #[must_use]
    pub fn residuals(&self, params: &[f64], points: &[Point]) -> Option<Vec<f64>> {
        let machine = self.machine(params);
        let mut r = Vec::with_capacity(points.len() * self.mode.components());
        for pt in points {
            let p = reference::forward(&machine, pt.joints)?;
            let q = self.observe(params, p);
            match self.mode {
                Mode::Position => r.extend((0..3).map(|k| pt.measured[k] - q[k])),
                Mode::Probe => r.push(pt.measured[2] - q[0]),
            }
        }
        Some(r)
    }
}

/// Per-point residual size (mm): the length of each point's residual.
#[must_use]
pub fn per_point(mode: Mode, r: &[f64]) -> Vec<f64> {
    r.chunks(mode.components()).map(|c| c.iter().map(|v| v * v).sum::<f64>().sqrt()).collect()
}

/// Root mean square of the residual components (mm).
#[must_use]
pub fn rms(r: &[f64]) -> f64 {
    if r.is_empty() {
        return 0.0;
    }
    (r.iter().map(|v| v * v).sum::<f64>() / r.len() as f64).sqrt()
}
