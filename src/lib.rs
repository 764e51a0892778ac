//! seamlife: fatigue assessment of welded steel details by the nominal-stress (detail
//! category) method, and a typeset calculation package.
//!
//! Data flows one way: [`input`] (project file) -> [`catalogue`] (curve families) ->
//! [`histories`] (spectra) -> [`assess`] (engine) -> [`results`] (the model the report
//! stage and `--json` read).

pub mod assess;
pub mod catalogue;
pub mod checker;
pub mod cli;
pub mod error;
pub mod files;
pub mod fit;
pub mod histories;
pub mod input;
pub mod merge;
pub mod report;
pub mod results;
pub mod schema;
pub mod starter;

/// The signal stage's modules, also at the crate root for callers that count series
/// without a project.
pub use histories::{binary, ingest, rainflow, series, spectrum};

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
    /// The series files read, resolved (outputs must never replace them).
    pub series_paths: Vec<PathBuf>,
    /// The table files read, resolved.
    pub table_paths: Vec<PathBuf>,
    /// Notes of the signal stage (see [`histories::HistoryNote`]); they are also in
    /// the results as the details' warnings.
    pub notes: Vec<histories::HistoryNote>,
    /// Input-level warnings (e.g. table details without stress rows, left out).
    pub warnings: Vec<results::Warning>,
}

/// A project read, checked and with its series counted: ready to assess.
#[derive(Debug)]
pub struct Loaded {
    pub project: input::Project,
    pub histories: histories::ProjectHistories,
    pub project_path: PathBuf,
}

impl Loaded {
    /// The series files read, resolved.
    pub fn series_paths(&self) -> &[PathBuf] {
        &self.histories.series_paths
    }

    /// The table files read, resolved.
    pub fn table_paths(&self) -> &[PathBuf] {
        &self.project.tables.paths
    }
}

/// Read and check a project and count its series.
pub fn load_checked(
    path: &Path,
    library: &catalogue::Library,
    opts: input::LoadOptions,
) -> Result<Loaded, Error> {
    let project = input::load_project_with(path, library, opts)?;
    // the damage of every counted cycle is summed in the count, on the detail's curve
    let histories = match library.get(&project.file.basis.family) {
        Some(fam) => histories::build_with(&project, &assess::cycle_rules(&project, fam))?,
        None => histories::build(&project)?,
    };
    Ok(Loaded {
        project,
        histories,
        project_path: path.to_path_buf(),
    })
}

/// As [`run_project`], also returning the files read and the signal stage's notes.
pub fn run_project_checked(path: &Path, library: &catalogue::Library) -> Result<ProjectRun, Error> {
    run_project_with(path, library, input::LoadOptions::default())
}

/// As [`run_project_checked`], with load options.
pub fn run_project_with(
    path: &Path,
    library: &catalogue::Library,
    opts: input::LoadOptions,
) -> Result<ProjectRun, Error> {
    let l = load_checked(path, library, opts)?;
    let family = library
        .get(&l.project.file.basis.family)
        .ok_or_else(|| Error::Internal("family vanished after the check".into()))?;
    let results = assess::assess(&l.project, family, &l.histories);
    Ok(ProjectRun {
        series_paths: l.series_paths().to_vec(),
        table_paths: l.table_paths().to_vec(),
        notes: l.histories.notes.clone(),
        warnings: l.project.warnings.clone(),
        results,
        project_path: l.project_path,
    })
}
