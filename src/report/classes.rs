//! Outputs with object classes (`--class-column`): a section per class and one for all classes
//! in text, a `classes` object beside the usual keys in JSON, a `class` column in CSV. Each
//! command renders its usual output once per class and once for all classes; the functions
//! here put those renderings together. Schemas: `specs/formats.md`.

use std::io::Write;

use super::{count, fixed, plural, printable, write_table, InputInfo};
use crate::classes::ClassScene;
use crate::trajectory_metric::TrajectoryScore;

/// The note for a file of which `count` trajectories carry more than one class (each is then
/// scored as one piece per class), or `None` when none does; `one` and `many` name them
/// (`"track carries"`, `"tracks carry"`). The file's name is made printable.
pub fn mixed_note(source: &str, count: usize, one: &str, many: &str) -> Option<String> {
    (count > 0).then(|| {
        format!(
            "{}: {} more than one class; each is scored as one piece per class",
            printable(source),
            plural(count, one, many)
        )
    })
}

/// The inputs as one class sees them: the files, with that class's numbers of truths and
/// tracks (pieces of a track cut by class count in each of their classes).
pub fn class_info(info: &InputInfo, scene: &ClassScene) -> InputInfo {
    InputInfo {
        truth_objects: scene.truth.len(),
        estimate_tracks: scene.estimate.len(),
        ..info.clone()
    }
}

/// Text: the heading of a section, underlined.
pub fn write_heading<W: Write>(out: &mut W, title: &str) -> std::io::Result<()> {
    let title = printable(title);
    writeln!(out, "{title}")?;
    writeln!(out, "{}", "=".repeat(title.chars().count()))
}

/// Text: the heading of one class's section.
pub fn write_class_heading<W: Write>(out: &mut W, class: &str) -> std::io::Result<()> {
    write_heading(out, &format!("Class {class}"))
}

/// Text: the heading of the section for all classes together.
pub fn write_overall_heading<W: Write>(out: &mut W, classes: usize) -> std::io::Result<()> {
    write_heading(
        out,
        &format!("All classes ({})", plural(classes, "class", "classes")),
    )
}

/// Text: trajectory GOSPA^p of each class, its parts and its share of the sum, then the sum.
pub fn write_class_table<W: Write>(
    out: &mut W,
    classes: &[(&ClassScene, &TrajectoryScore)],
    overall: &TrajectoryScore,
) -> std::io::Result<()> {
    let share = |total: f64| {
        if overall.total > 0.0 {
            fixed(100.0 * total / overall.total, 1)
        } else {
            fixed(0.0, 1)
        }
    };
    let row = |class: &str, truths: usize, tracks: usize, score: &TrajectoryScore| {
        vec![
            class.to_string(),
            truths.to_string(),
            tracks.to_string(),
            fixed(score.total, 4),
            fixed(score.parts.localization, 4),
            fixed(score.parts.missed, 4),
            fixed(score.parts.false_, 4),
            fixed(score.parts.switching, 4),
            count(score.parts.switch_count),
            share(score.total),
        ]
    };
    let mut rows: Vec<Vec<String>> = classes
        .iter()
        .map(|(scene, score)| row(&scene.class, scene.truth.len(), scene.estimate.len(), score))
        .collect();
    let truths = classes.iter().map(|(s, _)| s.truth.len()).sum();
    let tracks = classes.iter().map(|(s, _)| s.estimate.len()).sum();
    rows.push(row("all", truths, tracks, overall));
    write_table(
        out,
        &[
            "class",
            "truths",
            "tracks",
            "d^p",
            "localisation",
            "missed",
            "false",
            "switching",
            "switches",
            "% of d^p",
        ],
        &rows,
    )
}

