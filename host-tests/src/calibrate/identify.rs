//! Identifiability: the singular values of the scaled identification
//! Jacobian, the combinations the data cannot separate, and the
//! observability index.
//!
//! A right singular vector whose singular value is below
//! [`UNIDENTIFIABLE_RATIO`] times the largest is a direction in parameter
//! space the measurements do not see: moving the parameters along it
//! changes no residual (to first order). Its large components name the
//! parameters that trade with each other (e.g. a common azimuth of the
//! three arms with the instrument's rotation about z).
//!
//! Observability index: O1, as defined by J.-H. Borm and C.-H. Menq,
//! "Determination of optimal measurement configurations for robot
//! calibration based on observability measure", IJRR 10(1), 1991, and
//! compared with the other indices (O2-O5) by Y. Sun and J. M. Hollerbach,
//! "Observability index selection for robot calibration", ICRA 2008 (both
//! from memory): `O1 = (s_1 s_2 ... s_n)^(1/n) / sqrt(m)` over
//! the `n` identifiable singular values of the scaled Jacobian with `m`
//! rows. Larger is better; it is the geometric mean sensitivity of one
//! measured component to one scaled parameter.

use nalgebra::DMatrix;

use super::model::{ARM_PARAMETERS, Mode, words};

/// A singular value below this fraction of the largest marks an
/// unidentifiable direction. Exact trades (a common azimuth against the
/// instrument's rotation) come out near 1e-12; weakly but truly observed
/// parameters on a reasonable pose set are above 1e-3.
pub const UNIDENTIFIABLE_RATIO: f64 = 1e-6;

/// A component of an unidentifiable direction larger than this (of a unit
/// vector) is named in its description.
pub const NAMED_COMPONENT: f64 = 0.2;

/// Condition number (largest over smallest identifiable singular value)
/// above which a fit is called ill-conditioned.
pub const ILL_CONDITIONED: f64 = 1e4;

/// The singular structure of a scaled Jacobian.
#[derive(Clone, Debug)]
pub struct Identifiability {
    /// Singular values, largest first.
    pub singular_values: Vec<f64>,
    /// Unit vectors (scaled parameter space) the data cannot see.
    pub unidentifiable: Vec<Vec<f64>>,
    /// Observability index O1 over the identifiable singular values.
    pub observability: f64,
    /// Largest over smallest identifiable singular value.
    pub condition: f64,
}

/// Analyses `j` (rows: measured components, columns: scaled parameters).
#[must_use]
pub fn analyse(j: &DMatrix<f64>) -> Identifiability {
    let svd = j.clone().svd(false, true);
    let v_t = svd.v_t.unwrap_or_else(|| DMatrix::zeros(0, 0));
    let mut order: Vec<usize> = (0..svd.singular_values.len()).collect();
    order.sort_by(|a, b| svd.singular_values[*b].total_cmp(&svd.singular_values[*a]));
    let singular_values: Vec<f64> = order.iter().map(|&k| svd.singular_values[k]).collect();
    let largest = singular_values.first().copied().unwrap_or(0.0);
    let mut unidentifiable = Vec::new();
    let mut kept = Vec::new();
    for (rank, &k) in order.iter().enumerate() {
        if singular_values[rank] < UNIDENTIFIABLE_RATIO * largest {
            unidentifiable.push(v_t.row(k).iter().copied().collect());
        } else {
            kept.push(singular_values[rank]);
        }
    }
    // Columns beyond the rows (fewer measurements than parameters).
    let n = j.ncols();
    if singular_values.len() < n {
        unidentifiable.extend(null_complement(&v_t, n));
    }
    let unidentifiable = simplest_basis(unidentifiable);
    let observability = observability_of(&kept, j.nrows());
    let condition = match (kept.first(), kept.last()) {
        (Some(a), Some(b)) if *b > 0.0 => a / b,
        _ => f64::INFINITY,
    };
    Identifiability { singular_values, unidentifiable, observability, condition }
}

/// The same subspace in reduced row echelon form (Gauss-Jordan, columns
/// in parameter order, rows then normalised): the SVD returns an arbitrary
/// basis of a repeated (zero) singular value, mixing e.g. the azimuth
/// trade with the axis-height trade; the echelon form separates them so
/// each can be named.
fn simplest_basis(mut rows: Vec<Vec<f64>>) -> Vec<Vec<f64>> {
    const PIVOT_MIN: f64 = 1e-3;
    let n = rows.first().map_or(0, Vec::len);
    let mut r = 0;
    for c in 0..n {
        if r == rows.len() {
            break;
        }
        let Some(p) = (r..rows.len()).max_by(|a, b| rows[*a][c].abs().total_cmp(&rows[*b][c].abs())) else { break };
        if rows[p][c].abs() < PIVOT_MIN {
            continue;
        }
        rows.swap(r, p);
        let pivot = rows[r][c];
        rows[r].iter_mut().for_each(|x| *x /= pivot);
        for k in 0..rows.len() {
            if k != r {
                let f = rows[k][c];
                let pr = rows[r].clone();
                rows[k].iter_mut().zip(&pr).for_each(|(x, y)| *x -= f * y);
            }
        }
        r += 1;
    }
    for row in &mut rows {
        let norm = row.iter().map(|x| x * x).sum::<f64>().sqrt();
        if norm > 0.0 {
            row.iter_mut().for_each(|x| *x /= norm);
        }
    }
    rows
}

