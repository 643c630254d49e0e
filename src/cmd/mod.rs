//! The subcommands, one file each, and what they share: input options, metric options, output.
//!
//! Exit codes: 0 success; 1 bad input or parameters (the message names file, line and column
//! where it applies); 2 a command line that does not parse; 3 an internal failure (the LP
//! solver failed, or a result did not pass its consistency checks); 4 the work would not fit the
//! memory budget (the message says why and what to do).

use std::process::ExitCode;

use anyhow::bail;
use clap::{Args, Parser, Subcommand, ValueEnum};

use switchyard::distance::{BoxLayout, Distance};
use switchyard::input::{read_csv_path, CsvLayout, TrajectoryFile};
use switchyard::trajectory_metric::ExactBudget;
use switchyard::Error;

mod audit;
mod compare;
mod output;
mod report;
mod score;
mod steps;
mod switches;
mod synth;

pub use output::OutputArgs;

/// Score multi-object trackers against ground truth with GOSPA and trajectory GOSPA.
#[derive(Parser, Debug)]
#[command(name = "switchyard", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Per-step GOSPA over time, with its localisation, missed and false parts.
    Steps(steps::StepsArgs),
    /// Trajectory GOSPA: one score for whole trajectories, split into localisation, missed,
    /// false and switching.
    Score(score::ScoreArgs),
    /// Every identity switch: when, which truth, which tracks before and after; and every
    /// track that passes from one truth to another.
    Switches(switches::SwitchesArgs),
    /// How each true object was covered over time, worst first, and what each track followed.
    Audit(audit::AuditArgs),
    /// Compare several trackers over sequences and Monte Carlo runs: rankings, paired
    /// bootstrap intervals against the best, parameter sweeps, per-step summaries over runs.
    Compare(compare::CompareArgs),
    /// One self-contained HTML page to look at: errors over time, which track covered each
    /// true object, a top view of the paths, and a summary; several trackers side by side.
    Report(report::ReportArgs),
    /// Write a seeded synthetic ground truth and an imaginary tracker's output as CSV files.
    Synth(synth::SynthArgs),
}

/// Where the inputs are and how to read them.
#[derive(Args, Debug, Clone)]
pub struct InputArgs {
    /// Ground-truth CSV file (`-` for standard input).
    #[arg(long, value_name = "FILE")]
    pub truth: String,
    /// The tracker's output as CSV (`-` for standard input).
    #[arg(long, value_name = "FILE")]
    pub estimate: String,
    #[command(flatten)]
    pub csv: CsvOptions,
    #[command(flatten)]
    pub distance: DistanceOptions,
}

/// How CSV files are read: the columns, the times and the delimiter.
#[derive(Args, Debug, Clone)]
pub struct CsvOptions {
    /// Name of the time column.
    #[arg(long, value_name = "NAME", default_value = "time")]
    pub time_column: String,
    /// Name of the id column.
    #[arg(long, value_name = "NAME", default_value = "id")]
    pub id_column: String,
    /// State columns, comma-separated [default: x,y, plus z when present].
    #[arg(long, value_name = "NAMES", value_delimiter = ',')]
    pub state_columns: Option<Vec<String>>,
    /// Step size for decimal timestamps: step = round(time / DT). Without it times must be
    /// integer step indices.
    #[arg(long, value_name = "DT")]
    pub time_step: Option<f64>,
    /// Field delimiter, one character (use `tab` for tabs).
    #[arg(long, value_name = "CHAR", default_value = ",")]
    pub delimiter: String,
}

