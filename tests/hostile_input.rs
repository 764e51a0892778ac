//! Hostile and mistaken input: non-regular files, files without end, values that
//! overflow, YAML that means something else than it seems, series traps. Every case
//! is exit code 2 with a located message, quickly, and writes nothing.

mod safety_common;

use safety_common::*;
use std::time::{Duration, Instant};

/// Assess `text` written as `name` in a fresh folder; (code, stdout, stderr).
fn assess(text: &str) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(record(), dir.path().join("rec.csv")).unwrap();
    write(dir.path(), "p.yaml", text);
    run_in(dir.path(), &["assess", "p.yaml"])
}

/// 1-based line of the first line of `text` holding `needle`.
fn line_of(text: &str, needle: &str) -> usize {
    text.lines().position(|l| l.contains(needle)).unwrap() + 1
}

fn expect_bad(text: &str, needles: &[&str]) -> String {
    let (code, out, err) = assess(text);
    assert_eq!(code, 2, "{err}");
    assert!(out.is_empty(), "{out}");
    for n in needles {
        assert!(err.contains(n), "missing `{n}` in:\n{err}");
    }
    assert!(err.contains("hint: "), "{err}");
    err
}

#[test]
fn non_regular_project_files_are_refused_without_blocking() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("p.yaml");
    mkfifo(&fifo);
    for path in [
        fifo.to_str().unwrap(),
        "/dev/zero",
        "/dev/null",
        "/dev/stdin",
    ] {
        let t = Instant::now();
        let (code, _, err) = run(&mut cmd(&["assess", path]));
        assert_eq!(code, 2, "{path}: {err}");
        assert!(err.contains("not a regular file"), "{path}: {err}");
        // nothing waited for a writer or read a device without end
        assert!(t.elapsed() < Duration::from_secs(20), "{path}");
    }
    let (code, _, err) = run(&mut cmd(&["lint", fifo.to_str().unwrap()]));
    assert_eq!(code, 2);
    assert!(err.contains("named pipe (FIFO)"), "{err}");
}

#[test]
fn family_and_template_folders_refuse_pipes_and_huge_files() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write(d, "p.yaml", &passing_project());
    // a named pipe among the family files
    std::fs::create_dir(d.join("jc")).unwrap();
    mkfifo(&d.join("jc/blocked.yaml"));
    let t = Instant::now();
    let (code, _, err) = run_in(d, &["--joint-classes", "jc", "assess", "p.yaml"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("blocked.yaml") && err.contains("named pipe"),
        "{err}"
    );
    assert!(t.elapsed() < Duration::from_secs(20));
    // a template folder with a pipe, then with an oversized (sparse) file
    let fake = fake_typst(d, "typst", &writes_pdf());
    std::fs::create_dir(d.join("tpl")).unwrap();
    mkfifo(&d.join("tpl/title-block.typ.tera"));
    let args = [
        "report",
        "p.yaml",
        "-o",
        "o.pdf",
        "--templates",
        "tpl",
        "--typst",
        fake.to_str().unwrap(),
    ];
    let (code, _, err) = run_in(d, &args);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("title-block.typ.tera") && err.contains("named pipe"),
        "{err}"
    );
    std::fs::remove_file(d.join("tpl/title-block.typ.tera")).unwrap();
    let f = std::fs::File::create(d.join("tpl/title-block.typ.tera")).unwrap();
    f.set_len(seamlife::files::MAX_TEMPLATE_BYTES + 1).unwrap();
    let (code, _, err) = run_in(d, &args);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("template files are limited to 4 MiB"), "{err}");
    assert!(!d.join("o.pdf").exists());
}

