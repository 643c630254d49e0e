//! The data a comparison runs on: cases (sequence, run), each with its truth, and every
//! tracker's estimate for every case; built from grouped CSV files or from a manifest.
//!
//! Cases are kept sorted by sequence, then run, each compared in natural order (integers by
//! value and before other names, other names by their bytes), so that the same data gives the
//! same cases in the same order however it was laid out in files.

use std::cmp::Ordering;
use std::collections::{BTreeSet, HashMap};
use std::path::PathBuf;

use rayon::prelude::*;

use crate::classes::PointClasses;
use crate::error::{Error, Location, Result};
use crate::input::grouped::{Group, GroupedFile};
use crate::input::manifest::Manifest;
use crate::input::{read_classed_csv_path, read_csv_path, CsvLayout, TrajectoryFile};
use crate::trajectory::TrajectorySet;

/// Which sequence and which run a case is. Empty strings stand for "not given".
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct CaseKey {
    /// The sequence.
    pub sequence: String,
    /// The Monte Carlo run.
    pub run: String,
}

impl CaseKey {
    /// A key.
    pub fn new(sequence: impl Into<String>, run: impl Into<String>) -> Self {
        CaseKey {
            sequence: sequence.into(),
            run: run.into(),
        }
    }
}

/// Natural order of names: integers by value (then by text, so `01` and `1` differ) before
/// other names, which compare by their bytes.
pub fn natural_order(a: &str, b: &str) -> Ordering {
    match (a.parse::<i64>(), b.parse::<i64>()) {
        (Ok(x), Ok(y)) => x.cmp(&y).then_with(|| a.cmp(b)),
        (Ok(_), Err(_)) => Ordering::Less,
        (Err(_), Ok(_)) => Ordering::Greater,
        (Err(_), Err(_)) => a.cmp(b),
    }
}

impl Ord for CaseKey {
    fn cmp(&self, other: &Self) -> Ordering {
        natural_order(&self.sequence, &other.sequence)
            .then_with(|| natural_order(&self.run, &other.run))
    }
}

impl PartialOrd for CaseKey {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

/// One case: a (sequence, run) and the index of its truth in [`Dataset::truths`].
#[derive(Clone, Debug, PartialEq)]
pub struct Case {
    /// The sequence and run.
    pub key: CaseKey,
    /// Index of the truth set; runs of a sequence may share one.
    pub truth: usize,
}

/// A tracker and its estimate for every case.
#[derive(Clone, Debug, PartialEq)]
pub struct TrackerData {
    /// The tracker's name.
    pub name: String,
    /// One estimate per case, in the order of [`Dataset::cases`].
    pub estimates: Vec<TrajectorySet>,
}

/// One dataset per class (in byte order of the names, all with the same cases), and the files
/// with trajectories whose rows carry more than one class (each cut into one piece per class).
#[derive(Clone, Debug, PartialEq)]
pub struct ClassDatasets {
    /// Each class and its dataset.
    pub classes: Vec<(String, Dataset)>,
    /// Each file (as named, in the order read) with such trajectories, and how many it has.
    pub mixed: Vec<(String, usize)>,
}

/// Cases sorted by key, their truths, and the trackers' estimates.
#[derive(Clone, Debug, PartialEq)]
pub struct Dataset {
    truths: Vec<TrajectorySet>,
    cases: Vec<Case>,
    trackers: Vec<TrackerData>,
}

impl Dataset {
    /// Builds a dataset and sorts its cases by key (estimates follow their cases).
    ///
    /// # Errors
    /// No case, no tracker, two cases with one key, two trackers with one name, a tracker
    /// without an estimate for every case, a truth index out of range, sets of different
    /// dimensions.
    pub fn new(
        truths: Vec<TrajectorySet>,
        cases: Vec<Case>,
        trackers: Vec<TrackerData>,
    ) -> Result<Self> {
        if cases.is_empty() {
            return Err(Error::Mismatch("there is no case to evaluate".into()));
        }
        if trackers.is_empty() {
            return Err(Error::Mismatch("there is no tracker to evaluate".into()));
        }
        let dim = truths
            .first()
            .map(TrajectorySet::dim)
            .ok_or_else(|| Error::Mismatch("there is no truth".into()))?;
        if let Some(bad) = truths.iter().find(|t| t.dim() != dim) {
            return Err(Error::Mismatch(format!(
                "the truths have states of {dim} and of {} values",
                bad.dim()
            )));
        }
        if let Some(case) = cases.iter().find(|c| c.truth >= truths.len()) {
            return Err(Error::Mismatch(format!(
                "{} refers to truth {} of {}",
                describe(&case.key),
                case.truth,
                truths.len()
            )));
        }
        let mut order: Vec<usize> = (0..cases.len()).collect();
        order.sort_by(|&a, &b| cases[a].key.cmp(&cases[b].key));
        if let Some(pair) = order
            .windows(2)
            .find(|w| cases[w[0]].key == cases[w[1]].key)
        {
            return Err(Error::Mismatch(format!(
                "{} is given twice",
                describe(&cases[pair[0]].key)
            )));
        }
        let mut names = std::collections::HashSet::new();
        let mut sorted_trackers = Vec::with_capacity(trackers.len());
        for tracker in trackers {
            if !names.insert(tracker.name.clone()) {
                return Err(Error::Mismatch(format!(
                    "two trackers are named {:?}",
                    tracker.name
                )));
            }
            if tracker.estimates.len() != cases.len() {
                return Err(Error::Mismatch(format!(
                    "tracker {:?} has {} estimates for {} cases",
                    tracker.name,
                    tracker.estimates.len(),
                    cases.len()
                )));
            }
            if let Some(bad) = tracker.estimates.iter().find(|e| e.dim() != dim) {
                return Err(Error::Mismatch(format!(
                    "tracker {:?} has states of {} values, the truth of {dim}",
                    tracker.name,
                    bad.dim()
                )));
            }
            let mut estimates: Vec<Option<TrajectorySet>> =
                tracker.estimates.into_iter().map(Some).collect();
            let estimates = order
                .iter()
                .map(|&i| estimates[i].take().expect("each case once"))
                .collect();
            sorted_trackers.push(TrackerData {
                name: tracker.name,
                estimates,
            });
        }
        let cases = order.iter().map(|&i| cases[i].clone()).collect();
        Ok(Dataset {
            truths,
            cases,
            trackers: sorted_trackers,
        })
    }

