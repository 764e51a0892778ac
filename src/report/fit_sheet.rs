//! The test-evaluation sheet: the fit results model rendered by its own entry
//! template (`fit-sheet.typ.tera`) with the evaluation diagram, compiled by the same
//! typst runner as the calculation package.

use std::path::Path;

use serde_json::{json, Value};

use super::{plots, templates, typst, BuildFiles, TYPST_VERSION};
use crate::error::Error;
use crate::fit::FitResults;

/// The entry template of the sheet.
pub const FIT_ENTRY: &str = "fit-sheet.typ.tera";

/// Everything the sheet template sees: the fit results as `f`, the plot file names
/// and a few strings.
pub fn fit_context(f: &FitResults) -> Value {
    json!({
        "f": f,
        "plots": { "fit": "plots/fit.svg" },
        "meta": {
            "short_hash": &f.input.sha256[..f.input.sha256.len().min(12)],
            "typst_version": TYPST_VERSION,
        },
    })
}

/// The generated files of the sheet: `main.typ` and the diagram.
pub fn build_fit_files(f: &FitResults, template_dir: Option<&Path>) -> Result<BuildFiles, Error> {
    let tera = templates::engine(template_dir)?;
    let ctx =
        tera::Context::from_value(fit_context(f)).map_err(|e| Error::Internal(e.to_string()))?;
    let main = tera.render(FIT_ENTRY, &ctx).map_err(|e| Error::Report {
        message: format!("template error: {}", templates::tera_chain(&e)),
        hint: Some("the sheet's context is described in templates/README.md".into()),
    })?;
    Ok(BuildFiles {
        files: vec![
            ("plots/fit.svg".into(), plots::fit_diagram(f).into_bytes()),
            ("main.typ".into(), main.into_bytes()),
        ],
    })
}

/// Write the sheet to `out`; nothing is left behind when typst fails.
pub fn write_fit_sheet(
    f: &FitResults,
    out: &Path,
    typst_program: Option<&Path>,
) -> Result<(), Error> {
    let tool = typst::find(typst_program)?;
    let build = build_fit_files(f, None)?;
    let ts = super::creation_timestamp_for(&f.date)?;
    typst::compile_to(&tool, &build, out, ts, false, false)
}
