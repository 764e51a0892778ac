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
    /// The checker's review file (YAML): verdicts in the summary, remarks on the sheets,
    /// the review record on the cover.
    #[arg(long, value_name = "REVIEW.yaml")]
    pub review: Option<PathBuf>,
    /// Accept a review written against another project hash, or naming details the
    /// project does not have, and print a warning in the package instead of an error.
    #[arg(long, requires = "review")]
    pub allow_stale: bool,
}

/// The series and table files of `r` (paths relative to `project_dir`), read when
/// small enough to attach; larger or unreadable-now ones are named by their hash in
/// the results. `None`: no folder (a package made from a results model), every file
/// is named by hash only.
fn input_attachments(
    r: &crate::results::Results,
    project_dir: Option<&Path>,
    from_results: bool,
) -> Result<Vec<crate::report::Attachment>, Error> {
    use crate::report::{Attachment, MAX_ATTACHED_BYTES, PROJECT_PREFIX};
    let mut out = Vec::new();
    let files = r
        .input
        .series_files
        .iter()
        .map(|f| (f, "series file of the project"));
    let tables = r
        .input
        .table_files
        .iter()
        .map(|f| (f, "table file of the project"));
    for (f, what) in files.chain(tables) {
        let by_hash = || Attachment {
            name: format!("{PROJECT_PREFIX}{}", f.file),
            description: what.into(),
            mime_type: "text/csv".into(),
            relationship: "source".into(),
            sha256: f.sha256.clone(),
            bytes: f.bytes,
            attached: false,
            data: Vec::new(),
        };
        let Some(dir) = project_dir else {
            out.push(by_hash());
            continue;
        };
        if f.bytes > MAX_ATTACHED_BYTES || !crate::checker::review::relative_inside(&f.file) {
            out.push(by_hash());
            continue;
        }
        let read = crate::files::read_bytes_bounded(
            &dir.join(&f.file),
            MAX_ATTACHED_BYTES,
            "attached files",
            "larger files are named by hash only",
        );
        let data = match read {
            Ok(d) => d,
            // beside a results model: a file gone or changed since is named by hash
            Err(_) if from_results => {
                out.push(by_hash());
                continue;
            }
            Err(e) => return Err(e.into()),
        };
        let a = Attachment::input(out_name(&f.file), data, what.into(), "text/csv");
        if a.sha256 != f.sha256 && from_results {
            out.push(by_hash());
            continue;
        }
        if a.sha256 != f.sha256 {
            return Err(Error::Input(
                crate::error::InputError::new(
                    crate::error::InputErrorKind::Io,
                    crate::error::Location::file(&dir.join(&f.file)),
                    "the file changed while the package was made",
                )
                .hint("run the report again when the file no longer changes"),
            ));
        }
        out.push(a);
    }
    Ok(out)
}

fn out_name(rel: &str) -> String {
    format!("{}{rel}", crate::report::PROJECT_PREFIX)
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
    let (owned, inputs);
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
    let mut inputs = inputs;
    if let Some(p) = &a.review {
        inputs.add(p, "the review file");
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
    let review = match &a.review {
        Some(p) => {
            let rv = crate::checker::review::read_review(p)?;
            let ids: Vec<&str> = results.details.iter().map(|d| d.id.as_str()).collect();
            let rec = crate::checker::review::check_review(
                &rv,
                &ids,
                &results.input.sha256,
                a.allow_stale,
            )?;
            for w in &rec.warnings {
                super::output::print_err(&format!(
                    "warning: {}: {}\n",
                    p.display(),
                    crate::files::text::one_line(w)
                ));
            }
            Some(rec)
        }
        None => None,
    };
    let project_dir = if is_results_file(&a.file) {
        // A results model beside its unchanged project file: its inputs are attached
        // as from the project, so the package is the same either way.
        let dir = match a.file.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let same = crate::files::file_sha256(&dir.join(&results.input.file_name))
            .is_ok_and(|(h, _)| h == results.input.sha256);
        same.then_some(dir)
    } else {
        Some(match a.file.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        })
    };
    let mut attachments = vec![
        crate::report::Attachment::results(results)?,
        crate::report::Attachment::input(
            out_name(&results.input.file_name),
            results.input.text.clone().into_bytes(),
            "project file".into(),
            "application/yaml",
        ),
    ];
    attachments.extend(input_attachments(
        results,
        project_dir.as_deref(),
        is_results_file(&a.file),
    )?);
    if a.pdf_a {
        super::output::print_err(
            "note: PDF/A-2b cannot carry attached files: this package holds no results model; check it with `seamlife verify RESULTS.json PROJECT.yaml`\n",
        );
    }
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
        review,
        attachments,
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
