//! The drive file: TOML, units in the key names, unknown keys refused.
//!
//! One file describes the three joint drives of a machine: the motor, the
//! gearbox between motor and upper arm, and (optionally) the servo loop's
//! gains for a simulation. Every number takes one value (the same on all
//! three arms) or a list of three (arms 0, 1, 2), except `[servo] rate_hz`.
//!
//! ```toml
//! name = "..."
//! [motor]
//! rated_torque_nmm = 320.0        # continuous (thermal) torque, N*mm
//! peak_torque_nmm = 950.0         # short-time maximum, N*mm
//! rated_speed_rpm = 3000.0        # speed at which rated torque is specified
//! max_speed_rpm = 5000.0          # never exceeded
//! rotor_inertia_kg_mm2 = 24.0     # about the motor shaft
//! torque_constant_nmm_a = 75.0    # shaft torque per ampere, N*mm/A
//! winding_resistance_ohm = 0.60   # of the circuit the torque constant refers to
//! winding_inductance_mh = 1.1
//! back_emf_v_s_rad = 0.075        # volts per rad/s of shaft speed
//! supply_voltage_v = 48.0         # what the amplifier can put across the winding
//! [gearbox]
//! ratio = 30.0                    # motor turns per upper-arm turn
//! efficiency = 0.90               # 0 < efficiency <= 1
//! inertia_at_input_kg_mm2 = 2.5   # the gearbox's own, referred to the motor shaft
//! rated_output_torque_nmm = 15000.0
//! peak_output_torque_nmm = 30000.0
//! max_input_speed_rpm = 6000.0
//! [servo]                         # optional: the position loop, for a simulation
//! rate_hz = 4000.0                # servo (setpoint) rate, one value for all arms
//! proportional_v_per_rad = 1300.0 # winding volts per rad of joint-angle error
//! integral_v_per_rad_s = 20000.0  # per rad*s of integrated error
//! derivative_v_s_per_rad = 9.5    # per rad/s of error rate
//! derivative_filter_s = 0.0004    # first-order filter on the derivative term
//! output_limit_v = 48.0           # |output| <= this, at most the supply voltage
//! ```
//!
//! # The inertia rule
//! The robot file's `[dynamics] upper_arm_inertia_kg_mm2` is the upper arm
//! alone (hub and elbow joints included), about the actuator axis. The
//! motor's rotor and the gearbox are in this file only; commands that know
//! the drive add them (reflected to the joint, `n^2 (J_rotor + J_gearbox)`),
//! so nothing is counted twice.
//!
//! # Units
//! The file speaks deltakin's units: torque N*mm (the core API's torque
//! unit), inertia kg*mm^2 (as the robot file), speeds in rpm (how motor
//! and gearbox data are stated). [`Drive`] holds the validated values in
//! SI units (N*m, rad/s, kg*m^2, ohm, H, V, s) for the models that use them.
//!
//! # Validation
//! Every number must be finite; the message of a refused value names its
//! table and key (`[gearbox] efficiency[1]` for arm 1 of a list) and the
//! rule it breaks. Torques, speeds, the rotor inertia, the motor constants,
//! the winding, the supply voltage and the ratio must be above zero; the
//! gearbox inertia and the integral and derivative gains and filter may be
//! zero; peak values at least the rated ones; the efficiency in (0, 1];
//! the servo output limit at most the supply voltage.

use std::path::Path;

use serde::Deserialize;

use crate::config::{PerArm, per_arm_key};

/// The demo drive, built into the binary (same text as
/// `examples/demo_drive.toml`).
pub const DEMO_DRIVE_TOML: &str = include_str!("../../../examples/demo_drive.toml");

/// rpm to rad/s.
const RAD_S_PER_RPM: f64 = std::f64::consts::PI / 30.0;
/// N*mm to N*m.
const NM_PER_NMM: f64 = 1e-3;
/// kg*mm^2 to kg*m^2.
const KG_M2_PER_KG_MM2: f64 = 1e-6;
/// mH to H.
const H_PER_MH: f64 = 1e-3;

