//! `seamlife verify`: confirm that a submitted results model follows from its inputs.

use std::path::PathBuf;

use clap::Args;

use super::output::{print_err, print_out, print_text, write_json};
use crate::catalogue::Library;
use crate::checker::verify::{self, VerifyReport, DEFAULT_RTOL};
use crate::error::{Error, InputError, InputErrorKind, Location, EXIT_FAIL, EXIT_PASS};
use crate::results::CAUTION_LINE;

#[derive(Args, Debug)]
pub struct VerifyArgs {
    /// Submitted results model (JSON from `assess --json`).
    pub results: PathBuf,
    /// Its project file [default: the model's project file name in the model's folder].
    pub project: Option<PathBuf>,
    /// Relative tolerance on numbers: |a - b| <= rtol · max(|a|, |b|).
    #[arg(long, default_value_t = DEFAULT_RTOL, value_name = "RTOL")]
    pub rtol: f64,
    /// Write the findings as JSON instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Value differences listed in the table (all are in --json).
    #[arg(long, default_value_t = 40, value_name = "N")]
    pub max_listed: usize,
}

fn bad_rtol(rtol: f64) -> Error {
    InputError::new(
        InputErrorKind::InvalidValue,
        Location::file(std::path::Path::new("<command line>")),
        format!("--rtol {rtol} is not a finite number >= 0"),
    )
    .hint("give a relative tolerance such as 1e-9")
    .into()
}

pub(super) fn run(a: &VerifyArgs, library: &Library) -> Result<i32, Error> {
    if !a.rtol.is_finite() || a.rtol < 0.0 {
        return Err(bad_rtol(a.rtol));
    }
    let submitted = crate::checker::read_results(&a.results)?;
    let project = a
        .project
        .clone()
        .unwrap_or_else(|| verify::project_path_for(&a.results, &submitted));
    let report = verify::verify(
        &submitted,
        &a.results.display().to_string(),
        &project,
        library,
        a.rtol,
    )?;
    emit(&report, a.json, a.max_listed)
}

/// Print the findings and give the exit code: 0 agree, 1 differences.
pub(super) fn emit(report: &VerifyReport, json: bool, max_listed: usize) -> Result<i32, Error> {
    if json {
        let mut buf = Vec::new();
        write_json(&mut buf, report).map_err(|e| Error::Internal(format!("json: {e}")))?;
        print_out(&buf)?;
        print_err(&format!("{CAUTION_LINE}\n"));
    } else {
        print_text(&format!(
            "{}{CAUTION_LINE}\n",
            verify::render(report, max_listed)
        ))?;
    }
    Ok(if report.agree { EXIT_PASS } else { EXIT_FAIL })
}
