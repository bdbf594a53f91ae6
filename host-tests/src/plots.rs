//! SVG plots for `deltakin report --plots DIR`, drawn with `plotters`'
//! SVG backend: text is written as SVG `<text>` elements (no font files,
//! no C libraries).
//!
//! * `workspace_xy.svg`: four horizontal slices of the workspace, each
//!   cell shaded by the smaller normalised singularity margin (the serial
//!   and parallel margins divided by their configured minimums, so 1 is
//!   the guard boundary), with the usable cylinder and the ISO 9283 test
//!   cube drawn where they cross the slice.
//! * `workspace_xz.svg`: the vertical section y = 0, shaded the same way,
//!   with the cylinder and the cube.
//! * `error_map_f32_ik.svg`: the f32 guarded IK's joint-angle error against
//!   the independent reference over the horizontal slice through the test
//!   cube's centre.
//! * `pick_joint_angles.svg`, `pick_joint_speeds.svg`: the demo pick cycle
//!   (`examples/demo_moves.toml`, 1 kHz, f64) against the joint range and
//!   the joint speed limit.

use std::path::Path;

use deltakin::{Geometry, Robot};
use plotters::coord::Shift;
use plotters::prelude::*;
use rayon::prelude::*;

use crate::config::RobotFile;
use crate::plan;
use crate::reference::{self, PerArmMachine};
use crate::sweep::{Density, geometry_box, snap_f32};
use crate::volume::UsableVolume;

type PlotResult<T> = Result<T, Box<dyn std::error::Error>>;

/// A run of equal cells: first centre, last centre, colour.
type Run = ((f64, f64), (f64, f64), RGBColor);

/// Body text (px).
const FONT: u32 = 15;
/// Caption text (px).
const CAPTION: u32 = 18;
/// Colour of a cell no guard accepts.
const REJECTED: RGBColor = RGBColor(225, 225, 225);
/// Shades from worst to best.
const SHADES: [RGBColor; 6] = [
    RGBColor(215, 48, 39),
    RGBColor(252, 141, 89),
    RGBColor(254, 224, 139),
    RGBColor(217, 239, 139),
    RGBColor(145, 207, 96),
    RGBColor(26, 152, 80),
];
/// Bin edges of the normalised margin (1 is the guard boundary).
const MARGIN_EDGES: [f64; 5] = [2.0, 3.0, 4.0, 5.0, 7.0];
/// Colours of the three arms.
const ARMS: [RGBColor; 3] = [RGBColor(31, 119, 180), RGBColor(214, 39, 40), RGBColor(44, 160, 44)];
/// Rate of the pick-cycle run (Hz).
const PICK_RATE_HZ: f64 = 1000.0;

/// Which bin of `edges` (ascending) `v` falls in: 0 below the first edge.
fn bin(v: f64, edges: &[f64]) -> usize {
    edges.iter().take_while(|&&e| v >= e).count()
}

/// Smaller normalised margin of the guarded f64 solve at `p`, or `None`
/// when a guard rejects it.
fn normalised_margin(robot: &Robot<f64>, p: [f64; 3]) -> Option<f64> {
    let s = robot.inverse(p).ok()?;
    let l = robot.limits();
    let serial = s.margins.serial.iter().copied().fold(f64::INFINITY, f64::min);
    Some((serial / l.min_serial_margin).min(s.margins.parallel / l.min_parallel_margin))
}

fn margin_labels() -> Vec<String> {
    let e = MARGIN_EDGES;
    vec![
        format!("1 to {} x the minimum", e[0]),
        format!("{} to {} x", e[0], e[1]),
        format!("{} to {} x", e[1], e[2]),
        format!("{} to {} x", e[2], e[3]),
        format!("{} to {} x", e[3], e[4]),
        format!("{} x or more", e[4]),
    ]
}

