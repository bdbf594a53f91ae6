//! The calibration report (text and JSON) and the calibrated robot file.

use std::fmt::Write as _;

use super::fit::{Fit, POOR_FIT_FACTOR};
use super::identify::ILL_CONDITIONED;
use super::model::{self, ARM_PARAMETERS, PER_ARM, printed};

/// The verdict line of a fit against `noise_mm`.
#[must_use]
pub fn verdict(fit: &Fit, noise_mm: f64) -> String {
    let rms = fit.rms_after();
    if !fit.converged {
        return "POOR: the minimiser did not converge".to_owned();
    }
    if rms > POOR_FIT_FACTOR * noise_mm {
        return format!(
            "POOR: residual RMS {rms:.4} mm is above {POOR_FIT_FACTOR} x the stated noise {noise_mm} mm \
             (a model error, a bad measurement, or the noise understated)"
        );
    }
    if fit.ill_conditioned() {
        return format!(
            "ILL-CONDITIONED: condition number {:.3e} above {ILL_CONDITIONED:e}; measure more, better spread poses",
            fit.identifiability.condition
        );
    }
    format!("ACCEPTED: residual RMS {rms:.4} mm within {POOR_FIT_FACTOR} x the stated noise {noise_mm} mm")
}

fn worst(r: &[f64], mode: model::Mode) -> f64 {
    model::per_point(mode, r).into_iter().fold(0.0, f64::max)
}

/// The text report.
#[must_use]
pub fn text(fit: &Fit, noise_mm: f64, per_point: bool) -> String {
    let mode = fit.mode;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "mode: {}",
        match mode {
            model::Mode::Position => "position instrument (x, y, z; 6 instrument-frame parameters identified too)",
            model::Mode::Probe => "probe (z on a flat plate; plate height and 2 tilts identified too)",
        }
    );
    let _ = writeln!(
        s,
        "points: {}, measured components: {}, parameters fitted: {}",
        fit.before.len() / mode.components(),
        fit.after.len(),
        fit.fitted
    );
    let _ = writeln!(
        s,
        "residuals before (nominal, instrument aligned): RMS {:.4} mm, worst point {:.4} mm",
        model::rms(&fit.before),
        worst(&fit.before, mode)
    );
    let _ = writeln!(
        s,
        "residuals after:                               RMS {:.4} mm, worst point {:.4} mm",
        fit.rms_after(),
        worst(&fit.after, mode)
    );
    let _ = writeln!(
        s,
        "chi-square {:.1} on {} degrees of freedom (noise {noise_mm} mm)",
        fit.chi_square(noise_mm),
        fit.dof()
    );
    let _ = writeln!(s, "\nparameter                      value        std dev");
    for k in 0..fit.params.len() {
        let _ = writeln!(
            s,
            "{:<28} {:>+12.5} {:>12.5}",
            model::name(mode, k),
            printed(mode, k, fit.params[k]),
            printed(mode, k, fit.std_dev[k])
        );
    }
    if fit.held.is_empty() {
        let _ = writeln!(s, "\nheld at nominal: none");
    } else {
        let _ = writeln!(
            s,
            "\nheld at nominal (the data cannot separate these; their per-arm part keeps the robot file's value):"
        );
        for h in &fit.held {
            let _ = writeln!(s, "  {h}");
        }
    }
    let _ = writeln!(
        s,
        "\nobservability index O1 (Borm and Menq; product of singular values^(1/n) / sqrt(m), scaled units): {:.4e}",
        fit.identifiability.observability
    );
    let _ = writeln!(s, "condition number: {:.3e}", fit.identifiability.condition);
    if per_point {
        let _ = writeln!(s, "\npoint,before_mm,after_mm");
        let b = model::per_point(mode, &fit.before);
        let a = model::per_point(mode, &fit.after);
        for (k, (b, a)) in b.iter().zip(&a).enumerate() {
            let _ = writeln!(s, "{},{b:.5},{a:.5}", k + 1);
        }
    }
    let _ = writeln!(s, "\nverdict: {}", verdict(fit, noise_mm));
    s
}

/// Every figure as JSON.
#[must_use]
pub fn json(fit: &Fit, noise_mm: f64) -> serde_json::Value {
    let mode = fit.mode;
    let params: Vec<serde_json::Value> = (0..fit.params.len())
        .map(|k| {
            serde_json::json!({
                "name": model::name(mode, k),
                "value": printed(mode, k, fit.params[k]),
                "std_dev": printed(mode, k, fit.std_dev[k]),
            })
        })
        .collect();
    serde_json::json!({
        "mode": match mode { model::Mode::Position => "position", model::Mode::Probe => "probe" },
        "points": fit.before.len() / mode.components(),
        "parameters_fitted": fit.fitted,
        "noise_mm": noise_mm,
        "rms_before_mm": model::rms(&fit.before),
        "worst_before_mm": worst(&fit.before, mode),
        "rms_after_mm": fit.rms_after(),
        "worst_after_mm": worst(&fit.after, mode),
        "per_point_before_mm": model::per_point(mode, &fit.before),
        "per_point_after_mm": model::per_point(mode, &fit.after),
        "chi_square": fit.chi_square(noise_mm),
        "degrees_of_freedom": fit.dof(),
        "parameters": params,
        "held_at_nominal": fit.held,
        "singular_values": fit.identifiability.singular_values,
        "observability_index_o1": fit.identifiability.observability,
        "condition_number": fit.identifiability.condition,
        "converged": fit.converged,
        "accepted": fit.accepted(noise_mm),
        "verdict": verdict(fit, noise_mm),
    })
}

/// The robot file `original` (TOML text) with `[arm_corrections]`
/// replaced by the fitted per-arm parameters (mm and deg).
///
/// # Errors
/// The original text is not TOML.
pub fn calibrated_robot(original: &str, fit: &Fit) -> Result<String, String> {
    let mut table: toml::Table = original.parse().map_err(|e: toml::de::Error| e.to_string())?;
    let mut corr = toml::Table::new();
    for (j, key) in model::ARM_PARAMETER_NAMES.iter().enumerate() {
        let values: Vec<toml::Value> = (0..3)
            .map(|i| toml::Value::Float(printed(fit.mode, PER_ARM * i + j, fit.params[PER_ARM * i + j])))
            .collect();
        corr.insert((*key).to_owned(), toml::Value::Array(values));
    }
    debug_assert_eq!(corr.len() * 3, ARM_PARAMETERS);
    table.insert("arm_corrections".to_owned(), toml::Value::Table(corr));
    toml::to_string(&table).map_err(|e| e.to_string())
}
