//! The robot file: TOML, units in the key names, unknown keys refused.
//!
//! ```toml
//! name = "..."
//! [geometry]
//! base_radius_mm = 160.0
//! platform_radius_mm = 40.0
//! upper_arm_mm = 280.0
//! lower_arm_mm = 720.0
//! [limits]
//! joint_min_deg = -35.0          # or a list of three, one per arm
//! joint_max_deg = 85.0
//! passive_cone_deg = 40.0
//! min_serial_margin = 0.1
//! min_parallel_margin = 0.1
//! [gates.accuracy]               # optional: report gates, see crate::gates
//! f32_joint_rad = 1e-5
//! ```

use std::path::Path;

use deltakin::{Arith, Error, Geometry, Limits, Real, Robot};
use serde::Deserialize;

/// The demo robot, built into the binary (same text as
/// `examples/demo_robot.toml`).
pub const DEMO_ROBOT_TOML: &str = include_str!("../../examples/demo_robot.toml");

/// A joint limit given once for all arms or once per arm.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(untagged)]
pub enum PerArm {
    /// The same value on every arm.
    All(f64),
    /// Arms 0, 1, 2.
    Each([f64; 3]),
}

impl PerArm {
    /// The three values.
    #[must_use]
    pub fn values(self) -> [f64; 3] {
        match self {
            PerArm::All(v) => [v; 3],
            PerArm::Each(v) => v,
        }
    }
}

/// `[geometry]`, millimetres.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct GeometryFile {
    pub base_radius_mm: f64,
    pub platform_radius_mm: f64,
    pub upper_arm_mm: f64,
    pub lower_arm_mm: f64,
}

/// `[limits]`, degrees and plain margins.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct LimitsFile {
    pub joint_min_deg: PerArm,
    pub joint_max_deg: PerArm,
    pub passive_cone_deg: f64,
    pub min_serial_margin: f64,
    pub min_parallel_margin: f64,
}

/// A whole robot file.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct RobotFile {
    /// A name for reports.
    pub name: String,
    /// Dimensions.
    pub geometry: GeometryFile,
    /// Limits.
    pub limits: LimitsFile,
    /// Optional `[gates]` for `deltakin report` (see [`crate::gates`]);
    /// checked by the report, ignored by `ik` and `fk`.
    #[serde(default)]
    pub gates: Option<toml::Table>,
}

/// Why a robot file could not be used.
#[derive(Debug)]
pub enum ConfigError {
    /// The file could not be read.
    Read(std::path::PathBuf, std::io::Error),
    /// The text is not a valid robot file (syntax, missing or unknown key).
    Parse(String),
    /// The numbers do not describe a valid robot.
    Robot(Error),
}