    /// The truth sets.
    pub fn truths(&self) -> &[TrajectorySet] {
        &self.truths
    }

    /// The cases, sorted by key.
    pub fn cases(&self) -> &[Case] {
        &self.cases
    }

    /// The trackers, in the order given.
    pub fn trackers(&self) -> &[TrackerData] {
        &self.trackers
    }

    /// The state dimension.
    pub fn dim(&self) -> usize {
        self.truths[0].dim()
    }

    /// The truth of case `case`.
    pub fn truth_of(&self, case: usize) -> &TrajectorySet {
        &self.truths[self.cases[case].truth]
    }

    /// The sequences, each with the range of its cases in [`Dataset::cases`].
    pub fn sequences(&self) -> Vec<(String, std::ops::Range<usize>)> {
        sequences(self.cases.iter().map(|case| &case.key))
    }

    /// The total number of (object, step) points over every truth and estimate, each case
    /// counted once per tracker (a measure of the work).
    pub fn object_steps(&self) -> usize {
        let truth: usize = (0..self.cases.len())
            .map(|c| self.truth_of(c).object_steps())
            .sum();
        let estimates: usize = self
            .trackers
            .iter()
            .flat_map(|t| t.estimates.iter())
            .map(TrajectorySet::object_steps)
            .sum();
        truth * self.trackers.len() + estimates
    }