/// O1 of singular values `s` of a Jacobian with `m` rows.
#[must_use]
pub fn observability_of(s: &[f64], m: usize) -> f64 {
    if s.is_empty() || m == 0 || s.iter().any(|v| *v <= 0.0) {
        return 0.0;
    }
    (s.iter().map(|v| v.ln()).sum::<f64>() / s.len() as f64).exp() / (m as f64).sqrt()
}

/// Unit vectors orthogonal to the rows of `v_t` (Gram-Schmidt on the axes).
fn null_complement(v_t: &DMatrix<f64>, n: usize) -> Vec<Vec<f64>> {
    let mut basis: Vec<Vec<f64>> = v_t.row_iter().map(|r| r.iter().copied().collect()).collect();
    let mut out = Vec::new();
    for axis in 0..n {
        let mut v = vec![0.0; n];
        v[axis] = 1.0;
        for b in &basis {
            let d: f64 = v.iter().zip(b).map(|(x, y)| x * y).sum();
            v.iter_mut().zip(b).for_each(|(x, y)| *x -= d * y);
        }
        let norm = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        if norm > 1e-6 {
            v.iter_mut().for_each(|x| *x /= norm);
            basis.push(v.clone());
            out.push(v);
        }
    }
    out
}

/// An unidentifiable direction in words: its named components, with signs
/// ("arm 0 azimuth + arm 1 azimuth + arm 2 azimuth - instrument rotation about z").
#[must_use]
pub fn describe(mode: Mode, v: &[f64]) -> String {
    let largest = v.iter().map(|x| x.abs()).fold(0.0, f64::max);
    let mut parts = Vec::new();
    for (k, x) in v.iter().enumerate() {
        if x.abs() >= NAMED_COMPONENT * largest.max(f64::MIN_POSITIVE) && x.abs() > 1e-9 {
            let sign = if parts.is_empty() {
                if *x < 0.0 { "-" } else { "" }
            } else if *x < 0.0 {
                " - "
            } else {
                " + "
            };
            parts.push(format!("{sign}{:.2} {}", x.abs(), words(mode, k)));
        }
    }
    parts.concat()
}

/// The constraint that holds an unidentifiable direction at nominal: its
/// per-arm part (rows of the returned matrix, one per direction), so that
/// `C (x_arm - x_nominal) = 0`. Directions without a per-arm part (pure
/// nuisance) constrain the nuisance part instead.
#[must_use]
pub fn hold_constraints(unidentifiable: &[Vec<f64>]) -> DMatrix<f64> {
    let n = unidentifiable.first().map_or(0, Vec::len);
    let mut c = DMatrix::zeros(unidentifiable.len(), n);
    for (r, v) in unidentifiable.iter().enumerate() {
        let arm_norm = v[..ARM_PARAMETERS].iter().map(|x| x * x).sum::<f64>().sqrt();
        for k in 0..n {
            let in_arm = k < ARM_PARAMETERS;
            c[(r, k)] = if arm_norm > 1e-3 { if in_arm { v[k] } else { 0.0 } } else { v[k] };
        }
    }
    c
}

/// An orthonormal basis (columns) of the subspace `C y = 0`.
#[must_use]
pub fn free_basis(c: &DMatrix<f64>, n: usize) -> DMatrix<f64> {
    if c.nrows() == 0 {
        return DMatrix::identity(n, n);
    }
    let svd = c.clone().svd(false, true);
    let v_t = svd.v_t.unwrap_or_else(|| DMatrix::zeros(0, n));
    let rows: Vec<Vec<f64>> = v_t
        .row_iter()
        .zip(svd.singular_values.iter())
        .filter(|(_, s)| **s > 1e-9)
        .map(|(r, _)| r.iter().copied().collect())
        .collect();
    let comp = null_complement(&DMatrix::from_row_iterator(rows.len(), n, rows.into_iter().flatten()), n);
    DMatrix::from_fn(n, comp.len(), |r, k| comp[k][r])
}