#[test]
fn series_from_a_pipe_or_device_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    mkfifo(&d.join("live.csv"));
    let t = Instant::now();
    let (code, _, err) = run_in(d, &["count", "live.csv", "--column", "1", "--no-header"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("named pipe (FIFO), not a regular file"),
        "{err}"
    );
    let (code, _, err) = run_in(d, &["count", "/dev/zero", "--column", "1", "--no-header"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("character device"), "{err}");
    // the same from a project, located at the series' file key
    let text = series_project(
        "            file: live.csv\n            column: 1\n            header: false\n            unit: mpa\n",
        "          per_year: 100\n",
    );
    write(d, "p.yaml", &text);
    let (code, _, err) = run_in(d, &["assess", "p.yaml"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains(&format!("p.yaml:{}:", line_of(&text, "file: live.csv"))),
        "{err}"
    );
    assert!(t.elapsed() < Duration::from_secs(30));
}

#[test]
fn a_huge_csv_line_is_refused_and_never_echoed() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // 200 MB without a newline after the header (sparse: NUL bytes on disk).
    let p = d.join("long.csv");
    std::fs::write(&p, "s\n").unwrap();
    let f = std::fs::OpenOptions::new().write(true).open(&p).unwrap();
    f.set_len(200_000_000).unwrap();
    let (code, _, err) = run_in(d, &["count", "long.csv", "--column", "s"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("line 2: the line is longer than 1 MiB"),
        "{err}"
    );
    assert!(err.len() < 2000, "{} bytes of message", err.len());
    // A long cell within the line limit is named, cut to 60 characters and measured.
    let cell = "7x".repeat(250_000);
    std::fs::write(d.join("cell.csv"), format!("s\n1\n{cell}\n2\n")).unwrap();
    let (code, _, err) = run_in(d, &["count", "cell.csv", "--column", "s"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("line 3"), "{err}");
    assert!(
        err.contains("…' (500000 characters) is not a number"),
        "{err}"
    );
    assert!(err.len() < 2000, "{} bytes of message", err.len());
}

#[test]
fn ranges_counts_and_lives_that_overflow_are_refused_at_input() {
    // EN 1993-1-9 has no category above 160 MPa and steels stay below 2 000 MPa
    // (common practice); every bound here is far beyond those.
    let cases = [
        (
            project_with("{range_mpa: 1.7e308, cycles: 1}", "1", "25"),
            "range_mpa: 1.7e308",
            "range_mpa is 1.700e308, above the largest accepted 100000",
        ),
        (
            project_with("{range_mpa: 40, cycles: 1e308}", "1", "25"),
            "cycles: 1e308",
            "cycles is 1.000e308, above the largest accepted 1.000e15",
        ),
        (
            project_with("{range_mpa: 40, cycles: 1e10}", "1e308", "25"),
            "per_year: 1e308",
            "per_year is 1.000e308",
        ),
        (
            project_with("{range_mpa: 40, cycles: 1e10}", "1e10", "25"),
            "cycles: 1e10",
            "cycles 1.000e10 × per_year 1.000e10 = 1.000e20 cycles a year",
        ),
        (
            project_with("{range_mpa: 40, cycles: 1}", "1", "1e308"),
            "design_life_years: 1e308",
            "design_life_years is 1.000e308, above the largest accepted 10000",
        ),
        (
            project_with("{max_mpa: 1e300, min_mpa: -1e300, cycles: 1}", "1", "25"),
            "max_mpa: 1e300",
            "max_mpa is 1.000e300, beyond the accepted ±100000",
        ),
    ];
    for (text, at, msg) in cases {
        let line = line_of(&text, at);
        let err = expect_bad(&text, &[msg]);
        assert!(err.contains(&format!("p.yaml:{line}:")), "{err}");
    }
}

#[test]
fn report_on_an_overflowing_range_ends_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let text = project_with("{range_mpa: 1.7e308, cycles: 1}", "1", "25");
    write(d, "p.yaml", &text);
    let fake = fake_typst(d, "typst", &writes_pdf());
    let t = Instant::now();
    let (code, _, err) = report_with(d, &fake, &[]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains(&format!("p.yaml:{}:", line_of(&text, "1.7e308"))),
        "{err}"
    );
    assert!(t.elapsed() < Duration::from_secs(30));
    assert!(!d.join("o.pdf").exists());
}

#[test]
fn series_values_beyond_any_stress_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("pa.csv"), "s\n1\n2.5e8\n3\n").unwrap();
    let (code, _, err) = run_in(d, &["count", "pa.csv", "--column", "s"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("line 3") && err.contains("250000000 MPa"),
        "{err}"
    );
    assert!(err.contains("check the unit and scale"), "{err}");
}

#[test]
fn a_duplicated_header_name_is_an_error() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("dup.csv"), "t,s,s\n0,1,9\n1,2,8\n2,1,9\n").unwrap();
    let (code, _, err) = run_in(d, &["count", "dup.csv", "--column", "s"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("names column 's' 2 times (columns 2, 3)"),
        "{err}"
    );
    // by number it is unambiguous
    let (code, _, err) = run_in(d, &["count", "dup.csv", "--column", "3"]);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn per_year_with_record_hours_is_an_error() {
    let text = series_project(
        "            file: rec.csv\n            column: sg4_microstrain\n            unit: microstrain\n            modulus_mpa: 210000\n            record_hours: 0.5\n            hours_per_year: 1000\n",
        "          per_year: 2000\n",
    );
    let err = expect_bad(
        &text,
        &["`per_year` and the series' `record_hours`/`hours_per_year`"],
    );
    assert!(
        err.contains(&format!("p.yaml:{}:", line_of(&text, "per_year: 2000"))),
        "{err}"
    );
}

#[test]
fn a_gate_that_removes_every_cycle_warns() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("small.csv"), "s\n0\n3\n-2\n4\n1\n").unwrap();
    // the record spans 6 MPa (from -2 to 4); a 10 MPa gate leaves nothing
    let (code, out, err) = run_in(
        d,
        &["count", "small.csv", "--column", "s", "--gate-mpa", "10"],
    );
    assert_eq!(code, 0, "{err}");
    assert!(out.starts_with("range_mpa"), "{out}");
    assert!(
        err.contains("warning: the hysteresis gate of 10 MPa removes every cycle")
            && err.contains("spans only 6 MPa"),
        "{err}"
    );
    // through a project: assess puts it among the detail's warnings (results and
    // table), lint says it on standard error
    let text = series_project(
        "            file: small.csv\n            column: s\n            unit: mpa\n            gate_mpa: 10\n",
        "          per_year: 100\n",
    );
    write(d, "p.yaml", &text);
    let (code, out, err) = run_in(d, &["assess", "p.yaml"]);
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("warning: M1: normal stress: the hysteresis gate of 10 MPa removes every cycle of series `small.csv`"),
        "{out}"
    );
    let (code, out, _) = run_in(d, &["assess", "p.yaml", "--json"]);
    assert_eq!(code, 0);
    assert!(
        out.contains("\"code\": \"gate-removes-all-cycles\""),
        "{out}"
    );
    let (code, _, err) = run_in(d, &["lint", "p.yaml"]);
    assert_eq!(code, 0, "{err}");
    assert!(
        err.contains(
            "warning: M1: the hysteresis gate of 10 MPa removes every cycle of series `small.csv`"
        ),
        "{err}"
    );
    // a gate below the ranges says nothing
    let (_, _, err) = run_in(
        d,
        &["count", "small.csv", "--column", "s", "--gate-mpa", "1"],
    );
    assert!(!err.contains("warning"), "{err}");
}