/// The base distance between states (`specs/distances.md`).
#[derive(Args, Debug, Clone)]
pub struct DistanceOptions {
    /// Base distance between states. iou and geodesic need --state-columns: the box's 4 or 6
    /// columns in the --box layout, or latitude then longitude in degrees.
    #[arg(long, value_enum, default_value_t = DistanceKind::Euclidean)]
    pub distance: DistanceKind,
    /// Per-column weights for euclidean, manhattan and chebyshev, comma-separated.
    #[arg(long, value_name = "W", value_delimiter = ',')]
    pub weights: Option<Vec<f64>>,
    /// How iou reads a box from the state columns: corner-size (x, y, width, height),
    /// corners (x1, y1, x2, y2) or centre-size (cx, cy, width, height); 3-D boxes have 6
    /// columns (x, y, z, width, height, depth, and so on) [default: corner-size].
    #[arg(long = "box", value_enum, value_name = "LAYOUT")]
    pub box_layout: Option<BoxKind>,
}

/// The base distances offered on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum DistanceKind {
    /// Euclidean distance (optionally weighted).
    Euclidean,
    /// Sum of absolute differences (optionally weighted).
    Manhattan,
    /// Largest absolute difference (optionally weighted).
    Chebyshev,
    /// 1 - IoU of axis-aligned boxes, 2-D or 3-D (cut-off in (0, 1]).
    Iou,
    /// Great-circle distance in metres between latitude/longitude points in degrees.
    Geodesic,
}

/// Box layouts on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum BoxKind {
    /// A corner and the sizes: x, y, width, height (3-D: x, y, z, width, height, depth).
    CornerSize,
    /// Two opposite corners: x1, y1, x2, y2 (3-D: x1, y1, z1, x2, y2, z2).
    Corners,
    /// The centre and the sizes: cx, cy, width, height (3-D: cx, cy, cz, width, height, depth).
    #[value(alias = "center-size")]
    CentreSize,
}

impl From<BoxKind> for BoxLayout {
    fn from(kind: BoxKind) -> Self {
        match kind {
            BoxKind::CornerSize => BoxLayout::CornerSize,
            BoxKind::Corners => BoxLayout::Corners,
            BoxKind::CentreSize => BoxLayout::CentreSize,
        }
    }
}

/// The two inputs, read and checked.
pub struct Inputs {
    pub truth: TrajectoryFile,
    pub estimate: TrajectoryFile,
    pub distance: Distance,
}

impl CsvOptions {
    /// The layout these options describe.
    pub fn layout(&self) -> anyhow::Result<CsvLayout> {
        let delimiter = match self.delimiter.as_str() {
            "tab" | "\\t" => b'\t',
            text if text.len() == 1 && text.is_ascii() => text.as_bytes()[0],
            text => bail!("invalid parameter: the delimiter must be one ASCII character or `tab`, got {text:?}"),
        };
        Ok(CsvLayout {
            time_column: self.time_column.clone(),
            id_column: self.id_column.clone(),
            state_columns: self.state_columns.clone(),
            time_step: self.time_step,
            delimiter,
            distance: None,
        })
    }
}

impl DistanceOptions {
    /// The distance these options describe, with the options that do not go together refused:
    /// `--weights` other than with euclidean, manhattan or chebyshev, `--box` other than with
    /// iou, iou or geodesic without `--state-columns`, or with the wrong number of them. The
    /// caller still checks the cut-off and the data ([`Distance::validate`]; per row with
    /// [`CsvLayout::distance`]).
    pub fn build(&self, csv: &CsvOptions) -> anyhow::Result<Distance> {
        let name = self
            .distance
            .to_possible_value()
            .map_or_else(String::new, |value| value.get_name().to_string());
        let weights = self.weights.clone();
        if weights.is_some() && matches!(self.distance, DistanceKind::Iou | DistanceKind::Geodesic)
        {
            bail!(
                "invalid parameter: --weights applies to the euclidean, manhattan and chebyshev \
                 distances, not to {name}"
            );
        }
        if self.box_layout.is_some() && self.distance != DistanceKind::Iou {
            bail!("invalid parameter: --box applies to the iou distance, not to {name}");
        }
        let distance = match self.distance {
            DistanceKind::Euclidean => Distance::Euclidean { weights },
            DistanceKind::Manhattan => Distance::Manhattan { weights },
            DistanceKind::Chebyshev => Distance::Chebyshev { weights },
            DistanceKind::Iou => {
                Distance::Iou(self.box_layout.unwrap_or(BoxKind::CornerSize).into())
            }
            DistanceKind::Geodesic => Distance::Geodesic,
        };
        match (&distance, &csv.state_columns) {
            (Distance::Iou(layout), None) => bail!(
                "invalid parameter: the iou distance needs --state-columns naming the box's \
                 4 columns ({}) or 6 ({}) in the {} layout",
                layout.columns(2),
                layout.columns(3),
                layout.name()
            ),
            (Distance::Geodesic, None) => bail!(
                "invalid parameter: the geodesic distance needs --state-columns naming the \
                 latitude and the longitude columns, in that order (for example \
                 --state-columns lat,lon)"
            ),
            (_, Some(columns)) => distance.check_dimension(columns.len())?,
            _ => {}
        }
        Ok(distance)
    }
}

