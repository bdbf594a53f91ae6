//! The measurement CSV.
//!
//! Header `theta0_deg,theta1_deg,theta2_deg,x_mm,y_mm,z_mm` (position
//! mode) or `theta0_deg,theta1_deg,theta2_deg,z_mm` (probe mode), in any
//! column order. Joint readings as the encoders give them, before any
//! offset. Blank lines are skipped; a row that is not finite numbers is
//! reported with its line number (the header is line 1).

use super::model::{Mode, Point};

/// Why a measurement file was refused.
#[derive(Clone, Debug, PartialEq)]
pub enum MeasurementError {
    /// The header lacks a column or has only one of `x_mm`, `y_mm`.
    Header(String),
    /// Rows that are not numbers: line numbers.
    BadRows(Vec<usize>),
}

impl std::fmt::Display for MeasurementError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            MeasurementError::Header(m) => write!(f, "{m}"),
            MeasurementError::BadRows(lines) => {
                let l: Vec<String> = lines.iter().map(ToString::to_string).collect();
                write!(f, "bad rows (not finite numbers) on line(s) {}", l.join(", "))
            }
        }
    }
}

/// Parses measurement CSV text into its mode and points.
///
/// # Errors
/// A wrong header, or the line numbers of every bad row.
pub fn parse(text: &str) -> Result<(Mode, Vec<Point>), MeasurementError> {
    let mut lines = text.lines().enumerate().filter(|(_, l)| !l.trim().is_empty());
    let Some((_, header)) = lines.next() else {
        return Err(MeasurementError::Header(
            "empty file: expected a header theta0_deg,theta1_deg,theta2_deg,x_mm,y_mm,z_mm".into(),
        ));
    };
    let cols: Vec<&str> = header.split(',').map(str::trim).collect();
    let find = |name: &str| cols.iter().position(|c| *c == name);
    let joints = ["theta0_deg", "theta1_deg", "theta2_deg"].map(find);
    let (x, y, z) = (find("x_mm"), find("y_mm"), find("z_mm"));
    let (Some(j0), Some(j1), Some(j2), Some(z)) = (joints[0], joints[1], joints[2], z) else {
        return Err(MeasurementError::Header(format!(
            "header {header:?}: needs theta0_deg,theta1_deg,theta2_deg and z_mm (and x_mm,y_mm for a position instrument)"
        )));
    };
    let mode = match (x, y) {
        (Some(_), Some(_)) => Mode::Position,
        (None, None) => Mode::Probe,
        _ => return Err(MeasurementError::Header("x_mm and y_mm go together (or both absent for probe mode)".into())),
    };
    let mut points = Vec::new();
    let mut bad = Vec::new();
    for (index, line) in lines {
        let fields: Vec<&str> = line.split(',').map(str::trim).collect();
        let get = |c: Option<usize>| -> Option<f64> {
            c.map_or(Some(0.0), |c| fields.get(c).and_then(|s| s.parse::<f64>().ok()).filter(|v| v.is_finite()))
        };
        let values = [get(Some(j0)), get(Some(j1)), get(Some(j2)), get(x), get(y), get(Some(z))];
        if fields.len() != cols.len() || values.iter().any(Option::is_none) {
            bad.push(index + 1);
            continue;
        }
        let v = values.map(|v| v.unwrap_or(0.0));
        points.push(Point { joints: [v[0], v[1], v[2]].map(f64::to_radians), measured: [v[3], v[4], v[5]] });
    }
    if bad.is_empty() { Ok((mode, points)) } else { Err(MeasurementError::BadRows(bad)) }
}

/// Writes points as measurement CSV (17 significant digits).
#[must_use]
pub fn write(mode: Mode, points: &[Point]) -> String {
    let mut s = String::from(match mode {
        Mode::Position => "theta0_deg,theta1_deg,theta2_deg,x_mm,y_mm,z_mm\n",
        Mode::Probe => "theta0_deg,theta1_deg,theta2_deg,z_mm\n",
    });
    for p in points {
        let j = p.joints.map(f64::to_degrees);
        let m = p.measured;
        match mode {
            Mode::Position => s += &format!("{:e},{:e},{:e},{:e},{:e},{:e}\n", j[0], j[1], j[2], m[0], m[1], m[2]),
            Mode::Probe => s += &format!("{:e},{:e},{:e},{:e}\n", j[0], j[1], j[2], m[2]),
        }
    }
    s
}
