//! The base distances (`specs/distances.md`): hand-computed boxes and great circles, weighted
//! distances by hand, the triangle inequality on random states for every distance, the values
//! of shapely and geographiclib (`tests/data/reference/distance_cases.json`), parameter and
//! row validation, and the options through the real binary.

use std::f64::consts::{FRAC_PI_2, PI};
use std::path::Path;

use assert_cmd::Command;
use predicates::str::contains;
use proptest::prelude::*;
use serde::Deserialize;
use serde_json::Value;
use switchyard::distance::{BoxLayout, Distance, EARTH_MEAN_RADIUS};
use switchyard::input::{read_csv, CsvLayout};
use switchyard::per_step::{per_step, GospaParams};
use switchyard::trajectory::{Trajectory, TrajectorySet};

use crate::support::seeded;

const R: f64 = EARTH_MEAN_RADIUS;
const LAYOUTS: [BoxLayout; 3] = [
    BoxLayout::CornerSize,
    BoxLayout::Corners,
    BoxLayout::CentreSize,
];

fn iou(layout: BoxLayout) -> Distance {
    Distance::Iou(layout)
}

/// A box given by its low and high corners, written in `layout`.
fn encode(layout: BoxLayout, low: &[f64], high: &[f64]) -> Vec<f64> {
    let (first, second): (Vec<f64>, Vec<f64>) = match layout {
        BoxLayout::CornerSize => (
            low.to_vec(),
            low.iter().zip(high).map(|(l, h)| h - l).collect(),
        ),
        BoxLayout::Corners => (low.to_vec(), high.to_vec()),
        BoxLayout::CentreSize => (
            low.iter().zip(high).map(|(l, h)| (l + h) / 2.0).collect(),
            low.iter().zip(high).map(|(l, h)| h - l).collect(),
        ),
    };
    first.into_iter().chain(second).collect()
}

// ---------------------------------------------------------------------------------------------
// Boxes by hand
// ---------------------------------------------------------------------------------------------

#[test]
fn iou_of_hand_computed_2d_boxes() {
    let d = iou(BoxLayout::CornerSize);
    // [0,2]x[0,2] and [1,3]x[1,3]: intersection 1 x 1 = 1, union 4 + 4 - 1 = 7, IoU 1/7,
    // distance 6/7.
    assert_eq!(
        d.between(&[0.0, 0.0, 2.0, 2.0], &[1.0, 1.0, 2.0, 2.0]),
        6.0 / 7.0
    );
    // [0,2]x[0,2] and [1,3]x[0,2]: intersection 1 x 2 = 2, union 6, distance 4/6 = 2/3.
    assert_eq!(
        d.between(&[0.0, 0.0, 2.0, 2.0], &[1.0, 0.0, 2.0, 2.0]),
        4.0 / 6.0
    );
    // [0,4]x[0,2] (area 8) and [2,6]x[1,5] (area 16): intersection [2,4]x[1,2] = 2,
    // union 8 + 16 - 2 = 22, IoU 2/22, distance 20/22 = 10/11.
    assert_eq!(
        d.between(&[0.0, 0.0, 4.0, 2.0], &[2.0, 1.0, 4.0, 4.0]),
        20.0 / 22.0
    );
    // [1,3]^2 inside [0,4]^2: intersection 4, union 16, IoU 1/4, distance 3/4.
    assert_eq!(
        d.between(&[0.0, 0.0, 4.0, 4.0], &[1.0, 1.0, 2.0, 2.0]),
        0.75
    );
    // Sharing an edge: [0,1]^2 and [1,2]x[0,1]: intersection 0 x 1 = 0, distance 1.
    assert_eq!(d.between(&[0.0, 0.0, 1.0, 1.0], &[1.0, 0.0, 1.0, 1.0]), 1.0);
    // Far apart: distance 1, however far.
    assert_eq!(d.between(&[0.0, 0.0, 1.0, 1.0], &[1e6, 0.0, 1.0, 1.0]), 1.0);
    // The same box: 0.
    assert_eq!(
        d.between(&[3.5, -2.0, 1.25, 7.0], &[3.5, -2.0, 1.25, 7.0]),
        0.0
    );
    // Symmetric.
    assert_eq!(
        d.between(&[1.0, 0.0, 2.0, 2.0], &[0.0, 0.0, 2.0, 2.0]),
        4.0 / 6.0
    );
}

#[test]
fn iou_of_hand_computed_3d_boxes() {
    let d = iou(BoxLayout::Corners);
    // [0,2]^3 and [1,3]x[0,2]x[0,2]: intersection 1 x 2 x 2 = 4, union 8 + 8 - 4 = 12,
    // distance 8/12 = 2/3.
    let cube = [0.0, 0.0, 0.0, 2.0, 2.0, 2.0];
    assert_eq!(
        d.between(&cube, &[1.0, 0.0, 0.0, 3.0, 2.0, 2.0]),
        8.0 / 12.0
    );
    // [0,2]^3 and [1,3]^3: intersection 1, union 15, distance 14/15.
    assert_eq!(
        d.between(&cube, &[1.0, 1.0, 1.0, 3.0, 3.0, 3.0]),
        14.0 / 15.0
    );
    // [1,2]^3 inside [0,3]^3: intersection 1, union 27, distance 26/27.
    assert_eq!(
        d.between(
            &[0.0, 0.0, 0.0, 3.0, 3.0, 3.0],
            &[1.0, 1.0, 1.0, 2.0, 2.0, 2.0]
        ),
        26.0 / 27.0
    );
    // Overlapping in x and y but not in z: distance 1.
    assert_eq!(d.between(&cube, &[0.0, 0.0, 2.0, 2.0, 2.0, 4.0]), 1.0);
    // The same 3-D box in centre-size: centre (1, 1, 1), sizes 2.
    let centred = iou(BoxLayout::CentreSize);
    assert_eq!(
        centred.between(
            &[1.0, 1.0, 1.0, 2.0, 2.0, 2.0],
            &[2.0, 1.0, 1.0, 2.0, 2.0, 2.0]
        ),
        8.0 / 12.0
    );
}

