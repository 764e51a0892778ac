//! `seamlife count`: rainflow-count one column of a time series into a spectrum.

use std::io::Write;
use std::path::PathBuf;

use clap::Args;

use super::output::{print_data, print_err};
use crate::error::{Error, InputError, InputErrorKind, Location, EXIT_PASS};
use crate::files::short_num;
use crate::files::text::data_num;
use crate::files::write::{check_target, FileId, Inputs, PendingFile};
use crate::histories::rainflow::ResidueMode;
use crate::histories::series::{ColumnRef, CountOptions, SeriesSpec, SeriesUnit};
use crate::histories::spectrum::{BinRule, SpectrumSpec};
use crate::histories::{counted_record, series_hint, RecordLabels, DEFAULT_SERIES_BINS};
use crate::input::SeriesUnitInput;
use crate::input::{MAX_BINS, MAX_MODULUS_MPA, MAX_STRESS_MPA, MIN_BIN_WIDTH_MPA};
use crate::results::CountedRecord;

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

pub(super) fn run(a: &CountArgs) -> Result<i32, Error> {
    let (spec, opts) = count_setup(a)?;
    let mut inputs = Inputs::new();
    inputs.add(&a.file, "the series file being counted");
    // Every output is checked before the count, and none may be another.
    let outs: Vec<&PathBuf> = [&a.output, &a.svg, &a.matrix_svg]
        .into_iter()
        .flatten()
        .collect();
    for (i, p) in outs.iter().enumerate() {
        check_target(p, &inputs)?;
        let same = |q: &&PathBuf| {
            *q == *p || matches!((FileId::of(q), FileId::of(p)), (Some(x), Some(y)) if x == y)
        };
        if outs[..i].iter().any(same) {
            return Err(bad_arg(
                a,
                format!("{} is named for two outputs", p.display()),
                "give -o, --svg and --matrix-svg different file names",
            ));
        }
    }
    let rec = count_record(a, &spec, &opts)?;
    let csv = spectrum_csv(&rec)?;
    let mut pending = Vec::new();
    for (p, bytes) in [
        (
            &a.svg,
            a.svg
                .as_ref()
                .map(|_| crate::report::plots::histogram(&rec).into_bytes()),
        ),
        (
            &a.matrix_svg,
            a.matrix_svg
                .as_ref()
                .map(|_| crate::report::plots::matrix_heatmap(&rec).into_bytes()),
        ),
        (&a.output, a.output.as_ref().map(|_| csv.clone())),
    ] {
        if let (Some(p), Some(bytes)) = (p, bytes) {
            let mut f = PendingFile::new(p, &inputs, ".part")?;
            f.file().write_all(&bytes).map_err(|source| Error::Output {
                path: p.clone(),
                source,
            })?;
            pending.push(f);
        }
    }
    if a.output.is_none() {
        print_data(&csv)?;
    }
    for f in pending {
        f.commit()?;
    }
    if let Some(w) = crate::histories::gate_note(&rec) {
        print_err(&format!("warning: {w}\n"));
    }
    print_err(&format!("{}\n", summary_line(a, &rec)));
    Ok(EXIT_PASS)
}

fn bad_arg(a: &CountArgs, msg: String, hint: &str) -> Error {
    Error::Input(
        InputError::new(InputErrorKind::InvalidValue, Location::file(&a.file), msg).hint(hint),
    )
}

