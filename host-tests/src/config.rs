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
//! [arm_corrections]              # optional: per-arm corrections, arms 0, 1, 2
//! joint_offset_deg = [0.2, -0.1, 0.05]   # every key optional (absent: zeros)
//! upper_arm_mm = [0.3, -0.2, 0.0]
//! lower_arm_mm = [-0.4, 0.1, 0.2]
//! radial_difference_mm = [0.1, 0.0, -0.3]
//! azimuth_deg = [0.0, 0.1, -0.2]
//! axis_height_mm = [0.5, -0.2, 0.0]
//! [gates.accuracy]               # optional: report gates, see crate::gates
//! f32_joint_rad = 1e-5
//! ```

use std::path::Path;

use deltakin::{Arith, ArmCorrection, Error, Geometry, Limits, Real, Robot};
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

/// `[arm_corrections]`: each arm's corrections to `[geometry]` (see
/// [`deltakin::ArmCorrection`]), a list of three per key (arms 0, 1, 2),
/// millimetres and degrees. An absent key is zero on every arm; an absent
/// table is the nominal machine.
#[derive(Clone, Copy, Debug, Default, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ArmCorrectionsFile {
    /// True joint angle at a joint reading of 0 (deg).
    #[serde(default)]
    pub joint_offset_deg: [f64; 3],
    /// Upper arm length correction (mm).
    #[serde(default)]
    pub upper_arm_mm: [f64; 3],
    /// Lower arm length correction (mm).
    #[serde(default)]
    pub lower_arm_mm: [f64; 3],
    /// Correction of the actuator radius minus the platform joint radius (mm).
    #[serde(default)]
    pub radial_difference_mm: [f64; 3],
    /// Azimuth correction of the arm's plane (deg, from +x towards +y).
    #[serde(default)]
    pub azimuth_deg: [f64; 3],
    /// Height of the actuator axis above the base plane (mm).
    #[serde(default)]
    pub axis_height_mm: [f64; 3],
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
    /// Optional per-arm corrections; absent means the nominal machine.
    #[serde(default)]
    pub arm_corrections: Option<ArmCorrectionsFile>,
    /// Optional `[dynamics]`: masses and inertias for the torque model.
    #[serde(default)]
    pub dynamics: Option<DynamicsFile>,
    /// Optional `[gates]` for `deltakin report` (see [`crate::gates`]);
    /// checked by the report, ignored by `ik` and `fk`.
    #[serde(default)]
    pub gates: Option<toml::Table>,
}

/// The `[dynamics]` table: masses (kg), lengths (mm), inertias (kg*mm^2),
/// friction (N*mm). Per-arm keys take a number or a list of three.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct DynamicsFile {
    /// Each upper arm's mass, kg.
    pub upper_arm_mass_kg: PerArm,
    /// Actuator axis to the upper arm's centre of mass, mm.
    pub upper_arm_com_mm: PerArm,
    /// Upper arm inertia about the actuator axis, the arm alone (hub and
    /// elbow joints included; the motor's rotor and the gearbox belong to
    /// the drive file, see [`crate::drive`]), kg*mm^2.
    pub upper_arm_inertia_kg_mm2: PerArm,
    /// Both rods of one lower arm, kg.
    pub lower_arm_mass_kg: PerArm,
    /// Share of the lower arm's mass lumped at the elbow, 0 to 1.
    pub lower_arm_elbow_share: PerArm,
    /// Platform (tool included), kg.
    pub platform_mass_kg: f64,
    /// Payload, kg.
    pub payload_kg: f64,
    /// Viscous friction, N*mm*s/rad (absent: 0).
    #[serde(default)]
    pub viscous_nmm_s_rad: Option<PerArm>,
    /// Coulomb friction, N*mm (absent: 0).
    #[serde(default)]
    pub coulomb_nmm: Option<PerArm>,
    /// Joint rate at which Coulomb friction reaches its full value, rad/s
    /// (absent: 0.01; see `deltakin::dynamics`).
    #[serde(default)]
    pub coulomb_smoothing_rad_s: Option<f64>,
}