/// A legend of coloured boxes and lines, drawn into its own area.
fn legend(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    title: &str,
    boxes: &[(RGBColor, String)],
    lines: &[(RGBColor, &str)],
) -> PlotResult<()> {
    let font = ("sans-serif", FONT).into_font();
    area.draw(&Text::new(title.to_owned(), (10, 20), ("sans-serif", FONT + 1).into_font()))?;
    let mut y = 48;
    for (c, label) in boxes {
        area.draw(&Rectangle::new([(10, y - 8), (32, y + 8)], c.filled()))?;
        area.draw(&Rectangle::new([(10, y - 8), (32, y + 8)], BLACK.stroke_width(1)))?;
        area.draw(&Text::new(label.clone(), (40, y - 7), font.clone()))?;
        y += 26;
    }
    y += 10;
    for (c, label) in lines {
        area.draw(&PathElement::new(vec![(10, y), (32, y)], c.stroke_width(3)))?;
        area.draw(&Text::new((*label).to_owned(), (40, y - 7), font.clone()))?;
        y += 26;
    }
    Ok(())
}

/// The chart type of the shaded maps: mm on both axes.
type MapChart<'a, DB> =
    ChartContext<'a, DB, Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>>;

/// Axes of a shaded map: no grid lines (the cells fill the area), the
/// axis names in words with their units.
fn map_axes<DB: DrawingBackend>(chart: &mut MapChart<'_, DB>, x_desc: &str, y_desc: &str) -> PlotResult<()>
where
    DB::ErrorType: 'static,
{
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .label_style(("sans-serif", FONT - 2))
        .axis_desc_style(("sans-serif", FONT))
        .draw()?;
    Ok(())
}

/// A shaded cell per grid point; runs of equal colour along a row or a
/// column (consecutive in `values`) are drawn as one rectangle, which
/// keeps the SVG small.
fn cells<DB: DrawingBackend>(
    chart: &mut MapChart<'_, DB>,
    values: &[((f64, f64), RGBColor)],
    half: (f64, f64),
) -> PlotResult<()>
where
    DB::ErrorType: 'static,
{
    // Neighbours are one cell (2 half-widths) apart; allow rounding.
    const NEXT_TOL: f64 = 1e-6;
    // (first cell, last cell, colour) of each run.
    let mut runs: Vec<Run> = Vec::new();
    for &(p, c) in values {
        if let Some(last) = runs.last_mut() {
            let (first, end, colour) = *last;
            let along_b = first.0 == p.0 && end.0 == p.0 && (p.1 - end.1 - 2.0 * half.1).abs() <= NEXT_TOL * half.1;
            let along_a = first.1 == p.1 && end.1 == p.1 && (p.0 - end.0 - 2.0 * half.0).abs() <= NEXT_TOL * half.0;
            if colour == c && (along_a || along_b) {
                last.1 = p;
                continue;
            }
        }
        runs.push((p, p, c));
    }
    chart
        .draw_series(runs.iter().map(|&(a, b, c)| {
            Rectangle::new(
                [(a.0.min(b.0) - half.0, a.1.min(b.1) - half.1), (a.0.max(b.0) + half.0, a.1.max(b.1) + half.1)],
                c.filled(),
            )
        }))
        .map_err(|e| e.to_string())?;
    Ok(())
}

/// `n` evenly spaced values over `[lo, hi]`.
fn span(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    #[allow(clippy::cast_precision_loss)]
    (0..n).map(|i| lo + (hi - lo) * i as f64 / (n - 1).max(1) as f64).collect()
}

fn margin_colour(m: Option<f64>) -> RGBColor {
    m.map_or(REJECTED, |m| SHADES[bin(m, &MARGIN_EDGES)])
}

/// Plot extents: half-width of the square xy view and the z range (mm).
struct View {
    half: f64,
    z: (f64, f64),
}

fn view(robot: &Robot<f64>, usable: Option<&UsableVolume>) -> View {
    // Scan the geometry box coarsely for the accepted extent, pad by a cell.
    let b = geometry_box(robot.geometry(), robot.limits());
    let n: u32 = 48;
    let xs = span(b.lo[0], b.hi[0], n as usize);
    let zs = span(b.lo[2], b.hi[2], n as usize);
    let hits: Vec<[f64; 3]> = zs
        .par_iter()
        .flat_map_iter(|&z| {
            let xs = &xs;
            xs.iter().flat_map(move |&x| xs.iter().map(move |&y| [x, y, z])).filter(|p| robot.inverse(*p).is_ok())
        })
        .collect();
    let cell = (b.hi[0] - b.lo[0]) / f64::from(n - 1);
    let zcell = (b.hi[2] - b.lo[2]) / f64::from(n - 1);
    let mut half = hits.iter().map(|p| p[0].abs().max(p[1].abs())).fold(0.0, f64::max) + 2.0 * cell;
    let mut zlo = hits.iter().map(|p| p[2]).fold(f64::INFINITY, f64::min) - 2.0 * zcell;
    let mut zhi = hits.iter().map(|p| p[2]).fold(f64::NEG_INFINITY, f64::max) + 2.0 * zcell;
    if let Some(v) = usable {
        half = half.max(v.cylinder.radius_mm * 1.1);
        zlo = zlo.min(v.cylinder.z_min_mm - zcell);
        zhi = zhi.max(v.cylinder.z_max_mm + zcell);
    }
    if !zlo.is_finite() {
        (zlo, zhi) = (b.lo[2], b.hi[2]);
    }
    View { half: half.min(b.hi[0]), z: (zlo.max(b.lo[2]), zhi.min(b.hi[2])) }
}

fn circle(r: f64) -> Vec<(f64, f64)> {
    (0..=180).map(|k| std::f64::consts::TAU * f64::from(k) / 180.0).map(|a| (r * a.cos(), r * a.sin())).collect()
}

fn square(cx: f64, cy: f64, half_w: f64, half_h: f64) -> Vec<(f64, f64)> {
    vec![
        (cx - half_w, cy - half_h),
        (cx + half_w, cy - half_h),
        (cx + half_w, cy + half_h),
        (cx - half_w, cy + half_h),
        (cx - half_w, cy - half_h),
    ]
}

const CYLINDER_COLOUR: RGBColor = RGBColor(0, 0, 0);
const CUBE_COLOUR: RGBColor = RGBColor(118, 42, 131);

fn workspace_xy(path: &Path, robot: &Robot<f64>, usable: Option<&UsableVolume>, v: &View, n: usize) -> PlotResult<()> {
    let root = SVGBackend::new(path, (1300, 1060)).into_drawing_area();
    root.fill(&WHITE)?;
    let (title, rest) = root.split_vertically(40);
    title.draw(&Text::new(
        "Workspace slices at four heights, shaded by the smaller normalised singularity margin",
        (20, 12),
        ("sans-serif", CAPTION).into_font(),
    ))?;
    let (grid_area, legend_area) = rest.split_horizontally(1010);
    let heights: Vec<f64> = (1..=4).map(|k| v.z.1 - (v.z.1 - v.z.0) * f64::from(k) / 5.0).collect();
    let xs = span(-v.half, v.half, n);
    let h = 0.5 * (xs[1] - xs[0]);
    for (panel, &z) in grid_area.split_evenly((2, 2)).iter().zip(&heights) {
        let values: Vec<((f64, f64), RGBColor)> = xs
            .par_iter()
            .flat_map_iter(|&x| xs.iter().map(move |&y| ((x, y), margin_colour(normalised_margin(robot, [x, y, z])))))
            .collect();
        let mut chart = ChartBuilder::on(panel)
            .caption(format!("z = {z:.0} mm"), ("sans-serif", FONT + 1))
            .margin(8)
            .x_label_area_size(42)
            .y_label_area_size(62)
            .build_cartesian_2d(-v.half..v.half, -v.half..v.half)?;
        map_axes(&mut chart, "x (mm)", "y (mm)")?;
        cells(&mut chart, &values, (h, h))?;
        if let Some(u) = usable {
            let c = u.cylinder;
            if (c.z_min_mm..=c.z_max_mm).contains(&z) {
                chart.draw_series(LineSeries::new(circle(c.radius_mm), CYLINDER_COLOUR.stroke_width(3)))?;
            }
            let half = 0.5 * u.cube.edge_mm;
            let [cx, cy, cz] = u.cube.centre_mm;
            if (cz - half..=cz + half).contains(&z) {
                chart.draw_series(LineSeries::new(square(cx, cy, half, half), CUBE_COLOUR.stroke_width(3)))?;
            }
        }
    }
    let boxes: Vec<(RGBColor, String)> = std::iter::once((REJECTED, "rejected by a guard".to_owned()))
        .chain(SHADES.iter().copied().zip(margin_labels()))
        .collect();
    legend(
        &legend_area,
        "smaller normalised margin",
        &boxes,
        &[(CYLINDER_COLOUR, "usable cylinder"), (CUBE_COLOUR, "ISO 9283 test cube")],
    )?;
    legend_area.draw(&Text::new(
        "(margin / its minimum;".to_owned(),
        (10, 320),
        ("sans-serif", FONT - 2).into_font(),
    ))?;
    legend_area.draw(&Text::new("1 = guard boundary)".to_owned(), (10, 338), ("sans-serif", FONT - 2).into_font()))?;
    root.present()?;
    Ok(())
}

fn workspace_xz(path: &Path, robot: &Robot<f64>, usable: Option<&UsableVolume>, v: &View, n: usize) -> PlotResult<()> {
    let width_mm = 2.0 * v.half;
    let height_mm = v.z.1 - v.z.0;
    let plot_w = 900.0;
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let plot_h = (plot_w * height_mm / width_mm).clamp(300.0, 1000.0) as u32;
    let root = SVGBackend::new(path, (1200, plot_h + 120)).into_drawing_area();
    root.fill(&WHITE)?;
    let (plot_area, legend_area) = root.split_horizontally(990);
    let xs = span(-v.half, v.half, n);
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss, clippy::cast_precision_loss)]
    let nz = ((n as f64) * height_mm / width_mm).ceil().max(8.0) as usize;
    let zs = span(v.z.0, v.z.1, nz);
    let values: Vec<((f64, f64), RGBColor)> = zs
        .par_iter()
        .flat_map_iter(|&z| xs.iter().map(move |&x| ((x, z), margin_colour(normalised_margin(robot, [x, 0.0, z])))))
        .collect();
    let mut chart = ChartBuilder::on(&plot_area)
        .caption("Vertical section y = 0, shaded by the smaller normalised singularity margin", ("sans-serif", CAPTION))
        .margin(10)
        .x_label_area_size(45)
        .y_label_area_size(65)
        .build_cartesian_2d(-v.half..v.half, v.z.0..v.z.1)?;
    map_axes(&mut chart, "x (mm)", "z (mm)")?;
    cells(&mut chart, &values, (0.5 * (xs[1] - xs[0]), 0.5 * (zs[1] - zs[0])))?;
    if let Some(u) = usable {
        let c = u.cylinder;
        let mid = 0.5 * (c.z_min_mm + c.z_max_mm);
        chart.draw_series(LineSeries::new(
            square(0.0, mid, c.radius_mm, 0.5 * (c.z_max_mm - c.z_min_mm)),
            CYLINDER_COLOUR.stroke_width(3),
        ))?;
        let half = 0.5 * u.cube.edge_mm;
        chart.draw_series(LineSeries::new(
            square(u.cube.centre_mm[0], u.cube.centre_mm[2], half, half),
            CUBE_COLOUR.stroke_width(3),
        ))?;
    }
    let boxes: Vec<(RGBColor, String)> = std::iter::once((REJECTED, "rejected by a guard".to_owned()))
        .chain(SHADES.iter().copied().zip(margin_labels()))
        .collect();
    legend(
        &legend_area,
        "smaller normalised margin",
        &boxes,
        &[(CYLINDER_COLOUR, "usable cylinder"), (CUBE_COLOUR, "ISO 9283 test cube")],
    )?;
    root.present()?;
    Ok(())
}

