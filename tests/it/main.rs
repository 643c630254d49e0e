//! switchyard's integration tests: one binary, one module per topic.

mod bad_input;
mod cli;
mod compare;
mod distances;
mod exact;
mod messages;
mod metric_cases;
mod numerics;
mod reductions;
mod references;
mod report;
mod support;
mod switch_events;
mod synth;
