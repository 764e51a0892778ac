//! `seamlife assess`: results as a table, JSON or CSV.

use std::path::PathBuf;

use clap::Args;

use super::exit_code_for;
use super::output::{csv_summary, print_err, print_text, table, write_json};
use crate::catalogue::Library;
use crate::error::Error;
use crate::files::write::PendingFile;
use crate::results::CAUTION_LINE;

#[derive(Args, Debug)]
pub struct AssessArgs {
    /// Project file (YAML).
    pub file: PathBuf,
    /// Write the results model as JSON instead of the table.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Write one CSV row per detail instead of the table.
    #[arg(long)]
    pub csv: bool,
    /// Write to this file instead of standard output (written whole or not at all).
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

pub(super) fn run(
    a: &AssessArgs,
    library: &Library,
    jc: Option<&std::path::Path>,
) -> Result<i32, Error> {
    let run = crate::run_project_checked(&a.file, library)?;
    let inputs = super::run_inputs(&run, jc, None);
    if let Some(path) = &a.output {
        // Refuse a bad output before the work of formatting.
        crate::files::write::check_target(path, &inputs)?;
    }
    super::print_notes(&run.notes);
    let results = &run.results;
    if a.json {
        // Streamed: the JSON of a large project is never held whole in memory.
        match &a.output {
            Some(path) => {
                let mut f = PendingFile::new(path, &inputs, ".part")?;
                write_json(f.file(), results).map_err(|source| Error::Output {
                    path: path.clone(),
                    source,
                })?;
                f.commit()?;
            }
            None => write_json(std::io::stdout().lock(), results).map_err(Error::Stdout)?,
        }
    } else {
        let text = if a.csv {
            csv_summary(results)?
        } else {
            table(results)
        };
        match &a.output {
            Some(path) => crate::files::write::write_output(path, text.as_bytes(), &inputs)?,
            None if a.csv => super::output::print_data(text.as_bytes())?,
            None => print_text(&text)?,
        }
    }
    if a.json || a.csv || a.output.is_some() {
        print_err(&format!("{CAUTION_LINE}\n"));
    }
    Ok(exit_code_for(results))
}
