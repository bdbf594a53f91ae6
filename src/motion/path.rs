//! Paths: where the platform (or the joints) are after a distance `s`
//! along the move, and which way they are heading.
//!
//! * Straight line in Cartesian space.
//! * Pick-and-place cycle: rise vertically, traverse horizontally at
//!   `lift` above the higher of the two end points, descend vertically;
//!   both corners are rounded by quarter circles of radius `r` in the
//!   vertical plane of the traverse. The path is parameterised by arc
//!   length and its tangent is continuous, so the path speed given by the
//!   time law is the platform speed and the velocity never jumps (the
//!   centripetal acceleration `v^2 / r` appears where an arc begins and
//!   ends; the validation checks what it does to the joints).
//! * Corner: two straight lines joined by a tangent circular arc, for two
//!   consecutive line moves the stream joins into one (see
//!   [`super::Stream`]). Parameterised by arc length like the pick cycle;
//!   a collinear pair has no arc.
//! * Hold: stay at one point (a dwell).
//! * Joint-space straight line: all joints move together from start to
//!   target angles, the one with the largest travel following the time law
//!   (distance in radians).
//!
//! A path is evaluated from the fraction `sigma in [0, 1]` of its length
//! that the time law has covered, and the path speed: both of order one
//! or in API units, so that the same code runs in fixed point. Cartesian
//! points, lengths and velocities are [`Arith::Wide`] (mm, mm/s); unit
//! vectors, arc angles and joint angles are the scalar itself. Every path
//! is evaluated from its end point backwards (`to - d (L - s)`), so
//! `sigma = 1` gives the target exactly, and `sigma = 0` gives the start
//! exactly, with no rounding left over; a stream of repeated closed
//! cycles therefore cannot drift. Evaluation is closed form: at most one
//! `sin_cos` (on an arc), no loop.

use crate::scalar::{Arith, Real};

/// A path: Cartesian (mm) or joint space (rad).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Path<S: Arith> {
    /// `p(s) = to - dir (L - s)`, `dir` the unit direction.
    Line { to: [S::Wide; 3], dir: [S; 3], length: S::Wide },
    /// See [`Pick`].
    Pick(Pick<S>),
    /// See [`Corner`].
    Corner(Corner<S>),
    /// Stay at `at`.
    Hold { at: [S::Wide; 3] },
    /// Joint angles `to - dir (L - s)`, `dir` the joint travel divided by
    /// the largest joint travel `L` (rad).
    Joint { to: [S; 3], dir: [S; 3], length: S },
}

/// A pick-and-place cycle with blended corners. Break points along the arc
/// length (mm): rise ends at `b1`, first arc at `b2`, traverse at `b3`,
/// second arc at `b4`, descent at `length`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Pick<S: Arith> {
    pub(crate) from: [S::Wide; 3],
    pub(crate) to: [S::Wide; 3],
    /// Horizontal unit vector from `from` towards `to`.
    pub(crate) u: [S; 2],
    /// Height of the traverse (mm).
    pub(crate) z_top: S::Wide,
    pub(crate) r: S::Wide,
    /// `1 / r`, for the arc angle `(s - b) / r` without a division.
    pub(crate) inv_r: S::Recip,
    pub(crate) b: [S::Wide; 4],
    pub(crate) length: S::Wide,
}

/// Two lines joined by a tangent arc. The first line runs from `from`
/// along `d1` up to arc length `b1`; the arc of radius `r` about `centre`
/// turns the tangent from `d1` to `d2` in the plane of the two (with `n`
/// the unit normal towards the turn, the point at angle `phi` is
/// `centre + r (sin phi d1 - cos phi n)`) until `b2`; the second line
/// runs along `d2` and ends at `to` at `length`. A collinear pair has
/// `b1 = b2` and no arc.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Corner<S: Arith> {
    pub(crate) from: [S::Wide; 3],
    pub(crate) to: [S::Wide; 3],
    pub(crate) d1: [S; 3],
    pub(crate) d2: [S; 3],
    pub(crate) n: [S; 3],
    pub(crate) centre: [S::Wide; 3],
    pub(crate) r: S::Wide,
    /// `1 / r`, for the arc angle `(s - b1) / r` without a division.
    pub(crate) inv_r: S::Recip,
    pub(crate) b1: S::Wide,
    pub(crate) b2: S::Wide,
    pub(crate) length: S::Wide,
}

