//! Sharded runs: reading results models back and merging the parts of one project
//! (`assess --shard K/N --json`) into the results model of the whole run, as if the
//! details had been assessed in one process.
//!
//! A merge refuses parts that do not belong together: another project file or another
//! version of a series or table file (by SHA-256), another family or family data
//! version, another tool or model version, other design rules, a missing part or a
//! part given twice. The merged model is equal to the unsharded run's: details in
//! input order, the summary counted again over all of them, the catalogue entries of
//! every part once, sorted by key.

use std::collections::BTreeMap;
use std::io::Read;
use std::path::{Path, PathBuf};

use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::results::Results;

/// Largest results model read back (JSON text). A model of 100 000 details with
/// blocks is a few hundred MiB.
pub const MAX_RESULTS_BYTES: u64 = 4 * 1024 * 1024 * 1024;

/// The results model versions this build reads.
pub const READABLE_MODEL_VERSIONS: [u32; 1] = [crate::results::MODEL_VERSION];

/// Read a results model (`assess --json`), refusing files that are not regular,
/// larger than [`MAX_RESULTS_BYTES`], not JSON, or of a model version this build does
/// not know. Errors carry the line and column that serde_json reports.
pub fn read_results(path: &Path) -> Result<Results, InputError> {
    let meta = std::fs::metadata(path).map_err(|e| crate::files::io_error(path, &e))?;
    if meta.is_file() && meta.len() > MAX_RESULTS_BYTES {
        return Err(InputError::new(
            InputErrorKind::TooLarge,
            Location::file(path),
            format!(
                "file is {} MiB; results models are limited to {} MiB",
                meta.len().div_ceil(1 << 20),
                MAX_RESULTS_BYTES >> 20
            ),
        )
        .hint("assess the project in more shards so that each part stays smaller"));
    }
    let f = crate::files::open_regular(path).map_err(|e| crate::files::io_error(path, &e))?;
    let reader = std::io::BufReader::with_capacity(1 << 20, f.take(MAX_RESULTS_BYTES + 1));
    // A cheap look at the version first: a model of another version fails with a
    // plain message instead of the first field that no longer fits.
    let results: Results = serde_json::from_reader(reader).map_err(|e| {
        crate::files::json_error(path, &e, "not a seamlife results model")
            .hint("give the JSON written by `seamlife assess --json` (with --shard K/N for a part)")
    })?;
    if !READABLE_MODEL_VERSIONS.contains(&results.model_version) {
        return Err(InputError::new(
            InputErrorKind::UnsupportedVersion,
            Location::file(path),
            format!(
                "results model version {} is not read by this seamlife (it reads version {})",
                results.model_version,
                crate::results::MODEL_VERSION
            ),
        )
        .hint("assess the project again with this seamlife"));
    }
    Ok(results)
}

/// The details of part `k` of `n` (1 <= k <= n) of `total`: a contiguous, deterministic
/// slice, every detail in exactly one part, the parts in input order.
pub fn shard_range(k: usize, n: usize, total: usize) -> std::ops::Range<usize> {
    // part k holds details floor((k-1)·total/n) .. floor(k·total/n)
    let at = |j: usize| ((j as u128 * total as u128) / n.max(1) as u128) as usize;
    at(k.saturating_sub(1))..at(k.min(n))
}

/// "2", "2, 5", or "2, 5, 7, ... (40 in all)" for long lists.
fn list_numbers(v: &[usize]) -> String {
    let shown: Vec<String> = v.iter().take(8).map(|k| k.to_string()).collect();
    if v.len() > 8 {
        format!("{}, ... ({} in all)", shown.join(", "), v.len())
    } else {
        shown.join(", ")
    }
}

/// What must be the same in every part, with its name for the message.
fn agreement(r: &Results) -> Vec<(&'static str, String)> {
    let files = |v: &[crate::results::SeriesFileInfo]| -> String {
        v.iter()
            .map(|f| format!("{} {}", f.file, f.sha256))
            .collect::<Vec<_>>()
            .join(", ")
    };
    vec![
        ("results model version", r.model_version.to_string()),
        ("tool", format!("{} {}", r.tool.name, r.tool.version)),
        (
            "project file (SHA-256)",
            format!("{} {}", r.input.file_name, r.input.sha256),
        ),
        ("series files (SHA-256)", files(&r.input.series_files)),
        ("table files (SHA-256)", files(&r.input.table_files)),
        (
            "curve family",
            format!(
                "{} data version {} ({})",
                r.family.id, r.family.data_version, r.family.origin
            ),
        ),
    ]
}

