//! Arbitrary bytes as geometry, limits, targets, joint angles, velocities
//! and forces, fed to every public entry point of the core in f32 and f64.
//! The fuzzer looks for panics (there must be none) and the asserts below
//! check that whatever the core accepts is finite.
#![no_main]

use deltakin::{Geometry, Limits, Real, Robot, Solution};
use libfuzzer_sys::fuzz_target;

/// Reads little-endian f32 values from the input, zero-padded.
struct Words<'a>(&'a [u8]);

impl Words<'_> {
    fn next(&mut self) -> f32 {
        let mut b = [0u8; 4];
        for (dst, src) in b.iter_mut().zip(self.0.iter()) {
            *dst = *src;
        }
        self.0 = self.0.get(4..).unwrap_or(&[]);
        f32::from_le_bytes(b)
    }
    fn three(&mut self) -> [f32; 3] {
        [self.next(), self.next(), self.next()]
    }
}

fn check_solution<S: Real>(s: &Solution<S>) {
    let all = s.joints.iter().chain(s.position.iter()).chain(s.margins.serial.iter());
    assert!(all.copied().all(S::is_finite), "accepted solution with non-finite numbers");
    assert!(s.margins.parallel.is_finite());
}

fn exercise<S: Real>(w: &mut Words<'_>, conv: impl Fn(f32) -> S) {
    let geometry = Geometry {
        base_radius: conv(w.next()),
        platform_radius: conv(w.next()),
        upper_arm: conv(w.next()),
        lower_arm: conv(w.next()),
    };
    let limits = Limits {
        joint_min: w.three().map(&conv),
        joint_max: w.three().map(&conv),
        passive_cone: conv(w.next()),
        min_serial_margin: conv(w.next()),
        min_parallel_margin: conv(w.next()),
    };
    let Ok(robot) = Robot::new(geometry, limits) else { return };
    let target = w.three().map(&conv);
    let joints = w.three().map(&conv);
    let vector = w.three().map(&conv);
    for result in [robot.inverse(target), robot.inverse_unguarded(target), robot.forward(joints), robot.forward_unguarded(joints)] {
        if let Ok(s) = result {
            check_solution(&s);
            let _ = s.jacobian.joint_rates(vector);
            let _ = s.jacobian.cartesian_velocity(vector);
            let _ = s.jacobian.joint_torques(vector);
            let _ = s.jacobian.matrix();
        }
    }
}

fuzz_target!(|data: &[u8]| {
    exercise::<f32>(&mut Words(data), |v| v);
    exercise::<f64>(&mut Words(data), f64::from);
});
