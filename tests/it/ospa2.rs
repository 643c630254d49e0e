//! OSPA(2) (M. Beard, B.-T. Vo, B.-N. Vo, "A solution for large-scale multi-object tracking",
//! IEEE Trans. Signal Processing 68:2754-2769, 2020) against values computed outside the
//! project: `tests/data/reference/ospa2_cases.json`, written by
//! `tests/reference/ospa2_reference.py` from the definition with plain loops over the steps and
//! scipy.optimize.linear_sum_assignment (brute force for small sets).

use std::collections::BTreeMap;

use approx::assert_relative_eq;
use serde::Deserialize;
use switchyard::distance::Distance;
use switchyard::ospa2::{Ospa2, Ospa2Params};
use switchyard::trajectory::Step;

use crate::references::{read, to_set};

#[derive(Deserialize)]
struct File {
    cases: Vec<Case>,
}

#[derive(Deserialize)]
struct Case {
    cutoff: f64,
    order: f64,
    width: usize,
    truth: BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    estimate: BTreeMap<String, Vec<(Step, Vec<f64>)>>,
    whole: f64,
    sliding: Vec<(Step, f64)>,
}

#[test]
fn ospa2_matches_scipy_assignment_whole_and_sliding() {
    let file: File = read("ospa2_cases.json");
    assert!(file.cases.len() > 100);
    let mut windows = 0;
    for (k, case) in file.cases.iter().enumerate() {
        let dim = case
            .truth
            .values()
            .chain(case.estimate.values())
            .flat_map(|points| points.iter().map(|(_, s)| s.len()))
            .next()
            .unwrap_or(1);
        let (truth, estimate) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
        let params = Ospa2Params::new(case.cutoff, case.order).unwrap();
        let metric = Ospa2::new(&truth, &estimate, params, &Distance::default()).unwrap();
        let whole = metric.whole();
        assert_relative_eq!(
            whole.value,
            case.whole,
            max_relative = 1e-9,
            epsilon = 1e-12
        );
        // The parts add up to the value's p-th power, and each pair is closer than c.
        assert_relative_eq!(
            whole.paired_power + whole.unpaired_power,
            whole.value.powf(case.order),
            max_relative = 1e-9,
            epsilon = 1e-12
        );
        assert!(whole.pairs.iter().all(|p| p.distance < case.cutoff));
        let sliding = metric.sliding(case.width);
        assert_eq!(
            sliding.iter().map(|s| s.0).collect::<Vec<_>>(),
            case.sliding.iter().map(|s| s.0).collect::<Vec<_>>(),
            "case {k}: the window ends"
        );
        for ((_, got), (step, want)) in sliding.iter().zip(&case.sliding) {
            assert_relative_eq!(got.value, *want, max_relative = 1e-9, epsilon = 1e-12);
            let _ = step;
            windows += 1;
        }
    }
    assert!(windows > 300);
}