    /// Builds a dataset from a truth file and one estimate file per tracker, grouped by the
    /// sequence and run columns.
    ///
    /// Cases: the truth's (sequence, run) groups when the truth has a run column; otherwise,
    /// when the estimates have one, each truth sequence with every run the estimates give for
    /// it (the runs share the sequence's truth); otherwise the truth's sequences. A case for
    /// which an estimate file has no row gets an empty estimate (the tracker reported nothing).
    ///
    /// # Errors
    /// Group columns present in one file and absent from another where they are needed, an
    /// estimate group whose sequence (or run) the truth does not have (naming the file and the
    /// line of its first row), different state dimensions, no case.
    pub fn from_columns(truth: GroupedFile, estimates: Vec<(String, GroupedFile)>) -> Result<Self> {
        if truth.groups.is_empty() {
            return Err(Error::input(
                Location::file(&truth.source),
                "the truth has no rows: there is nothing to evaluate",
            ));
        }
        let estimate_runs = estimates.iter().filter(|(_, f)| f.has_run).count();
        if estimate_runs != 0 && estimate_runs != estimates.len() {
            let (with, _) = estimates.iter().find(|(_, f)| f.has_run).expect("one has");
            let (without, _) = estimates
                .iter()
                .find(|(_, f)| !f.has_run)
                .expect("one lacks");
            return Err(Error::Mismatch(format!(
                "the estimate of {with:?} has a run column and that of {without:?} does not; \
                 either all estimates or none need one"
            )));
        }
        for (_, file) in &estimates {
            check_dimensions(&truth, file)?;
            if file.has_sequence != truth.has_sequence {
                let (has, lacks) = if truth.has_sequence {
                    (&truth.source, &file.source)
                } else {
                    (&file.source, &truth.source)
                };
                return Err(Error::Mismatch(format!(
                    "{has} has a sequence column and {lacks} does not; the truth and every \
                     estimate need one, or none"
                )));
            }
            if truth.has_run && !file.has_run {
                return Err(Error::Mismatch(format!(
                    "the truth {} has a run column and the estimate {} does not: each estimate \
                     row must name its run",
                    truth.source, file.source
                )));
            }
        }
        // Truth per sequence (or per case when the truth has runs).
        let mut truths = Vec::with_capacity(truth.groups.len());
        let mut truth_index: HashMap<CaseKey, usize> = HashMap::new();
        for group in truth.groups {
            truth_index.insert(CaseKey::new(&group.sequence, &group.run), truths.len());
            truths.push(group.set);
        }
        let shared_runs = !truth.has_run && estimate_runs > 0;
        let mut cases: Vec<Case> = Vec::new();
        if shared_runs {
            let mut seen = std::collections::HashSet::new();
            for (_, file) in &estimates {
                for group in &file.groups {
                    let key = CaseKey::new(&group.sequence, &group.run);
                    let truth_key = CaseKey::new(&group.sequence, "");
                    let Some(&index) = truth_index.get(&truth_key) else {
                        return Err(unknown_group(file, group, &truth.source));
                    };
                    if seen.insert(key.clone()) {
                        cases.push(Case { key, truth: index });
                    }
                }
            }
            let mut sequences: Vec<(&CaseKey, usize)> =
                truth_index.iter().map(|(k, &v)| (k, v)).collect();
            sequences.sort_by_key(|(_, v)| *v);
            for (key, _) in sequences {
                if !cases.iter().any(|c| c.key.sequence == key.sequence) {
                    return Err(Error::Mismatch(format!(
                        "{} of the truth has no run in any estimate: with a run column in the \
                         estimates only, the runs of a sequence are those the estimates give",
                        describe(key)
                    )));
                }
            }
        } else {
            let mut keys: Vec<(CaseKey, usize)> =
                truth_index.iter().map(|(k, &v)| (k.clone(), v)).collect();
            keys.sort_by_key(|(_, v)| *v);
            cases = keys
                .into_iter()
                .map(|(key, truth)| Case { key, truth })
                .collect();
        }
        let position: HashMap<CaseKey, usize> = cases
            .iter()
            .enumerate()
            .map(|(i, c)| (c.key.clone(), i))
            .collect();
        let dim = truths[0].dim();
        let mut trackers = Vec::with_capacity(estimates.len());
        for (name, file) in estimates {
            let mut sets: Vec<TrajectorySet> = vec![TrajectorySet::empty(dim); cases.len()];
            for group in &file.groups {
                let key = CaseKey::new(&group.sequence, &group.run);
                let Some(&index) = position.get(&key) else {
                    return Err(unknown_group(&file, group, "the truth"));
                };
                sets[index] = group.set.clone();
            }
            trackers.push(TrackerData {
                name,
                estimates: sets,
            });
        }
        Dataset::new(truths, cases, trackers)
    }