impl InputArgs {
    /// The two input files as named (`-` for standard input), for [`OutputArgs::check`].
    pub fn paths(&self) -> [&str; 2] {
        [&self.truth, &self.estimate]
    }

    /// Reads both files and checks they can be compared with the chosen distance.
    pub fn read(&self, cutoff: f64) -> anyhow::Result<Inputs> {
        if self.truth == "-" && self.estimate == "-" {
            bail!("invalid parameter: only one of --truth and --estimate can read standard input");
        }
        for (option, path) in [("--truth", &self.truth), ("--estimate", &self.estimate)] {
            if path.is_empty() {
                bail!("invalid parameter: {option} is empty: give a CSV file, or - for standard input");
            }
        }
        let distance = self.distance.build(&self.csv)?;
        distance.check_cutoff(cutoff)?;
        let mut layout = self.csv.layout()?;
        layout.distance = Some(distance.clone());
        let truth = read_csv_path(&self.truth, &layout)?;
        let estimate = read_csv_path(&self.estimate, &layout)?;
        truth.check_comparable(&estimate)?;
        distance.validate(truth.set.dim(), cutoff)?;
        Ok(Inputs {
            truth,
            estimate,
            distance,
        })
    }
}

/// The trajectory metric's options, shared by every command built on it.
#[derive(Args, Debug, Clone)]
pub struct TrajectoryArgs {
    #[command(flatten)]
    pub input: InputArgs,
    #[command(flatten)]
    pub metric: MetricArgs,
}

/// The trajectory metric's parameters and how it is solved, without the inputs.
#[derive(Args, Debug, Clone)]
pub struct MetricArgs {
    /// Cut-off c > 0: the most one object can cost at one step.
    #[arg(long, short = 'c', value_name = "C")]
    pub cutoff: f64,
    /// Order p >= 1.
    #[arg(long, short = 'p', value_name = "P", default_value_t = 1.0)]
    pub order: f64,
    /// Switching penalty gamma >= 0: a full switch costs gamma^p [default: the cut-off].
    #[arg(long, short = 'g', value_name = "G")]
    pub switch_penalty: Option<f64>,
    /// LP engine: auto proves each group's value by Lagrangian bounds (pure Rust, fast on long
    /// crowded scenes) and hands a group it cannot prove to HiGHS when built in, else microlp.
    #[arg(long, value_enum, default_value_t = EngineKind::Auto)]
    pub engine: EngineKind,
    /// Memory the solve may use for its models, like `4G` or `500M`: a group whose simplex
    /// proof would need more is reported with its bounds instead, and a scene whose candidate
    /// pairs alone would need more is refused (exit 4) with the reason.
    #[arg(long, value_name = "SIZE", default_value = "4G", value_parser = parse_size)]
    pub memory_budget: u64,
    /// Compute the exact trajectory GOSPA: groups whose LP optimum is fractional are solved
    /// again as integer programs (branch and bound).
    #[arg(long)]
    pub exact: bool,
    /// Stop the integer programs after this budget: seconds (`30s`, counted after the LP; a
    /// result stopped by it depends on the machine's speed) or branch-and-bound nodes per group
    /// (`5000nodes`). A search stopped early is reported as not proven, with its bounds.
    /// [default: no limit]
    #[arg(long, value_name = "BUDGET", requires = "exact", value_parser = parse_budget)]
    pub exact_budget: Option<ExactBudget>,
}

