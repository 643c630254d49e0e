//! switchyard's integration tests: one binary, one module per topic.

mod metric_cases;
mod reductions;
mod references;
mod support;
mod synth;