impl DynamicsFile {
    /// The core's parameter set (not yet validated: the core does that).
    #[must_use]
    pub fn params(&self) -> deltakin::DynamicsParams {
        let zero = |e: Option<PerArm>| e.map_or([0.0; 3], PerArm::values);
        deltakin::DynamicsParams {
            upper_arm_mass: self.upper_arm_mass_kg.values(),
            upper_arm_com: self.upper_arm_com_mm.values(),
            upper_arm_inertia: self.upper_arm_inertia_kg_mm2.values(),
            lower_arm_mass: self.lower_arm_mass_kg.values(),
            lower_arm_elbow_share: self.lower_arm_elbow_share.values(),
            platform_mass: self.platform_mass_kg,
            payload: self.payload_kg,
            viscous: zero(self.viscous_nmm_s_rad),
            coulomb: zero(self.coulomb_nmm),
            coulomb_rate: self.coulomb_smoothing_rad_s.unwrap_or(0.01),
        }
    }
}

/// What is wrong with one number of a robot or moves file.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum NumberFault {
    /// NaN or an infinity.
    NotFinite,
    /// Finite, but outside the range of the number type the command
    /// computes in (named: `f32`, `f64`, or the fixed-point format).
    OutOfRange(&'static str),
}

/// One number of a configuration file that cannot be used, with the file
/// and the key it came from.
#[derive(Clone, Debug, PartialEq)]
pub struct BadNumber {
    /// `"robot file"` or `"moves file"`.
    pub file: &'static str,
    /// The key as a user finds it in the file, with its table:
    /// `[limits] joint_min_deg`, `move 3 (pick) lift_mm`.
    pub key: String,
    /// The value as written in the file (its units).
    pub value: f64,
    /// What is wrong with it.
    pub fault: NumberFault,
}

/// `v` as TOML spells it (`nan`, `inf`, `-inf`), else Rust's shortest
/// round-trip text.
fn toml_number(v: f64) -> String {
    if v.is_nan() {
        "nan".to_owned()
    } else if v.is_infinite() {
        if v > 0.0 { "inf".to_owned() } else { "-inf".to_owned() }
    } else if v != 0.0 && !(1e-5..1e16).contains(&v.abs()) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

impl std::fmt::Display for BadNumber {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let (file, key, value) = (self.file, &self.key, toml_number(self.value));
        match self.fault {
            NumberFault::NotFinite => write!(f, "{file}: {key} is not a finite number ({value})"),
            NumberFault::OutOfRange(t) => {
                write!(f, "{file}: {key} = {value} is outside the range of the {t} number type")
            }
        }
    }
}

impl std::error::Error for BadNumber {}

/// The name of a number type in messages: `f32`, `f64`, or for fixed
/// point the format (`--scalar fixed` computes angles in Q7.25 and
/// millimetres in Q18.14).
fn type_name<T>() -> &'static str {
    let full = std::any::type_name::<T>();
    match full.rsplit("::").next().unwrap_or(full) {
        "Fixed" => "fixed-point Q7.25",
        "FixedWide" => "fixed-point Q18.14 (mm)",
        short => short,
    }
}

/// Converts one number of a file to `T`: `value` as written in the file,
/// `converted` the same in the core's units (radians for `_deg` keys).
/// NaN and infinities are refused as such, before any conversion, so the
/// message names the key and says what is wrong with it rather than
/// blaming the number type.
///
/// # Errors
/// [`BadNumber`] naming `file` and `key`.
pub fn number<T: Arith>(
    file: &'static str,
    key: &dyn Fn() -> String,
    value: f64,
    converted: f64,
) -> Result<T, BadNumber> {
    let bad = |fault| BadNumber { file, key: key(), value, fault };
    if !value.is_finite() || !converted.is_finite() {
        return Err(bad(NumberFault::NotFinite));
    }
    T::from_f64(converted).ok_or_else(|| bad(NumberFault::OutOfRange(type_name::<T>())))
}

/// The key of one arm's value of a [`PerArm`] entry: the plain key for a
/// single value, `key[arm]` for a list of three.
#[must_use]
pub fn per_arm_key(key: &str, entry: PerArm, arm: usize) -> String {
    match entry {
        PerArm::All(_) => key.to_owned(),
        PerArm::Each(_) => format!("{key}[{arm}]"),
    }
}

/// Converts a [`PerArm`] entry to `T`, each value through `to_core` (the
/// unit change), naming `key` (and the arm, for a list) on failure.
///
/// # Errors
/// [`BadNumber`] for the first value that cannot be used.
pub fn per_arm<T: Arith>(
    file: &'static str,
    key: &str,
    entry: PerArm,
    to_core: fn(f64) -> f64,
) -> Result<[T; 3], BadNumber> {
    let v = entry.values();
    let one = |arm: usize| number(file, &|| per_arm_key(key, entry, arm), v[arm], to_core(v[arm]));
    Ok([one(0)?, one(1)?, one(2)?])
}

