//! Writers that turn results into text for people, CSV and JSON for pipelines. Every writer
//! takes any `impl Write`, so tests compare bytes in memory. Number formats are fixed, so the
//! same input gives the same bytes.

pub mod audit;
pub mod classes;
pub mod compare;
pub mod html;
pub mod ospa2;
pub mod score;
pub mod steps;
pub mod switches;

use serde::Serialize;

use crate::trajectory::Step;

pub use crate::error::printable;

/// What was compared, shown at the top of every output.
#[derive(Clone, Debug, Serialize)]
pub struct InputInfo {
    /// The truth file as named by the user.
    pub truth: String,
    /// Number of true objects.
    pub truth_objects: usize,
    /// The estimate file as named by the user.
    pub estimate: String,
    /// Number of estimated tracks.
    pub estimate_tracks: usize,
    /// The base distance.
    pub distance: String,
    /// The state columns the distance reads, in state order.
    pub state_columns: Vec<String>,
    /// The distance's column weights (`--weights`), if any.
    pub weights: Option<Vec<f64>>,
    /// `--time-step`: the step size in the input's time units; with it, outputs give each
    /// step's time in those units (`input_time`) beside the step index.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_step: Option<f64>,
}

/// Something that happens at a step.
pub trait AtStep {
    /// The step.
    fn step(&self) -> Step;
}

impl AtStep for crate::assignment::switches::SwitchEvent {
    fn step(&self) -> Step {
        self.time
    }
}

impl AtStep for crate::assignment::switches::JumpEvent {
    fn step(&self) -> Step {
        self.time
    }
}

/// Events as JSON: each event's keys, then `input_time` (its step in the input's time units)
/// when a step size was given.
#[derive(Clone, Copy, Debug)]
pub struct TimedEvents<'a, T> {
    /// The events.
    pub events: &'a [T],
    /// `--time-step`, if given.
    pub time_step: Option<f64>,
}

impl<'a, T> TimedEvents<'a, T> {
    /// The events, with the step size if one was given.
    pub fn new(events: &'a [T], time_step: Option<f64>) -> Self {
        TimedEvents { events, time_step }
    }
}

impl<T: Serialize + AtStep> Serialize for TimedEvents<'_, T> {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        #[derive(Serialize)]
        struct Entry<'b, T> {
            #[serde(flatten)]
            event: &'b T,
            #[serde(skip_serializing_if = "Option::is_none")]
            input_time: Option<f64>,
        }
        serializer.collect_seq(self.events.iter().map(|event| Entry {
            event,
            input_time: self.time_step.map(|dt| input_time(event.step(), dt)),
        }))
    }
}

/// `step` x `dt`, rounded to the decimals of `dt`'s shortest text, so that the time reads as
/// the user wrote it (3 x 0.1 is 0.3, not 0.30000000000000004).
pub fn input_time(step: Step, dt: f64) -> f64 {
    let value = step as f64 * dt;
    // The decimals of dt's shortest text: those of its mantissa less its exponent.
    let text = format!("{dt:e}");
    let Some((mantissa, exponent)) = text.split_once('e') else {
        return value;
    };
    let digits = mantissa.split_once('.').map_or(0, |(_, f)| f.len()) as i64;
    let decimals = (digits - exponent.parse::<i64>().unwrap_or(0)).clamp(0, 340) as usize;
    if !value.is_finite() {
        return value;
    }
    format!("{value:.decimals$}").parse().unwrap_or(value)
}

/// Writes the opening lines of a trajectory-metric text output: the title with the parameters,
/// then the two inputs.
pub fn write_run_header<W: std::io::Write>(
    out: &mut W,
    title: &str,
    params: &crate::trajectory_metric::TrajectoryParams,
    inputs: &InputInfo,
) -> std::io::Result<()> {
    writeln!(
        out,
        "{title}   cut-off c = {}   order p = {}   switching penalty gamma = {}   distance: {}",
        param(params.cutoff),
        param(params.order),
        param(params.switch_penalty),
        inputs.distance
    )?;
    write_share_line(
        out,
        params.missed_share,
        params.missed_cost(),
        params.false_cost(),
    )?;
    write!(out, "{}", inputs.lines("truth     ", "estimate  "))
}