/// `[motor]`, as written in the file.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct MotorFile {
    pub rated_torque_nmm: PerArm,
    pub peak_torque_nmm: PerArm,
    pub rated_speed_rpm: PerArm,
    pub max_speed_rpm: PerArm,
    pub rotor_inertia_kg_mm2: PerArm,
    pub torque_constant_nmm_a: PerArm,
    pub winding_resistance_ohm: PerArm,
    pub winding_inductance_mh: PerArm,
    pub back_emf_v_s_rad: PerArm,
    pub supply_voltage_v: PerArm,
}

/// `[gearbox]`, as written in the file.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct GearboxFile {
    pub ratio: PerArm,
    pub efficiency: PerArm,
    pub inertia_at_input_kg_mm2: PerArm,
    pub rated_output_torque_nmm: PerArm,
    pub peak_output_torque_nmm: PerArm,
    pub max_input_speed_rpm: PerArm,
}

/// `[servo]`, as written in the file.
#[derive(Clone, Copy, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
#[allow(missing_docs)]
pub struct ServoFile {
    pub rate_hz: f64,
    pub proportional_v_per_rad: PerArm,
    pub integral_v_per_rad_s: PerArm,
    pub derivative_v_s_per_rad: PerArm,
    pub derivative_filter_s: PerArm,
    pub output_limit_v: PerArm,
}

/// A whole drive file, as written.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct DriveFile {
    /// A name for reports.
    pub name: String,
    /// The motor.
    pub motor: MotorFile,
    /// The gearbox between motor and upper arm.
    pub gearbox: GearboxFile,
    /// The position loop; optional (sizing does not need it).
    #[serde(default)]
    pub servo: Option<ServoFile>,
}

/// One motor, validated, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MotorData {
    /// Continuous (thermal) torque, N*m.
    pub rated_torque: f64,
    /// Short-time maximum torque, N*m.
    pub peak_torque: f64,
    /// Speed at which the rated torque is specified, rad/s.
    pub rated_speed: f64,
    /// Maximum speed, rad/s.
    pub max_speed: f64,
    /// Rotor inertia, kg*m^2.
    pub rotor_inertia: f64,
    /// Torque constant, N*m/A.
    pub torque_constant: f64,
    /// Winding resistance, ohm.
    pub resistance: f64,
    /// Winding inductance, H.
    pub inductance: f64,
    /// Back-EMF constant, V*s/rad.
    pub back_emf: f64,
    /// Supply voltage, V.
    pub supply_voltage: f64,
}

/// One gearbox, validated, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GearboxData {
    /// Motor turns per upper-arm turn.
    pub ratio: f64,
    /// Efficiency, 0 < efficiency <= 1.
    pub efficiency: f64,
    /// Own inertia referred to the input (motor) shaft, kg*m^2.
    pub inertia_at_input: f64,
    /// Rated output torque, N*m.
    pub rated_output_torque: f64,
    /// Peak output torque, N*m.
    pub peak_output_torque: f64,
    /// Maximum input speed, rad/s.
    pub max_input_speed: f64,
}

/// One arm's position-loop gains, validated, SI units. The loop's input
/// is the joint-angle error (setpoint minus measured, rad at the arm), its
/// output the voltage across the motor winding.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ServoGains {
    /// V per rad.
    pub proportional: f64,
    /// V per rad*s.
    pub integral: f64,
    /// V*s per rad.
    pub derivative: f64,
    /// Time constant of the derivative term's first-order filter, s
    /// (0: unfiltered).
    pub derivative_filter: f64,
    /// Output limit, V (symmetric).
    pub output_limit: f64,
}

/// One arm's drive.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ArmDrive {
    /// The motor.
    pub motor: MotorData,
    /// The gearbox.
    pub gearbox: GearboxData,
    /// The position loop, when the file has a `[servo]` table.
    pub servo: Option<ServoGains>,
}

