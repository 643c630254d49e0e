//! The Lagrangian engine (`Engine::Lagrangian`, the default) against references outside it.
//!
//! Each check names its reference:
//! - scipy: `scipy.optimize.linprog` / `milp` (HiGHS) on the full unreduced trajectory GOSPA
//!   model (García-Fernández, Rahmathullah, Svensson, IEEE Trans. Signal Processing
//!   68:3917-3928, 2020), committed in tests/data/reference/trajectory_cases.json and
//!   tests/data/exact/fractional_scenes.json (tests/reference/README.md);
//! - microlp: the simplex engine (`Engine::Microlp`) on the event-compressed LP, which shares
//!   nothing with the Lagrangian engine but the candidate pairs;
//! - the definition: the exact metric by brute force over per-step assignments
//!   ([`crate::exact::brute_force`]), on scenes small enough for it;
//! - per-step GOSPA: with switching penalty 0 the metric is the sum over the steps of GOSPA^p
//!   with alpha = 2 (the paper above), computed by `switchyard::per_step` (itself checked
//!   against scipy's `linear_sum_assignment` in references.rs).
//!
//! Tolerances: values are compared within 1e-9 of the value (the engine's promise: certified
//! when upper - lower <= 1e-9 of the value). When a score has fractional weights an absolute
//! floor of 1e-12 of the scene's all-unassigned cost (c^p / 2 per object-step) is added: the
//! missed and false counts are then differences of float sums of weights, and a simplex's
//! weights carry its own tolerances, so such a total can be off by rounding far below that
//! cost. An integral assignment's total is a sum of non-negative parts from exact counts, off
//! by a few ulps of the value itself, so it gets no floor ([`scale`]).

use assert_cmd::Command;
use proptest::prelude::*;
use switchyard::distance::Distance;
use switchyard::error::Error;
use switchyard::per_step::{per_step, GospaParams};
use switchyard::trajectory::{Step, Trajectory, TrajectorySet};
use switchyard::trajectory_metric::{
    score_with, Engine, SolveOptions, TrajectoryParams, TrajectoryScore,
};

use crate::exact::{brute_force, fixtures, solve};
use crate::references::{dimension, read, to_set, TrajectoryFile};
use crate::support::seeded;

/// The base of the rounding floor (module documentation): the all-unassigned cost of the
/// scene, c^p / 2 per truth and estimate object-step, when one of `scores` has fractional
/// weights; 0 when all are integral, since an integral assignment's d^p is a sum of
/// non-negative parts computed from exact counts, correct to a few ulps of the value itself.
fn scale(
    x: &TrajectorySet,
    y: &TrajectorySet,
    params: &TrajectoryParams,
    scores: &[&TrajectoryScore],
) -> f64 {
    if scores.iter().all(|s| assignment_is_integral(s)) {
        return 0.0;
    }
    params.cutoff_power() / 2.0 * (x.object_steps() + y.object_steps()) as f64
}

/// The tolerance of a comparison of d^p values: 1e-9 of the value, plus the rounding floor
/// described in the module documentation.
fn tolerance(value: f64, scale: f64) -> f64 {
    1e-9 * value.abs() + 1e-12 * scale
}

fn lagrangian(x: &TrajectorySet, y: &TrajectorySet, params: &TrajectoryParams) -> TrajectoryScore {
    let options = SolveOptions::default();
    assert_eq!(options.engine, Engine::Lagrangian, "the default engine");
    solve(x, y, params, options)
}

fn microlp(x: &TrajectorySet, y: &TrajectorySet, params: &TrajectoryParams) -> TrajectoryScore {
    let options = SolveOptions {
        engine: Engine::Microlp,
        ..SolveOptions::default()
    };
    solve(x, y, params, options)
}

/// Whether every weight of the reported assignment is 0 or 1 (within 1e-6, the library's own
/// reading of "integral").
fn assignment_is_integral(s: &TrajectoryScore) -> bool {
    s.assignment
        .pairs
        .iter()
        .flat_map(|p| &p.spans)
        .all(|span| (span.weight - 1.0).abs() < 1e-6 || span.weight < 1e-6)
}