#[test]
fn the_three_layouts_read_the_same_box() {
    // The box [1,5]x[2,8] and [3,4]x[4,9], in each layout.
    let a = [
        [1.0, 2.0, 4.0, 6.0], // corner-size: x, y, width, height
        [1.0, 2.0, 5.0, 8.0], // corners: x1, y1, x2, y2
        [3.0, 5.0, 4.0, 6.0], // centre-size: cx, cy, width, height
    ];
    let b = [
        [3.0, 4.0, 1.0, 5.0],
        [3.0, 4.0, 4.0, 9.0],
        [3.5, 6.5, 1.0, 5.0],
    ];
    // Intersection [3,4]x[4,8] = 4, areas 24 and 5, union 25, distance 21/25.
    for (k, layout) in LAYOUTS.into_iter().enumerate() {
        assert_eq!(iou(layout).between(&a[k], &b[k]), 21.0 / 25.0, "{layout:?}");
        assert_eq!(encode(layout, &[1.0, 2.0], &[5.0, 8.0]), a[k]);
    }
}

#[test]
fn flat_boxes_are_at_distance_zero_from_themselves_and_one_from_all_else() {
    let d = iou(BoxLayout::CornerSize);
    let line = [1.0, 1.0, 0.0, 2.0]; // zero width
    assert_eq!(d.between(&line, &line), 0.0);
    assert_eq!(d.between(&line, &[1.0, 1.0, 0.0, 3.0]), 1.0); // another flat box
    assert_eq!(d.between(&line, &[0.0, 0.0, 4.0, 4.0]), 1.0); // a box holding it
    assert_eq!(d.between(&[0.0, 0.0, 4.0, 4.0], &line), 1.0);
    assert_eq!(d.between(&[2.0, 2.0, 0.0, 0.0], &[2.0, 2.0, 0.0, 0.0]), 0.0); // a point
    assert_eq!(d.between(&[2.0, 2.0, 0.0, 0.0], &[2.0, 3.0, 0.0, 0.0]), 1.0);
}

// ---------------------------------------------------------------------------------------------
// Great circles by hand
// ---------------------------------------------------------------------------------------------

/// Vincenty's formula on the sphere (the special case of his ellipsoid formula with zero
/// flattening), computed here independently of switchyard's haversine:
/// angle = atan2(sqrt((cos p2 sin dl)^2 + (cos p1 sin p2 - sin p1 cos p2 cos dl)^2),
///               sin p1 sin p2 + cos p1 cos p2 cos dl).
fn vincenty_sphere(a: &[f64], b: &[f64]) -> f64 {
    let (p1, p2) = (a[0].to_radians(), b[0].to_radians());
    let dl = (b[1] - a[1]).to_radians();
    let y1 = p2.cos() * dl.sin();
    let y2 = p1.cos() * p2.sin() - p1.sin() * p2.cos() * dl.cos();
    let x = p1.sin() * p2.sin() + p1.cos() * p2.cos() * dl.cos();
    R * (y1 * y1 + y2 * y2).sqrt().atan2(x)
}

#[test]
fn great_circles_by_hand() {
    let d = Distance::Geodesic;
    // Equator to pole along a meridian: a quarter of a great circle, pi/2 R (exactly: the
    // haversine is sin^2(45 deg) on both sides of the atan2, which returns pi/4).
    assert_eq!(d.between(&[0.0, 0.0], &[90.0, 0.0]), FRAC_PI_2 * R);
    assert_eq!(d.between(&[0.0, 17.0], &[-90.0, 17.0]), FRAC_PI_2 * R);
    // Antipodes: half a great circle, pi R.
    assert_relative_eq(d.between(&[0.0, 0.0], &[0.0, 180.0]), PI * R, 1e-15);
    assert_relative_eq(d.between(&[30.0, 40.0], &[-30.0, -140.0]), PI * R, 1e-15);
    assert_relative_eq(d.between(&[90.0, 0.0], &[-90.0, 0.0]), PI * R, 1e-15);
    // One degree of longitude on the equator: pi/180 R, about 111.195 km.
    assert_relative_eq(d.between(&[0.0, 0.0], &[0.0, 1.0]), PI / 180.0 * R, 1e-15);
    assert_relative_eq(d.between(&[0.0, 0.0], &[0.0, 1.0]), 111_195.08, 1e-7);
    // One degree of latitude anywhere along a meridian: the same.
    assert_relative_eq(d.between(&[45.0, 3.0], &[46.0, 3.0]), PI / 180.0 * R, 1e-14);
    // At a pole every longitude names the same point.
    assert_eq!(d.between(&[90.0, 10.0], &[90.0, -100.0]), 0.0);
    assert_eq!(d.between(&[-90.0, 0.0], &[-90.0, 180.0]), 0.0);
    // The same point; and the same point named with longitudes 360 degrees apart.
    assert_eq!(d.between(&[51.5, -0.1], &[51.5, -0.1]), 0.0);
    assert_eq!(d.between(&[51.5, 10.0], &[51.5, 370.0]), 0.0);
    // Longitudes wrap: 170 and -170 are 20 degrees apart, as are 170 and 190, or 530 and 190.
    let across = d.between(&[10.0, 170.0], &[10.0, -170.0]);
    assert_eq!(across, d.between(&[10.0, 170.0], &[10.0, 190.0]));
    assert_eq!(across, d.between(&[10.0, 530.0], &[10.0, 190.0]));
    assert_relative_eq(across, vincenty_sphere(&[10.0, 0.0], &[10.0, 20.0]), 1e-12);
    // Symmetric.
    assert_eq!(
        d.between(&[12.0, 34.0], &[-56.0, 78.0]),
        d.between(&[-56.0, 78.0], &[12.0, 34.0])
    );
}

