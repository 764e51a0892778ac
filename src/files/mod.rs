//! Shared reading of input files: size-limited text reading, hashing, near-match
//! suggestions, and turning YAML parse errors into located input errors. Used by the
//! project stage (`input`) and the curve-family stage (`catalogue`) alike.

pub mod locate;
pub mod yaml;

use std::path::Path;

use sha2::{Digest, Sha256};

use crate::error::{InputError, InputErrorKind, Location};
pub use yaml::yaml_error;

/// Project and family files larger than this are refused before reading.
pub const MAX_INPUT_BYTES: u64 = 64 * 1024 * 1024;

/// Read a UTF-8 text file, refusing files over [`MAX_INPUT_BYTES`].
pub fn read_text_limited(path: &Path) -> Result<String, InputError> {
    let meta = std::fs::metadata(path).map_err(|e| io_error(path, &e))?;
    if meta.is_dir() {
        return Err(InputError::new(
            InputErrorKind::Io,
            Location::file(path),
            "is a folder, not a project file",
        )
        .hint("give the path of a .yaml project file"));
    }
    if meta.len() > MAX_INPUT_BYTES {
        return Err(InputError::new(
            InputErrorKind::TooLarge,
            Location::file(path),
            format!(
                "file is {} MiB; project and family files are limited to {} MiB",
                meta.len() / (1024 * 1024),
                MAX_INPUT_BYTES / (1024 * 1024)
            ),
        )
        .hint("put long stress histories in CSV series files referenced from the project"));
    }
    let bytes = std::fs::read(path).map_err(|e| io_error(path, &e))?;
    String::from_utf8(bytes).map_err(|e| {
        let upto = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = upto.iter().filter(|b| **b == b'\n').count() + 1;
        InputError::new(
            InputErrorKind::Syntax,
            Location {
                file: path.to_path_buf(),
                line: Some(line),
                column: None,
            },
            "file is not valid UTF-8 text",
        )
        .hint("save the file as UTF-8")
    })
}

/// A located error for a file that cannot be read, with a hint by the kind of failure.
pub(crate) fn io_error(path: &Path, e: &std::io::Error) -> InputError {
    let hint = match e.kind() {
        std::io::ErrorKind::NotFound => "check the path; it is relative to the current folder",
        std::io::ErrorKind::PermissionDenied => "check the file permissions",
        _ => "check that the file exists and can be read",
    };
    InputError::new(
        InputErrorKind::Io,
        Location::file(path),
        format!("cannot read file: {e}"),
    )
    .hint(hint)
}

/// The closest of `options` to `word`, if it is close enough to be a likely typo.
pub fn suggest<'a>(word: &str, options: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let mut best: Option<(&str, f64)> = None;
    for o in options {
        let score = strsim::jaro_winkler(&word.to_lowercase(), &o.to_lowercase());
        if best.is_none_or(|(_, s)| score > s) {
            best = Some((o, score));
        }
    }
    best.filter(|(_, s)| *s >= 0.75).map(|(o, _)| o)
}

/// Lower-case hexadecimal SHA-256 of some bytes.
pub fn sha256_hex(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

/// Lower-case hexadecimal of a digest.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// SHA-256 and size of a file, read in pieces.
pub fn file_sha256(path: &Path) -> std::io::Result<(String, u64)> {
    use std::io::Read;
    let mut f = std::fs::File::open(path)?;
    let mut h = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut n = 0u64;
    loop {
        let k = f.read(&mut buf)?;
        if k == 0 {
            break;
        }
        n += k as u64;
        h.update(&buf[..k]);
    }
    Ok((hex(&h.finalize()), n))
}