/// What every certificate must say of itself, whatever the engine: `upper` is the total, the
/// bounds are ordered, `gap` is their relative difference, `proven` means no component was
/// left with bounds only (and then the bounds meet), and every component is counted once.
fn check_certificate(s: &TrajectoryScore, scale: f64) -> Result<(), String> {
    let c = &s.certificate;
    let tol = tolerance(s.total, scale);
    let fail = |what: &str| Err(format!("{what}: {c:?}, total {}", s.total));
    if c.upper != s.total {
        return fail("upper is not the total");
    }
    if c.lower > c.upper + tol {
        return fail("lower above upper");
    }
    let gap = if c.upper > 0.0 {
        (c.upper - c.lower) / c.upper
    } else {
        0.0
    };
    if (c.gap - gap).abs() > 1e-12 {
        return fail("gap is not (upper - lower) / upper");
    }
    if c.proven != (c.bounded == 0) {
        return fail("proven disagrees with the bounded count");
    }
    if c.proven && c.upper - c.lower > tol {
        return fail("proven with bounds apart");
    }
    if c.closed_form + c.lagrangian + c.simplex + c.bounded != s.stats.components {
        return fail("components not counted once each");
    }
    if s.integral && !assignment_is_integral(s) {
        return fail("integral claimed for a fractional assignment");
    }
    if s.integral && !c.proven {
        return fail("integral claimed for an unproven value");
    }
    Ok(())
}

/// Compares the default engine with microlp (and, when small enough, the definition by brute
/// force; with gamma = 0, the per-step sum) on one random scene.
fn compare_engines(scene: &Scene) -> Result<(), TestCaseError> {
    check_engines(&scene.truth, &scene.estimate, &scene.params).map_err(TestCaseError::fail)
}

fn check_engines(
    x: &TrajectorySet,
    y: &TrajectorySet,
    params: &TrajectoryParams,
) -> Result<(), String> {
    let l = lagrangian(x, y, params);
    let m = microlp(x, y, params);
    let scale = scale(x, y, params, &[&l, &m]);
    check_certificate(&l, scale)?;
    check_certificate(&m, scale)?;
    let tol = tolerance(m.total, scale);
    // Reference: microlp's simplex on the compressed LP.
    if (l.total - m.total).abs() > tol {
        return Err(format!(
            "Lagrangian total {} vs microlp {} (difference {:e}); certificate {:?}",
            l.total,
            m.total,
            l.total - m.total,
            l.certificate
        ));
    }
    let c = &l.certificate;
    if !(c.lower <= m.total + tol && m.total <= c.upper + tol) {
        return Err(format!(
            "microlp {} outside the certificate {:?}",
            m.total, c
        ));
    }
    if !c.proven {
        return Err(format!("not proven with the default memory budget: {c:?}"));
    }
    // A proven result from the Lagrangian bounds alone comes with its integral assignment.
    if c.simplex == 0 && !l.integral {
        return Err(format!("proven without a simplex but not integral: {c:?}"));
    }
    // Reference: the definition, by brute force over per-step assignments. The LP value is at
    // most the exact metric, and equal to it when the reported optimum is integral.
    if x.len() <= 3 && y.len() <= 3 {
        let exact = brute_force(x, y, params);
        let tol = tolerance(exact, scale);
        if l.total > exact + tol {
            return Err(format!("LP {} above the exact metric {exact}", l.total));
        }
        if l.integral && (l.total - exact).abs() > tol {
            return Err(format!(
                "integral LP optimum {} differs from the exact metric {exact}",
                l.total
            ));
        }
    }
    // Reference: per-step GOSPA (alpha = 2) summed over the steps, when gamma = 0.
    if params.switch_penalty == 0.0 {
        let sum = per_step_sum(x, y, params);
        if (l.total - sum).abs() > tolerance(sum, scale) {
            return Err(format!("gamma = 0: {} vs per-step sum {sum}", l.total));
        }
    }
    Ok(())
}

/// The sum over the steps of per-step GOSPA^p with alpha = 2: localisation + missed + false
/// parts, all in p-th power units.
fn per_step_sum(x: &TrajectorySet, y: &TrajectorySet, params: &TrajectoryParams) -> f64 {
    let gospa = GospaParams::new(params.cutoff, params.order, 2.0).unwrap();
    let series = per_step(x, y, &gospa, &Distance::default()).unwrap();
    let s = series.summary;
    s.localization.unwrap() + s.missed.unwrap() + s.false_.unwrap()
}

// ---------------------------------------------------------------------------------------------
// 1. The committed scipy references.

