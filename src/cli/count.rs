//! `seamlife count`: rainflow-count one column, several columns or every column of a
//! time series into spectra, reading the file once.

use std::io::Write;
use std::path::{Path, PathBuf};

use clap::Args;

use super::output::{print_data, print_err};
use crate::error::{Error, InputError, InputErrorKind, Location, EXIT_PASS};
use crate::files::short_num;
use crate::files::text::data_num;
use crate::files::write::{check_target, FileId, Inputs, PendingFile};
use crate::histories::binary::{count_binary, count_binary_open, BinaryFormat};
use crate::histories::ingest::{Channels, Ingest};
use crate::histories::part::{OpenCount, PartSettings, SpectrumPart};
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

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum FormatArg {
    /// NumPy .npy for a file named *.npy, CSV otherwise.
    Auto,
    /// Comma-separated text.
    Csv,
    /// Raw little-endian float32 samples, --channels per row.
    F32,
    /// Raw little-endian float64 samples, --channels per row.
    F64,
    /// NumPy .npy (little-endian float32 or float64, C order).
    Npy,
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
    #[arg(long, required_unless_present_any = ["columns", "all_columns"], conflicts_with_all = ["columns", "all_columns"])]
    pub column: Option<String>,
    /// Several columns counted in one pass (names or 1-based numbers, comma separated);
    /// the spectrum CSV then holds a `channel` column.
    #[arg(long, value_delimiter = ',', conflicts_with = "all_columns")]
    pub columns: Vec<String>,
    /// Count every column of the file in one pass.
    #[arg(long)]
    pub all_columns: bool,
    /// How the record is stored (binary records are read without parsing; their
    /// channels are chosen by number).
    #[arg(long, value_enum, default_value = "auto")]
    pub format: FormatArg,
    /// Channels per row of a raw f32/f64 record.
    #[arg(long, default_value_t = 1)]
    pub channels: usize,
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
    /// Also write each channel's statistics (samples, cycles, extremes, mean, standard
    /// deviation, bin widths) as CSV, one row per channel.
    #[arg(long, value_name = "FILE")]
    pub stats: Option<PathBuf>,
    /// Also write the range histogram as SVG (with several columns the name must hold
    /// `{channel}`, replaced by each column's name).
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,
    /// Also write the range-mean matrix as an SVG heat map (`{channel}` as for --svg).
    #[arg(long, value_name = "FILE")]
    pub matrix_svg: Option<PathBuf>,
    /// Also write a spectrum part (JSON): this file's count with its residue still
    /// open, for `seamlife merge` to join with the parts of the files before and after
    /// it (or to sum with other records). The spectrum CSV is then written only with -o.
    #[arg(long, value_name = "PART.json")]
    pub spectrum_out: Option<PathBuf>,
    /// Position of this file in its record (1, 2, ...), saved in the spectrum part so
    /// that a merge refuses parts out of order, repeated or missing.
    #[arg(long, value_name = "N", requires = "spectrum_out")]
    pub sequence: Option<u64>,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
}

/// Placeholder of a figure's file name replaced by the channel's name.
pub(super) const CHANNEL_MARK: &str = "{channel}";

pub(super) fn run(a: &CountArgs) -> Result<i32, Error> {
    let (spec, opts, channels) = count_setup(a)?;
    let multi = !matches!(&channels, Channels::These(v) if v.len() == 1);
    for (flag, p) in [("--svg", &a.svg), ("--matrix-svg", &a.matrix_svg)] {
        if let Some(p) = p {
            let marked = p.to_string_lossy().contains(CHANNEL_MARK);
            if multi != marked {
                return Err(bad_arg(
                    a,
                    format!(
                        "{flag} {}: {}",
                        p.display(),
                        if multi {
                            "with several columns the figure's file name must hold {channel}"
                        } else {
                            "{channel} names a figure per column; one column is counted"
                        }
                    ),
                    "e.g. --svg 'hist-{channel}.svg' with --columns or --all-columns",
                ));
            }
        }
    }
    let mut inputs = Inputs::new();
    inputs.add(&a.file, "the series file being counted");
    // The fixed outputs are checked before the count, and none may be another.
    let fixed = [&a.output, &a.stats, &a.svg, &a.matrix_svg, &a.spectrum_out];
    check_distinct(&a.file, &fixed, &inputs)?;
    let (recs, part) = match &a.spectrum_out {
        None => (count_records(a, &spec, &opts, &channels)?, None),
        Some(p) => {
            let (recs, part) = count_part(a, &spec, &opts, &channels)?;
            (recs, Some((p.clone(), part)))
        }
    };
    let mut files = figures(&recs, &a.svg, &a.matrix_svg, &a.stats)?;
    let csv = spectrum_csv(&recs, multi)?;
    if let Some(p) = &a.output {
        files.push((p.clone(), csv.clone()));
    }
    if let Some((p, part)) = part {
        files.push((p, part));
    }
    let stdout = (a.output.is_none() && a.spectrum_out.is_none()).then_some(&csv[..]);
    write_all(&a.file, &files, stdout, &inputs)?;
    for (_, rec) in &recs {
        if let Some(w) = crate::histories::gate_note(rec) {
            print_err(&format!("warning: {w}\n"));
        }
        print_err(&format!(
            "{}\n",
            summary_line(&a.file.display().to_string(), rec)
        ));
    }
    Ok(EXIT_PASS)
}

