//! `seamlife lint`: check a project file without assessing it. Every check that
//! `assess` makes before the engine runs is made here too: the schema and values, the
//! family, and the series (their paths and every cell, by counting them).
//!
//! `lint` counts the series without the details' damage rules and sums no damage: it
//! checks inputs, and a count without rules is the fast one. The damage (per counted
//! cycle), reserve factor and required category are `assess`'s; the output says so.

use std::path::Path;

use super::output::{print_err, print_text};
use crate::catalogue::Library;
use crate::error::{Error, EXIT_PASS};

pub(super) fn run(file: &Path, library: &Library) -> Result<i32, Error> {
    let project = crate::input::load_project(file, library)?;
    for w in crate::report::glyphs::warnings(file, &project.text) {
        print_err(&format!("{w}\n"));
    }
    for w in &project.warnings {
        print_err(&format!("warning: {}\n", w.message));
    }
    let histories = crate::histories::build(&project)?;
    super::print_notes(&histories.notes);
    let series = histories.series_files.len();
    print_text(&format!(
        "ok: {} — {} details, family {}, schema version {}{}\n",
        file.display(),
        project.file.details.len(),
        project.file.basis.family,
        project.file.seamlife,
        match series {
            0 => String::new(),
            1 => ", 1 series file read and counted (no damage summed: assess sums it per counted cycle)".to_string(),
            n => format!(", {n} series files read and counted (no damage summed: assess sums it per counted cycle)"),
        }
    ))?;
    Ok(EXIT_PASS)
}