#[test]
fn default_engine_matches_scipy_and_microlp_on_the_reference_scenes() {
    // Reference: tests/data/reference/trajectory_cases.json, lp_total from scipy linprog
    // (HiGHS) on the full unreduced model; exact_total from scipy milp.
    let file: TrajectoryFile = read("trajectory_cases.json");
    assert!(file.cases.len() >= 50);
    for (n, case) in file.cases.iter().enumerate() {
        let dim = dimension(case);
        let (x, y) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
        let params = TrajectoryParams::new(case.cutoff, case.order, case.switch_penalty).unwrap();
        let l = lagrangian(&x, &y, &params);
        let m = microlp(&x, &y, &params);
        let scale = scale(&x, &y, &params, &[&l, &m]);
        check_certificate(&l, scale).unwrap_or_else(|e| panic!("case {n}: {e}"));
        assert_eq!(l.steps, case.steps, "case {n}");
        let tol = tolerance(case.lp_total, scale);
        assert!(
            (l.total - case.lp_total).abs() <= tol,
            "case {n}: Lagrangian {} vs scipy linprog {}",
            l.total,
            case.lp_total
        );
        let c = &l.certificate;
        assert!(
            c.lower <= case.lp_total + tol && case.lp_total <= c.upper + tol,
            "case {n}: scipy linprog {} outside the certificate {c:?}",
            case.lp_total
        );
        assert!(c.proven, "case {n}: {c:?}");
        // Reference: scipy milp. An integral LP optimum is the exact metric.
        if l.integral {
            assert!(
                (l.total - case.exact_total).abs() <= tolerance(case.exact_total, scale),
                "case {n}: integral {} vs scipy milp {}",
                l.total,
                case.exact_total
            );
        }
        // Reference: microlp.
        assert!(
            (l.total - m.total).abs() <= tolerance(m.total, scale),
            "case {n}: Lagrangian {} vs microlp {}",
            l.total,
            m.total
        );
    }
}

// ---------------------------------------------------------------------------------------------
// 3. Fractional LP optima: the Lagrangian bounds cannot meet (the upper bound is integral), so
//    the component must go to the simplex.

#[test]
fn fractional_scenes_fall_back_to_the_simplex_and_match_scipy() {
    let mut scenes: Vec<(
        String,
        TrajectorySet,
        TrajectorySet,
        TrajectoryParams,
        f64,
        f64,
    )> = Vec::new();
    // Reference: tests/data/exact/fractional_scenes.json (scipy linprog and milp).
    for (f, x, y, params) in fixtures() {
        scenes.push((f.name.clone(), x, y, params, f.lp_total, f.exact_total));
    }
    // Reference: the scenes of tests/data/reference/trajectory_cases.json whose scipy LP value
    // lies strictly below the scipy milp value.
    let file: TrajectoryFile = read("trajectory_cases.json");
    for (n, case) in file.cases.iter().enumerate() {
        if case.exact_total > case.lp_total + 1e-6 * case.exact_total.max(1.0) {
            let dim = dimension(case);
            let params =
                TrajectoryParams::new(case.cutoff, case.order, case.switch_penalty).unwrap();
            let (x, y) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
            scenes.push((
                format!("reference case {n}"),
                x,
                y,
                params,
                case.lp_total,
                case.exact_total,
            ));
        }
    }
    assert!(scenes.len() >= 8 + 3, "{} fractional scenes", scenes.len());
    let mut fallbacks = 0;
    for (name, x, y, params, lp, exact) in &scenes {
        let l = lagrangian(x, y, params);
        let m = microlp(x, y, params);
        let scale = scale(x, y, params, &[&l, &m]);
        let tol = tolerance(*lp, scale);
        check_certificate(&l, scale).unwrap_or_else(|e| panic!("{name}: {e}"));
        let c = &l.certificate;
        assert!(c.simplex >= 1, "{name}: no simplex fallback: {c:?}");
        fallbacks += c.simplex;
        assert!(c.proven, "{name}: {c:?}");
        assert!(
            (l.total - lp).abs() <= tol,
            "{name}: {} vs scipy linprog {lp}",
            l.total
        );
        assert!(
            c.lower <= lp + tol && *lp <= c.upper + tol,
            "{name}: scipy linprog {lp} outside {c:?}"
        );
        // The optimum is below the integral optimum (scipy milp), so it cannot be integral.
        assert!(*lp < exact - tol);
        assert!(
            !l.integral,
            "{name}: integral claimed below scipy milp {exact}"
        );
        // Reference: the simplex engines alone, microlp and the one the fallback uses in this
        // build (`Engine::simplex`: HiGHS when built in, else microlp).
        let fallback = Engine::default().simplex();
        let options = SolveOptions {
            engine: fallback,
            ..SolveOptions::default()
        };
        let f = solve(x, y, params, options);
        for (engine, total) in [(Engine::Microlp, m.total), (fallback, f.total)] {
            assert!(
                (l.total - total).abs() <= tolerance(total, scale),
                "{name}: {} vs {engine:?} {total}",
                l.total
            );
        }
    }
    assert!(fallbacks >= scenes.len());
}

// ---------------------------------------------------------------------------------------------
// 2. Seeded random scenes.

/// A random scene's raw draw: objects as (first step, presence bits, grid points per step).
type RawObject = (Step, u16, Vec<Vec<i8>>);

/// How an estimate is made from the truths.
#[derive(Clone, Copy, Debug)]
enum Make {
    /// Points of its own.
    Clutter,
    /// The points of a truth, exactly (coincident points).
    Copy(usize),
    /// A truth's points shifted by a fixed grid offset.
    Shifted(usize),
    /// One truth's points until `at`, another's after (an identity switch).
    Switch(usize, usize, Step),
}

