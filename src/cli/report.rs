//! `seamlife report`: the PDF calculation package.

use std::path::PathBuf;

use clap::Args;

use super::exit_code_for;
use crate::catalogue::Library;
use crate::error::Error;
use crate::results::CAUTION_LINE;

#[derive(Args, Debug)]
pub struct ReportArgs {
    /// Project file (YAML).
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
    /// Write PDF/A-2b.
    #[arg(long)]
    pub pdf_a: bool,
    /// The typst program [default: `typst` on PATH].
    #[arg(long, env = "SEAMLIFE_TYPST", value_name = "PATH")]
    pub typst: Option<PathBuf>,
}

pub(super) fn run(a: &ReportArgs, library: &Library) -> Result<i32, Error> {
    let results = crate::run_project(&a.file, library)?;
    for w in crate::report::glyphs::warnings(&a.file, &results.input.text) {
        eprintln!("{w}");
    }
    let opts = crate::report::ReportOptions {
        output: a.output.clone(),
        templates: a.templates.clone(),
        keep_source: a.keep_source,
        pdf_a: a.pdf_a,
        typst: a.typst.clone(),
        creation_timestamp: None,
    };
    let out = crate::report::write_report(&results, &opts)?;
    let s = &results.summary;
    println!(
        "wrote {} ({} details: {} pass, {} fail, {} outside the method)",
        out.display(),
        s.details,
        s.passed,
        s.failed,
        s.outside_method
    );
    println!("{CAUTION_LINE}");
    Ok(exit_code_for(&results))
}
