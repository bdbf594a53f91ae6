//! The independent full-dynamics reference: a rotary delta as a constrained
//! multibody system, with the lower arms' rods as slender bodies with their
//! full inertia. Oracle for the core's simplified torques, and the plant of
//! `deltakin simulate`.
//!
//! # Bodies (units kg, mm, s; energies in kg*mm^2/s^2 = 1e-3 N*mm)
//! * **Upper arm i**: a rigid body turning about its actuator axis, with
//!   inertia `I_u,i` about that axis and static moment `m_u,i r_c,i` (mass
//!   times axis-to-centre-of-mass distance).
//! * **Lower arm i**: the parallelogram's two parallel rods, each a slender
//!   body of half the arm's mass between its elbow-side and platform-side
//!   joints, placed [`ROD_HALF_SPACING_MM`] either side of the centre line
//!   along the elbow axis. A slender rod's points are
//!   `x(u) = E + u (P - E)`, `u` in `[0, 1]`; with the rod's line density
//!   `rho(u)` and its moments `m = int rho`, `m c = int rho u`,
//!   `m k2 = int rho u^2` its kinetic and potential energy are exactly
//!
//!   ```text
//!     T = 1/2 m [ |vE|^2 + 2 c vE.(vP - vE) + k2 |vP - vE|^2 ]
//!     V = m g [ zE + c (zP - zE) ]
//!   ```
//!
//!   (the spin about the rod's own axis is neglected: slender). A uniform
//!   rod has `c = 1/2`, `k2 = 1/3` (inertia about its centre `m L^2/12`,
//!   the textbook slender-rod value, e.g. J. L. Meriam and L. G. Kraige,
//!   "Engineering Mechanics: Dynamics", table of mass moments of inertia;
//!   from memory). The full model uses uniform rods ([`RodMass::uniform`]).
//!   Because the elbow axis keeps its direction and the platform only
//!   translates, both rods of a pair have the velocity field of the centre
//!   line; the pair is evaluated rod by rod all the same.
//! * **Platform + payload**: one rigid body that translates only.
//! * **Gravity** `g = 9.80665 m/s^2` (standard gravity) along `-z`.
//!
//! # Equations of motion: Lagrange multipliers
//! Coordinates `x = (theta_0, theta_1, theta_2, p_x, p_y, p_z)` (joint
//! readings rad, platform centre mm), loop closure
//! `Phi_i(x) = |E_i(theta_i) - P_i(p)|^2 - L_i^2 = 0` with `E_i`, `P_i` the
//! conventions' elbow and platform joint (the centre line of the pair).
//! Lagrange's equations of the first kind (e.g. H. Goldstein, "Classical
//! Mechanics", section 2.4; A. A. Shabana, "Computational Dynamics",
//! chapter on constrained dynamics; from memory):
//!
//! ```text
//!   M(x) x'' + c(x, x') + grad V(x) = Q + A(x)^T lambda,     A = dPhi/dx
//!   A(x) x'' = -(dA/dt) x'                                   (closure at acceleration level)
//! ```
//!
//! with `Q = (tau_0, tau_1, tau_2, 0, 0, 0)` the motor torques. Everything
//! about the bodies is evaluated **numerically from the energy functions
//! above**, sharing no algebra with the core:
//! * `M(x)` by polarisation of the kinetic energy (exact for a quadratic
//!   form): `M_jj = 2 T(e_j)`, `M_jk = T(e_j + e_k) - T(e_j) - T(e_k)`;
//! * `c = (dM/dt) x' - dT/dx` and `grad V` by central differences of `M`
//!   and of `T`, `V` (steps [`DIFF_STEP_RAD`], [`DIFF_STEP_MM`]; truncation
//!   `O(h^2)`, about 1e-10 relative, rounding about 1e-11);
//! * `A` and `(dA/dt) x'` are the closure's first and second derivatives,
//!   written out (`2 d.dE`, `-2 d`; `2 |d'|^2 + 2 d.(d2E theta'^2)` with
//!   `d = E - P`), because differencing twice would cost six digits.
//!
//! The state is held in joint coordinates: the platform follows from the
//! joints by the reference forward kinematics ([`super::forward`]) and
//! `A_p p' = -A_theta theta'`, so integration cannot drift off the closure
//! (elimination by coordinate partitioning; Shabana, ibid.).
//!
//! * **Inverse dynamics** (joint trajectory in, torques out): `x''` from the
//!   closure, then the platform rows give `lambda = A_p^-T (M x'' + c +
//!   grad V)_p` and the joint rows `tau`.
//! * **Forward dynamics** (torques in, joint accelerations out): the 9x9
//!   system `[M -A^T; A 0] (x'', lambda) = (Q - c - grad V, -(dA/dt) x')`
//!   solved by LU with partial pivoting (nalgebra).
//!
//! No friction here: the simulation adds the drives' friction itself.
//!
//! # Accuracy and range
//! Torques to about 1e-9 of their peak (the difference steps), for poses
//! where the reference forward kinematics converges and the platform
//! Jacobian `A_p` is invertible (away from parallel singularities); `None`
//! otherwise. Cost: some 200 energy evaluations and one forward kinematics
//! per call. A test oracle and simulation plant, not a solver.

