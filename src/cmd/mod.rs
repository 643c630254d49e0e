//! The subcommands, one file each, and what they share: the raw options ([`options`]), the
//! configuration resolved from them and the inputs read once ([`config`]), where the output
//! goes ([`output`]) and the progress displays ([`progress`]).
//!
//! Exit codes: 0 success; 1 bad input or parameters (the message names file, line and column
//! where it applies); 2 a command line that does not parse; 3 an internal failure (the LP
//! solver failed, or a result did not pass its consistency checks); 4 the work would not fit the
//! memory budget (the message says why and what to do).

use std::process::ExitCode;

use clap::error::ErrorKind;
use clap::Parser;
use clap::Subcommand;

use switchyard::Error;

mod audit;
mod by_class;
mod compare;
mod compare_page;
mod config;
mod options;
mod output;
mod progress;
mod report;
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
    /// Compare several trackers over sequences and Monte Carlo runs: rankings, paired
    /// bootstrap intervals against the best, parameter sweeps, per-step summaries over runs.
    Compare(compare::CompareArgs),
    /// One self-contained HTML page to look at: errors over time, which track covered each
    /// true object, a top view of the paths, and a summary; several trackers side by side.
    Report(report::ReportArgs),
    /// Write a seeded synthetic ground truth and an imaginary tracker's output as CSV files.
    Synth(synth::SynthArgs),
}

/// Runs the command line and maps errors to exit codes.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(error) => return refused(&error),
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

/// The exit for a command line clap refused: a value of ours that does not parse (a typed
/// option value, like `--delimiter` or `NAME=FILE`) is a bad parameter, said and coded like one
/// found later; anything else is clap's to say (exit 2, or 0 for `--help` and `--version`).
fn refused(error: &clap::Error) -> ExitCode {
    use std::error::Error as _;
    let ours = error
        .source()
        .and_then(|source| source.downcast_ref::<Error>())
        .filter(|_| error.kind() == ErrorKind::ValueValidation);
    if let Some(ours) = ours {
        eprintln!("switchyard: error: {ours}");
        return ExitCode::from(1);
    }
    let _ = error.print();
    ExitCode::from(if error.use_stderr() { 2 } else { 0 })
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
