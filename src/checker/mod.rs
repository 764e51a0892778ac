//! The checker's side: confirming a submitted results model against its inputs
//! ([`verify`]), comparing two revisions ([`diff`]) and the checker's review file
//! ([`review`]). Each reads results models (and project files through the ordinary
//! pipeline) and writes its own serialisable report; none changes the engine.

pub mod diff;
pub mod package;
pub mod review;
pub mod verify;

use std::path::Path;

use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::results::Results;

/// Results models larger than this are refused (a batch of many thousand details with
/// counted records stays well below it).
pub const MAX_RESULTS_BYTES: u64 = 1 << 30;

/// Read a results model written by `assess --json`, with the line and column of a
/// syntax or shape error.
pub fn read_results(path: &Path) -> Result<Results, Error> {
    let text = crate::files::read_text_bounded(
        path,
        MAX_RESULTS_BYTES,
        "results models",
        "split the project with `assess --shard K/N` and check each part",
    )?;
    parse_results(&text, path)
}

/// Parse the text of a results model.
pub fn parse_results(text: &str, path: &Path) -> Result<Results, Error> {
    let r: Results = serde_json::from_str(text).map_err(|e| {
        let kind = match e.classify() {
            serde_json::error::Category::Data => InputErrorKind::WrongType,
            _ => InputErrorKind::Syntax,
        };
        InputError::new(
            kind,
            Location::at(path, e.line().max(1), e.column().max(1)),
            format!("not a seamlife results model: {e}"),
        )
        .hint("give the JSON written by `seamlife assess PROJECT.yaml --json`")
    })?;
    if r.model_version > crate::results::MODEL_VERSION {
        return Err(InputError::new(
            InputErrorKind::UnsupportedVersion,
            Location::file(path),
            format!(
                "results model version {} is newer than this installation reads ({})",
                r.model_version,
                crate::results::MODEL_VERSION
            ),
        )
        .hint("check it with the seamlife version that wrote it, or a newer one")
        .into());
    }
    Ok(r)
}

/// Short form of a hash for tables.
pub fn short_hash(h: &str) -> &str {
    h.get(..12).unwrap_or(h)
}
