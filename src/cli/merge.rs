//! `seamlife merge`: the JSON results of the parts of a sharded run combined into the
//! results model of the whole project, from which `report` works as usual; or spectrum
//! parts (`count --spectrum-out`) combined into the spectrum of the whole record (or of
//! many records), told apart by their content.

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
    /// every part 1..N once, in any order; or spectrum parts (`seamlife count FILE
    /// --spectrum-out PART.json`), in record order.
    #[arg(required = true, value_name = "PART.json")]
    pub parts: Vec<PathBuf>,
    /// Write the merged results model (or, for spectrum parts, the spectrum CSV) here
    /// [default: standard output].
    #[arg(short, long, value_name = "OUT")]
    pub output: Option<PathBuf>,
    /// Spectrum parts: the parts are separate records (each closes its own residue)
    /// and their spectra are summed, instead of pieces of one record joined in order.
    #[arg(long)]
    pub separate: bool,
    /// Spectrum parts: how the residue of each merged record is counted [default: the
    /// rule the parts were counted with].
    #[arg(long, value_enum)]
    pub residue: Option<super::count::ResidueArg>,
    /// Spectrum parts: also write the merged spectrum part (JSON), to merge further.
    #[arg(long, value_name = "PART.json")]
    pub spectrum_out: Option<PathBuf>,
    /// Spectrum parts: also write each channel's statistics as CSV.
    #[arg(long, value_name = "FILE")]
    pub stats: Option<PathBuf>,
    /// Spectrum parts: also write the range histogram as SVG (`{channel}` as for count).
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Spectrum parts: also write the range-mean matrix as an SVG heat map.
    #[arg(long, value_name = "FILE")]
    pub matrix_svg: Option<PathBuf>,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
}

pub(super) fn run(a: &MergeArgs) -> Result<i32, Error> {
    if a.parts
        .iter()
        .any(|p| crate::histories::part::looks_like_part(p))
    {
        return super::merge_spectra::run(a);
    }
    let spectral = [
        (a.separate, "--separate"),
        (a.residue.is_some(), "--residue"),
        (a.spectrum_out.is_some(), "--spectrum-out"),
        (a.stats.is_some(), "--stats"),
        (a.svg.is_some(), "--svg"),
        (a.matrix_svg.is_some(), "--matrix-svg"),
    ];
    if let Some((_, flag)) = spectral.iter().find(|(on, _)| *on) {
        return Err(Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::InvalidValue,
                crate::error::Location::file(&a.parts[0]),
                format!("{flag} applies to spectrum parts; these are results models"),
            )
            .hint("give the parts written by `seamlife count --spectrum-out`, or drop the option"),
        ));
    }
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