fn assert_relative_eq(got: f64, want: f64, relative: f64) {
    assert!(
        (got - want).abs() <= relative * want.abs(),
        "{got} vs {want}: relative difference {:e}",
        (got - want).abs() / want.abs()
    );
}

fn lat_lon() -> impl Strategy<Value = Vec<f64>> {
    let latitude = prop_oneof![
        8 => -90.0..=90.0f64,
        1 => Just(90.0),
        1 => Just(-90.0),
    ];
    (latitude, -540.0..540.0f64).prop_map(|(lat, lon)| vec![lat, lon])
}

/// A point and another near it (about 1 mm to 1000 km away) or at the antipode's neighbourhood.
fn point_pair() -> impl Strategy<Value = (Vec<f64>, Vec<f64>)> {
    (
        lat_lon(),
        -8.0..1.0f64,
        -1.0..1.0f64,
        -1.0..1.0f64,
        any::<bool>(),
    )
        .prop_map(|(p, log_spread, u, v, antipodal)| {
            let spread = 10f64.powf(log_spread);
            let (lat, lon) = if antipodal {
                (-p[0], p[1] + 180.0)
            } else {
                (p[0], p[1])
            };
            let q = vec![(lat + spread * u).clamp(-90.0, 90.0), lon + spread * v];
            (p, q)
        })
}

proptest! {
    #![proptest_config(seeded(2000, 20_260_901))]

    #[test]
    fn haversine_agrees_with_vincenty_on_the_sphere(a in lat_lon(), b in lat_lon()) {
        let ours = Distance::Geodesic.between(&a, &b);
        let theirs = vincenty_sphere(&a, &b);
        prop_assert!((ours - theirs).abs() <= 1e-12 * theirs + 1e-8, "{ours} vs {theirs}");
    }

    #[test]
    fn haversine_agrees_with_vincenty_near_and_near_antipodal((a, b) in point_pair()) {
        let ours = Distance::Geodesic.between(&a, &b);
        let theirs = vincenty_sphere(&a, &b);
        // 1e-9 relative for distances above 1 m, and 1e-8 m (10 nm) below.
        prop_assert!((ours - theirs).abs() <= 1e-9 * theirs + 1e-8, "{a:?} {b:?}: {ours} vs {theirs}");
    }
}

// ---------------------------------------------------------------------------------------------
// Weighted distances by hand
// ---------------------------------------------------------------------------------------------

#[test]
fn weighted_distances_by_hand() {
    let (a, b) = ([0.0, 0.0], [1.0, 1.0]);
    // sqrt(9 * 1^2 + 16 * 1^2) = sqrt(25) = 5.
    let euclidean = Distance::Euclidean {
        weights: Some(vec![9.0, 16.0]),
    };
    assert_eq!(euclidean.between(&a, &b), 5.0);
    // Differences (3, -4): Manhattan 2 * 3 + 0.5 * 4 = 8; Chebyshev max(6, 2) = 6.
    let (a, b) = ([1.0, 5.0], [4.0, 1.0]);
    let w = Some(vec![2.0, 0.5]);
    assert_eq!(
        Distance::Manhattan { weights: w.clone() }.between(&a, &b),
        8.0
    );
    assert_eq!(Distance::Chebyshev { weights: w }.between(&a, &b), 6.0);
    // Unweighted: Euclidean 5, Manhattan 7, Chebyshev 4.
    assert_eq!(Distance::Euclidean { weights: None }.between(&a, &b), 5.0);
    assert_eq!(Distance::Manhattan { weights: None }.between(&a, &b), 7.0);
    assert_eq!(Distance::Chebyshev { weights: None }.between(&a, &b), 4.0);
    // Weights of one change nothing; position against velocity: (x, v) with v weighted 1/4:
    // sqrt(1 * 2^2 + 0.25 * 4^2) = sqrt(8).
    let ones = Distance::Euclidean {
        weights: Some(vec![1.0, 1.0]),
    };
    assert_eq!(ones.between(&a, &b), 5.0);
    let position_velocity = Distance::Euclidean {
        weights: Some(vec![1.0, 0.25]),
    };
    assert_eq!(
        position_velocity.between(&[0.0, 0.0], &[2.0, 4.0]),
        8f64.sqrt()
    );
}

