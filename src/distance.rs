//! Base distances between two states, and the cut-off arithmetic every metric shares.
//!
//! The trajectory metric is a metric only when its base distance is one, so every distance
//! offered here is a metric on its state space (`specs/distances.md` gives the formulas, the
//! proofs or references, and the column conventions):
//! - Euclidean, Manhattan and Chebyshev, each with optional positive column weights;
//! - `1 - IoU` of axis-aligned boxes in 2-D or 3-D (the Jaccard distance), in three layouts;
//! - the great-circle distance in metres between latitude/longitude points on a sphere of the
//!   mean Earth radius.
//!
//! [`Distance::between`] is called for every truth-estimate pair at every step, so it allocates
//! nothing and does O(dim) arithmetic. States that a distance cannot read (a box of negative
//! width, a latitude beyond a pole) are caught before: [`Distance::check_state`] on each row
//! as the reader reads it, or [`Distance::check_set`] on a whole set.

use crate::error::{Error, Result};
use crate::trajectory::TrajectorySet;

/// The mean Earth radius R1 = (2a + b) / 3 of the WGS84 ellipsoid, in metres (IUGG; H. Moritz,
/// "Geodetic Reference System 1980", Bulletin Géodésique 54:395-405, 1980).
pub const EARTH_MEAN_RADIUS: f64 = 6_371_008.8;

/// How a box's state columns are read; the box has 2 axes (4 columns) or 3 (6 columns), and
/// the first half of the columns gives one value per axis, the second half another.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum BoxLayout {
    /// A corner and the sizes: `x, y, width, height` (3-D: `x, y, z, width, height, depth`),
    /// the box running from `x` to `x + width` on each axis.
    CornerSize,
    /// Two opposite corners: `x1, y1, x2, y2` (3-D: `x1, y1, z1, x2, y2, z2`), `x1 <= x2`.
    Corners,
    /// The centre and the sizes: `cx, cy, width, height` (3-D: `cx, cy, cz, width, height,
    /// depth`), the box running from `cx - width / 2` to `cx + width / 2`.
    CentreSize,
}

impl BoxLayout {
    /// The layout's name on the command line and in messages.
    pub fn name(self) -> &'static str {
        match self {
            BoxLayout::CornerSize => "corner-size",
            BoxLayout::Corners => "corners",
            BoxLayout::CentreSize => "centre-size",
        }
    }

    /// The meaning of each column for a box of `axes` axes (2 or 3), for messages.
    pub fn columns(self, axes: usize) -> &'static str {
        match (self, axes) {
            (BoxLayout::CornerSize, 3) => "x, y, z, width, height, depth",
            (BoxLayout::CornerSize, _) => "x, y, width, height",
            (BoxLayout::Corners, 3) => "x1, y1, z1, x2, y2, z2",
            (BoxLayout::Corners, _) => "x1, y1, x2, y2",
            (BoxLayout::CentreSize, 3) => "cx, cy, cz, width, height, depth",
            (BoxLayout::CentreSize, _) => "cx, cy, width, height",
        }
    }

    /// The box's extent `(low, high)` on axis `k` of `axes`.
    #[inline(always)]
    fn extent(self, state: &[f64], k: usize, axes: usize) -> (f64, f64) {
        let (first, second) = (state[k], state[k + axes]);
        match self {
            BoxLayout::CornerSize => (first, first + second),
            BoxLayout::Corners => (first, second),
            BoxLayout::CentreSize => {
                let half = 0.5 * second;
                (first - half, first + half)
            }
        }
    }
}

/// A base distance between two states of equal length.
#[derive(Clone, Debug, PartialEq)]
pub enum Distance {
    /// Euclidean distance, optionally with a positive weight per state column:
    /// `sqrt(sum w_k (a_k - b_k)^2)`.
    Euclidean {
        /// One weight per column, or `None` for all ones.
        weights: Option<Vec<f64>>,
    },
    /// Manhattan (city-block) distance, `sum w_k |a_k - b_k|`.
    Manhattan {
        /// One weight per column, or `None` for all ones.
        weights: Option<Vec<f64>>,
    },
    /// Chebyshev (maximum) distance, `max w_k |a_k - b_k|`.
    Chebyshev {
        /// One weight per column, or `None` for all ones.
        weights: Option<Vec<f64>>,
    },
    /// `1 - IoU` of two axis-aligned boxes (the Jaccard distance of the boxes as sets), from 0
    /// for the same box to 1 for boxes that do not overlap. States are boxes of 4 values (2-D)
    /// or 6 (3-D) read in the given layout. Two boxes of zero area or volume are at distance 0
    /// when they are the same box and 1 otherwise.
    Iou(BoxLayout),
    /// Great-circle distance in metres on a sphere of radius [`EARTH_MEAN_RADIUS`]. States are
    /// `(latitude, longitude)` in degrees, latitude in [-90, 90], longitude any finite value.
    Geodesic,
}

