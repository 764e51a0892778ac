//! `seamlife fit` on the command line: the table, the family-extension file and its
//! use, exit codes, and hostile input with file:line:col and a hint.

use assert_cmd::Command;
use std::ffi::OsStr;
use std::path::{Path, PathBuf};

fn seamlife() -> Command {
    Command::cargo_bin("seamlife").unwrap()
}

fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/fit")
        .join(name)
}

/// Run `seamlife` with args; (exit code, stdout, stderr).
fn run<S: AsRef<OsStr>>(args: &[S]) -> (i32, String, String) {
    let o = seamlife().args(args).output().unwrap();
    (
        o.status.code().unwrap(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

fn fit_args(file: &Path, extra: &[&str]) -> (i32, String, String) {
    let mut a: Vec<&OsStr> = vec![OsStr::new("fit"), file.as_os_str()];
    a.extend(["--date", "2026-12-02"].iter().map(OsStr::new));
    a.extend(extra.iter().map(OsStr::new));
    run(&a)
}

/// Write `text` to a fresh file and evaluate it.
fn fit_text(text: &str) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("tests.csv");
    std::fs::write(&p, text).unwrap();
    fit_args(&p, &[])
}

const HEADER: &str = "specimen,range_mpa,cycles,runout\n";

fn good_rows() -> String {
    let mut s = String::from(HEADER);
    for (i, (r, n)) in [
        (200.0, 3.1e5),
        (160.0, 6.2e5),
        (125.0, 1.4e6),
        (100.0, 2.3e6),
    ]
    .iter()
    .enumerate()
    {
        s.push_str(&format!("P{i},{r},{n},no\n"));
    }
    s
}

#[test]
fn table_names_method_category_and_cautions() {
    let (code, out, err) = fit_args(&data("set_a.csv"), &[]);
    assert_eq!(code, 0, "{err}");
    // set A: tolerance method, fixed slope 87.27 MPa -> 80 (golden.json, scipy)
    assert!(out.contains("category supported: ΔσC 80 MPa"), "{out}");
    assert!(out.contains("Δσ_k = 87.3 MPa"));
    assert!(out.contains("fixed slope m = 3 *"));
    assert!(out.contains("tolerance-limit method"));
    assert!(out.contains("k = t′(0.75; ν = n − 1, δ = z_0.95·√n)/√n"));
    assert!(out.contains("Natrella 1963"));
    assert!(out.contains("A16") && out.contains("run-out"));
    assert!(out.contains("warning: with its own slope m = 2.33"));
    assert!(out.contains("Caution: the governing code"));
    assert!(out.contains("licensed/chartered engineer"));
    // the prediction method says so and names EN 1990 Annex D
    let (code, out, _) = fit_args(&data("set_a.csv"), &["--method", "prediction"]);
    assert_eq!(code, 0);
    assert!(out.contains("EN 1990 Annex D, D7.2 and Table D1"));
    // set A, prediction, fixed slope: 89.48 MPa -> 80 (golden.json)
    assert!(out.contains("Δσ_k = 89.5 MPa"), "{out}");
}

#[test]
fn extension_file_loads_and_a_project_uses_it() {
    let dir = tempfile::tempdir().unwrap();
    let classes = dir.path().join("classes");
    std::fs::create_dir(&classes).unwrap();
    let ext = classes.join("ext.yaml");
    let (code, _, err) = fit_args(
        &data("set_a.csv"),
        &[
            "-o",
            ext.to_str().unwrap(),
            "--key",
            "series-a-fillet",
            "--description",
            "Invented series A",
        ],
    );
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("family en1993-1-9-plus-series-a-fillet"));
    let text = std::fs::read_to_string(&ext).unwrap();
    assert!(text.starts_with("# seamlife curve family: en1993-1-9 with one catalogue entry"));
    assert!(text.contains("CAUTION: the governing code"));
    assert!(!text.contains(": null"));
    // No temporary file is left beside it.
    let names: Vec<String> = std::fs::read_dir(&classes)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["ext.yaml".to_string()]);
    // The folder works as --joint-classes: the entry is listed with its category.
    let (code, out, err) = run(&[
        OsStr::new("--joint-classes"),
        classes.as_os_str(),
        OsStr::new("classes"),
        OsStr::new("en1993-1-9-plus-series-a-fillet"),
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("series-a-fillet"), "{out}");
    let lib = seamlife::catalogue::Library::load(Some(&classes)).unwrap();
    let fam = lib.get("en1993-1-9-plus-series-a-fillet").unwrap();
    let e = fam.entry("series-a-fillet").unwrap();
    assert_eq!(e.normal_category, Some(80.0));
    assert!(e
        .description
        .starts_with("Invented series A: derived by seamlife fit"));
    assert!(e
        .description
        .contains("15 failures (2 run-outs excluded) in set_a.csv"));
    let sha = seamlife::files::file_sha256(&data("set_a.csv")).unwrap().0;
    assert!(e.description.contains(&sha));
    // Everything else is the base family's.
    let base = lib.get("en1993-1-9").unwrap();
    assert_eq!(fam.catalogue.len(), base.catalogue.len() + 1);
    assert_eq!(
        fam.curves.normal.categories_mpa,
        base.curves.normal.categories_mpa
    );
    assert_eq!(
        fam.partial_factors.gamma_mf.table["safe-life"].high,
        base.partial_factors.gamma_mf.table["safe-life"].high
    );
    // Writing it again gives the same bytes.
    let again = dir.path().join("again.yaml");
    let (code, _, _) = fit_args(
        &data("set_a.csv"),
        &[
            "-o",
            again.to_str().unwrap(),
            "--key",
            "series-a-fillet",
            "--description",
            "Invented series A",
        ],
    );
    assert_eq!(code, 0);
    assert_eq!(std::fs::read(&again).unwrap(), text.as_bytes());
}

#[test]
fn a_key_that_exists_or_is_malformed_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let ext = dir.path().join("ext.yaml");
    for key in ["rolled-plate-plain", "Bad Key", "a--b"] {
        let (code, _, err) = fit_args(
            &data("set_a.csv"),
            &["-o", ext.to_str().unwrap(), "--key", key],
        );
        assert_eq!(code, 2, "{key}: {err}");
        assert!(err.contains("hint:"), "{err}");
        assert!(!ext.exists());
    }
}

