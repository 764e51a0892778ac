//! Binary records (raw little-endian float32/float64, NumPy .npy) count exactly as
//! the same samples written as CSV; bad binary files are refused with the reason.
//!
//! The .npy files are written here by hand after the NumPy format description
//! (numpy.lib.format, "NEP 1 — A simple file format for NumPy arrays": magic
//! `\x93NUMPY`, major and minor version, little-endian header length of 2 bytes in
//! version 1 and 4 bytes in version 2, a Python dict literal padded with spaces and
//! ended by a newline; from memory).

use seamlife::binary::{count_binary, BinaryFormat};
use seamlife::ingest::{count_channels, ChannelCount, Channels, Ingest};
use seamlife::rainflow::ResidueMode;
use seamlife::series::{ColumnRef, CountOptions, SeriesError, SeriesSpec, SeriesUnit};
use seamlife::spectrum::{BinRule, SpectrumSpec};
use std::path::{Path, PathBuf};

fn spec(path: PathBuf) -> SeriesSpec {
    SeriesSpec {
        path,
        column: ColumnRef::Index(1),
        has_header: false,
        unit: SeriesUnit::Mpa,
        scale: 1.0,
    }
}

fn opts(gate_mpa: f64) -> CountOptions {
    CountOptions {
        gate_mpa,
        mode: ResidueMode::Repeated,
        bins: SpectrumSpec {
            range: BinRule::MaxBins(32),
            mean: BinRule::MaxBins(8),
        },
    }
}

/// Rows of `channels` samples, multiples of 0.25 MPa (exact in float32 and in
/// decimal), from a seeded generator.
fn samples(rows: usize, channels: usize) -> Vec<Vec<f64>> {
    let mut s = 99u64;
    (0..rows)
        .map(|_| {
            (0..channels)
                .map(|_| {
                    s = s
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    ((s >> 40) % 1601) as f64 * 0.25 - 200.0
                })
                .collect()
        })
        .collect()
}

fn csv_text(rows: &[Vec<f64>]) -> String {
    rows.iter()
        .map(|r| {
            r.iter()
                .map(|v| v.to_string())
                .collect::<Vec<_>>()
                .join(",")
                + "\n"
        })
        .collect()
}

fn raw(rows: &[Vec<f64>], f32s: bool) -> Vec<u8> {
    let mut out = Vec::new();
    for r in rows {
        for &v in r {
            if f32s {
                out.extend_from_slice(&(v as f32).to_le_bytes());
            } else {
                out.extend_from_slice(&v.to_le_bytes());
            }
        }
    }
    out
}

/// A .npy file of `header` dict text and `data`, in format version `major`.
fn npy(major: u8, header: &str, data: &[u8]) -> Vec<u8> {
    let pre = if major == 1 { 10 } else { 12 };
    let mut h = header.to_string();
    // padded with spaces so that the data starts on a multiple of 64 bytes, then '\n'
    while !(pre + h.len() + 1).is_multiple_of(64) {
        h.push(' ');
    }
    h.push('\n');
    let mut out = b"\x93NUMPY".to_vec();
    out.extend_from_slice(&[major, 0]);
    if major == 1 {
        out.extend_from_slice(&(h.len() as u16).to_le_bytes());
    } else {
        out.extend_from_slice(&(h.len() as u32).to_le_bytes());
    }
    out.extend_from_slice(h.as_bytes());
    out.extend_from_slice(data);
    out
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, bytes).unwrap();
    p
}

fn same(a: &[ChannelCount], b: &[ChannelCount]) {
    assert_eq!(a.len(), b.len());
    for (x, y) in a.iter().zip(b) {
        let (x, y) = (&x.counted, &y.counted);
        assert_eq!(x.stats, y.stats);
        assert_eq!(x.histogram, y.histogram);
        assert_eq!(x.matrix.len(), y.matrix.len());
        for (c, d) in x.matrix.iter().zip(&y.matrix) {
            assert_eq!((c.cycles, c.max_range_mpa), (d.cycles, d.max_range_mpa));
            assert!((c.mean_mpa - d.mean_mpa).abs() <= 1e-9 * (1.0 + d.mean_mpa.abs()));
        }
        assert!((x.mean_mpa - y.mean_mpa).abs() <= 1e-9 * (1.0 + y.mean_mpa.abs()));
        assert!((x.std_dev_mpa - y.std_dev_mpa).abs() <= 1e-9 * (1.0 + y.std_dev_mpa));
    }
}