/// Why a robot file could not be used.
#[derive(Debug)]
pub enum ConfigError {
    /// The file could not be read.
    Read(std::path::PathBuf, std::io::Error),
    /// The text is not a valid robot file (syntax, missing or unknown key).
    Parse(String),
    /// A number of the file is not finite or does not fit the number type.
    Number(BadNumber),
    /// The numbers do not describe a valid robot.
    Robot(Error),
}

impl std::fmt::Display for ConfigError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ConfigError::Read(p, e) => write!(f, "cannot read robot file {}: {e}", p.display()),
            ConfigError::Parse(e) => write!(f, "invalid robot file: {e}"),
            ConfigError::Number(e) => write!(f, "{e}"),
            ConfigError::Robot(e) => write!(f, "robot file: {e}"),
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

    /// Reads and parses a robot file, or the demo robot when `path` is `None`;
    /// prints each of [`RobotFile::warnings`] on stderr.
    ///
    /// # Errors
    /// [`ConfigError::Read`] or [`ConfigError::Parse`].
    pub fn load(path: Option<&Path>) -> Result<Self, ConfigError> {
        let file = match path {
            None => Self::parse(DEMO_ROBOT_TOML)?,
            Some(p) => {
                let text = std::fs::read_to_string(p).map_err(|e| ConfigError::Read(p.to_path_buf(), e))?;
                Self::parse(&text)?
            }
        };
        for w in file.warnings() {
            eprintln!("deltakin: warning: {w}");
        }
        Ok(file)
    }

    /// What the file allows that is valid but unwise: a minimum margin of
    /// 0 switches that singularity guard off up to the singularity itself
    /// (see [`deltakin::Limits`]).
    #[must_use]
    pub fn warnings(&self) -> Vec<String> {
        let l = &self.limits;
        [("min_serial_margin", l.min_serial_margin), ("min_parallel_margin", l.min_parallel_margin)]
            .into_iter()
            .filter(|&(_, v)| v == 0.0)
            .map(|(key, _)| {
                format!(
                    "[limits] {key} = 0 accepts poses up to the singularity itself, where joint rates and \
                     torques grow without bound; use a positive minimum for a machine that moves"
                )
            })
            .collect()
    }

    /// The demo robot.
    ///
    /// # Panics
    /// Never in practice: the built-in text is checked by a test.
    #[must_use]
    pub fn demo() -> Self {
        Self::parse(DEMO_ROBOT_TOML).unwrap_or_else(|e| panic!("built-in demo robot: {e}"))
    }

    /// The validated dynamics model for `robot`, or `None` when the file
    /// has no `[dynamics]` table.
    ///
    /// # Errors
    /// [`ConfigError::Robot`] with [`Error::InvalidDynamics`] naming the bad
    /// parameter.
    pub fn dynamics<S: Real>(&self, robot: &Robot<S>) -> Result<Option<deltakin::Dynamics<S>>, ConfigError> {
        self.dynamics.map(|d| deltakin::Dynamics::new(&d.params(), robot).map_err(ConfigError::Robot)).transpose()
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

    /// The per-arm corrections in f64 millimetres and radians (all zero
    /// without an `[arm_corrections]` table).
    #[must_use]
    pub fn corrections_f64(&self) -> [ArmCorrection<f64>; 3] {
        let c = self.arm_corrections.unwrap_or_default();
        [0, 1, 2].map(|i| ArmCorrection {
            joint_offset: c.joint_offset_deg[i].to_radians(),
            upper_arm: c.upper_arm_mm[i],
            lower_arm: c.lower_arm_mm[i],
            radial_difference: c.radial_difference_mm[i],
            azimuth: c.azimuth_deg[i].to_radians(),
            axis_height: c.axis_height_mm[i],
        })
    }

    /// The per-arm corrections exactly as scalar type `S` holds them (each
    /// number rounded to `S` as [`RobotFile::robot`] does), back in f64:
    /// what the reference must see to check `S`'s robot. `None` when a
    /// number is not representable in `S`.
    #[must_use]
    pub fn corrections_as_held<S: Real>(&self) -> Option<[ArmCorrection<f64>; 3]> {
        Some(corrections_to_f64(&corrections_in::<S>(&self.corrections_f64())?))
    }

    /// Builds the robot in scalar type `S`, converting every number from
    /// f64 (rounding to nearest); lengths go to `S::Wide`, the scalar's
    /// API type for millimetres (`S` itself for floats).
    ///
    /// # Errors
    /// [`ConfigError::Number`] naming the key of a number that is not
    /// finite or not representable in `S`; [`ConfigError::Robot`] when
    /// the robot is invalid.
    pub fn robot<S: Real>(&self) -> Result<Robot<S>, ConfigError> {
        const FILE: &str = "robot file";
        let g = &self.geometry;
        let mm = |key: &'static str, v: f64| {
            number::<S::Wide>(FILE, &|| format!("[geometry] {key}"), v, v).map_err(ConfigError::Number)
        };
        let geometry = Geometry {
            base_radius: mm("base_radius_mm", g.base_radius_mm)?,
            platform_radius: mm("platform_radius_mm", g.platform_radius_mm)?,
            upper_arm: mm("upper_arm_mm", g.upper_arm_mm)?,
            lower_arm: mm("lower_arm_mm", g.lower_arm_mm)?,
        };
        let l = &self.limits;
        let plain = |key: &'static str, v: f64, to_core: fn(f64) -> f64| {
            number::<S>(FILE, &|| format!("[limits] {key}"), v, to_core(v)).map_err(ConfigError::Number)
        };
        let limits = Limits {
            joint_min: per_arm(FILE, "[limits] joint_min_deg", l.joint_min_deg, f64::to_radians)
                .map_err(ConfigError::Number)?,
            joint_max: per_arm(FILE, "[limits] joint_max_deg", l.joint_max_deg, f64::to_radians)
                .map_err(ConfigError::Number)?,
            passive_cone: plain("passive_cone_deg", l.passive_cone_deg, f64::to_radians)?,
            min_serial_margin: plain("min_serial_margin", l.min_serial_margin, |v| v)?,
            min_parallel_margin: plain("min_parallel_margin", l.min_parallel_margin, |v| v)?,
        };
        let corrections = corrections_in::<S>(&self.corrections_f64())
            .ok_or(ConfigError::Robot(Error::InvalidGeometry(deltakin::ConfigFault::Unrepresentable)))?;
        Robot::with_corrections(geometry, corrections, limits).map_err(ConfigError::Robot)
    }
}

