//! Bad time-series input gives the right error, with the facts a user needs.

use seamlife::rainflow::ResidueMode;
use seamlife::series::{
    count_series, ColumnRef, CountOptions, SeriesError, SeriesSpec, SeriesUnit,
};
use seamlife::spectrum::{BinRule, SpectrumSpec};
use std::path::PathBuf;

fn file(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("seamlife-series-errors-{}", std::process::id()));
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

fn opts() -> CountOptions {
    CountOptions {
        gate_mpa: 0.0,
        mode: ResidueMode::HalfCycles,
        bins: SpectrumSpec {
            range: BinRule::Width(10.0),
            mean: BinRule::Width(10.0),
        },
    }
}

fn by_name(path: PathBuf, name: &str) -> Result<seamlife::series::CountedSeries, SeriesError> {
    count_series(&spec(path, ColumnRef::Name(name.into()), true), &opts())
}

#[test]
fn missing_file_names_the_path() {
    let p = std::env::temp_dir().join("seamlife-no-such-dir/none.csv");
    let e = by_name(p.clone(), "s").unwrap_err();
    assert!(matches!(e, SeriesError::Open { .. }), "{e:?}");
    let msg = e.to_string();
    assert!(msg.contains(&p.display().to_string()), "{msg}");
}

#[test]
fn empty_file_and_header_only_file_hold_no_samples() {
    let e = by_name(file("empty.csv", ""), "s").unwrap_err();
    assert!(matches!(e, SeriesError::Empty { .. }), "{e:?}");
    assert!(e.to_string().contains("no samples"));
    let e = by_name(file("header_only.csv", "t,s\n"), "s").unwrap_err();
    assert!(matches!(e, SeriesError::Empty { .. }), "{e:?}");
    let e = count_series(
        &spec(file("empty2.csv", ""), ColumnRef::Index(1), false),
        &opts(),
    )
    .unwrap_err();
    assert!(matches!(e, SeriesError::Empty { .. }), "{e:?}");
}

#[test]
fn single_sample_is_too_short() {
    let e = by_name(file("single.csv", "t,s\n0.0,12.5\n"), "s").unwrap_err();
    assert!(
        matches!(e, SeriesError::TooShort { samples: 1, .. }),
        "{e:?}"
    );
    assert!(e.to_string().contains("single sample"), "{e}");
}

#[test]
fn non_numeric_cell_reports_line_column_and_text() {
    let text = "time,stress\n0,1.5\n1,2.5\n2,abc\n3,4\n";
    let e = by_name(file("text.csv", text), "stress").unwrap_err();
    match &e {
        SeriesError::NotNumeric {
            line, column, text, ..
        } => {
            // line 4 of the file: header on line 1, "2,abc" on line 4
            assert_eq!(*line, 4);
            assert_eq!(column, "'stress'");
            assert_eq!(text, "abc");
        }
        other => panic!("wrong error {other:?}"),
    }
    let msg = e.to_string();
    assert!(
        msg.contains("line 4") && msg.contains("'stress'") && msg.contains("'abc'"),
        "{msg}"
    );
}

#[test]
fn non_numeric_cell_by_index() {
    // without a header the column is named by its index
    let p = file("text_idx.csv", "0,1.5\n1,x2\n");
    let e = count_series(&spec(p, ColumnRef::Index(2), false), &opts()).unwrap_err();
    match &e {
        SeriesError::NotNumeric {
            line, column, text, ..
        } => {
            assert_eq!((*line, column.as_str(), text.as_str()), (2, "2", "x2"));
        }
        other => panic!("wrong error {other:?}"),
    }
    assert!(e.to_string().contains("line 2, column 2"), "{e}");
    // with a header, by index and header name; a decimal comma splits the cell
    let p = file("text_idx_hdr.csv", "t,s\n0,1.5\n1,\"2,5\"\n");
    let e = count_series(&spec(p, ColumnRef::Index(2), true), &opts()).unwrap_err();
    match &e {
        SeriesError::NotNumeric {
            line, column, text, ..
        } => {
            assert_eq!(
                (*line, column.as_str(), text.as_str()),
                (3, "2 ('s')", "2,5")
            );
        }
        other => panic!("wrong error {other:?}"),
    }
}

#[test]
fn column_index_past_the_first_row_without_header() {
    let p = file("idx_nohdr.csv", "0,1.5\n1,2.5\n");
    let e = count_series(&spec(p, ColumnRef::Index(3), false), &opts()).unwrap_err();
    assert!(
        matches!(
            e,
            SeriesError::ColumnOutOfRange {
                index: 3,
                columns: 2,
                ..
            }
        ),
        "{e:?}"
    );
}

#[test]
fn empty_cell_is_not_a_number() {
    let e = by_name(file("blank.csv", "t,s\n0,1\n1,\n2,3\n"), "s").unwrap_err();
    match &e {
        SeriesError::NotNumeric { line, text, .. } => assert_eq!((*line, text.as_str()), (3, "")),
        other => panic!("wrong error {other:?}"),
    }
}

#[test]
fn nan_and_infinite_values_are_rejected_with_line_and_column() {
    for (cell, name) in [
        ("NaN", "nan.csv"),
        ("inf", "inf.csv"),
        ("-infinity", "ninf.csv"),
        ("1e400", "big.csv"),
    ] {
        let text = format!("t,gauge_7\n0,1\n1,2\n2,{cell}\n");
        let e = by_name(file(name, &text), "gauge_7").unwrap_err();
        match &e {
            SeriesError::NonFinite {
                line, column, text, ..
            } => {
                assert_eq!(*line, 4, "{cell}");
                assert_eq!(column, "'gauge_7'");
                assert_eq!(text, cell);
            }
            other => panic!("wrong error for {cell}: {other:?}"),
        }
        let msg = e.to_string();
        assert!(
            msg.contains("line 4") && msg.contains("gauge_7") && msg.contains("finite"),
            "{msg}"
        );
    }
}