/// A scene on a grid: integer points times `unit`, optionally jittered off the grid so that
/// ties are broken; estimates copy, shift, switch between or ignore the truths.
#[derive(Clone, Debug)]
struct Scene {
    truth: TrajectorySet,
    estimate: TrajectorySet,
    params: TrajectoryParams,
}

fn raw_objects(
    count: std::ops::RangeInclusive<usize>,
    steps: Step,
    dim: usize,
) -> impl Strategy<Value = Vec<RawObject>> {
    proptest::collection::vec(
        (
            0..steps,
            any::<u16>(),
            proptest::collection::vec(proptest::collection::vec(-2i8..=3, dim), steps as usize),
        ),
        count,
    )
}

fn make() -> impl Strategy<Value = Make> {
    prop_oneof![
        1 => Just(Make::Clutter),
        2 => (0usize..8).prop_map(Make::Copy),
        2 => (0usize..8).prop_map(Make::Shifted),
        3 => (0usize..8, 0usize..8, 0..16 as Step).prop_map(|(a, b, k)| Make::Switch(a, b, k)),
    ]
}

fn scene_params(orders: &'static [f64]) -> impl Strategy<Value = TrajectoryParams> {
    (
        prop::sample::select(vec![0.3, 1.0, 1.5, 2.0, 3.0, 10.0]),
        prop::sample::select(orders),
        prop_oneof![
            prop::sample::select(vec![0.0, 0.05, 0.5, 1.0, 2.0, 20.0]),
            0.05f64..20.0,
        ],
    )
        .prop_map(|(c, p, g)| TrajectoryParams::new(c, p, g).unwrap())
}

/// Grid units of ordinary scenes: ties on the grid, and near-ties when jittered.
/// The grid units and orders p of a family of scenes.
struct Kind {
    units: &'static [f64],
    orders: &'static [f64],
}

/// Ordinary scenes: ties on the grid, near-ties when jittered; p in {1, 2, 3}.
const GRIDS: Kind = Kind {
    units: &[1.0, 0.5, 0.75],
    orders: &[1.0, 2.0, 3.0],
};
/// Distances 1e4 to 1e7 times below the cut-offs. p is at most 2 so that (d / c)^p stays
/// above 1e-14, well clear of double precision (2.2e-16) relative to c^p: beyond that no
/// engine working in double precision can tell the assignments apart, and the library
/// refuses with a consistency error, as it says it does.
const TINY: Kind = Kind {
    units: &[1e-5, 3e-6],
    orders: &[1.0, 2.0],
};

/// Scenes of 1 to `truths` truths, 1 to `estimates` estimates, 1 to `steps` steps (at most 16:
/// presence is drawn as bits of a u16), in 1 to 3 dimensions.
fn scene(truths: usize, estimates: usize, steps: Step, kind: Kind) -> impl Strategy<Value = Scene> {
    (1usize..=3, 1..=steps).prop_flat_map(move |(dim, steps)| {
        (
            raw_objects(1..=truths, steps, dim),
            proptest::collection::vec((make(), any::<u16>(), 0..steps), 0..=estimates),
            raw_objects(1..=estimates, steps, dim),
            prop::sample::select(kind.units),
            any::<bool>(),
            proptest::collection::vec(0u32..1000, 64),
            scene_params(kind.orders),
        )
            .prop_map(
                move |(truths, makes, clutter, unit, jitter, noise, params)| {
                    build_scene(
                        dim, steps, &truths, &makes, &clutter, unit, jitter, &noise, params,
                    )
                },
            )
    })
}

