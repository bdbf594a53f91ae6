//! The full-dynamics reference (`reference::dynamics`) against physics it
//! must obey, and the core's simplified model against it.
//!
//! * Statics by virtual work (J. L. Meriam and L. G. Kraige, "Engineering
//!   Mechanics: Statics", chapter on virtual work; from memory): at rest the
//!   torques are the gradient of the potential energy in joint coordinates,
//!   and equal `J^T` times the platform-side weight plus each arm's own
//!   gravity torque.
//! * Energy conservation of the unforced, frictionless plant (Goldstein,
//!   "Classical Mechanics", section 2.7: a scleronomic system with
//!   conservative forces conserves `T + V`; from memory).
//! * Inverse and forward dynamics are each other's inverse.
//! * With the rods' mass at their two end joints (the core's lumping), the
//!   reference and the core agree exactly, up to the reference's difference
//!   steps.

use deltakin::{DynamicsParams, Robot};
use deltakin_harness::config::RobotFile;
use deltakin_harness::reference::dynamics::{Bodies, FullDynamics, GRAVITY_MM_S2};
use deltakin_harness::reference::{self, Machine};
use ode_solvers::{Dop853, System, Vector6};

fn demo() -> (RobotFile, DynamicsParams) {
    let file = RobotFile::demo();
    let mut p = file.dynamics.expect("demo has [dynamics]").params();
    p.viscous = [0.0; 3];
    p.coulomb = [0.0; 3];
    (file, p)
}

/// Joint states spread over the demo workspace: pose (mm), rates (rad/s),
/// accelerations (rad/s^2).
fn states(robot: &Robot<f64>) -> Vec<([f64; 3], [f64; 3], [f64; 3])> {
    let poses = [[0.0, 0.0, -700.0], [150.0, 60.0, -760.0], [-120.0, -180.0, -820.0], [60.0, -200.0, -650.0]];
    let motions = [
        ([0.0; 3], [0.0; 3]),
        ([3.0, -2.0, 1.0], [0.0; 3]),
        ([0.0; 3], [150.0, -90.0, 40.0]),
        ([-4.0, 2.5, 3.5], [-200.0, 120.0, 60.0]),
    ];
    let mut out = Vec::new();
    for p in poses {
        let q = robot.inverse(p).expect("demo pose reachable").joints;
        for (w, a) in motions {
            out.push((q, w, a));
        }
    }
    out
}

fn peak(v: &[f64]) -> f64 {
    v.iter().fold(0.0f64, |m, t| m.max(t.abs()))
}

/// Agreement of the core with the end-mass reference, relative to the
/// largest torque of the set: the reference's central differences
/// (truncation and rounding about 1e-10) and forward kinematics (1e-12 mm).
const CORE_AGREEMENT_REL_TOL: f64 = 1e-8;

#[test]
fn core_agrees_with_the_reference_when_rod_mass_sits_at_the_joints() {
    let (file, p) = demo();
    let robot: Robot<f64> = file.robot().unwrap();
    let core = deltakin::Dynamics::new(&p, &robot).unwrap();
    let full = FullDynamics::new(&file.geometry_f64(), Bodies::from_params(&p, true));
    let mut pairs = Vec::new();
    for (q, w, a) in states(&robot) {
        let sol = robot.inverse_unguarded(robot.forward_unguarded(q).unwrap().position).unwrap();
        let motion = full.platform_motion(q, w, Some(a)).unwrap();
        let tc = core.torques(q, &sol.jacobian, w, a, motion.acceleration).unwrap();
        let tr = full.torques(q, w, a).unwrap();
        pairs.push((tc, tr));
    }
    let scale = peak(&pairs.iter().flat_map(|(_, r)| *r).collect::<Vec<_>>());
    assert!(scale > 100.0, "torques too small to test: {scale} N*mm");
    for (tc, tr) in &pairs {
        for i in 0..3 {
            assert!((tc[i] - tr[i]).abs() <= CORE_AGREEMENT_REL_TOL * scale, "arm {i}: core {} vs {}", tc[i], tr[i]);
        }
    }
}

