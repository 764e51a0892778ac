//! Shared reading of input files: size-limited text reading, hashing, near-match
//! suggestions, and turning YAML parse errors into located input errors. Used by the
//! project stage (`input`) and the curve-family stage (`catalogue`) alike.

pub mod cleanup;
pub mod csvlines;
pub mod locate;
pub mod text;
pub mod write;
pub mod yaml;
pub mod yamlde;

use std::fs::File;
use std::io::Read;
use std::path::Path;

use sha2::{Digest, Sha256};

use crate::error::{InputError, InputErrorKind, Location};
pub use text::{clip, escape_controls, short_num};
pub use yaml::{located_yaml_error, yaml_error};

/// Project and family files larger than this are refused before reading.
pub const MAX_INPUT_BYTES: u64 = 64 * 1024 * 1024;

/// Template files larger than this are refused (a title block is a few kilobytes).
pub const MAX_TEMPLATE_BYTES: u64 = 4 * 1024 * 1024;

/// What a path that is not a regular file is, in words.
fn kind_of(ft: std::fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if ft.is_fifo() {
            return "a named pipe (FIFO)";
        }
        if ft.is_char_device() {
            return "a character device";
        }
        if ft.is_block_device() {
            return "a block device";
        }
        if ft.is_socket() {
            return "a socket";
        }
    }
    if ft.is_dir() {
        "a folder"
    } else {
        "not a regular file"
    }
}

/// Open a file for reading only if it is a regular file. The type is checked before
/// opening (a named pipe would block the open, a device would never end), the open does
/// not block, and the opened file is checked again, so a path swapped in between is
/// refused too. The error says what the path is instead.
pub fn open_regular(path: &Path) -> std::io::Result<File> {
    let not_regular = |what: &str| {
        std::io::Error::new(
            std::io::ErrorKind::InvalidInput,
            format!("it is {what}, not a regular file"),
        )
    };
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        return Err(not_regular(kind_of(meta.file_type())));
    }
    let mut opts = std::fs::OpenOptions::new();
    opts.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        opts.custom_flags(libc::O_NONBLOCK);
    }
    let f = opts.open(path)?;
    let now = f.metadata()?;
    if !now.is_file() {
        return Err(not_regular(kind_of(now.file_type())));
    }
    Ok(f)
}

/// Read a UTF-8 text file, refusing files over [`MAX_INPUT_BYTES`].
pub fn read_text_limited(path: &Path) -> Result<String, InputError> {
    read_text_bounded(
        path,
        MAX_INPUT_BYTES,
        "project and family files",
        "put long stress histories in CSV series files referenced from the project",
    )
}

/// Read a file of at most `max` bytes (regular files only, never more than `max + 1`
/// bytes read); `what` and `hint` as for [`read_text_bounded`].
pub fn read_bytes_bounded(
    path: &Path,
    max: u64,
    what: &str,
    hint: &str,
) -> Result<Vec<u8>, InputError> {
    let too_large = |bytes: Option<u64>| {
        let size = match bytes {
            Some(b) => format!("is {} MiB", b.div_ceil(1024 * 1024)),
            None => format!("is larger than {} MiB", max / (1024 * 1024)),
        };
        InputError::new(
            InputErrorKind::TooLarge,
            Location::file(path),
            format!(
                "file {size}; {what} are limited to {} MiB",
                max / (1024 * 1024)
            ),
        )
        .hint(hint)
    };
    let meta = std::fs::metadata(path).map_err(|e| io_error(path, &e))?;
    if meta.is_file() && meta.len() > max {
        return Err(too_large(Some(meta.len())));
    }
    let f = open_regular(path).map_err(|e| io_error(path, &e))?;
    let mut bytes = Vec::with_capacity(meta.len().min(max) as usize + 1);
    f.take(max + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| io_error(path, &e))?;
    if bytes.len() as u64 > max {
        return Err(too_large(None));
    }
    Ok(bytes)
}

/// Read a UTF-8 text file of at most `max` bytes; `what` names the kind of file in the
/// message and `hint` says what to do with a larger one. Only regular files are read,
/// and never more than `max + 1` bytes, whatever the file system says of the size.
pub fn read_text_bounded(
    path: &Path,
    max: u64,
    what: &str,
    hint: &str,
) -> Result<String, InputError> {
    let bytes = read_bytes_bounded(path, max, what, hint)?;
    String::from_utf8(bytes).map_err(|e| {
        let upto = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line = upto.iter().filter(|b| **b == b'\n').count() + 1;
        let column = upto.len() - upto.iter().rposition(|b| *b == b'\n').map_or(0, |i| i + 1) + 1;
        InputError::new(
            InputErrorKind::Syntax,
            Location::at(path, line, column),
            "file is not valid UTF-8 text",
        )
        .hint("save the file as UTF-8")
    })
}

/// A JSON parse error of `path` at the line and column serde_json reports, its message
/// led by `what` (e.g. "not a seamlife results model").
pub(crate) fn json_error(path: &Path, e: &serde_json::Error, what: &str) -> InputError {
    let kind = if e.is_syntax() || e.is_eof() {
        InputErrorKind::Syntax
    } else if e.to_string().starts_with("unknown field") {
        InputErrorKind::UnknownKey
    } else {
        InputErrorKind::WrongType
    };
    let loc = if e.line() > 0 {
        Location::at(path, e.line(), e.column())
    } else {
        Location::file(path)
    };
    let text = e.to_string();
    // serde_json appends " at line L column C"; the location already says it
    let message = match text.rfind(" at line ") {
        Some(i) => &text[..i],
        None => &text,
    };
    InputError::new(kind, loc, format!("{what}: {}", text::one_line(message)))
}

/// A located error for a file that cannot be read, with a hint by the kind of failure.
pub(crate) fn io_error(path: &Path, e: &std::io::Error) -> InputError {
    let hint = match e.kind() {
        std::io::ErrorKind::NotFound => "check the path; it is relative to the current folder",
        std::io::ErrorKind::PermissionDenied => "check the file permissions",
        std::io::ErrorKind::InvalidInput => {
            "give the path of a regular file; pipes, devices and folders are not read"
        }
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

/// Text as shown in a message: at most 60 characters, longer text cut with a mark and
/// its length, control characters escaped so that nothing reaches the terminal raw.
pub fn shown(s: &str) -> String {
    let n = s.chars().count();
    let cut: String = if n <= 60 {
        s.to_string()
    } else {
        s.chars().take(57).collect()
    };
    let mut out = String::with_capacity(cut.len());
    for c in cut.chars() {
        if c.is_control() {
            out.extend(c.escape_unicode());
        } else {
            out.push(c);
        }
    }
    if n > 60 {
        out.push_str(&format!("… ({n} characters)"));
    }
    out
}

/// SHA-256 and size of a file, read in pieces.
pub fn file_sha256(path: &Path) -> std::io::Result<(String, u64)> {
    let mut f = open_regular(path)?;
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