#[allow(clippy::too_many_arguments)]
fn build_scene(
    dim: usize,
    steps: Step,
    truths: &[RawObject],
    makes: &[(Make, u16, Step)],
    clutter: &[RawObject],
    unit: f64,
    jitter: bool,
    noise: &[u32],
    params: TrajectoryParams,
) -> Scene {
    let mut draws = noise.iter().cycle();
    let mut point = |grid: &[i8]| -> Vec<f64> {
        grid.iter()
            .map(|&v| {
                let off = if jitter {
                    (*draws.next().unwrap() as f64 / 1000.0 - 0.5) * 0.2 * unit
                } else {
                    0.0
                };
                v as f64 * unit + off
            })
            .collect()
    };
    // Presence: a run from the first step, with gaps where the bit is clear (the first step is
    // always present, so no object is empty).
    let present = |first: Step, bits: u16, k: Step| k == first || (k > first && bits >> k & 1 == 1);
    let mut truth_points: Vec<Vec<(Step, Vec<f64>)>> = Vec::new();
    for (first, bits, grid) in truths {
        let points = (0..steps)
            .filter(|&k| present(*first, *bits, k))
            .map(|k| (k, point(&grid[k as usize])))
            .collect();
        truth_points.push(points);
    }
    let mut estimates: Vec<Vec<(Step, Vec<f64>)>> = Vec::new();
    for (n, (first, bits, grid)) in clutter.iter().enumerate() {
        let mode = makes.get(n).map(|m| m.0);
        let own: Vec<(Step, Vec<f64>)> = (0..steps)
            .filter(|&k| present(*first, *bits, k))
            .map(|k| (k, point(&grid[k as usize])))
            .collect();
        let source = |i: usize, k: Step| -> Option<Vec<f64>> {
            if truth_points.is_empty() {
                return None;
            }
            let t = &truth_points[i % truth_points.len()];
            t.iter().find(|(s, _)| *s == k).map(|(_, v)| v.clone())
        };
        let derived: Vec<(Step, Vec<f64>)> = match mode {
            None | Some(Make::Clutter) => own,
            Some(Make::Copy(i)) => (0..steps)
                .filter(|&k| present(*first, *bits, k))
                .filter_map(|k| source(i, k).map(|v| (k, v)))
                .collect(),
            Some(Make::Shifted(i)) => (0..steps)
                .filter(|&k| present(*first, *bits, k))
                .filter_map(|k| {
                    source(i, k).map(|v| {
                        let shift = &grid[0];
                        let v = v
                            .iter()
                            .zip(shift)
                            .map(|(a, &s)| a + s as f64 * unit * 0.5)
                            .collect();
                        (k, v)
                    })
                })
                .collect(),
            Some(Make::Switch(a, b, at)) => (0..steps)
                .filter(|&k| present(*first, *bits, k))
                .filter_map(|k| source(if k < at { a } else { b }, k).map(|v| (k, v)))
                .collect(),
        };
        if !derived.is_empty() {
            estimates.push(derived);
        }
    }
    let set = |prefix: &str, objects: Vec<Vec<(Step, Vec<f64>)>>| {
        TrajectorySet::new(
            dim,
            objects
                .into_iter()
                .enumerate()
                .map(|(n, points)| Trajectory::new(format!("{prefix}{n}"), dim, points).unwrap())
                .collect(),
        )
        .unwrap()
    };
    Scene {
        truth: set("t", truth_points),
        estimate: set("e", estimates),
        params,
    }
}

proptest! {
    #![proptest_config(seeded(10_000, 20261203))]

    /// Small scenes (up to 4 truths, 6 estimates, 8 steps). Reference: microlp on every scene;
    /// the definition by brute force on those of at most 3 truths and 3 estimates; per-step
    /// GOSPA when gamma = 0.
    #[test]
    fn default_engine_matches_microlp_on_small_random_scenes(scene in scene(4, 6, 8, GRIDS)) {
        compare_engines(&scene)?;
    }
}

proptest! {
    #![proptest_config(seeded(1_500, 20261204))]

    /// Larger, crowded scenes (up to 8 truths, 10 estimates, 16 steps), where components hold
    /// several truths competing for the same estimates. Reference: microlp; per-step GOSPA
    /// when gamma = 0.
    #[test]
    fn default_engine_matches_microlp_on_crowded_random_scenes(scene in scene(8, 10, 16, GRIDS)) {
        compare_engines(&scene)?;
    }
}

/// The deflected subgradient steps (P. M. Camerini, L. Fratta, F. Maffioli, Mathematical
/// Programming Study 3, 1975), which the default settings start only after 100 plain steps, are
/// forced from the first step here and run to the limit: every value must still be the LP
/// optimum. Reference: the microlp simplex engine (a general LP solver outside this engine),
/// within the proof tolerance.
fn compare_deflected(scene: &Scene) -> Result<(), TestCaseError> {
    let options = SolveOptions {
        deflect_after: 0,
        ..SolveOptions::default()
    };
    compare_proven_with_microlp(scene, options, "deflected from the first step")
}

proptest! {
    #![proptest_config(seeded(1_500, 20261208))]

    /// Deflected steps from the first iteration on crowded scenes. Reference: microlp.
    #[test]
    fn deflected_steps_keep_the_microlp_value(scene in scene(8, 10, 16, GRIDS)) {
        compare_deflected(&scene)?;
    }
}

/// Compares the default engine stopped after `iterations` subgradient steps (so that most
/// components with competing truths fall back to the simplex, which must then keep the value
/// and the certificate right) with microlp.
fn compare_forced_fallback(scene: &Scene, iterations: usize) -> Result<(), TestCaseError> {
    let options = SolveOptions {
        max_iterations: iterations,
        ..SolveOptions::default()
    };
    let what = format!("stopped after {iterations} iterations");
    compare_proven_with_microlp(scene, options, &what)
}