impl Default for Distance {
    fn default() -> Self {
        Distance::Euclidean { weights: None }
    }
}

/// The names used for a box's axes and sizes in messages.
const AXES: [&str; 3] = ["x", "y", "z"];
const SIZES: [&str; 3] = ["width", "height", "depth"];

impl Distance {
    /// Checks that this distance can be used on states of `dim` values with cut-off `cutoff`:
    /// [`Distance::check_dimension`] and [`Distance::check_cutoff`].
    ///
    /// # Errors
    /// As those two.
    pub fn validate(&self, dim: usize, cutoff: f64) -> Result<()> {
        self.check_dimension(dim)?;
        self.check_cutoff(cutoff)
    }

    /// Checks that this distance can be used on states of `dim` values.
    ///
    /// # Errors
    /// Weights of the wrong count, or not positive and finite; a box distance on other than 4
    /// or 6 columns; a geodesic distance on other than 2 columns.
    pub fn check_dimension(&self, dim: usize) -> Result<()> {
        match self {
            Distance::Euclidean { weights }
            | Distance::Manhattan { weights }
            | Distance::Chebyshev { weights } => {
                if let Some(weights) = weights {
                    if weights.len() != dim {
                        return Err(Error::Parameter(format!(
                            "{} column weights given for {dim} state columns",
                            weights.len()
                        )));
                    }
                    // A zero weight would put states that differ only in its column at
                    // distance 0: a pseudometric, and the trajectory metric with it.
                    if let Some(w) = weights.iter().find(|w| !(w.is_finite() && **w > 0.0)) {
                        return Err(Error::Parameter(format!(
                            "column weights must be positive finite numbers, got {w} (to ignore \
                             a column, leave it out of the state columns)"
                        )));
                    }
                }
                Ok(())
            }
            Distance::Iou(layout) => {
                if dim != 4 && dim != 6 {
                    return Err(Error::Parameter(format!(
                        "the iou distance reads a box from 4 state columns ({}) or 6 ({}) in the \
                         {} layout, got {dim}",
                        layout.columns(2),
                        layout.columns(3),
                        layout.name()
                    )));
                }
                Ok(())
            }
            Distance::Geodesic => {
                if dim != 2 {
                    return Err(Error::Parameter(format!(
                        "the geodesic distance reads 2 state columns, latitude then longitude in \
                         degrees, got {dim}"
                    )));
                }
                Ok(())
            }
        }
    }

    /// Checks a cut-off against the distance's range: with `iou` it must lie in (0, 1], since
    /// `1 - IoU` never exceeds 1. (Every metric also checks that it is positive and finite.)
    ///
    /// # Errors
    /// A cut-off outside (0, 1] with `iou`.
    pub fn check_cutoff(&self, cutoff: f64) -> Result<()> {
        if matches!(self, Distance::Iou(_)) && !(cutoff > 0.0 && cutoff <= 1.0) {
            return Err(Error::Parameter(format!(
                "with the iou distance the cut-off must lie in (0, 1] (1 - IoU is at most 1), \
                 got {cutoff}"
            )));
        }
        Ok(())
    }

