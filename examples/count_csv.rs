//! Count one column of a CSV time series and print the totals.
//!
//! cargo run --release --example count_csv -- FILE COLUMN [GATE_MPA]
//!
//! COLUMN is a header name, or a 1-based index prefixed with '#' (then the
//! file is read without a header line). Used to measure memory and speed on
//! large files, e.g. under `/usr/bin/time -v`.

use seamlife::rainflow::ResidueMode;
use seamlife::series::{count_series, ColumnRef, CountOptions, SeriesSpec, SeriesUnit};
use seamlife::spectrum::{BinRule, SpectrumSpec};
use std::process::ExitCode;
use std::time::Instant;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    if args.len() < 2 {
        eprintln!("usage: count_csv FILE COLUMN [GATE_MPA]");
        return ExitCode::from(2);
    }
    let (column, has_header) = match args[1].strip_prefix('#') {
        Some(i) => match i.parse() {
            Ok(i) => (ColumnRef::Index(i), false),
            Err(_) => {
                eprintln!("column index after '#' must be a number");
                return ExitCode::from(2);
            }
        },
        None => (ColumnRef::Name(args[1].clone()), true),
    };
    let gate_mpa = match args.get(2).map(|g| g.parse::<f64>()) {
        None => 0.0,
        Some(Ok(g)) => g,
        Some(Err(e)) => {
            eprintln!("gate: {e}");
            return ExitCode::from(2);
        }
    };
    let spec = SeriesSpec {
        path: args[0].clone().into(),
        column,
        has_header,
        unit: SeriesUnit::Mpa,
        scale: 1.0,
    };
    let opts = CountOptions {
        gate_mpa,
        mode: ResidueMode::HalfCycles,
        bins: SpectrumSpec {
            range: BinRule::MaxBins(128),
            mean: BinRule::MaxBins(64),
        },
    };
    let t = Instant::now();
    match count_series(&spec, &opts) {
        Ok(r) => {
            let secs = t.elapsed().as_secs_f64();
            println!(
                "{} samples in {secs:.2} s ({:.1} M samples/s): {} reversals, {} full + {} half cycles, \
                 largest range {:.3} MPa, {} histogram bins of {} MPa, {} matrix cells",
                r.stats.samples,
                r.stats.samples as f64 / secs / 1e6,
                r.stats.reversals,
                r.full_cycles,
                r.half_cycles,
                r.max_range_mpa,
                r.histogram.len(),
                r.range_width_mpa,
                r.matrix.len()
            );
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            ExitCode::FAILURE
        }
    }
}
