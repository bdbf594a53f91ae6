//! The analytic identification Jacobian.
//!
//! Each arm closes `F_i(p, q_i) = |E_i(q_i) - P_i(p, q_i)|^2 - l_i^2 = 0`
//! (the reference's literal construction; `q_i` arm `i`'s six
//! parameters). Differentiating at a closed pose (implicit function
//! theorem, e.g. W. Rudin, "Principles of Mathematical Analysis", 9.28):
//!
//! ```text
//!   dF/dp dp/dq + dF/dq = 0   =>   dp/dq = -(dF/dp)^-1 dF/dq,   dF_i/dp = -2 d_i^T
//! ```
//!
//! with `d_i = E_i - P_i`, and `dF_i/dq_i` in closed form from
//! `d_i = R_z(phi_i) (b_i - r + u_i cos t_i, 0, h_i - u_i sin t_i) - p`
//! (`t_i` the reading plus the offset). The measurement part follows from
//! the chain rule through the instrument or plate model. No finite
//! differences (a test checks against them).

use nalgebra::{DMatrix, Matrix3, Vector3};

use super::model::{ARM_PARAMETERS, Mode, Model, PER_ARM, Point, rotation};
use crate::reference::{self, Machine};

/// `dp/dq` (mm per mm or rad; 3 x 18, columns in parameter order) of the
/// platform position at joint readings `theta` (rad), position `p` (mm),
/// or `None` at a singular pose.
#[must_use]
pub fn position_sensitivity<M: Machine>(machine: &M, theta: [f64; 3], p: [f64; 3]) -> Option<DMatrix<f64>> {
    let mut a = Matrix3::zeros();
    let mut df = DMatrix::zeros(3, ARM_PARAMETERS);
    for i in 0..3 {
        let m = machine.arm(i);
        let t = theta[i] + m.joint_offset;
        let (st, ct) = t.sin_cos();
        let (sp, cp) = m.azimuth.sin_cos();
        let rz = |v: [f64; 3]| Vector3::new(cp * v[0] - sp * v[1], sp * v[0] + cp * v[1], v[2]);
        let local = [m.base_radius - m.platform_radius + m.upper_arm * ct, 0.0, m.axis_height - m.upper_arm * st];
        let d = rz(local) - Vector3::from(p);
        a.set_row(i, &(-2.0 * d.transpose()));
        let two_d = 2.0 * d;
        let c = PER_ARM * i;
        df[(i, c)] = two_d.dot(&rz([-m.upper_arm * st, 0.0, -m.upper_arm * ct]));
        df[(i, c + 1)] = two_d.dot(&rz([ct, 0.0, -st]));
        df[(i, c + 2)] = -2.0 * m.lower_arm;
        df[(i, c + 3)] = two_d.dot(&rz([1.0, 0.0, 0.0]));
        df[(i, c + 4)] = two_d.dot(&Vector3::new(-sp * local[0], cp * local[0], 0.0));
        df[(i, c + 5)] = two_d[2];
    }
    let inv = a.try_inverse()?;
    let inv = DMatrix::from_fn(3, 3, |r, c| inv[(r, c)]);
    Some(-(inv * df))
}

/// Jacobian of the residuals (`measured - predicted`) with respect to the
/// scaled parameters `x`, rows point by point, or `None` when a pose
/// cannot be closed or is singular.
#[must_use]
pub fn residual_jacobian(model: &Model, x: &[f64], points: &[Point]) -> Option<DMatrix<f64>> {
    let params = model.physical(x);
    let machine = model.machine(&params);
    let mode = model.mode;
    let rows = mode.components();
    let mut j = DMatrix::zeros(points.len() * rows, mode.parameters());
    for (k, pt) in points.iter().enumerate() {
        let p = reference::forward(&machine, pt.joints)?;
        let dp = position_sensitivity(&machine, pt.joints, p)?;
        let block = observation_jacobian(model, &params, p, &dp);
        j.view_mut((k * rows, 0), (rows, mode.parameters())).copy_from(&block);
    }
    for (c, s) in model.scales.iter().enumerate() {
        j.column_mut(c).scale_mut(-s);
    }
    Some(j)
}

/// Derivative of the predicted measurement (rows: components) with
/// respect to the physical parameters, given `dp/dq`.
fn observation_jacobian(model: &Model, params: &[f64], p: [f64; 3], dp: &DMatrix<f64>) -> DMatrix<f64> {
    let mode = model.mode;
    let n = &params[ARM_PARAMETERS..];
    let pv = Vector3::from(p);
    match mode {
        Mode::Position => {
            let (rx, drx) = rotation(0, n[0]);
            let (ry, dry) = rotation(1, n[1]);
            let (rz, drz) = rotation(2, n[2]);
            let r = model.r0 * rz * ry * rx;
            let mut out = DMatrix::zeros(3, mode.parameters());
            let r_dyn = DMatrix::from_fn(3, 3, |a, b| r[(a, b)]);
            out.view_mut((0, 0), (3, ARM_PARAMETERS)).copy_from(&(r_dyn * dp));
            let cols = [model.r0 * rz * ry * drx * pv, model.r0 * rz * dry * rx * pv, model.r0 * drz * ry * rx * pv];
            for (k, col) in cols.iter().enumerate() {
                out.view_mut((0, ARM_PARAMETERS + k), (3, 1)).copy_from(col);
            }
            for k in 0..3 {
                out[(k, ARM_PARAMETERS + 3 + k)] = 1.0;
            }
            out
        }
        Mode::Probe => {
            let (ta, tb) = (n[1].tan(), n[2].tan());
            let mut out = DMatrix::zeros(1, mode.parameters());
            for c in 0..ARM_PARAMETERS {
                out[(0, c)] = dp[(2, c)] + ta * dp[(0, c)] + tb * dp[(1, c)];
            }
            out[(0, ARM_PARAMETERS)] = 1.0;
            out[(0, ARM_PARAMETERS + 1)] = p[0] * (1.0 + ta * ta);
            out[(0, ARM_PARAMETERS + 2)] = p[1] * (1.0 + tb * tb);
            out
        }
    }
}