/// Reads `--exact-budget`: `<seconds>s` or `<count>nodes`.
fn parse_budget(text: &str) -> Result<ExactBudget, String> {
    let text = text.trim();
    let bad = || {
        format!(
            "expected seconds (like `30s` or `0.5s`) or a node count (like `5000nodes`), got {text:?}"
        )
    };
    if let Some(count) = text.strip_suffix("nodes") {
        let nodes: u64 = count.trim().parse().map_err(|_| bad())?;
        return Ok(ExactBudget::Nodes(nodes));
    }
    let seconds: f64 = text
        .strip_suffix('s')
        .ok_or_else(bad)?
        .trim()
        .parse()
        .map_err(|_| bad())?;
    std::time::Duration::try_from_secs_f64(seconds)
        .map(ExactBudget::Seconds)
        .map_err(|_| format!("the seconds must be a number >= 0 and below 10^19, got {text:?}"))
}

/// Reads a memory size: a number with an optional unit K, M, G or T (powers of 1024; a
/// trailing `B` or `iB` is allowed).
pub fn parse_size(text: &str) -> Result<u64, String> {
    let bad = || format!("expected a size like `4G`, `500M` or `2048K`, got {text:?}");
    let upper = text.trim().to_ascii_uppercase();
    let number = upper
        .trim_end_matches("IB")
        .trim_end_matches('B')
        .trim_end();
    let (digits, shift) = match number.chars().last() {
        Some('K') => (&number[..number.len() - 1], 10),
        Some('M') => (&number[..number.len() - 1], 20),
        Some('G') => (&number[..number.len() - 1], 30),
        Some('T') => (&number[..number.len() - 1], 40),
        _ => (number, 0),
    };
    let value: f64 = digits.trim().parse().map_err(|_| bad())?;
    let bytes = value * (1u64 << shift) as f64;
    if !(1.0..1.8e19).contains(&bytes) {
        return Err(format!(
            "the size must be at least 1 byte and below 16E, got {text:?}"
        ));
    }
    Ok(bytes as u64)
}

/// LP engines on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum EngineKind {
    /// The Lagrangian engine; groups it cannot prove go to HiGHS if built in, else microlp.
    Auto,
    /// microlp, pure Rust (always available).
    Microlp,
    /// HiGHS (builds with `--features highs`).
    Highs,
}

impl From<EngineKind> for switchyard::trajectory_metric::Engine {
    fn from(kind: EngineKind) -> Self {
        match kind {
            EngineKind::Auto => switchyard::trajectory_metric::Engine::default(),
            EngineKind::Microlp => switchyard::trajectory_metric::Engine::Microlp,
            EngineKind::Highs => switchyard::trajectory_metric::Engine::Highs,
        }
    }
}

impl TrajectoryArgs {
    /// The checked parameters; the switching penalty defaults to the cut-off.
    pub fn params(&self) -> anyhow::Result<switchyard::trajectory_metric::TrajectoryParams> {
        self.metric.params()
    }

    /// The engine's name for output.
    pub fn engine_name(&self) -> &'static str {
        self.metric.engine_name()
    }
}

impl MetricArgs {
    /// The checked parameters; the switching penalty defaults to the cut-off.
    pub fn params(&self) -> anyhow::Result<switchyard::trajectory_metric::TrajectoryParams> {
        Ok(switchyard::trajectory_metric::TrajectoryParams::new(
            self.cutoff,
            self.order,
            self.switch_penalty.unwrap_or(self.cutoff),
        )?)
    }

    /// The exact-metric budget, when `--exact` is given.
    pub fn exact(&self) -> Option<ExactBudget> {
        self.exact
            .then(|| self.exact_budget.unwrap_or(ExactBudget::Unlimited))
    }

