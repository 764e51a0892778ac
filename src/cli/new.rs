//! `seamlife new`: a starter project that passes `lint`.

use std::path::Path;

use super::output::write_atomic;
use crate::catalogue::Library;
use crate::error::{Error, EXIT_PASS};

pub(super) fn run(dir: &Path, library: &Library) -> Result<i32, Error> {
    let target = dir.join("project.yaml");
    if target.exists() {
        return Err(Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::Io,
                crate::error::Location::file(&target),
                "already exists; seamlife new will not overwrite it",
            )
            .hint("choose a new folder"),
        ));
    }
    std::fs::create_dir_all(dir).map_err(|source| Error::Output {
        path: dir.to_path_buf(),
        source,
    })?;
    write_atomic(&target, crate::starter::STARTER_PROJECT.as_bytes())?;
    // The starter must pass its own check.
    crate::input::load_project(&target, library)
        .map_err(|e| Error::Internal(format!("starter project does not pass lint: {e}")))?;
    println!(
        "wrote {}; edit it, then run `seamlife assess {}`",
        target.display(),
        target.display()
    );
    Ok(EXIT_PASS)
}