/// A validated drive file.
#[derive(Clone, Debug, PartialEq)]
pub struct Drive {
    /// The file's name.
    pub name: String,
    /// Arms 0, 1, 2.
    pub arms: [ArmDrive; 3],
    /// The servo rate, Hz, when the file has a `[servo]` table.
    pub servo_rate_hz: Option<f64>,
}

/// Why a drive file could not be used.
#[derive(Debug)]
pub enum DriveError {
    /// The file could not be read.
    Read(std::path::PathBuf, std::io::Error),
    /// The text is not a valid drive file (syntax, missing or unknown key).
    Parse(String),
    /// A number breaks its rule.
    Invalid {
        /// Table and key as in the file, with `[arm]` for a list entry:
        /// `[gearbox] efficiency[1]`.
        key: String,
        /// The value as written.
        value: f64,
        /// The rule it breaks, in words.
        rule: String,
    },
}

impl std::fmt::Display for DriveError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            DriveError::Read(p, e) => write!(f, "cannot read drive file {}: {e}", p.display()),
            DriveError::Parse(e) => write!(f, "invalid drive file: {e}"),
            DriveError::Invalid { key, value, rule } => write!(f, "drive file: {key} = {value} {rule}"),
        }
    }
}

impl std::error::Error for DriveError {}

/// What a value must satisfy.
#[derive(Clone, Copy)]
enum Rule {
    /// Finite and above zero.
    Positive,
    /// Finite and zero or more.
    NonNegative,
    /// In (0, 1].
    Fraction,
}

/// One arm's value of `[table] key`, checked against `rule`.
fn checked(table: &str, key: &str, entry: PerArm, arm: usize, rule: Rule) -> Result<f64, DriveError> {
    let value = entry.values()[arm];
    let bad = |rule: &str| DriveError::Invalid {
        key: format!("[{table}] {}", per_arm_key(key, entry, arm)),
        value,
        rule: rule.to_owned(),
    };
    if !value.is_finite() {
        return Err(bad("is not a finite number"));
    }
    match rule {
        Rule::Positive if value <= 0.0 => Err(bad("must be above zero")),
        Rule::NonNegative if value < 0.0 => Err(bad("must not be negative")),
        Rule::Fraction if !(value > 0.0 && value <= 1.0) => Err(bad("must be above 0 and at most 1")),
        _ => Ok(value),
    }
}

/// Refuses `high < low` for one arm, naming `high`'s key.
fn at_least(
    table: &str,
    key: &str,
    entry: PerArm,
    arm: usize,
    high: f64,
    low: f64,
    what: &str,
) -> Result<(), DriveError> {
    if high < low {
        return Err(DriveError::Invalid {
            key: format!("[{table}] {}", per_arm_key(key, entry, arm)),
            value: entry.values()[arm],
            rule: format!("must be at least {what} ({low})"),
        });
    }
    Ok(())
}

impl MotorFile {
    fn arm(&self, arm: usize) -> Result<MotorData, DriveError> {
        use Rule::Positive as P;
        let v = |key: &str, entry: PerArm| checked("motor", key, entry, arm, P);
        let rated_torque = v("rated_torque_nmm", self.rated_torque_nmm)?;
        let peak_torque = v("peak_torque_nmm", self.peak_torque_nmm)?;
        at_least("motor", "peak_torque_nmm", self.peak_torque_nmm, arm, peak_torque, rated_torque, "rated_torque_nmm")?;
        let rated_speed = v("rated_speed_rpm", self.rated_speed_rpm)?;
        let max_speed = v("max_speed_rpm", self.max_speed_rpm)?;
        at_least("motor", "max_speed_rpm", self.max_speed_rpm, arm, max_speed, rated_speed, "rated_speed_rpm")?;
        Ok(MotorData {
            rated_torque: rated_torque * NM_PER_NMM,
            peak_torque: peak_torque * NM_PER_NMM,
            rated_speed: rated_speed * RAD_S_PER_RPM,
            max_speed: max_speed * RAD_S_PER_RPM,
            rotor_inertia: v("rotor_inertia_kg_mm2", self.rotor_inertia_kg_mm2)? * KG_M2_PER_KG_MM2,
            torque_constant: v("torque_constant_nmm_a", self.torque_constant_nmm_a)? * NM_PER_NMM,
            resistance: v("winding_resistance_ohm", self.winding_resistance_ohm)?,
            inductance: v("winding_inductance_mh", self.winding_inductance_mh)? * H_PER_MH,
            back_emf: v("back_emf_v_s_rad", self.back_emf_v_s_rad)?,
            supply_voltage: v("supply_voltage_v", self.supply_voltage_v)?,
        })
    }
}

