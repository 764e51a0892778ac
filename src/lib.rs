//! seamlife: fatigue assessment of welded steel details by the nominal-stress (detail
//! category) method, and a typeset calculation package.
//!
//! Data flows one way: [`input`] (project file) -> [`catalogue`] (curve families) ->
//! [`histories`] (spectra) -> [`assess`] (engine) -> [`results`] (the model the report
//! stage and `--json` read).

pub mod assess;
pub mod catalogue;
pub mod cli;
pub mod error;
pub mod files;
pub mod histories;
pub mod input;
pub mod report;
pub mod results;
pub mod starter;

/// The signal stage's modules, also at the crate root for callers that count series
/// without a project.
pub use histories::{rainflow, series, spectrum};

pub use error::{Error, InputError, InputErrorKind};

use std::path::{Path, PathBuf};

/// Load, check, build spectra and assess a project file: the whole engine pipeline.
pub fn run_project(path: &Path, library: &catalogue::Library) -> Result<results::Results, Error> {
    Ok(run_project_checked(path, library)?.results)
}

/// A project run with what the command line needs beside the results.
#[derive(Debug)]
pub struct ProjectRun {
    pub results: results::Results,
    /// The project file as given.
    pub project_path: PathBuf,
    /// The series files read, resolved.
    pub series_paths: Vec<PathBuf>,
    /// Notes of the signal stage for standard error (see [`histories::HistoryNote`]).
    pub notes: Vec<histories::HistoryNote>,
}

/// As [`run_project`], also returning the files read and the signal stage's notes.
pub fn run_project_checked(path: &Path, library: &catalogue::Library) -> Result<ProjectRun, Error> {
    let project = input::load_project(path, library)?;
    let family = library
        .get(&project.file.basis.family)
        .ok_or_else(|| Error::Internal("family vanished after the check".into()))?;
    let histories = histories::build(&project)?;
    let results = assess::assess(&project, family, &histories);
    Ok(ProjectRun {
        results,
        project_path: path.to_path_buf(),
        series_paths: histories.series_paths.clone(),
        notes: histories.notes.clone(),
    })
}