/// The figures (`svg`, `matrix_svg`, with `{channel}` replaced by each channel's
/// name) and the statistics of `recs`, as (path, bytes).
pub(super) fn figures(
    recs: &[(String, CountedRecord)],
    svg: &Option<PathBuf>,
    matrix_svg: &Option<PathBuf>,
    stats: &Option<PathBuf>,
) -> Result<Vec<(PathBuf, Vec<u8>)>, Error> {
    let mut files: Vec<(PathBuf, Vec<u8>)> = Vec::new();
    for (i, (name, rec)) in recs.iter().enumerate() {
        let stem = figure_stem(name, i, recs);
        let path = |p: &PathBuf| PathBuf::from(p.to_string_lossy().replace(CHANNEL_MARK, &stem));
        if let Some(p) = svg {
            files.push((path(p), crate::report::plots::histogram(rec).into_bytes()));
        }
        if let Some(p) = matrix_svg {
            files.push((
                path(p),
                crate::report::plots::matrix_heatmap(rec).into_bytes(),
            ));
        }
    }
    if let Some(p) = stats {
        files.push((p.clone(), stats_csv(recs)?));
    }
    Ok(files)
}

/// Write `files` whole or not at all (none an input, none named twice), after
/// printing `stdout` if given; `about` is the file messages are located at.
pub(super) fn write_all(
    about: &Path,
    files: &[(PathBuf, Vec<u8>)],
    stdout: Option<&[u8]>,
    inputs: &Inputs,
) -> Result<(), Error> {
    let targets: Vec<Option<PathBuf>> = files.iter().map(|(p, _)| Some(p.clone())).collect();
    check_distinct(about, &targets.iter().collect::<Vec<_>>(), inputs)?;
    let mut pending = Vec::new();
    for (p, bytes) in files {
        let mut f = PendingFile::new(p, inputs, ".part")?;
        f.file().write_all(bytes).map_err(|source| Error::Output {
            path: p.clone(),
            source,
        })?;
        pending.push(f);
    }
    if let Some(csv) = stdout {
        print_data(csv)?;
    }
    for f in pending {
        f.commit()?;
    }
    Ok(())
}

/// Check output targets: each writable, none an input, none named twice.
pub(super) fn check_distinct(
    about: &Path,
    outs: &[&Option<PathBuf>],
    inputs: &Inputs,
) -> Result<(), Error> {
    let outs: Vec<&PathBuf> = outs.iter().filter_map(|p| p.as_ref()).collect();
    for (i, p) in outs.iter().enumerate() {
        check_target(p, inputs)?;
        let same = |q: &&PathBuf| {
            *q == *p || matches!((FileId::of(q), FileId::of(p)), (Some(x), Some(y)) if x == y)
        };
        if outs[..i].iter().any(same) {
            return Err(Error::Input(
                InputError::new(
                    InputErrorKind::InvalidValue,
                    Location::file(about),
                    format!("{} is named for two outputs", p.display()),
                )
                .hint("give -o, --stats, --svg, --matrix-svg and --spectrum-out different file names (and channels different names)"),
            ));
        }
    }
    Ok(())
}

/// A channel's name as it goes into a file name: letters, digits, `-`, `_` and `.`
/// kept, anything else `_`; the column's number when nothing is left or two channels
/// would share it.
fn figure_stem(name: &str, i: usize, recs: &[(String, CountedRecord)]) -> String {
    let clean = |n: &str| -> String {
        n.chars()
            .map(|c| {
                if c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.') {
                    c
                } else {
                    '_'
                }
            })
            .collect()
    };
    let mine = clean(name);
    let clash = recs
        .iter()
        .enumerate()
        .any(|(j, (n, _))| j != i && clean(n) == mine);
    if mine.is_empty() || mine.starts_with('.') || clash {
        format!("column-{}", i + 1)
    } else {
        mine
    }
}

fn bad_arg(a: &CountArgs, msg: String, hint: &str) -> Error {
    Error::Input(
        InputError::new(InputErrorKind::InvalidValue, Location::file(&a.file), msg).hint(hint),
    )
}

