//! Family files given with `--joint-classes DIR`: every bad value is refused with exit
//! code 2, a message naming the value, and the file:line:col of the value.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn shipped(name: &str) -> String {
    std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("joint-classes")
            .join(name),
    )
    .unwrap()
}

/// The shipped EN family with `from` (which must occur once) replaced by `to`.
fn en_with(from: &str, to: &str) -> String {
    let en = shipped("en1993-1-9.yaml");
    assert_eq!(en.matches(from).count(), 1, "`{from}` must occur once");
    en.replacen(from, to, 1)
}

/// Run `seamlife --joint-classes DIR classes`; exit code and standard error.
fn classes(dir: &Path) -> (i32, String) {
    let out = Command::cargo_bin("seamlife")
        .unwrap()
        .arg("--joint-classes")
        .arg(dir)
        .arg("classes")
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// `path:line:col` where `needle` starts in `text` (both 1-based; the column counts
/// characters, as the YAML parser does).
fn place(path: &Path, text: &str, needle: &str) -> String {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("`{needle}` not in the text"));
    let before = &text[..at];
    let line = before.matches('\n').count() + 1;
    let col = before.chars().rev().take_while(|c| *c != '\n').count() + 1;
    format!("{}:{line}:{col}:", path.display())
}

/// Write `text` as the only family file of a fresh folder and expect it refused.
fn refused(text: &str, value_start: &str, needles: &[&str]) {
    let dir = tempfile::tempdir().unwrap();
    let p: PathBuf = dir.path().join("firm.yaml");
    std::fs::write(&p, text).unwrap();
    let (code, err) = classes(dir.path());
    assert_eq!(code, 2, "{err}");
    let at = place(&p, text, value_start);
    assert!(
        err.contains(&format!("error: {at} family `en1993-1-9`")),
        "`{at}` not in: {err}"
    );
    for n in needles {
        assert!(err.contains(n), "`{n}` not in: {err}");
    }
    assert!(err.contains("hint: see joint-classes/README.md"), "{err}");
}

#[test]
fn zero_damage_limit() {
    let t = en_with("damage_limit:\n  value: 1.0", "damage_limit:\n  value: 0");
    refused(
        &t,
        "0\n  # Annex A",
        &["damage_limit.value: damage limit must be greater than zero, got 0"],
    );
}

#[test]
fn negative_slope() {
    let t = en_with(
        "{slope_m: 3, end_cycles: 5.0e6",
        "{slope_m: -3, end_cycles: 5.0e6",
    );
    refused(
        &t,
        "-3, end_cycles",
        &["curves.normal.segments[0].slope_m: slope_m must be greater than zero, got -3"],
    );
}

#[test]
fn nan_slope() {
    // `.nan` is YAML's spelling of not-a-number (YAML 1.2 core schema)
    let t = en_with(
        "{slope_m: 5, end_cycles: 1.0e8, knee_symbol: \"ΔτL\"",
        "{slope_m: .nan, end_cycles: 1.0e8, knee_symbol: \"ΔτL\"",
    );
    refused(
        &t,
        ".nan",
        &["curves.shear.segments[0].slope_m: slope_m is not a number (NaN)"],
    );
}

#[test]
fn zero_reference_thickness() {
    let t = en_with("  reference_mm: 25", "  reference_mm: 0");
    refused(
        &t,
        "0\n  applies_above",
        &["thickness.reference_mm: reference_mm must be greater than zero, got 0"],
    );
}

#[test]
fn duplicate_category() {
    // 71 is the eighth category of the list and is added again at its end
    let t = en_with("40, 36]", "40, 36, 71]");
    refused(
        &t,
        "71]",
        &["curves.normal.categories_mpa[14]: category 71 is listed twice (also at position 8)"],
    );
}

#[test]
fn unknown_curve_variant_of_an_entry() {
    let t = en_with(
        "    normal_category: 160\n    mean_stress_case: non-welded\n  - key: plate-machine",
        "    normal_category: 160\n    mean_stress_case: non-welded\n    curve_variant: m5\n  - key: plate-machine",
    );
    refused(
        &t,
        "m5\n  - key: plate-machine",
        &["catalogue[0].curve_variant: catalogue entry `rolled-plate-plain`: curve_variant `m5` is not one of curves.normal.variants (hollow-joint)"],
    );
}

#[test]
fn duplicate_id_in_two_folder_files() {
    let dir = tempfile::tempdir().unwrap();
    let text = shipped("iiw.yaml").replace("id: iiw", "id: firm-iiw");
    let a = dir.path().join("a-firm.yaml");
    let b = dir.path().join("b-firm.yaml");
    std::fs::write(&a, &text).unwrap();
    std::fs::write(&b, &text).unwrap();
    let (code, err) = classes(dir.path());
    assert_eq!(code, 2, "{err}");
    // reported at the `id:` value of the second file (the folder is read in name order)
    let at = place(&b, &text, "firm-iiw\ntitle");
    assert!(
        err.contains(&format!(
            "error: {at} family id `firm-iiw` is given by both {} and {}",
            a.display(),
            b.display()
        )),
        "{err}"
    );
    assert!(
        err.contains("hint: give each family file in the folder its own id"),
        "{err}"
    );
}

#[test]
fn folder_file_replacing_a_built_in_family_is_allowed() {
    let dir = tempfile::tempdir().unwrap();
    let text = shipped("iiw.yaml").replace("data_version: \"", "data_version: \"firm-");
    std::fs::write(dir.path().join("iiw-firm.yaml"), &text).unwrap();
    let out = Command::cargo_bin("seamlife")
        .unwrap()
        .arg("--joint-classes")
        .arg(dir.path())
        .args(["classes", "iiw"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&out.stdout).contains("data version firm-2026"));
}
