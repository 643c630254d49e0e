//! Writers that turn results into text for people, CSV and JSON for pipelines. Every writer
//! takes any `impl Write`, so tests compare bytes in memory. Number formats are fixed, so the
//! same input gives the same bytes.

pub mod audit;
pub mod score;
pub mod steps;
pub mod switches;

use serde::Serialize;

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
}

/// Formats a number for text tables: fixed decimals, no negative zero.
pub fn fixed(value: f64, decimals: usize) -> String {
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

/// Writes a table with right-aligned columns under a header line.
pub fn write_table<W: std::io::Write>(
    out: &mut W,
    header: &[&str],
    rows: &[Vec<String>],
) -> std::io::Result<()> {
    let mut widths: Vec<usize> = header.iter().map(|h| h.chars().count()).collect();
    for row in rows {
        for (width, cell) in widths.iter_mut().zip(row) {
            *width = (*width).max(cell.chars().count());
        }
    }
    let line = |cells: Vec<&str>| -> String {
        let parts: Vec<String> = cells
            .iter()
            .zip(&widths)
            .map(|(cell, width)| format!("{cell:>width$}"))
            .collect();
        parts.join("  ")
    };
    writeln!(out, "{}", line(header.to_vec()))?;
    for row in rows {
        writeln!(out, "{}", line(row.iter().map(String::as_str).collect()))?;
    }
    Ok(())
}

impl InputInfo {
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
        }
    }
}
