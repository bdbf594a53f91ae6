//! Pose suggestion: greedy maximisation of the observability index over
//! a candidate set inside the guarded workspace.
//!
//! Candidates are random joint readings within the joint ranges that the
//! core's guarded forward kinematics (`Robot::forward`, every guard)
//! accepts, so every suggested pose can be commanded. Starting from
//! nothing, each step adds the candidate that most increases
//! `log det(J^T J + eps I)` over the identifiable subspace (the sum of
//! the logs of the squared singular values, so the same ordering as O1
//! once the set has full rank; `eps` keeps the first steps defined). The
//! greedy form is the usual practical substitute for the combinatorial
//! optimum (e.g. Sun and Hollerbach; from memory).

use deltakin::Robot;
use nalgebra::DMatrix;

use super::identify;
use super::jacobian::residual_jacobian;
use super::model::{Mode, Model, Point, arm_vector};
use crate::config::{ConfigError, RobotFile};

/// Random candidates drawn (before the guards thin them).
pub const CANDIDATE_DRAWS: usize = 600;

/// Regularisation of the first greedy steps (scaled units).
const GREEDY_EPS: f64 = 1e-6;

/// A small deterministic generator (SplitMix64, G. Steele et al., OOPSLA
/// 2014) with Gaussian draws (Box-Muller): reproducible demos and tests.
#[derive(Clone, Debug)]
pub struct Rng(u64);

impl Rng {
    /// A generator from `seed`.
    #[must_use]
    pub const fn new(seed: u64) -> Self {
        Self(seed)
    }
    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        (z ^ (z >> 31)) as f64 / 18_446_744_073_709_551_616.0
    }
    /// Uniform in [a, b).
    pub fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.uniform()
    }
    /// Standard normal.
    pub fn gauss(&mut self) -> f64 {
        let u = 1.0 - self.uniform();
        let v = self.uniform();
        (-2.0 * u.ln()).sqrt() * (std::f64::consts::TAU * v).cos()
    }
}

/// Joint readings (rad) inside every guard of `robot`, drawn at random.
#[must_use]
pub fn candidates(robot: &Robot<f64>, draws: usize, rng: &mut Rng) -> Vec<[f64; 3]> {
    let l = robot.limits();
    (0..draws)
        .map(|_| [0, 1, 2].map(|i| rng.range(l.joint_min[i], l.joint_max[i])))
        .filter(|j| robot.forward(*j).is_ok())
        .collect()
}

/// Scaled Jacobian rows of each pose under `model` at physical `params`.
fn rows(model: &Model, params: &[f64], joints: &[[f64; 3]]) -> Vec<Option<DMatrix<f64>>> {
    let x = model.scaled(params);
    joints.iter().map(|j| residual_jacobian(model, &x, &[Point { joints: *j, measured: [0.0; 3] }])).collect()
}

/// Observability index O1 of a pose set (over its identifiable subspace).
#[must_use]
pub fn observability(model: &Model, params: &[f64], joints: &[[f64; 3]]) -> f64 {
    let x = model.scaled(params);
    let points: Vec<Point> = joints.iter().map(|j| Point { joints: *j, measured: [0.0; 3] }).collect();
    residual_jacobian(model, &x, &points).map_or(0.0, |j| identify::analyse(&j).observability)
}

/// `n` poses chosen greedily from `candidates` to maximise the
/// observability of `mode`'s parameters on the machine `params`.
#[must_use]
pub fn suggest(model: &Model, params: &[f64], candidates: &[[f64; 3]], n: usize) -> Vec<[f64; 3]> {
    let rows = rows(model, params, candidates);
    let usable: Vec<(usize, DMatrix<f64>)> =
        rows.into_iter().enumerate().filter_map(|(k, r)| r.map(|r| (k, r))).collect();
    if usable.is_empty() {
        return Vec::new();
    }
    let all = DMatrix::from_rows(
        &usable
            .iter()
            .flat_map(|(_, r)| r.row_iter().map(|row| row.into_owned()).collect::<Vec<_>>())
            .collect::<Vec<_>>(),
    );
    let held = identify::analyse(&all).unidentifiable;
    let basis = identify::free_basis(&identify::hold_constraints(&held), all.ncols());
    let reduced: Vec<DMatrix<f64>> = usable.iter().map(|(_, r)| r * &basis).collect();
    let f = basis.ncols();
    let mut info = DMatrix::identity(f, f) * GREEDY_EPS;
    let mut chosen: Vec<usize> = Vec::new();
    for _ in 0..n.min(usable.len()) {
        let best = (0..usable.len())
            .filter(|k| !chosen.contains(k))
            .map(|k| {
                let trial = &info + reduced[k].transpose() * &reduced[k];
                let score =
                    trial.cholesky().map_or(f64::NEG_INFINITY, |c| c.l().diagonal().iter().map(|d| d.ln()).sum());
                (k, score)
            })
            .max_by(|a, b| a.1.total_cmp(&b.1));
        let Some((k, _)) = best else { break };
        info += reduced[k].transpose() * &reduced[k];
        chosen.push(k);
    }
    chosen.iter().map(|&k| candidates[usable[k].0]).collect()
}

/// Seed of the candidate draw of `deltakin calibrate --suggest-poses`.
pub const SUGGEST_SEED: u64 = 0x0000_D17A_CA1B;

/// `n` suggested poses (joint readings, rad) for the machine of `robot`
/// (its corrections included), measured in `mode`.
///
/// # Errors
/// The robot file does not make a valid robot.
pub fn suggest_for(robot: &RobotFile, mode: Mode, n: usize) -> Result<Vec<[f64; 3]>, ConfigError> {
    let core: Robot<f64> = robot.robot()?;
    let mut rng = Rng::new(SUGGEST_SEED);
    let cands = candidates(&core, CANDIDATE_DRAWS.max(4 * n), &mut rng);
    let model = Model::new(mode, robot.geometry_f64());
    let mut params = arm_vector(&robot.corrections_f64());
    params.resize(mode.parameters(), 0.0);
    Ok(suggest(&model, &params, &cands, n))
}
