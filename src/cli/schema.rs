//! `seamlife schema KIND`: the JSON Schema of a project file, a results model or a diff
//! model.

use std::path::PathBuf;

use clap::Args;

use super::output::{print_out, write_output, Inputs};
use crate::error::{Error, EXIT_PASS};
use crate::schema::{schema_text, SchemaKind};

#[derive(Args, Debug)]
pub struct SchemaArgs {
    /// Which file's schema.
    #[arg(value_enum)]
    pub kind: SchemaKind,
    /// Write to this file instead of standard output (written whole or not at all).
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

pub(super) fn run(a: &SchemaArgs) -> Result<i32, Error> {
    let text = schema_text(a.kind);
    match &a.output {
        Some(p) => write_output(p, text.as_bytes(), &Inputs::new())?,
        None => print_out(text.as_bytes())?,
    }
    Ok(EXIT_PASS)
}