/// The line that tells a missed share other than 1/2 and the two costs it gives (nothing for
/// 1/2, so that standard outputs keep their bytes): shared by every text output with
/// parameters.
pub fn write_share_line<W: std::io::Write>(
    out: &mut W,
    share: f64,
    missed_cost: f64,
    false_cost: f64,
) -> std::io::Result<()> {
    if crate::trajectory_metric::is_even_share(&share) {
        return Ok(());
    }
    writeln!(
        out,
        "missed share S = {}: a missed object-step costs S c^p = {}, a false one (1 - S) c^p = {}",
        param(share),
        cost_param(missed_cost),
        cost_param(false_cost)
    )
}

/// A cost made from a parameter, for text: rounded to 12 significant digits first, so that
/// (1 - 0.8) x 2 reads 0.4 and not 0.3999999999999999.
pub fn cost_param(value: f64) -> String {
    let rounded: f64 = format!("{value:.11e}").parse().unwrap_or(value);
    param(rounded)
}

/// A parameter for text: plain decimals for ordinary magnitudes, scientific notation (`1e300`,
/// `2.5e-9`) beyond them, so a huge value is not a 300-digit line. The shortest text that
/// reads back exactly either way.
pub fn param(value: f64) -> String {
    let size = value.abs();
    if size != 0.0 && !(1e-6..1e16).contains(&size) {
        format!("{value:e}")
    } else {
        value.to_string()
    }
}

/// An object's id for text, followed by its class in brackets when it has one (in the lists
/// of all classes together, where one id may stand in several classes).
pub fn with_class(id: &str, class: Option<&str>) -> String {
    match class {
        Some(class) => format!("{id} [{class}]"),
        None => id.to_string(),
    }
}

/// "1 object", "2 objects": a count with its noun.
pub fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// Formats a count that may be fractional (object-steps or switches of a fractional LP
/// solution): whole numbers without decimals, others with three.
pub fn count(value: f64) -> String {
    if value.fract() == 0.0 {
        format!("{value:.0}")
    } else {
        fixed(value, 3)
    }
}

/// Formats a number for text tables: fixed decimals, no negative zero; scientific notation
/// with as many decimals from 1e16 on (a cut-off of 1e300 gives parts of that size).
pub fn fixed(value: f64, decimals: usize) -> String {
    if value.abs() >= 1e16 && value.is_finite() {
        return format!("{value:.decimals$e}");
    }
    let text = format!("{value:.decimals$}");
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.') {
        text[1..].to_string()
    } else {
        text
    }
}

/// Formats an optional part for text tables (`-` when absent).
pub fn fixed_or_dash(value: Option<f64>, decimals: usize) -> String {
    value.map_or_else(|| "-".to_string(), |v| fixed(v, decimals))
}

/// Formats an optional number for CSV (empty when absent); shortest text that reads back exactly.
pub fn csv_number(value: Option<f64>) -> String {
    value.map_or_else(String::new, |v| v.to_string())
}

/// Writes a table with right-aligned columns under a header line. Cells are shown through
/// [`printable`] (ids from the inputs may hold control characters) and padded by hand: the
/// standard formatter's width is limited to 65,535, and a cell may be longer than that.
pub fn write_table<W: std::io::Write>(
    out: &mut W,
    header: &[&str],
    rows: &[Vec<String>],
) -> std::io::Result<()> {
    let mut layout = TableLayout::new(header);
    for row in rows {
        layout.fit(row);
    }
    layout.write_row(out, header)?;
    for row in rows {
        layout.write_row(out, row)?;
    }
    Ok(())
}

/// The column widths of a table written row by row, for tables too long to hold: widened by
/// every row first, then each row written as [`write_table`] writes it.
#[derive(Clone, Debug)]
pub struct TableLayout {
    widths: Vec<usize>,
}

impl TableLayout {
    /// A layout as wide as the header (one column per header cell).
    pub fn new(header: &[&str]) -> Self {
        let mut layout = TableLayout {
            widths: vec![0; header.len()],
        };
        layout.fit(header);
        layout
    }

    /// Widens the columns to hold `row` as shown (cells past the header's are ignored).
    pub fn fit<S: AsRef<str>>(&mut self, row: &[S]) {
        for (width, cell) in self.widths.iter_mut().zip(row) {
            *width = (*width).max(printable(cell.as_ref()).chars().count());
        }
    }

