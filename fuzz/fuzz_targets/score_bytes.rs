//! Fuzz target: bytes split at the first NUL byte into a truth and an estimate CSV, read, then
//! scored with small fixed parameters. Whenever both read and the score succeeds, its parts
//! must add up to the total and the total lie between the per-step lower bound and the
//! all-unassigned upper bound; an error (a failed internal check included) is a finding.
#![no_main]

use libfuzzer_sys::fuzz_target;
use switchyard::distance::Distance;
use switchyard::input::{read_csv, CsvLayout};
use switchyard::trajectory_metric::checks::{bounds, check_consistency};
use switchyard::trajectory_metric::{score, TrajectoryParams};
use switchyard::Error;

/// Windows longer than this are skipped: they are valid, only slow to fuzz.
const LONGEST_WINDOW: i64 = 10_000;

fuzz_target!(|data: &[u8]| {
    let split = data.iter().position(|&b| b == 0).unwrap_or(data.len());
    let (first, second) = (&data[..split], &data[(split + 1).min(data.len())..]);
    let layout = CsvLayout::default();
    let (Ok(truth), Ok(estimate)) = (
        read_csv(first, "truth.csv", &layout),
        read_csv(second, "estimate.csv", &layout),
    ) else {
        return;
    };
    if truth.check_comparable(&estimate).is_err() {
        return;
    }
    let span = match (truth.set.span(), estimate.set.span()) {
        (Some(a), Some(b)) => Some((a.0.min(b.0), a.1.max(b.1))),
        (a, b) => a.or(b),
    };
    if span.is_some_and(|(first, last)| last.saturating_sub(first) > LONGEST_WINDOW) {
        return;
    }
    let distance = Distance::default();
    for (cutoff, order, gamma) in [(2.0, 1.0, 2.0), (5.0, 2.0, 1.0)] {
        let params = TrajectoryParams::new(cutoff, order, gamma).unwrap();
        // Valid inputs with small parameters: any error here, a failed consistency check
        // included, is a finding.
        let result = match score(&truth.set, &estimate.set, &params, &distance) {
            Ok(result) => result,
            Err(error @ Error::Solver(_)) => panic!("{error}"),
            Err(error) => panic!("unexpected error on valid inputs: {error}"),
        };
        let parts = result.parts.sum();
        assert!(
            (parts - result.total).abs() <= 1e-9 * (1.0 + result.total.abs()),
            "parts {parts} total {}",
            result.total
        );
        let range = bounds(&truth.set, &estimate.set, &params, &distance).unwrap();
        let slack = 1e-9 * (1.0 + range.upper);
        assert!(
            result.total <= range.upper + slack,
            "{} > {range:?}",
            result.total
        );
        assert!(
            result.total >= range.lower - slack,
            "{} < {range:?}",
            result.total
        );
        check_consistency(&result, &range).unwrap();
    }
});
