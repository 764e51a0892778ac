//! The fast reader (blocks parsed and counted on all cores, merged in file order)
//! gives what the reference reader (the csv crate, one record at a time) gives: the
//! same cycles, spectra and totals, and the same errors at the same line and column,
//! whatever the block size; and many channels in one pass equal one pass per channel.

use seamlife::ingest::{count_channels, Channels, Ingest};
use seamlife::rainflow::ResidueMode;
use seamlife::series::{
    count_series_reference, ColumnRef, CountOptions, CountedSeries, SeriesSpec, SeriesUnit,
};
use seamlife::spectrum::{BinRule, SpectrumSpec};
use std::path::PathBuf;

fn file(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("seamlife-series-ingest-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn spec(path: PathBuf, column: ColumnRef, has_header: bool) -> SeriesSpec {
    SeriesSpec {
        path,
        column,
        has_header,
        unit: SeriesUnit::Mpa,
        scale: 1.0,
    }
}

fn opts(gate_mpa: f64, mode: ResidueMode) -> CountOptions {
    CountOptions {
        gate_mpa,
        mode,
        bins: SpectrumSpec {
            range: BinRule::MaxBins(32),
            mean: BinRule::MaxBins(8),
        },
    }
}

/// A seeded signal of three channels with plateaus (few levels), as CSV text with
/// `t,a,b,c` columns; `crlf` line ends; a blank line every `blank` rows (0: none).
fn record(rows: usize, seed: u64, crlf: bool, blank: usize) -> String {
    let mut s = seed;
    let mut next = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (s >> 33) % 2000
    };
    let nl = if crlf { "\r\n" } else { "\n" };
    let mut out = format!("t,a,b,c{nl}");
    for i in 0..rows {
        let a = (next() % 7) as f64 - 3.0;
        let b = next() as f64 / 8.0 - 100.0;
        let c = (next() % 3) as f64 * 12.5;
        out.push_str(&format!("{i},{a}, {b} ,{c}{nl}"));
        if blank > 0 && i % blank == blank - 1 {
            out.push_str(nl);
        }
    }
    out
}

fn fast(
    s: &SeriesSpec,
    o: &CountOptions,
    block_bytes: usize,
) -> Result<CountedSeries, seamlife::series::SeriesError> {
    let mut v = count_channels(
        s,
        &Channels::These(vec![s.column.clone()]),
        o,
        Ingest { block_bytes },
        &|_, _| {},
    )?;
    Ok(v.remove(0).counted)
}

/// Equal counts: totals, bins and cycles exactly; weighted means and moments to
/// 1e-9 (sums taken in another order).
fn same(x: &CountedSeries, y: &CountedSeries, what: &str) {
    assert_eq!(x.stats, y.stats, "{what}");
    assert_eq!(x.histogram, y.histogram, "{what}");
    assert_eq!(x.matrix.len(), y.matrix.len(), "{what}");
    for (a, b) in x.matrix.iter().zip(&y.matrix) {
        assert_eq!(
            (a.range_lo_mpa, a.mean_lo_mpa, a.cycles, a.max_range_mpa),
            (b.range_lo_mpa, b.mean_lo_mpa, b.cycles, b.max_range_mpa),
            "{what}"
        );
        assert!((a.mean_mpa - b.mean_mpa).abs() <= 1e-9 * (1.0 + b.mean_mpa.abs()));
    }
    assert!((x.mean_mpa - y.mean_mpa).abs() <= 1e-9 * (1.0 + y.mean_mpa.abs()));
    assert!((x.std_dev_mpa - y.std_dev_mpa).abs() <= 1e-9 * (1.0 + y.std_dev_mpa));
}

#[test]
fn blocks_of_any_size_count_as_the_reference_does() {
    let text = record(1500, 7, false, 0);
    let p = file("walk.csv", &text);
    for gate in [0.0, 1.5] {
        for mode in [ResidueMode::HalfCycles, ResidueMode::Repeated] {
            let o = opts(gate, mode);
            for col in ["a", "b", "c"] {
                let s = spec(p.clone(), ColumnRef::Name(col.into()), true);
                let want = count_series_reference(&s, &o).unwrap();
                for block in [1, 2, 3, 7, 19, 64, 1000, 4096, 1 << 21] {
                    let got = fast(&s, &o, block).unwrap();
                    same(
                        &got,
                        &want,
                        &format!("{col} gate {gate} {mode:?} block {block}"),
                    );
                }
            }
        }
    }
}