impl GearboxFile {
    fn arm(&self, arm: usize) -> Result<GearboxData, DriveError> {
        let v = |key: &str, entry: PerArm, rule| checked("gearbox", key, entry, arm, rule);
        let rated = v("rated_output_torque_nmm", self.rated_output_torque_nmm, Rule::Positive)?;
        let peak = v("peak_output_torque_nmm", self.peak_output_torque_nmm, Rule::Positive)?;
        at_least(
            "gearbox",
            "peak_output_torque_nmm",
            self.peak_output_torque_nmm,
            arm,
            peak,
            rated,
            "rated_output_torque_nmm",
        )?;
        Ok(GearboxData {
            ratio: v("ratio", self.ratio, Rule::Positive)?,
            efficiency: v("efficiency", self.efficiency, Rule::Fraction)?,
            inertia_at_input: v("inertia_at_input_kg_mm2", self.inertia_at_input_kg_mm2, Rule::NonNegative)?
                * KG_M2_PER_KG_MM2,
            rated_output_torque: rated * NM_PER_NMM,
            peak_output_torque: peak * NM_PER_NMM,
            max_input_speed: v("max_input_speed_rpm", self.max_input_speed_rpm, Rule::Positive)? * RAD_S_PER_RPM,
        })
    }
}

impl ServoFile {
    fn arm(&self, arm: usize, supply_voltage: f64) -> Result<ServoGains, DriveError> {
        let v = |key: &str, entry: PerArm, rule| checked("servo", key, entry, arm, rule);
        let output_limit = v("output_limit_v", self.output_limit_v, Rule::Positive)?;
        if output_limit > supply_voltage {
            let key = format!("[servo] {}", per_arm_key("output_limit_v", self.output_limit_v, arm));
            return Err(DriveError::Invalid {
                key,
                value: output_limit,
                rule: format!("must be at most [motor] supply_voltage_v ({supply_voltage})"),
            });
        }
        Ok(ServoGains {
            proportional: v("proportional_v_per_rad", self.proportional_v_per_rad, Rule::Positive)?,
            integral: v("integral_v_per_rad_s", self.integral_v_per_rad_s, Rule::NonNegative)?,
            derivative: v("derivative_v_s_per_rad", self.derivative_v_s_per_rad, Rule::NonNegative)?,
            derivative_filter: v("derivative_filter_s", self.derivative_filter_s, Rule::NonNegative)?,
            output_limit,
        })
    }
}

impl DriveFile {
    /// Parses drive-file text (syntax, presence and names of keys; the
    /// numbers are checked by [`DriveFile::drive`]).
    ///
    /// # Errors
    /// [`DriveError::Parse`] with the parser's message, which names an
    /// unknown or missing key.
    pub fn parse(text: &str) -> Result<Self, DriveError> {
        toml::from_str(text).map_err(|e| DriveError::Parse(e.to_string()))
    }

    /// Reads and parses a drive file, or the demo drive when `path` is `None`.
    ///
    /// # Errors
    /// [`DriveError::Read`] or [`DriveError::Parse`].
    pub fn load(path: Option<&Path>) -> Result<Self, DriveError> {
        match path {
            None => Self::parse(DEMO_DRIVE_TOML),
            Some(p) => {
                let text = std::fs::read_to_string(p).map_err(|e| DriveError::Read(p.to_path_buf(), e))?;
                Self::parse(&text)
            }
        }
    }

