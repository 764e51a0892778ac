//! The command line. `main.rs` only calls [`main`]; everything here is reachable from
//! tests through the binary.

use std::io::Write;
use std::path::{Path, PathBuf};

use clap::{Args, Parser, Subcommand};

use crate::catalogue::{Component, Family, Library};
use crate::error::{Error, EXIT_BAD_INPUT, EXIT_FAIL, EXIT_PASS};
use crate::results::{Results, Status, CAUTION_LINE};

#[derive(Parser, Debug)]
#[command(
    name = "seamlife",
    version,
    about = "Fatigue assessment of welded steel details by the nominal-stress (detail category) method",
    after_help = "Exit codes: 0 all details pass, 1 some detail fails or lies outside the method, 2 bad input, 3 internal error or missing tool.\n\nThe governing code, the project specification and review by a licensed/chartered engineer prevail over this tool's output."
)]
pub struct Cli {
    /// Folder of curve-family files that replace or add to the built-in families.
    #[arg(
        long,
        global = true,
        env = "SEAMLIFE_JOINT_CLASSES",
        value_name = "DIR"
    )]
    pub joint_classes: Option<PathBuf>,

    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Assess every detail of a project and print a summary table.
    Assess(AssessArgs),
    /// Assess a project and write the PDF calculation package (needs typst).
    Report(ReportArgs),
    /// Rainflow-count a stress or strain time series (CSV) into a range-mean spectrum.
    Count(CountArgs),
    /// Check a project file without assessing it.
    Lint {
        /// Project file (YAML).
        file: PathBuf,
    },
    /// List curve families, or the categories and catalogue of one family.
    Classes {
        /// Family id, e.g. en1993-1-9.
        family: Option<String>,
    },
    /// Write a starter project into a new folder.
    New {
        /// Folder to create (it must not hold a project.yaml yet).
        dir: PathBuf,
    },
}

#[derive(Args, Debug)]
pub struct AssessArgs {
    /// Project file (YAML).
    pub file: PathBuf,
    /// Write the results model as JSON instead of the table.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Write one CSV row per detail instead of the table.
    #[arg(long)]
    pub csv: bool,
    /// Write to this file instead of standard output (written whole or not at all).
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

#[derive(Args, Debug)]
pub struct ReportArgs {
    /// Project file (YAML).
    pub file: PathBuf,
    /// Output PDF [default: <reference>-rev<revision>-fatigue.pdf].
    #[arg(short, long, value_name = "OUT.pdf")]
    pub output: Option<PathBuf>,
    /// Folder of templates replacing the built-in ones by file name (a firm's title block).
    #[arg(long, value_name = "DIR")]
    pub templates: Option<PathBuf>,
    /// Keep the generated Typst source and plots in <OUT>-typst/ beside the PDF.
    #[arg(long)]
    pub keep_source: bool,
    /// Write PDF/A-2b.
    #[arg(long)]
    pub pdf_a: bool,
    /// The typst program [default: `typst` on PATH].
    #[arg(long, env = "SEAMLIFE_TYPST", value_name = "PATH")]
    pub typst: Option<PathBuf>,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum UnitArg {
    /// Stress in MPa.
    Mpa,
    /// Strain in µε (needs --modulus-mpa).
    Microstrain,
}

#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum ResidueArg {
    /// The record repeats in service: close the residue by re-feeding it once.
    Repeated,
    /// Count the residue as half cycles (ASTM E1049-85 as written).
    HalfCycles,
}

#[derive(Args, Debug)]
pub struct CountArgs {
    /// Time-series file (CSV, comma separated).
    pub file: PathBuf,
    /// Column: header name, or 1-based column number.
    #[arg(long)]
    pub column: String,
    /// The first line holds data, not column names.
    #[arg(long)]
    pub no_header: bool,
    /// What the values are.
    #[arg(long, value_enum, default_value = "mpa")]
    pub unit: UnitArg,
    /// Young's modulus for strain records, MPa (e.g. 210000 for steel).
    #[arg(long)]
    pub modulus_mpa: Option<f64>,
    /// Factor applied to every value.
    #[arg(long, default_value_t = 1.0)]
    pub scale: f64,
    /// Hysteresis gate, MPa: smaller ranges are removed before counting.
    #[arg(long, default_value_t = 0.0)]
    pub gate_mpa: f64,
    /// Residue handling.
    #[arg(long, value_enum, default_value = "repeated")]
    pub residue: ResidueArg,
    /// Range bin width, MPa.
    #[arg(long, conflicts_with = "bins")]
    pub bin_width_mpa: Option<f64>,
    /// Largest number of range bins (widths are powers of two in MPa) [default: 64].
    #[arg(long)]
    pub bins: Option<usize>,
    /// Largest number of mean bins.
    #[arg(long, default_value_t = 16)]
    pub mean_bins: usize,
    /// Write the spectrum CSV here instead of standard output.
    #[arg(short, long, value_name = "FILE")]
    pub output: Option<PathBuf>,
    /// Also write the range histogram as SVG.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Also write the range-mean matrix as an SVG heat map.
    #[arg(long, value_name = "FILE")]
    pub matrix_svg: Option<PathBuf>,
}

/// Parse arguments, run, print errors, and return the process exit code.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() {
                EXIT_BAD_INPUT
            } else {
                EXIT_PASS
            };
            let _ = e.print();
            return code;
        }
    };
    match run(&cli) {
        Ok(code) => code,
        Err(e) => {
            report_error(&e);
            e.exit_code()
        }
    }
}

