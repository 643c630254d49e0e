//! Output of OSPA(2) beside trajectory GOSPA (`switchyard score --ospa2`). Schemas:
//! `specs/formats.md`; the metric: `specs/ospa2.md`.

use std::io::Write;

use serde::Serialize;

use super::{fixed, plural};
use crate::ospa2::{Ospa2Params, Ospa2Score};
use crate::trajectory::TrajectorySet;

/// A pair of OSPA(2) by the trajectories' ids.
#[derive(Clone, Debug, Serialize)]
pub struct Ospa2PairDocument<'a> {
    /// The truth's id.
    pub truth: &'a str,
    /// The estimate's id.
    pub estimate: &'a str,
    /// Their time-averaged distance, below c.
    pub distance: f64,
}

/// The `ospa2` object of the `score` JSON document.
#[derive(Clone, Debug, Serialize)]
pub struct Ospa2Document<'a> {
    /// OSPA(2), between 0 and c.
    pub value: f64,
    /// The cut-off c.
    pub cutoff: f64,
    /// The order p.
    pub order: f64,
    /// Σ d^p / N over the pairs closer than c.
    pub paired_power: f64,
    /// c^p (N - pairs) / N.
    pub unpaired_power: f64,
    /// Truth trajectories (m).
    pub truths: usize,
    /// Estimate trajectories (n).
    pub estimates: usize,
    /// The pairs closer than c, by truth.
    pub pairs: Vec<Ospa2PairDocument<'a>>,
}

impl<'a> Ospa2Document<'a> {
    /// The document of `score`, naming the trajectories of `truth` and `estimate`.
    pub fn new(
        score: &Ospa2Score,
        params: &Ospa2Params,
        truth: &'a TrajectorySet,
        estimate: &'a TrajectorySet,
    ) -> Self {
        Ospa2Document {
            value: score.value,
            cutoff: params.cutoff,
            order: params.order,
            paired_power: score.paired_power,
            unpaired_power: score.unpaired_power,
            truths: score.truths,
            estimates: score.estimates,
            pairs: score
                .pairs
                .iter()
                .map(|p| Ospa2PairDocument {
                    truth: truth.get(p.truth).id(),
                    estimate: estimate.get(p.estimate).id(),
                    distance: p.distance,
                })
                .collect(),
        }
    }
}

/// Text: the value and how many trajectories it paired, after the trajectory GOSPA summary.
pub fn write_text<W: Write>(out: &mut W, document: &Ospa2Document) -> std::io::Result<()> {
    writeln!(out)?;
    writeln!(
        out,
        "OSPA(2), c = {}, p = {} (normalised, 0 to c): {}",
        document.cutoff,
        document.order,
        fixed(document.value, 4)
    )?;
    writeln!(
        out,
        "  {} closer than c, of {} and {}",
        plural(document.pairs.len(), "pair", "pairs"),
        plural(document.truths, "truth", "truths"),
        plural(document.estimates, "track", "tracks")
    )
}
