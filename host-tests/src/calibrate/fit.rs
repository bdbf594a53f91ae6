//! The fit: Levenberg-Marquardt on the identifiable subspace.
//!
//! 1. Start from the robot file's corrections (nominal: zero) and a first
//!    guess of the nuisance parameters: a rigid alignment of the starting
//!    model's positions to the measured ones (W. Kabsch, Acta Cryst. A32,
//!    1976, by the SVD of the cross-covariance) in position mode; the mean
//!    height difference in probe mode.
//! 2. Analyse the scaled Jacobian there ([`super::identify`]); each
//!    unidentifiable direction is held at the start (its per-arm part
//!    stays at the robot file's values) by fitting only in the subspace
//!    orthogonal to it.
//! 3. Minimise the sum of squared residuals with the `levenberg-marquardt`
//!    crate (J. J. More's MINPACK form), Jacobian from [`super::jacobian`].
//! 4. Covariance at the solution `s^2 (J^T J)^-1` on the subspace, with
//!    `s^2 = |r|^2 / (m - n)` the residual variance; standard deviations
//!    are the square roots of its diagonal, mapped back to every parameter.

use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt};
use nalgebra::{DMatrix, DVector, Dyn, Matrix3, Owned, Vector3};

use super::identify::{self, Identifiability};
use super::jacobian::residual_jacobian;
use super::model::{self, ARM_PARAMETERS, Mode, Model, Point};
use crate::reference;

/// A fit is poor when the residual RMS exceeds this many times the
/// stated instrument noise.
pub const POOR_FIT_FACTOR: f64 = 2.0;

/// What went wrong before a fit could run (exit status 2).
#[derive(Clone, Debug, PartialEq)]
pub enum FitError {
    /// Fewer points than the parameters need.
    TooFewPoints {
        /// Points given.
        given: usize,
        /// Points needed.
        needed: usize,
    },
    /// A pose the nominal machine cannot close (1-based point number).
    Unreachable(usize),
}

impl std::fmt::Display for FitError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            FitError::TooFewPoints { given, needed } => {
                write!(f, "{given} measured points; at least {needed} are needed for this mode")
            }
            FitError::Unreachable(k) => write!(f, "point {k}: the nominal machine cannot reach these joint readings"),
        }
    }
}

/// Fewest points for a fit: one more measured component than parameters.
#[must_use]
pub fn points_needed(mode: Mode) -> usize {
    (mode.parameters() + 1).div_ceil(mode.components())
}

/// The result of a fit. Parameters physical (mm, rad).
#[derive(Clone, Debug)]
pub struct Fit {
    /// Measurement mode.
    pub mode: Mode,
    /// The model (with the fixed first rotation found at the start).
    pub model: Model,
    /// Starting parameters.
    pub start: Vec<f64>,
    /// Fitted parameters.
    pub params: Vec<f64>,
    /// Standard deviation of each parameter (0 where held).
    pub std_dev: Vec<f64>,
    /// Residuals (mm) at the start (nuisance aligned, per-arm nominal).
    pub before: Vec<f64>,
    /// Residuals (mm) at the solution.
    pub after: Vec<f64>,
    /// Identifiability at the start (all parameters).
    pub start_identifiability: Identifiability,
    /// Identifiability at the solution on the fitted subspace.
    pub identifiability: Identifiability,
    /// The unidentifiable combinations, in words.
    pub held: Vec<String>,
    /// Parameters fitted (dimension of the subspace).
    pub fitted: usize,
    /// Whether the minimiser reported success.
    pub converged: bool,
    /// Residual evaluations used.
    pub evaluations: usize,
}

impl Fit {
    /// Degrees of freedom of the residual.
    #[must_use]
    pub fn dof(&self) -> usize {
        self.after.len().saturating_sub(self.fitted)
    }
    /// Chi-square of the residuals against `noise_mm` per component.
    #[must_use]
    pub fn chi_square(&self, noise_mm: f64) -> f64 {
        self.after.iter().map(|v| v * v).sum::<f64>() / (noise_mm * noise_mm)
    }
    /// RMS after the fit (mm per component).
    #[must_use]
    pub fn rms_after(&self) -> f64 {
        model::rms(&self.after)
    }
    /// Whether the fit is accepted against `noise_mm`.
    #[must_use]
    pub fn accepted(&self, noise_mm: f64) -> bool {
        self.converged && self.rms_after() <= POOR_FIT_FACTOR * noise_mm && !self.ill_conditioned()
    }
    /// Whether the identifiable subspace is ill-conditioned.
    #[must_use]
    pub fn ill_conditioned(&self) -> bool {
        self.identifiability.condition.is_nan() || self.identifiability.condition >= identify::ILL_CONDITIONED
    }
}

struct Problem<'a> {
    model: &'a Model,
    points: &'a [Point],
    x0: DVector<f64>,
    basis: DMatrix<f64>,
    y: DVector<f64>,
}

impl Problem<'_> {
    fn x(&self) -> Vec<f64> {
        (&self.x0 + &self.basis * &self.y).iter().copied().collect()
    }
}

