//! Small statistics for the report: the largest value with where it
//! occurred, and a percentile by the nearest-rank rule.

use serde::Serialize;

/// Summary of a set of non-negative errors, each tagged with the input it
/// came from.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Summary {
    /// Number of values summarised.
    pub count: usize,
    /// The largest value (0 when there are none). NaN counts as infinite.
    pub max: f64,
    /// The input at which the largest value occurred.
    pub worst_at: Option<[f64; 3]>,
    /// The 99.9th percentile (nearest rank; 0 when there are none).
    pub p999: f64,
}

/// Maps NaN to +infinity so that a NaN error is never hidden as "small".
fn ordered(v: f64) -> f64 {
    if v.is_nan() { f64::INFINITY } else { v }
}

/// The `q`-quantile (`0 < q <= 1`) of `sorted` (ascending) by the
/// nearest-rank rule: the smallest value with at least `q * n` values at
/// or below it. 0 for an empty slice.
#[must_use]
pub fn percentile(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return 0.0;
    }
    #[allow(clippy::cast_precision_loss, clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let rank = (q * sorted.len() as f64).ceil() as usize;
    sorted[rank.clamp(1, sorted.len()) - 1]
}

/// Summarises `(value, input)` pairs: the maximum with its input (the
/// first one in order on ties, so the result is deterministic) and the
/// 99.9th percentile.
#[must_use]
pub fn summarize(samples: &[(f64, [f64; 3])]) -> Summary {
    let mut worst: Option<(f64, [f64; 3])> = None;
    for &(v, at) in samples {
        let v = ordered(v);
        if worst.is_none_or(|(w, _)| v > w) {
            worst = Some((v, at));
        }
    }
    let mut values: Vec<f64> = samples.iter().map(|&(v, _)| ordered(v)).collect();
    values.sort_by(f64::total_cmp);
    Summary {
        count: samples.len(),
        max: worst.map_or(0.0, |(v, _)| v),
        worst_at: worst.map(|(_, at)| at),
        p999: percentile(&values, 0.999),
    }
}

/// The smallest value seen and where, for margins.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Extreme {
    /// The extreme value.
    pub value: f64,
    /// The input at which it occurred.
    pub at: [f64; 3],
}

/// Keeps the smallest of a stream of values with its input (the first on
/// ties). NaN counts as the smallest possible value.
pub fn keep_min(slot: &mut Option<Extreme>, value: f64, at: [f64; 3]) {
    let value = if value.is_nan() { f64::NEG_INFINITY } else { value };
    if slot.is_none_or(|e| value < e.value) {
        *slot = Some(Extreme { value, at });
    }
}

/// Keeps the largest of a stream of values with its input (the first on
/// ties). NaN counts as the largest possible value.
pub fn keep_max(slot: &mut Option<Extreme>, value: f64, at: [f64; 3]) {
    let value = ordered(value);
    if slot.is_none_or(|e| value > e.value) {
        *slot = Some(Extreme { value, at });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_rank_percentile() {
        let v: Vec<f64> = (1..=1000).map(f64::from).collect();
        assert_eq!(percentile(&v, 0.999), 999.0);
        assert_eq!(percentile(&v, 1.0), 1000.0);
        assert_eq!(percentile(&v[..10], 0.999), 10.0);
        assert_eq!(percentile(&[], 0.999), 0.0);
    }

    #[test]
    fn summary_finds_the_first_worst_and_treats_nan_as_worst() {
        let s = summarize(&[(1.0, [1.0; 3]), (3.0, [3.0; 3]), (3.0, [4.0; 3]), (2.0, [2.0; 3])]);
        assert_eq!((s.count, s.max, s.worst_at), (4, 3.0, Some([3.0; 3])));
        let s = summarize(&[(1.0, [1.0; 3]), (f64::NAN, [9.0; 3])]);
        assert_eq!((s.max, s.worst_at), (f64::INFINITY, Some([9.0; 3])));
        let empty = summarize(&[]);
        assert_eq!((empty.count, empty.max, empty.worst_at), (0, 0.0, None));
    }

    #[test]
    fn extremes_keep_first_on_ties() {
        let (mut lo, mut hi) = (None, None);
        for (v, x) in [(0.5, 1.0), (0.2, 2.0), (0.2, 3.0), (0.9, 4.0), (0.9, 5.0)] {
            keep_min(&mut lo, v, [x; 3]);
            keep_max(&mut hi, v, [x; 3]);
        }
        assert_eq!(lo, Some(Extreme { value: 0.2, at: [2.0; 3] }));
        assert_eq!(hi, Some(Extreme { value: 0.9, at: [4.0; 3] }));
    }
}