fn mismatch(path: &Path, message: String, hint: &str) -> Error {
    Error::Input(
        InputError::new(InputErrorKind::InvalidValue, Location::file(path), message).hint(hint),
    )
}

/// Merge the parts of one sharded run. `parts` are (file, model) pairs in any order;
/// every part 1..N must be there exactly once.
pub fn merge_parts(parts: Vec<(PathBuf, Results)>) -> Result<Results, Error> {
    let Some((first_path, first)) = parts.first() else {
        return Err(Error::Internal("merge of no parts".into()));
    };
    let want = agreement(first);
    let mut by_part: BTreeMap<usize, usize> = BTreeMap::new();
    let mut n_parts = None;
    for (i, (path, r)) in parts.iter().enumerate() {
        let Some(sh) = &r.shard else {
            return Err(mismatch(
                path,
                "is the results of a whole run, not of a part (`shard` is null)".into(),
                "merge the JSON results of `seamlife assess --shard K/N --json`; a whole run needs no merge",
            ));
        };
        for ((what, a), (_, b)) in want.iter().zip(agreement(r)) {
            if *a != b {
                return Err(mismatch(
                    path,
                    format!(
                        "was made from another {what} than {}: `{}` here, `{}` there",
                        first_path.display(),
                        crate::files::clip(&b),
                        crate::files::clip(a)
                    ),
                    "assess every part from the same inputs with the same seamlife and family data",
                ));
            }
        }
        if r.basis != first.basis || r.project != first.project || r.cautions != first.cautions {
            return Err(mismatch(
                path,
                format!(
                    "states other design rules, project data or cautions than {}",
                    first_path.display()
                ),
                "assess every part from the same inputs with the same seamlife and family data",
            ));
        }
        match n_parts {
            None => n_parts = Some((sh.parts, sh.total_details)),
            Some((n, t)) if (n, t) != (sh.parts, sh.total_details) => {
                return Err(mismatch(
                    path,
                    format!(
                        "is part {} of {} ({} details), but {} is of {} parts ({} details)",
                        sh.part,
                        sh.parts,
                        sh.total_details,
                        first_path.display(),
                        n,
                        t
                    ),
                    "merge the parts of one `--shard K/N` series, all with the same N",
                ));
            }
            Some(_) => {}
        }
        let range = shard_range(sh.part, sh.parts, sh.total_details);
        if sh.part == 0
            || sh.part > sh.parts
            || sh.first_detail != range.start
            || r.details.len() != range.len()
        {
            return Err(mismatch(
                path,
                format!(
                    "part {} of {} should hold details {}..{} of {}, but holds {} from {}",
                    sh.part,
                    sh.parts,
                    range.start + 1,
                    range.end,
                    sh.total_details,
                    r.details.len(),
                    sh.first_detail + 1
                ),
                "merge the files exactly as `seamlife assess --shard K/N --json` wrote them",
            ));
        }
        if let Some(&j) = by_part.get(&sh.part) {
            return Err(mismatch(
                path,
                format!(
                    "is part {} of {}, which {} is too",
                    sh.part,
                    sh.parts,
                    parts[j].0.display()
                ),
                "give each part once",
            ));
        }
        by_part.insert(sh.part, i);
    }
    let (n, total) = n_parts.unwrap_or((0, 0));
    let missing: Vec<usize> = (1..=n).filter(|k| !by_part.contains_key(k)).collect();
    if !missing.is_empty() {
        return Err(mismatch(
            first_path,
            format!(
                "the parts of {n} are incomplete: part{} {} of {n} missing",
                if missing.len() == 1 { "" } else { "s" },
                list_numbers(&missing)
            ),
            "assess and give every part 1..N; a merge of some parts only would leave details out",
        ));
    }
    let mut parts: Vec<Option<(PathBuf, Results)>> = parts.into_iter().map(Some).collect();
    let mut merged: Option<Results> = None;
    let mut details = Vec::with_capacity(total);
    let mut entries = BTreeMap::new();
    for (_, i) in by_part {
        let (_, r) = parts[i].take().expect("each part once");
        let mut r = r;
        details.append(&mut r.details);
        for e in r.catalogue_used.drain(..) {
            entries.entry(e.key.clone()).or_insert(e);
        }
        if merged.is_none() {
            merged = Some(r);
        }
    }
    let mut merged = merged.expect("at least one part");
    let mut summary = crate::assess::SummaryBuilder::default();
    for d in &details {
        summary.add(d);
    }
    merged.summary = summary.finish();
    merged.details = details;
    merged.catalogue_used = entries.into_values().collect();
    merged.shard = None;
    Ok(merged)
}