impl<S: Real> Corner<S> {
    /// The point at arc length `s` (mm) and the unit tangent there.
    fn at(&self, s: S::Wide) -> ([S::Wide; 3], [S; 3]) {
        if s < self.b1 {
            let f = self.from;
            let d = self.d1;
            return ([f[0] + d[0].mul_wide(s), f[1] + d[1].mul_wide(s), f[2] + d[2].mul_wide(s)], d);
        }
        if s < self.b2 {
            let (sin, cos) = S::mul_recip(s - self.b1, self.inv_r).sin_cos();
            let ([c0, c1, c2], [d0, d1, d2], [n0, n1, n2]) = (self.centre, self.d1, self.n);
            let r = self.r;
            let point = [
                c0 + (sin * d0 - cos * n0).mul_wide(r),
                c1 + (sin * d1 - cos * n1).mul_wide(r),
                c2 + (sin * d2 - cos * n2).mul_wide(r),
            ];
            return (point, [sin * n0 + cos * d0, sin * n1 + cos * d1, sin * n2 + cos * d2]);
        }
        let back = self.length - s;
        let (t, d) = (self.to, self.d2);
        ([t[0] - d[0].mul_wide(back), t[1] - d[1].mul_wide(back), t[2] - d[2].mul_wide(back)], d)
    }
}

/// Where a path puts the robot at one instant.
pub(crate) enum Target<S: Arith> {
    /// Platform position (mm) and velocity (mm/s).
    Cartesian { point: [S::Wide; 3], velocity: [S::Wide; 3] },
    /// Joint angles (rad) and rates (rad/s).
    Joints { angles: [S; 3], rates: [S::Wide; 3] },
}

/// `t * v` for a unit vector `t`, as a velocity.
fn scale3<S: Arith>(t: [S; 3], v: S::Wide) -> [S::Wide; 3] {
    [t[0].mul_wide(v), t[1].mul_wide(v), t[2].mul_wide(v)]
}

impl<S: Real> Pick<S> {
    /// The point at arc length `s` (mm) and the unit tangent there.
    fn at(&self, s: S::Wide) -> ([S::Wide; 3], [S; 3]) {
        let [ux, uy] = self.u;
        let [b1, b2, b3, b4] = self.b;
        let (z, o) = (S::ZERO, S::ONE);
        if s < b1 {
            let [x, y, z0] = self.from;
            return ([x, y, z0 + s], [z, z, o]);
        }
        if s < b2 {
            // Centre (from_xy + r u, z_top - r); angle 0 at the rise, pi/2
            // on the traverse.
            let (sin, cos) = S::mul_recip(s - b1, self.inv_r).sin_cos();
            let [x, y, _] = self.from;
            let (h, v) = ((S::ONE - cos).mul_wide(self.r), self.z_top - self.r + sin.mul_wide(self.r));
            return ([x + ux.mul_wide(h), y + uy.mul_wide(h), v], [sin * ux, sin * uy, cos]);
        }
        if s < b3 {
            // Measured back from the end of the traverse.
            let back = b3 - s;
            let [x, y, _] = self.to;
            let h = self.r + back;
            return ([x - ux.mul_wide(h), y - uy.mul_wide(h), self.z_top], [ux, uy, z]);
        }
        if s < b4 {
            // Centre (to_xy - r u, z_top - r); angle 0 on the traverse,
            // pi/2 at the descent.
            let (sin, cos) = S::mul_recip(s - b3, self.inv_r).sin_cos();
            let [x, y, _] = self.to;
            let (h, v) = ((S::ONE - sin).mul_wide(self.r), self.z_top - self.r + cos.mul_wide(self.r));
            return ([x - ux.mul_wide(h), y - uy.mul_wide(h), v], [cos * ux, cos * uy, -sin]);
        }
        let [x, y, z1] = self.to;
        ([x, y, z1 + (self.length - s)], [z, z, -o])
    }
}

