//! A plain textbook closed form of the rotary delta in `f64`, with no
//! guards, no margins, no Jacobian and no per-arm corrections: the
//! baseline the host cost of deltakin's guarded `f32` calls is compared
//! with (`benches/kinematics.rs`, group `versus_textbook`, and
//! `ci/host-cost.sh`). Not a solver for firmware: it returns `None` where
//! deltakin names an error, and knows no limits.
//!
//! Frames and signs are deltakin's conventions (`docs/conventions.md`):
//! arm `i` at azimuth `120 deg * i`, joint angle 0 with the upper arm
//! horizontal and outward, positive downwards, elbow-out branch for the
//! inverse and the lower of the two points for the forward problem.
//!
//! * Inverse, per arm: in the arm's plane the closure reduces to
//!   `A cos t + B sin t = C`, solved by the tangent half-angle
//!   substitution `u = tan(t / 2)` (a quadratic in `u`, e.g. J. J. Craig,
//!   "Introduction to Robotics", 3rd ed., 2005, section 4.7); the
//!   elbow-out root is the one of smaller `|u|` (larger `cos t`).
//! * Forward: the three spheres of radius `lower_arm` around the elbows
//!   shifted inwards by the platform radius; subtracting sphere 0 from
//!   spheres 1 and 2 gives two planes, `x` and `y` follow linearly in `z`
//!   by Cramer's rule, and sphere 0 gives a quadratic in `z` (the usual
//!   elimination, e.g. R. L. Williams II, "The Delta Parallel Robot:
//!   Kinematics Solutions", Ohio University, 2016). It divides by a
//!   determinant that vanishes for some arm layouts; the nominal machine's
//!   does not.
//!
//! Used as `#[path = "shared/textbook.rs"] mod textbook;`.

/// A nominal machine in millimetres, with each arm's azimuth's sine and
/// cosine precomputed (as any implementation would).
#[derive(Clone, Copy, Debug)]
pub struct Textbook {
    /// Base radius minus platform radius (mm).
    pub radial: f64,
    /// Upper arm (mm).
    pub upper: f64,
    /// Lower arm (mm).
    pub lower: f64,
    /// `(cos, sin)` of each arm's azimuth.
    pub azimuth: [(f64, f64); 3],
}

impl Textbook {
    /// The machine with these dimensions (mm).
    #[must_use]
    pub fn new(base_radius: f64, platform_radius: f64, upper_arm: f64, lower_arm: f64) -> Self {
        let az = |i: f64| {
            let phi = (120.0 * i).to_radians();
            (phi.cos(), phi.sin())
        };
        Self {
            radial: base_radius - platform_radius,
            upper: upper_arm,
            lower: lower_arm,
            azimuth: [az(0.0), az(1.0), az(2.0)],
        }
    }

    /// Joint angles (rad) for platform position `p` (mm), elbow-out;
    /// `None` when an arm cannot reach.
    #[must_use]
    pub fn inverse(&self, p: [f64; 3]) -> Option<[f64; 3]> {
        Some([self.arm(0, p)?, self.arm(1, p)?, self.arm(2, p)?])
    }

    fn arm(&self, i: usize, p: [f64; 3]) -> Option<f64> {
        let (c, s) = self.azimuth[i];
        let (a, l) = (self.upper, self.lower);
        // The platform joint seen from the actuator axis, in the arm's plane.
        let x = c * p[0] + s * p[1] - self.radial;
        let y = c * p[1] - s * p[0];
        let z = p[2];
        // (a cos t - x)^2 + y^2 + (a sin t + z)^2 = l^2
        let ca = -2.0 * a * x;
        let cb = 2.0 * a * z;
        let cc = l * l - a * a - x * x - y * y - z * z;
        let disc = ca * ca + cb * cb - cc * cc;
        if disc < 0.0 {
            return None;
        }
        let root = disc.sqrt();
        let den = cc + ca;
        let (u1, u2) = ((cb + root) / den, (cb - root) / den);
        let u = if u1.abs() < u2.abs() { u1 } else { u2 };
        Some(2.0 * u.atan())
    }

    /// Platform position (mm) for joint angles `t` (rad), the lower of the
    /// two points; `None` when the spheres do not meet.
    #[must_use]
    pub fn forward(&self, t: [f64; 3]) -> Option<[f64; 3]> {
        let centre = |i: usize| {
            let (c, s) = self.azimuth[i];
            let r = self.radial + self.upper * t[i].cos();
            [c * r, s * r, -self.upper * t[i].sin()]
        };
        let (c0, c1, c2) = (centre(0), centre(1), centre(2));
        let sq = |v: [f64; 3]| v[0] * v[0] + v[1] * v[1] + v[2] * v[2];
        // 2 (C_i - C_0) . p = |C_i|^2 - |C_0|^2, i = 1, 2.
        let (w0, w1, w2) = (sq(c0), sq(c1), sq(c2));
        let (a11, a12, a13, b1) = (c1[0] - c0[0], c1[1] - c0[1], c1[2] - c0[2], 0.5 * (w1 - w0));
        let (a21, a22, a23, b2) = (c2[0] - c0[0], c2[1] - c0[1], c2[2] - c0[2], 0.5 * (w2 - w0));
        let det = a11 * a22 - a12 * a21;
        // x = e1 + f1 z, y = e2 + f2 z.
        let e1 = (b1 * a22 - b2 * a12) / det;
        let f1 = (a23 * a12 - a13 * a22) / det;
        let e2 = (a11 * b2 - a21 * b1) / det;
        let f2 = (a21 * a13 - a11 * a23) / det;
        // |p - C_0|^2 = l^2 as a quadratic in z.
        let (g1, g2) = (e1 - c0[0], e2 - c0[1]);
        let qa = f1 * f1 + f2 * f2 + 1.0;
        let qb = 2.0 * (f1 * g1 + f2 * g2 - c0[2]);
        let qc = g1 * g1 + g2 * g2 + c0[2] * c0[2] - self.lower * self.lower;
        let disc = qb * qb - 4.0 * qa * qc;
        if disc < 0.0 {
            return None;
        }
        let z = (-qb - disc.sqrt()) / (2.0 * qa);
        Some([e1 + f1 * z, e2 + f2 * z, z])
    }
}
