//! The paired percentile bootstrap of a mean difference, seeded and reproducible.
//!
//! Method: the percentile interval of B. Efron and R. J. Tibshirani, "An Introduction to the
//! Bootstrap", Chapman & Hall, 1993, chapter 13. Two trackers are scored on the same cases, so
//! the differences are paired: each resampling unit carries the sum of its cases' differences
//! and its number of cases. One resample draws as many units as there are, uniformly with
//! replacement, and its statistic is (sum of the drawn sums) / (sum of the drawn counts): the
//! mean difference per case over the drawn units. With one case per unit this is the plain mean
//! of the drawn differences; with several (runs grouped by sequence) it is the cluster bootstrap
//! of the mean per case, whose value on the original sample is exactly the mean difference
//! over all cases.
//!
//! The interval at confidence `1 - a` runs from the `a/2` to the `1 - a/2` quantile of the
//! resampled statistics, with the quantile of sorted values `s_0 <= ... <= s_{B-1}` at level
//! `q` taken by linear interpolation at position `h = (B - 1) q`: `s_floor(h) + (h - floor(h))
//! (s_floor(h)+1 - s_floor(h))` (the default of numpy's `percentile`).
//!
//! Random numbers: ChaCha8 seeded with [`BootstrapOptions::seed`] through
//! `SeedableRng::seed_from_u64`; each unit index is drawn from one 64-bit output by rejection
//! (exactly uniform, independent of the platform). Every comparison restarts the generator
//! from the seed, so all comparisons of one run use the same resampled index sets.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::Serialize;

use crate::error::{Error, Result};

/// The largest number of resamples accepted.
pub const MAX_RESAMPLES: usize = 10_000_000;

/// How the interval is computed.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct BootstrapOptions {
    /// The number of resamples B (at least 1).
    pub resamples: usize,
    /// The seed of the random generator.
    pub seed: u64,
    /// The confidence level, in (0, 1).
    pub confidence: f64,
}

impl Default for BootstrapOptions {
    /// 10,000 resamples, seed 0, 95% confidence.
    fn default() -> Self {
        BootstrapOptions {
            resamples: 10_000,
            seed: 0,
            confidence: 0.95,
        }
    }
}

impl BootstrapOptions {
    /// Checks the options.
    ///
    /// # Errors
    /// No resamples or more than [`MAX_RESAMPLES`], a confidence outside (0, 1).
    pub fn validate(&self) -> Result<()> {
        if self.resamples == 0 || self.resamples > MAX_RESAMPLES {
            return Err(Error::Parameter(format!(
                "the number of bootstrap resamples must lie between 1 and {MAX_RESAMPLES}, got {}",
                self.resamples
            )));
        }
        if !(self.confidence > 0.0 && self.confidence < 1.0) {
            return Err(Error::Parameter(format!(
                "the confidence level must lie strictly between 0 and 1, got {}",
                self.confidence
            )));
        }
        Ok(())
    }
}

/// One resampling unit: the sum of its cases' values and how many cases it holds.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Unit {
    /// The sum of the values of the unit's cases.
    pub sum: f64,
    /// The number of cases (at least 1).
    pub count: usize,
}

/// A confidence interval.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Interval {
    /// The lower end.
    pub lower: f64,
    /// The upper end.
    pub upper: f64,
}

impl Interval {
    /// True when `value` lies in the interval, ends included.
    pub fn contains(&self, value: f64) -> bool {
        self.lower <= value && value <= self.upper
    }
}

/// The mean value per case over all units: (sum of sums) / (sum of counts).
pub fn mean_per_case(units: &[Unit]) -> f64 {
    let (sum, count) = units
        .iter()
        .fold((0.0, 0usize), |(s, c), u| (s + u.sum, c + u.count));
    if count == 0 {
        0.0
    } else {
        sum / count as f64
    }
}

/// A uniformly random integer in `0..n` (n >= 1) from 64-bit outputs, by rejection.
fn below(rng: &mut ChaCha8Rng, n: usize) -> usize {
    let n = n as u64;
    // The largest multiple of n that fits: outputs at or above it are drawn again.
    let zone = u64::MAX - (u64::MAX % n + 1) % n;
    loop {
        let value = rng.next_u64();
        if value <= zone {
            return (value % n) as usize;
        }
    }
}

