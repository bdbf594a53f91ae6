//! Instantiates every `#[no_panic]` hot path of deltakin for each number
//! type and links them. If the compiler cannot prove one of them free of
//! panics, linking fails with `ERROR[no-panic]: detected panic in function
//! ...` naming it. Running the binary is not needed; it prints a line.

use std::hint::black_box;

use deltakin::{Arith, Fixed, Geometry, Limits, Real, Robot};

fn exercise<S: Real>() -> usize {
    let mm = |v: f64| S::Wide::from_f64(v).unwrap_or(S::Wide::ZERO);
    let rad = |v: f64| S::from_f64(v).unwrap_or(S::ZERO);
    let geometry = Geometry { base_radius: mm(160.0), platform_radius: mm(40.0), upper_arm: mm(280.0), lower_arm: mm(720.0) };
    let limits = Limits { joint_min: [rad(-0.6); 3], joint_max: [rad(1.4); 3], passive_cone: rad(0.7), min_serial_margin: rad(0.1), min_parallel_margin: rad(0.1) };
    let Ok(robot) = Robot::new(black_box(geometry), black_box(limits)) else { return 0 };
    let target = black_box([mm(10.0), mm(-20.0), mm(-700.0)]);
    let joints = black_box([rad(0.4), rad(0.5), rad(0.45)]);
    let vector = black_box([mm(1.0), mm(2.0), mm(3.0)]);
    let mut ok = 0;
    for solved in [robot.inverse(target), robot.forward(joints), robot.inverse_unguarded(target), robot.forward_unguarded(joints)] {
        if let Ok(s) = solved {
            ok += 1;
            ok += usize::from(black_box(s.jacobian.joint_rates(vector)).is_ok());
            ok += usize::from(black_box(s.jacobian.cartesian_velocity(vector)).is_ok());
            ok += usize::from(black_box(s.jacobian.joint_torques(vector)).is_ok());
            ok += usize::from(black_box(s.jacobian.matrix()).is_ok());
        }
    }
    ok
}

fn main() {
    let n = exercise::<f32>() + exercise::<f64>() + exercise::<Fixed>();
    println!("no-panic: hot paths linked for f32, f64 and fixed point ({n} calls succeeded)");
}
