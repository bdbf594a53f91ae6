//! Residuals per point before and after the fit, as SVG.

use std::path::Path;

use plotters::prelude::*;

use super::fit::Fit;
use super::model;

/// Colour of the residuals before the fit (orange; not one of the
/// report's arm or shade colours).
const BEFORE: RGBColor = RGBColor(230, 97, 1);
/// Colour of the residuals after the fit (purple).
const AFTER: RGBColor = RGBColor(94, 60, 153);

/// Factor above the largest residual that leaves room for the legend.
const LEGEND_HEADROOM: f64 = 6.0;

/// Writes the plot to `path`.
///
/// # Errors
/// The drawing backend's message.
pub fn residuals(path: &Path, fit: &Fit, noise_mm: f64) -> Result<(), String> {
    let before = model::per_point(fit.mode, &fit.before);
    let after = model::per_point(fit.mode, &fit.after);
    let top = before.iter().chain(&after).copied().fold(noise_mm, f64::max) * LEGEND_HEADROOM;
    let (lo, hi) = (top * 1e-4_f64.max(after.iter().copied().fold(f64::INFINITY, f64::min) / top / 2.0), top);
    let root = SVGBackend::new(path, (900, 500)).into_drawing_area();
    root.fill(&WHITE).map_err(|e| e.to_string())?;
    let n = before.len().max(1);
    let mut chart = ChartBuilder::on(&root)
        .caption("Residual per measured point, before and after calibration", ("sans-serif", 18))
        .margin(15)
        .x_label_area_size(40)
        .y_label_area_size(70)
        .build_cartesian_2d(0.5..(n as f64 + 0.5), (lo..hi).log_scale())
        .map_err(|e| e.to_string())?;
    chart
        .configure_mesh()
        .x_desc("measured point")
        .x_label_formatter(&|x| format!("{x:.0}"))
        .y_desc("residual length per point (mm, log scale)")
        .label_style(("sans-serif", 15))
        .draw()
        .map_err(|e| e.to_string())?;
    for (values, colour, label) in [(&before, BEFORE, "before (nominal model)"), (&after, AFTER, "after (calibrated)")]
    {
        chart
            .draw_series(
                values.iter().enumerate().map(|(k, v)| Circle::new(((k + 1) as f64, v.max(lo)), 4, colour.filled())),
            )
            .map_err(|e| e.to_string())?
            .label(label)
            .legend(move |(x, y)| Circle::new((x, y), 4, colour.filled()));
    }
    chart
        .draw_series(LineSeries::new([(0.5, noise_mm), (n as f64 + 0.5, noise_mm)], BLACK.stroke_width(1)))
        .map_err(|e| e.to_string())?
        .label("stated instrument noise (per component)")
        .legend(|(x, y)| PathElement::new([(x - 10, y), (x + 10, y)], BLACK));
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.9))
        .border_style(BLACK)
        .label_font(("sans-serif", 15))
        .position(SeriesLabelPosition::UpperRight)
        .draw()
        .map_err(|e| e.to_string())?;
    root.present().map_err(|e| e.to_string())
}