    /// The engine's name for output.
    pub fn engine_name(&self) -> &'static str {
        switchyard::trajectory_metric::Engine::from(self.engine).name()
    }

    /// How the trajectory LP is solved.
    pub fn solve_options(&self) -> switchyard::trajectory_metric::SolveOptions {
        switchyard::trajectory_metric::SolveOptions {
            engine: self.engine.into(),
            exact: self.exact(),
            memory_budget: self.memory_budget,
            ..Default::default()
        }
    }
}

/// A progress display on standard error for long solves, when it is a terminal: groups done,
/// and the iterations of the Lagrangian engine on the largest group under way.
pub fn solve_progress() -> impl Fn(switchyard::trajectory_metric::Progress) + Sync {
    use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
    use std::io::IsTerminal;
    use switchyard::trajectory_metric::Progress;
    let bar = if std::io::stderr().is_terminal() {
        ProgressBar::with_draw_target(Some(0), ProgressDrawTarget::stderr())
    } else {
        ProgressBar::hidden()
    };
    bar.set_style(
        ProgressStyle::with_template("solving {bar:30} {pos}/{len} groups {msg} [{elapsed}]")
            .expect("a valid template"),
    );
    let largest = std::sync::atomic::AtomicUsize::new(0);
    move |event| match event {
        Progress::Started { components } => bar.set_length(components as u64),
        Progress::Iteration { cells, iteration } => {
            use std::sync::atomic::Ordering::Relaxed;
            if cells >= largest.load(Relaxed) {
                largest.store(cells, Relaxed);
                bar.set_message(format!("(largest: {cells} cells, iteration {iteration})"));
            }
        }
        Progress::ComponentDone => {
            bar.inc(1);
            if bar.position() >= bar.length().unwrap_or(0) {
                bar.finish_and_clear();
            }
        }
    }
}

/// Output formats.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// Aligned tables for people.
    Text,
    /// Comma-separated values, one row per item.
    Csv,
    /// One JSON document.
    Json,
}

/// Runs the command line and maps errors to exit codes.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(error) => {
            let _ = error.print();
            return ExitCode::from(if error.use_stderr() { 2 } else { 0 });
        }
    };
    let result = match cli.command {
        Command::Steps(args) => steps::run(&args),
        Command::Score(args) => score::run(&args),
        Command::Switches(args) => switches::run(&args),
        Command::Audit(args) => audit::run(&args),
        Command::Compare(args) => compare::run(&args),
        Command::Report(args) => report::run(&args),
        Command::Synth(args) => synth::run(&args),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("switchyard: error: {error:#}");
            ExitCode::from(exit_code(&error))
        }
    }
}

fn exit_code(error: &anyhow::Error) -> u8 {
    match error.downcast_ref::<Error>().map(Error::underlying) {
        Some(Error::Solver(_)) => 3,
        Some(Error::Budget(_)) => 4,
        _ => 1,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn command_line_definition_is_consistent() {
        Cli::command().debug_assert();
    }

    #[test]
    fn exact_budgets_parse_or_explain() {
        assert_eq!(
            parse_budget("30s"),
            Ok(ExactBudget::Seconds(std::time::Duration::from_secs(30)))
        );
        assert_eq!(
            parse_budget("0.5s"),
            Ok(ExactBudget::Seconds(std::time::Duration::from_millis(500)))
        );
        assert_eq!(
            parse_budget("0s"),
            Ok(ExactBudget::Seconds(std::time::Duration::ZERO))
        );
        assert_eq!(parse_budget("5000nodes"), Ok(ExactBudget::Nodes(5000)));
        assert_eq!(parse_budget("0nodes"), Ok(ExactBudget::Nodes(0)));
        for bad in [
            "", "30", "-1s", "nans", "infs", "1e30s", "1.5nodes", "-3nodes", "s", "nodes", "3m",
        ] {
            assert!(parse_budget(bad).is_err(), "{bad:?} was accepted");
        }
    }
}
