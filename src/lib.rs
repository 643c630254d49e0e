//! switchyard scores multi-object trackers against ground truth.
//!
//! It measures how far a tracker's labelled output is from the true trajectories with
//! - per-step GOSPA ([`per_step`]): A. S. Rahmathullah, Á. F. García-Fernández, L. Svensson,
//!   "Generalized optimal sub-pattern assignment metric", FUSION 2017;
//! - trajectory GOSPA through its linear-program relaxation ([`trajectory_metric`]):
//!   Á. F. García-Fernández, A. S. Rahmathullah, L. Svensson, "A metric on the space of finite
//!   sets of trajectories for evaluation of multi-target tracking algorithms", IEEE Trans.
//!   Signal Processing 68:3917-3928, 2020,
//!
//! and splits the score into localisation error, missed objects, false objects and identity
//! switches.
//!
//! Modules:
//! - [`evaluate`]: the one entry point: a truth, estimates, parameters and a request in; the
//!   score, per-step values, switches, jumps and audit asked for out;
//! - [`classes`]: object classes: splitting by class, evaluating each class, adding them up;
//! - [`trajectory`]: trajectories, sets, evaluation windows and per-step frames;
//! - [`input`]: the readers (CSV, grouped CSV, manifests) and the CSV writer;
//! - [`distance`]: base distances and the cut-off arithmetic;
//! - [`per_step`]: GOSPA at each step, with its parts;
//! - [`matching`]: least-cost partial matching on a sparse bipartite graph;
//! - [`ospa2`]: OSPA(2), the OSPA metric on trajectories, over the whole or a sliding window;
//! - [`trajectory_metric`]: trajectory GOSPA as a linear program, reduced exactly and solved
//!   by a Lagrangian engine whose bounds prove the value (a simplex engine where they do not);
//! - [`assignment`]: what the LP's assignment says: switch and jump events, the coverage audit;
//! - [`compare`]: several trackers over sequences and Monte Carlo runs: rankings, paired
//!   bootstrap intervals, parameter sweeps;
//! - [`report`]: result documents and their writers: text, CSV, JSON, the HTML page;
//! - [`synth`]: seeded synthetic scenes: a ground truth and an imaginary tracker's output;
//! - [`error`]: the error type.
//!
//! # Example
//! ```
//! use switchyard::distance::Distance;
//! use switchyard::per_step::{per_step, GospaParams};
//! use switchyard::trajectory::{Trajectory, TrajectorySet};
//!
//! let truth = TrajectorySet::new(1, vec![
//!     Trajectory::new("a", 1, vec![(1, vec![0.0]), (2, vec![0.0])]).unwrap(),
//! ]).unwrap();
//! let estimate = TrajectorySet::new(1, vec![
//!     Trajectory::new("p", 1, vec![(1, vec![0.5])]).unwrap(),
//! ]).unwrap();
//! let params = GospaParams::new(2.0, 1.0, 2.0).unwrap();
//! let series = per_step(&truth, &estimate, &params, &Distance::default()).unwrap();
//! // Step 1: localisation 0.5; step 2: one missed object, c^p / 2 = 1.
//! assert!((series.steps[0].gospa - 0.5).abs() < 1e-12);
//! assert!((series.steps[1].gospa - 1.0).abs() < 1e-12);
//! ```
#![warn(missing_docs)]

pub mod assignment;
pub mod classes;
pub mod compare;
pub mod distance;
pub mod error;
pub mod evaluate;
pub mod input;
pub mod matching;
pub mod ospa2;
pub mod per_step;
pub mod report;
pub mod synth;
pub mod trajectory;
pub mod trajectory_metric;

/// Former path of [`assignment::audit`], kept for code written against it.
#[doc(hidden)]
pub use assignment::audit;
/// Former path of [`assignment::switches`], kept for code written against it.
#[doc(hidden)]
pub use assignment::switches;

pub use error::{Error, Result};
