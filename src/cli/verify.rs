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
    /// Submitted results model (JSON from `assess --json`), or a PDF package from
    /// `seamlife report`, whose attached results model and inputs are used.
    pub results: PathBuf,
    /// Its project file [default: the model's project file name in the model's folder;
    /// for a PDF, the project file attached to it].
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
    if crate::checker::package::looks_like_pdf(&a.results) {
        return run_pdf(a, library);
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

/// Verify a PDF package from its attachments (or its attached results model against
/// the project file given).
fn run_pdf(a: &VerifyArgs, library: &Library) -> Result<i32, Error> {
    let pkg = crate::checker::package::extract(&a.results)?;
    let label = format!(
        "{}#{}",
        a.results.display(),
        crate::report::RESULTS_ATTACHMENT
    );
    let submitted = crate::checker::parse_results(&pkg.results_text, std::path::Path::new(&label))?;
    let (project, shown) = match &a.project {
        Some(p) => (p.clone(), p.display().to_string()),
        None => {
            if !pkg.missing.is_empty() {
                return Err(InputError::new(
                    InputErrorKind::MissingField,
                    Location::file(&a.results),
                    format!(
                        "the package names {} input file(s) by hash only (over {} MiB, or not beside the results model it was made from): {}",
                        pkg.missing.len(),
                        crate::report::MAX_ATTACHED_BYTES >> 20,
                        pkg.missing
                            .iter()
                            .map(|m| crate::files::shown(m))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                )
                .hint("give the project file, with those files beside it as the project names them: seamlife verify PACKAGE.pdf PROJECT.yaml")
                .into());
            }
            (
                pkg.project.clone(),
                format!(
                    "{}#{}{}",
                    a.results.display(),
                    crate::report::PROJECT_PREFIX,
                    submitted.input.file_name
                ),
            )
        }
    };
    let mut report = verify::verify(&submitted, &label, &project, library, a.rtol)
        .map_err(|e| relabel(e, pkg.dir(), &a.results))?;
    report.project_file = shown;
    drop(pkg);
    emit(&report, a.json, a.max_listed)
}

/// Errors in the extracted files name the PDF and the attachment, not the temporary
/// folder.
fn relabel(e: Error, dir: &std::path::Path, pdf: &std::path::Path) -> Error {
    let fix = |mut ie: InputError| {
        if let Ok(rel) = ie.location.file.strip_prefix(dir) {
            ie.location.file = std::path::PathBuf::from(format!(
                "{}#{}{}",
                pdf.display(),
                crate::report::PROJECT_PREFIX,
                rel.display()
            ));
        }
        ie
    };
    match e {
        Error::Input(ie) => Error::Input(fix(ie)),
        Error::Inputs(v) => Error::Inputs(v.into_iter().map(fix).collect()),
        other => other,
    }
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
