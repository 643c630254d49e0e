//! Fuzz target: the text, CSV and JSON writers of `switchyard::report` with arbitrary object
//! ids, file names and tracker names, some of them very long (a two-byte repeat count stretches
//! a short piece to tens of thousands of characters, beyond libFuzzer's input length). Small
//! sets are scored (per-step, trajectory LP, switches, audit, a two-tracker comparison) and
//! every writer must succeed, never panic; JSON must parse back, CSV must read back with the
//! header's number of fields, and every output must be UTF-8.
#![no_main]

use libfuzzer_sys::arbitrary::{Result as Drawn, Unstructured};
use libfuzzer_sys::fuzz_target;
use switchyard::assignment::audit::audit;
use switchyard::assignment::switches::{jump_events, switch_events, switch_kinds};
use switchyard::compare::{
    run as run_comparison, AggregateOptions, BootstrapOptions, Case, CaseKey, CompareOptions,
    Dataset, RankBy, ResampleBy, TrackerData,
};
use switchyard::distance::Distance;
use switchyard::ospa2::{Ospa2, Ospa2Params};
use switchyard::per_step::{occupied_steps, GospaParams};
use switchyard::report::audit::AuditDocument;
use switchyard::report::compare::{CompareInputs, Sections, TrackerSource};
use switchyard::report::score::ScoreDocument;
use switchyard::report::steps::Ospa2Steps;
use switchyard::report::switches::SwitchesDocument;
use switchyard::report::{self, Exactness, InputInfo, TimedEvents};
use switchyard::trajectory::{Trajectory, TrajectorySet};
use switchyard::trajectory_metric::{score, TrajectoryParams};

/// Longest name or id drawn: above the 65,535 that formatting widths can hold.
const LONGEST_NAME: usize = 70_000;

/// A name: an arbitrary short string, repeated up to [`LONGEST_NAME`] characters in all.
fn name(u: &mut Unstructured) -> Drawn<String> {
    let piece: String = u.arbitrary()?;
    let piece = if piece.is_empty() {
        "x".to_string()
    } else {
        piece
    };
    let repeats = if u.ratio(1, 8)? {
        usize::from(u.arbitrary::<u16>()?) + 1
    } else {
        1
    };
    let mut text = piece.repeat(repeats.min(LONGEST_NAME / piece.len()).max(1));
    while text.len() > LONGEST_NAME {
        text.pop();
    }
    Ok(text)
}

/// A small set of one-dimensional trajectories with arbitrary ids, positions on a coarse grid so
/// that pairs come within the cut-off.
fn set(u: &mut Unstructured, prefix: char) -> Drawn<TrajectorySet> {
    let count = u.int_in_range(0..=4)?;
    let mut trajectories = Vec::with_capacity(count);
    for n in 0..count {
        let id = format!("{prefix}{n}{}", name(u)?);
        let first = i64::from(u.int_in_range(0..=5u8)?);
        let length = u.int_in_range(1..=6u8)?;
        let points = (0..i64::from(length))
            .map(|k| Ok((first + k, vec![f64::from(u.int_in_range(0..=6u8)?) * 0.5])))
            .collect::<Drawn<Vec<_>>>()?;
        if let Ok(trajectory) = Trajectory::new(id, 1, points) {
            trajectories.push(trajectory);
        }
    }
    Ok(TrajectorySet::new(1, trajectories).expect("ids are distinct by their prefix and index"))
}

/// Output bytes are UTF-8 text.
fn text(bytes: &[u8]) -> &str {
    std::str::from_utf8(bytes).expect("writers produce UTF-8")
}

/// JSON parses back.
fn check_json(bytes: &[u8]) {
    serde_json::from_str::<serde_json::Value>(text(bytes)).expect("writers produce valid JSON");
}

/// CSV reads back, every record with the header's number of fields.
fn check_csv(bytes: &[u8]) {
    let mut reader = csv::ReaderBuilder::new().from_reader(text(bytes).as_bytes());
    let width = reader.headers().expect("a header row").len();
    for record in reader.records() {
        assert_eq!(record.expect("a readable record").len(), width);
    }
}

/// Runs `write` into memory and returns the bytes; writing to memory cannot fail.
fn written(write: impl FnOnce(&mut Vec<u8>) -> std::io::Result<()>) -> Vec<u8> {
    let mut out = Vec::new();
    write(&mut out).expect("writing to memory succeeds");
    out
}