/// Print an error with its location and hint to standard error.
pub fn report_error(e: &Error) {
    let mut err = std::io::stderr().lock();
    let inputs = e.input_errors();
    if inputs.is_empty() {
        let _ = writeln!(err, "error: {e}");
        if let Some(h) = e.hint() {
            let _ = writeln!(err, "  hint: {h}");
        }
    } else {
        for ie in &inputs {
            let _ = writeln!(err, "error: {ie}");
            if let Some(h) = &ie.hint {
                let _ = writeln!(err, "  hint: {h}");
            }
        }
        if inputs.len() > 1 {
            let _ = writeln!(
                err,
                "{} problems found; nothing was assessed.",
                inputs.len()
            );
        }
    }
}

pub fn run(cli: &Cli) -> Result<i32, Error> {
    let library = Library::load(cli.joint_classes.as_deref())?;
    match &cli.command {
        Command::Assess(a) => assess(a, &library),
        Command::Report(a) => report(a, &library),
        Command::Count(a) => count(a),
        Command::Lint { file } => lint(file, &library),
        Command::Classes { family } => classes(family.as_deref(), &library),
        Command::New { dir } => new_project(dir, &library),
    }
}

/// The exit code for a set of results.
pub fn exit_code_for(r: &Results) -> i32 {
    if r.details.iter().all(|d| d.status == Status::Pass) {
        EXIT_PASS
    } else {
        EXIT_FAIL
    }
}

fn assess(a: &AssessArgs, library: &Library) -> Result<i32, Error> {
    let results = crate::run_project(&a.file, library)?;
    let text = if a.json {
        let mut s = serde_json::to_string_pretty(&results)
            .map_err(|e| Error::Internal(format!("cannot serialise results: {e}")))?;
        s.push('\n');
        s
    } else if a.csv {
        csv_summary(&results)?
    } else {
        table(&results)
    };
    match &a.output {
        Some(path) => write_atomic(path, text.as_bytes())?,
        None => {
            let mut out = std::io::stdout().lock();
            let _ = out.write_all(text.as_bytes());
        }
    }
    if a.json || a.csv || a.output.is_some() {
        eprintln!("{CAUTION_LINE}");
    }
    Ok(exit_code_for(&results))
}

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
        "{} {} rev {} | family {} | design life {} years | γFf {} γMf {} D_lim {}\n\n",
        r.project.reference,
        r.project.title,
        r.project.revision,
        r.family.id,
        r.basis.design_life_years,
        r.basis.gamma_ff.value,
        r.basis.gamma_mf.value,
        r.basis.damage_limit.value
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

