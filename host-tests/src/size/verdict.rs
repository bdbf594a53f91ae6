//! One arm's figures over a cycle at the motor shaft and the gearbox,
//! the limits they are held against, and the verdict.
//!
//! Checks (each a figure over its limit; above 1 fails):
//! * motor peak torque: largest `|t_m|` against the motor's peak torque;
//! * motor thermal load: RMS of `t_m` over the cycle (holds included)
//!   against the rated torque (the usual thermal check, common practice:
//!   copper losses grow with the square of the torque);
//! * motor speed: largest `|w_m|` against the maximum speed;
//! * supply voltage: largest steady-state winding voltage
//!   `|R t_m / k_t + k_e w_m|` against the supply;
//! * gearbox peak torque: largest `|t|` at the output against its peak;
//! * gearbox mean torque: speed-weighted cubic mean of the output torque
//!   against its rated torque (common practice for gear ratings);
//! * gearbox input speed: largest `|w_m|` against its maximum.
//!
//! Advice (does not fail): the worst load-to-rotor inertia ratio over the
//! cycle, `(M_ii / n^2) / J_rotor`, against a threshold (10 by default,
//! a rule of thumb for geared servo axes, common practice): above it the
//! loop is harder to tune stiffly.

use super::profile::{JointLoad, Profile};
use super::shaft::{self, ShaftState};
use crate::drive::{ArmDrive, Drive};

/// What a check compares.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Check {
    /// Largest motor torque against the peak torque.
    MotorPeakTorque,
    /// RMS motor torque against the rated torque.
    MotorThermal,
    /// Largest motor speed against the maximum speed.
    MotorSpeed,
    /// Largest winding voltage against the supply.
    SupplyVoltage,
    /// Largest gearbox output torque against its peak.
    GearboxPeakTorque,
    /// Cubic-mean gearbox output torque against its rated torque.
    GearboxMeanTorque,
    /// Largest motor speed against the gearbox's maximum input speed.
    GearboxInputSpeed,
}

/// Every check, in report order.
pub const CHECKS: [Check; 7] = [
    Check::MotorPeakTorque,
    Check::MotorThermal,
    Check::MotorSpeed,
    Check::SupplyVoltage,
    Check::GearboxPeakTorque,
    Check::GearboxMeanTorque,
    Check::GearboxInputSpeed,
];

impl Check {
    /// The check in words, for reasons.
    #[must_use]
    pub const fn words(self) -> &'static str {
        match self {
            Check::MotorPeakTorque => "motor peak torque",
            Check::MotorThermal => "motor RMS torque (thermal)",
            Check::MotorSpeed => "motor speed",
            Check::SupplyVoltage => "winding voltage",
            Check::GearboxPeakTorque => "gearbox peak output torque",
            Check::GearboxMeanTorque => "gearbox mean output torque",
            Check::GearboxInputSpeed => "gearbox input speed",
        }
    }
}

/// One arm's figures over a cycle, SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct ArmFigures {
    /// Largest `|t_m|`, N*m.
    pub peak_torque: f64,
    /// RMS `t_m`, N*m.
    pub rms_torque: f64,
    /// Largest `|w_m|`, rad/s.
    pub peak_speed: f64,
    /// Time mean of `|w_m|`, rad/s.
    pub mean_speed: f64,
    /// Largest `|V|`, V.
    pub peak_voltage: f64,
    /// Largest gearbox output `|t|`, N*m.
    pub peak_output_torque: f64,
    /// Speed-weighted cubic mean of the output torque, N*m.
    pub mean_output_torque: f64,
    /// Worst load-to-rotor inertia ratio.
    pub inertia_ratio: f64,
    /// The shaft states in time order (for the plot).
    pub shaft: Vec<ShaftState>,
}

/// A check's figure and limit (same unit).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Use {
    /// Which check.
    pub check: Check,
    /// The cycle's figure.
    pub value: f64,
    /// The drive's limit.
    pub limit: f64,
}

impl Use {
    /// `value / limit`: above 1 fails.
    #[must_use]
    pub fn ratio(&self) -> f64 {
        self.value / self.limit
    }
}

/// A verdict.
#[derive(Clone, Debug, PartialEq)]
pub enum Verdict {
    /// Every check within its limit; the highest use named.
    Pass(Use),
    /// Within every limit, with advice (the inertia ratio).
    Advice(Use, f64),
    /// At least one limit exceeded: those checks.
    Fail(Vec<Use>),
}

impl Verdict {
    /// `true` unless a limit is exceeded.
    #[must_use]
    pub fn passes(&self) -> bool {
        !matches!(self, Verdict::Fail(_))
    }
}