/// Solves `scene` with `options`: the certificate must hold, the value must be microlp's within
/// the proof tolerance, and the score must be proven.
fn compare_proven_with_microlp(
    scene: &Scene,
    options: SolveOptions,
    what: &str,
) -> Result<(), TestCaseError> {
    let (x, y, params) = (&scene.truth, &scene.estimate, &scene.params);
    let l = solve(x, y, params, options);
    let m = microlp(x, y, params);
    let scale = scale(x, y, params, &[&l, &m]);
    check_certificate(&l, scale).map_err(TestCaseError::fail)?;
    let tol = tolerance(m.total, scale);
    prop_assert!(
        (l.total - m.total).abs() <= tol,
        "{}: {} vs microlp {}; {:?}",
        what,
        l.total,
        m.total,
        l.certificate
    );
    prop_assert!(l.certificate.proven, "{:?}", l.certificate);
    Ok(())
}

proptest! {
    #![proptest_config(seeded(3_000, 20261207))]

    /// The simplex fallback on ordinary scenes, forced by an iteration limit of 0 or 1.
    /// Reference: microlp.
    #[test]
    fn a_forced_fallback_keeps_the_microlp_value(
        scene in scene(6, 8, 10, GRIDS),
        iterations in 0usize..=1,
    ) {
        compare_forced_fallback(&scene, iterations)?;
    }
}

/// On scenes of at most 3 truths and 3 estimates, compares the default engine with the
/// definition by brute force, and with the per-step sum when gamma = 0; no simplex reference.
fn compare_with_definition(scene: &Scene) -> Result<(), TestCaseError> {
    let (x, y, params) = (&scene.truth, &scene.estimate, &scene.params);
    let l = score_with(x, y, params, &Distance::default(), &SolveOptions::default())
        .map_err(|e| TestCaseError::fail(format!("default engine: {e}")))?;
    let scale = scale(x, y, params, &[&l]);
    check_certificate(&l, scale).map_err(TestCaseError::fail)?;
    prop_assert!(l.certificate.proven, "{:?}", l.certificate);
    let exact = brute_force(x, y, params);
    let tol = tolerance(exact, scale);
    prop_assert!(
        l.total <= exact + tol,
        "LP {} above the exact metric {}",
        l.total,
        exact
    );
    if l.integral {
        prop_assert!(
            (l.total - exact).abs() <= tol,
            "{} vs the exact metric {}",
            l.total,
            exact
        );
    }
    if params.switch_penalty == 0.0 {
        let sum = per_step_sum(x, y, params);
        prop_assert!(
            (l.total - sum).abs() <= tolerance(sum, scale),
            "{} vs {}",
            l.total,
            sum
        );
    }
    Ok(())
}

proptest! {
    #![proptest_config(seeded(2_000, 20261206))]

    /// Distances 1e4 to 1e7 times below the cut-off, where the differences between
    /// assignments are far below 1e-12 of the all-unassigned cost but far above double
    /// precision. A simplex's tolerances may not resolve them (microlp refuses some such
    /// scenes with a consistency error), so the references here are the definition by brute
    /// force and, at gamma = 0, the per-step sum.
    #[test]
    fn default_engine_matches_the_definition_on_tiny_distances(scene in scene(3, 3, 6, TINY)) {
        compare_with_definition(&scene)?;
    }
}

#[test]
fn a_proven_certificate_bounds_the_optimum_at_millimetre_distances() {
    // The smallest case the tiny-distance search above found of a wrong proven value. One
    // step, two truths at 0.0019 and 0.0019002, two estimates at -0.0001 and -0.0000932;
    // c = 10, p = 2 (gamma plays no part in one step). By hand, from the definition: in one
    // dimension with p > 1 the sorted matching is optimal, 0.002^2 + 0.0019934^2 =
    // 4e-6 + 3.97364356e-6 = 7.97364356e-6 (also per-step GOSPA^p, alpha = 2); the crossed
    // matching costs 0.0019932^2 + 0.0020002^2 = 7.97364628e-6, 3.4e-7 of the value more.
    // An earlier stopping rule (a gap of 1e-12 of the all-unassigned cost, 2e-10 here) let
    // the crossed matching pass as proven. microlp gives 7.97364356e-6.
    use crate::support::{line, lines};
    let x = lines(vec![line("t0", 0, &[0.0019]), line("t1", 0, &[0.0019002])]);
    let y = lines(vec![
        line("e0", 0, &[-0.0001]),
        line("e1", 0, &[-0.0000932]),
    ]);
    let params = TrajectoryParams::new(10.0, 2.0, 1.0).unwrap();
    let optimum = 4e-6 + 3.97364356e-6;
    assert!((per_step_sum(&x, &y, &params) - optimum).abs() <= 1e-9 * optimum);
    assert!((microlp(&x, &y, &params).total - optimum).abs() <= 1e-9 * optimum);
    let l = lagrangian(&x, &y, &params);
    let c = &l.certificate;
    assert!(c.proven, "{c:?}");
    assert!(
        c.lower <= optimum * (1.0 + 1e-9),
        "the proven lower bound {} is above the optimum {optimum}",
        c.lower
    );
    assert!(
        (l.total - optimum).abs() <= 1e-9 * optimum,
        "{} vs {optimum} by hand",
        l.total
    );
}