#[test]
fn outputs_never_overwrite_the_input_a_folder_or_a_fifo() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("tests.csv");
    std::fs::copy(data("set_a.csv"), &input).unwrap();
    let before = std::fs::read(&input).unwrap();
    for opt in ["-o", "--pdf"] {
        let (code, _, err) = fit_args(&input, &[opt, input.to_str().unwrap()]);
        assert_eq!(code, 2, "{err}");
        assert!(err.contains("never overwrites an input"), "{err}");
        assert_eq!(std::fs::read(&input).unwrap(), before);
        // the same file by another name
        let other = dir.path().join(".").join("tests.csv");
        let (code, _, _) = fit_args(&input, &[opt, other.to_str().unwrap()]);
        assert_eq!(code, 2);
        let (code, _, err) = fit_args(&input, &[opt, dir.path().to_str().unwrap()]);
        assert_eq!(code, 2);
        assert!(err.contains("is a folder"), "{err}");
    }
    let fifo = dir.path().join("pipe");
    let ok = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(ok.success());
    let (code, _, err) = fit_args(&input, &["-o", fifo.to_str().unwrap()]);
    assert_eq!(code, 2);
    assert!(err.contains("FIFO"), "{err}");
    let both = dir.path().join("x.out");
    let (code, _, err) = fit_args(
        &input,
        &[
            "-o",
            both.to_str().unwrap(),
            "--pdf",
            both.to_str().unwrap(),
        ],
    );
    assert_eq!(code, 2);
    assert!(err.contains("same file"), "{err}");
    assert_eq!(std::fs::read(&input).unwrap(), before);
}

#[test]
fn too_few_failures() {
    let text = format!("{HEADER}A,200,3e5,no\nB,150,7e5,no\nC,100,1e7,yes\n");
    let (code, _, err) = fit_text(&text);
    assert_eq!(code, 2);
    // at the header's runout cell: line 1, column 30
    assert!(
        err.contains("tests.csv:1:27: 2 failures and 1 run-out"),
        "{err}"
    );
    assert!(err.contains("at least 3 failures"));
    assert!(err.contains("hint:"));
}

#[test]
fn all_failures_at_one_stress_level() {
    let text = format!("{HEADER}A,120,3e5,no\nB,120,7e5,no\nC,120,5e5,no\nD,90,1e7,yes\n");
    let (code, _, err) = fit_text(&text);
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:4:3: all 3 failures were tested at one stress range (120 MPa)"),
        "{err}"
    );
    assert!(err.contains("hint: test at two or more stress ranges"));
}

#[test]
fn non_positive_and_non_finite_numbers() {
    for (cell, col, what) in [
        ("0", 7, "must be greater than zero"),
        ("-5e5", 7, "must be greater than zero"),
        ("NaN", 7, "not a finite number"),
        ("inf", 7, "not a finite number"),
        ("1,5e5", 13, "this row has 5 cells; the header has 4"),
        ("12 MPa", 7, "not a number"),
    ] {
        let text = format!("{}X,150,{cell},no\n", good_rows());
        let (code, _, err) = fit_text(&text);
        assert_eq!(code, 2, "{cell}: {err}");
        assert!(err.contains(&format!("tests.csv:6:{col}")), "{cell}: {err}");
        assert!(err.contains(what), "{cell}: {err}");
        assert!(err.contains("hint:"), "{err}");
    }
    let text = format!("{}X,-150,5e5,no\n", good_rows());
    let (code, _, err) = fit_text(&text);
    assert_eq!(code, 2);
    assert!(
        err.contains(
            "tests.csv:6:3: range_mpa (stress range, MPa) must be greater than zero, got -150"
        ),
        "{err}"
    );
}