fn geometry_as_f64(g: &Geometry<f32>) -> Geometry<f64> {
    Geometry {
        base_radius: f64::from(g.base_radius),
        platform_radius: f64::from(g.platform_radius),
        upper_arm: f64::from(g.upper_arm),
        lower_arm: f64::from(g.lower_arm),
    }
}

/// Joint-angle error (rad) of the guarded f32 IK at `p` (f32-rounded)
/// against the reference on the f32-rounded dimensions; `None` when the
/// f64 or the f32 guard rejects the point or the reference finds nothing.
fn f32_ik_error(r64: &Robot<f64>, r32: &Robot<f32>, g32: &PerArmMachine, p: [f64; 3]) -> Option<f64> {
    let p = snap_f32(p);
    r64.inverse(p).ok()?;
    #[allow(clippy::cast_possible_truncation)]
    let s = r32.inverse(p.map(|v| v as f32)).ok()?;
    let want = reference::inverse(g32, p)?;
    Some((0..3).map(|k| (f64::from(s.joints[k]) - want[k]).abs()).fold(0.0, f64::max))
}

fn error_map(
    path: &Path,
    file: &RobotFile,
    usable: Option<&UsableVolume>,
    v: &View,
    n: usize,
    bound_rad: f64,
) -> PlotResult<()> {
    let r64 = file.robot::<f64>()?;
    let r32 = file.robot::<f32>()?;
    let corrections32 = file.corrections_as_held::<f32>().unwrap_or_else(|| file.corrections_f64());
    let g32 = PerArmMachine::new(&geometry_as_f64(r32.geometry()), &corrections32);
    let z = usable.map_or(0.5 * (v.z.0 + v.z.1), |u| u.cube.centre_mm[2]);
    let xs = span(-v.half, v.half, n);
    let bar = crate::progress::bar(n * n, "error map (reference IK)");
    let errors: Vec<((f64, f64), Option<f64>)> = xs
        .par_iter()
        .flat_map_iter(|&x| {
            let (r64, r32, g32, bar) = (&r64, &r32, &g32, &bar);
            xs.iter().map(move |&y| {
                bar.inc(1);
                ((x, y), f32_ik_error(r64, r32, g32, [x, y, z]))
            })
        })
        .collect();
    bar.finish_and_clear();
    // Fractions of the bound: 0.5 %, 1 %, 2 %, 5 %, 10 %, 100 %.
    let edges = [0.005, 0.01, 0.02, 0.05, 0.1, 1.0].map(|f| f * bound_rad);
    let colours = [
        RGBColor(247, 251, 255),
        RGBColor(198, 219, 239),
        RGBColor(107, 174, 214),
        RGBColor(49, 130, 189),
        RGBColor(8, 81, 156),
        RGBColor(8, 48, 107),
        RGBColor(215, 48, 39),
    ];
    let values: Vec<((f64, f64), RGBColor)> =
        errors.iter().map(|&(at, e)| (at, e.map_or(REJECTED, |e| colours[bin(e, &edges)]))).collect();
    let worst = errors.iter().filter_map(|e| e.1).fold(0.0, f64::max);
    let root = SVGBackend::new(path, (1300, 1000)).into_drawing_area();
    root.fill(&WHITE)?;
    let (plot_area, legend_area) = root.split_horizontally(960);
    let mut chart = ChartBuilder::on(&plot_area)
        .caption(
            format!("f32 guarded IK error against the reference, slice z = {z:.1} mm (worst {:.3} µrad)", worst * 1e6),
            ("sans-serif", CAPTION),
        )
        .margin(10)
        .x_label_area_size(45)
        .y_label_area_size(65)
        .build_cartesian_2d(-v.half..v.half, -v.half..v.half)?;
    map_axes(&mut chart, "x (mm)", "y (mm)")?;
    let h = 0.5 * (xs[1] - xs[0]);
    cells(&mut chart, &values, (h, h))?;
    let mut lines = Vec::new();
    if let Some(u) = usable {
        let half = 0.5 * u.cube.edge_mm;
        chart.draw_series(LineSeries::new(
            square(u.cube.centre_mm[0], u.cube.centre_mm[1], half, half),
            CUBE_COLOUR.stroke_width(3),
        ))?;
        lines.push((CUBE_COLOUR, "ISO 9283 test cube"));
    }
    let us = |v: f64| format!("{:.3}", v * 1e6);
    let labels = [
        format!("below {} µrad", us(edges[0])),
        format!("{} to {} µrad", us(edges[0]), us(edges[1])),
        format!("{} to {} µrad", us(edges[1]), us(edges[2])),
        format!("{} to {} µrad", us(edges[2]), us(edges[3])),
        format!("{} to {} µrad", us(edges[3]), us(edges[4])),
        format!("{} to {} µrad (bound)", us(edges[4]), us(edges[5])),
        format!("over the bound, {} µrad", us(edges[5])),
    ];
    let boxes: Vec<(RGBColor, String)> =
        std::iter::once((REJECTED, "rejected by a guard".to_owned())).chain(colours.into_iter().zip(labels)).collect();
    legend(&legend_area, "largest joint-angle error of the 3 arms", &boxes, &lines)?;
    root.present()?;
    Ok(())
}

