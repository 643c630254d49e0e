//! `switchyard compare --page FILE`: besides compare's own output, one self-contained HTML page
//! with the ranking table, the charts of a sweep and the Monte Carlo charts
//! (`switchyard::report::html::render_comparison`), written with the same care as every output:
//! never over an input, complete or not at all.

use std::io::Write;
use std::path::{Path, PathBuf};

use clap::Args;

use switchyard::compare::Comparison;
use switchyard::report::compare::CompareInputs;
use switchyard::report::html::{render_comparison, ComparisonPage, Limits, TimeScale};

use super::output::{same_output, OutputArgs};

/// The page option of `compare`.
#[derive(Args, Debug)]
pub struct PageArgs {
    /// Also write an HTML page with the ranking table, each tracker's mean d against each swept
    /// parameter (with a sweep) and per sequence its per-step GOSPA over the runs (with
    /// --monte-carlo); self-contained, opens offline. Appears only when complete.
    #[arg(long, value_name = "FILE")]
    page: Option<PathBuf>,
    /// Unit of time written on the page's time axes (for example `s`); needs --page and
    /// --time-step, with which the axes show time = step x step size.
    #[arg(long, value_name = "UNIT", requires_all = ["page", "time_step"])]
    time_unit: Option<String>,
}

impl PageArgs {
    /// The page as an output target.
    fn target(&self) -> OutputArgs {
        OutputArgs {
            output: self.page.clone(),
        }
    }

    /// Checks, before any work, that the page is none of `inputs` and not the other output.
    pub fn check<P: AsRef<Path>>(
        &self,
        output: &OutputArgs,
        inputs: impl IntoIterator<Item = P>,
    ) -> anyhow::Result<()> {
        let Some(page) = &self.page else {
            return Ok(());
        };
        let dash = Path::new("-");
        let to_stdout = |path: Option<&PathBuf>| path.is_none_or(|p| p.as_path() == dash);
        if page.as_path() == dash && to_stdout(output.output.as_ref()) {
            return Err(switchyard::Error::Parameter(
                "--page - and the comparison would both go to standard output; give --output \
                 FILE or --page FILE"
                    .into(),
            )
            .into());
        }
        if let Some(other) = &output.output {
            if same_output(page, other) {
                return Err(switchyard::Error::Parameter(format!(
                    "--page {} is also the output file; give them different names",
                    page.display()
                ))
                .into());
            }
        }
        self.target().check(inputs)
    }

    /// Writes the page when one was asked for; `time_step` labels the time axes in the input's
    /// time units.
    pub fn write(
        &self,
        comparison: &Comparison,
        inputs: &CompareInputs,
        time_step: Option<f64>,
    ) -> anyhow::Result<()> {
        if self.page.is_none() {
            return Ok(());
        }
        let page = ComparisonPage {
            title: "Tracker comparison".to_string(),
            comparison,
            inputs,
            time: time_step.map(|step| TimeScale {
                step,
                unit: self.time_unit.clone().filter(|u| !u.trim().is_empty()),
            }),
        };
        let html = render_comparison(&page, &Limits::default());
        self.target().emit(|out| {
            out.write_all(html.as_bytes())?;
            Ok(())
        })
    }
}
