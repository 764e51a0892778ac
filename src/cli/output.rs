//! Output writers shared by the commands: atomic files, the results table, CSV rows.

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::results::{Results, CAUTION_LINE};

/// Write a file whole or not at all: a temporary file in the same folder, renamed.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let out_err = |source| Error::Output {
        path: path.to_path_buf(),
        source,
    };
    let mut tmp = tempfile::Builder::new()
        .prefix(".seamlife-")
        .suffix(".part")
        .tempfile_in(&dir)
        .map_err(out_err)?;
    tmp.write_all(bytes).map_err(out_err)?;
    tmp.as_file().sync_all().map_err(out_err)?;
    tmp.persist(path).map_err(|e| out_err(e.error))?;
    Ok(())
}

/// Life in years for a table cell.
pub fn fmt_life(l: Option<f64>) -> String {
    match l {
        None => "no damage".into(),
        Some(y) if y >= 1e6 => format!("{y:.1e}"),
        Some(y) if y >= 100.0 => format!("{y:.0}"),
        Some(y) => format!("{y:.1}"),
    }
}

fn category_cell(d: &crate::results::DetailResult) -> String {
    d.components
        .iter()
        .map(|c| {
            let cat = format!("{}", c.category_mpa);
            if c.component == "shear" {
                format!("τ{cat}")
            } else {
                cat
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}

fn truncate(s: &str, n: usize) -> String {
    if s.chars().count() <= n {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(n - 1).collect();
        t.push('…');
        t
    }
}

/// The readable table printed by `assess`.
pub fn table(r: &Results) -> String {
    let mut rows: Vec<[String; 7]> = vec![[
        "id".into(),
        "location".into(),
        "category MPa".into(),
        "damage".into(),
        "utilisation".into(),
        "life years".into(),
        "status".into(),
    ]];
    for d in &r.details {
        rows.push([
            d.id.clone(),
            truncate(&d.location, 44),
            category_cell(d),
            format!("{:.3}", d.damage),
            format!("{:.3}", d.utilisation),
            fmt_life(d.life_years),
            d.status.as_str().into(),
        ]);
    }
    let mut widths = [0usize; 7];
    for row in &rows {
        for (w, c) in widths.iter_mut().zip(row) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out = String::new();
    out.push_str(&format!(
        "{} {} rev {} | family {} | design life {} years | γFf {} γMf {} D_lim {}{}\n\n",
        r.project.reference,
        r.project.title,
        r.project.revision,
        r.family.id,
        r.basis.design_life_years,
        r.basis.gamma_ff.value,
        r.basis.gamma_mf.value,
        r.basis.damage_limit.value,
        if r.basis.constant_amplitude_damage_limit != r.basis.damage_limit.value
            || r.basis.constant_amplitude_form != r.basis.utilisation_form
        {
            format!(
                " (constant amplitude: {}, D ≤ {})",
                r.basis.constant_amplitude_form, r.basis.constant_amplitude_damage_limit
            )
        } else {
            String::new()
        }
    ));
    for (i, row) in rows.iter().enumerate() {
        let mut line = String::new();
        for (j, (c, w)) in row.iter().zip(widths).enumerate() {
            let pad = w - c.chars().count();
            // numbers right-aligned, text left-aligned
            if (3..=5).contains(&j) && i > 0 {
                line.push_str(&" ".repeat(pad));
                line.push_str(c);
            } else {
                line.push_str(c);
                line.push_str(&" ".repeat(pad));
            }
            line.push_str("  ");
        }
        out.push_str(line.trim_end());
        out.push('\n');
        if i == 0 {
            let total: usize = widths.iter().sum::<usize>() + 2 * 6;
            out.push_str(&"-".repeat(total));
            out.push('\n');
        }
    }
    out.push('\n');
    let s = &r.summary;
    out.push_str(&format!(
        "{} details: {} pass, {} fail, {} outside the method; governing {} at utilisation {:.3}\n",
        s.details,
        s.passed,
        s.failed,
        s.outside_method,
        s.governing_detail.as_deref().unwrap_or("-"),
        s.max_utilisation
    ));
    for d in &r.details {
        for w in &d.warnings {
            out.push_str(&format!("warning: {}: {}\n", d.id, w.message));
        }
    }
    out.push_str(CAUTION_LINE);
    out.push('\n');
    out
}
