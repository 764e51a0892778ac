//! Input stage: read a project file, parse it against the schema, and check it against
//! the curve family before anything is computed.

mod check;
pub mod schema;

use std::path::{Path, PathBuf};

use crate::catalogue::Library;
use crate::error::{Error, InputError, InputErrorKind, Location};
pub use crate::files::locate::{self, YamlPath};
pub use crate::files::{
    file_sha256, hex, read_text_limited, sha256_hex, suggest, yaml_error, MAX_INPUT_BYTES,
};
pub(crate) use check::valid_iso_date;
pub use schema::*;

/// A project file that parsed and passed every check.
#[derive(Debug, Clone)]
pub struct Project {
    pub path: PathBuf,
    /// Folder the project file is in; series paths are relative to it.
    pub dir: PathBuf,
    pub text: String,
    pub sha256: String,
    pub file: ProjectFile,
}

/// Read, parse and check a project file against the family library.
pub fn load_project(path: &Path, library: &Library) -> Result<Project, Error> {
    let text = read_text_limited(path)?;
    parse_project(path, text, library)
}

/// Parse and check project text (the path is used for messages and relative files).
pub fn parse_project(path: &Path, text: String, library: &Library) -> Result<Project, Error> {
    if text.trim().is_empty() {
        return Err(InputError::new(
            InputErrorKind::MissingField,
            Location::file(path),
            "project file is empty",
        )
        .hint("run `seamlife new DIR` for a starter project")
        .into());
    }
    let file: ProjectFile = serde_yaml::from_str(&text).map_err(|e| yaml_error(path, &text, e))?;
    let problems = check::check(&file, library);
    if !problems.is_empty() {
        let targets: Vec<YamlPath> = problems.iter().map(|p| p.path.clone()).collect();
        let places = locate::locate(&text, &targets);
        let errors: Vec<InputError> = problems
            .into_iter()
            .zip(places)
            .map(|(p, place)| {
                let location = match place {
                    Some((l, c)) => Location::at(path, l, c),
                    None => Location::file(path),
                };
                let mut e = InputError::new(p.kind, location, format!("{}: {}", p.path, p.message));
                e.hint = p.hint;
                e
            })
            .collect();
        return Err(Error::Inputs(errors));
    }
    let sha256 = sha256_hex(text.as_bytes());
    let dir = path
        .parent()
        .map(|p| {
            if p.as_os_str().is_empty() {
                PathBuf::from(".")
            } else {
                p.to_path_buf()
            }
        })
        .unwrap_or_else(|| PathBuf::from("."));
    Ok(Project {
        path: path.to_path_buf(),
        dir,
        text,
        sha256,
        file,
    })
}