    /// [`Dataset::from_columns`] for files read with classes: one dataset per class found in
    /// any file (in byte order of the names), each holding every case with the truth's and the
    /// estimates' pieces of that class ([`PointClasses::split`]); a case where a file has no
    /// point of the class gets an empty set there. Every class has the same cases.
    ///
    /// # Errors
    /// As [`Dataset::from_columns`]; a group read without classes.
    pub fn from_columns_by_class(
        truth: GroupedFile,
        estimates: Vec<(String, GroupedFile)>,
    ) -> Result<ClassDatasets> {
        let mixed = std::iter::once(&truth)
            .chain(estimates.iter().map(|(_, file)| file))
            .map(|file| {
                let count = file.groups.iter().filter_map(|g| g.classes.as_ref());
                (file.source.clone(), count.map(PointClasses::mixed).sum())
            })
            .filter(|&(_, count)| count > 0)
            .collect();
        let mut truth_pieces = class_pieces(&truth)?;
        let mut estimate_pieces = estimates
            .iter()
            .map(|(_, file)| class_pieces(file))
            .collect::<Result<Vec<_>>>()?;
        let names: BTreeSet<String> = truth_pieces
            .iter()
            .chain(estimate_pieces.iter().flatten())
            .flat_map(|pieces| pieces.keys().cloned())
            .collect();
        if names.is_empty() {
            // No file has a row: the dataset without classes says what is wrong.
            Dataset::from_columns(truth, estimates)?;
            return Err(Error::Mismatch("there is no class to evaluate".into()));
        }
        let mut datasets = Vec::with_capacity(names.len());
        for name in &names {
            let truth = of_class(&truth, &mut truth_pieces, name);
            let estimates = estimates
                .iter()
                .zip(&mut estimate_pieces)
                .map(|((tracker, file), pieces)| (tracker.clone(), of_class(file, pieces, name)))
                .collect();
            datasets.push((name.clone(), Dataset::from_columns(truth, estimates)?));
        }
        Ok(ClassDatasets {
            classes: datasets,
            mixed,
        })
    }

    /// Reads every file a manifest names (in parallel) and builds the dataset.
    ///
    /// # Errors
    /// A file that cannot be read; an entry given twice; a case whose entries name different
    /// truth files; a tracker without an entry for every case; files of different state
    /// dimensions. Each names the manifest's line or entry.
    pub fn from_manifest(manifest: &Manifest, layout: &CsvLayout) -> Result<Self> {
        let mut datasets = Self::read_manifest(manifest, layout, None)?.classes;
        Ok(datasets.pop().expect("one dataset without classes").1)
    }

    /// [`Dataset::from_manifest`] with every file read with the class column `class_column`:
    /// one dataset per class, as [`Dataset::from_columns_by_class`] makes them.
    ///
    /// # Errors
    /// As [`Dataset::from_manifest`], and the class errors of reading each file.
    pub fn from_manifest_by_class(
        manifest: &Manifest,
        layout: &CsvLayout,
        class_column: &str,
    ) -> Result<ClassDatasets> {
        Self::read_manifest(manifest, layout, Some(class_column))
    }

