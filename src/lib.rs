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
pub mod fit;
pub mod histories;
pub mod input;
pub mod report;
pub mod results;
pub mod starter;

/// The signal stage's modules, also at the crate root for callers that count series
/// without a project.
pub use histories::{rainflow, series, spectrum};

pub use error::{Error, InputError, InputErrorKind};

use std::path::Path;

/// Load, check, build spectra and assess a project file: the whole engine pipeline.
pub fn run_project(path: &Path, library: &catalogue::Library) -> Result<results::Results, Error> {
    let project = input::load_project(path, library)?;
    let family = library
        .get(&project.file.basis.family)
        .ok_or_else(|| Error::Internal("family vanished after the check".into()))?;
    let histories = histories::build(&project)?;
    Ok(assess::assess(&project, family, &histories))
}
