//! `switchyard compare`: several trackers over sequences and Monte Carlo runs, ranked, each set
//! against the best with a paired bootstrap interval; lists of parameters make a sweep.

use std::path::Path;

use clap::{Args, ValueEnum};
use rayon::prelude::*;

use switchyard::compare::{
    job_count, run as run_comparison, run_by_class, settings_grid, AggregateOptions,
    BootstrapOptions, ClassDatasets, CompareOptions, Dataset, RankBy, ResampleBy,
};
use switchyard::distance::Distance;
use switchyard::input::grouped::{read_grouped_classed_csv_path, GroupColumns, GroupedFile};
use switchyard::input::manifest::read_manifest_path;
use switchyard::report::classes::mixed_note;
use switchyard::report::compare::{self as report, CompareInputs, Sections, TrackerSource};
use switchyard::trajectory_metric::{Engine, SolveOptions};

use switchyard::Error;

use super::compare_page::PageArgs;
use super::config::check_trackers;
use super::options::{parse_size, CsvOptions, DistanceOptions, EngineKind, NamedFile, ShareArgs};
use super::output::{Format, OutputArgs};
use super::progress::evaluations_bar;

/// What the bootstrap resamples, on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum ResampleKind {
    /// Sequences when there are two or more, runs otherwise.
    Auto,
    /// Whole sequences with all their runs.
    Sequence,
    /// Each (sequence, run) on its own.
    Run,
}

/// What ranks the trackers, on the command line.
#[derive(ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum RankKind {
    /// The mean over the cases of the trajectory metric d.
    Metric,
    /// The mean over the cases of d^p / steps: sequences of different lengths weigh alike.
    PerStep,
}

