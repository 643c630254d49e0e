//! The subcommands, one file each, and what they share: input options, metric options, output.
//!
//! Exit codes: 0 success; 1 bad input or parameters (the message names file, line and column
//! where it applies); 2 a command line that does not parse; 3 an internal failure (the LP
//! solver failed, or a result did not pass its consistency checks).

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{bail, Context};
use clap::{Args, Parser, Subcommand, ValueEnum};

use switchyard::distance::Distance;
use switchyard::input::{read_csv_path, CsvLayout, TrajectoryFile};
use switchyard::Error;

mod audit;
mod score;
mod steps;
mod switches;
mod synth;

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
    /// Base distance between states.
    #[arg(long, value_enum, default_value_t = DistanceKind::Euclidean)]
    pub distance: DistanceKind,
    /// Per-column weights for euclidean, manhattan and chebyshev, comma-separated.
    #[arg(long, value_name = "W", value_delimiter = ',')]
    pub weights: Option<Vec<f64>>,
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
}

/// The two inputs, read and checked.
pub struct Inputs {
    pub truth: TrajectoryFile,
    pub estimate: TrajectoryFile,
    pub distance: Distance,
}

impl InputArgs {
    fn layout(&self) -> anyhow::Result<CsvLayout> {
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
        })
    }

    /// Reads both files and checks they can be compared with the chosen distance.
    pub fn read(&self, cutoff: f64) -> anyhow::Result<Inputs> {
        if self.truth == "-" && self.estimate == "-" {
            bail!("invalid parameter: only one of --truth and --estimate can read standard input");
        }
        let layout = self.layout()?;
        let truth = read_csv_path(&self.truth, &layout)?;
        let estimate = read_csv_path(&self.estimate, &layout)?;
        truth.check_comparable(&estimate)?;
        let weights = self.weights.clone();
        let distance = match self.distance {
            DistanceKind::Euclidean => Distance::Euclidean { weights },
            DistanceKind::Manhattan => Distance::Manhattan { weights },
            DistanceKind::Chebyshev => Distance::Chebyshev { weights },
        };
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
    /// Cut-off c > 0: the most one object can cost at one step.
    #[arg(long, short = 'c', value_name = "C")]
    pub cutoff: f64,
    /// Order p >= 1.
    #[arg(long, short = 'p', value_name = "P", default_value_t = 1.0)]
    pub order: f64,
    /// Switching penalty gamma >= 0: a full switch costs gamma^p [default: the cut-off].
    #[arg(long, short = 'g', value_name = "G")]
    pub switch_penalty: Option<f64>,
    /// LP engine (highs only in builds with the `highs` feature).
    #[arg(long, value_enum, default_value_t = EngineKind::Microlp)]
    pub engine: EngineKind,
}

/// LP engines on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum EngineKind {
    /// microlp, pure Rust (always available).
    Microlp,
    /// HiGHS (builds with `--features highs`).
    Highs,
}

impl From<EngineKind> for switchyard::trajectory_metric::Engine {
    fn from(kind: EngineKind) -> Self {
        match kind {
            EngineKind::Microlp => switchyard::trajectory_metric::Engine::Microlp,
            EngineKind::Highs => switchyard::trajectory_metric::Engine::Highs,
        }
    }
}

impl TrajectoryArgs {
    /// The checked parameters; the switching penalty defaults to the cut-off.
    pub fn params(&self) -> anyhow::Result<switchyard::trajectory_metric::TrajectoryParams> {
        Ok(switchyard::trajectory_metric::TrajectoryParams::new(
            self.cutoff,
            self.order,
            self.switch_penalty.unwrap_or(self.cutoff),
        )?)
    }

    /// The engine's name for output.
    pub fn engine_name(&self) -> &'static str {
        switchyard::trajectory_metric::Engine::from(self.engine).name()
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

/// Where the output goes.
#[derive(Args, Debug, Clone)]
pub struct OutputArgs {
    /// Write to FILE instead of standard output; the file appears only when complete.
    #[arg(long, short = 'o', value_name = "FILE")]
    pub output: Option<PathBuf>,
}

impl OutputArgs {
    /// Renders into memory with `render`, then writes it all at once: to a temporary file beside
    /// the target that is renamed over it, or to standard output.
    pub fn emit(
        &self,
        render: impl FnOnce(&mut Vec<u8>) -> anyhow::Result<()>,
    ) -> anyhow::Result<()> {
        let mut buffer = Vec::new();
        render(&mut buffer)?;
        match &self.output {
            None => {
                let mut stdout = std::io::stdout().lock();
                match stdout.write_all(&buffer).and_then(|()| stdout.flush()) {
                    Ok(()) => Ok(()),
                    Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Ok(()),
                    Err(e) => Err(e).context("writing to standard output"),
                }
            }
            Some(path) => {
                let dir = match path.parent() {
                    Some(parent) if !parent.as_os_str().is_empty() => parent.to_path_buf(),
                    _ => PathBuf::from("."),
                };
                let mut file = tempfile::NamedTempFile::new_in(&dir)
                    .with_context(|| format!("{}: cannot create a file here", dir.display()))?;
                file.write_all(&buffer)
                    .with_context(|| format!("{}: write failed", path.display()))?;
                // A temporary file is private; give the result the permissions of the file it
                // replaces, or those of an ordinary new file.
                let permissions = match std::fs::metadata(path) {
                    Ok(existing) => existing.permissions(),
                    Err(_) => ordinary_permissions(file.as_file())?,
                };
                file.as_file()
                    .set_permissions(permissions)
                    .with_context(|| format!("{}: cannot set permissions", path.display()))?;
                file.persist(path)
                    .with_context(|| format!("{}: cannot write the file", path.display()))?;
                Ok(())
            }
        }
    }
}

#[cfg(unix)]
fn ordinary_permissions(file: &std::fs::File) -> anyhow::Result<std::fs::Permissions> {
    use std::os::unix::fs::PermissionsExt;
    let mut permissions = file.metadata()?.permissions();
    permissions.set_mode(0o644);
    Ok(permissions)
}

#[cfg(not(unix))]
fn ordinary_permissions(file: &std::fs::File) -> anyhow::Result<std::fs::Permissions> {
    Ok(file.metadata()?.permissions())
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
    match error.downcast_ref::<Error>() {
        Some(Error::Solver(_)) => 3,
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
}