#[test]
fn crlf_blank_lines_and_no_header_count_the_same() {
    let text = record(2000, 11, true, 37);
    let p = file("crlf.csv", &text);
    let o = opts(0.0, ResidueMode::HalfCycles);
    let s = spec(p, ColumnRef::Index(3), true);
    let want = count_series_reference(&s, &o).unwrap();
    for block in [5, 333, 1 << 21] {
        same(&fast(&s, &o, block).unwrap(), &want, "crlf");
    }
    // no header line, a byte-order mark before the first row
    let body: String = text.lines().skip(1).map(|l| format!("{l}\n")).collect();
    let p = file("bom.csv", &format!("\u{feff}{body}"));
    let s = spec(p, ColumnRef::Index(2), false);
    let want = count_series_reference(&s, &o).unwrap();
    for block in [4, 1 << 21] {
        same(&fast(&s, &o, block).unwrap(), &want, "bom");
    }
}

#[test]
fn errors_are_the_reference_errors_with_line_and_column() {
    let base = record(500, 3, false, 0);
    let lines: Vec<&str> = base.lines().collect();
    // (line to replace, 1-based, and its new text): a word, NaN, a value beyond any
    // stress, a short row, a blank-only cell
    let cases = [
        (17, "16,1,x,2"),
        (250, "249,nan,1,2"),
        (251, "250,1,2,1e9"),
        (400, "399,1"),
        (2, "1,1,   ,2"),
        (501, "500,1,2,inf"),
    ];
    for (k, (at, bad)) in cases.iter().enumerate() {
        let mut l = lines.clone();
        l[at - 1] = bad;
        let p = file(&format!("bad{k}.csv"), &(l.join("\n") + "\n"));
        let mut failed = 0;
        for col in ["a", "b", "c"] {
            let s = spec(p.clone(), ColumnRef::Name(col.into()), true);
            let o = opts(0.0, ResidueMode::Repeated);
            let want = count_series_reference(&s, &o).map(|_| ());
            failed += want.is_err() as usize;
            for block in [1, 9, 100, 1 << 21] {
                let got = fast(&s, &o, block).map(|_| ());
                assert_eq!(
                    format!("{got:?}"),
                    format!("{want:?}"),
                    "case {k} column {col} block {block}"
                );
            }
        }
        assert!(failed > 0, "case {k} must hold a bad cell");
    }
}

#[test]
fn quoted_cells_go_to_the_reference_reader() {
    // a quoted cell spanning two lines: the reference reader reads it, "y" on line 5
    let p = file("quoted.csv", "t,s\n0,1\n1,\"2\n\"\n2,y\n");
    let s = spec(p, ColumnRef::Name("s".into()), true);
    let e = fast(&s, &opts(0.0, ResidueMode::HalfCycles), 3).unwrap_err();
    assert!(
        matches!(e, seamlife::series::SeriesError::NotNumeric { line: 5, .. }),
        "{e:?}"
    );
}

#[test]
fn many_channels_in_one_pass_equal_one_pass_each() {
    let p = file("three.csv", &record(4000, 5, false, 0));
    for gate in [0.0, 2.0] {
        let o = opts(gate, ResidueMode::Repeated);
        let s = spec(p.clone(), ColumnRef::Index(1), true);
        let all = count_channels(
            &s,
            &Channels::All,
            &o,
            Ingest { block_bytes: 999 },
            &|_, _| {},
        )
        .unwrap();
        assert_eq!(
            all.iter().map(|c| c.name.as_str()).collect::<Vec<_>>(),
            ["t", "a", "b", "c"]
        );
        for c in &all {
            let one = spec(p.clone(), ColumnRef::Index(c.position), true);
            same(
                &c.counted,
                &count_series_reference(&one, &o).unwrap(),
                &c.name,
            );
        }
        // chosen columns come back in the order asked
        let some = count_channels(
            &s,
            &Channels::These(vec![ColumnRef::Name("c".into()), ColumnRef::Index(2)]),
            &o,
            Ingest::default(),
            &|_, _| {},
        )
        .unwrap();
        assert_eq!((some[0].name.as_str(), some[1].name.as_str()), ("c", "a"));
        same(&some[0].counted, &all[3].counted, "c");
        same(&some[1].counted, &all[1].counted, "a");
    }
    // a column named twice is refused
    let s = spec(p, ColumnRef::Index(1), true);
    let e = count_channels(
        &s,
        &Channels::These(vec![ColumnRef::Name("a".into()), ColumnRef::Index(2)]),
        &opts(0.0, ResidueMode::Repeated),
        Ingest::default(),
        &|_, _| {},
    )
    .unwrap_err();
    assert!(e.to_string().contains("chosen twice"), "{e}");
}
