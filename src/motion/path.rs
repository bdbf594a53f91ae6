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
//! * Chain: consecutive straight lines joined by tangent circular arcs,
//!   for line moves the stream joins into one (see [`super::Stream`]).
//!   Parameterised by arc length like the pick cycle; a collinear corner
//!   has no arc.
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
    /// See [`Chain`].
    Chain(Chain<S>),
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

/// Most lines joined into one move (so at most `MAX_JOINED_LINES - 1`
/// corners): bounds the path's size and the cost of validating a chain
/// again each time a line joins it.
pub const MAX_JOINED_LINES: usize = 4;

/// One rounded corner of a [`Chain`]: the arc from arc length `b_in` to
/// `b_out` (mm) turns the tangent from `d_in` to `d_out` about `centre`
/// with radius `r` (with `n` the unit normal towards the turn, the point
/// at angle `phi` is `centre + r (sin phi d_in - cos phi n)`); then a line
/// leaves from `t_out` along `d_out`. A collinear corner has
/// `b_in = b_out` and no arc.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Bend<S: Arith> {
    pub(crate) b_in: S::Wide,
    pub(crate) b_out: S::Wide,
    pub(crate) centre: [S::Wide; 3],
    pub(crate) d_in: [S; 3],
    pub(crate) n: [S; 3],
    pub(crate) r: S::Wide,
    /// `1 / r`, for the arc angle `(s - b_in) / r` without a division.
    pub(crate) inv_r: S::Recip,
    pub(crate) t_out: [S::Wide; 3],
    pub(crate) d_out: [S; 3],
}

/// Consecutive lines joined by tangent arcs, parameterised by arc length:
/// the first line leaves `from` along `d0`, each of the first `bends`
/// corners is rounded as described in [`Bend`], the last line ends at
/// `to` at arc length `length` (evaluated backwards from `to`, so the end
/// is exact). Unused corners are copies of the last one and never reached.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Chain<S: Arith> {
    pub(crate) from: [S::Wide; 3],
    pub(crate) d0: [S; 3],
    pub(crate) to: [S::Wide; 3],
    pub(crate) bend: [Bend<S>; MAX_JOINED_LINES - 1],
    pub(crate) bends: usize,
    pub(crate) length: S::Wide,
}

fn along<S: Arith>(p: [S::Wide; 3], d: [S; 3], s: S::Wide) -> [S::Wide; 3] {
    [p[0] + d[0].mul_wide(s), p[1] + d[1].mul_wide(s), p[2] + d[2].mul_wide(s)]
}

impl<S: Real> Bend<S> {
    fn arc(&self, s: S::Wide) -> ([S::Wide; 3], [S; 3]) {
        let (sin, cos) = S::mul_recip(s - self.b_in, self.inv_r).sin_cos();
        let ([c0, c1, c2], [d0, d1, d2], [n0, n1, n2]) = (self.centre, self.d_in, self.n);
        let r = self.r;
        let point = [
            c0 + (sin * d0 - cos * n0).mul_wide(r),
            c1 + (sin * d1 - cos * n1).mul_wide(r),
            c2 + (sin * d2 - cos * n2).mul_wide(r),
        ];
        (point, [sin * n0 + cos * d0, sin * n1 + cos * d1, sin * n2 + cos * d2])
    }
}