/// The pick cycle's rows: time (s), joints (deg), joint rates (deg/s),
/// and the run's speed limits (deg/s).
type Profile = (Vec<(f64, [f64; 3], [f64; 3])>, [f64; 3]);

fn pick_profile(file: &RobotFile) -> Result<Profile, String> {
    let mut csv = Vec::new();
    let summary = plan::run(file, plan::DEMO_MOVES_TOML, PICK_RATE_HZ, crate::cli::ScalarKind::F64, &mut csv)
        .map_err(|e| e.to_string())?;
    let text = String::from_utf8(csv).map_err(|e| e.to_string())?;
    let mut rows = Vec::new();
    for line in text.lines().skip(1) {
        let v: Vec<f64> = line.split(',').map(|f| f.parse().unwrap_or(f64::NAN)).collect();
        if v.len() == 10 {
            rows.push((v[0], [v[4], v[5], v[6]], [v[7], v[8], v[9]]));
        }
    }
    Ok((rows, summary.speed_limit_deg_s))
}

fn profile_chart(
    path: &Path,
    caption: &str,
    y_desc: &str,
    series: &[Vec<(f64, f64)>; 3],
    limits: &[(f64, &str)],
) -> PlotResult<()> {
    let t_end = series[0].last().map_or(1.0, |p| p.0);
    let values = series.iter().flatten().map(|p| p.1).chain(limits.iter().map(|l| l.0));
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    let pad = 0.06 * (hi - lo).max(1.0);
    let root = SVGBackend::new(path, (1200, 640)).into_drawing_area();
    root.fill(&WHITE)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(caption, ("sans-serif", CAPTION))
        .margin(12)
        .x_label_area_size(45)
        .y_label_area_size(75)
        .build_cartesian_2d(0.0..t_end, (lo - pad)..(hi + pad))?;
    chart
        .configure_mesh()
        .x_desc("time (s)")
        .y_desc(y_desc)
        .label_style(("sans-serif", FONT - 2))
        .axis_desc_style(("sans-serif", FONT))
        .light_line_style(WHITE)
        .draw()?;
    for (arm, s) in series.iter().enumerate() {
        chart
            .draw_series(LineSeries::new(s.iter().copied(), ARMS[arm].stroke_width(2)))?
            .label(format!("arm {arm}"))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], ARMS[arm].stroke_width(3)));
    }
    let limit_colour = RGBColor(90, 90, 90);
    for (i, &(value, label)) in limits.iter().enumerate() {
        let anno = chart.draw_series(DashedLineSeries::new(
            vec![(0.0, value), (t_end, value)],
            8,
            5,
            limit_colour.stroke_width(2),
        ))?;
        // One legend entry per distinct label.
        if limits[..i].iter().all(|l| l.1 != label) {
            anno.label(label)
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], limit_colour.stroke_width(2)));
        }
    }
    chart
        .configure_series_labels()
        .label_font(("sans-serif", FONT))
        .background_style(WHITE.mix(0.9))
        .border_style(BLACK)
        .position(SeriesLabelPosition::UpperRight)
        .draw()?;
    root.present()?;
    Ok(())
}