#[test]
fn value_overflowing_once_scaled_is_rejected() {
    let mut s = spec(
        file("overflow.csv", "s\n1e-9\n1e300\n"),
        ColumnRef::Name("s".into()),
        true,
    );
    s.scale = 1e10;
    let e = count_series(&s, &opts()).unwrap_err();
    assert!(matches!(e, SeriesError::NonFinite { line: 3, .. }), "{e:?}");
}

#[test]
fn missing_column_name_lists_the_columns_present() {
    let e = by_name(file("cols.csv", "time, sg_1 ,sg_2\n0,1,2\n1,2,3\n"), "sg_3").unwrap_err();
    match &e {
        SeriesError::NoSuchColumn {
            name, available, ..
        } => {
            assert_eq!(name, "sg_3");
            // header names are trimmed
            assert_eq!(available, &["time", "sg_1", "sg_2"]);
        }
        other => panic!("wrong error {other:?}"),
    }
    let msg = e.to_string();
    assert!(
        msg.contains("'sg_3'") && msg.contains("'time', 'sg_1', 'sg_2'"),
        "{msg}"
    );
}

#[test]
fn column_index_out_of_range() {
    let p = file("idx.csv", "time,s\n0,1\n1,2\n");
    let e = count_series(&spec(p.clone(), ColumnRef::Index(5), true), &opts()).unwrap_err();
    assert!(
        matches!(
            e,
            SeriesError::ColumnOutOfRange {
                index: 5,
                columns: 2,
                ..
            }
        ),
        "{e:?}"
    );
    let msg = e.to_string();
    assert!(msg.contains("5") && msg.contains("2 column"), "{msg}");
    let e = count_series(&spec(p, ColumnRef::Index(0), true), &opts()).unwrap_err();
    assert!(matches!(e, SeriesError::Invalid(_)), "{e:?}");
    assert!(e.to_string().contains("1-based"));
}

#[test]
fn short_row_reports_line_and_fields() {
    let e = by_name(file("short_row.csv", "t,s\n0,1\n1\n2,3\n"), "s").unwrap_err();
    match &e {
        SeriesError::ShortRow {
            line,
            fields,
            column,
            ..
        } => {
            assert_eq!((*line, *fields, column.as_str()), (3, 1, "'s'"));
        }
        other => panic!("wrong error {other:?}"),
    }
    assert!(e.to_string().contains("line 3"));
}

#[test]
fn name_without_header_and_bad_factor_are_invalid_requests() {
    let p = file("nohdr.csv", "1\n2\n3\n");
    let e = count_series(
        &spec(p.clone(), ColumnRef::Name("s".into()), false),
        &opts(),
    )
    .unwrap_err();
    assert!(matches!(e, SeriesError::Invalid(_)), "{e:?}");
    let mut s = spec(p, ColumnRef::Index(1), false);
    s.scale = 0.0;
    let e = count_series(&s, &opts()).unwrap_err();
    assert!(matches!(e, SeriesError::Invalid(_)), "{e:?}");
    s.scale = 1.0;
    s.unit = SeriesUnit::Microstrain {
        modulus_mpa: f64::NAN,
    };
    assert!(matches!(
        count_series(&s, &opts()).unwrap_err(),
        SeriesError::Invalid(_)
    ));
}

#[test]
fn bad_gate_and_bins_are_errors() {
    let p = file("ok.csv", "s\n1\n2\n1\n");
    let mut o = opts();
    o.gate_mpa = -1.0;
    let e = count_series(&spec(p.clone(), ColumnRef::Index(1), true), &o).unwrap_err();
    assert!(matches!(e, SeriesError::Gate(_)), "{e:?}");
    let mut o = opts();
    o.bins.range = BinRule::Width(0.0);
    let e = count_series(&spec(p, ColumnRef::Index(1), true), &o).unwrap_err();
    assert!(matches!(e, SeriesError::Spectrum(_)), "{e:?}");
}

#[test]
fn constant_signal_is_not_an_error() {
    let r = by_name(file("const.csv", "t,s\n0,50\n1,50\n2,50\n3,50\n"), "s").unwrap();
    assert!(r.constant);
    assert_eq!(r.total_cycles, 0.0);
    assert!(r.histogram.is_empty() && r.matrix.is_empty());
    assert_eq!(r.stats.samples, 4);
    assert_eq!((r.stats.min, r.stats.max), (50.0, 50.0));
}

#[test]
fn line_numbers_are_right_with_crlf_line_ends_and_blank_lines() {
    // "x" is on line 6: header, 1, blank line, 5, 7, x (the file as written here)
    let e = by_name(file("crlf.csv", "s\r\n1\r\n\r\n5\r\n7\r\nx\r\n"), "s").unwrap_err();
    assert!(
        matches!(e, SeriesError::NotNumeric { line: 6, .. }),
        "{e:?}"
    );
    let e = by_name(file("lf_blank.csv", "s\n1\n\n5\n7\nx\n"), "s").unwrap_err();
    assert!(
        matches!(e, SeriesError::NotNumeric { line: 6, .. }),
        "{e:?}"
    );
    // a quoted cell spanning two lines: "y" starts on line 5
    let e = by_name(file("quoted.csv", "t,s\n0,1\n1,\"2\n\"\n2,y\n"), "s").unwrap_err();
    assert!(
        matches!(e, SeriesError::NotNumeric { line: 5, .. }),
        "{e:?}"
    );
}