    /// The datasets of a manifest: one (named "") without classes, else one per class.
    fn read_manifest(
        manifest: &Manifest,
        layout: &CsvLayout,
        class_column: Option<&str>,
    ) -> Result<ClassDatasets> {
        if manifest.entries.is_empty() {
            return Err(Error::input(
                Location::file(&manifest.source),
                "the manifest lists no files",
            ));
        }
        // Check the structure before reading anything.
        let mut case_truth: HashMap<CaseKey, (PathBuf, usize)> = HashMap::new();
        let mut tracker_names: Vec<String> = Vec::new();
        let mut seen: HashMap<(String, CaseKey), usize> = HashMap::new();
        let mut case_order: Vec<CaseKey> = Vec::new();
        for (index, entry) in manifest.entries.iter().enumerate() {
            let key = CaseKey::new(&entry.sequence, &entry.run);
            match case_truth.get(&key) {
                Some((path, first)) if *path != entry.truth => {
                    return Err(entry.error(format!(
                        "{} has the truth {} here but {} in {}",
                        describe(&key),
                        entry.truth.display(),
                        path.display(),
                        place(&manifest.entries[*first])
                    )));
                }
                Some(_) => {}
                None => {
                    case_truth.insert(key.clone(), (entry.truth.clone(), index));
                    case_order.push(key.clone());
                }
            }
            if let Some(&first) = seen.get(&(entry.tracker.clone(), key.clone())) {
                return Err(entry.error(format!(
                    "tracker {:?} has {} twice (also in {})",
                    entry.tracker,
                    describe(&key),
                    place(&manifest.entries[first])
                )));
            }
            seen.insert((entry.tracker.clone(), key), index);
            if !tracker_names.contains(&entry.tracker) {
                tracker_names.push(entry.tracker.clone());
            }
        }
        for name in &tracker_names {
            for key in &case_order {
                if !seen.contains_key(&(name.clone(), key.clone())) {
                    let (_, first) = &case_truth[key];
                    return Err(Error::input(
                        Location::file(&manifest.source),
                        format!(
                            "tracker {name:?} has no entry for {} ({} lists it)",
                            describe(key),
                            place(&manifest.entries[*first])
                        ),
                    ));
                }
            }
        }
        // Read each distinct file once, in parallel; the first error in path order wins.
        let mut paths: Vec<PathBuf> = manifest
            .entries
            .iter()
            .flat_map(|e| [e.truth.clone(), e.estimate.clone()])
            .collect();
        paths.sort();
        paths.dedup();
        let files: Vec<(TrajectoryFile, Option<PointClasses>)> = paths
            .par_iter()
            .map(|path| {
                let path_text = path.to_string_lossy();
                match class_column {
                    Some(column) => read_classed_csv_path(&path_text, layout, column)
                        .map(|classed| (classed.file, Some(classed.classes))),
                    None => read_csv_path(&path_text, layout).map(|file| (file, None)),
                }
                .map_err(|error| listed_file_error(manifest, path, error))
            })
            .collect::<Vec<Result<_>>>()
            .into_iter()
            .collect::<Result<_>>()?;
        let file_of: HashMap<&PathBuf, &TrajectoryFile> = paths
            .iter()
            .zip(files.iter().map(|(file, _)| file))
            .collect();
        let first = file_of[&manifest.entries[0].truth];
        for (file, _) in &files {
            first.check_comparable(file)?;
        }
        let mut truth_paths: Vec<&PathBuf> = case_order.iter().map(|k| &case_truth[k].0).collect();
        truth_paths.sort();
        truth_paths.dedup();
        let cases: Vec<Case> = case_order
            .iter()
            .map(|key| Case {
                key: key.clone(),
                truth: truth_paths
                    .binary_search(&&case_truth[key].0)
                    .expect("every truth path is listed"),
            })
            .collect();
        // The dataset whose sets are `set_of` each file.
        let build = |set_of: &dyn Fn(&PathBuf) -> TrajectorySet| {
            let truths: Vec<TrajectorySet> = truth_paths.iter().map(|p| set_of(p)).collect();
            let trackers = tracker_names
                .iter()
                .map(|name| TrackerData {
                    name: name.clone(),
                    estimates: case_order
                        .iter()
                        .map(|key| {
                            let entry = &manifest.entries[seen[&(name.clone(), key.clone())]];
                            set_of(&entry.estimate)
                        })
                        .collect(),
                })
                .collect();
            Dataset::new(truths, cases.clone(), trackers)
        };
        if class_column.is_none() {
            return Ok(ClassDatasets {
                classes: vec![(String::new(), build(&|p| file_of[p].set.clone())?)],
                mixed: Vec::new(),
            });
        }
        let dim = first.set.dim();
        let mut pieces: HashMap<&PathBuf, HashMap<String, TrajectorySet>> = HashMap::new();
        for (path, (file, classes)) in paths.iter().zip(&files) {
            let classes = classes.as_ref().expect("read with classes");
            pieces.insert(path, classes.split(&file.set)?.into_iter().collect());
        }
        let names: BTreeSet<&String> = pieces.values().flat_map(|p| p.keys()).collect();
        if names.is_empty() {
            return Err(Error::input(
                Location::file(&manifest.source),
                "no file the manifest lists has a row: there is no class to evaluate",
            ));
        }
        let empty = TrajectorySet::empty(dim);
        let classes = names
            .into_iter()
            .map(|name| {
                let set_of = |path: &PathBuf| pieces[path].get(name).unwrap_or(&empty).clone();
                Ok((name.clone(), build(&set_of)?))
            })
            .collect::<Result<_>>()?;
        let mixed = files
            .iter()
            .filter_map(|(file, classes)| {
                let count = classes.as_ref().map_or(0, PointClasses::mixed);
                (count > 0).then(|| (file.source.clone(), count))
            })
            .collect();
        Ok(ClassDatasets { classes, mixed })
    }
}

/// Each group's pieces by class.
///
/// # Errors
/// A group read without classes, or classes that do not fit its set.
fn class_pieces(file: &GroupedFile) -> Result<Vec<HashMap<String, TrajectorySet>>> {
    file.groups
        .iter()
        .map(|group| {
            let classes = group.classes.as_ref().ok_or_else(|| {
                Error::Mismatch(format!("{} was read without classes", file.source))
            })?;
            Ok(classes.split(&group.set)?.into_iter().collect())
        })
        .collect()
}

/// `file` with each group's set replaced by its piece of class `name` (taken from `pieces`, the
/// groups' pieces by class), or an empty set when the group has none.
fn of_class(
    file: &GroupedFile,
    pieces: &mut [HashMap<String, TrajectorySet>],
    name: &str,
) -> GroupedFile {
    let groups = file
        .groups
        .iter()
        .zip(pieces)
        .map(|(group, pieces)| Group {
            sequence: group.sequence.clone(),
            run: group.run.clone(),
            first_line: group.first_line,
            set: pieces
                .remove(name)
                .unwrap_or_else(|| TrajectorySet::empty(group.set.dim())),
            classes: None,
        })
        .collect();
    GroupedFile {
        source: file.source.clone(),
        state_columns: file.state_columns.clone(),
        has_sequence: file.has_sequence,
        has_run: file.has_run,
        groups,
    }
}

/// The sequences of sorted case keys, each with the range of its cases: consecutive keys with
/// one sequence name.
pub fn sequences<'a>(
    keys: impl IntoIterator<Item = &'a CaseKey>,
) -> Vec<(String, std::ops::Range<usize>)> {
    let mut result: Vec<(String, std::ops::Range<usize>)> = Vec::new();
    for (index, key) in keys.into_iter().enumerate() {
        match result.last_mut() {
            Some((sequence, range)) if *sequence == key.sequence => range.end = index + 1,
            _ => result.push((key.sequence.clone(), index..index + 1)),
        }
    }
    result
}