/// Writes every plot into `dir` and returns each file name with what it
/// shows. The pick-cycle plots are skipped, with the reason as the entry,
/// when the demo moves do not run on this robot. The error map's bins
/// are fractions of `f32_joint_bound_rad`.
///
/// # Errors
/// A message when a plot cannot be drawn or written.
pub fn write_all(
    dir: &Path,
    file: &RobotFile,
    usable: Option<&UsableVolume>,
    ik: Density,
    f32_joint_bound_rad: f64,
) -> Result<Vec<(String, String)>, String> {
    let robot = file.robot::<f64>().map_err(|e| e.to_string())?;
    let v = view(&robot, usable);
    let n = (5 * ik.grid).clamp(40, 160);
    let n_err = (2 * ik.grid).clamp(12, 64);
    fn fail(what: &'static str) -> impl Fn(Box<dyn std::error::Error>) -> String {
        move |e| format!("cannot draw {what}: {e}")
    }
    let mut out = Vec::new();
    let name = "workspace_xy.svg";
    workspace_xy(&dir.join(name), &robot, usable, &v, n).map_err(fail(name))?;
    out.push((name.to_owned(), "four horizontal workspace slices shaded by the smaller normalised margin, with the usable cylinder and test cube".to_owned()));
    let name = "workspace_xz.svg";
    workspace_xz(&dir.join(name), &robot, usable, &v, n).map_err(fail(name))?;
    out.push((
        name.to_owned(),
        "vertical section y = 0 shaded by the smaller normalised margin, with the cylinder and cube".to_owned(),
    ));
    let name = "error_map_f32_ik.svg";
    error_map(&dir.join(name), file, usable, &v, n_err, f32_joint_bound_rad).map_err(fail(name))?;
    out.push((
        name.to_owned(),
        "f32 guarded IK joint-angle error against the reference over the slice through the cube centre".to_owned(),
    ));
    match pick_profile(file) {
        Ok((rows, speed_limits)) => {
            let l = &file.limits;
            let (jmin, jmax) = (l.joint_min_deg.values(), l.joint_max_deg.values());
            let angles = [0, 1, 2].map(|k| rows.iter().map(|r| (r.0, r.1[k])).collect::<Vec<_>>());
            let speeds = [0, 1, 2].map(|k| rows.iter().map(|r| (r.0, r.2[k])).collect::<Vec<_>>());
            let mut angle_limits: Vec<(f64, &str)> = jmin.iter().map(|&v| (v, "joint range")).collect();
            angle_limits.extend(jmax.iter().map(|&v| (v, "joint range")));
            let mut speed_limits_v: Vec<(f64, &str)> = speed_limits.iter().map(|&v| (v, "joint speed limit")).collect();
            speed_limits_v.extend(speed_limits.iter().map(|&v| (-v, "joint speed limit")));
            let name = "pick_joint_angles.svg";
            profile_chart(
                &dir.join(name),
                "Demo pick cycle: joint angles against the joint range (1 kHz, f64)",
                "joint angle (deg)",
                &angles,
                &angle_limits,
            )
            .map_err(fail(name))?;
            out.push((name.to_owned(), "joint angles of the demo pick cycle against the joint range".to_owned()));
            let name = "pick_joint_speeds.svg";
            profile_chart(
                &dir.join(name),
                "Demo pick cycle: joint speeds against the speed limit (1 kHz, f64)",
                "joint speed (deg/s)",
                &speeds,
                &speed_limits_v,
            )
            .map_err(fail(name))?;
            out.push((name.to_owned(), "joint speeds of the demo pick cycle against the joint speed limit".to_owned()));
        }
        Err(e) => out
            .push(("-".to_owned(), format!("pick-cycle plots skipped: the demo moves do not run on this robot ({e})"))),
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bins_split_at_their_edges() {
        assert_eq!(bin(0.5, &MARGIN_EDGES), 0);
        assert_eq!(bin(2.0, &MARGIN_EDGES), 1);
        assert_eq!(bin(4.9, &MARGIN_EDGES), 3);
        assert_eq!(bin(50.0, &MARGIN_EDGES), 5);
        assert_eq!(margin_labels().len(), SHADES.len());
    }
}
