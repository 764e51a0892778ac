//! `seamlife report`: the PDF calculation package.

use std::path::{Path, PathBuf};

use clap::Args;

use super::exit_code_for;
use super::output::print_text;
use crate::catalogue::Library;
use crate::error::Error;
use crate::results::CAUTION_LINE;

#[derive(Args, Debug)]
pub struct ReportArgs {
    /// Project file (YAML), or a results model (`.json`, from `assess --json` or `merge`).
    pub file: PathBuf,
    /// Output PDF [default: <reference>-rev<revision>-fatigue.pdf].
    #[arg(short, long, value_name = "OUT.pdf")]
    pub output: Option<PathBuf>,
    /// Folder of templates replacing the built-in ones by file name (a firm's title block).
    #[arg(long, value_name = "DIR")]
    pub templates: Option<PathBuf>,
    /// Keep the generated Typst source and plots in <OUT>-typst/ beside the PDF.
    #[arg(long)]
    pub keep_source: bool,
    /// Details with a full sheet: all, failing, above:U, top:N or ids:A,B,... [default: all
    /// up to 200 details, else top:100]. Every detail is listed in the summary table.
    #[arg(long, value_name = "RULE", value_parser = parse_sheets)]
    pub sheets: Option<crate::report::sheets::SheetSelection>,
    /// An earlier revision (project file or results model): adds a "changes since
    /// revision X" section and marks changed values in the summary and on the sheets.
    #[arg(long, value_name = "OLD")]
    pub previous: Option<PathBuf>,
    /// Write PDF/A-2b.
    #[arg(long)]
    pub pdf_a: bool,
    /// The typst program [default: `typst` on PATH].
    #[arg(long, env = "SEAMLIFE_TYPST", value_name = "PATH")]
    pub typst: Option<PathBuf>,
    /// Seconds typst may take before it is stopped (no PDF is then written).
    #[arg(long, value_name = "SECONDS", default_value_t = 600, value_parser = clap::value_parser!(u64).range(1..=86_400))]
    pub typst_timeout: u64,
}

fn parse_sheets(s: &str) -> Result<crate::report::sheets::SheetSelection, String> {
    crate::report::sheets::SheetSelection::parse(s)
}

fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| p.display().to_string())
}

/// A `.json` file is a results model; anything else a project file.
fn is_results_file(p: &Path) -> bool {
    p.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("json"))
}

pub(super) fn run(a: &ReportArgs, library: &Library, jc: Option<&Path>) -> Result<i32, Error> {
    let (owned, mut inputs);
    if is_results_file(&a.file) {
        let r = crate::merge::read_results(&a.file)?;
        if let Some(sh) = &r.shard {
            return Err(Error::Input(
                crate::error::InputError::new(
                    crate::error::InputErrorKind::InvalidValue,
                    crate::error::Location::file(&a.file),
                    format!(
                        "holds part {} of {} of the details only ({} of {})",
                        sh.part,
                        sh.parts,
                        r.details.len(),
                        sh.total_details
                    ),
                )
                .hint("merge the parts first: seamlife merge PART... -o RESULTS.json"),
            ));
        }
        inputs = super::inputs_of(&a.file, &[], &[], jc, a.templates.as_deref());
        owned = r;
    } else {
        let run = crate::run_project_checked(&a.file, library)?;
        inputs = super::run_inputs(&run, jc, a.templates.as_deref());
        owned = run.results;
    }
    let results = &owned;
    // the project text is echoed in the results: its lines are the project file's
    let echo = if is_results_file(&a.file) {
        PathBuf::from(&results.input.file_name)
    } else {
        a.file.clone()
    };
    for w in crate::report::glyphs::warnings(&echo, &results.input.text) {
        super::output::print_err(&format!("{w}\n"));
    }
    let previous = match &a.previous {
        Some(old) => {
            let (old_results, mut old_side) = super::diff::load_side(old, library, &mut inputs)?;
            // the package names the file only, so it does not depend on the machine
            old_side.file = file_name(old);
            let kind = if is_results_file(&a.file) {
                "results"
            } else {
                "project"
            };
            let new_side = crate::checker::diff::side(results, &file_name(&a.file), kind);
            Some(crate::checker::diff::diff(
                &old_results,
                results,
                old_side,
                new_side,
            ))
        }
        None => None,
    };
    let opts = crate::report::ReportOptions {
        output: a.output.clone(),
        templates: a.templates.clone(),
        keep_source: a.keep_source,
        pdf_a: a.pdf_a,
        typst: a.typst.clone(),
        creation_timestamp: None,
        timeout: Some(std::time::Duration::from_secs(a.typst_timeout)),
        inputs,
        sheets: a.sheets.clone().unwrap_or_default(),
        previous,
    };
    let pending = crate::report::prepare_report(results, &opts)?;
    let s = &results.summary;
    // Said before the PDF is moved into place: if standard output cannot take it, the
    // run fails and leaves no new PDF (an earlier one stays as it was).
    print_text(&format!(
        "wrote {} ({} details: {} pass, {} fail, {} outside the method)\n{CAUTION_LINE}\n",
        pending.target().display(),
        s.details,
        s.passed,
        s.failed,
        s.outside_method
    ))?;
    pending.commit()?;
    Ok(exit_code_for(results))
}
