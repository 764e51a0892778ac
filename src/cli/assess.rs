//! `seamlife assess`: results as a table, the JSON results model, CSV rows or JSON
//! Lines; for large projects the CSV and JSON Lines are written detail by detail.

use std::path::PathBuf;

use clap::Args;

use super::output::{print_err, print_text, render_table, write_streamed, TableRow};
use super::stream::{write_details, write_model, StreamFormat, CHUNK_DETAILS};
use crate::catalogue::Library;
use crate::error::{Error, EXIT_FAIL, EXIT_PASS};
use crate::files::text::one_line;
use crate::results::CAUTION_LINE;

#[derive(Args, Debug)]
pub struct AssessArgs {
    /// Project file (YAML).
    pub file: PathBuf,
    /// Write the results model as JSON instead of the table.
    #[arg(long, conflicts_with_all = ["csv", "jsonl"])]
    pub json: bool,
    /// Write one CSV row per detail instead of the table (streamed: any project size).
    #[arg(long, conflicts_with = "jsonl")]
    pub csv: bool,
    /// Write one JSON object per detail and line (JSON Lines, streamed).
    #[arg(long)]
    pub jsonl: bool,
    /// Write to this file instead of standard output (written whole or not at all).
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Assess only part K of N of the details (contiguous, in input order), e.g. 2/8;
    /// `seamlife merge` combines the parts' JSON results.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<String>,
    /// Treat input warnings (a table detail without stress rows) as errors.
    #[arg(long)]
    pub strict: bool,
    /// No progress bars.
    #[arg(long, short)]
    pub quiet: bool,
    /// The checker's review file (YAML): after the results, list its open queries and
    /// the details not accepted (on standard error with --json, --csv, --jsonl or -o).
    #[arg(long, value_name = "REVIEW.yaml")]
    pub review: Option<PathBuf>,
    /// Accept a review written against another project hash, or naming details the
    /// project does not have, with a warning instead of an error.
    #[arg(long, requires = "review")]
    pub allow_stale: bool,
}

/// A part K of N: 1 <= K <= N.
pub fn parse_shard(s: &str) -> Result<(usize, usize), Error> {
    let bad = || {
        Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::InvalidValue,
                crate::error::Location::file(std::path::Path::new("<command line>")),
                format!(
                    "--shard `{}` is not of the form K/N",
                    crate::files::shown(s)
                ),
            )
            .hint("give the part and the number of parts, 1 <= K <= N, e.g. --shard 2/8"),
        )
    };
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let k: usize = k.trim().parse().map_err(|_| bad())?;
    let n: usize = n.trim().parse().map_err(|_| bad())?;
    if k == 0 || n == 0 || k > n {
        return Err(bad());
    }
    Ok((k, n))
}

/// The contiguous range of details of part `k` of `n` (1-based) out of `total`.
pub use crate::merge::shard_range;

pub(super) fn run(
    a: &AssessArgs,
    library: &Library,
    jc: Option<&std::path::Path>,
) -> Result<i32, Error> {
    let shard = a.shard.as_deref().map(parse_shard).transpose()?;
    let opts = crate::input::LoadOptions { strict: a.strict };
    let loaded = crate::load_checked(&a.file, library, opts)?;
    let mut inputs = super::inputs_of(
        &a.file,
        loaded.series_paths(),
        loaded.table_paths(),
        jc,
        None,
    );
    // The review is checked before the work: a bad review gives exit 2 and no output.
    let review = match &a.review {
        Some(p) => {
            inputs.add(p, "the review file");
            let rv = crate::checker::review::read_review(p)?;
            let ids: Vec<&str> = loaded
                .project
                .file
                .details
                .iter()
                .map(|d| d.id.as_str())
                .collect();
            Some(crate::checker::review::check_review(
                &rv,
                &ids,
                &loaded.project.sha256,
                a.allow_stale,
            )?)
        }
        None => None,
    };
    let show_review = |to_stdout: bool| -> Result<(), Error> {
        if let Some(rec) = &review {
            let text = crate::checker::review::render_open(rec);
            if to_stdout {
                print_text(&text)?;
            } else {
                print_err(&text);
            }
        }
        Ok(())
    };
    if let Some(path) = &a.output {
        // Refuse a bad output before the work.
        crate::files::write::check_target(path, &inputs)?;
    }
    for w in &loaded.project.warnings {
        print_err(&format!("warning: {}\n", one_line(&w.message)));
    }
    let family = library
        .get(&loaded.project.file.basis.family)
        .ok_or_else(|| Error::Internal("family vanished after the check".into()))?;
    let engine = crate::assess::Engine::new(&loaded.project, family, &loaded.histories);
    let total = engine.len();
    let range = match shard {
        Some((k, n)) => shard_range(k, n, total),
        None => 0..total,
    };
    let progress = super::progress::Progress::new(range.len() as u64, "assessing details", a.quiet);
    if a.csv || a.jsonl {
        let format = if a.csv {
            StreamFormat::Csv
        } else {
            StreamFormat::JsonLines
        };
        // CSV rows need the numbers only: no blocks, bands or figures' data
        let engine = if a.csv { engine.lean() } else { engine };
        let mut tick = |done: usize| progress.set(done as u64);
        let csv = a.csv;
        let summary = write_streamed(a.output.as_deref(), &inputs, |w, err, terminal| {
            write_details(&engine, range, format, w, csv && terminal, err, &mut tick)
        })?;
        progress.finish();
        show_review(false)?;
        print_err(&format!(
            "{} details: {} pass, {} fail, {} outside the method{}\n{CAUTION_LINE}\n",
            summary.details,
            summary.passed,
            summary.failed,
            summary.outside_method,
            summary
                .governing_detail
                .as_ref()
                .map(|g| format!(
                    "; governing {} at utilisation {:.3}",
                    one_line(g),
                    summary.max_utilisation
                ))
                .unwrap_or_default()
        ));
        return Ok(if summary.passed == summary.details {
            EXIT_PASS
        } else {
            EXIT_FAIL
        });
    }
    let shard_info = shard.map(|(k, n)| crate::results::ShardInfo {
        part: k,
        parts: n,
        first_detail: range.start,
        total_details: total,
    });
    let mut tick = |done: usize| progress.set(done as u64);
    let summary = if a.json {
        // Streamed: the JSON of a large project is never held whole in memory.
        let s = write_streamed(a.output.as_deref(), &inputs, |w, err, _| {
            write_model(&engine, range, shard_info, w, err, &mut tick)
        })?;
        progress.finish();
        s
    } else {
        // The table keeps one short row per detail, not the results model.
        let engine = engine.lean();
        let mut rows = Vec::with_capacity(range.len());
        let mut sum = crate::assess::SummaryBuilder::default();
        let mut start = range.start;
        while start < range.end {
            let end = (start + CHUNK_DETAILS).min(range.end);
            for d in &engine.assess_range(start..end) {
                sum.add(d);
                rows.push(TableRow::of(d));
            }
            tick(end - range.start);
            start = end;
        }
        progress.finish();
        let summary = sum.finish();
        let text = render_table(&engine.frame(), &summary, &rows);
        match &a.output {
            Some(path) => crate::files::write::write_output(path, text.as_bytes(), &inputs)?,
            None => print_text(&text)?,
        }
        show_review(a.output.is_none())?;
        summary
    };
    if a.json {
        show_review(false)?;
    }
    if a.json || a.output.is_some() {
        print_err(&format!("{CAUTION_LINE}\n"));
    }
    Ok(if summary.passed == summary.details {
        EXIT_PASS
    } else {
        EXIT_FAIL
    })
}