    /// Writes one row (or the header), each cell right-aligned in its column.
    pub fn write_row<W: std::io::Write, S: AsRef<str>>(
        &self,
        out: &mut W,
        row: &[S],
    ) -> std::io::Result<()> {
        let mut line = String::new();
        for (index, (cell, width)) in row.iter().zip(&self.widths).enumerate() {
            if index > 0 {
                line.push_str("  ");
            }
            pad_left(&mut line, &printable(cell.as_ref()), *width);
        }
        writeln!(out, "{line}")
    }
}

/// Appends `text` right-aligned in `width` characters (no limit on the width).
pub fn pad_left(line: &mut String, text: &str, width: usize) {
    let missing = width.saturating_sub(text.chars().count());
    line.extend(std::iter::repeat_n(' ', missing));
    line.push_str(text);
}

/// How a trajectory GOSPA value relates to the exact (integral) metric: in the JSON of every
/// command built on the trajectory LP (keys `integral`, `lp_total`, `exact_total`, `exact`).
#[derive(Clone, Copy, Debug, Serialize)]
pub struct Exactness<'a> {
    /// True when the assignment reported is integral and proven optimal (its value is then the
    /// exact metric).
    pub integral: bool,
    /// Whether the LP value is proven (the score's certificate); not a key of its own.
    #[serde(skip)]
    pub proven: bool,
    /// d^p of the LP relaxation.
    pub lp_total: f64,
    /// d^p of the exact metric when `--exact` was given and the result is proven; else null.
    pub exact_total: Option<f64>,
    /// The certificate of `--exact` (null without it).
    pub exact: Option<&'a crate::trajectory_metric::ExactSummary>,
}

impl<'a> Exactness<'a> {
    /// The exactness of a score.
    pub fn new(score: &'a crate::trajectory_metric::TrajectoryScore) -> Self {
        Exactness {
            integral: score.integral,
            proven: score.certificate.proven,
            lp_total: score.lp_total,
            exact_total: score.exact_total,
            exact: score.exact.as_ref(),
        }
    }

    /// Text: one line saying whether the value is exact, two when an exact computation was
    /// stopped by its budget.
    pub fn write_text<W: std::io::Write>(&self, out: &mut W) -> std::io::Result<()> {
        let Some(exact) = self.exact else {
            return if !self.proven {
                writeln!(
                    out,
                    "d is the cost of the best integral assignment found: an upper bound of the exact trajectory GOSPA, within the bounds above."
                )
            } else if self.integral {
                writeln!(
                    out,
                    "The LP optimum is integral: d is the exact trajectory GOSPA."
                )
            } else {
                writeln!(
                    out,
                    "The LP optimum is fractional: d is a lower bound of the exact trajectory GOSPA; --exact computes the exact value."
                )
            };
        };
        let groups = |n: usize| {
            if n == 1 {
                "1 group".to_string()
            } else {
                format!("{n} groups")
            }
        };
        let programs = |n: usize| {
            if n == 1 {
                "an integer program"
            } else {
                "integer programs"
            }
        };
        if exact.components == 0 {
            return writeln!(
                out,
                "The LP optimum is integral: d is the exact trajectory GOSPA (no integer program needed)."
            );
        }
        if exact.proven {
            return writeln!(
                out,
                "Exact: LP d^p = {}; {} with a fractional LP optimum solved as {} ({} branch-and-bound nodes): d is the exact trajectory GOSPA, proven (d^p = {}).",
                fixed(self.lp_total, 4),
                groups(exact.components),
                programs(exact.components),
                exact.nodes,
                fixed(exact.upper, 4)
            );
        }
        writeln!(
            out,
            "NOT PROVEN: the budget ({}) stopped {} of {} integer programs; the exact d^p lies between {} and {} (LP d^p = {}).",
            exact.budget,
            exact.unproven_components,
            exact.components,
            fixed(exact.lower, 4),
            fixed(exact.upper, 4),
            fixed(self.lp_total, 4)
        )?;
        writeln!(
            out,
            "d, its parts and the switches are those of the best integral solution found: an upper bound, not the exact value."
        )
    }
}

