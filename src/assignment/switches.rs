//! Identity switches: which truth passed from which estimated track to which, and when, read
//! from the trajectory LP's weights.
//!
//! Every unit of weight change of a (truth, estimate) pair costs gamma^p / 2. Seen from a truth,
//! a decrease of one pair and an increase of another make one transfer ("full switch", cost
//! gamma^p per unit of weight); a change with no partner is a "half switch" to or from
//! unassigned (gamma^p / 2). Seen from an estimate, the same changes describe the track jumping
//! from one truth to another. The events' costs add up to the switching part exactly, from
//! either side.
//!
//! Pairing rule, applied to each truth (and, for jumps, to each estimate) separately:
//! 1. Changes are taken in time order; at each step, decreases and increases of that step are
//!    paired first, in order of estimate (truth) index, splitting fractional amounts.
//! 2. An increase left over first closes any unpaired decrease of the same estimate (it left
//!    and came back: a half switch out at the decrease, one in at the increase), then is paired
//!    with the most recent unpaired decreases of other estimates; the event is reported at the
//!    increase's step. This is how a track that breaks and resumes under a new id reads: one
//!    full switch when it resumes.
//! 3. What is left is a half switch: a decrease "to none" at the step the weight drops, or an
//!    increase "from none" at the step it rises.
//!
//! `time` is always the first step at which the new assignment holds. A weight that the LP drops
//! right after a pair was last close could equally drop later (nothing is close there); the
//! compressed LP drops it at once, so such half switches are reported at the first step after
//! the pair was last close.

use serde::Serialize;

use crate::trajectory::{Step, TrajectorySet};
use crate::trajectory_metric::{Assignment, TrajectoryParams};

/// Weight changes smaller than this are ignored (solver round-off).
const NEGLIGIBLE: f64 = 1e-9;

/// One switch seen from a truth: the truth passes `from` one estimate `to` another.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SwitchEvent {
    /// The first step at which the new assignment holds.
    pub time: Step,
    /// The truth's id.
    pub truth: String,
    /// The estimate before, or `None` for unassigned.
    pub from: Option<String>,
    /// The estimate after, or `None` for unassigned.
    pub to: Option<String>,
    /// The weight moved (1 in an integral solution).
    pub weight: f64,
    /// gamma^p x weight for a full switch, half that for a half switch.
    pub cost: f64,
    /// The object class, in the list of all classes together (`--class-column`); absent
    /// otherwise.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub class: Option<String>,
}

/// One jump seen from an estimate: the track passes `from` one truth `to` another.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct JumpEvent {
    /// The first step at which the new assignment holds.
    pub time: Step,
    /// The estimate's id.
    pub estimate: String,
    /// The truth before, or `None` for unassigned.
    pub from: Option<String>,
    /// The truth after, or `None` for unassigned.
    pub to: Option<String>,
    /// The weight moved.
    pub weight: f64,
    /// gamma^p x weight for a full jump, half that for a half jump.
    pub cost: f64,
    /// The object class, in the list of all classes together (`--class-column`); absent
    /// otherwise.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub class: Option<String>,
}

/// A generic event before ids are attached: `owner` is the truth (or estimate) index, `from`
/// and `to` partner indices.
#[derive(Clone, Copy, Debug, PartialEq)]
struct Transfer {
    time: Step,
    owner: usize,
    from: Option<usize>,
    to: Option<usize>,
    weight: f64,
}

/// A weight change of one pair: `(time, owner, partner, delta)`.
type Change = (Step, usize, usize, f64);

/// Every weight change of every pair, as seen by `owner` (truth or estimate side).
fn changes(assignment: &Assignment, by_truth: bool) -> Vec<Change> {
    let Some(window) = assignment.window else {
        return Vec::new();
    };
    let mut result = Vec::new();
    for pair in &assignment.pairs {
        let (owner, partner) = if by_truth {
            (pair.truth, pair.estimate)
        } else {
            (pair.estimate, pair.truth)
        };
        let mut previous_end: Option<(Step, f64)> = None;
        for span in &pair.spans {
            let before = match previous_end {
                Some((last, weight)) if last + 1 == span.first => weight,
                Some((last, weight)) => {
                    result.push((last + 1, owner, partner, -weight));
                    0.0
                }
                None => {
                    if span.first > window.first {
                        0.0
                    } else {
                        span.weight
                    }
                }
            };
            if (span.weight - before).abs() > NEGLIGIBLE {
                result.push((span.first, owner, partner, span.weight - before));
            }
            previous_end = Some((span.last, span.weight));
        }
        if let Some((last, weight)) = previous_end {
            if last < window.last {
                result.push((last + 1, owner, partner, -weight));
            }
        }
    }
    result.sort_by_key(|a| (a.1, a.0, a.2));
    result
}

