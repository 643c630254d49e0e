//! Times OSPA(2) (whole window, then a sliding window) on two CSV files:
//!
//! `cargo run --release --example ospa2_scale -- TRUTH.csv ESTIMATE.csv [cutoff] [order] [width]`
//!
//! Cut-off defaults to 10, order to 1, width to 10 steps. Memory: run it under
//! `/usr/bin/time -v` and read "Maximum resident set size".

use std::time::Instant;

use switchyard::distance::Distance;
use switchyard::input::{read_csv_path, CsvLayout};
use switchyard::ospa2::{Ospa2, Ospa2Params};

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let (truth, estimate) = match (args.get(1), args.get(2)) {
        (Some(t), Some(e)) => (t, e),
        _ => panic!("usage: ospa2_scale TRUTH.csv ESTIMATE.csv [cutoff] [order] [width]"),
    };
    let cutoff: f64 = args.get(3).map_or(10.0, |s| s.parse().expect("a cut-off"));
    let order: f64 = args.get(4).map_or(1.0, |s| s.parse().expect("an order"));
    let width: usize = args.get(5).map_or(10, |s| s.parse().expect("a width"));
    let layout = CsvLayout::default();
    let started = Instant::now();
    let truth = read_csv_path(truth, &layout).expect("a readable truth");
    let estimate = read_csv_path(estimate, &layout).expect("a readable estimate");
    println!(
        "read {} truths, {} tracks in {:.3} s",
        truth.set.len(),
        estimate.set.len(),
        started.elapsed().as_secs_f64()
    );
    let params = Ospa2Params::new(cutoff, order).expect("valid parameters");
    let started = Instant::now();
    let metric = Ospa2::new(&truth.set, &estimate.set, params, &Distance::default())
        .expect("comparable sets");
    let prepared = started.elapsed().as_secs_f64();
    let whole = metric.whole();
    println!(
        "whole window: OSPA(2) = {:.6} ({} pairs closer than c) in {:.3} s (close points {:.3} s)",
        whole.value,
        whole.pairs.len(),
        started.elapsed().as_secs_f64(),
        prepared
    );
    let started = Instant::now();
    let sliding = metric.sliding(width);
    let mean = sliding.iter().map(|s| s.1.value).sum::<f64>() / sliding.len().max(1) as f64;
    println!(
        "sliding window of {width} steps: {} windows, mean {:.6}, in {:.3} s",
        sliding.len(),
        mean,
        started.elapsed().as_secs_f64()
    );
}