/// Options of `compare`.
#[derive(Args, Debug)]
pub struct CompareArgs {
    /// Ground-truth CSV file; rows may carry sequence and run columns.
    #[arg(
        long,
        value_name = "FILE",
        required_unless_present = "manifest",
        conflicts_with = "manifest"
    )]
    truth: Option<String>,
    /// One tracker's output: NAME=FILE, or FILE alone (named after the file without its
    /// extension). Repeat for each tracker.
    #[arg(long, value_name = "NAME=FILE", requires = "truth")]
    estimate: Vec<NamedFile>,
    /// A manifest listing, per tracker, sequence and run, the truth and estimate files: CSV
    /// with the columns tracker, sequence, run (optional), truth, estimate, or a JSON array of
    /// such objects when the name ends in .json. Paths are relative to the manifest's folder.
    #[arg(long, value_name = "FILE")]
    manifest: Option<String>,
    /// The column that names each row's sequence, used when a file has it.
    #[arg(long, value_name = "NAME", default_value = "sequence")]
    sequence_column: String,
    /// The column that names each row's Monte Carlo run, used when a file has it.
    #[arg(long, value_name = "NAME", default_value = "run")]
    run_column: String,
    /// Name of a column giving each row's class (car, pedestrian ...): objects are matched
    /// only within their class; the ranking is by the total over the classes, and each class
    /// is also ranked on its own (over the cases where it occurs). A track whose rows carry
    /// several classes is cut into one piece per class.
    #[arg(long, value_name = "NAME")]
    class_column: Option<String>,
    #[command(flatten)]
    csv: CsvOptions,
    #[command(flatten)]
    distance: DistanceOptions,
    /// Cut-off c > 0; a comma-separated list evaluates each (a sweep).
    #[arg(
        long,
        short = 'c',
        value_name = "C,...",
        value_delimiter = ',',
        required = true
    )]
    cutoff: Vec<f64>,
    /// Order p >= 1; a comma-separated list evaluates each.
    #[arg(
        long,
        short = 'p',
        value_name = "P,...",
        value_delimiter = ',',
        default_value = "1"
    )]
    order: Vec<f64>,
    /// Switching penalty gamma >= 0; a comma-separated list evaluates each [default: each
    /// cut-off].
    #[arg(long, short = 'g', value_name = "G,...", value_delimiter = ',')]
    switch_penalty: Option<Vec<f64>>,
    /// LP engine: auto proves each group by Lagrangian bounds, with a simplex fallback (see
    /// `score --help`); highs only in builds with the `highs` feature.
    #[arg(long, value_enum, default_value_t = EngineKind::Auto)]
    engine: EngineKind,
    /// Memory each case's solve may use for its models, like `4G` (see `score --help`).
    #[arg(long, value_name = "SIZE", default_value = "4G", value_parser = parse_size)]
    memory_budget: u64,
    #[command(flatten)]
    share: ShareArgs,
    /// Also rank the trackers within each sequence.
    #[arg(long)]
    per_sequence: bool,
    /// Also summarise over the runs of each sequence: per-step GOSPA (mean, RMS and parts)
    /// and the trajectory metric (mean and RMS); with --time-step each step also shows its
    /// time in the input's units.
    #[arg(long)]
    monte_carlo: bool,
    /// Bootstrap resamples.
    #[arg(long, value_name = "N", default_value_t = 10_000)]
    bootstrap_resamples: usize,
    /// Seed of the bootstrap's random numbers.
    #[arg(long, value_name = "S", default_value_t = 0)]
    seed: u64,
    /// Confidence level of the bootstrap intervals, in (0, 1).
    #[arg(long, value_name = "LEVEL", default_value_t = 0.95)]
    confidence: f64,
    /// What the bootstrap resamples.
    #[arg(long, value_enum, default_value_t = ResampleKind::Auto)]
    resample: ResampleKind,
    /// What ranks the trackers and what the bootstrap compares: the mean of d, or the mean of
    /// d^p / steps of each case (long and short sequences then weigh alike).
    #[arg(long, value_enum, default_value_t = RankKind::Metric)]
    rank_by: RankKind,
    /// Also give OSPA(2) (Beard, Vo, Vo, IEEE TSP 2020): the OSPA metric on trajectories with a
    /// time-averaged distance, normalised to [0, c], over each case's whole window at each
    /// setting's cut-off and order; its mean over the cases beside each ranking, and each
    /// case's value with --per-case (specs/ospa2.md). The ranking stays by d.
    #[arg(long)]
    ospa2: bool,
    /// Also list every (setting, tracker, sequence, run) score: d, d^p, its parts, the
    /// counts, the steps and d^p / steps.
    #[arg(long)]
    per_case: bool,
    /// Output format; csv holds one table: the ranking, or the per-sequence rankings with
    /// --per-sequence, or the per-step summaries with --monte-carlo, or the case scores with
    /// --per-case.
    #[arg(long, short = 'f', value_enum, default_value_t = Format::Text)]
    format: Format,
    #[command(flatten)]
    output: OutputArgs,
    #[command(flatten)]
    page: PageArgs,
}

/// The data of a comparison: whole, or one dataset per class.
enum Data {
    Whole(Dataset),
    ByClass(Vec<(String, Dataset)>),
}

impl Data {
    /// A dataset (every class's has the same trackers and cases).
    fn first(&self) -> &Dataset {
        match self {
            Data::Whole(data) => data,
            Data::ByClass(classes) => &classes[0].1,
        }
    }

    /// The class names, with classes.
    fn classes(&self) -> Option<Vec<String>> {
        match self {
            Data::Whole(_) => None,
            Data::ByClass(classes) => Some(classes.iter().map(|(name, _)| name.clone()).collect()),
        }
    }
}

/// The data by class, after a note on standard error for each file with trajectories cut into
/// pieces by class.
fn by_class(datasets: ClassDatasets) -> Data {
    for (file, count) in &datasets.mixed {
        let note = mixed_note(file, *count, "trajectory carries", "trajectories carry");
        if let Some(note) = note {
            eprintln!("switchyard: note: {note}");
        }
    }
    Data::ByClass(datasets.classes)
}