    /// Checks one state for the values this distance can read: for boxes, sizes >= 0 (or second
    /// corners >= first corners) and a finite volume below half the largest double; for
    /// latitude/longitude, a latitude in [-90, 90] and a finite longitude. The other distances
    /// accept any finite values.
    ///
    /// States of a length the distance does not take pass here: [`Distance::validate`] reports
    /// the dimension.
    ///
    /// # Errors
    /// `(index of the offending value in the state, what is wrong)`, so that a reader can name
    /// the column.
    pub fn check_state(&self, state: &[f64]) -> std::result::Result<(), (usize, String)> {
        match self {
            Distance::Euclidean { .. }
            | Distance::Manhattan { .. }
            | Distance::Chebyshev { .. } => Ok(()),
            Distance::Iou(layout) => {
                if state.len() != 4 && state.len() != 6 {
                    return Ok(());
                }
                let axes = state.len() / 2;
                let mut volume = 1.0;
                for k in 0..axes {
                    let (first, second) = (state[k], state[k + axes]);
                    match layout {
                        BoxLayout::Corners if second < first => {
                            return Err((
                                k + axes,
                                format!(
                                "the box's {axis}2 = {second} is less than its {axis}1 = {first} \
                                     (the corners layout is {})",
                                layout.columns(axes),
                                axis = AXES[k]
                            ),
                            ))
                        }
                        BoxLayout::CornerSize | BoxLayout::CentreSize if second < 0.0 => {
                            return Err((
                                k + axes,
                                format!(
                                    "the box's {} is negative: {second} (the {} layout is {})",
                                    SIZES[k],
                                    layout.name(),
                                    layout.columns(axes)
                                ),
                            ))
                        }
                        _ => {}
                    }
                    let (low, high) = layout.extent(state, k, axes);
                    volume *= high - low;
                    if !(low.is_finite() && high.is_finite() && (high - low).is_finite()) {
                        return Err((
                            k + axes,
                            format!("the box's extent on {} overflows", AXES[k]),
                        ));
                    }
                }
                // Two volumes must add up to a finite number. (Every extent is finite here, so
                // the volume is a number, possibly infinite.)
                if volume > f64::MAX / 2.0 {
                    return Err((
                        state.len() - 1,
                        format!("the box's volume {volume:e} is too large (at most 2^1023)"),
                    ));
                }
                Ok(())
            }
            Distance::Geodesic => {
                if state.len() != 2 {
                    return Ok(());
                }
                let (latitude, longitude) = (state[0], state[1]);
                if !(latitude.is_finite() && latitude.abs() <= 90.0) {
                    return Err((
                        0,
                        format!(
                            "latitude {latitude} is outside [-90, 90] (geodesic states are latitude \
                             then longitude, in degrees)"
                        ),
                    ));
                }
                if !longitude.is_finite() {
                    return Err((1, format!("longitude {longitude} is not a finite number")));
                }
                Ok(())
            }
        }
    }

    /// Checks every state of a set with [`Distance::check_state`], for sets built in code (the
    /// CSV reader checks each row as it reads it and names the line).
    ///
    /// # Errors
    /// The first state this distance cannot read, naming the object, the step and the value.
    pub fn check_set(&self, set: &TrajectorySet) -> Result<()> {
        if matches!(
            self,
            Distance::Euclidean { .. } | Distance::Manhattan { .. } | Distance::Chebyshev { .. }
        ) {
            return Ok(());
        }
        for trajectory in set.trajectories() {
            for (step, state) in trajectory.points() {
                if let Err((index, message)) = self.check_state(state) {
                    return Err(Error::Mismatch(format!(
                        "object {:?} at step {step}, state value {}: {message}",
                        trajectory.id(),
                        index + 1
                    )));
                }
            }
        }
        Ok(())
    }

    /// Checks this distance against the two sets and the cut-off before a metric uses it:
    /// [`Distance::validate`] with the truth's dimension, then [`Distance::check_set`] on both.
    ///
    /// # Errors
    /// As those two.
    pub fn check_inputs(
        &self,
        truth: &TrajectorySet,
        estimate: &TrajectorySet,
        cutoff: f64,
    ) -> Result<()> {
        self.validate(truth.dim(), cutoff)?;
        self.check_set(truth)?;
        self.check_set(estimate)
    }

    /// The distance between two states. O(dim), no allocation.
    ///
    /// Exact to rounding for every finite state: when the plain weighted formula overflows,
    /// underflows or meets a zero weight times an infinite difference, the distance is computed
    /// again with scaling ([`Distance::between_scaled`]).
    #[inline]
    pub fn between(&self, a: &[f64], b: &[f64]) -> f64 {
        let plain = self.between_plain(a, b);
        let trusted = match self {
            // Below 1e-135 the sum of squares (< 1e-270) may hold squares that underflowed.
            // Coincident states (common with a good tracker) need no second pass.
            Distance::Euclidean { .. } => plain.is_finite() && (plain > 1e-135 || a == b),
            Distance::Manhattan { .. } | Distance::Chebyshev { .. } => plain.is_finite(),
            Distance::Iou(_) | Distance::Geodesic => true,
        };
        if trusted {
            plain
        } else {
            self.between_scaled(a, b)
        }
    }

