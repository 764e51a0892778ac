//! `seamlife fit`: derive a detail category from fatigue tests.

use std::path::{Path, PathBuf};

use clap::Args;

use super::output::{print_err, print_text, write_json};
use crate::catalogue::{Component, Library};
use crate::error::{Error, InputError, InputErrorKind, Location, EXIT_FAIL, EXIT_PASS};
use crate::fit::{self, FitOptions, FitResults, Method};
use crate::report::templates::{general, sci_text};

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum MethodArg {
    /// Lower tolerance limit: 95 % survival with 75 % confidence (non-central t).
    Tolerance,
    /// Lower 95 % prediction limit (EN 1990 Annex D form).
    Prediction,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum StressArg {
    /// Normal stress Δσ.
    Normal,
    /// Shear stress Δτ.
    Shear,
}

#[derive(Args, Debug)]
pub struct FitArgs {
    /// Test results (CSV: specimen, range_mpa, cycles, runout [, thickness_mm, stress_ratio, note]).
    pub file: PathBuf,
    /// Curve family whose category list and curve the result is read against.
    #[arg(long, default_value = "en1993-1-9", value_name = "ID")]
    pub family: String,
    /// Stress component the tests measured.
    #[arg(long, value_enum, default_value = "normal")]
    pub stress: StressArg,
    /// Fixed slope m [default: the first slope of the family's curve, 3 for normal stress].
    #[arg(long, value_name = "M")]
    pub slope: Option<f64>,
    /// How the characteristic curve is placed.
    #[arg(long, value_enum, default_value = "tolerance")]
    pub method: MethodArg,
    /// Also fit with run-outs as censored results (maximum likelihood); the category then
    /// rests on that fit.
    #[arg(long)]
    pub censored: bool,
    /// Print the results model as JSON instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Write a family-extension file (the base family plus an entry for the tested detail).
    #[arg(short, long, value_name = "EXT.yaml")]
    pub output: Option<PathBuf>,
    /// Catalogue key of the new entry [default: tests-<file stem>].
    #[arg(long, value_name = "KEY")]
    pub key: Option<String>,
    /// Short description of the tested detail, for the catalogue entry.
    #[arg(long, value_name = "TEXT")]
    pub description: Option<String>,
    /// Date of the evaluation, YYYY-MM-DD [default: today, or SOURCE_DATE_EPOCH's day].
    #[arg(long, value_name = "DATE")]
    pub date: Option<String>,
    /// Write the test-evaluation sheet as PDF (needs typst).
    #[arg(long, value_name = "OUT.pdf")]
    pub pdf: Option<PathBuf>,
    /// The typst program [default: `typst` on PATH].
    #[arg(long, env = "SEAMLIFE_TYPST", value_name = "PATH")]
    pub typst: Option<PathBuf>,
}

fn bad_option(option: &str, msg: String, hint: &str) -> Error {
    Error::Input(
        InputError::new(
            InputErrorKind::InvalidValue,
            Location::file(Path::new(option)),
            msg,
        )
        .hint(hint),
    )
}

/// Same file on disk (device and inode), for paths that both exist.
fn same_file(a: &Path, b: &Path) -> bool {
    match (std::fs::metadata(a), std::fs::metadata(b)) {
        #[cfg(unix)]
        (Ok(x), Ok(y)) => {
            use std::os::unix::fs::MetadataExt;
            x.dev() == y.dev() && x.ino() == y.ino()
        }
        #[cfg(not(unix))]
        (Ok(_), Ok(_)) => a.canonicalize().ok() == b.canonicalize().ok(),
        _ => false,
    }
}

/// An output may be a new file or replace a regular file, never an input, a folder
/// or a device.
fn check_output(option: &str, out: &Path, inputs: &[(&str, &Path)]) -> Result<(), Error> {
    let refuse = |msg: String, hint: &str| {
        Error::Input(
            InputError::new(InputErrorKind::InvalidValue, Location::file(out), msg)
                .hint(format!("{hint} ({option})")),
        )
    };
    if let Ok(meta) = std::fs::metadata(out) {
        if !meta.is_file() {
            return Err(refuse(
                format!(
                    "is {}; an output must be a file",
                    fit::describe_file_type(&meta)
                ),
                "give the path of a new or replaceable file",
            ));
        }
        for (what, p) in inputs {
            if same_file(out, p) {
                return Err(refuse(
                    format!("is the {what}; an output never overwrites an input"),
                    "write the output to another file",
                ));
            }
        }
    }
    if out.file_name().is_none() {
        return Err(refuse(
            "names no file".into(),
            "give the path of a file, e.g. ext.yaml",
        ));
    }
    Ok(())
}

pub(super) fn run(a: &FitArgs, library: &Library) -> Result<i32, Error> {
    let family = library.get(&a.family).ok_or_else(|| {
        let ids = library.ids();
        let mut hint = format!("the families are {}", ids.join(", "));
        if let Some(s) = crate::files::suggest(&a.family, ids.iter().copied()) {
            hint = format!("did you mean `{s}`? ({hint})");
        }
        bad_option(
            "--family",
            format!("unknown curve family `{}`", a.family),
            &hint,
        )
    })?;
    if let Some(m) = a.slope {
        if !(m.is_finite() && m > 0.0 && m <= 50.0) {
            return Err(bad_option(
                "--slope",
                format!("the fixed slope must be a positive number up to 50, got {m}"),
                "m = 3 for normal stress and m = 5 for shear in EN 1993-1-9 and IIW",
            ));
        }
    }
    let date = match &a.date {
        Some(d) if crate::input::valid_iso_date(d) => d.clone(),
        Some(d) => {
            return Err(bad_option(
                "--date",
                format!("`{}` is not a date YYYY-MM-DD", fit::input::echo(d)),
                "e.g. --date 2026-12-02",
            ))
        }
        None => fit::today(),
    };
    let key = match &a.key {
        Some(k) => k.clone(),
        None => fit::extension::default_key(
            &a.file
                .file_name()
                .map(|f| f.to_string_lossy().into_owned())
                .unwrap_or_default(),
        ),
    };
    let base_origin = PathBuf::from(&family.origin);
    let mut inputs: Vec<(&str, &Path)> = vec![("test file", a.file.as_path())];
    if !family.origin.starts_with("<embedded>") {
        inputs.push(("base family file", base_origin.as_path()));
    }
    for (opt, out) in [("-o", &a.output), ("--pdf", &a.pdf)] {
        if let Some(p) = out {
            check_output(opt, p, &inputs)?;
        }
    }
    let mut guarded = crate::files::write::Inputs::new();
    for (what, p) in &inputs {
        guarded.add(
            p,
            if *what == "test file" {
                "the test file"
            } else {
                "the base family file"
            },
        );
    }
    for p in [&a.output, &a.pdf].into_iter().flatten() {
        crate::files::write::check_target(p, &guarded)?;
    }
    if let (Some(o), Some(p)) = (&a.output, &a.pdf) {
        if o == p || same_file(o, p) {
            return Err(bad_option(
                "--pdf",
                "the PDF and the family extension name the same file".into(),
                "give two different files",
            ));
        }
    }
    let set = fit::input::read_tests(&a.file)?;
    let opts = FitOptions {
        component: match a.stress {
            StressArg::Normal => Component::Normal,
            StressArg::Shear => Component::Shear,
        },
        fixed_slope_m: a.slope,
        method: match a.method {
            MethodArg::Tolerance => Method::Tolerance,
            MethodArg::Prediction => Method::Prediction,
        },
        censored: a.censored,
        date,
    };
    let results = fit::evaluate(&set, family, &opts)?;
    // Build the extension before writing anything, so that a bad key leaves no file.
    let ext = match &a.output {
        Some(_) if results.category.category_mpa.is_some() => Some(fit::extension::extension(
            family,
            &results,
            &key,
            a.description.as_deref().unwrap_or(""),
        )?),
        _ => None,
    };
    if let Some(pdf) = &a.pdf {
        crate::report::fit_sheet::write_fit_sheet(&results, pdf, a.typst.as_deref())?;
    }
    if let (Some(p), Some((fam, text))) = (&a.output, &ext) {
        crate::files::write::write_output(p, text.as_bytes(), &guarded)?;
        print_err(&format!(
            "wrote {}: family {} with entry `{key}` ({} category {} MPa)\n",
            p.display(),
            fam.id,
            results.family.component,
            general(results.category.category_mpa.unwrap_or(0.0))
        ));
    }
    if let Some(pdf) = &a.pdf {
        print_err(&format!("wrote {}\n", pdf.display()));
    }
    if a.json {
        write_json(std::io::stdout().lock(), &results).map_err(Error::Stdout)?;
    } else {
        print_text(&fit_table(&results))?;
    }
    if results.category.category_mpa.is_none() {
        if a.output.is_some() {
            print_err("no family extension written: the tests support no listed category\n");
        }
        return Ok(EXIT_FAIL);
    }
    Ok(EXIT_PASS)
}

fn opt(v: Option<f64>, d: usize) -> String {
    v.map_or_else(|| "—".into(), |x| format!("{x:.d$}"))
}

/// Rows of text as aligned columns; `right[j]` right-aligns column j.
fn columns(rows: &[Vec<String>], right: &[bool]) -> String {
    let n = rows.iter().map(Vec::len).max().unwrap_or(0);
    let mut widths = vec![0usize; n];
    for r in rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out = String::new();
    for (i, r) in rows.iter().enumerate() {
        let mut line = String::new();
        for (j, c) in r.iter().enumerate() {
            let pad = " ".repeat(widths[j] - c.chars().count());
            if right.get(j).copied().unwrap_or(false) && i > 0 {
                line.push_str(&pad);
                line.push_str(c);
            } else {
                line.push_str(c);
                line.push_str(&pad);
            }
            line.push_str("  ");
        }
        out.push_str(line.trim_end());
        out.push('\n');
        if i == 0 {
            out.push_str(&"-".repeat(widths.iter().sum::<usize>() + 2 * (n - 1)));
            out.push('\n');
        }
    }
    out
}

/// The readable account printed by `fit`.
pub fn fit_table(r: &FitResults) -> String {
    let f = &r.family;
    let mut out = format!(
        "{}: {} specimens, {} failures, {} run-outs (SHA-256 {})\nfamily {} ({} stress, {} at {} cycles), evaluated {}\n\n",
        r.input.file_name,
        r.specimens.len(),
        r.failures,
        r.runouts,
        &r.input.sha256[..r.input.sha256.len().min(12)],
        f.id,
        f.component,
        f.category_symbol,
        sci_text(f.reference_cycles, 0),
        r.date
    );
    let mut rows = vec![vec![
        "specimen".to_string(),
        format!("{} MPa", f.range_symbol),
        "N cycles".into(),
        "result".into(),
        "t mm".into(),
        "R".into(),
        "residual".into(),
    ]];
    for s in &r.specimens {
        rows.push(vec![
            fit::input::echo(&s.id).trim_matches('`').to_string(),
            format!("{:.1}", s.range_mpa),
            sci_text(s.cycles, 3),
            if s.runout { "run-out" } else { "failure" }.into(),
            s.thickness_mm.map_or_else(|| "—".into(), general),
            s.stress_ratio.map_or_else(|| "—".into(), general),
            opt(s.residual_log10, 3),
        ]);
    }
    out.push_str(&columns(
        &rows,
        &[false, true, true, false, true, true, true],
    ));
    out.push_str(&format!(
        "\nregression of log10 N on log10 {} — log N = log a − m·log {}\n",
        f.range_symbol, f.range_symbol
    ));
    let mut rows = vec![vec![
        "evaluation".to_string(),
        "m".into(),
        "log a".into(),
        "s".into(),
        "r".into(),
        "n".into(),
        "k".into(),
        format!("mean {} MPa", f.range_symbol),
        format!("{}_k MPa", f.range_symbol),
    ]];
    for e in &r.evaluations {
        let basis = if e.id == r.category.basis { " *" } else { "" };
        rows.push(vec![
            format!("{}{basis}", e.label),
            format!("{:.3}", e.slope_m),
            format!("{:.4}", e.intercept_log10),
            format!("{:.4}", e.std_dev_log10),
            opt(e.correlation, 4),
            e.n.to_string(),
            opt(e.characteristic.as_ref().map(|c| c.factor_k), 3),
            format!("{:.1}", e.mean_range_at_reference_mpa),
            opt(e.characteristic.as_ref().map(|c| c.range_mpa), 1),
        ]);
    }
    out.push_str(&columns(
        &rows,
        &[false, true, true, true, true, true, true, true, true],
    ));
    out.push_str(&format!(
        "ranges at {} cycles; * the evaluation the category rests on\n\n",
        sci_text(f.reference_cycles, 0)
    ));
    out.push_str(&format!("characteristic curve: {}\n", r.method.name));
    out.push_str(&format!("  free slope:  {}\n", r.method.formula_free));
    out.push_str(&format!("  fixed slope: {}\n", r.method.formula_fixed));
    out.push_str(&format!("  source: {}\n", r.method.source));
    out.push_str(&format!("  run-outs: {}\n\n", r.method.runouts));
    match r.category.category_mpa {
        Some(c) => out.push_str(&format!(
            "category supported: {} {} MPa — {} = {:.1} MPa ({})\n",
            f.category_symbol,
            general(c),
            format_args!("{}_k", f.range_symbol),
            r.category.characteristic_range_mpa.unwrap_or(c),
            r.category.rule
        )),
        None => out.push_str(&format!("category supported: none — {}\n", r.category.rule)),
    }
    for w in &r.warnings {
        out.push_str(&format!("warning: {}\n", w.message));
    }
    for n in &r.notes {
        out.push_str(&format!("note: {n}\n"));
    }
    out.push_str(fit::CAUTION_LINE);
    out.push('\n');
    out
}