/// Check the options and turn them into the series and counting specifications.
fn count_setup(a: &CountArgs) -> Result<(SeriesSpec, CountOptions, Channels), Error> {
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
    let column_ref = |c: &str| match c.trim().parse::<usize>() {
        Ok(0) => Err(bad_arg(
            a,
            "column numbers start at 1".into(),
            "use 1 for the first column",
        )),
        Ok(i) => Ok(ColumnRef::Index(i)),
        Err(_) => Ok(ColumnRef::Name(c.to_string())),
    };
    let channels = if a.all_columns {
        Channels::All
    } else if let Some(c) = &a.column {
        Channels::These(vec![column_ref(c)?])
    } else {
        Channels::These(
            a.columns
                .iter()
                .map(|c| column_ref(c))
                .collect::<Result<_, _>>()?,
        )
    };
    let column = match &channels {
        Channels::These(v) if !v.is_empty() => v[0].clone(),
        _ => ColumnRef::Index(1),
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
    Ok((spec, opts, channels))
}

pub(super) fn residue_mode(r: ResidueArg) -> ResidueMode {
    match r {
        ResidueArg::Repeated => ResidueMode::Repeated,
        ResidueArg::HalfCycles => ResidueMode::HalfCycles,
    }
}

/// Each channel's name and counted record.
pub(super) type Named = Vec<(String, CountedRecord)>;

/// Count the channels in one pass and describe each as the results model does.
fn count_records(
    a: &CountArgs,
    spec: &SeriesSpec,
    opts: &CountOptions,
    channels: &Channels,
) -> Result<Vec<(String, CountedRecord)>, Error> {
    let block = Ingest::default().block_bytes;
    let counted = read_channels(
        a,
        |f, these, report| count_binary(spec, f, these, opts, block, report),
        |report| {
            crate::histories::ingest::count_channels(
                spec,
                channels,
                opts,
                Ingest::default(),
                report,
            )
        },
        channels,
    )?;
    Ok(counted
        .into_iter()
        .map(|c| (c.name.clone(), record_of(a, &c.name, c.counted, opts.mode)))
        .collect())
}

/// Count the channels as a piece of a longer record: each channel's record (this
/// file alone, its residue closed) and the spectrum part (JSON) with the residue open.
fn count_part(
    a: &CountArgs,
    spec: &SeriesSpec,
    opts: &CountOptions,
    channels: &Channels,
) -> Result<(Named, Vec<u8>), Error> {
    let block = Ingest::default().block_bytes;
    let open = read_channels(
        a,
        |f, these, report| count_binary_open(spec, f, these, opts, block, report),
        |report| {
            crate::histories::ingest::count_channels_open(
                spec,
                channels,
                opts,
                Ingest::default(),
                report,
            )
        },
        channels,
    )?;
    let settings = PartSettings {
        unit: unit_input(a.unit),
        modulus_mpa: match a.unit {
            UnitArg::Mpa => None,
            UnitArg::Microstrain => a.modulus_mpa,
        },
        scale: a.scale,
        gate_mpa: a.gate_mpa,
        residue: opts.mode,
        bins: opts.bins,
    };
    let named: Vec<(String, OpenCount)> = open.into_iter().map(|c| (c.name, c.open)).collect();
    let part = SpectrumPart::new(&settings, &named, file_name(&a.file), a.sequence);
    let mut json = serde_json::to_vec_pretty(&part)
        .map_err(|e| Error::Internal(format!("spectrum part: {e}")))?;
    json.push(b'\n');
    let recs = named
        .into_iter()
        .map(|(name, o)| {
            let rec = record_of(a, &name, o.into_series(opts.mode), opts.mode);
            (name, rec)
        })
        .collect();
    Ok((recs, json))
}

/// Read the channels through the binary reader (`binary`, given the format, the
/// channels chosen and the progress) or the CSV reader (`csv`), with a progress bar;
/// series errors become input errors located at the file.
fn read_channels<T>(
    a: &CountArgs,
    binary: impl FnOnce(
        BinaryFormat,
        Option<&[ColumnRef]>,
        &dyn Fn(u64, u64),
    ) -> Result<T, crate::histories::series::SeriesError>,
    csv: impl FnOnce(&dyn Fn(u64, u64)) -> Result<T, crate::histories::series::SeriesError>,
    channels: &Channels,
) -> Result<T, Error> {
    let total = std::fs::metadata(&a.file).map_or(0, |m| m.len());
    let progress = super::progress::Progress::new(total >> 20, "counting MiB", a.quiet);
    let report = |done: u64, _| progress.set(done >> 20);
    let format = match a.format {
        FormatArg::Auto
            if a.file
                .extension()
                .is_some_and(|e| e.eq_ignore_ascii_case("npy")) =>
        {
            Some(BinaryFormat::Npy)
        }
        FormatArg::Auto | FormatArg::Csv => None,
        FormatArg::F32 => Some(BinaryFormat::F32 {
            channels: a.channels,
        }),
        FormatArg::F64 => Some(BinaryFormat::F64 {
            channels: a.channels,
        }),
        FormatArg::Npy => Some(BinaryFormat::Npy),
    };
    let counted = match (format, channels) {
        (Some(f), Channels::All) => binary(f, None, &report),
        (Some(f), Channels::These(v)) => binary(f, Some(v), &report),
        (None, _) => csv(&report),
    };
    progress.finish();
    counted.map_err(|e| {
        Error::Input(
            InputError::new(
                InputErrorKind::Series,
                Location::file(&a.file),
                e.to_string(),
            )
            .hint(series_hint(&e)),
        )
    })
}

fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_default()
}

