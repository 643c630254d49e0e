//! The derived check values of the project's metric notes (shared/design/metric.md, "Derived
//! check values"), which were obtained there by brute force, the definition and an LP solver.

use approx::assert_relative_eq;
use switchyard::distance::Distance;
use switchyard::per_step::{gospa_between, GospaParams};
use switchyard::trajectory_metric::{score, TrajectoryParams};

use crate::support::{line, lines};

fn gospa(c: f64, p: f64, x: &[&[f64]], y: &[&[f64]]) -> switchyard::per_step::SetScore {
    gospa_between(
        x,
        y,
        &GospaParams::new(c, p, 2.0).unwrap(),
        &Distance::default(),
    )
}

#[test]
fn gospa_scalar_case() {
    // c = 2, p = 1, X = {0, 10}, Y = {0.5, 20, 30}: 3.5 (loc 0.5, missed 1, false 2).
    let s = gospa(2.0, 1.0, &[&[0.0], &[10.0]], &[&[0.5], &[20.0], &[30.0]]);
    assert_relative_eq!(s.power, 3.5, max_relative = 1e-12);
    assert_relative_eq!(s.localization.unwrap(), 0.5, max_relative = 1e-12);
    assert_relative_eq!(s.missed.unwrap(), 1.0, max_relative = 1e-12);
    assert_relative_eq!(s.false_.unwrap(), 2.0, max_relative = 1e-12);
    assert_eq!((s.missed_count, s.false_count), (1, 2));
}

#[test]
fn gospa_planar_case_with_far_point() {
    // c = 3, p = 2, X = {(0,0),(5,5)}, Y = {(1,0),(5,7),(20,20)}: 9.5 (loc 5, missed 0, false 4.5).
    let s = gospa(
        3.0,
        2.0,
        &[&[0.0, 0.0], &[5.0, 5.0]],
        &[&[1.0, 0.0], &[5.0, 7.0], &[20.0, 20.0]],
    );
    assert_relative_eq!(s.power, 9.5, max_relative = 1e-12);
    assert_relative_eq!(s.localization.unwrap(), 5.0, max_relative = 1e-12);
    assert_relative_eq!(s.missed.unwrap(), 0.0);
    assert_relative_eq!(s.false_.unwrap(), 4.5, max_relative = 1e-12);
}

#[test]
fn gospa_planar_case_with_competing_estimates() {
    // c = 5, p = 2, X = {(0,0),(10,0)}, Y = {(0,3),(10,1),(4,0)}: 22.5 (loc 10, false 12.5).
    let s = gospa(
        5.0,
        2.0,
        &[&[0.0, 0.0], &[10.0, 0.0]],
        &[&[0.0, 3.0], &[10.0, 1.0], &[4.0, 0.0]],
    );
    assert_relative_eq!(s.power, 22.5, max_relative = 1e-12);
    assert_relative_eq!(s.localization.unwrap(), 10.0, max_relative = 1e-12);
    assert_relative_eq!(s.false_.unwrap(), 12.5, max_relative = 1e-12);
}

fn crossing() -> (
    switchyard::trajectory::TrajectorySet,
    switchyard::trajectory::TrajectorySet,
) {
    // X = {a: 1..4 at 0, b: 1..4 at 10}; Y = {p: 0,0,10,10; q: 10,10,0,0}.
    (
        lines(vec![line("a", 1, &[0.0; 4]), line("b", 1, &[10.0; 4])]),
        lines(vec![
            line("p", 1, &[0.0, 0.0, 10.0, 10.0]),
            line("q", 1, &[10.0, 10.0, 0.0, 0.0]),
        ]),
    )
}

#[test]
fn crossing_swap_costs_the_smaller_of_two_switches_and_losing_both() {
    // c = 5, p = 1: d^p = min(2 gamma, 4c) -> 2, 12, 20 for gamma = 1, 6, 11.
    let (x, y) = crossing();
    for (gamma, expected) in [(1.0, 2.0), (6.0, 12.0), (11.0, 20.0)] {
        let s = score(
            &x,
            &y,
            &TrajectoryParams::new(5.0, 1.0, gamma).unwrap(),
            &Distance::default(),
        )
        .unwrap();
        assert_relative_eq!(s.total, expected, max_relative = 1e-9);
        assert!(s.integral);
    }
    // gamma = 11: loc 0, missed 10, false 10, switching 0.
    let s = score(
        &x,
        &y,
        &TrajectoryParams::new(5.0, 1.0, 11.0).unwrap(),
        &Distance::default(),
    )
    .unwrap();
    assert_relative_eq!(s.parts.missed, 10.0, max_relative = 1e-9);
    assert_relative_eq!(s.parts.false_, 10.0, max_relative = 1e-9);
    assert_relative_eq!(s.parts.switching, 0.0);
    // gamma = 6: two full switches.
    let s = score(
        &x,
        &y,
        &TrajectoryParams::new(5.0, 1.0, 6.0).unwrap(),
        &Distance::default(),
    )
    .unwrap();
    assert_relative_eq!(s.parts.switching, 12.0, max_relative = 1e-9);
    assert_relative_eq!(s.parts.switch_count, 2.0, max_relative = 1e-9);
}

#[test]
fn crossing_swap_in_second_order() {
    // c = 5, p = 2, gamma = 2: 8, all switching.
    let (x, y) = crossing();
    let s = score(
        &x,
        &y,
        &TrajectoryParams::new(5.0, 2.0, 2.0).unwrap(),
        &Distance::default(),
    )
    .unwrap();
    assert_relative_eq!(s.total, 8.0, max_relative = 1e-9);
    assert_relative_eq!(s.parts.switching, 8.0, max_relative = 1e-9);
}