/// One CSV row per detail.
pub fn csv_summary(r: &Results) -> Result<String, Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let e = |e: csv::Error| Error::Internal(format!("csv: {e}"));
    w.write_record([
        "id",
        "location",
        "status",
        "utilisation",
        "governing_check",
        "damage",
        "damage_limit",
        "life_years",
        "reserve_factor",
        "required_category_mpa",
        "normal_category_mpa",
        "normal_equivalent_range_mpa",
        "shear_category_mpa",
        "shear_equivalent_range_mpa",
        "warnings",
    ])
    .map_err(e)?;
    let opt = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
    for d in &r.details {
        let comp = |name: &str| d.components.iter().find(|c| c.component == name);
        w.write_record([
            d.id.clone(),
            d.location.clone(),
            d.status.as_str().to_string(),
            format!("{}", d.utilisation),
            d.governing_check.clone(),
            format!("{}", d.damage),
            format!("{}", d.damage_limit),
            opt(d.life_years),
            opt(d.reserve_factor),
            opt(d.required_category),
            opt(comp("normal").map(|c| c.category_mpa)),
            opt(comp("normal").map(|c| c.equivalent_range_mpa)),
            opt(comp("shear").map(|c| c.category_mpa)),
            opt(comp("shear").map(|c| c.equivalent_range_mpa)),
            d.warnings
                .iter()
                .map(|w| w.code.clone())
                .collect::<Vec<_>>()
                .join(";"),
        ])
        .map_err(e)?;
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::Internal(format!("csv: {e}")))?;
    String::from_utf8(bytes).map_err(|e| Error::Internal(format!("csv: {e}")))
}

fn report(a: &ReportArgs, library: &Library) -> Result<i32, Error> {
    let results = crate::run_project(&a.file, library)?;
    let opts = crate::report::ReportOptions {
        output: a.output.clone(),
        templates: a.templates.clone(),
        keep_source: a.keep_source,
        pdf_a: a.pdf_a,
        typst: a.typst.clone(),
        creation_timestamp: None,
    };
    let out = crate::report::write_report(&results, &opts)?;
    let s = &results.summary;
    println!(
        "wrote {} ({} details: {} pass, {} fail, {} outside the method)",
        out.display(),
        s.details,
        s.passed,
        s.failed,
        s.outside_method
    );
    println!("{CAUTION_LINE}");
    Ok(exit_code_for(&results))
}