fn unit_input(u: UnitArg) -> SeriesUnitInput {
    match u {
        UnitArg::Mpa => SeriesUnitInput::Mpa,
        UnitArg::Microstrain => SeriesUnitInput::Microstrain,
    }
}

/// One channel's count described as the results model does.
fn record_of(
    a: &CountArgs,
    name: &str,
    counted: crate::histories::series::CountedSeries,
    mode: ResidueMode,
) -> CountedRecord {
    counted_record(
        counted,
        RecordLabels {
            event: "record".into(),
            file: file_name(&a.file),
            column: a.column.clone().unwrap_or_else(|| name.to_string()),
            unit: unit_input(a.unit),
            scale: a.scale,
            modulus_mpa: a.modulus_mpa,
            gate_mpa: a.gate_mpa,
            mode,
            repeats_per_year: 1.0,
        },
    )
}

/// The range-mean spectrum as CSV: one row per matrix cell (with several channels, a
/// first `channel` column names the channel of each row).
pub(super) fn spectrum_csv(
    recs: &[(String, CountedRecord)],
    multi: bool,
) -> Result<Vec<u8>, Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let e = |e: csv::Error| Error::Internal(format!("csv: {e}"));
    let head = [
        "range_mpa",
        "mean_mpa",
        "cycles",
        "range_lo_mpa",
        "range_hi_mpa",
        "mean_lo_mpa",
        "mean_hi_mpa",
    ];
    let lead: &[&str] = if multi { &["channel"] } else { &[] };
    w.write_record(lead.iter().chain(&head)).map_err(e)?;
    for (name, rec) in recs {
        for c in &rec.matrix {
            let row = [
                data_num(c.max_range_mpa),
                data_num(c.mean_mpa),
                data_num(c.cycles),
                data_num(c.range_lo_mpa),
                data_num(c.range_hi_mpa),
                data_num(c.mean_lo_mpa),
                data_num(c.mean_hi_mpa),
            ];
            if multi {
                w.write_record(std::iter::once(name.clone()).chain(row))
                    .map_err(e)?;
            } else {
                w.write_record(row).map_err(e)?;
            }
        }
    }
    w.into_inner()
        .map_err(|e| Error::Internal(format!("csv: {e}")))
}

/// Each channel's statistics as CSV, one row per channel.
fn stats_csv(recs: &[(String, CountedRecord)]) -> Result<Vec<u8>, Error> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let e = |e: csv::Error| Error::Internal(format!("csv: {e}"));
    w.write_record([
        "channel",
        "samples",
        "reversals",
        "full_cycles",
        "half_cycles",
        "min_mpa",
        "max_mpa",
        "mean_mpa",
        "std_dev_mpa",
        "range_bin_width_mpa",
        "mean_bin_width_mpa",
        "residue",
        "gate_mpa",
    ])
    .map_err(e)?;
    for (name, r) in recs {
        w.write_record([
            name.clone(),
            r.samples.to_string(),
            r.reversals.to_string(),
            r.full_cycles.to_string(),
            r.half_cycles.to_string(),
            data_num(r.min_mpa),
            data_num(r.max_mpa),
            data_num(r.mean_mpa),
            data_num(r.std_dev_mpa),
            data_num(r.bin_width_mpa),
            data_num(r.mean_bin_width_mpa),
            r.residue.clone(),
            data_num(r.gate_mpa),
        ])
        .map_err(e)?;
    }
    w.into_inner()
        .map_err(|e| Error::Internal(format!("csv: {e}")))
}

/// The one-line account of the count printed on standard error.
pub(super) fn summary_line(source: &str, rec: &CountedRecord) -> String {
    format!(
        "{} [{}]: {} samples, {} reversals, {} full and {} half cycles ({} residue), gate {} MPa, range bins {} MPa, mean bins {} MPa{}",
        source,
        rec.column,
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
