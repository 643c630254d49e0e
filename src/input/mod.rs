//! Readers that turn files into [`TrajectorySet`](crate::trajectory::TrajectorySet)s.
//!
//! CSV is the one format so far ([`csv`]); [`grouped`] reads CSV files that hold several
//! sequences and runs, and [`manifest`] the lists of files a comparison runs on. A reader
//! checks everything the model needs (ids, integer steps, finite numbers, one row per object
//! and step) and names the file, line and column of the first problem it meets.

pub mod csv;
pub mod grouped;
pub mod manifest;

pub use self::csv::{
    read_classed_csv, read_classed_csv_path, read_csv, read_csv_path, write_csv, ClassedFile,
    CsvLayout, TrajectoryFile,
};