use deltakin::DynamicsParams;
use nalgebra::{Matrix3, SMatrix, SVector, Vector3};

use super::{ArmModel, Machine, PerArmMachine, forward};

/// Standard gravity, mm/s^2 (9.80665 m/s^2, the conventional value).
pub const GRAVITY_MM_S2: f64 = 9806.65;

/// Half the distance between a pair's two rods, along the elbow axis (mm).
/// Any value gives the same energies (the pair's rods move alike); it makes
/// the two rods literal.
pub const ROD_HALF_SPACING_MM: f64 = 30.0;

/// Central-difference step in the joint coordinates (rad).
pub const DIFF_STEP_RAD: f64 = 1e-5;

/// Central-difference step in the platform coordinates (mm).
pub const DIFF_STEP_MM: f64 = 1e-3;

/// Energy unit kg*mm^2/s^2 in N*mm.
const KG_MM2_S2_TO_NMM: f64 = 1e-3;

/// The mass distribution of one lower arm (both rods together) along its
/// length: mass `mass` (kg), first moment `first` and second moment
/// `second` of the line density about the elbow end, per unit mass and in
/// rod lengths (`c` and `k2` of the module header).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RodMass {
    /// Mass of the pair, kg.
    pub mass: f64,
    /// Centre of mass, in rod lengths from the elbow (0 to 1).
    pub first: f64,
    /// Second moment about the elbow end, per unit mass, in rod lengths
    /// squared (`first^2 <= second <= first`).
    pub second: f64,
}

impl RodMass {
    /// Uniform slender rods: centre of mass at mid-length, inertia about it
    /// `m L^2 / 12`.
    #[must_use]
    pub fn uniform(mass: f64) -> Self {
        Self { mass, first: 0.5, second: 1.0 / 3.0 }
    }

    /// All the mass at the two end joints: `elbow_share` of it at the
    /// elbow, the rest at the platform. This is exactly the core's
    /// simplified lumping (two point masses that follow the elbow and the
    /// platform), written as a rod.
    #[must_use]
    pub fn end_masses(mass: f64, elbow_share: f64) -> Self {
        Self { mass, first: 1.0 - elbow_share, second: 1.0 - elbow_share }
    }

    /// Inertia about the centre of mass, perpendicular to the rod, for a
    /// rod of `length` mm: kg*mm^2.
    #[must_use]
    pub fn inertia_about_centre(&self, length: f64) -> f64 {
        self.mass * (self.second - self.first * self.first) * length * length
    }
}

/// The bodies of the machine (see the module header).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bodies {
    /// Each upper arm's inertia about its actuator axis, kg*mm^2.
    pub upper_inertia: [f64; 3],
    /// Each upper arm's static moment `m_u r_c`, kg*mm.
    pub upper_moment: [f64; 3],
    /// Each lower arm pair.
    pub rods: [RodMass; 3],
    /// Platform and payload, kg.
    pub platform_mass: f64,
}

impl Bodies {
    /// The bodies described by the core's parameter set, with uniform rods
    /// (the physical model) or with the rods' mass at their ends (the
    /// core's lumping). Friction parameters are not used.
    #[must_use]
    pub fn from_params(p: &DynamicsParams, end_masses: bool) -> Self {
        let rods = [0, 1, 2].map(|i| {
            if end_masses {
                RodMass::end_masses(p.lower_arm_mass[i], p.lower_arm_elbow_share[i])
            } else {
                RodMass::uniform(p.lower_arm_mass[i])
            }
        });
        Self {
            upper_inertia: p.upper_arm_inertia,
            upper_moment: [0, 1, 2].map(|i| p.upper_arm_mass[i] * p.upper_arm_com[i]),
            rods,
            platform_mass: p.platform_mass + p.payload,
        }
    }
}