impl std::fmt::Display for ConfigError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ConfigError::Read(p, e) => write!(f, "cannot read robot file {}: {e}", p.display()),
            ConfigError::Parse(e) => write!(f, "invalid robot file: {e}"),
            ConfigError::Robot(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for ConfigError {}

impl RobotFile {
    /// Parses robot-file text.
    ///
    /// # Errors
    /// [`ConfigError::Parse`] with the parser's message.
    pub fn parse(text: &str) -> Result<Self, ConfigError> {
        toml::from_str(text).map_err(|e| ConfigError::Parse(e.to_string()))
    }

    /// Reads and parses a robot file, or the demo robot when `path` is `None`.
    ///
    /// # Errors
    /// [`ConfigError::Read`] or [`ConfigError::Parse`].
    pub fn load(path: Option<&Path>) -> Result<Self, ConfigError> {
        match path {
            None => Self::parse(DEMO_ROBOT_TOML),
            Some(p) => {
                let text = std::fs::read_to_string(p).map_err(|e| ConfigError::Read(p.to_path_buf(), e))?;
                Self::parse(&text)
            }
        }
    }

    /// The demo robot.
    ///
    /// # Panics
    /// Never in practice: the built-in text is checked by a test.
    #[must_use]
    pub fn demo() -> Self {
        Self::parse(DEMO_ROBOT_TOML).unwrap_or_else(|e| panic!("built-in demo robot: {e}"))
    }

    /// The geometry in f64 millimetres.
    #[must_use]
    pub fn geometry_f64(&self) -> Geometry<f64> {
        let g = &self.geometry;
        Geometry {
            base_radius: g.base_radius_mm,
            platform_radius: g.platform_radius_mm,
            upper_arm: g.upper_arm_mm,
            lower_arm: g.lower_arm_mm,
        }
    }

    /// The limits in f64 radians.
    #[must_use]
    pub fn limits_f64(&self) -> Limits<f64> {
        let l = &self.limits;
        Limits {
            joint_min: l.joint_min_deg.values().map(f64::to_radians),
            joint_max: l.joint_max_deg.values().map(f64::to_radians),
            passive_cone: l.passive_cone_deg.to_radians(),
            min_serial_margin: l.min_serial_margin,
            min_parallel_margin: l.min_parallel_margin,
        }
    }

    /// Builds the robot in scalar type `S`, converting every number from
    /// f64 (rounding to nearest); lengths go to `S::Wide`, the scalar's
    /// API type for millimetres (`S` itself for floats).
    ///
    /// # Errors
    /// [`ConfigError::Robot`] when a number is not representable in `S` or
    /// the robot is invalid.
    pub fn robot<S: Real>(&self) -> Result<Robot<S>, ConfigError> {
        let conv = |v: f64| {
            S::from_f64(v).ok_or(ConfigError::Robot(Error::InvalidGeometry(deltakin::ConfigFault::Unrepresentable)))
        };
        let g = self.geometry_f64();
        let l = self.limits_f64();
        let conv_mm = |v: f64| {
            S::Wide::from_f64(v)
                .ok_or(ConfigError::Robot(Error::InvalidGeometry(deltakin::ConfigFault::Unrepresentable)))
        };
        let conv3 = |v: [f64; 3]| -> Result<[S; 3], ConfigError> { Ok([conv(v[0])?, conv(v[1])?, conv(v[2])?]) };
        let geometry = Geometry {
            base_radius: conv_mm(g.base_radius)?,
            platform_radius: conv_mm(g.platform_radius)?,
            upper_arm: conv_mm(g.upper_arm)?,
            lower_arm: conv_mm(g.lower_arm)?,
        };
        let limits = Limits {
            joint_min: conv3(l.joint_min)?,
            joint_max: conv3(l.joint_max)?,
            passive_cone: conv(l.passive_cone)?,
            min_serial_margin: conv(l.min_serial_margin)?,
            min_parallel_margin: conv(l.min_parallel_margin)?,
        };
        Robot::new(geometry, limits).map_err(ConfigError::Robot)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn demo_robot_parses_and_builds_in_both_precisions() {
        let demo = RobotFile::demo();
        assert_eq!(demo.geometry.lower_arm_mm, 720.0);
        demo.robot::<f64>().unwrap();
        demo.robot::<f32>().unwrap();
    }

    #[test]
    fn unknown_keys_are_refused() {
        let text = DEMO_ROBOT_TOML.replace("lower_arm_mm", "lower_arm_mm = 1.0\nforearm_mm");
        assert!(matches!(RobotFile::parse(&text), Err(ConfigError::Parse(_))));
        let text = format!("{DEMO_ROBOT_TOML}\ncolour = \"red\"\n");
        assert!(matches!(RobotFile::parse(&text), Err(ConfigError::Parse(_))));
    }

    #[test]
    fn per_arm_limits_are_read() {
        let text = DEMO_ROBOT_TOML.replace("joint_min_deg = -35.0", "joint_min_deg = [-30.0, -31.0, -32.0]");
        let file = RobotFile::parse(&text).unwrap();
        assert_eq!(file.limits.joint_min_deg.values(), [-30.0, -31.0, -32.0]);
    }

    #[test]
    fn invalid_numbers_are_a_robot_error() {
        let text = DEMO_ROBOT_TOML.replace("upper_arm_mm = 280.0", "upper_arm_mm = 900.0");
        let file = RobotFile::parse(&text).unwrap();
        assert!(matches!(file.robot::<f64>(), Err(ConfigError::Robot(Error::InvalidGeometry(_)))));
    }
}
