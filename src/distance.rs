//! Base distances between two states, and the cut-off arithmetic every metric shares.
//!
//! The trajectory metric is a metric only when its base distance is one, so every distance
//! offered here is a metric on its state space.

use crate::error::{Error, Result};

/// A base distance between two states of equal length.
#[derive(Clone, Debug, PartialEq)]
pub enum Distance {
    /// Euclidean distance, optionally with a non-negative weight per state column:
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
}

impl Default for Distance {
    fn default() -> Self {
        Distance::Euclidean { weights: None }
    }
}

impl Distance {
    /// Checks that this distance can be used on states of `dim` values with cut-off `cutoff`.
    ///
    /// # Errors
    /// Weights of the wrong count, negative, non-finite or all zero.
    pub fn validate(&self, dim: usize, _cutoff: f64) -> Result<()> {
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
                    if weights.iter().any(|w| !w.is_finite() || *w < 0.0) {
                        return Err(Error::Parameter(
                            "column weights must be finite and non-negative".into(),
                        ));
                    }
                    if weights.iter().all(|w| *w == 0.0) {
                        return Err(Error::Parameter(
                            "column weights must not all be zero".into(),
                        ));
                    }
                }
                Ok(())
            }
        }
    }

    /// The distance between two states. O(dim).
    #[inline]
    pub fn between(&self, a: &[f64], b: &[f64]) -> f64 {
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
        }
    }

    /// A short name for output (`euclidean`, ...).
    pub fn name(&self) -> &'static str {
        match self {
            Distance::Euclidean { .. } => "euclidean",
            Distance::Manhattan { .. } => "manhattan",
            Distance::Chebyshev { .. } => "chebyshev",
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