/// Joint and platform motion at one instant, with the closure satisfied.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlatformMotion {
    /// Platform centre, mm.
    pub position: [f64; 3],
    /// Platform velocity, mm/s.
    pub velocity: [f64; 3],
    /// Platform acceleration, mm/s^2 (zero when not asked for).
    pub acceleration: [f64; 3],
}

/// The full-dynamics model of one machine.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FullDynamics {
    machine: PerArmMachine,
    bodies: Bodies,
}

type Vec6 = SVector<f64, 6>;
type Mat6 = SMatrix<f64, 6, 6>;
type Mat36 = SMatrix<f64, 3, 6>;

impl FullDynamics {
    /// The model of `machine` with `bodies`.
    #[must_use]
    pub fn new<M: Machine + ?Sized>(machine: &M, bodies: Bodies) -> Self {
        Self { machine: PerArmMachine { arms: [0, 1, 2].map(|i| machine.arm(i)) }, bodies }
    }

    /// The bodies.
    #[must_use]
    pub fn bodies(&self) -> &Bodies {
        &self.bodies
    }

    /// Elbow position and its first and second derivative with respect to
    /// the joint reading, mm and mm/rad (conventions, literally).
    fn elbow(arm: &ArmModel, theta: f64) -> [[f64; 3]; 3] {
        let t = theta + arm.joint_offset;
        let (s, c) = t.sin_cos();
        let a = arm.upper_arm;
        let local =
            [[arm.base_radius + a * c, 0.0, arm.axis_height - a * s], [-a * s, 0.0, -a * c], [-a * c, 0.0, a * s]];
        local.map(|v| rotate_z(arm.azimuth, v))
    }

    /// Unit vector along arm `arm`'s elbow axis.
    fn elbow_axis(arm: &ArmModel) -> [f64; 3] {
        rotate_z(arm.azimuth, [0.0, 1.0, 0.0])
    }

    fn platform_joint(arm: &ArmModel, p: [f64; 3]) -> [f64; 3] {
        let r = rotate_z(arm.azimuth, [arm.platform_radius, 0.0, 0.0]);
        [p[0] + r[0], p[1] + r[1], p[2] + r[2]]
    }

    /// Kinetic energy (kg*mm^2/s^2) at coordinates `x`, rates `v`.
    #[must_use]
    pub fn kinetic(&self, x: &Vec6, v: &Vec6) -> f64 {
        let vp = [v[3], v[4], v[5]];
        let mut t = 0.5 * self.bodies.platform_mass * dot(vp, vp);
        for (i, arm) in self.machine.arms.iter().enumerate() {
            let w = v[i];
            t += 0.5 * self.bodies.upper_inertia[i] * w * w;
            let d1 = Self::elbow(arm, x[i])[1];
            let rod = self.bodies.rods[i];
            for _side in [-1.0, 1.0] {
                // Each rod's ends move with the elbow and the platform (the
                // offset along the elbow axis is constant in time).
                let ve = d1.map(|c| c * w);
                let rel = [vp[0] - ve[0], vp[1] - ve[1], vp[2] - ve[2]];
                t += 0.25 * rod.mass * (dot(ve, ve) + 2.0 * rod.first * dot(ve, rel) + rod.second * dot(rel, rel));
            }
        }
        t
    }

    /// Potential energy (kg*mm^2/s^2, up to a constant) at `x`.
    #[must_use]
    pub fn potential(&self, x: &Vec6) -> f64 {
        let g = GRAVITY_MM_S2;
        let p = [x[3], x[4], x[5]];
        let mut v = self.bodies.platform_mass * g * p[2];
        for (i, arm) in self.machine.arms.iter().enumerate() {
            let t = x[i] + arm.joint_offset;
            v -= self.bodies.upper_moment[i] * g * t.sin();
            let e = Self::elbow(arm, x[i])[0];
            let pj = Self::platform_joint(arm, p);
            let axis = Self::elbow_axis(arm);
            let rod = self.bodies.rods[i];
            for side in [-1.0, 1.0] {
                let off = axis.map(|c| c * side * ROD_HALF_SPACING_MM);
                let (ze, zp) = (e[2] + off[2], pj[2] + off[2]);
                v += 0.5 * rod.mass * g * (ze + rod.first * (zp - ze));
            }
        }
        v
    }

