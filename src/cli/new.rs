//! `seamlife new`: a starter project that passes `lint`.

use std::path::Path;

use super::output::write_new;
use crate::catalogue::Library;
use crate::error::{Error, EXIT_PASS};

pub(super) fn run(dir: &Path, library: &Library) -> Result<i32, Error> {
    let target = dir.join("project.yaml");
    let bad = |at: &Path, msg: &str, hint: &str| {
        Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::OutputTarget,
                crate::error::Location::file(at),
                msg,
            )
            .hint(hint),
        )
    };
    if let Ok(m) = std::fs::metadata(dir) {
        if !m.is_dir() {
            return Err(bad(
                dir,
                "exists and is not a folder; seamlife new writes DIR/project.yaml into a folder",
                "give the name of a new folder (or of an existing folder without a project.yaml)",
            ));
        }
    }
    if std::fs::symlink_metadata(&target).is_ok() {
        return Err(bad(
            &target,
            "already exists; seamlife new will not overwrite it",
            "choose a new folder",
        ));
    }
    std::fs::create_dir_all(dir).map_err(|source| Error::Output {
        path: dir.to_path_buf(),
        source,
    })?;
    write_new(&target, crate::starter::STARTER_PROJECT.as_bytes())?;
    // The starter must pass its own check.
    crate::input::load_project(&target, library)
        .map_err(|e| Error::Internal(format!("starter project does not pass lint: {e}")))?;
    // The schema the starter's first line names, for editors; one already there is
    // left as it is.
    let schema = dir.join(crate::starter::STARTER_SCHEMA_FILE);
    let schema_note = if std::fs::symlink_metadata(&schema).is_ok() {
        format!(" ({} already there, left as it is)", schema.display())
    } else {
        let text = crate::schema::schema_text(crate::schema::SchemaKind::Project);
        write_new(&schema, text.as_bytes())?;
        format!(" and {} for editors", schema.display())
    };
    super::output::print_text(&format!(
        "wrote {}{schema_note}; edit it, then run `seamlife assess {}`\n",
        target.display(),
        target.display()
    ))?;
    Ok(EXIT_PASS)
}