#[test]
fn lint_checks_the_series_as_assess_does() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("bad.csv"), "s\n1\n2\noops\n").unwrap();
    let text = series_project(
        "            file: bad.csv\n            column: s\n            unit: mpa\n",
        "          per_year: 100\n",
    );
    write(d, "p.yaml", &text);
    let (code, _, err) = run_in(d, &["lint", "p.yaml"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("line 4") && err.contains("'oops' is not a number"),
        "{err}"
    );
    let text = text.replace("file: bad.csv", "file: missing.csv");
    write(d, "p.yaml", &text);
    let (code, _, err) = run_in(d, &["lint", "p.yaml"]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("cannot open series file `missing.csv`"),
        "{err}"
    );
    // a good series: lint says it read it
    std::fs::copy(record(), d.join("rec.csv")).unwrap();
    let text = series_project(
        "            file: rec.csv\n            column: sg4_microstrain\n            unit: microstrain\n            modulus_mpa: 210000\n",
        "          per_year: 100\n",
    );
    write(d, "p.yaml", &text);
    let (code, out, err) = run_in(d, &["lint", "p.yaml"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("1 series file read and counted"), "{out}");
    // lint checks the record by counting it and says that it sums no damage
    assert!(out.contains("no damage summed"), "{out}");
}

#[test]
fn yaml_null_is_no_value_not_the_text_tilde() {
    // an optional text given as null is absent
    let text = passing_project().replace("prepared_by: P,", "prepared_by: P, checked_by: ~,");
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "p.yaml", &text);
    let (code, out, err) = run_in(dir.path(), &["assess", "p.yaml", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert!(v["project"]["checked_by"].is_null());
    // a required text given as null is an error at its place
    for (from, to, key) in [
        ("location: here", "location: ~", "location"),
        ("location: here", "location: null", "location"),
        ("- event: e", "- event:", "event"),
        ("title: T,", "title: ~,", "title"),
    ] {
        let t = passing_project().replace(from, to);
        let line = line_of(&t, to);
        let err = expect_bad(&t, &[&format!("{key} is empty (YAML null)")]);
        assert!(err.contains(&format!("p.yaml:{line}:")), "{err}");
    }
    // a quoted tilde is text
    let t = passing_project().replace("location: here", "location: \"~\"");
    let (code, _, err) = assess(&t);
    assert_eq!(code, 0, "{err}");
}

#[test]
fn multiple_documents_nul_bytes_and_non_decimal_numbers() {
    let one = passing_project();
    let two = format!("{one}---\n{one}");
    let err = expect_bad(&two, &["a second YAML document starts here"]);
    let line = one.lines().count() + 1;
    assert!(err.contains(&format!("p.yaml:{line}:1:")), "{err}");

    let nul = one.replace("location: here", "location: he\0re");
    let line = line_of(&nul, "location: he");
    let err = expect_bad(&nul, &["control character U+0000, a NUL byte"]);
    assert!(err.contains(&format!("p.yaml:{line}:17:")), "{err}");

    for (num, word) in [("0x10", "a hexadecimal"), ("0o17", "an octal")] {
        let t = one.replace("range_mpa: 40", &format!("range_mpa: {num}"));
        let line = line_of(&t, num);
        let err = expect_bad(&t, &[&format!("`{num}` is {word} number")]);
        assert!(err.contains(&format!("p.yaml:{line}:")), "{err}");
        assert!(!err.contains("invalid type"), "{err}");
    }
}

#[test]
fn bad_columns_long_texts_and_bad_epochs() {
    let text = series_project(
        "            file: rec.csv\n            column: -1\n            unit: microstrain\n            modulus_mpa: 210000\n",
        "          per_year: 100\n",
    );
    let err = expect_bad(&text, &["column numbers start at 1, got -1"]);
    assert!(
        err.contains(&format!("p.yaml:{}:", line_of(&text, "column: -1"))),
        "{err}"
    );

    let long = "K".repeat(300);
    let t = passing_project().replace("reference: R-1", &format!("reference: {long}"));
    expect_bad(
        &t,
        &["reference is 300 characters long; at most 64 are allowed"],
    );
    let t = passing_project().replace("id: D1", &format!("id: {}", "D".repeat(65)));
    expect_bad(&t, &["detail id is 65 characters long; at most 64"]);

    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    write(d, "p.yaml", &passing_project());
    let fake = fake_typst(d, "typst", &writes_pdf());
    for (value, msg) in [
        ("-1", "'-1' is before 1970-01-01"),
        ("yesterday", "'yesterday' is not a whole number of seconds"),
        ("1e9", "'1e9' is not a whole number of seconds"),
        ("999999999999999", "is after the year 9999"),
    ] {
        let (code, _, err) = run(cmd(&["report", "p.yaml", "-o", "o.pdf", "--typst"])
            .arg(&fake)
            .env("SOURCE_DATE_EPOCH", value)
            .current_dir(d));
        assert_eq!(code, 2, "{value}: {err}");
        assert!(
            err.contains("SOURCE_DATE_EPOCH: ") && err.contains(msg),
            "{err}"
        );
        assert!(!d.join("o.pdf").exists());
    }
    // whole seconds are used; empty counts as unset
    for value in ["1795132800", ""] {
        let (code, _, err) = run(cmd(&["report", "p.yaml", "-o", "o.pdf", "--typst"])
            .arg(&fake)
            .env("SOURCE_DATE_EPOCH", value)
            .current_dir(d));
        assert_eq!(code, 0, "{value:?}: {err}");
    }
}
