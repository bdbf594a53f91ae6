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
//! * Hold: stay at one point (a dwell).
//! * Joint-space straight line: all joints move together from start to
//!   target angles, the one with the largest travel following the time law
//!   (distance in radians).
//!
//! Every path is evaluated from its end point backwards (`to - d (L - s)`),
//! so `s = L` gives the target exactly, with no rounding left over.
//! Evaluation is closed form: at most one `sin_cos` (on an arc), no loop.

use crate::scalar::Real;

/// A path, in millimetres (Cartesian) or radians (joint space).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Path<S> {
    /// `p(s) = to - dir (L - s)`, `dir` the unit direction.
    Line { to: [S; 3], dir: [S; 3], length: S },
    /// See [`Pick`].
    Pick(Pick<S>),
    /// Stay at `at`.
    Hold { at: [S; 3] },
    /// Joint angles `to - dir (L - s)`, `dir` the joint travel divided by
    /// the largest joint travel `L`.
    Joint { to: [S; 3], dir: [S; 3], length: S },
}

/// A pick-and-place cycle with blended corners. Break points along the arc
/// length: rise ends at `b1`, first arc at `b2`, traverse at `b3`, second
/// arc at `b4`, descent at `length`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Pick<S> {
    pub(crate) from: [S; 3],
    pub(crate) to: [S; 3],
    /// Horizontal unit vector from `from` towards `to`.
    pub(crate) u: [S; 2],
    /// Height of the traverse (mm).
    pub(crate) z_top: S,
    pub(crate) r: S,
    pub(crate) inv_r: S,
    pub(crate) b: [S; 4],
    pub(crate) length: S,
}

/// A point on a path and its unit tangent (zero for a hold).
pub(crate) struct PathPoint<S> {
    pub(crate) point: [S; 3],
    pub(crate) tangent: [S; 3],
}

impl<S: Real> Pick<S> {
    fn at(&self, s: S) -> PathPoint<S> {
        let [ux, uy] = self.u;
        let [b1, b2, b3, b4] = self.b;
        let (z, o) = (S::ZERO, S::ONE);
        if s < b1 {
            let [x, y, z0] = self.from;
            return PathPoint { point: [x, y, z0 + s], tangent: [z, z, o] };
        }
        if s < b2 {
            // Centre (from_xy + r u, z_top - r); angle 0 at the rise, pi/2
            // on the traverse.
            let (sin, cos) = ((s - b1) * self.inv_r).sin_cos();
            let [x, y, _] = self.from;
            let (h, v) = (self.r * (S::ONE - cos), self.z_top - self.r + self.r * sin);
            return PathPoint { point: [x + h * ux, y + h * uy, v], tangent: [sin * ux, sin * uy, cos] };
        }
        if s < b3 {
            // Measured back from the end of the traverse.
            let back = b3 - s;
            let [x, y, _] = self.to;
            let h = self.r + back;
            return PathPoint { point: [x - h * ux, y - h * uy, self.z_top], tangent: [ux, uy, z] };
        }
        if s < b4 {
            // Centre (to_xy - r u, z_top - r); angle 0 on the traverse,
            // pi/2 at the descent.
            let (sin, cos) = ((s - b3) * self.inv_r).sin_cos();
            let [x, y, _] = self.to;
            let (h, v) = (self.r * (S::ONE - sin), self.z_top - self.r + self.r * cos);
            return PathPoint { point: [x - h * ux, y - h * uy, v], tangent: [cos * ux, cos * uy, -sin] };
        }
        let [x, y, z1] = self.to;
        PathPoint { point: [x, y, z1 + (self.length - s)], tangent: [z, z, -o] }
    }
}

impl<S: Real> Path<S> {
    /// The point at distance `s` and the unit tangent there (for a joint
    /// path, the joint angles and the joint direction).
    pub(crate) fn at(&self, s: S) -> PathPoint<S> {
        match self {
            Path::Line { to, dir, length } | Path::Joint { to, dir, length } => {
                let back = *length - s;
                PathPoint {
                    point: [to[0] - dir[0] * back, to[1] - dir[1] * back, to[2] - dir[2] * back],
                    tangent: *dir,
                }
            }
            Path::Pick(p) => p.at(s),
            Path::Hold { at } => PathPoint { point: *at, tangent: [S::ZERO; 3] },
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::motion::law::{Bounds, Law};
    use crate::motion::moves::{Move, shape};

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
        let Path::Pick(p) = shape(&mv, from, [0.0; 3]).unwrap().path else {
            unreachable!("a pick move shapes a pick path")
        };
        assert_eq!(p.at(0.0).point, from);
        assert_eq!(p.at(p.length).point, to);
        // Top of the traverse: 25 mm above the higher end.
        assert!((p.at(0.5 * (p.b[1] + p.b[2])).point[2] - (-715.0)).abs() < JOIN_MM);
        for b in p.b {
            let (l, r) = (p.at(b - EPS_S), p.at(b + EPS_S));
            for i in 0..3 {
                assert!((l.point[i] - r.point[i]).abs() < JOIN_MM, "point at {b}");
                assert!((l.tangent[i] - r.tangent[i]).abs() < JOIN_TANGENT, "tangent at {b}");
            }
        }
        for i in 0..=1000 {
            let t = p.at(p.length * f64::from(i) / 1000.0).tangent;
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
            assert!(shape(&mv, from, [0.0; 3]).is_err());
        }
    }
}
