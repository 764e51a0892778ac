//! Counting a time series read from CSV.

use seamlife::rainflow::ResidueMode;
use seamlife::series::{
    count_series, count_series_with, stream_series, ColumnRef, CountOptions, SeriesSpec, SeriesUnit,
};
use seamlife::spectrum::{BinRule, SpectrumSpec};
use std::path::PathBuf;

fn file(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("seamlife-series-count-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn golden(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/rainflow")
        .join(name)
}

fn opts(mode: ResidueMode, range: BinRule, mean: BinRule) -> CountOptions {
    CountOptions {
        gate_mpa: 0.0,
        mode,
        bins: SpectrumSpec { range, mean },
    }
}

#[test]
fn golden_signal_counts_like_the_reference() {
    let spec = SeriesSpec {
        path: golden("random_walk.signal.csv"),
        column: ColumnRef::Name("stress_mpa".into()),
        has_header: true,
        unit: SeriesUnit::Mpa,
        scale: 1.0,
    };
    let r = count_series(
        &spec,
        &opts(
            ResidueMode::HalfCycles,
            BinRule::MaxBins(64),
            BinRule::MaxBins(32),
        ),
    )
    .unwrap();
    // golden from PyPI rainflow 3.2.0 extract_cycles (tests/data/rainflow/random_walk.cycles.csv)
    let mut rdr = csv::Reader::from_path(golden("random_walk.cycles.csv")).unwrap();
    let counts: Vec<f64> = rdr
        .records()
        .map(|r| r.unwrap()[2].parse().unwrap())
        .collect();
    let full = counts.iter().filter(|&&c| c == 1.0).count() as u64;
    let half = counts.iter().filter(|&&c| c == 0.5).count() as u64;
    assert_eq!((r.full_cycles, r.half_cycles), (full, half));
    assert_eq!(r.total_cycles, counts.iter().sum::<f64>());
    assert_eq!(r.stats.samples, 20000);
    assert!(!r.constant);
    // binning conserves the cycles and respects the bin limits
    assert_eq!(
        r.histogram.iter().map(|b| b.cycles).sum::<f64>(),
        r.total_cycles
    );
    assert_eq!(
        r.matrix.iter().map(|c| c.cycles).sum::<f64>(),
        r.total_cycles
    );
    assert!(r.histogram.last().unwrap().hi_mpa <= 64.0 * r.range_width_mpa);
    assert!(r.histogram.windows(2).all(|w| w[0].lo_mpa < w[1].lo_mpa));
    // the width is the smallest power of two that fits the largest range in 64 bins
    assert!(r.max_range_mpa < 64.0 * r.range_width_mpa);
    assert!(r.max_range_mpa >= 32.0 * r.range_width_mpa);
}

#[test]
fn microstrain_is_turned_into_stress_with_the_modulus() {
    let p = file("ue.csv", "t,ue\n0,0\n1,1000\n2,-500\n3,0\n");
    let spec = SeriesSpec {
        path: p,
        column: ColumnRef::Name("ue".into()),
        has_header: true,
        unit: SeriesUnit::Microstrain {
            modulus_mpa: 210_000.0,
        },
        scale: 1.0,
    };
    let mut got = Vec::new();
    count_series_with(&spec, 0.0, ResidueMode::HalfCycles, &mut |c| got.push(c)).unwrap();
    // σ = E·ε: 1000 µε × 210000 MPa = 210 MPa, -500 µε -> -105 MPa (common practice).
    // Reversals 0, 210, -105, 0 counted by hand (ASTM E1049-85 rainflow, from memory):
    // 0 210 -105: X = 315 >= Y = 210 and Y holds the start, so 0..210 is a half cycle
    // (range 210, mean 105) and the start is dropped; 210 -105 0: X = 105 < Y = 315;
    // the residue 210 -105 0 gives half cycles 210..-105 (range 315, mean 52.5) and
    // -105..0 (range 105, mean -52.5).
    let expected = [(105.0, -52.5), (210.0, 105.0), (315.0, 52.5)];
    got.sort_by(|a, b| a.range.total_cmp(&b.range));
    assert_eq!(got.len(), expected.len());
    for (g, (range, mean)) in got.iter().zip(expected) {
        // the conversion multiplies by 1e-6 in binary: within 1e-9 MPa
        assert!(
            (g.range - range).abs() < 1e-9 && (g.mean - mean).abs() < 1e-9,
            "{g:?} {range} {mean}"
        );
        assert_eq!(g.count, 0.5);
    }
}

#[test]
fn scale_multiplies_values_and_blanks_are_trimmed() {
    let p = file("scaled.csv", " 1 \n 3\n2 \n");
    let spec = SeriesSpec {
        path: p,
        column: ColumnRef::Index(1),
        has_header: false,
        unit: SeriesUnit::Mpa,
        scale: 2.5,
    };
    let mut seen = Vec::new();
    let info = stream_series(&spec, |xs| seen.extend_from_slice(xs)).unwrap();
    // value × scale: 1, 3, 2 × 2.5 (arithmetic)
    assert_eq!(seen, vec![2.5, 7.5, 5.0]);
    assert_eq!((info.samples, info.min_mpa, info.max_mpa), (3, 2.5, 7.5));
}

#[test]
fn repeated_constant_amplitude_fills_one_cell_as_a_conservative_block() {
    let mut text = String::from("s\n");
    for i in 0..1000 {
        text.push_str(if i % 2 == 0 { "-20\n" } else { "80\n" });
    }
    let spec = SeriesSpec {
        path: file("ca.csv", &text),
        column: ColumnRef::Name("s".into()),
        has_header: true,
        unit: SeriesUnit::Mpa,
        scale: 1.0,
    };
    let r = count_series(
        &spec,
        &opts(
            ResidueMode::Repeated,
            BinRule::Width(10.0),
            BinRule::Width(10.0),
        ),
    )
    .unwrap();
    // 1000 alternating samples repeated = 500 cycles of 100 MPa about 30 MPa (arithmetic)
    assert_eq!(r.total_cycles, 500.0);
    assert_eq!(r.half_cycles, 0);
    assert_eq!(r.matrix.len(), 1);
    let c = r.matrix[0];
    assert_eq!((c.range_lo_mpa, c.range_hi_mpa), (100.0, 110.0));
    assert_eq!((c.mean_lo_mpa, c.mean_hi_mpa), (30.0, 40.0));
    assert_eq!(
        (c.cycles, c.max_range_mpa, c.mean_mpa),
        (500.0, 100.0, 30.0)
    );
    // block: σmax = mean + range/2 = 80, σmin = mean − range/2 = −20 (definition of range and mean)
    assert_eq!(c.mean_mpa + c.max_range_mpa / 2.0, 80.0);
    assert_eq!(c.mean_mpa - c.max_range_mpa / 2.0, -20.0);
}

#[test]
fn gate_applies_in_mpa_after_conversion() {
    // 0, 10, 9, 20, 0 MPa with a 2 MPa gate: the 10 -> 9 dip is dropped (hysteresis gate)
    let spec = SeriesSpec {
        path: file("gate.csv", "0\n5\n4.5\n10\n0\n"),
        column: ColumnRef::Index(1),
        has_header: false,
        unit: SeriesUnit::Mpa,
        scale: 2.0,
    };
    let mut got = Vec::new();
    let stats =
        count_series_with(&spec, 2.0, ResidueMode::HalfCycles, &mut |c| got.push(c)).unwrap();
    assert_eq!(stats.reversals, 3);
    let ranges: Vec<f64> = got.iter().map(|c| c.range).collect();
    assert_eq!(ranges, vec![20.0, 20.0]);
}
