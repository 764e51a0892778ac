//! `seamlife lint`: check a project file without assessing it.

use std::path::Path;

use crate::catalogue::Library;
use crate::error::{Error, EXIT_PASS};

pub(super) fn run(file: &Path, library: &Library) -> Result<i32, Error> {
    let project = crate::input::load_project(file, library)?;
    for w in crate::report::glyphs::warnings(file, &project.text) {
        eprintln!("{w}");
    }
    println!(
        "ok: {} — {} details, family {}, schema version {}",
        file.display(),
        project.file.details.len(),
        project.file.basis.family,
        project.file.seamlife
    );
    Ok(EXIT_PASS)
}