impl LeastSquaresProblem<f64, Dyn, Dyn> for Problem<'_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, y: &DVector<f64>) {
        self.y.copy_from(y);
    }
    fn params(&self) -> DVector<f64> {
        self.y.clone()
    }
    fn residuals(&self) -> Option<DVector<f64>> {
        let p = self.model.physical(&self.x());
        self.model.residuals(&p, self.points).map(DVector::from_vec)
    }
    fn jacobian(&self) -> Option<DMatrix<f64>> {
        residual_jacobian(self.model, &self.x(), self.points).map(|j| j * &self.basis)
    }
}

/// Rigid alignment `q = R p + t` of `p` onto `q` (least squares, proper rotation).
#[must_use]
pub fn align(p: &[[f64; 3]], q: &[[f64; 3]]) -> (Matrix3<f64>, Vector3<f64>) {
    let n = p.len().max(1) as f64;
    let pc = p.iter().fold(Vector3::zeros(), |a, v| a + Vector3::from(*v)) / n;
    let qc = q.iter().fold(Vector3::zeros(), |a, v| a + Vector3::from(*v)) / n;
    let h = p
        .iter()
        .zip(q)
        .fold(Matrix3::zeros(), |a, (pi, qi)| a + (Vector3::from(*pi) - pc) * (Vector3::from(*qi) - qc).transpose());
    let svd = h.svd(true, true);
    let (Some(u), Some(v_t)) = (svd.u, svd.v_t) else {
        return (Matrix3::identity(), qc - pc);
    };
    let v = v_t.transpose();
    let d = (v * u.transpose()).determinant().signum();
    let r = v * Matrix3::from_diagonal(&Vector3::new(1.0, 1.0, d)) * u.transpose();
    (r, qc - r * pc)
}

/// Fits the per-arm parameters of `geometry` (starting from `start_arm`,
/// physical, 18 values) to `points` measured in `mode`.
///
/// # Errors
/// Too few points, or a pose the starting machine cannot close.
pub fn fit(
    mode: Mode,
    geometry: deltakin::Geometry<f64>,
    start_arm: &[f64],
    points: &[Point],
) -> Result<Fit, FitError> {
    let needed = points_needed(mode);
    if points.len() < needed {
        return Err(FitError::TooFewPoints { given: points.len(), needed });
    }
    let mut model = Model::new(mode, geometry);
    let mut start = start_arm.to_vec();
    start.resize(mode.parameters(), 0.0);
    let machine = model.machine(&start);
    let mut nominal = Vec::with_capacity(points.len());
    for (k, pt) in points.iter().enumerate() {
        nominal.push(reference::forward(&machine, pt.joints).ok_or(FitError::Unreachable(k + 1))?);
    }
    match mode {
        Mode::Position => {
            let measured: Vec<[f64; 3]> = points.iter().map(|p| p.measured).collect();
            let (r, t) = align(&nominal, &measured);
            model.r0 = r;
            start[ARM_PARAMETERS + 3..].copy_from_slice(t.as_slice());
        }
        Mode::Probe => {
            let dz = points.iter().zip(&nominal).map(|(m, p)| m.measured[2] - p[2]).sum::<f64>();
            start[ARM_PARAMETERS] = dz / points.len() as f64;
        }
    }
    let x0 = model.scaled(&start);
    let j0 = residual_jacobian(&model, &x0, points).ok_or(FitError::Unreachable(0))?;
    let start_identifiability = identify::analyse(&j0);
    let held: Vec<String> = start_identifiability.unidentifiable.iter().map(|v| identify::describe(mode, v)).collect();
    let basis = identify::free_basis(&identify::hold_constraints(&start_identifiability.unidentifiable), x0.len());
    let fitted = basis.ncols();
    let before = model.residuals(&start, points).ok_or(FitError::Unreachable(0))?;
    let problem = Problem { model: &model, points, x0: DVector::from_vec(x0), basis, y: DVector::zeros(fitted) };
    let (problem, report) = LevenbergMarquardt::new().minimize(problem);
    let x = problem.x();
    let params = model.physical(&x);
    let after = model.residuals(&params, points).unwrap_or_else(|| before.clone());
    let jb = residual_jacobian(&model, &x, points).map(|j| j * &problem.basis);
    let identifiability = jb.as_ref().map_or_else(|| start_identifiability.clone(), identify::analyse);
    let dof = after.len().saturating_sub(fitted).max(1);
    let s2 = after.iter().map(|v| v * v).sum::<f64>() / dof as f64;
    let std_dev = match jb.and_then(|jb| (jb.transpose() * &jb).try_inverse()) {
        Some(inv) => {
            let cov = &problem.basis * inv * problem.basis.transpose() * s2;
            (0..x.len()).map(|k| cov[(k, k)].max(0.0).sqrt() * model.scales[k]).collect()
        }
        None => vec![f64::NAN; x.len()],
    };
    Ok(Fit {
        mode,
        model: model.clone(),
        start,
        params,
        std_dev,
        before,
        after,
        start_identifiability,
        identifiability,
        held,
        fitted,
        converged: report.termination.was_successful(),
        evaluations: report.number_of_evaluations,
    })
}

/// [`fit`] for a robot file: its geometry, starting from its corrections.
///
/// # Errors
/// As [`fit`].
pub fn fit_robot(robot: &crate::config::RobotFile, mode: Mode, points: &[Point]) -> Result<Fit, FitError> {
    fit(mode, robot.geometry_f64(), &model::arm_vector(&robot.corrections_f64()), points)
}