impl ArmFigures {
    /// Arm `arm`'s figures over `loads` with `drive`; `profile` supplies
    /// the load inertia.
    #[must_use]
    pub fn of(arm: usize, profile: &Profile, loads: &[JointLoad], drive: &ArmDrive) -> Self {
        let shaft: Vec<ShaftState> =
            loads.iter().map(|l| shaft::at_motor(drive, l.torque[arm], l.rate[arm], l.accel[arm])).collect();
        let weights: Vec<f64> = loads.iter().map(|l| l.weight_s).collect();
        let torques: Vec<f64> = shaft.iter().map(|s| s.torque).collect();
        let output: Vec<f64> = loads.iter().map(|l| l.torque[arm]).collect();
        let speeds: Vec<f64> = shaft.iter().map(|s| s.speed).collect();
        let total: f64 = weights.iter().sum();
        let max_abs = |v: &mut dyn Iterator<Item = f64>| v.fold(0.0, |m: f64, x| m.max(x.abs()));
        let inertia_ratio = profile
            .samples
            .iter()
            .map(|s| shaft::reflected_inertia(s.inertia[arm], drive.gearbox.ratio) / drive.motor.rotor_inertia)
            .fold(0.0, f64::max);
        ArmFigures {
            peak_torque: max_abs(&mut torques.iter().copied()),
            rms_torque: shaft::rms(&torques, &weights),
            peak_speed: max_abs(&mut speeds.iter().copied()),
            mean_speed: if total > 0.0 {
                speeds.iter().zip(&weights).map(|(s, w)| s.abs() * w).sum::<f64>() / total
            } else {
                0.0
            },
            peak_voltage: max_abs(&mut shaft.iter().map(|s| s.voltage)),
            peak_output_torque: max_abs(&mut output.iter().copied()),
            mean_output_torque: shaft::cubic_mean(&output, &speeds, &weights),
            inertia_ratio,
            shaft,
        }
    }

    /// Every check's figure and limit, in [`CHECKS`] order.
    #[must_use]
    pub fn uses(&self, drive: &ArmDrive) -> [Use; 7] {
        let (m, g) = (&drive.motor, &drive.gearbox);
        CHECKS.map(|check| {
            let (value, limit) = match check {
                Check::MotorPeakTorque => (self.peak_torque, m.peak_torque),
                Check::MotorThermal => (self.rms_torque, m.rated_torque),
                Check::MotorSpeed => (self.peak_speed, m.max_speed),
                Check::SupplyVoltage => (self.peak_voltage, m.supply_voltage),
                Check::GearboxPeakTorque => (self.peak_output_torque, g.peak_output_torque),
                Check::GearboxMeanTorque => (self.mean_output_torque, g.rated_output_torque),
                Check::GearboxInputSpeed => (self.peak_speed, g.max_input_speed),
            };
            Use { check, value, limit }
        })
    }

    /// The highest use of any check (its ratio decides whether a cycle
    /// runs at all: above 1 it does not).
    #[must_use]
    pub fn highest_use(&self, drive: &ArmDrive) -> Use {
        let uses = self.uses(drive);
        uses.into_iter().fold(uses[0], |a, b| if b.ratio() > a.ratio() { b } else { a })
    }

    /// The verdict, with `max_inertia_ratio` the advice threshold.
    #[must_use]
    pub fn verdict(&self, drive: &ArmDrive, max_inertia_ratio: f64) -> Verdict {
        let failed: Vec<Use> = self.uses(drive).into_iter().filter(|u| u.ratio() > 1.0).collect();
        if !failed.is_empty() {
            Verdict::Fail(failed)
        } else if self.inertia_ratio > max_inertia_ratio {
            Verdict::Advice(self.highest_use(drive), self.inertia_ratio)
        } else {
            Verdict::Pass(self.highest_use(drive))
        }
    }
}

/// The highest use over three arms and the arm it is on.
#[must_use]
pub fn highest_of(figures: &[ArmFigures; 3], drive: &Drive) -> (usize, Use) {
    let mut best = (0, figures[0].highest_use(&drive.arms[0]));
    for (arm, (f, d)) in figures.iter().zip(&drive.arms).enumerate().skip(1) {
        let u = f.highest_use(d);
        if u.ratio() > best.1.ratio() {
            best = (arm, u);
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_verdicts_and_reasons_of_a_hand_made_cycle() {
        let mut d = Drive::demo().arms[0];
        d.gearbox.ratio = 10.0;
        d.gearbox.efficiency = 1.0;
        d.motor.rotor_inertia = 1e-4;
        d.gearbox.inertia_at_input = 0.0;
        // Arm 0: 5 N*m at 2 rad/s for 1 s, then -5 N*m held for 3 s (at
        // rest, so the motoring rule: -0.5 N*m at the motor).
        let load = |t: f64, w: f64, dt: f64| JointLoad { torque: [t; 3], rate: [w; 3], accel: [0.0; 3], weight_s: dt };
        let loads = [load(5.0, 2.0, 1.0), load(-5.0, 0.0, 3.0)];
        let profile = Profile { samples: Vec::new(), motion_s: 4.0, hold_s: 0.0 };
        let f = ArmFigures::of(0, &profile, &loads, &d);
        assert!((f.peak_torque - 0.5).abs() < 1e-15 && (f.rms_torque - 0.5).abs() < 1e-15);
        assert!((f.peak_speed - 20.0).abs() < 1e-15 && (f.mean_speed - 5.0).abs() < 1e-15);
        // Only the turning sample counts for the gearbox mean: 5 N*m.
        assert!((f.mean_output_torque - 5.0).abs() < 1e-12);
        d.motor.rated_torque = 0.4;
        d.motor.peak_torque = 1.0;
        match f.verdict(&d, 10.0) {
            Verdict::Fail(uses) => {
                assert_eq!(uses.len(), 1);
                assert_eq!(uses[0].check, Check::MotorThermal);
                assert!((uses[0].ratio() - 1.25).abs() < 1e-12);
            }
            v => panic!("{v:?}"),
        }
        d.motor.rated_torque = 0.6;
        let v = f.verdict(&d, 10.0);
        assert!(v.passes());
        assert!(matches!(v, Verdict::Pass(u) if u.check == Check::MotorThermal), "highest use: 0.5 of 0.6");
    }
}