// ---------------------------------------------------------------------------------------------
// 4. gamma = 0: the sum of per-step GOSPA.

#[test]
fn without_switching_penalty_the_value_is_the_per_step_sum() {
    // Reference: per-step GOSPA^p (alpha = 2), summed over the steps; with gamma = 0 trajectory
    // GOSPA equals that sum (García-Fernández, Rahmathullah, Svensson, IEEE TSP 68, 2020).
    // Scenes: the reference scenes and fractional fixtures, re-scored with gamma = 0.
    let file: TrajectoryFile = read("trajectory_cases.json");
    let mut scenes: Vec<(TrajectorySet, TrajectorySet, f64, f64)> = file
        .cases
        .iter()
        .map(|case| {
            let dim = dimension(case);
            let (x, y) = (to_set(&case.truth, dim), to_set(&case.estimate, dim));
            (x, y, case.cutoff, case.order)
        })
        .collect();
    for (_, x, y, params) in fixtures() {
        scenes.push((x, y, params.cutoff, params.order));
    }
    for (n, (x, y, cutoff, order)) in scenes.iter().enumerate() {
        for order in [*order, 1.0, 2.0, 3.0] {
            let params = TrajectoryParams::new(*cutoff, order, 0.0).unwrap();
            let sum = per_step_sum(x, y, &params);
            let l = lagrangian(x, y, &params);
            let scale = scale(x, y, &params, &[&l]);
            check_certificate(&l, scale).unwrap_or_else(|e| panic!("scene {n}: {e}"));
            assert!(
                (l.total - sum).abs() <= tolerance(sum, scale),
                "scene {n}, p = {order}: {} vs per-step sum {sum}",
                l.total
            );
            assert!(l.certificate.proven && l.parts.switching == 0.0);
        }
    }
}

// ---------------------------------------------------------------------------------------------
// 5. The memory budget.

/// The default options with a memory budget of `bytes`.
fn within(bytes: u64) -> SolveOptions {
    SolveOptions {
        memory_budget: bytes,
        ..SolveOptions::default()
    }
}

#[test]
fn a_tiny_budget_reports_an_unproven_component_with_true_bounds() {
    // The fractional fixtures cannot be proven by the Lagrangian bounds (their LP optimum is
    // below every integral assignment), and a budget of 1,000 bytes holds their few cells but
    // not one simplex variable: each must be reported with bounds. References: microlp for the
    // LP value, scipy milp for the integral optimum (the upper bound is an integral
    // assignment's cost, so it is at least that).
    for (f, x, y, params) in fixtures() {
        let options = within(1000);
        let s = solve(&x, &y, &params, options);
        let m = microlp(&x, &y, &params);
        let scale = scale(&x, &y, &params, &[&s, &m]);
        check_certificate(&s, scale).unwrap_or_else(|e| panic!("{}: {e}", f.name));
        let c = &s.certificate;
        assert!(c.bounded >= 1 && !c.proven, "{}: {c:?}", f.name);
        assert_eq!(c.simplex, 0, "{}: a simplex ran over the budget", f.name);
        assert!(!s.integral, "{}", f.name);
        let tol = tolerance(m.total, scale);
        assert!(
            c.lower <= m.total + tol && m.total <= c.upper + tol,
            "{}: microlp {} outside {c:?}",
            f.name,
            m.total
        );
        assert!(
            (m.total - f.lp_total).abs() <= tolerance(f.lp_total, scale),
            "{}: microlp {} vs scipy linprog {}",
            f.name,
            m.total,
            f.lp_total
        );
        assert!(
            c.upper >= f.exact_total - tolerance(f.exact_total, scale),
            "{}: upper bound {} below scipy milp {}",
            f.name,
            c.upper,
            f.exact_total
        );
        assert!(c.lower < c.upper && c.gap > 0.0, "{}: {c:?}", f.name);
        assert_eq!(s.notes.len(), c.bounded, "{}: {:?}", f.name, s.notes);
        for note in &s.notes {
            assert!(
                note.contains("not proven") && note.contains("--memory-budget"),
                "{}: the note says neither why nor what to do: {note}",
                f.name
            );
        }
    }
}

