//! The raw command-line options shared by several commands, as clap reads them: the inputs and
//! how to read them, the base distance, the trajectory metric's parameters and engine, and the
//! typed values behind them (`--delimiter`, `NAME=FILE`, sizes, budgets). Turning them into what
//! the library takes is [`super::config`]'s work.

use std::path::Path;
use std::str::FromStr;

use clap::{Args, ValueEnum};

use switchyard::distance::BoxLayout;
use switchyard::trajectory_metric::{Engine, ExactBudget};
use switchyard::Error;

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
    /// Name of a column giving each row's class (car, pedestrian ...): objects are matched
    /// only within their class, and results come per class and for all classes together. A
    /// track whose rows carry several classes is cut into one piece per class.
    #[arg(long, value_name = "NAME")]
    pub class_column: Option<String>,
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
    pub delimiter: Delimiter,
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

/// `--delimiter`: one ASCII character, or `tab` (also `\\t`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Delimiter(pub u8);

impl FromStr for Delimiter {
    type Err = Error;

    fn from_str(text: &str) -> Result<Self, Error> {
        match text {
            "tab" | "\\t" => Ok(Delimiter(b'\t')),
            text if text.len() == 1 && text.is_ascii() => Ok(Delimiter(text.as_bytes()[0])),
            text => Err(Error::Parameter(format!(
                "the delimiter must be one ASCII character or `tab`, got {text:?}"
            ))),
        }
    }
}

/// `--estimate NAME=FILE` of the commands with several trackers; a value without `=` is named
/// after the file's stem.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NamedFile {
    /// The tracker's name.
    pub name: String,
    /// Its file as given (`-` for standard input).
    pub file: String,
}

impl FromStr for NamedFile {
    type Err = Error;

    fn from_str(value: &str) -> Result<Self, Error> {
        match value.split_once('=') {
            Some((name, file)) => {
                let name = name.trim();
                if name.is_empty() || file.is_empty() {
                    return Err(Error::Parameter(format!(
                        "--estimate {value:?}: expected NAME=FILE"
                    )));
                }
                Ok(NamedFile {
                    name: name.to_string(),
                    file: file.to_string(),
                })
            }
            None => {
                let stem = Path::new(value)
                    .file_stem()
                    .map(|s| s.to_string_lossy().to_string())
                    .filter(|s| !s.is_empty() && value != "-");
                match stem {
                    Some(name) => Ok(NamedFile {
                        name,
                        file: value.to_string(),
                    }),
                    None => Err(Error::Parameter(format!(
                        "--estimate {value:?} needs a name: NAME=FILE"
                    ))),
                }
            }
        }
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
    #[command(flatten)]
    pub share: ShareArgs,
}

/// How the cost of an object left unassigned splits between missed and false objects: one
/// option for every command that scores.
#[derive(Args, Debug, Clone, Copy)]
pub struct ShareArgs {
    /// The share S of c^p that a missed object-step costs, strictly between 0 and 1; a false
    /// object-step costs the rest, (1 - S) c^p, and an assigned pair min(d, c)^p as before.
    /// Above 0.5 a missed object costs more than a false one. The best assignments do not
    /// change; the score moves by (S - 0.5) c^p (truth - estimate object-steps). Different
    /// missed and false costs were published by García-Fernández et al. (arXiv:2507.13706);
    /// this is our own construction of that capability, not checked against their definitions
    /// (specs/missed-share.md).
    #[arg(long, value_name = "S", default_value_t = 0.5)]
    pub missed_share: f64,
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

impl From<EngineKind> for Engine {
    fn from(kind: EngineKind) -> Self {
        match kind {
            EngineKind::Auto => Engine::default(),
            EngineKind::Microlp => Engine::Microlp,
            EngineKind::Highs => Engine::Highs,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
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

    #[test]
    fn tracker_names_come_from_the_value_or_the_file() {
        let named = |value: &str| value.parse::<NamedFile>().map(|n| (n.name, n.file));
        assert_eq!(
            named("fast=out/a=b.csv").unwrap(),
            ("fast".to_string(), "out/a=b.csv".to_string())
        );
        assert_eq!(
            named("out/slow.csv").unwrap(),
            ("slow".to_string(), "out/slow.csv".to_string())
        );
        assert!(named("=a.csv").is_err());
        assert!(named("-").is_err());
    }

    #[test]
    fn delimiters_are_one_ascii_character_or_tab() {
        assert_eq!("tab".parse::<Delimiter>().unwrap(), Delimiter(b'\t'));
        assert_eq!(";".parse::<Delimiter>().unwrap(), Delimiter(b';'));
        for bad in ["", "::", "é"] {
            assert!(bad.parse::<Delimiter>().is_err(), "{bad:?} was accepted");
        }
    }
}
