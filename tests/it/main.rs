//! switchyard's integration tests: one binary, one module per topic.

mod cli;
mod metric_cases;
mod reductions;
mod references;
mod support;
mod switch_events;
mod synth;