/// Reads the data by group columns or through a manifest, each state checked for `distance`;
/// returns it with the input description (without the distance and engine).
fn read_data(args: &CompareArgs, distance: &Distance) -> anyhow::Result<(Data, CompareInputs)> {
    let (data, mut inputs) = read_sources(args, distance)?;
    let first = data.first();
    inputs.sequences = first.sequences().len();
    inputs.cases = first.cases().len();
    inputs.classes = data.classes();
    Ok((data, inputs))
}

/// [`read_data`] without the counts.
fn read_sources(args: &CompareArgs, distance: &Distance) -> anyhow::Result<(Data, CompareInputs)> {
    let layout = args.csv.layout(distance);
    let class_column = args.class_column.as_deref();
    if let Some(manifest_path) = &args.manifest {
        let manifest = read_manifest_path(manifest_path)?;
        let named = manifest
            .entries
            .iter()
            .flat_map(|e| [&e.truth, &e.estimate]);
        let named: Vec<&Path> = named
            .map(|p| p.as_path())
            .chain([Path::new(manifest_path)])
            .collect();
        args.output.check(&named)?;
        args.page.check(&args.output, &named)?;
        let data = match class_column {
            Some(column) => by_class(Dataset::from_manifest_by_class(&manifest, &layout, column)?),
            None => Data::Whole(Dataset::from_manifest(&manifest, &layout)?),
        };
        let trackers = data
            .first()
            .trackers()
            .iter()
            .map(|t| TrackerSource {
                name: t.name.clone(),
                estimate: None,
            })
            .collect();
        let inputs = CompareInputs {
            truth: None,
            manifest: Some(manifest_path.clone()),
            trackers,
            sequences: 0,
            cases: 0,
            distance: String::new(),
            engine: String::new(),
            time_step: args.csv.time_step,
            classes: None,
        };
        return Ok((data, inputs));
    }
    let truth = args
        .truth
        .clone()
        .expect("clap requires --truth without --manifest");
    if args.estimate.is_empty() {
        return Err(Error::Parameter("give at least one --estimate NAME=FILE".into()).into());
    }
    check_trackers(&truth, &args.estimate)?;
    let columns = GroupColumns {
        sequence: args.sequence_column.clone(),
        run: args.run_column.clone(),
    };
    let paths: Vec<&str> = std::iter::once(truth.as_str())
        .chain(args.estimate.iter().map(|named| named.file.as_str()))
        .collect();
    args.output.check(&paths)?;
    args.page.check(&args.output, &paths)?;
    let mut files: Vec<GroupedFile> = paths
        .par_iter()
        .map(|path| read_grouped_classed_csv_path(path, &layout, &columns, class_column))
        .collect::<Vec<_>>()
        .into_iter()
        .collect::<Result<_, _>>()?;
    let estimates: Vec<(String, GroupedFile)> = args
        .estimate
        .iter()
        .map(|named| named.name.clone())
        .zip(files.drain(1..))
        .collect();
    let truth_file = files.pop().expect("the truth was read");
    let data = match class_column {
        Some(_) => by_class(Dataset::from_columns_by_class(truth_file, estimates)?),
        None => Data::Whole(Dataset::from_columns(truth_file, estimates)?),
    };
    let inputs = CompareInputs {
        truth: Some(truth),
        manifest: None,
        trackers: args
            .estimate
            .iter()
            .map(|named| TrackerSource {
                name: named.name.clone(),
                estimate: Some(named.file.clone()),
            })
            .collect(),
        sequences: 0,
        cases: 0,
        distance: String::new(),
        engine: String::new(),
        time_step: args.csv.time_step,
        classes: None,
    };
    Ok((data, inputs))
}