    /// Mass matrix by polarisation of the kinetic energy.
    fn mass_matrix(&self, x: &Vec6) -> Mat6 {
        let unit = |j: usize| Vec6::from_fn(|r, _| if r == j { 1.0 } else { 0.0 });
        let diag: [f64; 6] = std::array::from_fn(|j| self.kinetic(x, &unit(j)));
        Mat6::from_fn(
            |j, k| {
                if j == k { 2.0 * diag[j] } else { self.kinetic(x, &(unit(j) + unit(k))) - diag[j] - diag[k] }
            },
        )
    }

    /// Central-difference step for coordinate `j`.
    fn step(j: usize) -> f64 {
        if j < 3 { DIFF_STEP_RAD } else { DIFF_STEP_MM }
    }

    /// `c = (dM/dt) x' - dT/dx`, by central differences.
    fn velocity_terms(&self, x: &Vec6, v: &Vec6) -> Vec6 {
        // Direction of motion in the joint coordinates (M depends on them
        // only through the kinetic energy's positions).
        let scale = (0..6).map(|j| v[j].abs() / Self::step(j)).fold(0.0, f64::max);
        let mut c = Vec6::zeros();
        if scale > 0.0 {
            let h = 1.0 / scale;
            let dm = (self.mass_matrix(&(x + v * h)) - self.mass_matrix(&(x - v * h))) / (2.0 * h);
            c += dm * v;
        }
        for j in 0..6 {
            let h = Self::step(j);
            let (mut xp, mut xm) = (*x, *x);
            xp[j] += h;
            xm[j] -= h;
            c[j] -= (self.kinetic(&xp, v) - self.kinetic(&xm, v)) / (2.0 * h);
        }
        c
    }

    /// `grad V`, by central differences.
    fn gravity_terms(&self, x: &Vec6) -> Vec6 {
        Vec6::from_fn(|j, _| {
            let h = Self::step(j);
            let (mut xp, mut xm) = (*x, *x);
            xp[j] += h;
            xm[j] -= h;
            (self.potential(&xp) - self.potential(&xm)) / (2.0 * h)
        })
    }

    /// Closure Jacobian `A = dPhi/dx` and the velocity term `(dA/dt) x'`.
    fn closure(&self, x: &Vec6, v: &Vec6) -> (Mat36, Vector3<f64>) {
        let mut a = Mat36::zeros();
        let mut q = Vector3::zeros();
        let p = [x[3], x[4], x[5]];
        let vp = [v[3], v[4], v[5]];
        for (i, arm) in self.machine.arms.iter().enumerate() {
            let [e, d1, d2] = Self::elbow(arm, x[i]);
            let pj = Self::platform_joint(arm, p);
            let d = [e[0] - pj[0], e[1] - pj[1], e[2] - pj[2]];
            a[(i, i)] = 2.0 * dot(d, d1);
            for k in 0..3 {
                a[(i, 3 + k)] = -2.0 * d[k];
            }
            let w = v[i];
            let dd = [d1[0] * w - vp[0], d1[1] * w - vp[1], d1[2] * w - vp[2]];
            q[i] = 2.0 * dot(dd, dd) + 2.0 * dot(d, d2) * w * w;
        }
        (a, q)
    }

    /// Platform position, velocity and (when `accel` is given) acceleration
    /// for joint readings `theta` (rad), rates `rates` (rad/s) and
    /// accelerations `accel` (rad/s^2), from the closure. `None` where the
    /// loops do not close or the platform Jacobian is singular.
    #[must_use]
    pub fn platform_motion(&self, theta: [f64; 3], rates: [f64; 3], accel: Option<[f64; 3]>) -> Option<PlatformMotion> {
        let p = forward(&self.machine, theta)?;
        let x = coords(theta, p);
        let (a, _) = self.closure(&x, &Vec6::zeros());
        let ap: Matrix3<f64> = a.fixed_view::<3, 3>(0, 3).into_owned();
        let lu = ap.lu();
        let at = Vector3::from_fn(|i, _| a[(i, i)] * rates[i]);
        let vp = lu.solve(&(-at))?;
        let mut acc = [0.0; 3];
        if let Some(dd) = accel {
            let v = coords(rates, [vp[0], vp[1], vp[2]]);
            let (_, q) = self.closure(&x, &v);
            let rhs = -q - Vector3::from_fn(|i, _| a[(i, i)] * dd[i]);
            let pa = lu.solve(&rhs)?;
            acc = [pa[0], pa[1], pa[2]];
        }
        Some(PlatformMotion { position: p, velocity: [vp[0], vp[1], vp[2]], acceleration: acc })
    }