/// Check the options and turn them into the series and counting specifications.
fn count_setup(a: &CountArgs) -> Result<(SeriesSpec, CountOptions), Error> {
    let unit = match (a.unit, a.modulus_mpa) {
        (UnitArg::Mpa, _) => SeriesUnit::Mpa,
        (UnitArg::Microstrain, Some(e)) if e.is_finite() && e > 0.0 && e <= MAX_MODULUS_MPA => {
            SeriesUnit::Microstrain { modulus_mpa: e }
        }
        (UnitArg::Microstrain, _) => {
            return Err(bad_arg(
                a,
                format!(
                    "a strain record needs a positive --modulus-mpa of at most {} MPa",
                    short_num(MAX_MODULUS_MPA)
                ),
                "e.g. --modulus-mpa 210000 for steel",
            ))
        }
    };
    if !(a.scale.is_finite() && a.scale > 0.0) {
        return Err(bad_arg(
            a,
            format!("--scale must be positive, got {}", short_num(a.scale)),
            "give a positive factor",
        ));
    }
    if !(a.gate_mpa.is_finite() && (0.0..=2.0 * MAX_STRESS_MPA).contains(&a.gate_mpa)) {
        return Err(bad_arg(
            a,
            format!(
                "--gate-mpa must be from 0 to {} MPa, got {}",
                short_num(2.0 * MAX_STRESS_MPA),
                short_num(a.gate_mpa)
            ),
            "give 0 for no gate",
        ));
    }
    if let Some(w) = a.bin_width_mpa {
        if !(w.is_finite() && (MIN_BIN_WIDTH_MPA..=2.0 * MAX_STRESS_MPA).contains(&w)) {
            return Err(bad_arg(
                a,
                format!(
                    "--bin-width-mpa must be from {} to {} MPa, got {}",
                    short_num(MIN_BIN_WIDTH_MPA),
                    short_num(2.0 * MAX_STRESS_MPA),
                    short_num(w)
                ),
                "strain gauges resolve about 0.2 MPa; finer bins carry no information",
            ));
        }
    }
    for (flag, v) in [("--bins", a.bins), ("--mean-bins", Some(a.mean_bins))] {
        if v.is_some_and(|n| n > MAX_BINS as usize) {
            return Err(bad_arg(
                a,
                format!(
                    "{flag} is {}; at most {MAX_BINS} are accepted",
                    v.unwrap_or(0)
                ),
                "a figure cannot show more bins than that",
            ));
        }
    }
    let column = match a.column.parse::<usize>() {
        Ok(0) => {
            return Err(bad_arg(
                a,
                "column numbers start at 1".into(),
                "use 1 for the first column",
            ))
        }
        Ok(i) => ColumnRef::Index(i),
        Err(_) => ColumnRef::Name(a.column.clone()),
    };
    let spec = SeriesSpec {
        path: a.file.clone(),
        column,
        has_header: !a.no_header,
        unit,
        scale: a.scale,
    };
    let range = match (a.bin_width_mpa, a.bins) {
        (Some(w), _) => BinRule::Width(w),
        (None, Some(n)) => BinRule::MaxBins(n),
        (None, None) => BinRule::MaxBins(DEFAULT_SERIES_BINS as usize),
    };
    let opts = CountOptions {
        gate_mpa: a.gate_mpa,
        mode: residue_mode(a.residue),
        bins: SpectrumSpec {
            range,
            mean: BinRule::MaxBins(a.mean_bins),
        },
    };
    Ok((spec, opts))
}

fn residue_mode(r: ResidueArg) -> ResidueMode {
    match r {
        ResidueArg::Repeated => ResidueMode::Repeated,
        ResidueArg::HalfCycles => ResidueMode::HalfCycles,
    }
}

/// Count the series and describe it as the results model does.
fn count_record(
    a: &CountArgs,
    spec: &SeriesSpec,
    opts: &CountOptions,
) -> Result<CountedRecord, Error> {
    let cs = crate::histories::series::count_series(spec, opts).map_err(|e| {
        Error::Input(
            InputError::new(
                InputErrorKind::Series,
                Location::file(&a.file),
                e.to_string(),
            )
            .hint(series_hint(&e)),
        )
    })?;
    Ok(counted_record(
        cs,
        RecordLabels {
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
            mode: opts.mode,
            repeats_per_year: 1.0,
        },
    ))
}

/// The range-mean spectrum as CSV: one row per matrix cell.
fn spectrum_csv(rec: &CountedRecord) -> Result<Vec<u8>, Error> {
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
            data_num(c.max_range_mpa),
            data_num(c.mean_mpa),
            data_num(c.cycles),
            data_num(c.range_lo_mpa),
            data_num(c.range_hi_mpa),
            data_num(c.mean_lo_mpa),
            data_num(c.mean_hi_mpa),
        ])
        .map_err(e)?;
    }
    w.into_inner()
        .map_err(|e| Error::Internal(format!("csv: {e}")))
}

/// The one-line account of the count printed on standard error.
fn summary_line(a: &CountArgs, rec: &CountedRecord) -> String {
    format!(
        "{}: {} samples, {} reversals, {} full and {} half cycles ({} residue), gate {} MPa, range bins {} MPa, mean bins {} MPa{}",
        a.file.display(),
        rec.samples,
        rec.reversals,
        rec.full_cycles,
        rec.half_cycles,
        rec.residue,
        short_num(rec.gate_mpa),
        short_num(rec.bin_width_mpa),
        short_num(rec.mean_bin_width_mpa),
        if rec.constant { "; the signal is constant: no cycles, no damage" } else { "" }
    )
}