    /// Checks every number (see the module docs for the rules) and
    /// converts to SI units.
    ///
    /// # Errors
    /// [`DriveError::Invalid`] naming the first bad key, arms in order.
    pub fn drive(&self) -> Result<Drive, DriveError> {
        let one = |arm: usize| -> Result<ArmDrive, DriveError> {
            let motor = self.motor.arm(arm)?;
            let gearbox = self.gearbox.arm(arm)?;
            let servo = self.servo.as_ref().map(|s| s.arm(arm, motor.supply_voltage)).transpose()?;
            Ok(ArmDrive { motor, gearbox, servo })
        };
        let arms = [one(0)?, one(1)?, one(2)?];
        let servo_rate_hz = match &self.servo {
            None => None,
            Some(s) if s.rate_hz.is_finite() && s.rate_hz > 0.0 => Some(s.rate_hz),
            Some(s) => {
                return Err(DriveError::Invalid {
                    key: "[servo] rate_hz".to_owned(),
                    value: s.rate_hz,
                    rule: "must be a finite number above zero".to_owned(),
                });
            }
        };
        Ok(Drive { name: self.name.clone(), arms, servo_rate_hz })
    }
}

impl Drive {
    /// Reads, parses and validates a drive file (the demo drive for `None`).
    ///
    /// # Errors
    /// Any [`DriveError`].
    pub fn load(path: Option<&Path>) -> Result<Self, DriveError> {
        DriveFile::load(path)?.drive()
    }