    /// Joint torques (N*mm) that give the joint motion `theta` (rad),
    /// `rates` (rad/s), `accel` (rad/s^2): inverse dynamics, no friction.
    /// `None` where [`Self::platform_motion`] fails.
    #[must_use]
    pub fn torques(&self, theta: [f64; 3], rates: [f64; 3], accel: [f64; 3]) -> Option<[f64; 3]> {
        let m = self.platform_motion(theta, rates, Some(accel))?;
        let x = coords(theta, m.position);
        let v = coords(rates, m.velocity);
        let xa = coords(accel, m.acceleration);
        let r = self.mass_matrix(&x) * xa + self.velocity_terms(&x, &v) + self.gravity_terms(&x);
        let (a, _) = self.closure(&x, &v);
        let ap: Matrix3<f64> = a.fixed_view::<3, 3>(0, 3).into_owned();
        let lambda = ap.transpose().lu().solve(&Vector3::new(r[3], r[4], r[5]))?;
        Some([0, 1, 2].map(|i| (r[i] - a[(i, i)] * lambda[i]) * KG_MM2_S2_TO_NMM))
    }

    /// Joint accelerations (rad/s^2) under motor torques `tau` (N*mm) at
    /// joint readings `theta` (rad) and rates `rates` (rad/s): forward
    /// dynamics, no friction. `None` where [`Self::platform_motion`] fails.
    #[must_use]
    pub fn accelerations(&self, theta: [f64; 3], rates: [f64; 3], tau: [f64; 3]) -> Option<[f64; 3]> {
        let m = self.platform_motion(theta, rates, None)?;
        let x = coords(theta, m.position);
        let v = coords(rates, m.velocity);
        let (a, q) = self.closure(&x, &v);
        let rhs6 = -self.velocity_terms(&x, &v) - self.gravity_terms(&x);
        let mass = self.mass_matrix(&x);
        let mut k = SMatrix::<f64, 9, 9>::zeros();
        let mut rhs = SVector::<f64, 9>::zeros();
        k.fixed_view_mut::<6, 6>(0, 0).copy_from(&mass);
        k.fixed_view_mut::<6, 3>(0, 6).copy_from(&(-a.transpose()));
        k.fixed_view_mut::<3, 6>(6, 0).copy_from(&a);
        for j in 0..6 {
            rhs[j] = rhs6[j] + if j < 3 { tau[j] / KG_MM2_S2_TO_NMM } else { 0.0 };
        }
        for i in 0..3 {
            rhs[6 + i] = -q[i];
        }
        let sol = k.lu().solve(&rhs)?;
        let out = [sol[0], sol[1], sol[2]];
        out.iter().all(|v| v.is_finite()).then_some(out)
    }

    /// Total energy (N*mm, potential up to a constant) of the joint state.
    #[must_use]
    pub fn energy(&self, theta: [f64; 3], rates: [f64; 3]) -> Option<f64> {
        let m = self.platform_motion(theta, rates, None)?;
        let x = coords(theta, m.position);
        let v = coords(rates, m.velocity);
        Some((self.kinetic(&x, &v) + self.potential(&x)) * KG_MM2_S2_TO_NMM)
    }

    /// Platform centre (mm) for joint readings `theta`: the reference
    /// forward kinematics.
    #[must_use]
    pub fn platform(&self, theta: [f64; 3]) -> Option<[f64; 3]> {
        forward(&self.machine, theta)
    }
}

fn coords(theta: [f64; 3], p: [f64; 3]) -> Vec6 {
    Vec6::new(theta[0], theta[1], theta[2], p[0], p[1], p[2])
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn rotate_z(angle: f64, v: [f64; 3]) -> [f64; 3] {
    let (s, c) = angle.sin_cos();
    [c * v[0] - s * v[1], s * v[0] + c * v[1], v[2]]
}