/// "sequence S, run R" for messages.
pub fn describe(key: &CaseKey) -> String {
    match (key.sequence.is_empty(), key.run.is_empty()) {
        (true, true) => "the only case".to_string(),
        (false, true) => format!("sequence {:?}", key.sequence),
        (true, false) => format!("run {:?}", key.run),
        (false, false) => format!("sequence {:?} run {:?}", key.sequence, key.run),
    }
}

fn place(entry: &crate::input::manifest::ManifestEntry) -> String {
    match (entry.location.line, entry.numbered) {
        (Some(line), false) => format!("line {line}"),
        (Some(line), true) => format!("entry {} (line {line})", entry.entry),
        (None, _) => format!("entry {}", entry.entry),
    }
}

/// A file of a manifest that could not be read: the error names the manifest line (and the
/// key) that lists it, then what went wrong in the file.
fn listed_file_error(manifest: &Manifest, path: &PathBuf, error: Error) -> Error {
    let Some((entry, key)) = manifest.entries.iter().find_map(|e| {
        if &e.truth == path {
            Some((e, "truth"))
        } else if &e.estimate == path {
            Some((e, "estimate"))
        } else {
            None
        }
    }) else {
        return error;
    };
    entry.error(format!("the {key} file: {error}"))
}

fn unknown_group(file: &GroupedFile, group: &Group, truth: &str) -> Error {
    let key = CaseKey::new(&group.sequence, &group.run);
    Error::input(
        Location::line(&file.source, group.first_line),
        format!("{} is not in {truth}", describe(&key)),
    )
}

fn check_dimensions(truth: &GroupedFile, file: &GroupedFile) -> Result<()> {
    if truth.state_columns.len() != file.state_columns.len() {
        return Err(Error::Mismatch(format!(
            "{} has {} state columns ({}) but {} has {} ({}); both files need the same state dimensions",
            truth.source,
            truth.state_columns.len(),
            truth.state_columns.join(","),
            file.source,
            file.state_columns.len(),
            file.state_columns.join(","),
        )));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn natural_order_puts_numbers_first_by_value() {
        let mut names = vec!["b", "10", "2", "a", "02", "-1"];
        names.sort_by(|a, b| natural_order(a, b));
        assert_eq!(names, ["-1", "02", "2", "10", "a", "b"]);
    }

    #[test]
    fn cases_are_sorted_and_estimates_follow() {
        let set = |n: usize| {
            let trajectories = (0..n)
                .map(|i| {
                    crate::trajectory::Trajectory::new(format!("o{i}"), 1, vec![(0, vec![0.0])])
                        .unwrap()
                })
                .collect();
            TrajectorySet::new(1, trajectories).unwrap()
        };
        let cases = vec![
            Case {
                key: CaseKey::new("s", "10"),
                truth: 0,
            },
            Case {
                key: CaseKey::new("s", "9"),
                truth: 0,
            },
        ];
        let tracker = TrackerData {
            name: "A".into(),
            estimates: vec![set(10), set(9)],
        };
        let data = Dataset::new(vec![set(1)], cases, vec![tracker]).unwrap();
        assert_eq!(data.cases()[0].key.run, "9");
        assert_eq!(data.trackers()[0].estimates[0].len(), 9);
        assert_eq!(data.sequences(), vec![("s".to_string(), 0..2)]);
    }
}