// ---------------------------------------------------------------------------------------------
// The triangle inequality, symmetry and identity on random states
// ---------------------------------------------------------------------------------------------

fn check_metric(
    d: &Distance,
    x: &[f64],
    y: &[f64],
    z: &[f64],
    slack: f64,
) -> Result<(), TestCaseError> {
    let (xy, yz, xz) = (d.between(x, y), d.between(y, z), d.between(x, z));
    prop_assert!(
        xz <= xy + yz + slack,
        "{}: d(x,z) = {xz} > {xy} + {yz}",
        d.name()
    );
    prop_assert_eq!(xy, d.between(y, x));
    prop_assert_eq!(d.between(x, x), 0.0);
    prop_assert!(xy >= 0.0);
    Ok(())
}

fn vector(dim: usize) -> impl Strategy<Value = Vec<f64>> {
    proptest::collection::vec(-10.0..10.0f64, dim)
}

fn minkowski(dim: usize) -> impl Strategy<Value = Distance> {
    let weights = proptest::option::of(proptest::collection::vec(0.01..10.0f64, dim));
    (0..3usize, weights).prop_map(|(kind, weights)| match kind {
        0 => Distance::Euclidean { weights },
        1 => Distance::Manhattan { weights },
        _ => Distance::Chebyshev { weights },
    })
}

/// A box of `axes` axes: on a coarse grid (so that boxes often share edges, nest, coincide or
/// are flat) or anywhere, as `(low, high)`.
fn any_box(axes: usize) -> impl Strategy<Value = (Vec<f64>, Vec<f64>)> {
    let grid = proptest::collection::vec((0..6i32, 0..4i32), axes).prop_map(|v| {
        v.into_iter()
            .map(|(l, s)| (l as f64 * 0.5, (l + s) as f64 * 0.5))
            .unzip()
    });
    let free = proptest::collection::vec((-5.0..5.0f64, 0.0..4.0f64), axes)
        .prop_map(|v| v.into_iter().map(|(l, s)| (l, l + s)).unzip());
    prop_oneof![grid, free]
}

fn layout() -> impl Strategy<Value = BoxLayout> {
    prop_oneof![
        Just(BoxLayout::CornerSize),
        Just(BoxLayout::Corners),
        Just(BoxLayout::CentreSize)
    ]
}

proptest! {
    #![proptest_config(seeded(3000, 20_260_902))]

    #[test]
    fn minkowski_distances_are_metrics(
        (d, x, y, z) in (1..5usize).prop_flat_map(|dim| (minkowski(dim), vector(dim), vector(dim), vector(dim))),
    ) {
        check_metric(&d, &x, &y, &z, 1e-12)?;
    }

    #[test]
    fn one_minus_iou_is_a_metric(
        layout in layout(),
        (x, y, z) in prop_oneof![Just(2usize), Just(3)].prop_flat_map(|axes| (any_box(axes), any_box(axes), any_box(axes))),
    ) {
        let [x, y, z] = [x, y, z].map(|(low, high)| encode(layout, &low, &high));
        let d = iou(layout);
        for (x, y, z) in [(&x, &y, &z), (&y, &z, &x), (&z, &x, &y)] {
            check_metric(&d, x, y, z, 1e-12)?;
        }
        let value = d.between(&x, &y);
        prop_assert!((0.0..=1.0).contains(&value));
    }

    #[test]
    fn the_layouts_agree_on_boxes_with_exact_coordinates(
        (x, y) in prop_oneof![Just(2usize), Just(3)].prop_flat_map(|axes| (any_box(axes), any_box(axes))),
    ) {
        // Round to quarters: every layout's conversion is then exact.
        let round = |v: &Vec<f64>| v.iter().map(|c| (c * 4.0).round() / 4.0).collect::<Vec<f64>>();
        let (xl, xh, yl, yh) = (round(&x.0), round(&x.1), round(&y.0), round(&y.1));
        let values: Vec<f64> = LAYOUTS
            .iter()
            .map(|&layout| iou(layout).between(&encode(layout, &xl, &xh), &encode(layout, &yl, &yh)))
            .collect();
        prop_assert_eq!(values[0], values[1]);
        prop_assert_eq!(values[0], values[2]);
    }

    #[test]
    fn the_great_circle_distance_is_a_metric(
        x in lat_lon(),
        (y, z) in point_pair(),
    ) {
        let d = Distance::Geodesic;
        // About 10 rounding errors of pi R (2e7 m): 1e-7 m.
        for (x, y, z) in [(&x, &y, &z), (&y, &z, &x), (&z, &x, &y)] {
            check_metric(&d, x, y, z, 1e-7)?;
        }
        prop_assert!(d.between(&x, &y) <= PI * R * (1.0 + 1e-15));
    }
}

// ---------------------------------------------------------------------------------------------
// Against shapely and geographiclib
// ---------------------------------------------------------------------------------------------

#[derive(Deserialize)]
struct ReferenceFile {
    earth_mean_radius: f64,
    wgs84: Wgs84,
    ratio_bound: [f64; 2],
    iou_cases: Vec<BoxCase>,
    geodesic_cases: Vec<PointCase>,
}

#[derive(Deserialize)]
struct Wgs84 {
    a: f64,
    f: f64,
}

