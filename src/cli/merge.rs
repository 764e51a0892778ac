//! `seamlife merge`: the JSON results of the parts of a sharded run combined into the
//! results model of the whole project, from which `report` works as usual.

use std::io::IsTerminal;
use std::path::PathBuf;

use clap::Args;

use super::output::print_err;
use super::output::write_streamed;
use super::stream::write_results;
use crate::error::{Error, EXIT_FAIL, EXIT_PASS};
use crate::files::text::one_line;
use crate::files::write::Inputs;
use crate::results::CAUTION_LINE;

#[derive(Args, Debug)]
pub struct MergeArgs {
    /// Results of the parts (`seamlife assess PROJECT --shard K/N --json -o PART.json`),
    /// every part 1..N once, in any order.
    #[arg(required = true, value_name = "PART.json")]
    pub parts: Vec<PathBuf>,
    /// Write the merged results model here [default: standard output].
    #[arg(short, long, value_name = "OUT.json")]
    pub output: Option<PathBuf>,
}

pub(super) fn run(a: &MergeArgs) -> Result<i32, Error> {
    let mut inputs = Inputs::new();
    for p in &a.parts {
        inputs.add(p, "a part being merged");
    }
    if let Some(path) = &a.output {
        // Refuse a bad output before reading the parts.
        crate::files::write::check_target(path, &inputs)?;
    }
    let mut parts = Vec::with_capacity(a.parts.len());
    for p in &a.parts {
        parts.push((p.clone(), crate::merge::read_results(p)?));
    }
    let merged = crate::merge::merge_parts(parts)?;
    if a.output.is_none() && std::io::stdout().is_terminal() {
        print_err("note: writing the merged JSON to the terminal; give -o OUT.json to keep it\n");
    }
    write_streamed(a.output.as_deref(), &inputs, |w, err, _| {
        write_results(&merged, w, err)
    })?;
    let s = &merged.summary;
    print_err(&format!(
        "merged {} parts: {} details: {} pass, {} fail, {} outside the method{}\n{CAUTION_LINE}\n",
        a.parts.len(),
        s.details,
        s.passed,
        s.failed,
        s.outside_method,
        s.governing_detail
            .as_ref()
            .map(|g| format!(
                "; governing {} at utilisation {:.3}",
                one_line(g),
                s.max_utilisation
            ))
            .unwrap_or_default()
    ));
    Ok(if s.passed == s.details {
        EXIT_PASS
    } else {
        EXIT_FAIL
    })
}