    /// The demo drive.
    ///
    /// # Panics
    /// Never in practice: the built-in text is checked by a test.
    #[must_use]
    pub fn demo() -> Self {
        Self::load(None).unwrap_or_else(|e| panic!("built-in demo drive: {e}"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Relative tolerance of a unit conversion (a few f64 roundings).
    const CONVERSION_REL: f64 = 1e-12;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= CONVERSION_REL * b.abs()
    }

    /// The demo text with the line of `key` (unique in the file) set to
    /// `key = value`.
    fn with(key: &str, value: &str) -> String {
        let mut found = 0;
        let lines: Vec<String> = DEMO_DRIVE_TOML
            .lines()
            .map(|line| {
                if line.split_whitespace().next() == Some(key) {
                    found += 1;
                    format!("{key} = {value}")
                } else {
                    line.to_owned()
                }
            })
            .collect();
        assert_eq!(found, 1, "{key} appears once in the demo drive");
        lines.join("\n")
    }

    fn err(text: &str) -> String {
        match DriveFile::parse(text).and_then(|f| f.drive()) {
            Ok(_) => panic!("accepted:\n{text}"),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn the_demo_drive_parses_and_converts_to_si() {
        let d = DriveFile::parse(&with("rated_torque_nmm", "500.0")).unwrap().drive().unwrap();
        assert!(close(d.arms[1].motor.rated_torque, 0.5));
        // 3000 rpm is 100 pi rad/s.
        let d = DriveFile::parse(&with("rated_speed_rpm", "3000.0")).unwrap().drive().unwrap();
        assert!(close(d.arms[2].motor.rated_speed, 100.0 * std::f64::consts::PI));
        let d = DriveFile::parse(&with("rotor_inertia_kg_mm2", "12.5")).unwrap().drive().unwrap();
        assert!(close(d.arms[0].motor.rotor_inertia, 12.5e-6));
        let d = DriveFile::parse(&with("winding_inductance_mh", "2.0")).unwrap().drive().unwrap();
        assert!(close(d.arms[0].motor.inductance, 2e-3));
        let d = DriveFile::parse(&with("torque_constant_nmm_a", "80.0")).unwrap().drive().unwrap();
        assert!(close(d.arms[0].motor.torque_constant, 0.08));
        let demo = Drive::demo();
        assert!(demo.arms.iter().all(|a| a.servo.is_some()));
        assert_eq!(demo.servo_rate_hz, Some(4000.0));
    }

    #[test]
    fn a_list_of_three_sets_each_arm() {
        let d = DriveFile::parse(&with("efficiency", "[0.9, 0.85, 0.8]")).unwrap().drive().unwrap();
        assert_eq!(d.arms.map(|a| a.gearbox.efficiency), [0.9, 0.85, 0.8]);
        assert!(matches!(DriveFile::parse(&with("efficiency", "[0.9, 0.85]")), Err(DriveError::Parse(_))));
    }

    #[test]
    fn unknown_and_missing_keys_are_refused_by_name() {
        let typo = DEMO_DRIVE_TOML.replace("\nratio =", "\ngear_ratio =");
        assert!(err(&typo).contains("gear_ratio"), "{}", err(&typo));
        let extra = DEMO_DRIVE_TOML.replace("[motor]", "[motor]\ncolour = \"blue\"");
        assert!(err(&extra).contains("colour"));
        let missing = DEMO_DRIVE_TOML.replace("supply_voltage_v", "# supply_voltage_v");
        assert!(err(&missing).contains("supply_voltage_v"));
        let table = format!("{DEMO_DRIVE_TOML}\n[brake]\nholding_nmm = 1.0\n");
        assert!(err(&table).contains("brake"));
    }

    #[test]
    fn bad_numbers_name_the_key_and_the_rule() {
        let cases = [
            ("efficiency", "[0.9, 1.2, 0.9]", "[gearbox] efficiency[1] = 1.2 must be above 0 and at most 1"),
            ("ratio", "0.0", "[gearbox] ratio = 0 must be above zero"),
            ("winding_resistance_ohm", "nan", "[motor] winding_resistance_ohm = NaN is not a finite number"),
            ("back_emf_v_s_rad", "inf", "[motor] back_emf_v_s_rad = inf is not a finite number"),
            ("inertia_at_input_kg_mm2", "-1.0", "[gearbox] inertia_at_input_kg_mm2 = -1 must not be negative"),
            ("rated_torque_nmm", "1000.0", "[motor] peak_torque_nmm = 950 must be at least rated_torque_nmm (1000)"),
            ("max_speed_rpm", "2000.0", "[motor] max_speed_rpm = 2000 must be at least rated_speed_rpm (3000)"),
            (
                "peak_output_torque_nmm",
                "[20000.0, 9000.0, 20000.0]",
                "[gearbox] peak_output_torque_nmm[1] = 9000 must be at least rated_output_torque_nmm (15000)",
            ),
            ("output_limit_v", "60.0", "[servo] output_limit_v = 60 must be at most [motor] supply_voltage_v (48)"),
            ("rate_hz", "-1.0", "[servo] rate_hz = -1 must be a finite number above zero"),
            ("proportional_v_per_rad", "0.0", "[servo] proportional_v_per_rad = 0 must be above zero"),
            ("derivative_v_s_per_rad", "-0.1", "[servo] derivative_v_s_per_rad = -0.1 must not be negative"),
        ];
        for (key, value, message) in cases {
            assert_eq!(err(&with(key, value)), format!("drive file: {message}"), "{key} = {value}");
        }
    }

    #[test]
    fn the_servo_table_is_optional_and_zero_gains_are_allowed() {
        let start = DEMO_DRIVE_TOML.find("\n[servo]").unwrap();
        let d = DriveFile::parse(&DEMO_DRIVE_TOML[..start]).unwrap().drive().unwrap();
        assert!(d.arms.iter().all(|a| a.servo.is_none()) && d.servo_rate_hz.is_none());
        let text = with("integral_v_per_rad_s", "0.0");
        let s = DriveFile::parse(&text).unwrap().drive().unwrap().arms[2].servo.unwrap();
        assert_eq!(s.integral, 0.0);
    }
}
