//! The DC motor of one drive: armature `L di/dt = V - R i - K_e w_m`,
//! torque `K_t i` (SI units: V, A, ohm, H, N*m, rad/s), after any
//! electrical-machines text (e.g. B. C. Kuo, "Automatic Control Systems",
//! chapter on DC motor models; from memory). The rotor's inertia and the
//! gearbox are folded into the joint-side plant by the simulation.

/// Armature current derivative (A/s) at voltage `volts`, current `amps`
/// and motor-shaft speed `speed` (rad/s).
#[must_use]
pub fn current_rate(resistance: f64, inductance: f64, back_emf: f64, volts: f64, amps: f64, speed: f64) -> f64 {
    (volts - resistance * amps - back_emf * speed) / inductance
}

#[cfg(test)]
mod tests {
    use super::*;
    use ode_solvers::{Dopri5, System, Vector1, Vector2};

    // Demo drive numbers (examples/demo_drive.toml), SI.
    const R: f64 = 0.60;
    const L: f64 = 1.1e-3;
    const K: f64 = 0.075;
    const J: f64 = 15.0e-6;
    const V: f64 = 12.0;
    /// Integrator tolerance 1e-10 relative: agreement with the closed
    /// forms to 1e-7 of the final value.
    const STEP_REL_TOL: f64 = 1e-7;

    struct Locked;
    impl System<f64, Vector1<f64>> for Locked {
        fn system(&self, _t: f64, y: &Vector1<f64>, dy: &mut Vector1<f64>) {
            dy[0] = current_rate(R, L, K, V, y[0], 0.0);
        }
    }

    /// Locked rotor: first order, `i(t) = V/R (1 - exp(-t R / L))`.
    #[test]
    fn locked_rotor_current_is_the_first_order_step() {
        let mut s = Dopri5::new(Locked, 0.0, 0.01, 1e-4, Vector1::new(0.0), 1e-10, 1e-12);
        s.integrate().unwrap();
        let fin = V / R;
        for (t, y) in s.x_out().iter().zip(s.y_out()) {
            let want = fin * (1.0 - (-t * R / L).exp());
            assert!((y[0] - want).abs() <= STEP_REL_TOL * fin, "t {t}: {} vs {want}", y[0]);
        }
    }

    struct Free;
    impl System<f64, Vector2<f64>> for Free {
        fn system(&self, _t: f64, y: &Vector2<f64>, dy: &mut Vector2<f64>) {
            dy[0] = current_rate(R, L, K, V, y[0], y[1]);
            dy[1] = K * y[0] / J;
        }
    }

    /// Free rotor, no load: second order `w/V = K / (J L s^2 + J R s + K^2)`;
    /// with roots `sigma +- j w_d` (underdamped for the demo numbers) the
    /// step is `w(t) = V/K [1 - e^(sigma t) (cos w_d t - sigma/w_d sin w_d t)]`.
    #[test]
    fn free_rotor_speed_is_the_second_order_step() {
        let sigma = -R / (2.0 * L);
        let disc = K * K / (J * L) - sigma * sigma;
        assert!(disc > 0.0, "demo motor is underdamped");
        let wd = disc.sqrt();
        let mut s = Dopri5::new(Free, 0.0, 0.02, 1e-4, Vector2::new(0.0, 0.0), 1e-10, 1e-12);
        s.integrate().unwrap();
        let fin = V / K;
        let mut overshoot: f64 = 0.0;
        for (t, y) in s.x_out().iter().zip(s.y_out()) {
            let want = fin * (1.0 - (sigma * t).exp() * ((wd * t).cos() - sigma / wd * (wd * t).sin()));
            assert!((y[1] - want).abs() <= STEP_REL_TOL * fin, "t {t}: {} vs {want}", y[1]);
            overshoot = overshoot.max(y[1] - fin);
        }
        assert!(overshoot > 0.0, "an underdamped step overshoots");
    }
}