#[derive(Deserialize)]
struct BoxCase {
    kind: String,
    a: [f64; 4],
    b: [f64; 4],
    iou: f64,
}

#[derive(Deserialize)]
struct PointCase {
    kind: String,
    a: [f64; 2],
    b: [f64; 2],
    wgs84: f64,
    sphere: f64,
}

fn reference() -> ReferenceFile {
    let path = format!(
        "{}/tests/data/reference/distance_cases.json",
        env!("CARGO_MANIFEST_DIR")
    );
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

#[test]
fn iou_matches_shapely_in_every_layout() {
    let file = reference();
    assert!(file.iou_cases.len() >= 400);
    for (n, case) in file.iou_cases.iter().enumerate() {
        let ([ax1, ay1, ax2, ay2], [bx1, by1, bx2, by2]) = (case.a, case.b);
        let want = 1.0 - case.iou;
        for layout in LAYOUTS {
            let got = iou(layout).between(
                &encode(layout, &[ax1, ay1], &[ax2, ay2]),
                &encode(layout, &[bx1, by1], &[bx2, by2]),
            );
            assert!(
                (got - want).abs() <= 1e-12,
                "case {n} ({}), {layout:?}: {got} vs shapely {want}",
                case.kind
            );
        }
    }
}

#[test]
fn great_circles_match_an_independent_spherical_formula_and_the_ellipsoid_within_its_bound() {
    let file = reference();
    assert_eq!(file.earth_mean_radius, R);
    assert!(file.geodesic_cases.len() >= 400);
    // The sphere against the ellipsoid: keeping latitude and longitude stretches lengths by
    // between M_min / R and N_max / R (the extreme radii of curvature, a (1 - e^2) at the
    // equator and a^2 / b at the poles), so R / N_max <= sphere / ellipsoid <= R / M_min:
    // -0.447 % to +0.562 % (specs/distances.md).
    let (a, f) = (file.wgs84.a, file.wgs84.f);
    assert_eq!((a, f), (6_378_137.0, 1.0 / 298.257_223_563));
    let b = a * (1.0 - f);
    let e2 = f * (2.0 - f);
    let (low, high) = (R / (a * a / b), R / (a * (1.0 - e2)));
    assert_relative_eq(file.ratio_bound[0], low, 1e-15);
    assert_relative_eq(file.ratio_bound[1], high, 1e-15);
    assert!((0.9955..0.9956).contains(&low) && (1.0056..1.0057).contains(&high));
    let mut seen = (f64::INFINITY, f64::NEG_INFINITY);
    for (n, case) in file.geodesic_cases.iter().enumerate() {
        let ours = Distance::Geodesic.between(&case.a, &case.b);
        assert!(
            (ours - case.sphere).abs() <= 1e-12 * case.sphere + 1e-8,
            "case {n} ({}): {ours} vs the vector formula's {}",
            case.kind,
            case.sphere
        );
        if case.wgs84 > 0.0 {
            let ratio = ours / case.wgs84;
            // 1e-9 of slack for rounding and geographiclib's 15 nm.
            assert!(
                low * (1.0 - 1e-9) <= ratio && ratio <= high * (1.0 + 1e-9),
                "case {n} ({}): sphere / WGS84 = {ratio}, outside [{low}, {high}]",
                case.kind
            );
            seen = (seen.0.min(ratio), seen.1.max(ratio));
        } else {
            assert!(ours < 1e-6);
        }
    }
    // The bound is nearly met: the cases reach both ends to within 0.02 %.
    assert!(seen.0 < low + 2e-4 && seen.1 > high - 2e-4, "{seen:?}");
}

// ---------------------------------------------------------------------------------------------
// Validation
// ---------------------------------------------------------------------------------------------

#[test]
fn parameters_that_break_a_distance_are_refused() {
    let box_distance = iou(BoxLayout::CornerSize);
    assert!(box_distance.validate(4, 1.0).is_ok());
    assert!(box_distance.validate(6, 0.25).is_ok());
    for (dim, cutoff) in [
        (4, 1.5),
        (4, 0.0),
        (4, -0.5),
        (4, f64::NAN),
        (4, f64::INFINITY),
        (2, 0.5),
        (5, 0.5),
        (8, 0.5),
    ] {
        assert!(
            box_distance.validate(dim, cutoff).is_err(),
            "dim {dim}, cut-off {cutoff}"
        );
    }
    let message = box_distance.validate(4, 2.0).unwrap_err().to_string();
    assert!(message.contains("(0, 1]"), "{message}");
    let message = box_distance.validate(3, 0.5).unwrap_err().to_string();
    assert!(message.contains("x, y, width, height"), "{message}");
    assert!(Distance::Geodesic.validate(2, 5000.0).is_ok());
    assert!(Distance::Geodesic.validate(3, 5000.0).is_err());
    let weighted = |weights: Vec<f64>| Distance::Euclidean {
        weights: Some(weights),
    };
    assert!(weighted(vec![1.0, 2.0]).validate(2, 1.0).is_ok());
    assert!(weighted(vec![1.0, 2.0]).validate(3, 1.0).is_err());
    // A zero weight would put distinct states at distance 0: not a metric.
    for bad in [
        vec![1.0, 0.0],
        vec![0.0, 0.0],
        vec![1.0, -1.0],
        vec![1.0, f64::NAN],
        vec![f64::INFINITY, 1.0],
    ] {
        assert!(weighted(bad.clone()).validate(2, 1.0).is_err(), "{bad:?}");
    }
}

#[test]
fn states_a_distance_cannot_read_are_named() {
    let corner_size = iou(BoxLayout::CornerSize);
    assert_eq!(corner_size.check_state(&[0.0, 0.0, 2.0, 0.0]), Ok(()));
    let (index, message) = corner_size.check_state(&[0.0, 0.0, 2.0, -1.0]).unwrap_err();
    assert_eq!(index, 3);
    assert!(message.contains("height is negative"), "{message}");
    let (index, _) = iou(BoxLayout::CentreSize)
        .check_state(&[0.0, 0.0, 0.0, -1.0, 1.0, 1.0])
        .unwrap_err();
    assert_eq!(index, 3);
    let (index, message) = iou(BoxLayout::Corners)
        .check_state(&[0.0, 3.0, 2.0, 1.0])
        .unwrap_err();
    assert_eq!(index, 3);
    assert!(
        message.contains("y2 = 1 is less than its y1 = 3"),
        "{message}"
    );
    // Volumes up to half the largest double, so that two of them add up to a finite number.
    assert!(iou(BoxLayout::Corners)
        .check_state(&[0.0, 0.0, 1e150, 1e150])
        .is_ok());
    assert!(iou(BoxLayout::Corners)
        .check_state(&[0.0, 0.0, 8e307, 1.0])
        .is_ok());
    assert!(iou(BoxLayout::Corners)
        .check_state(&[0.0, 0.0, 1e308, 1.0])
        .is_err()); // > 2^1023
    assert!(iou(BoxLayout::Corners)
        .check_state(&[-1e308, 0.0, 1e308, 1.0])
        .is_err()); // width
    assert!(corner_size.check_state(&[0.0, 0.0, 1e200, 1e200]).is_err()); // area
    assert_eq!(Distance::Geodesic.check_state(&[-90.0, 720.0]), Ok(()));
    let (index, message) = Distance::Geodesic.check_state(&[95.0, 0.0]).unwrap_err();
    assert_eq!(index, 0);
    assert!(
        message.contains("latitude 95 is outside [-90, 90]"),
        "{message}"
    );
    assert_eq!(
        Distance::Geodesic.check_state(&[-90.5, 0.0]).unwrap_err().0,
        0
    );
}

#[test]
fn the_reader_names_file_line_and_column_of_a_state_the_distance_cannot_read() {
    let layout = |distance: Distance, columns: &str| CsvLayout {
        state_columns: Some(columns.split(',').map(String::from).collect()),
        distance: Some(distance),
        ..CsvLayout::default()
    };
    let text = "time,id,left,top,w,h\n0,a,0,0,2,2\n1,a,0,0,-2,2\n";
    let error = read_csv(
        text.as_bytes(),
        "boxes.csv",
        &layout(iou(BoxLayout::CornerSize), "left,top,w,h"),
    )
    .unwrap_err()
    .to_string();
    assert!(
        error.starts_with("boxes.csv, line 3, column 5 (\"w\"): the box's width is negative"),
        "{error}"
    );
    let text = "time,id,lon,lat\n0,a,10,45\n0,b,10,-91\n";
    let error = read_csv(
        text.as_bytes(),
        "ships.csv",
        &layout(Distance::Geodesic, "lat,lon"),
    )
    .unwrap_err()
    .to_string();
    assert!(
        error.starts_with("ships.csv, line 3, column 4 (\"lat\"): latitude -91 is outside"),
        "{error}"
    );
    // Without a distance the reader takes any finite numbers.
    assert!(read_csv(text.as_bytes(), "ships.csv", &CsvLayout::default()).is_err()); // no x, y
    let plain = CsvLayout {
        state_columns: Some(vec!["lat".into(), "lon".into()]),
        ..CsvLayout::default()
    };
    assert!(read_csv(text.as_bytes(), "ships.csv", &plain).is_ok());
}

#[test]
fn the_library_refuses_sets_and_cut_offs_a_distance_cannot_take() {
    let set = |state: Vec<f64>| {
        TrajectorySet::new(4, vec![Trajectory::new("a", 4, vec![(0, state)]).unwrap()]).unwrap()
    };
    let good = set(vec![0.0, 0.0, 1.0, 1.0]);
    let bad = set(vec![0.0, 0.0, -1.0, 1.0]);
    let distance = iou(BoxLayout::CornerSize);
    let params = GospaParams::new(1.0, 1.0, 2.0).unwrap();
    assert!(per_step(&good, &good, &params, &distance).is_ok());
    let error = per_step(&good, &bad, &params, &distance)
        .unwrap_err()
        .to_string();
    assert!(error.contains("object \"a\" at step 0"), "{error}");
    let too_far = GospaParams::new(2.0, 1.0, 2.0).unwrap();
    assert!(per_step(&good, &good, &too_far, &distance).is_err());
}

// ---------------------------------------------------------------------------------------------
// Through the real binary
// ---------------------------------------------------------------------------------------------

fn switchyard() -> Command {
    Command::cargo_bin("switchyard").unwrap()
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path.to_str().unwrap().to_string()
}

const TRUTH_BOXES: &str = "time,id,left,top,width,height\n0,a,0,0,2,2\n1,a,0,0,2,2\n";
const ESTIMATE_BOXES: &str =
    "time,id,left,top,width,height\n0,p,1,0,2,2\n1,p,0,0,4,2\n1,q,50,50,3,3\n";
const BOX_COLUMNS: &str = "left,top,width,height";

#[test]
fn steps_with_iou_give_hand_computed_values() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "truth.csv", TRUTH_BOXES);
    let estimate = write(dir.path(), "estimate.csv", ESTIMATE_BOXES);
    let output = switchyard()
        .args(["steps", "--truth", &truth, "--estimate", &estimate])
        .args([
            "--distance",
            "iou",
            "--box",
            "corner-size",
            "--state-columns",
            BOX_COLUMNS,
        ])
        .args(["--cutoff", "1", "--order", "1", "--format", "json"])
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let doc: Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(doc["inputs"]["distance"], "iou");
    let steps = doc["steps"].as_array().unwrap();
    assert_eq!(steps.len(), 2);
    // Step 0: a = [0,2]x[0,2], p = [1,3]x[0,2]: intersection 2, union 6, distance 2/3 < c = 1,
    // so they are paired: GOSPA = localisation = 2/3.
    assert_eq!(steps[0]["gospa"].as_f64().unwrap(), 4.0 / 6.0);
    assert_eq!(steps[0]["localization"].as_f64().unwrap(), 4.0 / 6.0);
    assert_eq!(steps[0]["missed_count"], 0);
    // Step 1: p = [0,4]x[0,2] holds a: intersection 4, union 8, distance 1/2; q at (50, 50)
    // overlaps nothing (distance 1 = c) and is false: c^p / 2 = 0.5. GOSPA = 0.5 + 0.5 = 1.
    assert_eq!(steps[1]["localization"].as_f64().unwrap(), 0.5);
    assert_eq!(steps[1]["false"].as_f64().unwrap(), 0.5);
    assert_eq!(steps[1]["false_count"], 1);
    assert_eq!(steps[1]["gospa"].as_f64().unwrap(), 1.0);
    assert!((doc["summary"]["sum"].as_f64().unwrap() - (4.0 / 6.0 + 1.0)).abs() < 1e-15);

    // The same boxes as corners give the same output.
    let corners = |text: &str| {
        let mut lines = text.lines();
        let mut out = String::from("time,id,x1,y1,x2,y2\n");
        lines.next();
        for line in lines {
            let f: Vec<&str> = line.split(',').collect();
            let n = |k: usize| f[k].parse::<f64>().unwrap();
            out += &format!(
                "{},{},{},{},{},{}\n",
                f[0],
                f[1],
                n(2),
                n(3),
                n(2) + n(4),
                n(3) + n(5)
            );
        }
        out
    };
    let truth_corners = write(dir.path(), "truth-corners.csv", &corners(TRUTH_BOXES));
    let estimate_corners = write(dir.path(), "estimate-corners.csv", &corners(ESTIMATE_BOXES));
    let again = switchyard()
        .args([
            "steps",
            "--truth",
            &truth_corners,
            "--estimate",
            &estimate_corners,
        ])
        .args([
            "--distance",
            "iou",
            "--box",
            "corners",
            "--state-columns",
            "x1,y1,x2,y2",
        ])
        .args(["--cutoff", "1", "--format", "json"])
        .output()
        .unwrap();
    let again: Value = serde_json::from_slice(&again.stdout).unwrap();
    assert_eq!(again["steps"], doc["steps"]);
}