#[test]
fn optional_cells_are_checked() {
    let text = "specimen,range_mpa,cycles,runout,thickness_mm,stress_ratio\nA,200,3e5,no,0,0.1\nB,150,7e5,no,12,1\nC,100,2e6,no,12,x\n";
    let (code, _, err) = fit_text(text);
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:2:14: thickness_mm must be greater than zero"),
        "{err}"
    );
    assert!(
        err.contains("tests.csv:3:17: stress_ratio R = σmin/σmax = 1"),
        "{err}"
    );
    assert!(
        err.contains("tests.csv:4:17: stress_ratio: `x` is not a finite number"),
        "{err}"
    );
    assert!(err.contains("3 problems found"));
}

#[test]
fn duplicate_specimen_ids() {
    let text = format!("{}P1,150,5e5,no\n", good_rows());
    let (code, _, err) = fit_text(&text);
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:6:1: specimen id `P1` is given twice (first on line 3)"),
        "{err}"
    );
    assert!(err.contains("hint: give every specimen its own id"));
}

#[test]
fn runout_cells() {
    for (cell, ok) in [
        ("true", true),
        ("False", true),
        ("YES", true),
        ("no", true),
        ("1", true),
        ("0", true),
        ("maybe", false),
        ("", false),
        ("2", false),
    ] {
        let text = format!("{}X,150,9e6,{cell}\n", good_rows());
        let (code, _, err) = fit_text(&text);
        if ok {
            assert_eq!(code, 0, "{cell}: {err}");
        } else {
            assert_eq!(code, 2, "{cell}");
            assert!(err.contains("tests.csv:6:11: runout:"), "{cell}: {err}");
            assert!(err.contains("true/false, yes/no or 1/0"));
        }
    }
}

#[test]
fn missing_unknown_and_repeated_columns() {
    let (code, _, err) = fit_text("specimen,range_mpa,cycles\nA,200,3e5\n");
    assert_eq!(code, 2);
    assert!(err.contains("tests.csv:1:1: the header lacks the column runout (it has `specimen`, `range_mpa`, `cycles`)"), "{err}");
    let (code, _, err) = fit_text("specimen,range_mpa,cycle,runout\nA,200,3e5,no\n");
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:1:20: unknown column `cycle`"),
        "{err}"
    );
    assert!(err.contains("did you mean `cycles`?"), "{err}");
    let (code, _, err) = fit_text("specimen,range_mpa,cycles,runout,cycles\nA,200,3e5,no,3\n");
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:1:34: column `cycles` appears twice"),
        "{err}"
    );
    let (code, _, err) = fit_text(&format!("{}X,150\n", good_rows()));
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:6:6: this row has 2 cells; the header has 4"),
        "{err}"
    );
}

#[test]
fn empty_header_only_unterminated_quote_and_not_utf8() {
    let (code, _, err) = fit_text("");
    assert_eq!(code, 2);
    assert!(err.contains("no header and no specimens"), "{err}");
    let (code, _, err) = fit_text("# only a comment\nspecimen,range_mpa,cycles,runout\n");
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:2:1: the file names its columns but lists no specimen"),
        "{err}"
    );
    let (code, _, err) = fit_text(&format!("{}\"X,150,5e5,no\n", good_rows()));
    assert_eq!(code, 2);
    assert!(
        err.contains("tests.csv:6:1: a quoted cell has no closing quote"),
        "{err}"
    );
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("latin1.csv");
    std::fs::write(&p, b"specimen,range_mpa,cycles,runout\nA\xe9,200,3e5,no\n").unwrap();
    let (code, _, err) = fit_args(&p, &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("latin1.csv:2:2: file is not valid UTF-8"),
        "{err}"
    );
}