/// JSON: the document for all classes (`overall`, a pretty-printed object as the command's
/// JSON writer gives it) with one more key, `classes`, an object holding each class's
/// document under the class name, in the order given.
///
/// # Errors
/// A failed write; an `overall` that is not a JSON object.
pub fn write_json_with_classes<W: Write>(
    out: &mut W,
    overall: &[u8],
    classes: &[(String, Vec<u8>)],
) -> std::io::Result<()> {
    let text = std::str::from_utf8(overall).map_err(std::io::Error::other)?;
    let body = text
        .trim_end()
        .strip_suffix('}')
        .ok_or_else(|| std::io::Error::other("the document is not a JSON object"))?
        .trim_end();
    out.write_all(body.as_bytes())?;
    // An object with no key prints as `{}`: no comma after it.
    let separator = if body.ends_with('{') { "" } else { "," };
    write!(out, "{separator}\n  \"classes\": {{")?;
    for (k, (class, document)) in classes.iter().enumerate() {
        let document = std::str::from_utf8(document).map_err(std::io::Error::other)?;
        // A JSON string holds no raw newline: indenting after each one indents lines only.
        let indented = document.trim_end().replace('\n', "\n    ");
        let comma = if k + 1 < classes.len() { "," } else { "" };
        write!(
            out,
            "\n    {}: {indented}{comma}",
            serde_json::to_string(class)?
        )?;
    }
    if !classes.is_empty() {
        write!(out, "\n  ")?;
    }
    writeln!(out, "}}\n}}")
}

/// CSV: tables of one layout (each with its header row, as the command's CSV writer gives
/// them) as one table with a first column `class`: the first header once, then every row of
/// each table under its class (an empty class for the rows of all classes together).
///
/// # Errors
/// A failed write; a table that is not valid CSV.
pub fn write_csv_with_class<W: Write>(
    out: &mut W,
    tables: &[(&str, Vec<u8>)],
) -> std::io::Result<()> {
    let mut writer = csv::Writer::from_writer(&mut *out);
    let mut header_written = false;
    for (class, table) in tables {
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .from_reader(table.as_slice());
        let mut first = true;
        for record in reader.byte_records() {
            let record = record.map_err(std::io::Error::other)?;
            if std::mem::take(&mut first) {
                if header_written {
                    continue;
                }
                header_written = true;
                let mut header = csv::ByteRecord::new();
                header.push_field(b"class");
                header.extend(record.iter());
                writer.write_byte_record(&header)?;
                continue;
            }
            let mut row = csv::ByteRecord::new();
            row.push_field(class.as_bytes());
            row.extend(record.iter());
            writer.write_byte_record(&row)?;
        }
    }
    writer.flush()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_documents_nest_under_their_class() {
        let overall = b"{\n  \"total\": 3.0\n}\n";
        let classes = vec![
            ("car".to_string(), b"{\n  \"total\": 1.0\n}\n".to_vec()),
            (
                "van \"x\"".to_string(),
                b"{\n  \"total\": 2.0\n}\n".to_vec(),
            ),
        ];
        let mut out = Vec::new();
        write_json_with_classes(&mut out, overall, &classes).unwrap();
        let value: serde_json::Value = serde_json::from_slice(&out).unwrap();
        assert_eq!(value["total"], 3.0);
        assert_eq!(value["classes"]["car"]["total"], 1.0);
        assert_eq!(value["classes"]["van \"x\""]["total"], 2.0);
        let mut out = Vec::new();
        write_json_with_classes(&mut out, b"{}\n", &[]).unwrap();
        assert_eq!(String::from_utf8(out).unwrap(), "{\n  \"classes\": {}\n}\n");
    }

    #[test]
    fn csv_tables_gain_a_class_column() {
        let tables = [
            ("car", b"a,b\n1,\"x\ny\"\n".to_vec()),
            ("van", b"a,b\n2,z\n".to_vec()),
            ("", b"a,b\n3,w\n".to_vec()),
        ];
        let mut out = Vec::new();
        write_csv_with_class(&mut out, &tables).unwrap();
        assert_eq!(
            String::from_utf8(out).unwrap(),
            "class,a,b\ncar,1,\"x\ny\"\nvan,2,z\n,3,w\n"
        );
    }
}