fn count(a: &CountArgs) -> Result<i32, Error> {
    use crate::error::{InputError, InputErrorKind, Location};
    use crate::input::SeriesUnitInput;
    let bad = |msg: String, hint: &str| {
        Error::Input(
            InputError::new(InputErrorKind::InvalidValue, Location::file(&a.file), msg).hint(hint),
        )
    };
    let unit = match (a.unit, a.modulus_mpa) {
        (UnitArg::Mpa, _) => crate::series::SeriesUnit::Mpa,
        (UnitArg::Microstrain, Some(e)) if e.is_finite() && e > 0.0 => {
            crate::series::SeriesUnit::Microstrain { modulus_mpa: e }
        }
        (UnitArg::Microstrain, _) => {
            return Err(bad(
                "a strain record needs a positive --modulus-mpa".into(),
                "e.g. --modulus-mpa 210000 for steel",
            ))
        }
    };
    if !(a.scale.is_finite() && a.scale > 0.0) {
        return Err(bad(
            format!("--scale must be positive, got {}", a.scale),
            "give a positive factor",
        ));
    }
    if !(a.gate_mpa.is_finite() && a.gate_mpa >= 0.0) {
        return Err(bad(
            format!("--gate-mpa must be zero or positive, got {}", a.gate_mpa),
            "give 0 for no gate",
        ));
    }
    let column = match a.column.parse::<usize>() {
        Ok(0) => {
            return Err(bad(
                "column numbers start at 1".into(),
                "use 1 for the first column",
            ))
        }
        Ok(i) => crate::series::ColumnRef::Index(i),
        Err(_) => crate::series::ColumnRef::Name(a.column.clone()),
    };
    let spec = crate::series::SeriesSpec {
        path: a.file.clone(),
        column,
        has_header: !a.no_header,
        unit,
        scale: a.scale,
    };
    let mode = match a.residue {
        ResidueArg::Repeated => crate::rainflow::ResidueMode::Repeated,
        ResidueArg::HalfCycles => crate::rainflow::ResidueMode::HalfCycles,
    };
    let range = match (a.bin_width_mpa, a.bins) {
        (Some(w), _) => crate::spectrum::BinRule::Width(w),
        (None, Some(n)) => crate::spectrum::BinRule::MaxBins(n),
        (None, None) => {
            crate::spectrum::BinRule::MaxBins(crate::histories::DEFAULT_SERIES_BINS as usize)
        }
    };
    let opts = crate::series::CountOptions {
        gate_mpa: a.gate_mpa,
        mode,
        bins: crate::spectrum::SpectrumSpec {
            range,
            mean: crate::spectrum::BinRule::MaxBins(a.mean_bins),
        },
    };
    let cs = crate::series::count_series(&spec, &opts).map_err(|e| {
        Error::Input(
            InputError::new(
                InputErrorKind::Series,
                Location::file(&a.file),
                e.to_string(),
            )
            .hint(crate::histories::series_hint(&e)),
        )
    })?;
    let rec = crate::histories::counted_record(
        cs,
        crate::histories::RecordLabels {
            event: "record".into(),
            file: a
                .file
                .file_name()
                .map(|f| f.to_string_lossy().into_owned())
                .unwrap_or_default(),
            column: a.column.clone(),
            unit: match a.unit {
                UnitArg::Mpa => SeriesUnitInput::Mpa,
                UnitArg::Microstrain => SeriesUnitInput::Microstrain,
            },
            scale: a.scale,
            modulus_mpa: a.modulus_mpa,
            gate_mpa: a.gate_mpa,
            mode,
            repeats_per_year: 1.0,
        },
    );
    let mut w = csv::Writer::from_writer(Vec::new());
    let e = |e: csv::Error| Error::Internal(format!("csv: {e}"));
    w.write_record([
        "range_mpa",
        "mean_mpa",
        "cycles",
        "range_lo_mpa",
        "range_hi_mpa",
        "mean_lo_mpa",
        "mean_hi_mpa",
    ])
    .map_err(e)?;
    for c in &rec.matrix {
        w.write_record([
            format!("{}", c.max_range_mpa),
            format!("{}", c.mean_mpa),
            format!("{}", c.cycles),
            format!("{}", c.range_lo_mpa),
            format!("{}", c.range_hi_mpa),
            format!("{}", c.mean_lo_mpa),
            format!("{}", c.mean_hi_mpa),
        ])
        .map_err(e)?;
    }
    let bytes = w
        .into_inner()
        .map_err(|e| Error::Internal(format!("csv: {e}")))?;
    if let Some(p) = &a.svg {
        write_atomic(p, crate::report::plots::histogram(&rec).as_bytes())?;
    }
    if let Some(p) = &a.matrix_svg {
        write_atomic(p, crate::report::plots::matrix_heatmap(&rec).as_bytes())?;
    }
    match &a.output {
        Some(p) => write_atomic(p, &bytes)?,
        None => {
            let _ = std::io::stdout().lock().write_all(&bytes);
        }
    }
    eprintln!(
        "{}: {} samples, {} reversals, {} full and {} half cycles ({} residue), gate {} MPa, range bins {} MPa, mean bins {} MPa{}",
        a.file.display(),
        rec.samples,
        rec.reversals,
        rec.full_cycles,
        rec.half_cycles,
        rec.residue,
        rec.gate_mpa,
        rec.bin_width_mpa,
        rec.mean_bin_width_mpa,
        if rec.constant { "; the signal is constant: no cycles, no damage" } else { "" }
    );
    Ok(EXIT_PASS)
}

fn lint(file: &Path, library: &Library) -> Result<i32, Error> {
    let project = crate::input::load_project(file, library)?;
    println!(
        "ok: {} — {} details, family {}, schema version {}",
        file.display(),
        project.file.details.len(),
        project.file.basis.family,
        project.file.seamlife
    );
    Ok(EXIT_PASS)
}