/// One line for people on how a score was proven: the bounds, and how many groups each method
/// solved. Said the same way in the text output and the report.
pub fn certificate_line(certificate: &crate::trajectory_metric::Certificate) -> String {
    let c = certificate;
    let mut methods = Vec::new();
    let groups = |n: usize| {
        if n == 1 {
            "1 group".to_string()
        } else {
            format!("{n} groups")
        }
    };
    if c.closed_form > 0 {
        methods.push(format!("{} alone", groups(c.closed_form)));
    }
    if c.lagrangian > 0 {
        methods.push(format!(
            "{} by Lagrangian bounds (at most {} iterations)",
            groups(c.lagrangian),
            c.iterations
        ));
    }
    if c.simplex > 0 {
        methods.push(format!("{} by the simplex engine", groups(c.simplex)));
    }
    if c.bounded > 0 {
        methods.push(format!("{} not proven", groups(c.bounded)));
    }
    let methods = if methods.is_empty() {
        "no groups".to_string()
    } else {
        methods.join(", ")
    };
    if c.proven {
        format!(
            "Proven optimal: lower bound = upper bound = {} ({methods}).",
            fixed(c.upper, 4)
        )
    } else {
        format!(
            "NOT PROVEN: the LP optimum lies between {} and {} (relative gap {:.1e}); {methods}; \
             d, its parts and the switches are those of the upper bound.",
            fixed(c.lower, 4),
            fixed(c.upper, 4),
            c.gap
        )
    }
}

impl InputInfo {
    /// The two lines naming the inputs with their counts, after the given labels; file names
    /// shown through [`printable`].
    /// A third line gives the state columns the distance reads (and its weights), labelled
    /// as wide as the truth's label.
    pub fn lines(&self, truth_label: &str, estimate_label: &str) -> String {
        let columns = self
            .state_columns
            .iter()
            .map(|c| printable(c))
            .collect::<Vec<_>>()
            .join(", ");
        let weights = match &self.weights {
            Some(w) => format!(
                "   weights {}",
                w.iter().map(|v| param(*v)).collect::<Vec<_>>().join(", ")
            ),
            None => String::new(),
        };
        format!(
            "{truth_label}{} ({})\n{estimate_label}{} ({})\n{:<width$}{columns}{weights}\n",
            printable(&self.truth),
            plural(self.truth_objects, "object", "objects"),
            printable(&self.estimate),
            plural(self.estimate_tracks, "track", "tracks"),
            "states",
            width = truth_label.len()
        )
    }

    /// The same description with the step size the times were read with.
    pub fn with_time_step(self, time_step: Option<f64>) -> Self {
        InputInfo { time_step, ..self }
    }

    /// The time of `step` in the input's units (step x step size), when a step size was
    /// given; rounded to the step size's decimals so that 3 x 0.1 reads 0.3.
    pub fn input_time(&self, step: Step) -> Option<f64> {
        self.time_step.map(|dt| input_time(step, dt))
    }

    /// Describes two input files and the distance used.
    pub fn new(
        truth: &crate::input::TrajectoryFile,
        estimate: &crate::input::TrajectoryFile,
        distance: &crate::distance::Distance,
    ) -> Self {
        InputInfo {
            truth: truth.source.clone(),
            truth_objects: truth.set.len(),
            estimate: estimate.source.clone(),
            estimate_tracks: estimate.set.len(),
            distance: distance.name().to_string(),
            time_step: None,
            state_columns: truth.state_columns.clone(),
            weights: match distance {
                crate::distance::Distance::Euclidean { weights }
                | crate::distance::Distance::Manhattan { weights }
                | crate::distance::Distance::Chebyshev { weights } => weights.clone(),
                _ => None,
            },
        }
    }
}

#[cfg(test)]
mod time_tests {
    use super::input_time;

    // Decimal arithmetic by hand: 3 x 0.1 = 0.3, 7 x 0.04 = 0.28, -2 x 0.5 = -1,
    // 1001 x 0.001 = 1.001, 4 x 2 = 8, 3 x 1e-20 = 3e-20, 3 x 0.25 = 0.75.
    #[test]
    fn times_read_as_written() {
        assert_eq!(input_time(3, 0.1), 0.3);
        assert_eq!(input_time(7, 0.04), 0.28);
        assert_eq!(input_time(-2, 0.5), -1.0);
        assert_eq!(input_time(1001, 0.001), 1.001);
        assert_eq!(input_time(4, 2.0), 8.0);
        assert_eq!(input_time(3, 1e-20), 3e-20);
        assert_eq!(input_time(3, 0.25), 0.75);
    }
}
