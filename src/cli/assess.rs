//! `seamlife assess`: results as a table, JSON or CSV.

use std::io::Write;
use std::path::PathBuf;

use clap::Args;

use super::exit_code_for;
use super::output::{csv_summary, table, write_atomic};
use crate::catalogue::Library;
use crate::error::Error;
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

pub(super) fn run(a: &AssessArgs, library: &Library) -> Result<i32, Error> {
    let results = crate::run_project(&a.file, library)?;
    let text = if a.json {
        let mut s = serde_json::to_string_pretty(&results)
            .map_err(|e| Error::Internal(format!("cannot serialise results: {e}")))?;
        s.push('\n');
        s
    } else if a.csv {
        csv_summary(&results)?
    } else {
        table(&results)
    };
    match &a.output {
        Some(path) => write_atomic(path, text.as_bytes())?,
        None => {
            let mut out = std::io::stdout().lock();
            let _ = out.write_all(text.as_bytes());
        }
    }
    if a.json || a.csv || a.output.is_some() {
        eprintln!("{CAUTION_LINE}");
    }
    Ok(exit_code_for(&results))
}
