//! What the paired bootstrap says of a tracker against the best: the mean difference of d per
//! case, its percentile interval ([`super::bootstrap`]), and a verdict read from the interval
//! (common practice for a percentile interval: a difference is shown when the interval at the
//! chosen confidence excludes zero).

use std::ops::Range;

use serde::Serialize;

use super::bootstrap::{self, BootstrapOptions, Interval, Unit};
use super::plan::Evaluation;
use super::RankBy;
use crate::error::Result;

/// What the bootstrap says of a tracker against the best.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Verdict {
    /// The whole interval lies above zero: the tracker is worse than the best.
    Worse,
    /// The whole interval lies below zero (possible only when the ranking and the interval
    /// disagree on a skewed sample).
    Better,
    /// The interval contains zero: the data cannot tell the two apart.
    Indistinguishable,
    /// Fewer than two resampling units: no interval.
    Undetermined,
}

impl Verdict {
    /// What an interval of d(tracker) - d(best) says: worse when it lies above zero, better
    /// when below, indistinguishable when it contains zero.
    pub fn of(interval: &Interval) -> Verdict {
        if interval.lower > 0.0 {
            Verdict::Worse
        } else if interval.upper < 0.0 {
            Verdict::Better
        } else {
            Verdict::Indistinguishable
        }
    }

    /// The verdict's name in CSV and JSON.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Worse => "worse",
            Verdict::Better => "better",
            Verdict::Indistinguishable => "indistinguishable",
            Verdict::Undetermined => "undetermined",
        }
    }
}

/// A tracker against the best: the mean difference per case of the ranked value (d, or d^p per
/// step) and its interval.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PairedDifference {
    /// The best tracker's name.
    pub against: String,
    /// Mean over cases of d(tracker) - d(best), or of the differences of d^p per step.
    pub mean: f64,
    /// The percentile bootstrap interval; `None` with fewer than two resampling units.
    pub interval: Option<Interval>,
    /// What the interval says.
    pub verdict: Verdict,
}

/// `tracker` against `best` (its index and name) at setting `setting`: the mean per case of
/// d(tracker) - d(best) (or of d^p per step, as `by` says) over `units` (ranges of case positions, one per resampling unit), its
/// percentile bootstrap interval and the verdict; no interval with fewer than two units.
///
/// # Errors
/// Invalid bootstrap options.
pub(super) fn paired_difference(
    evaluation: &Evaluation,
    setting: usize,
    tracker: usize,
    best: (usize, &str),
    units: &[Range<usize>],
    by: RankBy,
    options: &BootstrapOptions,
) -> Result<PairedDifference> {
    let units: Vec<Unit> = units
        .iter()
        .map(|range| Unit {
            sum: range
                .clone()
                .map(|c| {
                    evaluation.score(setting, tracker, c).ranked(by)
                        - evaluation.score(setting, best.0, c).ranked(by)
                })
                .sum(),
            count: range.len(),
        })
        .collect();
    let mean = bootstrap::mean_per_case(&units);
    let (interval, verdict) = if units.len() < 2 {
        (None, Verdict::Undetermined)
    } else {
        let interval = bootstrap::percentile_interval(&units, options)?;
        (Some(interval), Verdict::of(&interval))
    };
    Ok(PairedDifference {
        against: best.1.to_string(),
        mean,
        interval,
        verdict,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_verdict_reads_whether_the_interval_holds_zero() {
        // Common practice for a percentile interval of a paired difference: the difference is
        // shown at the interval's confidence when the interval excludes zero.
        let at = |lower, upper| Verdict::of(&Interval { lower, upper });
        assert_eq!(at(0.5, 2.0), Verdict::Worse);
        assert_eq!(at(-2.0, -0.5), Verdict::Better);
        assert_eq!(at(-1.0, 1.0), Verdict::Indistinguishable);
        // Zero at an end is inside the interval.
        assert_eq!(at(0.0, 1.0), Verdict::Indistinguishable);
        assert_eq!(at(-1.0, 0.0), Verdict::Indistinguishable);
    }
}
