//! `seamlife assess`: results as a table, the JSON results model, CSV rows or JSON
//! Lines; for large projects the CSV and JSON Lines are written detail by detail.

use std::io::Write;
use std::path::PathBuf;

use clap::Args;

use super::exit_code_for;
use super::output::{table, write_atomic};
use super::stream::{write_details, StreamFormat};
use crate::catalogue::Library;
use crate::error::{Error, EXIT_FAIL, EXIT_PASS};
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
pub fn shard_range(k: usize, n: usize, total: usize) -> std::ops::Range<usize> {
    // part k holds details floor((k-1)·total/n) .. floor(k·total/n)
    let at = |j: usize| ((j as u128 * total as u128) / n as u128) as usize;
    at(k - 1)..at(k)
}

pub(super) fn run(a: &AssessArgs, library: &Library) -> Result<i32, Error> {
    let shard = a.shard.as_deref().map(parse_shard).transpose()?;
    let opts = crate::input::LoadOptions { strict: a.strict };
    let project = crate::input::load_project_with(&a.file, library, opts)?;
    for w in &project.warnings {
        eprintln!("warning: {}", w.message);
    }
    let family = library
        .get(&project.file.basis.family)
        .ok_or_else(|| Error::Internal("family vanished after the check".into()))?;
    let histories = crate::histories::build(&project)?;
    let engine = crate::assess::Engine::new(&project, family, &histories);
    let total = engine.len();
    let range = match shard {
        Some((k, n)) => shard_range(k, n, total),
        None => 0..total,
    };
    if a.csv || a.jsonl {
        let format = if a.csv {
            StreamFormat::Csv
        } else {
            StreamFormat::JsonLines
        };
        let progress =
            super::progress::Progress::new(range.len() as u64, "assessing details", a.quiet);
        let summary = write_details(&engine, range, format, a.output.as_deref(), &mut |done| {
            progress.set(done as u64)
        })?;
        progress.finish();
        eprintln!(
            "{} details: {} pass, {} fail, {} outside the method{}",
            summary.details,
            summary.passed,
            summary.failed,
            summary.outside_method,
            summary
                .governing_detail
                .as_ref()
                .map(|g| format!(
                    "; governing {} at utilisation {:.3}",
                    crate::files::shown(g),
                    summary.max_utilisation
                ))
                .unwrap_or_default()
        );
        eprintln!("{CAUTION_LINE}");
        return Ok(if summary.passed == summary.details {
            EXIT_PASS
        } else {
            EXIT_FAIL
        });
    }
    let progress = super::progress::Progress::new(range.len() as u64, "assessing details", a.quiet);
    let mut details = Vec::with_capacity(range.len());
    let mut start = range.start;
    while start < range.end {
        let end = (start + super::stream::CHUNK_DETAILS).min(range.end);
        details.extend(engine.assess_range(start..end));
        progress.set((end - range.start) as u64);
        start = end;
    }
    progress.finish();
    let mut results = engine.results(details);
    if let Some((k, n)) = shard {
        results.shard = Some(crate::results::ShardInfo {
            part: k,
            parts: n,
            first_detail: range.start,
            total_details: total,
        });
    }
    let text = if a.json {
        let mut s = serde_json::to_string_pretty(&results)
            .map_err(|e| Error::Internal(format!("cannot serialise results: {e}")))?;
        s.push('\n');
        s
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
    if a.json || a.output.is_some() {
        eprintln!("{CAUTION_LINE}");
    }
    Ok(exit_code_for(&results))
}
