//! The numbers the generator takes and gives: range checks of the settings, the check that
//! generated positions are finite, and the rounding of positions to a number of decimals.

use crate::error::{Error, Result};
use crate::trajectory::TrajectorySet;

/// The largest rate accepted for births and clutter, per step: far beyond any useful scene, and
/// well inside what the Poisson sampler supports.
pub(super) const MAX_RATE: f64 = 1e6;

/// The most decimals positions can be rounded to.
const MAX_DECIMALS: u32 = 9;

/// Refuses a generated set with a coordinate that is not finite: parameters so large (a
/// region size or noise near the largest double) that positions overflow. `what` names the
/// set and the parameters that shape it, for the message.
///
/// # Errors
/// [`Error::Parameter`] naming the object and step of the first such coordinate.
pub fn check_finite(set: &TrajectorySet, what: &str) -> Result<()> {
    for trajectory in set.trajectories() {
        if let Some((step, _)) = trajectory
            .points()
            .find(|(_, state)| state.iter().any(|v| !v.is_finite()))
        {
            return Err(Error::Parameter(format!(
                "{what} give a position that is not a finite number ({:?} at step {step}); \
                 choose smaller values",
                trajectory.id()
            )));
        }
    }
    Ok(())
}

/// The factor that rounding to `decimals` multiplies by, if any.
pub(super) fn rounding_scale(decimals: Option<u32>) -> Option<f64> {
    decimals.map(|d| 10f64.powi(d as i32))
}

/// `value` rounded to the grid of `scale` (a power of ten); rounding twice changes nothing.
pub(super) fn round(value: f64, scale: Option<f64>) -> f64 {
    match scale {
        Some(scale) => (value * scale).round() / scale,
        None => value,
    }
}

pub(super) fn check_range(name: &str, value: f64, low: f64, high: f64) -> Result<()> {
    if value.is_finite() && value >= low && value <= high {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the {name} must be between {low} and {high}, got {value}"
        )))
    }
}

pub(super) fn check_positive(name: &str, value: f64) -> Result<()> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the {name} must be positive and finite, got {value}"
        )))
    }
}

pub(super) fn check_count(name: &str, value: usize, high: usize) -> Result<()> {
    if value <= high {
        Ok(())
    } else {
        Err(Error::Parameter(format!(
            "the {name} must be at most {high}, got {value}"
        )))
    }
}

pub(super) fn check_decimals(decimals: Option<u32>) -> Result<()> {
    match decimals {
        Some(d) if d > MAX_DECIMALS => Err(Error::Parameter(format!(
            "positions can be rounded to at most {MAX_DECIMALS} decimals, got {d}"
        ))),
        _ => Ok(()),
    }
}
