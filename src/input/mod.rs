//! Input stage: read a project file, parse it against the schema, and check it against
//! the curve family before anything is computed.

pub mod check;
pub mod schema;
pub mod tables;

use std::path::{Path, PathBuf};

use crate::catalogue::Library;
use crate::error::{Error, InputError, InputErrorKind, Location};
pub use crate::files::locate::{self, YamlPath};
pub use crate::files::{
    file_sha256, hex, read_text_limited, sha256_hex, suggest, yaml_error, MAX_INPUT_BYTES,
};
pub(crate) use check::valid_iso_date;
pub use check::{
    FACTOR_RANGE, MAX_BINS, MAX_COUNT, MAX_DESIGN_LIFE_YEARS, MAX_HOURS_PER_YEAR, MAX_MODULUS_MPA,
    MAX_STRESS_MPA, MAX_THICKNESS_MM, MIN_BIN_WIDTH_MPA,
};
pub use schema::*;

/// A project file that parsed and passed every check.
#[derive(Debug, Clone)]
pub struct Project {
    pub path: PathBuf,
    /// Folder the project file is in; series paths are relative to it.
    pub dir: PathBuf,
    pub text: String,
    pub sha256: String,
    /// The project file, with the details of its tables appended to `details`.
    pub file: ProjectFile,
    /// What the tables added (empty without tables).
    pub tables: tables::TableData,
    /// Input-level warnings (e.g. table details without stress rows).
    pub warnings: Vec<crate::results::Warning>,
}

/// How strictly to read a project.
#[derive(Debug, Clone, Copy, Default)]
pub struct LoadOptions {
    /// Turn input warnings (a table detail without stress rows) into errors.
    pub strict: bool,
}

/// Read, parse and check a project file against the family library.
pub fn load_project(path: &Path, library: &Library) -> Result<Project, Error> {
    load_project_with(path, library, LoadOptions::default())
}

/// [`load_project`] with options.
pub fn load_project_with(
    path: &Path,
    library: &Library,
    opts: LoadOptions,
) -> Result<Project, Error> {
    let text = read_text_limited(path)?;
    parse_project_with(path, text, library, opts)
}

/// Parse and check project text (the path is used for messages and relative files).
pub fn parse_project(path: &Path, text: String, library: &Library) -> Result<Project, Error> {
    parse_project_with(path, text, library, LoadOptions::default())
}

fn project_dir(path: &Path) -> PathBuf {
    path.parent()
        .map(|p| {
            if p.as_os_str().is_empty() {
                PathBuf::from(".")
            } else {
                p.to_path_buf()
            }
        })
        .unwrap_or_else(|| PathBuf::from("."))
}

/// [`parse_project`] with options.
pub fn parse_project_with(
    path: &Path,
    text: String,
    library: &Library,
    opts: LoadOptions,
) -> Result<Project, Error> {
    if text.trim().is_empty() {
        return Err(InputError::new(
            InputErrorKind::MissingField,
            Location::file(path),
            "project file is empty",
        )
        .hint("run `seamlife new DIR` for a starter project")
        .into());
    }
    // Read as a stream of events: a large project is never held as a tree (serde_yaml
    // keeps every event of the document in memory, about 20 bytes for each byte).
    crate::files::yaml::check_controls(path, &text)?;
    let mut file: ProjectFile = crate::files::yamlde::from_str(&text)
        .map_err(|e| crate::files::located_yaml_error(path, &text, e.to_string(), e.place))?;
    file.shrink();
    let dir = project_dir(path);
    let yaml_place = |p: YamlPath| match locate::locate(&text, std::slice::from_ref(&p))[0] {
        Some((l, c)) => Location::at(path, l, c),
        None => Location::file(path),
    };
    let (table_details, tables) = tables::read_tables(&dir, &file, &|key| match key {
        "events" => yaml_place(YamlPath::root().key("events")),
        "tables" => yaml_place(YamlPath::root().key("tables")),
        k => yaml_place(YamlPath::root().key("tables").key(k)),
    })?;
    let mut warnings = Vec::new();
    if !tables.unloaded.is_empty() {
        let table = file
            .tables
            .as_ref()
            .and_then(|t| t.details.clone())
            .unwrap_or_default();
        if opts.strict {
            let p = tables.details_path.clone().unwrap_or_default();
            return Err(Error::Inputs(
                tables
                    .unloaded
                    .iter()
                    .map(|(id, line)| {
                        InputError::new(
                            InputErrorKind::MissingField,
                            Location::at(&p, *line as usize, 1),
                            format!("detail `{id}` has no row in the stresses or histories table"),
                        )
                        .hint("give its stresses, or remove it from the details table (without --strict it is left out with a warning)")
                    })
                    .collect(),
            ));
        }
        for (id, line) in &tables.unloaded {
            warnings.push(crate::results::Warning {
                code: "detail-without-stresses".into(),
                message: format!(
                    "detail `{id}` ({table} line {line}) has no row in the stresses or histories table and is not assessed"
                ),
            });
        }
    }
    file.details.extend(table_details);
    let problems = check::check(&file, library);
    if !problems.is_empty() {
        let targets: Vec<YamlPath> = problems.iter().map(|p| p.path.clone()).collect();
        let places = locate::locate(&text, &targets);
        let errors: Vec<InputError> = problems
            .into_iter()
            .zip(places)
            .map(|(p, place)| {
                let location = match tables.locate(&file, &p.path) {
                    Some(l) => l,
                    None => match place {
                        Some((l, c)) => Location::at(path, l, c),
                        None => Location::file(path),
                    },
                };
                let what = match tables.detail_of(&p.path) {
                    Some(k) => format!("detail `{}`", file.details[k].id),
                    None => p.path.to_string(),
                };
                let mut e = InputError::new(p.kind, location, format!("{what}: {}", p.message));
                e.hint = p.hint;
                e
            })
            .collect();
        return Err(Error::Inputs(errors));
    }
    let sha256 = sha256_hex(text.as_bytes());
    Ok(Project {
        path: path.to_path_buf(),
        dir,
        text,
        sha256,
        file,
        tables,
        warnings,
    })
}