/// The resampled statistics, sorted: `options.resamples` values of the mean per case over
/// units drawn with replacement.
///
/// # Errors
/// Invalid options, or no units.
pub fn resample_means(units: &[Unit], options: &BootstrapOptions) -> Result<Vec<f64>> {
    options.validate()?;
    if units.is_empty() {
        return Err(Error::Parameter(
            "the bootstrap needs at least one unit".into(),
        ));
    }
    let mut rng = ChaCha8Rng::seed_from_u64(options.seed);
    let n = units.len();
    let mut means = Vec::with_capacity(options.resamples);
    for _ in 0..options.resamples {
        let mut sum = 0.0;
        let mut count = 0usize;
        for _ in 0..n {
            let unit = &units[below(&mut rng, n)];
            sum += unit.sum;
            count += unit.count;
        }
        means.push(sum / count.max(1) as f64);
    }
    means.sort_by(f64::total_cmp);
    Ok(means)
}

/// The quantile at level `q` in [0, 1] of sorted values, by linear interpolation between
/// order statistics at position `(len - 1) q`.
///
/// # Panics
/// Never for a non-empty slice; an empty slice gives NaN.
pub fn quantile(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let h = (sorted.len() - 1) as f64 * q.clamp(0.0, 1.0);
    let low = h.floor() as usize;
    let high = (low + 1).min(sorted.len() - 1);
    let fraction = h - low as f64;
    sorted[low] + fraction * (sorted[high] - sorted[low])
}

/// The percentile bootstrap interval of the mean per case.
///
/// # Errors
/// Invalid options, or no units.
pub fn percentile_interval(units: &[Unit], options: &BootstrapOptions) -> Result<Interval> {
    let means = resample_means(units, options)?;
    let tail = (1.0 - options.confidence) / 2.0;
    Ok(Interval {
        lower: quantile(&means, tail),
        upper: quantile(&means, 1.0 - tail),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ones(values: &[f64]) -> Vec<Unit> {
        values.iter().map(|&sum| Unit { sum, count: 1 }).collect()
    }

    #[test]
    fn quantile_interpolates_like_the_linear_rule() {
        // Values 1..=5 at q = 0.1: h = 4 x 0.1 = 0.4, so 1 + 0.4 x (2 - 1) = 1.4 (numpy's
        // default percentile gives 1.4 for percentile([1,2,3,4,5], 10)).
        let v = [1.0, 2.0, 3.0, 4.0, 5.0];
        assert!((quantile(&v, 0.1) - 1.4).abs() < 1e-12);
        assert!((quantile(&v, 0.5) - 3.0).abs() < 1e-12);
        assert_eq!(quantile(&v, 0.0), 1.0);
        assert_eq!(quantile(&v, 1.0), 5.0);
        assert!(quantile(&[], 0.5).is_nan());
    }

    #[test]
    fn below_stays_in_range_and_reaches_every_value() {
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        let mut seen = [0usize; 7];
        for _ in 0..7_000 {
            seen[below(&mut rng, 7)] += 1;
        }
        // Each of 7 values expected 1000 times; a binomial standard deviation is about 30, so
        // 850..1150 holds unless the draw is broken.
        assert!(seen.iter().all(|&n| (850..1150).contains(&n)), "{seen:?}");
    }

    #[test]
    fn constant_differences_give_a_point_interval() {
        // Every resample of identical values has the same mean: the interval is that value.
        let units = ones(&[2.5; 6]);
        let interval = percentile_interval(&units, &BootstrapOptions::default()).unwrap();
        assert_eq!((interval.lower, interval.upper), (2.5, 2.5));
    }

    #[test]
    fn clusters_give_the_mean_per_case() {
        // Units (sum 3 over 1 case) and (sum 9 over 3 cases): 12 / 4 = 3 per case.
        let units = [Unit { sum: 3.0, count: 1 }, Unit { sum: 9.0, count: 3 }];
        assert!((mean_per_case(&units) - 3.0).abs() < 1e-12);
    }

    #[test]
    fn same_seed_same_interval_other_seed_other_interval() {
        let units = ones(&[1.0, 4.0, -2.0, 0.5, 3.0, 7.0, -1.0]);
        let options = BootstrapOptions::default();
        let a = percentile_interval(&units, &options).unwrap();
        let b = percentile_interval(&units, &options).unwrap();
        assert_eq!(a, b);
        let c = percentile_interval(&units, &BootstrapOptions { seed: 9, ..options }).unwrap();
        assert_ne!(a, c);
    }

    #[test]
    fn bad_options_are_refused() {
        let units = ones(&[1.0]);
        for options in [
            BootstrapOptions {
                resamples: 0,
                ..BootstrapOptions::default()
            },
            BootstrapOptions {
                confidence: 1.0,
                ..BootstrapOptions::default()
            },
            BootstrapOptions {
                confidence: f64::NAN,
                ..BootstrapOptions::default()
            },
        ] {
            assert!(percentile_interval(&units, &options).is_err());
        }
        assert!(percentile_interval(&[], &BootstrapOptions::default()).is_err());
    }
}