#[test]
fn binary_records_count_as_the_same_csv() {
    let dir = tempfile::tempdir().unwrap();
    let rows = samples(5000, 3);
    let csv = write(dir.path(), "r.csv", csv_text(&rows).as_bytes());
    let one: Vec<Vec<f64>> = rows.iter().map(|r| vec![r[1]]).collect();
    let csv1 = write(dir.path(), "r1.csv", csv_text(&one).as_bytes());
    for gate in [0.0, 3.0] {
        let o = opts(gate);
        let want = count_channels(
            &spec(csv.clone()),
            &Channels::All,
            &o,
            Ingest::default(),
            &|_, _| {},
        )
        .unwrap();
        let want1 = count_channels(
            &spec(csv1.clone()),
            &Channels::All,
            &o,
            Ingest::default(),
            &|_, _| {},
        )
        .unwrap();
        let files = [
            (
                write(dir.path(), "r.f64", &raw(&rows, false)),
                BinaryFormat::F64 { channels: 3 },
            ),
            (
                write(dir.path(), "r.f32", &raw(&rows, true)),
                BinaryFormat::F32 { channels: 3 },
            ),
            (
                write(
                    dir.path(),
                    "r2.npy",
                    &npy(
                        1,
                        "{'descr': '<f8', 'fortran_order': False, 'shape': (5000, 3), }",
                        &raw(&rows, false),
                    ),
                ),
                BinaryFormat::Npy,
            ),
            (
                write(
                    dir.path(),
                    "r2v2.npy",
                    &npy(
                        2,
                        "{'descr': '<f4', 'fortran_order': False, 'shape': (5000, 3), }",
                        &raw(&rows, true),
                    ),
                ),
                BinaryFormat::Npy,
            ),
        ];
        for (p, f) in &files {
            for block in [24, 1000, 1 << 21] {
                let got = count_binary(&spec(p.clone()), *f, None, &o, block, &|_, _| {}).unwrap();
                same(&got, &want);
            }
        }
        // one channel of three, and a one-dimensional .npy
        let got = count_binary(
            &spec(files[0].0.clone()),
            BinaryFormat::F64 { channels: 3 },
            Some(&[ColumnRef::Index(2)]),
            &o,
            64,
            &|_, _| {},
        )
        .unwrap();
        same(&got, &want1);
        let p = write(
            dir.path(),
            "r1.npy",
            &npy(
                1,
                "{'descr': '<f8', 'fortran_order': False, 'shape': (5000,), }",
                &raw(&one, false),
            ),
        );
        let got = count_binary(&spec(p), BinaryFormat::Npy, None, &o, 100, &|_, _| {}).unwrap();
        same(&got, &want1);
    }
}

fn err(dir: &Path, name: &str, bytes: &[u8], f: BinaryFormat) -> SeriesError {
    let p = write(dir, name, bytes);
    count_binary(&spec(p), f, None, &opts(0.0), 1 << 20, &|_, _| {}).unwrap_err()
}