#[test]
fn every_command_takes_the_box_distance_and_checks_it_alike() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "truth.csv", TRUTH_BOXES);
    let estimate = write(dir.path(), "estimate.csv", ESTIMATE_BOXES);
    let bad = write(
        dir.path(),
        "bad.csv",
        "time,id,left,top,width,height\n0,p,1,0,2,2\n1,p,0,0,4,-2\n",
    );
    let page = dir.path().join("report.html");
    let iou = ["--distance", "iou", "--state-columns", BOX_COLUMNS];
    for command in ["steps", "score", "switches", "audit", "compare", "report"] {
        // compare and report take several trackers, each as NAME=FILE.
        let several = command == "compare" || command == "report";
        let tracker = |file: &str| {
            if several {
                format!("tracker={file}")
            } else {
                file.to_string()
            }
        };
        let extra: &[&str] = if command == "report" {
            &["--output", page.to_str().unwrap()]
        } else {
            &[]
        };
        let run = |estimate: &str, cutoff: &str| {
            let mut command_line = switchyard();
            command_line
                .args([command, "--truth", &truth, "--estimate", &tracker(estimate)])
                .args(iou)
                .args(["--cutoff", cutoff])
                .args(extra);
            command_line
        };
        run(&estimate, "0.9").assert().success();
        // A cut-off above 1 and a negative size are refused by every command alike.
        run(&estimate, "1.5")
            .assert()
            .code(1)
            .stderr(contains("the cut-off must lie in (0, 1]"));
        run(&bad, "0.9").assert().code(1).stderr(contains(
            "bad.csv, line 3, column 6 (\"height\"): the box's height",
        ));
    }
    // score: the trajectory metric on the same data: step 0 localisation 2/3, step 1
    // localisation 1/2 and one false object (0.9 / 2), no switch.
    let output = switchyard()
        .args(["score", "--truth", &truth, "--estimate", &estimate])
        .args([
            "--distance",
            "iou",
            "--state-columns",
            BOX_COLUMNS,
            "--cutoff",
            "0.9",
        ])
        .args(["--format", "json"])
        .output()
        .unwrap();
    let doc: Value = serde_json::from_slice(&output.stdout).unwrap();
    let total = doc["total"].as_f64().unwrap();
    assert!((total - (4.0 / 6.0 + 0.5 + 0.45)).abs() < 1e-12, "{total}");
}