pub fn run(args: &CompareArgs) -> anyhow::Result<()> {
    let tables = [args.per_sequence, args.monte_carlo, args.per_case];
    if args.format == Format::Csv && tables.iter().filter(|&&t| t).count() > 1 {
        return Err(Error::Parameter(
            "csv holds one table: give one of --per-sequence, --monte-carlo and --per-case".into(),
        )
        .into());
    }
    if args.ospa2 && args.class_column.is_some() {
        return Err(Error::Parameter(
            "--ospa2 is not given with --class-column: OSPA(2) is normalised, so classes do not \
             add up"
                .into(),
        )
        .into());
    }
    let settings = settings_grid(&args.cutoff, &args.order, args.switch_penalty.as_deref())?
        .into_iter()
        .map(|s| s.with_missed_share(args.share.missed_share))
        .collect::<Result<Vec<_>, Error>>()?;
    let bootstrap = BootstrapOptions {
        resamples: args.bootstrap_resamples,
        seed: args.seed,
        confidence: args.confidence,
    };
    bootstrap.validate()?;
    let distance = args.distance.build(&args.csv)?;
    for s in &settings {
        distance.check_cutoff(s.cutoff)?;
    }
    let (data, mut inputs) = read_data(args, &distance)?;
    for s in &settings {
        distance.validate(data.first().dim(), s.cutoff)?;
    }
    let engine = Engine::from(args.engine);
    inputs.distance = distance.name().to_string();
    inputs.engine = engine.name().to_string();
    let options = CompareOptions {
        settings,
        solve: SolveOptions {
            engine,
            memory_budget: args.memory_budget,
            ..SolveOptions::default()
        },
        aggregate: AggregateOptions {
            bootstrap,
            resample_by: match args.resample {
                ResampleKind::Auto => ResampleBy::Auto,
                ResampleKind::Sequence => ResampleBy::Sequence,
                ResampleKind::Run => ResampleBy::Run,
            },
            rank_by: match args.rank_by {
                RankKind::Metric => RankBy::Metric,
                RankKind::PerStep => RankBy::PerStep,
            },
        },
        monte_carlo: args.monte_carlo,
        ospa2: args.ospa2,
    };
    let result = match &data {
        Data::Whole(data) => {
            let bar = evaluations_bar(job_count(data, &options));
            let result = run_comparison(data, &distance, &options, &|| bar.inc(1));
            bar.finish_and_clear();
            result
        }
        Data::ByClass(classes) => {
            let jobs = classes.iter().map(|(_, d)| job_count(d, &options)).sum();
            let bar = evaluations_bar(jobs);
            let result = run_by_class(classes, &distance, &options, &|| bar.inc(1));
            bar.finish_and_clear();
            result
        }
    };
    let comparison = result?;
    let unproven: usize = comparison
        .settings
        .iter()
        .flat_map(|setting| &setting.trackers)
        .map(|tracker| tracker.summary.unproven_cases)
        .sum();
    if unproven > 0 {
        eprintln!(
            "switchyard: note: {unproven} of the cases scored {} not proven optimal: their d is \
             the cost of the best assignment found, an upper bound (`switchyard score` on a case \
             shows its bounds and why; --memory-budget may prove it)",
            if unproven == 1 { "is" } else { "are" }
        );
    }
    let sections = Sections {
        per_sequence: args.per_sequence,
        monte_carlo: args.monte_carlo,
        per_case: args.per_case,
    };
    args.output.emit(|out| {
        match args.format {
            Format::Text => report::write_text(out, &comparison, &inputs, sections)?,
            Format::Json => report::write_json(out, &comparison, &inputs, sections)?,
            Format::Csv if args.per_sequence => report::write_sequences_csv(out, &comparison)?,
            Format::Csv if args.monte_carlo => {
                report::write_steps_csv_timed(out, &comparison, inputs.time_step)?
            }
            Format::Csv if args.per_case => report::write_cases_csv(out, &comparison)?,
            Format::Csv => report::write_csv(out, &comparison)?,
        }
        Ok(())
    })?;
    args.page.write(&comparison, &inputs, args.csv.time_step)
}
