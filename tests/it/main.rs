//! switchyard's integration tests: one binary, one module per topic.

mod bad_input;
mod classes;
mod cli;
mod compare;
mod compare_page;
mod distances;
mod evaluate;
mod exact;
mod lagrangian;
mod messages;
mod metric_cases;
mod missed_share;
mod numerics;
mod ospa2;
mod output_safety;
mod reductions;
mod references;
mod report;
mod report_classes;
mod snapshots;
mod sparse_windows;
mod support;
mod switch_events;
mod synth;