#[test]
fn steps_with_the_geodesic_distance_are_in_metres() {
    let dir = tempfile::tempdir().unwrap();
    // One thousandth of a degree of longitude on the equator: pi/180 R / 1000 = 111.195 m.
    let truth = write(dir.path(), "truth.csv", "time,id,lat,lon\n0,a,0,0\n");
    let estimate = write(dir.path(), "estimate.csv", "time,id,lat,lon\n0,p,0,0.001\n");
    let output = switchyard()
        .args(["steps", "--truth", &truth, "--estimate", &estimate])
        .args([
            "--distance",
            "geodesic",
            "--state-columns",
            "lat,lon",
            "--cutoff",
            "500",
        ])
        .args(["--format", "json"])
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let doc: Value = serde_json::from_slice(&output.stdout).unwrap();
    let gospa = doc["steps"][0]["gospa"].as_f64().unwrap();
    assert_relative_eq(gospa, PI / 180.0 * R / 1000.0, 1e-9);
}

#[test]
fn the_command_line_refuses_what_would_break_the_metric() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(dir.path(), "truth.csv", TRUTH_BOXES);
    let estimate = write(dir.path(), "estimate.csv", ESTIMATE_BOXES);
    let steps = |extra: &[&str]| {
        let mut command = switchyard();
        command.args(["steps", "--truth", &truth, "--estimate", &estimate]);
        command.args(extra);
        command
    };
    // A cut-off above 1 with iou.
    steps(&[
        "--distance",
        "iou",
        "--state-columns",
        BOX_COLUMNS,
        "--cutoff",
        "1.5",
    ])
    .assert()
    .code(1)
    .stderr(contains("the cut-off must lie in (0, 1]"));
    // Weights with iou.
    steps(&[
        "--distance",
        "iou",
        "--state-columns",
        BOX_COLUMNS,
        "--cutoff",
        "1",
    ])
    .args(["--weights", "1,1,1,1"])
    .assert()
    .code(1)
    .stderr(contains(
        "--weights applies to the euclidean, manhattan and chebyshev",
    ));
    // Weights with geodesic.
    steps(&[
        "--distance",
        "geodesic",
        "--state-columns",
        "left,top",
        "--cutoff",
        "1",
    ])
    .args(["--weights", "1,1"])
    .assert()
    .code(1)
    .stderr(contains("not to geodesic"));
    // A zero weight.
    steps(&[
        "--state-columns",
        "left,top",
        "--cutoff",
        "1",
        "--weights",
        "1,0",
    ])
    .assert()
    .code(1)
    .stderr(contains("column weights must be positive"));
    // --box without iou.
    steps(&[
        "--box",
        "corners",
        "--state-columns",
        "left,top",
        "--cutoff",
        "1",
    ])
    .assert()
    .code(1)
    .stderr(contains("--box applies to the iou distance"));
    // iou without naming the box's columns, or with the wrong number of them.
    steps(&["--distance", "iou", "--cutoff", "1"])
        .assert()
        .code(1)
        .stderr(contains("needs --state-columns"));
    steps(&[
        "--distance",
        "iou",
        "--state-columns",
        "left,top,width",
        "--cutoff",
        "1",
    ])
    .assert()
    .code(1)
    .stderr(contains("4 state columns"));
    // A negative height, named by file, line and column.
    let bad = write(
        dir.path(),
        "bad.csv",
        "time,id,left,top,width,height\n0,p,1,0,2,2\n1,p,0,0,4,-2\n",
    );
    switchyard()
        .args(["steps", "--truth", &truth, "--estimate", &bad])
        .args([
            "--distance",
            "iou",
            "--state-columns",
            BOX_COLUMNS,
            "--cutoff",
            "1",
        ])
        .assert()
        .code(1)
        .stderr(contains(
            "bad.csv, line 3, column 6 (\"height\"): the box's height is negative",
        ));
}

#[test]
fn a_latitude_beyond_the_pole_is_refused_naming_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let truth = write(
        dir.path(),
        "ships.csv",
        "time,id,lat,lon\n0,a,60,5\n1,a,95,5\n",
    );
    let estimate = write(dir.path(), "tracks.csv", "time,id,lat,lon\n0,p,60,5\n");
    for command in ["steps", "score"] {
        switchyard()
            .args([command, "--truth", &truth, "--estimate", &estimate])
            .args([
                "--distance",
                "geodesic",
                "--state-columns",
                "lat,lon",
                "--cutoff",
                "1000",
            ])
            .assert()
            .code(1)
            .stderr(contains(
                "ships.csv, line 3, column 3 (\"lat\"): latitude 95 is outside [-90, 90]",
            ));
    }
    // Geodesic states must be named: the default x,y would be read as latitude, longitude.
    switchyard()
        .args(["steps", "--truth", &truth, "--estimate", &estimate])
        .args(["--distance", "geodesic", "--cutoff", "1000"])
        .assert()
        .code(1)
        .stderr(contains("--state-columns lat,lon"));
}