impl<S: Real> Path<S> {
    /// Where the path is after the fraction `sigma` of its length, moving
    /// at path speed `speed` (mm/s, or rad/s for a joint path).
    pub(crate) fn at(&self, sigma: S, speed: S::Wide) -> Target<S> {
        match self {
            Path::Line { to, dir, length } => {
                let back = (S::ONE - sigma).mul_wide(*length);
                let [d0, d1, d2] = *dir;
                Target::Cartesian {
                    point: [to[0] - d0.mul_wide(back), to[1] - d1.mul_wide(back), to[2] - d2.mul_wide(back)],
                    velocity: scale3(*dir, speed),
                }
            }
            Path::Joint { to, dir, length } => {
                let back = (S::ONE - sigma) * *length;
                Target::Joints {
                    angles: [to[0] - dir[0] * back, to[1] - dir[1] * back, to[2] - dir[2] * back],
                    rates: scale3(*dir, speed),
                }
            }
            Path::Pick(p) => {
                let (point, tangent) = p.at(sigma.mul_wide(p.length));
                Target::Cartesian { point, velocity: scale3(tangent, speed) }
            }
            Path::Corner(c) => {
                let (point, tangent) = c.at(sigma.mul_wide(c.length));
                Target::Cartesian { point, velocity: scale3(tangent, speed) }
            }
            Path::Hold { at } => Target::Cartesian { point: *at, velocity: [S::Wide::ZERO; 3] },
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::motion::law::{Bounds, Law};
    use crate::motion::moves::{Move, shape, shape_corner};

    /// Position and tangent gaps allowed across a break point (mm, unit).
    const JOIN_MM: f64 = 1e-9;
    const JOIN_TANGENT: f64 = 1e-9;
    /// Step either side of a break point (mm of arc length).
    const EPS_S: f64 = 1e-10;

    #[test]
    fn pick_cycle_is_continuous_with_a_unit_tangent_and_hits_its_ends() {
        let from: [f64; 3] = [-152.5, 60.0, -760.0];
        let to = [152.5, 20.0, -740.0];
        let bounds = Bounds { speed: 1.0, accel: 1.0, jerk: 1.0 };
        let mv = Move::Pick { to, lift: 25.0, blend_radius: 10.0, law: Law::SCurve, bounds };
        let Path::Pick(p) = shape::<f64, f64>(&mv, from, [0.0; 3]).unwrap().path else {
            unreachable!("a pick move shapes a pick path")
        };
        assert_eq!(p.at(0.0).0, from);
        assert_eq!(p.at(p.length).0, to);
        // Top of the traverse: 25 mm above the higher end.
        assert!((p.at(0.5 * (p.b[1] + p.b[2])).0[2] - (-715.0)).abs() < JOIN_MM);
        for b in p.b {
            let (l, r) = (p.at(b - EPS_S), p.at(b + EPS_S));
            for i in 0..3 {
                assert!((l.0[i] - r.0[i]).abs() < JOIN_MM, "point at {b}");
                assert!((l.1[i] - r.1[i]).abs() < JOIN_TANGENT, "tangent at {b}");
            }
        }
        for i in 0..=1000 {
            let t = p.at(p.length * f64::from(i) / 1000.0).1;
            let n = (t[0] * t[0] + t[1] * t[1] + t[2] * t[2]).sqrt();
            assert!((n - 1.0).abs() < JOIN_TANGENT);
        }
    }

    #[test]
    fn a_blend_that_does_not_fit_is_refused() {
        let bounds = Bounds { speed: 1.0, accel: 1.0, jerk: 1.0 };
        let from: [f64; 3] = [0.0, 0.0, -700.0];
        for (to, lift, r) in
            [([10.0, 0.0, -700.0], 25.0, 10.0), ([300.0, 0.0, -700.0], 5.0, 10.0), ([0.0; 3], 5.0, 1.0)]
        {
            let mv = Move::Pick { to, lift, blend_radius: r, law: Law::Trapezoid, bounds };
            assert!(shape::<f64, f64>(&mv, from, [0.0; 3]).is_err());
        }
    }

    /// Relative error allowed on the corner's closed-form figures (f64).
    const CORNER_REL: f64 = 1e-9;

    #[test]
    fn corner_arc_is_tangent_continuous_within_tolerance_and_caps_the_speed() {
        // A 20 degree turn: r = tol cos 10deg / (1 - cos 10deg) = 64.83 mm
        // for tol = 1 mm, so the speed bound drops to sqrt(a r) = 805 mm/s.
        let (tol, a) = (1.0_f64, 10_000.0);
        let bounds = Bounds { speed: 1000.0, accel: a, jerk: 1.0e6 };
        let from = [0.0, 0.0, -700.0];
        let mid = [100.0, 0.0, -700.0];
        let turn = 20.0_f64.to_radians();
        let to = [mid[0] + 100.0 * turn.cos(), 100.0 * turn.sin(), -700.0];
        let first = Move::Line { to: mid, law: Law::SCurve, bounds };
        let second = Move::Line { to, law: Law::SCurve, bounds };
        let shaped = shape_corner::<f64, f64>(&first, &second, from, tol).unwrap().expect("joined");
        let Path::Corner(c) = shaped.path else { unreachable!("a joined pair is a corner path") };
        let half = (turn / 2.0).cos();
        let r = tol * half / (1.0 - half);
        assert!((c.r / r - 1.0).abs() < CORNER_REL, "radius {}", c.r);
        assert_eq!(c.at(0.0).0, from);
        assert_eq!(c.at(c.length).0, to);
        for b in [c.b1, c.b2] {
            let (l, rr) = (c.at(b - EPS_S), c.at(b + EPS_S));
            for i in 0..3 {
                assert!((l.0[i] - rr.0[i]).abs() < JOIN_MM, "point at {b}");
                assert!((l.1[i] - rr.1[i]).abs() < JOIN_TANGENT, "tangent at {b}");
            }
        }
        // The arc's midpoint is the closest point to the corner: tol away.
        let m = c.at(0.5 * (c.b1 + c.b2)).0;
        let gap = ((m[0] - mid[0]).powi(2) + (m[1] - mid[1]).powi(2) + (m[2] - mid[2]).powi(2)).sqrt();
        assert!((gap - tol).abs() < CORNER_REL * tol, "gap {gap}");
        // Speed capped for the centripetal acceleration: v^2 / r = a.
        let peak = shaped.profile.sample(0.5 * shaped.profile.duration()).vel;
        assert!((peak / (a * r).sqrt() - 1.0).abs() < CORNER_REL, "peak speed {peak}");
        // The same corner with long legs would be slower joined: a stop.
        let corner = [300.0, 0.0, -700.0];
        let far = [corner[0] + 300.0 * turn.cos(), 300.0 * turn.sin(), -700.0];
        let long_first = Move::Line { to: corner, law: Law::SCurve, bounds };
        let long_second = Move::Line { to: far, law: Law::SCurve, bounds };
        assert!(shape_corner::<f64, f64>(&long_first, &long_second, from, tol).unwrap().is_none());
        // A reversal never joins.
        let back = Move::Line { to: [50.0, 0.0, -700.0], law: Law::SCurve, bounds };
        assert!(shape_corner::<f64, f64>(&first, &back, from, tol).unwrap().is_none());
    }
}