fn run(u: &mut Unstructured) -> Drawn<()> {
    let truth = set(u, 't')?;
    let estimate = set(u, 'e')?;
    let other = set(u, 'o')?;
    let info = InputInfo {
        truth: name(u)?,
        truth_objects: truth.len(),
        estimate: name(u)?,
        estimate_tracks: estimate.len(),
        distance: "euclidean".to_string(),
        state_columns: vec![name(u)?],
        weights: None,
        time_step: if u.arbitrary()? { Some(0.1) } else { None },
    };
    let distance = Distance::default();
    let cutoff = f64::from(u.int_in_range(1..=4u8)?);

    let gospa = GospaParams::new(cutoff, 1.0, 2.0).expect("valid parameters");
    if let Ok(series) = occupied_steps(&truth, &estimate, &gospa, &distance) {
        text(&written(|o| {
            report::steps::write_text(o, &series, &gospa, &info)
        }));
        check_csv(&written(|o| {
            report::steps::write_csv_timed(o, &series, info.time_step)
        }));
        check_json(&written(|o| {
            report::steps::write_json(o, &series, &gospa, &info)
        }));
        // The same with OSPA(2) over a sliding window (`steps --ospa2`).
        let params = Ospa2Params::new(cutoff, 1.0).expect("valid parameters");
        if let Ok(metric) = Ospa2::new(&truth, &estimate, params, &distance) {
            let width = usize::from(u.int_in_range(1..=4u8)?);
            let windows = metric.sliding_windows(width);
            let sliding = Ospa2Steps {
                params,
                width,
                windows: &windows,
            };
            let sliding = Some(&sliding);
            text(&written(|o| {
                report::steps::write_text_with(o, &series, &gospa, &info, sliding)
            }));
            check_csv(&written(|o| {
                report::steps::write_csv_with(o, &series, info.time_step, sliding)
            }));
            check_json(&written(|o| {
                report::steps::write_json_with(o, &series, &gospa, &info, sliding)
            }));
        }
    }

    let params = TrajectoryParams::new(cutoff, 1.0, cutoff).expect("valid parameters");
    let Ok(result) = score(&truth, &estimate, &params, &distance) else {
        return Ok(());
    };
    let switches = switch_events(&result.assignment, &truth, &estimate, &result.params);
    let jumps = jump_events(&result.assignment, &truth, &estimate, &result.params);
    let kinds = switch_kinds(&switches, &estimate);
    let document = ScoreDocument::new(&result, &info, "microlp", &switches, &jumps);
    text(&written(|o| {
        report::score::write_text(o, &result, &info, "microlp", &kinds)
    }));
    check_json(&written(|o| report::score::write_json(o, &document)));

    let document = SwitchesDocument {
        params: &result.params,
        inputs: &info,
        switching: result.parts.switching,
        switch_count: result.parts.switch_count,
        kinds,
        switches: TimedEvents::new(&switches, info.time_step),
        jumps: TimedEvents::new(&jumps, info.time_step),
        exactness: Exactness::new(&result),
    };
    text(&written(|o| report::switches::write_text(o, &document)));
    check_csv(&written(|o| {
        report::switches::write_csv_timed(o, &switches, &jumps, info.time_step)
    }));
    check_json(&written(|o| report::switches::write_json(o, &document)));

    let mut coverage = audit(&result, &truth, &estimate, &switches);
    let by_cost: bool = u.arbitrary()?;
    if by_cost {
        coverage.rank_by_cost();
    }
    let document = AuditDocument {
        params: &result.params,
        inputs: &info,
        truths: &coverage.truths,
        estimates: &coverage.estimates,
        exactness: Exactness::new(&result),
        by_cost,
        tracks_by_cost: by_cost,
    };
    text(&written(|o| report::audit::write_text(o, &document)));
    check_csv(&written(|o| report::audit::write_csv(o, &document)));
    check_json(&written(|o| report::audit::write_json(o, &document)));

    compare(u, truth, estimate, other, params)
}

/// Two trackers with arbitrary names on one case with an arbitrary sequence and run.
fn compare(
    u: &mut Unstructured,
    truth: TrajectorySet,
    estimate: TrajectorySet,
    other: TrajectorySet,
    params: TrajectoryParams,
) -> Drawn<()> {
    let names = [name(u)?, name(u)?];
    if names[0] == names[1] {
        return Ok(());
    }
    let key = CaseKey::new(name(u)?, name(u)?);
    let trackers = [(&names[0], estimate), (&names[1], other)]
        .into_iter()
        .map(|(name, set)| TrackerData {
            name: name.clone(),
            estimates: vec![set],
        })
        .collect();
    let Ok(dataset) = Dataset::new(vec![truth], vec![Case { key, truth: 0 }], trackers) else {
        return Ok(());
    };
    let options = CompareOptions {
        settings: vec![params],
        solve: Default::default(),
        aggregate: AggregateOptions {
            bootstrap: BootstrapOptions {
                resamples: 20,
                seed: 0,
                confidence: 0.9,
            },
            resample_by: ResampleBy::Auto,
            rank_by: RankBy::default(),
        },
        monte_carlo: true,
        ospa2: u.arbitrary()?,
    };
    let Ok(comparison) = run_comparison(&dataset, &Distance::default(), &options, &|| {}) else {
        return Ok(());
    };
    let inputs = CompareInputs {
        truth: Some(name(u)?),
        manifest: None,
        trackers: names
            .iter()
            .map(|name| TrackerSource {
                name: name.clone(),
                estimate: Some(name.clone()),
            })
            .collect(),
        sequences: 1,
        cases: 1,
        distance: "euclidean".to_string(),
        engine: "microlp".to_string(),
        time_step: if u.arbitrary()? { Some(0.1) } else { None },
        classes: None,
    };
    let sections = Sections {
        per_sequence: true,
        monte_carlo: true,
        per_case: true,
    };
    use report::compare as writers;
    text(&written(|o| {
        writers::write_text(o, &comparison, &inputs, sections)
    }));
    check_json(&written(|o| {
        writers::write_json(o, &comparison, &inputs, sections)
    }));
    check_csv(&written(|o| writers::write_csv(o, &comparison)));
    check_csv(&written(|o| writers::write_sequences_csv(o, &comparison)));
    check_csv(&written(|o| writers::write_steps_csv(o, &comparison)));
    check_csv(&written(|o| {
        writers::write_steps_csv_timed(o, &comparison, inputs.time_step)
    }));
    check_csv(&written(|o| writers::write_cases_csv(o, &comparison)));
    Ok(())
}

fuzz_target!(|data: &[u8]| {
    // Running out of bytes ends a case early; that is not a finding.
    let _ = run(&mut Unstructured::new(data));
});