/// The uniform rods must differ from the end masses wherever the arms
/// accelerate (otherwise the comparison above proves nothing about the
/// rods): at least this fraction of the peak torque.
const RODS_MATTER_MIN_REL: f64 = 1e-3;

#[test]
fn uniform_rods_differ_from_the_lumped_model_only_in_motion() {
    let (file, p) = demo();
    let robot: Robot<f64> = file.robot().unwrap();
    let lumped = FullDynamics::new(&file.geometry_f64(), Bodies::from_params(&p, true));
    let rods = FullDynamics::new(&file.geometry_f64(), Bodies::from_params(&p, false));
    let mut worst_moving: f64 = 0.0;
    let mut scale: f64 = 0.0;
    for (q, w, a) in states(&robot) {
        let (tl, tr) = (lumped.torques(q, w, a).unwrap(), rods.torques(q, w, a).unwrap());
        scale = scale.max(peak(&tr));
        let diff = peak(&[tl[0] - tr[0], tl[1] - tr[1], tl[2] - tr[2]]);
        if w == [0.0; 3] && a == [0.0; 3] {
            // Same static moments (elbow share 0.5 = uniform rod): same statics.
            assert!(diff <= CORE_AGREEMENT_REL_TOL * scale.max(1.0), "statics differ by {diff}");
        } else {
            worst_moving = worst_moving.max(diff);
        }
    }
    assert!(worst_moving >= RODS_MATTER_MIN_REL * scale, "rods change nothing: {worst_moving} of {scale}");
}

/// Central differences of the potential at step 1e-6 rad: truncation
/// 1e-12, rounding 1e-10 of the torque; forward kinematics to 1e-12 mm.
const STATICS_REL_TOL: f64 = 1e-7;

#[test]
fn torques_at_rest_are_the_potential_gradient_and_j_transpose_weights() {
    let (file, p) = demo();
    let robot: Robot<f64> = file.robot().unwrap();
    let g = file.geometry_f64();
    let full = FullDynamics::new(&g, Bodies::from_params(&p, false));
    let gk = GRAVITY_MM_S2 * 1e-3; // kg*mm/s^2 per kg, in N*mm per kg*mm
    // Potential (N*mm) written here from the mass positions: upper arm
    // centres of mass, uniform rods' centres (mid-way), platform + payload.
    let potential = |q: [f64; 3]| {
        let pz = reference::forward(&g, q).unwrap()[2];
        let mut v = (p.platform_mass + p.payload) * gk * pz;
        for (i, &qi) in q.iter().enumerate() {
            let ez = reference::elbow(&g, i, qi)[2];
            v += -p.upper_arm_mass[i] * p.upper_arm_com[i] * gk * qi.sin() + p.lower_arm_mass[i] * gk * 0.5 * (ez + pz);
        }
        v
    };
    for (q, _, _) in states(&robot).into_iter().step_by(4) {
        let tau = full.torques(q, [0.0; 3], [0.0; 3]).unwrap();
        let scale = peak(&tau);
        let h = 1e-6;
        let j = reference::jacobian_fd(&g, q, h).unwrap();
        let platform_side = p.platform_mass + p.payload + 0.5 * p.lower_arm_mass.iter().sum::<f64>();
        for i in 0..3 {
            let (mut qp, mut qm) = (q, q);
            qp[i] += h;
            qm[i] -= h;
            let grad = (potential(qp) - potential(qm)) / (2.0 * h);
            assert!((tau[i] - grad).abs() <= STATICS_REL_TOL * scale, "arm {i}: {} vs gradient {grad}", tau[i]);
            // J^T (platform-side weight, upward support) + the arm's own
            // weight torque (upper arm and the rods' elbow half).
            let a = g.arm(i).upper_arm;
            let own = -(p.upper_arm_mass[i] * p.upper_arm_com[i] + 0.5 * p.lower_arm_mass[i] * a) * gk * q[i].cos();
            let jt = j[2][i] * platform_side * gk + own;
            assert!((tau[i] - jt).abs() <= STATICS_REL_TOL * scale, "arm {i}: {} vs J^T w {jt}", tau[i]);
        }
    }
}