#[test]
fn a_budget_too_small_for_the_candidate_pairs_is_refused() {
    // Any close pair needs some bytes: a budget of 1 byte refuses every scene with one.
    for (f, x, y, params) in fixtures() {
        let options = within(1);
        match score_with(&x, &y, &params, &Distance::default(), &options) {
            Err(Error::Budget(message)) => assert!(
                message.contains("--memory-budget") && message.contains("cut-off"),
                "{}: {message}",
                f.name
            ),
            other => panic!("{}: expected a budget error, got {other:?}", f.name),
        }
    }
}

/// One truth and two estimates near it only at steps 0 and `steps - 1` (far in between):
/// two close steps per pair, but a shortest-path window of `steps` cells per pair.
fn sparse_close_scene(steps: Step) -> (TrajectorySet, TrajectorySet) {
    let truth = (0..steps).map(|k| (k, vec![0.0])).collect();
    let estimate = |near: f64| -> Vec<(Step, Vec<f64>)> {
        (0..steps)
            .map(|k| {
                let x = if k == 0 || k == steps - 1 {
                    near
                } else {
                    100.0
                };
                (k, vec![x])
            })
            .collect()
    };
    let x = TrajectorySet::new(1, vec![Trajectory::new("t", 1, truth).unwrap()]).unwrap();
    let y = TrajectorySet::new(
        1,
        vec![
            Trajectory::new("a", 1, estimate(0.1)).unwrap(),
            Trajectory::new("b", 1, estimate(0.2)).unwrap(),
        ],
    )
    .unwrap();
    (x, y)
}

#[test]
fn a_budget_that_holds_the_pairs_but_not_the_cells_starts_no_simplex_over_it() {
    // 6 LP variables need about 18 kB by the library's own 3,000 bytes per variable, over a
    // 1,000-byte budget; the cells of the shortest-path model do not fit either.
    // SolveOptions::memory_budget: "a simplex fallback that would need more is not started".
    // Here the 4 close steps fit a budget of 1,000 bytes but the 400 cells of the shortest-path
    // model do not, and no LP variable fits it either: the solve must either refuse or report
    // bounds, never run a simplex.
    let (x, y) = sparse_close_scene(200);
    let params = TrajectoryParams::new(1.0, 1.0, 1.0).unwrap();
    let options = within(1000);
    match score_with(&x, &y, &params, &Distance::default(), &options) {
        Err(Error::Budget(_)) => {}
        Ok(s) => assert_eq!(
            s.certificate.simplex, 0,
            "a simplex ran within a 1,000-byte budget: {:?}, {} LP variables",
            s.certificate, s.stats.variables
        ),
        Err(other) => panic!("unexpected error {other}"),
    }
}

// ---------------------------------------------------------------------------------------------
// 6. The command line.

fn demo(name: &str) -> String {
    format!("{}/demo-data/{name}", env!("CARGO_MANIFEST_DIR"))
}

fn score_demo(budget: &str) -> std::process::Output {
    Command::cargo_bin("switchyard")
        .unwrap()
        .args(["score", "--truth", &demo("truth.csv"), "--estimate"])
        .arg(demo("tracker-swaps.csv"))
        .args(["--cutoff", "20", "--memory-budget", budget])
        .output()
        .unwrap()
}

#[test]
fn the_command_refuses_a_budget_too_small_and_says_why() {
    // Exit codes: src/cmd/mod.rs documents 4 for a refused budget; 2 for a command line that
    // does not parse (common practice of command-line parsers).
    let output = score_demo("1K");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(4), "{stderr}");
    assert!(output.stdout.is_empty());
    // Why: the pairs within the cut-off; what to do: a smaller cut-off or a larger budget.
    for words in [
        "memory budget",
        "within the cut-off",
        "raise --memory-budget",
    ] {
        assert!(stderr.contains(words), "missing {words:?} in {stderr}");
    }
    assert_eq!(stderr.lines().count(), 1, "{stderr}");

    let output = score_demo("nonsense");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("nonsense") && stderr.contains("--memory-budget"),
        "{stderr}"
    );
}

#[test]
fn the_budget_message_shows_a_need_larger_than_the_budget() {
    // The refusal of `--memory-budget 1K` gives two sizes, what the pairs would need and the
    // budget; printed with the same figure ("about 1 MB, over the budget of 1 MB") it does not
    // tell the user how far to raise the budget.
    let output = score_demo("1K");
    let stderr = String::from_utf8_lossy(&output.stderr);
    let need = stderr
        .split("need about ")
        .nth(1)
        .and_then(|s| s.split(" of memory").next());
    let budget = stderr
        .split("the budget of ")
        .nth(1)
        .and_then(|s| s.split(';').next());
    assert!(need.is_some() && budget.is_some(), "{stderr}");
    assert_ne!(need, budget, "{stderr}");
}
