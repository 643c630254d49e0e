//! The random numbers of the generator: one ChaCha8 stream per part, the draws made from them,
//! and the motion of one step under a random acceleration, which truths and false tracks share.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Poisson, StandardNormal};

use crate::error::{Error, Result};

/// The random stream of each part of the generator.
pub(super) const STREAM_TRUTH: u64 = 0;
pub(super) const STREAM_NOISE: u64 = 1;
pub(super) const STREAM_MISS: u64 = 2;
pub(super) const STREAM_CLUTTER: u64 = 3;
pub(super) const STREAM_SWAP: u64 = 4;
pub(super) const STREAM_FRAGMENT: u64 = 5;

/// The random stream `stream` of `seed`.
pub(super) fn stream(seed: u64, stream: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(stream);
    rng
}

/// A Poisson distribution of mean `rate`, or `None` for a rate of zero.
pub(super) fn poisson(rate: f64) -> Result<Option<Poisson<f64>>> {
    if rate <= 0.0 {
        return Ok(None);
    }
    Poisson::new(rate)
        .map(Some)
        .map_err(|error| Error::Parameter(format!("a rate of {rate} per step: {error}")))
}

/// A draw from `distribution`, or 0 when there is none (no draw is made then).
pub(super) fn draw_count(distribution: &Option<Poisson<f64>>, rng: &mut ChaCha8Rng) -> u64 {
    distribution
        .as_ref()
        .map_or(0, |poisson| poisson.sample(rng) as u64)
}

/// A uniformly random unit vector in the plane.
pub(super) fn random_direction(rng: &mut ChaCha8Rng) -> [f64; 2] {
    let direction = random_direction_in(2, rng);
    [direction[0], direction[1]]
}

/// A uniformly random unit vector in `dim` dimensions: a normalised Gaussian vector, which
/// needs only square roots (exactly rounded everywhere), not trigonometry.
pub(super) fn random_direction_in(dim: usize, rng: &mut ChaCha8Rng) -> Vec<f64> {
    loop {
        let vector: Vec<f64> = (0..dim).map(|_| rng.sample(StandardNormal)).collect();
        let norm = vector.iter().map(|v| v * v).sum::<f64>().sqrt();
        if norm > 1e-12 {
            return vector.into_iter().map(|v| v / norm).collect();
        }
        if dim == 0 {
            return vector;
        }
    }
}

/// A lifetime in whole steps: `steps` rounded up, at least one.
pub(super) fn lifetime_steps(steps: f64) -> u64 {
    (steps.ceil() as u64).max(1)
}

/// Moves a point one step at its velocity under a random acceleration of standard deviation
/// `acceleration_std` on each axis (the nearly-constant-velocity model), one draw per axis in
/// axis order.
pub(super) fn step_forward(
    position: &mut [f64],
    velocity: &mut [f64],
    acceleration_std: f64,
    rng: &mut ChaCha8Rng,
) {
    for (at, speed) in position.iter_mut().zip(velocity.iter_mut()) {
        let noise: f64 = rng.sample(StandardNormal);
        let acceleration = acceleration_std * noise;
        *at += *speed + 0.5 * acceleration;
        *speed += acceleration;
    }
}