/// Applies the pairing rule to the changes of one owner (sorted by time, then partner).
fn pair_changes(changes: &[Change], out: &mut Vec<Transfer>) {
    let mut pending: Vec<(Step, usize, f64)> = Vec::new(); // unpaired decreases
    let mut k = 0;
    while k < changes.len() {
        let time = changes[k].0;
        let owner = changes[k].1;
        let mut decreases: Vec<(usize, f64)> = Vec::new();
        let mut increases: Vec<(usize, f64)> = Vec::new();
        while k < changes.len() && changes[k].0 == time {
            let (_, _, partner, delta) = changes[k];
            if delta < 0.0 {
                decreases.push((partner, -delta));
            } else {
                increases.push((partner, delta));
            }
            k += 1;
        }
        // 1. Same-step pairing.
        let (mut d, mut u) = (0, 0);
        while d < decreases.len() && u < increases.len() {
            let amount = decreases[d].1.min(increases[u].1);
            out.push(Transfer {
                time,
                owner,
                from: Some(decreases[d].0),
                to: Some(increases[u].0),
                weight: amount,
            });
            decreases[d].1 -= amount;
            increases[u].1 -= amount;
            if decreases[d].1 <= NEGLIGIBLE {
                d += 1;
            }
            if increases[u].1 <= NEGLIGIBLE {
                u += 1;
            }
        }
        // 2. A left-over increase first closes any unpaired decrease of the same partner (the
        //    partner left and came back: two half switches), then takes the most recent
        //    unpaired decreases of other partners.
        for &(partner, mut amount) in &increases[u..] {
            for entry in pending.iter_mut().filter(|entry| entry.1 == partner) {
                if entry.2 > NEGLIGIBLE {
                    out.push(Transfer {
                        time: entry.0,
                        owner,
                        from: Some(partner),
                        to: None,
                        weight: entry.2,
                    });
                    entry.2 = 0.0;
                }
            }
            for entry in pending.iter_mut().rev() {
                if amount <= NEGLIGIBLE {
                    break;
                }
                if entry.2 <= NEGLIGIBLE {
                    continue;
                }
                let moved = entry.2.min(amount);
                out.push(Transfer {
                    time,
                    owner,
                    from: Some(entry.1),
                    to: Some(partner),
                    weight: moved,
                });
                entry.2 -= moved;
                amount -= moved;
            }
            if amount > NEGLIGIBLE {
                out.push(Transfer {
                    time,
                    owner,
                    from: None,
                    to: Some(partner),
                    weight: amount,
                });
            }
        }
        pending.retain(|entry| entry.2 > NEGLIGIBLE);
        for &(partner, amount) in &decreases[d..] {
            if amount > NEGLIGIBLE {
                pending.push((time, partner, amount));
            }
        }
    }
    // 3. Decreases never taken up are half switches at their own step.
    for (time, partner, amount) in pending {
        out.push(Transfer {
            time,
            owner: changes[0].1,
            from: Some(partner),
            to: None,
            weight: amount,
        });
    }
}

fn transfers(assignment: &Assignment, by_truth: bool) -> Vec<Transfer> {
    let all = changes(assignment, by_truth);
    let mut out = Vec::new();
    let mut start = 0;
    while start < all.len() {
        let mut end = start;
        while end < all.len() && all[end].1 == all[start].1 {
            end += 1;
        }
        pair_changes(&all[start..end], &mut out);
        start = end;
    }
    out.sort_by(|a, b| {
        (a.time, a.owner, a.from, a.to)
            .cmp(&(b.time, b.owner, b.from, b.to))
            .then(a.weight.total_cmp(&b.weight))
    });
    out
}

fn cost(params: &TrajectoryParams, transfer: &Transfer) -> f64 {
    let full = 2.0 * params.switch_cost();
    if transfer.from.is_some() && transfer.to.is_some() {
        full * transfer.weight
    } else {
        full / 2.0 * transfer.weight
    }
}

/// The switches of every truth, in time order (then truth order).
pub fn switch_events(
    assignment: &Assignment,
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &TrajectoryParams,
) -> Vec<SwitchEvent> {
    let id = |set: &TrajectorySet, index: Option<usize>| index.map(|i| set.get(i).id().to_string());
    transfers(assignment, true)
        .into_iter()
        .map(|t| SwitchEvent {
            time: t.time,
            truth: truth.get(t.owner).id().to_string(),
            from: id(estimate, t.from),
            to: id(estimate, t.to),
            weight: t.weight,
            cost: cost(params, &t),
            class: None,
        })
        .collect()
}

/// The jumps of every estimate between truths, in time order (then estimate order).
pub fn jump_events(
    assignment: &Assignment,
    truth: &TrajectorySet,
    estimate: &TrajectorySet,
    params: &TrajectoryParams,
) -> Vec<JumpEvent> {
    let id = |set: &TrajectorySet, index: Option<usize>| index.map(|i| set.get(i).id().to_string());
    transfers(assignment, false)
        .into_iter()
        .map(|t| JumpEvent {
            time: t.time,
            estimate: estimate.get(t.owner).id().to_string(),
            from: id(truth, t.from),
            to: id(truth, t.to),
            weight: t.weight,
            cost: cost(params, &t),
            class: None,
        })
        .collect()
}

