//! Seeded synthetic scenes: a ground truth of moving objects, and the output of an imaginary
//! tracker whose failure modes are set one by one.
//!
//! [`generate_truth`] moves objects in a square region with a nearly-constant-velocity model: a
//! small white-noise acceleration on each axis at each step. Objects are born at random steps (a
//! Poisson number per step) at uniformly random places away from the edges, and die after a
//! random lifetime (exponential) or when they leave the region. In a band along the edges,
//! objects heading out turn round at a bounded rate, keeping their speed, as boats turn away from
//! a quay; with no turning most objects soon leave. The birth rate is the rate that keeps the
//! mean number of objects per step at [`SceneConfig::objects_per_step`] (the target over a mean
//! life, measured on a pilot run), plus, when [`SceneConfig::relaxation_steps`] is set, a pull
//! towards the target that keeps each scene's count near it. The scene runs for a while before
//! its first step, so that it starts already populated.
//!
//! [`imitate_tracker`] turns a truth set into what a tracker with known faults would report:
//! position noise, missed detections (gaps), false tracks (clutter), identity swaps when two
//! objects pass close, fragmented tracks, and a delay before a new object gets a track.
//!
//! Everything is deterministic given the seed. The random numbers come from ChaCha8, whose
//! output for a seed is fixed across versions; each failure mode draws from a stream of its own,
//! so turning one mode on or off leaves the random choices of the others as they were. Positions
//! are rounded to a fixed number of decimals, which keeps files small and their bytes stable.
//!
//! Ids: truths are `T1`, `T2`, ... and estimated tracks `E1`, `E2`, ..., numbered in order of
//! first appearance.
//!
//! The generator is in four parts: [`scene`] moves the truths, [`tracker`] imitates the tracker,
//! [`presets`] holds the settings of the benchmark and demonstration scenes, and two small
//! files hold what both generators share: `random` (the random streams and draws, and the
//! motion of one step) and `values` (range checks and the rounding of positions).

pub mod presets;
mod random;
pub mod scene;
pub mod tracker;
mod values;

pub use self::presets::{generate_scene, ScenePreset, TrackerStyle, OBJECT_SPACING};
pub use self::scene::{generate_truth, SceneConfig};
pub use self::tracker::{imitate_tracker, TrackerConfig};
pub use self::values::check_finite;
