//! `seamlife diff`: what changed between two revisions (project files or results models).

use std::path::{Path, PathBuf};

use clap::Args;

use super::output::{print_data, print_err, print_out, print_text, write_json, Inputs};
use crate::catalogue::Library;
use crate::checker::diff::{self, DiffReport};
use crate::error::{Error, EXIT_FAIL, EXIT_PASS};
use crate::results::{Results, CAUTION_LINE};

#[derive(Args, Debug)]
pub struct DiffArgs {
    /// The old revision: a project file (YAML) or a results model (`.json`).
    pub old: PathBuf,
    /// The new revision: a project file (YAML) or a results model (`.json`).
    pub new: PathBuf,
    /// Write the diff model as JSON instead of the table.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Write one CSV row per change instead of the table.
    #[arg(long)]
    pub csv: bool,
    /// Write to this file instead of standard output (never over an input).
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

/// A `.json` file is a results model; anything else a project file.
pub fn is_results_file(p: &Path) -> bool {
    p.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("json"))
}

/// One revision's results: a results model read, or a project file assessed. The files
/// read are added to `inputs`.
pub fn load_side(
    path: &Path,
    library: &Library,
    inputs: &mut Inputs,
) -> Result<(Results, diff::DiffSide), Error> {
    if is_results_file(path) {
        let r = crate::checker::read_results(path)?;
        if let Some(sh) = &r.shard {
            return Err(Error::Input(
                crate::error::InputError::new(
                    crate::error::InputErrorKind::InvalidValue,
                    crate::error::Location::file(path),
                    format!(
                        "holds part {} of {} of the details only; a diff of a part would list the other details as removed or added",
                        sh.part, sh.parts
                    ),
                )
                .hint("merge the parts first: seamlife merge PART... -o RESULTS.json"),
            ));
        }
        inputs.add(path, "a results model being compared");
        let s = diff::side(&r, &path.display().to_string(), "results");
        Ok((r, s))
    } else {
        let run = crate::run_project_checked(path, library)?;
        super::print_notes(&run.notes);
        inputs.add(path, "a project file being compared");
        for p in &run.series_paths {
            inputs.add(p, "a series file of a project being compared");
        }
        for p in &run.table_paths {
            inputs.add(p, "a table of a project being compared");
        }
        let s = diff::side(&run.results, &path.display().to_string(), "project");
        Ok((run.results, s))
    }
}

pub(super) fn run(a: &DiffArgs, library: &Library) -> Result<i32, Error> {
    let mut inputs = Inputs::new();
    inputs.add(&a.old, "a file being compared");
    inputs.add(&a.new, "a file being compared");
    if let Some(out) = &a.output {
        // Refuse a bad output before the work.
        crate::files::write::check_target(out, &inputs)?;
    }
    let (old, old_side) = load_side(&a.old, library, &mut inputs)?;
    let (new, new_side) = load_side(&a.new, library, &mut inputs)?;
    let report = diff::diff(&old, &new, old_side, new_side);
    let bytes = if a.json {
        let mut buf = Vec::new();
        write_json(&mut buf, &report).map_err(|e| Error::Internal(format!("json: {e}")))?;
        buf
    } else if a.csv {
        csv_bytes(&report)?
    } else {
        format!("{}{CAUTION_LINE}\n", diff::render(&report)).into_bytes()
    };
    match &a.output {
        Some(out) => {
            super::output::write_output(out, &bytes, &inputs)?;
            print_err(&summary_line(&report));
        }
        None if a.json => {
            print_out(&bytes)?;
            print_err(&format!("{CAUTION_LINE}\n"));
        }
        None if a.csv => {
            print_data(&bytes)?;
            print_err(&summary_line(&report));
        }
        None => print_text(&String::from_utf8_lossy(&bytes))?,
    }
    Ok(exit_code(&report))
}

/// 1 when a status got worse or an added detail does not pass, else 0.
pub fn exit_code(r: &DiffReport) -> i32 {
    if r.no_worse() {
        EXIT_PASS
    } else {
        EXIT_FAIL
    }
}

fn summary_line(r: &DiffReport) -> String {
    format!(
        "{} added, {} removed, {} changed, {} unchanged; {}\n{CAUTION_LINE}\n",
        r.added.len(),
        r.removed.len(),
        r.changed.len(),
        r.unchanged,
        if r.worse.is_empty() {
            "no status got worse".to_string()
        } else {
            format!("status worse: {}", r.worse.join(", "))
        }
    )
}

fn csv_bytes(r: &DiffReport) -> Result<Vec<u8>, Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let err = |e: csv::Error| Error::Internal(format!("csv: {e}"));
    w.write_record(diff::CSV_HEADER).map_err(err)?;
    for row in diff::csv_rows(r) {
        w.write_record(&row).map_err(err)?;
    }
    w.into_inner()
        .map_err(|e| Error::Internal(format!("csv: {e}")))
}
