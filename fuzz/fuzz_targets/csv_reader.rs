//! Fuzz target: any bytes through the CSV reader. It must return a set or an error, never
//! panic; a set it returns holds only finite states and one point per object and step.
#![no_main]

use libfuzzer_sys::fuzz_target;
use switchyard::input::{read_csv, CsvLayout};

fuzz_target!(|data: &[u8]| {
    for layout in [
        CsvLayout::default(),
        CsvLayout {
            time_step: Some(0.5),
            ..CsvLayout::default()
        },
    ] {
        if let Ok(file) = read_csv(data, "fuzz.csv", &layout) {
            let set = &file.set;
            assert_eq!(set.dim(), file.state_columns.len());
            for trajectory in set.trajectories() {
                assert!(!trajectory.id().is_empty());
                assert!(trajectory.steps().windows(2).all(|w| w[0] < w[1]));
                for index in 0..trajectory.len() {
                    assert!(trajectory.state(index).iter().all(|v| v.is_finite()));
                }
            }
        }
    }
});