/// Inverse then forward dynamics returns the accelerations, relative to
/// their largest magnitude (two LU solves and the difference steps).
const ROUND_TRIP_REL_TOL: f64 = 1e-7;

#[test]
fn forward_dynamics_inverts_inverse_dynamics() {
    let (file, p) = demo();
    let robot: Robot<f64> = file.robot().unwrap();
    let full = FullDynamics::new(&file.geometry_f64(), Bodies::from_params(&p, false));
    for (q, w, a) in states(&robot) {
        let tau = full.torques(q, w, a).unwrap();
        let back = full.accelerations(q, w, tau).unwrap();
        let scale = peak(&a).max(1.0);
        for i in 0..3 {
            assert!((back[i] - a[i]).abs() <= ROUND_TRIP_REL_TOL * scale, "arm {i}: {} vs {}", back[i], a[i]);
        }
    }
}

struct Free(FullDynamics);

impl System<f64, Vector6<f64>> for Free {
    fn system(&self, _t: f64, y: &Vector6<f64>, dy: &mut Vector6<f64>) {
        let (q, w) = ([y[0], y[1], y[2]], [y[3], y[4], y[5]]);
        let a = self.0.accelerations(q, w, [0.0; 3]).unwrap_or([f64::NAN; 3]);
        for i in 0..3 {
            dy[i] = w[i];
            dy[3 + i] = a[i];
        }
    }
}

/// Energy drift over the free swing, relative to the largest kinetic
/// energy reached. The accelerations come from central differences
/// (about 1e-9 relative noise), so a tighter integrator tolerance does not
/// help: measured drift 2e-6 at rtol = atol = 1e-9, 4.5e-5 at 1e-10 and
/// 2.8e-4 at 1e-12 (more steps, more noise summed). A missing or wrong
/// velocity term drifts by whole percent.
const ENERGY_REL_TOL: f64 = 1e-5;

/// Free motion simulated, s: long enough for the arms to swing through
/// the workspace, short enough to stay clear of the singular poses that
/// end an unforced swing.
const HORIZON_S: f64 = 0.3;

#[test]
fn unforced_frictionless_plant_conserves_energy_in_a_free_swing() {
    let (file, p) = demo();
    let robot: Robot<f64> = file.robot().unwrap();
    let full = FullDynamics::new(&file.geometry_f64(), Bodies::from_params(&p, false));
    // Released from an off-centre pose with a push: the arms swing under
    // gravity, through the workspace and back.
    let q0 = robot.inverse([80.0, -40.0, -720.0]).unwrap().joints;
    let w0 = [1.5, -1.0, 0.5];
    let y0 = Vector6::new(q0[0], q0[1], q0[2], w0[0], w0[1], w0[2]);
    let mut stepper = Dop853::new(Free(full), 0.0, HORIZON_S, 0.01, y0, 1e-9, 1e-9);
    stepper.integrate().expect("integration runs");
    let e0 = full.energy(q0, w0).unwrap();
    let mut drift: f64 = 0.0;
    let mut kinetic: f64 = 0.0;
    let mut travelled: f64 = 0.0;
    for y in stepper.y_out() {
        let (q, w) = ([y[0], y[1], y[2]], [y[3], y[4], y[5]]);
        let e = full.energy(q, w).expect("free motion stays assembled");
        drift = drift.max((e - e0).abs());
        let pot = full.energy(q, [0.0; 3]).unwrap();
        kinetic = kinetic.max(e - pot);
        travelled = travelled.max((0..3).map(|i| (q[i] - q0[i]).abs()).fold(0.0, f64::max));
    }
    assert_eq!(stepper.x_out().last().copied(), Some(HORIZON_S));
    assert!(travelled > 0.3, "the arms barely moved: {travelled} rad");
    assert!(kinetic > 1000.0, "too little motion to test: {kinetic} N*mm");
    assert!(drift <= ENERGY_REL_TOL * kinetic, "energy drift {drift} N*mm of peak kinetic {kinetic}");
    eprintln!("free motion: peak kinetic {kinetic:.1} N*mm, drift {drift:.3e} N*mm, joints moved {travelled:.2} rad");
}