    /// The Euclidean, Manhattan or Chebyshev distance computed with scaling, as C's `hypot`
    /// does: differences are halved when one of them overflows (|a - b| <= 2 x the largest
    /// double), zero weights are skipped, and for the Euclidean distance the terms are divided
    /// by the largest one before squaring. Other distances are returned as computed plainly.
    /// Slower than [`Distance::between`], which calls it when needed.
    pub fn between_scaled(&self, a: &[f64], b: &[f64]) -> f64 {
        let weights = match self {
            Distance::Euclidean { weights }
            | Distance::Manhattan { weights }
            | Distance::Chebyshev { weights } => weights.as_deref(),
            Distance::Iou(_) | Distance::Geodesic => return self.between_plain(a, b),
        };
        let halve = a.iter().zip(b).any(|(x, y)| !(x - y).is_finite());
        let scale = if halve { 0.5 } else { 1.0 };
        // Each term is w |x - y| (sqrt(w) |x - y| for the Euclidean distance), times `scale`.
        let terms = a.iter().zip(b).enumerate().filter_map(|(k, (x, y))| {
            let w = weights.map_or(1.0, |w| w[k]);
            if w == 0.0 {
                return None;
            }
            let difference = (x * scale - y * scale).abs();
            Some(match self {
                Distance::Euclidean { .. } => w.sqrt() * difference,
                _ => w * difference,
            })
        });
        let scaled = match self {
            Distance::Euclidean { .. } => {
                let largest = terms.clone().fold(0.0, f64::max);
                if largest == 0.0 || largest.is_infinite() {
                    largest
                } else {
                    let sum = terms.fold(0.0, |sum, t| sum + (t / largest) * (t / largest));
                    largest * sum.sqrt()
                }
            }
            Distance::Manhattan { .. } => terms.fold(0.0, |sum, t| sum + t),
            _ => terms.fold(0.0, f64::max),
        };
        scaled / scale
    }

    #[inline]
    fn between_plain(&self, a: &[f64], b: &[f64]) -> f64 {
        match self {
            Distance::Euclidean { weights: None } => a
                .iter()
                .zip(b)
                .map(|(x, y)| (x - y) * (x - y))
                .sum::<f64>()
                .sqrt(),
            Distance::Euclidean { weights: Some(w) } => a
                .iter()
                .zip(b)
                .zip(w)
                .map(|((x, y), w)| w * (x - y) * (x - y))
                .sum::<f64>()
                .sqrt(),
            Distance::Manhattan { weights: None } => {
                a.iter().zip(b).map(|(x, y)| (x - y).abs()).sum::<f64>()
            }
            Distance::Manhattan { weights: Some(w) } => a
                .iter()
                .zip(b)
                .zip(w)
                .map(|((x, y), w)| w * (x - y).abs())
                .sum::<f64>(),
            Distance::Chebyshev { weights: None } => a
                .iter()
                .zip(b)
                .map(|(x, y)| (x - y).abs())
                .fold(0.0, f64::max),
            Distance::Chebyshev { weights: Some(w) } => a
                .iter()
                .zip(b)
                .zip(w)
                .map(|((x, y), w)| w * (x - y).abs())
                .fold(0.0, f64::max),
            Distance::Iou(layout) => {
                if a.len() == 6 {
                    box_distance::<3>(*layout, a, b)
                } else {
                    box_distance::<2>(*layout, a, b)
                }
            }
            Distance::Geodesic => great_circle(a, b),
        }
    }

    /// A short name for output (`euclidean`, `iou`, `geodesic`, ...).
    pub fn name(&self) -> &'static str {
        match self {
            Distance::Euclidean { .. } => "euclidean",
            Distance::Manhattan { .. } => "manhattan",
            Distance::Chebyshev { .. } => "chebyshev",
            Distance::Iou(_) => "iou",
            Distance::Geodesic => "geodesic",
        }
    }
}

