//! Independent f64 reference (to be written): shares no algebra with the core.
use deltakin::Geometry;

/// Elbow-out joint angles (rad) for platform centre `p` (mm), or `None`.
#[must_use]
pub fn inverse(_g: &Geometry<f64>, _p: [f64; 3]) -> Option<[f64; 3]> {
    None
}

/// Lower-branch platform centre (mm) for joint angles (rad), or `None`.
#[must_use]
pub fn forward(_g: &Geometry<f64>, _theta: [f64; 3]) -> Option<[f64; 3]> {
    None
}