/// How the switch events read to a person: the truth-side events sorted into kinds, each event
/// into exactly one.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize)]
pub struct SwitchKinds {
    /// Events from one track to another (each counts 1 in `switch_count`).
    pub full: usize,
    /// Events to or from unassigned (each counts 0.5).
    pub half: usize,
    /// Swaps: two truths exchanging their tracks at one step (two full events each).
    pub swaps: usize,
    /// Breaks: a full event whose old track has no state at that step (it ended or paused and
    /// another track took over).
    pub breaks: usize,
    /// Hand-overs: the other full events (the old track goes on, following something else or
    /// nothing).
    pub handovers: usize,
}

impl std::ops::Add for SwitchKinds {
    type Output = SwitchKinds;

    /// The kinds of two disjoint parts of a scene (two classes) together.
    fn add(self, other: SwitchKinds) -> SwitchKinds {
        SwitchKinds {
            full: self.full + other.full,
            half: self.half + other.half,
            swaps: self.swaps + other.swaps,
            breaks: self.breaks + other.breaks,
            handovers: self.handovers + other.handovers,
        }
    }
}

/// Sorts truth-side switch `events` (as from [`switch_events`]) into [`SwitchKinds`]: a swap
/// is a pair of full events at one step, truth A from track X to Y and truth B from Y to X; a
/// full event not in a swap is a break when X has no state at that step in `estimate`, else a
/// hand-over.
pub fn switch_kinds(events: &[SwitchEvent], estimate: &TrajectorySet) -> SwitchKinds {
    let mut kinds = SwitchKinds::default();
    let full: Vec<&SwitchEvent> = events
        .iter()
        .filter(|e| e.from.is_some() && e.to.is_some())
        .collect();
    kinds.full = full.len();
    kinds.half = events.len() - full.len();
    let mut in_swap = vec![false; full.len()];
    for a in 0..full.len() {
        if in_swap[a] {
            continue;
        }
        let partner = (a + 1..full.len()).find(|&b| {
            !in_swap[b]
                && full[b].time == full[a].time
                && full[b].truth != full[a].truth
                && full[b].from == full[a].to
                && full[b].to == full[a].from
        });
        if let Some(b) = partner {
            in_swap[a] = true;
            in_swap[b] = true;
            kinds.swaps += 1;
        }
    }
    let ids: std::collections::HashMap<&str, usize> = estimate
        .trajectories()
        .iter()
        .enumerate()
        .map(|(k, t)| (t.id(), k))
        .collect();
    for (event, swapped) in full.iter().zip(&in_swap) {
        if *swapped {
            continue;
        }
        let from = event
            .from
            .as_deref()
            .expect("a full event has a track before");
        let present = ids
            .get(from)
            .is_some_and(|&k| estimate.get(k).state_at(event.time).is_some());
        if present {
            kinds.handovers += 1;
        } else {
            kinds.breaks += 1;
        }
    }
    kinds
}

#[cfg(test)]
mod kinds_tests {
    use super::*;
    use crate::trajectory::Trajectory;

    fn event(time: Step, truth: &str, from: Option<&str>, to: Option<&str>) -> SwitchEvent {
        SwitchEvent {
            time,
            truth: truth.into(),
            from: from.map(Into::into),
            to: to.map(Into::into),
            weight: 1.0,
            cost: 1.0,
            class: None,
        }
    }

    // Counted by hand from the definitions above: at step 5 A and B exchange X and Y (one
    // swap); at step 7 C passes from Z, which has no state at 7, to W (a break); at step 8 A
    // passes from Y, still present, to W (a hand-over); at step 9 B loses its track (half).
    #[test]
    fn kinds_by_hand() {
        let track = |id: &str, steps: &[Step]| {
            Trajectory::new(id, 1, steps.iter().map(|&s| (s, vec![0.0])).collect()).unwrap()
        };
        let estimate = TrajectorySet::new(
            1,
            vec![
                track("X", &[4, 5, 6, 7, 8, 9]),
                track("Y", &[4, 5, 6, 7, 8, 9]),
                track("Z", &[4, 5, 6]),
                track("W", &[7, 8, 9]),
            ],
        )
        .unwrap();
        let events = [
            event(5, "A", Some("X"), Some("Y")),
            event(5, "B", Some("Y"), Some("X")),
            event(7, "C", Some("Z"), Some("W")),
            event(8, "A", Some("Y"), Some("W")),
            event(9, "B", Some("X"), None),
        ];
        let kinds = switch_kinds(&events, &estimate);
        assert_eq!(
            kinds,
            SwitchKinds {
                full: 4,
                half: 1,
                swaps: 1,
                breaks: 1,
                handovers: 1
            }
        );
    }
}