/// f64 corrections rounded to scalar type `S` (lengths to `S::Wide`), or
/// `None` when a number is not representable.
fn corrections_in<S: Real>(c: &[ArmCorrection<f64>; 3]) -> Option<[ArmCorrection<S>; 3]> {
    let one = |c: &ArmCorrection<f64>| {
        Some(ArmCorrection {
            joint_offset: S::from_f64(c.joint_offset)?,
            upper_arm: S::Wide::from_f64(c.upper_arm)?,
            lower_arm: S::Wide::from_f64(c.lower_arm)?,
            radial_difference: S::Wide::from_f64(c.radial_difference)?,
            azimuth: S::from_f64(c.azimuth)?,
            axis_height: S::Wide::from_f64(c.axis_height)?,
        })
    };
    Some([one(&c[0])?, one(&c[1])?, one(&c[2])?])
}

/// Per-arm corrections held in the number type `S`, back in f64 (each
/// value exactly as `S` holds it).
#[must_use]
pub fn corrections_to_f64<S: Real>(c: &[ArmCorrection<S>; 3]) -> [ArmCorrection<f64>; 3] {
    c.map(|c| ArmCorrection {
        joint_offset: c.joint_offset.to_f64(),
        upper_arm: c.upper_arm.to_f64(),
        lower_arm: c.lower_arm.to_f64(),
        radial_difference: c.radial_difference.to_f64(),
        azimuth: c.azimuth.to_f64(),
        axis_height: c.axis_height.to_f64(),
    })
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
    fn the_dynamics_table_is_read_checked_and_strict() {
        let demo = RobotFile::demo();
        let robot = demo.robot::<f64>().unwrap();
        assert!(demo.dynamics(&robot).unwrap().is_some());
        let base = DEMO_ROBOT_TOML.replace("lower_arm_elbow_share = 0.5", "lower_arm_elbow_share = [0.4, 0.5, 0.6]");
        let file = RobotFile::parse(&base).unwrap();
        assert_eq!(file.dynamics.unwrap().params().lower_arm_elbow_share, [0.4, 0.5, 0.6]);
        let typo = DEMO_ROBOT_TOML.replace("payload_kg", "payload_kgs");
        assert!(matches!(RobotFile::parse(&typo), Err(ConfigError::Parse(_))));
        let bad =
            RobotFile::parse(&DEMO_ROBOT_TOML.replace("lower_arm_elbow_share = 0.5", "lower_arm_elbow_share = 1.5"))
                .unwrap();
        assert!(matches!(
            bad.dynamics(&robot),
            Err(ConfigError::Robot(Error::InvalidDynamics {
                arm: Some(0),
                parameter: deltakin::DynamicsParameter::LowerArmElbowShare
            }))
        ));
    }

    #[test]
    fn per_arm_limits_are_read() {
        let text = DEMO_ROBOT_TOML.replace("joint_min_deg = -35.0", "joint_min_deg = [-30.0, -31.0, -32.0]");
        let file = RobotFile::parse(&text).unwrap();
        assert_eq!(file.limits.joint_min_deg.values(), [-30.0, -31.0, -32.0]);
    }

    const CORRECTIONS: &str = "\n[arm_corrections]\njoint_offset_deg = [0.5, -0.25, 0.0]\n\
        upper_arm_mm = [0.3, -0.2, 0.1]\nlower_arm_mm = [-0.4, 0.1, 0.2]\n\
        radial_difference_mm = [0.1, 0.0, -0.3]\nazimuth_deg = [0.0, 0.1, -0.2]\naxis_height_mm = [0.5, -0.2, 0.0]\n";

    #[test]
    fn per_arm_corrections_are_read_in_file_units() {
        assert_eq!(RobotFile::demo().arm_corrections, None, "the demo robot is nominal");
        let file = RobotFile::parse(&format!("{DEMO_ROBOT_TOML}{CORRECTIONS}")).unwrap();
        let c = file.corrections_f64();
        assert_eq!(c[0].joint_offset, 0.5f64.to_radians());
        assert_eq!(c[2].azimuth, (-0.2f64).to_radians());
        assert_eq!(
            (c[1].upper_arm, c[0].lower_arm, c[2].radial_difference, c[1].axis_height),
            (-0.2, -0.4, -0.3, -0.2)
        );
        let r = file.robot::<f64>().unwrap();
        let upper = r.upper_arms();
        // Nominal 280 mm plus the correction, within a rounding of the units' round trip.
        assert!((upper[0] - 280.3).abs() < 1e-12 && (upper[1] - 279.8).abs() < 1e-12, "{upper:?}");
        file.robot::<f32>().unwrap();
        file.robot::<deltakin::Fixed>().unwrap();
    }

    #[test]
    fn per_arm_keys_may_be_left_out_but_not_misspelt_or_short() {
        let text = format!("{DEMO_ROBOT_TOML}\n[arm_corrections]\nupper_arm_mm = [0.1, 0.2, 0.3]\n");
        let c = RobotFile::parse(&text).unwrap().corrections_f64();
        assert_eq!((c[2].upper_arm, c[2].lower_arm, c[2].joint_offset), (0.3, 0.0, 0.0));
        for bad in ["upper_arm = [0.1, 0.2, 0.3]", "upper_arm_mm = [0.1, 0.2]", "upper_arm_mm = 0.1"] {
            let text = format!("{DEMO_ROBOT_TOML}\n[arm_corrections]\n{bad}\n");
            assert!(matches!(RobotFile::parse(&text), Err(ConfigError::Parse(_))), "{bad}");
        }
    }

    #[test]
    fn a_bad_correction_names_the_arm_and_the_parameter() {
        // 2 rad of joint offset: a value in degrees read as radians would look like this.
        let text = format!("{DEMO_ROBOT_TOML}\n[arm_corrections]\njoint_offset_deg = [0.0, 0.0, 114.6]\n");
        let err = RobotFile::parse(&text).unwrap().robot::<f64>().unwrap_err();
        assert_eq!(
            err.to_string(),
            "robot file: invalid arm 2 joint zero offset: the correction exceeds its admitted range"
        );
    }

    #[test]
    fn invalid_numbers_are_a_robot_error() {
        let text = DEMO_ROBOT_TOML.replace("upper_arm_mm = 280.0", "upper_arm_mm = 900.0");
        let file = RobotFile::parse(&text).unwrap();
        assert!(matches!(file.robot::<f64>(), Err(ConfigError::Robot(Error::InvalidGeometry(_)))));
    }
}