/// `1 - IoU` of two boxes of `N` axes: `|A xor B| / |A u B|`, computed as
/// `((|A| - |A n B|) + (|B| - |A n B|)) / (|A| + |B| - |A n B|)`, which is exactly symmetric,
/// exactly 0 for the same box and exactly 1 for boxes that do not overlap. Rounding is monotone,
/// so the computed intersection never exceeds either computed volume and the result lies in
/// [0, 1]. When the union has no volume (both boxes are flat), the distance is 0 for the same
/// box and 1 otherwise; that keeps the triangle inequality (`specs/distances.md`).
#[inline]
fn box_distance<const N: usize>(layout: BoxLayout, a: &[f64], b: &[f64]) -> f64 {
    let (a, b) = (&a[..2 * N], &b[..2 * N]);
    let mut intersection = 1.0;
    let mut volume_a = 1.0;
    let mut volume_b = 1.0;
    let mut same = true;
    for k in 0..N {
        let (a_low, a_high) = layout.extent(a, k, N);
        let (b_low, b_high) = layout.extent(b, k, N);
        volume_a *= a_high - a_low;
        volume_b *= b_high - b_low;
        intersection *= (a_high.min(b_high) - a_low.max(b_low)).max(0.0);
        same &= a_low == b_low && a_high == b_high;
    }
    let union = volume_a + volume_b - intersection;
    if union > 0.0 {
        (((volume_a - intersection) + (volume_b - intersection)) / union).min(1.0)
    } else if same {
        0.0
    } else {
        1.0
    }
}

/// cos(latitude) as sin(90 deg - |latitude|): exactly 0 at the poles, accurate near them.
#[inline]
fn cos_latitude(degrees: f64) -> f64 {
    (90.0 - degrees.abs()).to_radians().sin()
}

/// Great-circle distance in metres between `(latitude, longitude)` points in degrees, by the
/// haversine formula in a form accurate at every distance:
///
/// h = sin^2(dlat / 2) + cos(lat1) cos(lat2) sin^2(dlon / 2) (the haversine of the angle),
/// h' = sin^2((lat1 + lat2) / 2) + cos(lat1) cos(lat2) cos^2(dlon / 2) (= 1 - h, the
/// haversine of the angle to the antipode of the second point),
/// angle = 2 atan2(sqrt(h), sqrt(h')).
///
/// Both h and h' are sums of non-negative terms, so neither loses digits to cancellation, and
/// atan2 needs no clamping: the usual `2 asin(sqrt(h))` loses about half its digits near
/// antipodal points (an error of up to about 0.1 m there), this form does not. The longitude
/// difference is first brought into [-180, 180] degrees.
#[inline]
fn great_circle(a: &[f64], b: &[f64]) -> f64 {
    let (lat_a, lat_b) = (a[0], b[0]);
    let mut dlon = b[1] - a[1];
    if dlon.abs() > 180.0 {
        dlon -= 360.0 * (dlon / 360.0).round();
    }
    let half_dlat = (0.5 * (lat_b - lat_a)).to_radians();
    let half_sum = (0.5 * (lat_a + lat_b)).to_radians();
    let (sin_half_dlon, cos_half_dlon) = (0.5 * dlon).to_radians().sin_cos();
    let cos_product = cos_latitude(lat_a) * cos_latitude(lat_b);
    let sin_half_dlat = half_dlat.sin();
    let sin_half_sum = half_sum.sin();
    let h = sin_half_dlat * sin_half_dlat + cos_product * sin_half_dlon * sin_half_dlon;
    let h_antipode = sin_half_sum * sin_half_sum + cos_product * cos_half_dlon * cos_half_dlon;
    2.0 * EARTH_MEAN_RADIUS * h.sqrt().atan2(h_antipode.sqrt())
}

impl Distance {
    /// A factor `k > 0` with `d(a, b) >= k |a_0 - b_0|` for every pair of states, when this
    /// distance has one: pairs farther apart than `c / k` along the first state column are then
    /// farther than `c` and need no distance computed.
    pub fn first_axis_factor(&self) -> Option<f64> {
        let factor = match self {
            Distance::Euclidean { weights } => weights.as_ref().map_or(1.0, |w| w[0].sqrt()),
            Distance::Manhattan { weights } | Distance::Chebyshev { weights } => {
                weights.as_ref().map_or(1.0, |w| w[0])
            }
            Distance::Iou(_) | Distance::Geodesic => return None,
        };
        (factor > 0.0 && factor.is_finite()).then_some(factor)
    }
}

/// Finds the pairs closer than a cut-off between two lists of states. When the distance has a
/// [`Distance::first_axis_factor`], the second list is sorted along the first state column and
/// each state of the first list is compared only with those within reach: O((m + n) log n) plus
/// the pairs in reach, instead of m x n distances, when objects are spread out.
#[derive(Debug, Default)]
pub struct Gate {
    sorted: Vec<(f64, u32)>,
}

/// From this many states in the second list on, sorting pays for itself.
const GATE_MIN: usize = 8;

