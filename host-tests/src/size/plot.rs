//! The torque-speed picture: every sample of the cycle at the motor shaft
//! (|speed|, |torque|) per arm, each arm's RMS torque at its mean speed,
//! against the motor's envelope: the rated (continuous) torque up to the
//! rated speed, the peak torque until the supply voltage limits it
//! (`t = k_t (V - k_e w) / R`, steady state), and the maximum speed. The
//! envelope drawn is arm 0's drive (the report names any arm whose drive
//! differs). SVG.

use std::path::Path;

use plotters::prelude::*;

use super::verdict::ArmFigures;
use crate::drive::{ArmDrive, Drive};

/// Arm colours: deltakin's own (deep blue, amber, plum), told apart by
/// marker shape too (circle, triangle, square), so they survive the
/// common colour-vision deficiencies and greyscale printing.
const ARM_COLOURS: [RGBColor; 3] = [RGBColor(24, 96, 160), RGBColor(214, 124, 0), RGBColor(150, 50, 130)];
/// The peak envelope.
const PEAK: RGBColor = RGBColor(40, 40, 40);
/// The rated (continuous) line.
const RATED: RGBColor = RGBColor(120, 120, 120);
/// Cells of the thinning grid across and up (about 2 px each).
const GRID: (f64, f64) = (400.0, 240.0);
/// rad/s to rpm.
const RPM_PER_RAD_S: f64 = 30.0 / std::f64::consts::PI;
/// N*m to N*mm.
const NMM_PER_NM: f64 = 1e3;

/// The peak envelope (rpm, N*mm): peak torque, the voltage line, the
/// maximum speed.
fn peak_envelope(d: &ArmDrive) -> Vec<(f64, f64)> {
    let m = &d.motor;
    let max_speed = m.max_speed.min(d.gearbox.max_input_speed);
    let voltage_torque = |w: f64| (m.torque_constant * (m.supply_voltage - m.back_emf * w) / m.resistance).max(0.0);
    let corner = ((m.supply_voltage - m.resistance * m.peak_torque / m.torque_constant) / m.back_emf).max(0.0);
    let mut pts = vec![(0.0, m.peak_torque)];
    if corner < max_speed {
        pts.push((corner, m.peak_torque));
        pts.push((max_speed, voltage_torque(max_speed)));
    } else {
        pts.push((max_speed, m.peak_torque));
    }
    pts.push((max_speed, 0.0));
    pts.into_iter().map(|(w, t)| (w * RPM_PER_RAD_S, t * NMM_PER_NM)).collect()
}

/// Writes the picture to `path`; `title` names the cycle.
///
/// # Errors
/// The drawing backend's message.
pub fn torque_speed(path: &Path, title: &str, figures: &[ArmFigures; 3], drive: &Drive) -> Result<(), String> {
    let d = &drive.arms[0];
    let envelope = peak_envelope(d);
    let top_speed = figures.iter().map(|f| f.peak_speed).fold(d.motor.max_speed, f64::max) * RPM_PER_RAD_S * 1.05;
    let top_torque = figures.iter().map(|f| f.peak_torque).fold(d.motor.peak_torque, f64::max) * NMM_PER_NM * 1.25;
    let root = SVGBackend::new(path, (900, 560)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    let mut chart = ChartBuilder::on(&root)
        .caption(title, ("sans-serif", 18))
        .margin(15)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..top_speed, 0.0..top_torque)
        .map_err(|e| e.to_string())?;
    chart
        .configure_mesh()
        .x_desc("motor speed |w| (rpm)")
        .x_label_formatter(&|x| format!("{x:.0}"))
        .y_label_formatter(&|y| format!("{y:.0}"))
        .y_desc("motor shaft torque |t| (N*mm)")
        .label_style(("sans-serif", 15))
        .light_line_style(RGBColor(235, 235, 235))
        .draw()
        .map_err(|e| e.to_string())?;
    for (arm, f) in figures.iter().enumerate() {
        let colour = ARM_COLOURS[arm];
        // One point per cell of a fine grid (about 2 px): every extreme
        // stays, the file stays small.
        let mut seen = std::collections::HashSet::new();
        let pts: Vec<(f64, f64)> = f
            .shaft
            .iter()
            .map(|s| (s.speed.abs() * RPM_PER_RAD_S, s.torque.abs() * NMM_PER_NM))
            .filter(|&(w, t)| {
                #[allow(clippy::cast_possible_truncation)] // cell indices far below i64's range
                seen.insert(((w / top_speed * GRID.0).round() as i64, (t / top_torque * GRID.1).round() as i64))
            })
            .collect();
        let style = colour.mix(0.55).filled();
        let label = format!("arm {arm}: samples of the cycle");
        match arm {
            0 => {
                chart
                    .draw_series(pts.iter().map(|&p| Circle::new(p, 2, style)))
                    .map_err(|e| e.to_string())?
                    .label(label)
                    .legend(move |(x, y)| Circle::new((x, y), 4, colour.filled()));
            }
            1 => {
                chart
                    .draw_series(pts.iter().map(|&p| TriangleMarker::new(p, 3, style)))
                    .map_err(|e| e.to_string())?
                    .label(label)
                    .legend(move |(x, y)| TriangleMarker::new((x, y), 5, colour.filled()));
            }
            _ => {
                chart
                    .draw_series(pts.iter().map(|&p| EmptyElement::at(p) + Rectangle::new([(-2, -2), (2, 2)], style)))
                    .map_err(|e| e.to_string())?
                    .label(label)
                    .legend(move |(x, y)| Rectangle::new([(x - 4, y - 4), (x + 4, y + 4)], colour.filled()));
            }
        }
    }
    for (arm, f) in figures.iter().enumerate() {
        let colour = ARM_COLOURS[arm];
        let p = (f.mean_speed * RPM_PER_RAD_S, f.rms_torque * NMM_PER_NM);
        chart
            .draw_series(std::iter::once(Cross::new(p, 9, colour.stroke_width(3))))
            .map_err(|e| e.to_string())?
            .label(format!("arm {arm}: RMS torque at mean speed"))
            .legend(move |(x, y)| Cross::new((x, y), 6, colour.stroke_width(3)));
    }
    chart
        .draw_series(LineSeries::new(envelope, PEAK.stroke_width(2)))
        .map_err(|e| e.to_string())?
        .label("motor peak torque, supply-voltage limit, maximum speed")
        .legend(|(x, y)| PathElement::new([(x - 10, y), (x + 10, y)], PEAK.stroke_width(2)));
    let rated = d.motor.rated_torque * NMM_PER_NM;
    let rated_rpm = d.motor.rated_speed * RPM_PER_RAD_S;
    chart
        .draw_series(DashedLineSeries::new(
            [(0.0, rated), (rated_rpm, rated), (rated_rpm, 0.0)],
            8,
            5,
            RATED.stroke_width(2),
        ))
        .map_err(|e| e.to_string())?
        .label("motor rated (continuous) torque up to rated speed")
        .legend(|(x, y)| PathElement::new([(x - 10, y), (x + 10, y)], RATED.stroke_width(2)));
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::MiddleRight)
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(180, 180, 180))
        .label_font(("sans-serif", 14))
        .draw()
        .map_err(|e| e.to_string())?;
    root.present().map_err(|e| e.to_string())
}