impl<S: Real> Chain<S> {
    /// The point at arc length `s` (mm) and the unit tangent there. A
    /// fixed number of comparisons (one per possible corner).
    fn at(&self, s: S::Wide) -> ([S::Wide; 3], [S; 3]) {
        let (mut from, mut dir, mut base) = (self.from, self.d0, S::Wide::ZERO);
        for (i, bend) in self.bend.iter().enumerate() {
            if i >= self.bends {
                break;
            }
            if s < bend.b_in {
                return (along::<S>(from, dir, s - base), dir);
            }
            if s < bend.b_out {
                return bend.arc(s);
            }
            (from, dir, base) = (bend.t_out, bend.d_out, bend.b_out);
        }
        let back = s - self.length;
        (along::<S>(self.to, dir, back), dir)
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

/// The circular arcs of a path, as `(start, end, radius)` in mm of arc
/// length (start and end) and mm (radius); only the first `count` are
/// used. At most one per corner.
pub(crate) struct Arcs<S: Arith> {
    pub(crate) arcs: [(S::Wide, S::Wide, S::Wide); MAX_JOINED_LINES - 1],
    pub(crate) count: usize,
}

impl<S: Real> Path<S> {
    /// The path's length (mm) when it is Cartesian (0 for a hold), `None`
    /// for a joint-space path.
    pub(crate) fn cartesian_length(&self) -> Option<S::Wide> {
        match self {
            Path::Line { length, .. } => Some(*length),
            Path::Pick(p) => Some(p.length),
            Path::Chain(c) => Some(c.length),
            Path::Hold { .. } => Some(S::Wide::ZERO),
            Path::Joint { .. } => None,
        }
    }

    /// The path's circular arcs (the pick cycle's two corners, a chain's
    /// rounded corners; none for a line, a hold or a joint path).
    pub(crate) fn arcs(&self) -> Arcs<S> {
        let zero = S::Wide::ZERO;
        let mut out = Arcs { arcs: [(zero, zero, zero); MAX_JOINED_LINES - 1], count: 0 };
        match self {
            Path::Pick(p) => {
                let [b1, b2, b3, b4] = p.b;
                let [first, second, ..] = &mut out.arcs;
                (*first, *second) = ((b1, b2, p.r), (b3, b4, p.r));
                out.count = 2;
            }
            Path::Chain(c) => {
                for bend in c.bend.iter().take(c.bends) {
                    if bend.b_in < bend.b_out {
                        if let Some(slot) = out.arcs.get_mut(out.count) {
                            *slot = (bend.b_in, bend.b_out, bend.r);
                            out.count += 1;
                        }
                    }
                }
            }
            Path::Line { .. } | Path::Hold { .. } | Path::Joint { .. } => {}
        }
        out
    }

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
            Path::Chain(c) => {
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
    use crate::motion::law::Profile;
    use crate::motion::law::{Bounds, Law};
    use crate::motion::moves::{Lines, Move, join_lines, shape};

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
        let join = |from: [f64; 3], mid: [f64; 3], to: [f64; 3]| {
            let l1 = ((mid[0] - from[0]).powi(2) + (mid[1] - from[1]).powi(2) + (mid[2] - from[2]).powi(2)).sqrt();
            let first =
                Lines::single(mid, Law::SCurve, bounds, Profile::plan(Law::SCurve, l1, bounds).unwrap().duration());
            join_lines::<f64, f64>(&first, &Move::Line { to, law: Law::SCurve, bounds }, from, tol).unwrap()
        };
        let (shaped, lines) = join(from, mid, to).expect("joined");
        assert_eq!(lines.count, 2);
        let Path::Chain(c) = shaped.path else { unreachable!("joined lines are a chain path") };
        assert_eq!(c.bends, 1);
        let c0 = c.bend[0];
        let half = (turn / 2.0).cos();
        let r = tol * half / (1.0 - half);
        assert!((c0.r / r - 1.0).abs() < CORNER_REL, "radius {}", c0.r);
        assert_eq!(c.at(0.0).0, from);
        assert_eq!(c.at(c.length).0, to);
        for b in [c0.b_in, c0.b_out] {
            let (l, rr) = (c.at(b - EPS_S), c.at(b + EPS_S));
            for i in 0..3 {
                assert!((l.0[i] - rr.0[i]).abs() < JOIN_MM, "point at {b}");
                assert!((l.1[i] - rr.1[i]).abs() < JOIN_TANGENT, "tangent at {b}");
            }
        }
        // The arc's midpoint is the closest point to the corner: tol away.
        let m = c.at(0.5 * (c0.b_in + c0.b_out)).0;
        let gap = ((m[0] - mid[0]).powi(2) + (m[1] - mid[1]).powi(2) + (m[2] - mid[2]).powi(2)).sqrt();
        assert!((gap - tol).abs() < CORNER_REL * tol, "gap {gap}");
        // Speed capped for the centripetal acceleration: v^2 / r = a.
        let peak = shaped.profile.sample(0.5 * shaped.profile.duration()).vel;
        assert!((peak / (a * r).sqrt() - 1.0).abs() < CORNER_REL, "peak speed {peak}");
        // A third line joins the chain: two rounded corners, continuous.
        let third = [to[0] + 100.0, to[1] + 10.0, -690.0];
        let (shaped3, lines3) =
            join_lines::<f64, f64>(&lines, &Move::Line { to: third, law: Law::SCurve, bounds }, from, tol)
                .unwrap()
                .expect("a third line joins");
        assert_eq!(lines3.count, 3);
        let Path::Chain(c3) = shaped3.path else { unreachable!("joined lines are a chain path") };
        assert_eq!(c3.bends, 2);
        assert_eq!((c3.at(0.0).0, c3.at(c3.length).0), (from, third));
        for bend in &c3.bend[..2] {
            assert!(bend.b_in < bend.b_out, "both corners turn");
            for b in [bend.b_in, bend.b_out] {
                let (l, rr) = (c3.at(b - EPS_S), c3.at(b + EPS_S));
                for i in 0..3 {
                    assert!((l.0[i] - rr.0[i]).abs() < JOIN_MM, "point at {b}");
                    assert!((l.1[i] - rr.1[i]).abs() < JOIN_TANGENT, "tangent at {b}");
                }
            }
        }
        // The same corner with long legs would be slower joined: a stop.
        let corner = [300.0, 0.0, -700.0];
        let far = [corner[0] + 300.0 * turn.cos(), 300.0 * turn.sin(), -700.0];
        assert!(join(from, corner, far).is_none());
        // A reversal never joins.
        assert!(join(from, mid, [50.0, 0.0, -700.0]).is_none());
    }
}