impl Gate {
    /// Calls `found(i, j, d)` for every pair with `d(first(i), second(j)) < cutoff`, `i < m`,
    /// `j < n`, in no set order.
    pub fn close_pairs<'a>(
        &mut self,
        (m, first): (usize, impl Fn(usize) -> &'a [f64]),
        (n, second): (usize, impl Fn(usize) -> &'a [f64]),
        cutoff: f64,
        distance: &Distance,
        mut found: impl FnMut(usize, usize, f64),
    ) {
        let factor = distance
            .first_axis_factor()
            .filter(|_| n >= GATE_MIN && m > 0);
        let Some(factor) = factor else {
            for i in 0..m {
                let x = first(i);
                for j in 0..n {
                    let d = distance.between(x, second(j));
                    if d < cutoff {
                        found(i, j, d);
                    }
                }
            }
            return;
        };
        let reach = cutoff / factor * (1.0 + 1e-9);
        self.sorted.clear();
        self.sorted.extend((0..n).map(|j| (second(j)[0], j as u32)));
        self.sorted.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
        for i in 0..m {
            let x = first(i);
            // Widened by a few units in the last place of x, so that rounding in `x +- reach`
            // never drops a pair in reach, however large the coordinates.
            let slack = 4.0 * f64::EPSILON * x[0].abs();
            let (low, high) = (x[0] - reach - slack, x[0] + reach + slack);
            let start = self.sorted.partition_point(|&(y, _)| y <= low);
            for &(y, j) in &self.sorted[start..] {
                if y >= high {
                    break;
                }
                let d = distance.between(x, second(j as usize));
                if d < cutoff {
                    found(i, j as usize, d);
                }
            }
        }
    }
}

/// `x^p`, exact for the common orders 1 and 2.
#[inline]
pub fn power(x: f64, p: f64) -> f64 {
    if p == 1.0 {
        x
    } else if p == 2.0 {
        x * x
    } else {
        x.powf(p)
    }
}

/// `x^(1/p)`, exact for the common orders 1 and 2.
#[inline]
pub fn root(x: f64, p: f64) -> f64 {
    if p == 1.0 {
        x
    } else if p == 2.0 {
        x.sqrt()
    } else {
        x.powf(1.0 / p)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use proptest::test_runner::{Config, RngSeed};

    fn distances() -> Vec<Distance> {
        vec![
            Distance::Euclidean { weights: None },
            Distance::Euclidean {
                weights: Some(vec![0.25, 4.0]),
            },
            Distance::Manhattan {
                weights: Some(vec![2.0, 0.5]),
            },
            Distance::Chebyshev { weights: None },
        ]
    }

    proptest! {
        #![proptest_config(Config { cases: 300, rng_seed: RngSeed::Fixed(99), failure_persistence: None, ..Config::default() })]

        /// The gate finds exactly the pairs that comparing every pair finds (the definition of
        /// "closer than the cut-off"), with the same distances, near the origin and far from it
        /// (where the spacing of doubles approaches the cut-off).
        #[test]
        fn the_gate_finds_every_close_pair_and_no_other(
            first in prop::collection::vec(prop::collection::vec(-20.0f64..20.0, 2), 0..15),
            second in prop::collection::vec(prop::collection::vec(-20.0f64..20.0, 2), 0..25),
            cutoff in 0.5f64..12.0,
            offset in prop::sample::select(vec![0.0, 1e12, -3e14, 1e15]),
        ) {
            let shift = |v: &Vec<Vec<f64>>| -> Vec<Vec<f64>> {
                v.iter().map(|p| vec![p[0] + offset, p[1]]).collect()
            };
            let (first, second) = (shift(&first), shift(&second));
            for distance in distances() {
                let mut brute = Vec::new();
                for (i, x) in first.iter().enumerate() {
                    for (j, y) in second.iter().enumerate() {
                        let d = distance.between(x, y);
                        if d < cutoff {
                            brute.push((i, j, d));
                        }
                    }
                }
                let mut gated = Vec::new();
                Gate::default().close_pairs(
                    (first.len(), |i| first[i].as_slice()),
                    (second.len(), |j| second[j].as_slice()),
                    cutoff,
                    &distance,
                    |i, j, d| gated.push((i, j, d)),
                );
                gated.sort_by_key(|&(i, j, _)| (i, j));
                prop_assert_eq!(&gated, &brute);
            }
        }
    }
}
