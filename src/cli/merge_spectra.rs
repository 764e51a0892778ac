//! `seamlife merge` of spectrum parts: the pieces of one record joined in the order
//! given (or, with `--separate`, separate records summed), the residue closed once
//! per record, and the same spectrum CSV, statistics and figures as `count` writes
//! for the whole record; optionally the merged part, to merge further.

use std::path::PathBuf;

use super::count::{check_distinct, figures, spectrum_csv, summary_line, write_all};
use super::merge::MergeArgs;
use super::output::print_err;
use crate::error::{Error, InputError, InputErrorKind, Location, EXIT_PASS};
use crate::files::text::one_line;
use crate::files::write::{FileId, Inputs};
use crate::histories::part::{finish_records, merge_parts, MergedParts, ReadPart};
use crate::histories::rainflow::ResidueMode;
use crate::histories::{counted_record, RecordLabels};
use crate::results::CountedRecord;

pub(super) fn run(a: &MergeArgs) -> Result<i32, Error> {
    let mut inputs = Inputs::new();
    for (i, p) in a.parts.iter().enumerate() {
        let same = |q: &PathBuf| {
            q == p || matches!((FileId::of(q), FileId::of(p)), (Some(x), Some(y)) if x == y)
        };
        if let Some(q) = a.parts[..i].iter().find(|q| same(q)) {
            return Err(Error::Input(
                InputError::new(
                    InputErrorKind::DuplicateId,
                    Location::file(p),
                    format!("this part is given twice (also as {})", q.display()),
                )
                .hint("give each part once"),
            ));
        }
        inputs.add(p, "a spectrum part being merged");
    }
    let about = &a.parts[0];
    // Refuse bad outputs before reading the parts.
    check_distinct(
        about,
        &[&a.output, &a.stats, &a.svg, &a.matrix_svg, &a.spectrum_out],
        &inputs,
    )?;
    let progress = super::progress::Progress::new(a.parts.len() as u64, "reading parts", a.quiet);
    let mut parts = Vec::with_capacity(a.parts.len());
    for (k, p) in a.parts.iter().enumerate() {
        parts.push(ReadPart::read(p)?);
        progress.set(k as u64 + 1);
    }
    progress.finish();
    let override_mode = a.residue.map(super::count::residue_mode);
    let merged = merge_parts(parts, a.separate, override_mode)?;
    let recs = records(&merged)?;
    let source = source_label(&merged);
    let mut files = figures(&recs, &a.svg, &a.matrix_svg, &a.stats)?;
    let csv = spectrum_csv(&recs, recs.len() > 1)?;
    if let Some(p) = &a.output {
        files.push((p.clone(), csv.clone()));
    }
    if let Some(p) = &a.spectrum_out {
        let mut json = serde_json::to_vec_pretty(&merged.part)
            .map_err(|e| Error::Internal(format!("spectrum part: {e}")))?;
        json.push(b'\n');
        files.push((p.clone(), json));
    }
    let stdout = a.output.is_none().then_some(&csv[..]);
    write_all(about, &files, stdout, &inputs)?;
    print_err(&format!(
        "merged {} spectrum parts {}: {source}, residue {}\n",
        a.parts.len(),
        if a.separate {
            "as separate records"
        } else {
            "as one record"
        },
        match merged.settings.residue {
            ResidueMode::Repeated => "repeated",
            ResidueMode::HalfCycles => "as half cycles",
        }
    ));
    for (_, rec) in &recs {
        if let Some(w) = crate::histories::gate_note(rec) {
            print_err(&format!("warning: {w}\n"));
        }
        print_err(&format!("{}\n", summary_line(&source, rec)));
    }
    Ok(EXIT_PASS)
}

/// Each channel's merged count as the results model describes a counted record.
fn records(m: &MergedParts) -> Result<Vec<(String, CountedRecord)>, Error> {
    let s = &m.settings;
    let series = finish_records(m.records.clone(), s.residue)?;
    let file = source_label(m);
    Ok(m.part
        .channels
        .iter()
        .zip(series)
        .map(|(name, cs)| {
            let rec = counted_record(
                cs,
                RecordLabels {
                    event: "record".into(),
                    file: file.clone(),
                    column: name.clone(),
                    unit: s.unit,
                    scale: s.scale,
                    modulus_mpa: s.modulus_mpa,
                    gate_mpa: s.gate_mpa,
                    mode: s.residue,
                    repeats_per_year: 1.0,
                },
            );
            (name.clone(), rec)
        })
        .collect())
}

/// What the merged spectrum is of: the files of one record, or how many records.
fn source_label(m: &MergedParts) -> String {
    let files: Vec<&str> = m
        .part
        .records
        .iter()
        .flat_map(|r| r.files.iter().map(String::as_str))
        .collect();
    let list = match files.as_slice() {
        [] => String::new(),
        [one] => one.to_string(),
        [x, y] => format!("{x}, {y}"),
        [first, .., last] => format!("{first} … {last} ({} files)", files.len()),
    };
    let list = one_line(&list).into_owned();
    if m.part.records.len() > 1 {
        format!("{} records ({list})", m.part.records.len())
    } else {
        list
    }
}