#[test]
fn hostile_binary_records_are_refused_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let rows = samples(100, 2);
    let data = raw(&rows, false);
    let h2 = "{'descr': '<f8', 'fortran_order': False, 'shape': (100, 2), }";
    let npy_f = BinaryFormat::Npy;
    let cases: Vec<(SeriesError, &str)> = vec![
        // truncated raw record: not a whole number of rows
        (err(d, "t.f64", &data[..data.len() - 3], BinaryFormat::F64 { channels: 2 }), "not a whole number of rows"),
        (err(d, "c.f64", &data, BinaryFormat::F64 { channels: 0 }), "channel count must be"),
        // .npy: truncated data, extra data, bad magic, wrong types, size bomb
        (err(d, "t.npy", &npy(1, h2, &data)[..200], npy_f), "cut short"),
        (err(d, "x.npy", &[npy(1, h2, &data), vec![0; 8]].concat(), npy_f), "more than"),
        (err(d, "m.npy", b"\x93NUMPX\x01\x00\x10\x00{}", npy_f), "magic"),
        (err(d, "h.npy", b"\x93NUMPY\x01", npy_f), "ends inside"),
        (err(d, "i.npy", &npy(1, "{'descr': '<i4', 'fortran_order': False, 'shape': (100, 2), }", &data), npy_f), "'<i4'"),
        (err(d, "b.npy", &npy(1, "{'descr': '>f8', 'fortran_order': False, 'shape': (100, 2), }", &data), npy_f), "'>f8'"),
        (err(d, "f.npy", &npy(1, "{'descr': '<f8', 'fortran_order': True, 'shape': (100, 2), }", &data), npy_f), "Fortran order"),
        (err(d, "s.npy", &npy(1, "{'descr': '<f8', 'fortran_order': False, 'shape': (100000000000000000, 2), }", &data), npy_f), "cut short"),
        (err(d, "o.npy", &npy(1, "{'descr': '<f8', 'fortran_order': False, 'shape': (18446744073709551615, 2), }", &data), npy_f), "cut short"),
        (err(d, "d.npy", &npy(1, "{'descr': '<f8', 'fortran_order': False, 'shape': (10, 10, 2), }", &data), npy_f), "one dimension"),
        (err(d, "v.npy", b"\x93NUMPY\x09\x00\x10\x00{}", npy_f), "version 9"),
        (err(d, "l.npy", b"\x93NUMPY\x02\x00\xff\xff\xff\x7f{}", npy_f), "header claims"),
        (err(d, "e.npy", &npy(1, "{'descr': '<f8', 'fortran_order': False, 'shape': (0,), }", &[]), npy_f), "no samples"),
    ];
    for (e, want) in &cases {
        assert!(e.to_string().contains(want), "{want}: {e}");
    }
    // a NaN sample: its 1-based sample number and channel (the wrong type for the
    // fault is 'b.npy' above, refused before reading)
    let mut bad = rows.clone();
    bad[41][1] = f64::NAN;
    let e = err(
        d,
        "n.f64",
        &raw(&bad, false),
        BinaryFormat::F64 { channels: 2 },
    );
    assert!(
        matches!(
            e,
            SeriesError::BadSample {
                sample: 42,
                channel: 2,
                ..
            }
        ),
        "{e:?}"
    );
    let e = count_binary(
        &spec(write(d, "n2.f64", &raw(&bad, false))),
        BinaryFormat::F64 { channels: 2 },
        None,
        &opts(0.0),
        48,
        &|_, _| {},
    )
    .unwrap_err();
    assert!(
        matches!(e, SeriesError::BadSample { sample: 42, .. }),
        "{e:?}"
    );
}

#[test]
fn count_command_reads_npy_and_refuses_a_bad_one() {
    let dir = tempfile::tempdir().unwrap();
    let rows = samples(300, 1);
    let p = write(
        dir.path(),
        "g.npy",
        &npy(
            1,
            "{'descr': '<f8', 'fortran_order': False, 'shape': (300,), }",
            &raw(&rows, false),
        ),
    );
    let c = write(dir.path(), "g.csv", csv_text(&rows).as_bytes());
    let run = |f: &Path, extra: &[&str]| {
        let o = assert_cmd::Command::cargo_bin("seamlife")
            .unwrap()
            .arg("count")
            .arg(f)
            .args(extra)
            .output()
            .unwrap();
        (
            o.status.code().unwrap(),
            String::from_utf8_lossy(&o.stdout).into_owned(),
            String::from_utf8_lossy(&o.stderr).into_owned(),
        )
    };
    let (code, a, err) = run(&p, &["--column", "1"]);
    assert_eq!(code, 0, "{err}");
    let (code, b, _) = run(&c, &["--column", "1", "--no-header"]);
    assert_eq!(code, 0);
    assert_eq!(a, b);
    let bad = write(
        dir.path(),
        "bad.npy",
        b"\x93NUMPY\x01\x00\x10\x00{'descr': '<i2'}",
    );
    let (code, _, err) = run(&bad, &["--all-columns"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("binary record"), "{err}");
}