fn classes(family: Option<&str>, library: &Library) -> Result<i32, Error> {
    let mut out = String::new();
    match family {
        None => {
            out.push_str("Curve families (use `seamlife classes ID` for one):\n\n");
            for f in &library.families {
                out.push_str(&format!(
                    "  {:<12} {} — {} ({} catalogue entries, data {})\n",
                    f.id,
                    f.title,
                    f.edition,
                    f.catalogue.len(),
                    f.data_version
                ));
            }
        }
        Some(id) => {
            let Some(f) = library.get(id) else {
                let ids = library.ids();
                let hint = match crate::input::suggest(id, ids.iter().copied()) {
                    Some(n) => format!("did you mean `{n}`?"),
                    None => format!("known families: {}", ids.join(", ")),
                };
                return Err(Error::Input(
                    crate::error::InputError::new(
                        crate::error::InputErrorKind::UnknownFamily,
                        crate::error::Location::file(Path::new("<command line>")),
                        format!("unknown curve family `{id}`"),
                    )
                    .hint(hint),
                ));
            };
            family_listing(f, &mut out);
        }
    }
    out.push('\n');
    out.push_str(CAUTION_LINE);
    out.push('\n');
    print!("{out}");
    Ok(EXIT_PASS)
}

fn family_listing(f: &Family, out: &mut String) {
    out.push_str(&format!("{} — {}\n{}\n", f.id, f.title, f.edition));
    out.push_str(&format!(
        "data version {}: {}\n\n",
        f.data_version, f.transcription_note
    ));
    for c in [Component::Normal, Component::Shear] {
        let def = f.curves.get(c);
        out.push_str(&format!(
            "{} stress categories {} (MPa at {:.0e} cycles): {}\n",
            c.as_str(),
            f.category_symbol.get(c),
            f.reference_cycles,
            def.categories_mpa
                .iter()
                .map(|x| format!("{x}"))
                .collect::<Vec<_>>()
                .join(", ")
        ));
        for (name, v) in &def.variants {
            out.push_str(&format!("  curve variant `{name}`: {}\n", v.name));
        }
    }
    out.push_str("\nmean-stress cases:\n");
    for (k, c) in &f.mean_stress.cases {
        out.push_str(&format!("  {k:<18} {}\n", c.name));
    }
    out.push_str("\ncatalogue:\n");
    let kw = f
        .catalogue
        .iter()
        .map(|e| e.key.len())
        .max()
        .unwrap_or(3)
        .max(3);
    out.push_str(&format!(
        "  {:<kw$}  {:>6}  {:>6}  {:>4}  description [reference]\n",
        "key", "normal", "shear", "n"
    ));
    for e in &f.catalogue {
        let o = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_else(|| "-".into());
        out.push_str(&format!(
            "  {:<kw$}  {:>6}  {:>6}  {:>4}  {} [{}]\n",
            e.key,
            o(e.normal_category),
            o(e.shear_category),
            o(e.thickness_exponent),
            e.description,
            e.reference
        ));
    }
}

fn new_project(dir: &Path, library: &Library) -> Result<i32, Error> {
    let target = dir.join("project.yaml");
    if target.exists() {
        return Err(Error::Input(
            crate::error::InputError::new(
                crate::error::InputErrorKind::Io,
                crate::error::Location::file(&target),
                "already exists; seamlife new will not overwrite it",
            )
            .hint("choose a new folder"),
        ));
    }
    std::fs::create_dir_all(dir).map_err(|source| Error::Output {
        path: dir.to_path_buf(),
        source,
    })?;
    write_atomic(&target, crate::starter::STARTER_PROJECT.as_bytes())?;
    // The starter must pass its own check.
    crate::input::load_project(&target, library)
        .map_err(|e| Error::Internal(format!("starter project does not pass lint: {e}")))?;
    println!(
        "wrote {}; edit it, then run `seamlife assess {}`",
        target.display(),
        target.display()
    );
    Ok(EXIT_PASS)
}