#[test]
fn split_estimate_costs_one_switch_or_four_missed_steps() {
    // One truth 1..4 at 0, its estimate split into tracks {1,2} and {3,4}; c = 2, p = 1:
    // d^p = min(gamma, 4).
    let x = lines(vec![line("a", 1, &[0.0; 4])]);
    let y = lines(vec![line("p", 1, &[0.0, 0.0]), line("q", 3, &[0.0, 0.0])]);
    for gamma in [0.5, 1.0, 3.0, 4.0, 6.0, 10.0] {
        let s = score(
            &x,
            &y,
            &TrajectoryParams::new(2.0, 1.0, gamma).unwrap(),
            &Distance::default(),
        )
        .unwrap();
        assert_relative_eq!(s.total, f64::min(gamma, 4.0), max_relative = 1e-9);
    }
}

mod per_step_axioms {
    //! GOSPA is a metric for alpha = 2 and 1 <= p < inf (Rahmathullah, García-Fernández,
    //! Svensson, FUSION 2017, Proposition 1): zero exactly between equal sets, symmetric, and
    //! it satisfies the triangle inequality. Checked on seeded random point sets.

    use proptest::prelude::*;
    use switchyard::distance::Distance;
    use switchyard::per_step::{gospa_between, GospaParams};

    use crate::support::seeded;

    fn points() -> impl Strategy<Value = Vec<Vec<f64>>> {
        prop::collection::vec(prop::collection::vec(-6.0f64..6.0, 2), 0..7)
    }

    fn gospa(x: &[Vec<f64>], y: &[Vec<f64>], params: &GospaParams) -> f64 {
        let x: Vec<&[f64]> = x.iter().map(Vec::as_slice).collect();
        let y: Vec<&[f64]> = y.iter().map(Vec::as_slice).collect();
        gospa_between(&x, &y, params, &Distance::default())
            .power
            .powf(1.0 / params.order)
    }

    fn params() -> impl Strategy<Value = GospaParams> {
        (
            prop::sample::select(vec![0.5, 2.0, 5.0]),
            prop::sample::select(vec![1.0, 2.0, 3.0]),
        )
            .prop_map(|(c, p)| GospaParams::new(c, p, 2.0).unwrap())
    }

    proptest! {
        #![proptest_config(seeded(400, 17))]

        #[test]
        fn zero_exactly_for_equal_sets_and_positive_otherwise(x in points(), y in points(), params in params()) {
            prop_assert_eq!(gospa(&x, &x, &params), 0.0);
            // A reordered copy is the same set.
            let mut reversed = x.clone();
            reversed.reverse();
            prop_assert_eq!(gospa(&x, &reversed, &params), 0.0);
            let mut sorted_x = x.clone();
            let mut sorted_y = y.clone();
            sorted_x.sort_by(|a, b| a.partial_cmp(b).unwrap());
            sorted_y.sort_by(|a, b| a.partial_cmp(b).unwrap());
            if sorted_x != sorted_y {
                prop_assert!(gospa(&x, &y, &params) > 0.0);
            }
        }

        #[test]
        fn symmetric(x in points(), y in points(), params in params()) {
            let (a, b) = (gospa(&x, &y, &params), gospa(&y, &x, &params));
            prop_assert!((a - b).abs() <= 1e-12 * a.max(1.0), "{a} vs {b}");
        }

        #[test]
        fn triangle_inequality(x in points(), y in points(), z in points(), params in params()) {
            let (xz, xy, yz) = (gospa(&x, &z, &params), gospa(&x, &y, &params), gospa(&y, &z, &params));
            prop_assert!(xz <= xy + yz + 1e-9 * (1.0 + xz), "{xz} > {xy} + {yz}");
        }
    }
}

#[test]
fn a_cut_off_far_above_the_distances_keeps_the_small_ones_exact() {
    // X = {0, 10}, Y = {9, 1}, c = 1e9, p = 2: both pairs (0,1) and (10,9) are at distance 1,
    // so GOSPA^p = 1 + 1 = 2 by the definition; the gains d^p - c^p (about -1e18) cannot tell
    // the two matchings apart, so the assignment must not be chosen on them alone.
    let s = gospa(1e9, 2.0, &[&[0.0], &[10.0]], &[&[9.0], &[1.0]]);
    assert_relative_eq!(s.power, 2.0, max_relative = 1e-12);
    assert_eq!(s.pairs, vec![(0, 1), (1, 0)]);
    // X = {0, 0.5}, Y = {0.001, 0.5}, c = 1000, p = 2: localisation 0.001^2 = 1e-6.
    let s = gospa(1000.0, 2.0, &[&[0.0], &[0.5]], &[&[0.001], &[0.5]]);
    assert_relative_eq!(s.localization.unwrap(), 1e-6, max_relative = 1e-9);
}

#[test]
fn an_lp_the_engine_cannot_resolve_is_refused_not_printed() {
    // The crossing scene with c = 1e10, p = 2, gamma = 1: the true value is 2 (two full
    // switches, as for any c > 10 by the definition), but c^p = 1e20 drowns the distances and
    // the switch costs in the LP's coefficients. The result must be an error, not a number
    // other than 2.
    let (x, y) = crossing();
    let params = TrajectoryParams::new(1e10, 2.0, 1.0).unwrap();
    match score(&x, &y, &params, &Distance::default()) {
        Ok(s) => assert_relative_eq!(s.total, 2.0, max_relative = 1e-9),
        Err(error) => assert!(
            matches!(error, switchyard::Error::Solver(_)),
            "unexpected error {error}"
        ),
    }
}