#[test]
fn crlf_quotes_and_comments_are_read() {
    let text = "# lab report X\r\nspecimen,range_mpa,cycles,runout,note\r\n\"P, 1\",200,3.1e5,no,\"a \"\"quoted\"\" note\"\r\nP2,160,6.2e5,no,\r\n  # an indented comment\r\nP3,125,1.4e6,no,\r\nP4,100,2.3e6,no,\r\n";
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("tests.csv");
    std::fs::write(&p, text).unwrap();
    let (code, out, err) = fit_args(&p, &["--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["specimens"][0]["id"], "P, 1");
    assert_eq!(v["specimens"][0]["note"], "a \"quoted\" note");
    assert_eq!(v["specimens"][0]["line"], 3);
    assert_eq!(v["specimens"][3]["line"], 7);
}

#[test]
fn not_regular_files_are_refused_before_opening() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("tests.csv");
    let ok = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(ok.success());
    // Opening a FIFO would block: the command must come back at once.
    let (code, _, err) = fit_args(&fifo, &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("is a FIFO (named pipe), not a regular file"),
        "{err}"
    );
    let (code, _, err) = fit_args(Path::new("/dev/zero"), &[]);
    assert_eq!(code, 2);
    assert!(err.contains("/dev/zero: is a character device"), "{err}");
    let (code, _, err) = fit_args(dir.path(), &[]);
    assert_eq!(code, 2);
    assert!(err.contains("is a folder"), "{err}");
    let (code, _, err) = fit_args(&dir.path().join("missing.csv"), &[]);
    assert_eq!(code, 2);
    assert!(err.contains("missing.csv: cannot read file"), "{err}");
    assert!(err.contains("hint: check the path"));
}

#[test]
fn huge_files_and_huge_cells() {
    // A 200 MB file (sparse) is refused by its size before it is read.
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("huge.csv");
    let f = std::fs::File::create(&p).unwrap();
    f.set_len(200 * 1024 * 1024).unwrap();
    let (code, _, err) = fit_args(&p, &[]);
    assert_eq!(code, 2);
    assert!(err.contains("test files are limited to 4 MiB"), "{err}");
    // A 3 MB cell in a file within the limit: the message cuts it.
    let long = "9".repeat(3_000_000);
    let text = format!("{}X,150,{long}x,no\n", good_rows());
    let (code, _, err) = fit_text(&text);
    assert_eq!(code, 2);
    assert!(err.contains("tests.csv:6:7: cycles"), "{err}");
    assert!(err.contains("… (3000001 characters)"));
    assert!(err.len() < 1000, "the echo is cut: {} bytes", err.len());
    // ... and a 3 MB specimen id.
    let text = format!("{}{long},150,5e5,no\n", good_rows());
    let (code, _, err) = fit_text(&text);
    assert_eq!(code, 2);
    assert!(err.contains("longer than 64 characters"), "{err}");
    assert!(err.len() < 1000);
}

#[test]
fn options_are_checked() {
    let (code, _, err) = fit_args(&data("set_a.csv"), &["--family", "en1993-19"]);
    assert_eq!(code, 2);
    assert!(err.contains("unknown curve family `en1993-19`"), "{err}");
    assert!(err.contains("did you mean `en1993-1-9`?"));
    let (code, _, err) = fit_args(&data("set_a.csv"), &["--slope=-3"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("the fixed slope must be a positive number"),
        "{err}"
    );
    let f = data("set_a.csv");
    let (code, _, err) = run(&[
        OsStr::new("fit"),
        f.as_os_str(),
        OsStr::new("--date"),
        OsStr::new("2026-02-30"),
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("is not a date YYYY-MM-DD"), "{err}");
}

#[test]
fn no_listed_category_exits_1_and_writes_no_extension() {
    // Failures at low ranges: the characteristic range falls below EN's lowest 36 MPa.
    let mut text = String::from(HEADER);
    for (i, (r, n)) in [(60.0, 4e5), (50.0, 7e5), (40.0, 1.3e6), (30.0, 3.2e6)]
        .iter()
        .enumerate()
    {
        text.push_str(&format!("L{i},{r},{n},no\n"));
    }
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("low.csv");
    std::fs::write(&p, text).unwrap();
    let ext = dir.path().join("ext.yaml");
    let (code, out, err) = fit_args(&p, &["-o", ext.to_str().unwrap()]);
    assert_eq!(code, 1, "{err}");
    assert!(out.contains("category supported: none"), "{out}");
    assert!(
        out.contains("lies below the lowest listed category 36 MPa"),
        "{out}"
    );
    assert!(err.contains("no family extension written"));
    assert!(!ext.exists());
}

#[test]
fn censored_fits_and_shear() {
    let (code, out, err) = fit_args(&data("set_c.csv"), &["--censored", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["evaluations"].as_array().unwrap().len(), 4);
    assert_eq!(v["category"]["basis"], "fixed-censored");
    assert_eq!(v["runouts"], 4);
    // Shear: the family's shear curve (m = 5) and its category list (100, 80).
    let (code, out, _) = fit_args(&data("set_a.csv"), &["--stress", "shear", "--json"]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["family"]["curve_slope_m"], 5.0);
    assert_eq!(v["evaluations"][1]["slope_m"], 5.0);
    assert_eq!(
        v["family"]["categories_mpa"],
        serde_json::json!([100.0, 80.0])
    );
    let c = v["category"]["category_mpa"].as_f64();
    assert!(c.is_none() || c == Some(80.0) || c == Some(100.0));
    assert!(code == 0 || code == 1);
}
