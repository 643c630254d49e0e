//! The output of a command with classes, put together the same way for every command: text
//! with a section per class and one for all classes, JSON with a `classes` object beside the
//! usual keys, CSV with a `class` column (`specs/formats.md`). Each command says how it renders
//! one class, or all classes together, in each format.

use std::io::Write;

use switchyard::classes::ClassEvaluation;
use switchyard::evaluate::Evaluation;
use switchyard::report::classes::{
    write_class_heading, write_class_table, write_csv_with_class, write_json_with_classes,
    write_overall_heading,
};

use super::output::{Format, OutputArgs};

/// Which part of the results to render: one class (its index), or all classes together.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Part {
    /// The class at this index.
    Class(usize),
    /// All classes together.
    All,
}

/// A command's rendering of one part in one format.
pub type Render<'a> = dyn Fn(Format, &mut dyn Write, Part) -> anyhow::Result<()> + 'a;

/// Writes the output of a command with classes: `render` gives each part; in text,
/// `after_all` adds what follows the section for all classes (a table of the classes). In CSV
/// the part for all classes comes last with an empty class, when `csv_all` says it has rows of
/// its own (a sum); without, the classes' rows are the whole (a list of events or objects).
pub fn emit(
    output: &OutputArgs,
    format: Format,
    classes: &[ClassEvaluation],
    csv_all: bool,
    render: &Render,
    after_all: &dyn Fn(&mut dyn Write) -> anyhow::Result<()>,
) -> anyhow::Result<()> {
    output.emit(|out| {
        match format {
            Format::Text => {
                for (k, class) in classes.iter().enumerate() {
                    write_class_heading(out, &class.scene.class)?;
                    render(format, out, Part::Class(k))?;
                    writeln!(out)?;
                }
                write_overall_heading(out, classes.len())?;
                render(format, out, Part::All)?;
                after_all(out)?;
            }
            Format::Json => {
                let mut documents = Vec::with_capacity(classes.len());
                for (k, class) in classes.iter().enumerate() {
                    let mut document = Vec::new();
                    render(format, &mut document, Part::Class(k))?;
                    documents.push((class.scene.class.clone(), document));
                }
                let mut document = Vec::new();
                render(format, &mut document, Part::All)?;
                write_json_with_classes(out, &document, &documents)?;
            }
            Format::Csv => {
                let mut tables = Vec::with_capacity(classes.len() + 1);
                for (k, class) in classes.iter().enumerate() {
                    let mut table = Vec::new();
                    render(format, &mut table, Part::Class(k))?;
                    tables.push((class.scene.class.as_str(), table));
                }
                if csv_all || classes.is_empty() {
                    let mut table = Vec::new();
                    render(format, &mut table, Part::All)?;
                    tables.push(("", table));
                }
                write_csv_with_class(out, &tables)?;
            }
        }
        Ok(())
    })
}

/// Text: after the section for all classes, a blank line and the table of each class's
/// trajectory GOSPA^p and its parts.
pub fn class_table(
    mut out: &mut dyn Write,
    classes: &[ClassEvaluation],
    overall: &Evaluation,
) -> anyhow::Result<()> {
    let scores = classes
        .iter()
        .map(|c| c.evaluation.score.as_ref().map(|s| (&c.scene, s)))
        .collect::<Option<Vec<_>>>();
    if let (Some(rows), Some(overall)) = (scores, &overall.score) {
        writeln!(out)?;
        write_class_table(&mut out, &rows, overall)?;
    }
    Ok(())
}
