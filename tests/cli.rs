//! Command-line behaviour: exit codes, messages with file:line:col, the JSON model.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn demo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/kestrel-bay-runway.yaml")
}

fn demo_text() -> String {
    std::fs::read_to_string(demo()).unwrap()
}

fn seamlife() -> Command {
    Command::cargo_bin("seamlife").unwrap()
}

/// Write `text` as `name` in a fresh folder and run `seamlife assess` on it.
fn assess_text(name: &str, text: &str) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join(name);
    std::fs::write(&p, text).unwrap();
    // the demo's measured record, referenced relative to the project file
    let rec = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/records");
    std::fs::create_dir(dir.path().join("records")).unwrap();
    for e in std::fs::read_dir(rec).unwrap() {
        let e = e.unwrap();
        std::fs::copy(e.path(), dir.path().join("records").join(e.file_name())).unwrap();
    }
    let out = seamlife()
        .current_dir(dir.path())
        .args(["assess", name])
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Replace exactly one occurrence of `from` in the demo.
fn demo_with(from: &str, to: &str) -> String {
    let t = demo_text();
    assert_eq!(
        t.matches(from).count(),
        1,
        "`{from}` must occur once in the demo"
    );
    t.replace(from, to)
}

fn line_of(text: &str, needle: &str) -> usize {
    text.lines().position(|l| l.contains(needle)).unwrap() + 1
}

#[test]
fn demo_assess_table_and_exit_code_1() {
    let out = seamlife().arg("assess").arg(demo()).output().unwrap();
    // The demo holds one failing detail (RG3-B01), so the exit code is 1.
    assert_eq!(out.status.code(), Some(1));
    let s = String::from_utf8(out.stdout).unwrap();
    assert!(s.contains("RG3-B01"));
    assert!(s.contains("FAIL"));
    assert!(s.contains("Caution: the governing code"));
    assert!(s.contains("governing RG3-B01"));
}

#[test]
fn demo_json_model() {
    let out = seamlife()
        .arg("assess")
        .arg(demo())
        .arg("--json")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["tool"]["name"], "seamlife");
    assert_eq!(v["tool"]["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(v["family"]["id"], "en1993-1-9");
    assert!(v["family"]["data_version"].is_string());
    // the input hash is the SHA-256 of the file bytes
    let text = demo_text();
    assert_eq!(
        v["input"]["sha256"],
        seamlife::input::sha256_hex(text.as_bytes())
    );
    assert_eq!(v["input"]["sha256"].as_str().unwrap().len(), 64);
    // EN 1993-1-9 Table 3.1: safe life, high consequence γMf = 1.35
    assert_eq!(v["basis"]["gamma_mf"]["value"], 1.35);
    assert_eq!(v["basis"]["gamma_ff"]["value"], 1.0);
    assert_eq!(v["basis"]["damage_limit"]["value"], 1.0);
    let details = v["details"].as_array().unwrap();
    assert_eq!(details.len(), 9);
    for d in details {
        for key in [
            "id",
            "status",
            "utilisation",
            "damage",
            "damage_limit",
            "life_years",
            "reserve_factor",
            "required_category",
            "warnings",
        ] {
            assert!(d.get(key).is_some(), "{key} missing");
        }
        for c in d["components"].as_array().unwrap() {
            assert!(c["equivalent_range_mpa"].is_number());
            assert!(c["category_mpa"].is_number());
        }
    }
    let w01 = &details[0];
    assert_eq!(w01["id"], "RG3-W01");
    assert!(w01["interaction"].is_object());
    // RG3-W02 is 40 mm thick: ks = (25/40)^0.2 = 0.9102821015 (EN 1993-1-9 7.2.2;
    // hand-worked to 10 significant figures by tests/tools/hand_worked.py)
    let ks = details[1]["components"][0]["size"]["factor"]
        .as_f64()
        .unwrap();
    assert!((ks - 0.9102821015).abs() <= 1e-9 * 0.9102821015);
    assert_eq!(v["summary"]["governing_detail"], "RG3-B01");
}

#[test]
fn csv_output_and_output_file() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("r.csv");
    let st = seamlife()
        .arg("assess")
        .arg(demo())
        .args(["--csv", "-o"])
        .arg(&out)
        .output()
        .unwrap();
    assert_eq!(st.status.code(), Some(1));
    let text = std::fs::read_to_string(&out).unwrap();
    assert_eq!(text.lines().count(), 10);
    assert!(text.starts_with("id,location,group,detail,status,utilisation,governing_check"));
    // no temporary files left beside the output
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1);
}

#[test]
fn passing_project_exits_0() {
    let t = demo_text();
    // Keep the first three details (all pass) by cutting before RG3-B01.
    let cut = t.find("  - id: RG3-B01").unwrap();
    let (code, out, _) = assess_text("p.yaml", &t[..cut]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("3 details: 3 pass, 0 fail"));
}

#[test]
fn lint_classes_and_new() {
    seamlife().arg("lint").arg(demo()).assert().code(0);
    let out = seamlife().args(["classes"]).output().unwrap();
    let s = String::from_utf8(out.stdout).unwrap();
    assert!(s.contains("en1993-1-9") && s.contains("iiw"));
    let out = seamlife().args(["classes", "en1993-1-9"]).output().unwrap();
    let s = String::from_utf8(out.stdout).unwrap();
    assert!(s.contains("butt-transverse-ground-flush"));
    assert!(s.contains("160, 140, 125, 112, 100, 90, 80, 71, 63, 56, 50, 45, 40, 36"));
    let out = seamlife().args(["classes", "eurocode"]).output().unwrap();
    assert_eq!(out.status.code(), Some(2));

    let dir = tempfile::tempdir().unwrap();
    let target = dir.path().join("starter");
    seamlife().arg("new").arg(&target).assert().code(0);
    seamlife()
        .arg("lint")
        .arg(target.join("project.yaml"))
        .assert()
        .code(0);
    // refuses to overwrite
    seamlife().arg("new").arg(&target).assert().code(2);
}

fn expect_error(text: &str, code: i32, needles: &[&str]) -> String {
    let (c, _, err) = assess_text("bad.yaml", text);
    assert_eq!(c, code, "stderr: {err}");
    for n in needles {
        assert!(err.contains(n), "`{n}` not in: {err}");
    }
    err
}

#[test]
fn malformed_yaml() {
    let err = expect_error(
        "seamlife: 1\nproject:\n  title: x\n   bad: : y\n",
        2,
        &["bad.yaml:4:", "error:", "hint:"],
    );
    assert!(err.contains("mapping values are not allowed"));
}

#[test]
fn unknown_key_suggests_the_near_one() {
    let t = demo_with("    thickness_mm: 12", "    thicknes_mm: 12");
    let line = line_of(&t, "thicknes_mm");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:5:"),
            "unknown key `thicknes_mm`",
            "did you mean `thickness_mm`?",
        ],
    );
}

#[test]
fn missing_required_field() {
    let t = demo_with("    material: S355-thick\n", "");
    expect_error(
        &t,
        2,
        &["bad.yaml:", "missing field `material`", "add `material:`"],
    );
}

#[test]
fn unknown_family() {
    let t = demo_with("family: en1993-1-9", "family: en1993-9");
    let line = line_of(&t, "family: en1993-9");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:11:"),
            "unknown curve family `en1993-9`",
            "did you mean `en1993-1-9`?",
        ],
    );
}

#[test]
fn unknown_category() {
    let t = demo_with("      category: 71", "      category: 70");
    let line = line_of(&t, "category: 70");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:17:"),
            "category 70 is not one of",
            "nearest is 71",
        ],
    );
}

#[test]
fn unknown_catalogue_detail() {
    let t = demo_with(
        "detail: stiffener-vertical-l-upto-50",
        "detail: stiffener-verticl-l-upto-50",
    );
    expect_error(
        &t,
        2,
        &[
            "not in the en1993-1-9 catalogue",
            "did you mean `stiffener-vertical-l-upto-50`?",
        ],
    );
}

#[test]
fn negative_zero_and_nan_ranges() {
    let t = demo_with("{range_mpa: 70, cycles: 1}", "{range_mpa: -70, cycles: 1}");
    let line = line_of(&t, "range_mpa: -70");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:"),
            "range_mpa must be greater than zero, got -70",
        ],
    );
    let t = demo_with("{range_mpa: 70, cycles: 1}", "{range_mpa: 0, cycles: 1}");
    expect_error(&t, 2, &["range_mpa must be greater than zero, got 0"]);
    let t = demo_with("{range_mpa: 54, cycles: 1}", "{range_mpa: .nan, cycles: 1}");
    let line = line_of(&t, ".nan");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:32:"),
            "range_mpa is not a number (NaN)",
        ],
    );
    let t = demo_with("{range_mpa: 54, cycles: 1}", "{range_mpa: .inf, cycles: 1}");
    expect_error(&t, 2, &["range_mpa is infinite"]);
    let t = demo_with(
        "{max_mpa: 88, min_mpa: 13, cycles: 1}",
        "{max_mpa: 13, min_mpa: 88, cycles: 1}",
    );
    expect_error(&t, 2, &["max_mpa 13 must exceed min_mpa 88"]);
}

#[test]
fn zero_cycles() {
    let t = demo_with("{range_mpa: 38, cycles: 1}", "{range_mpa: 38, cycles: 0}");
    let line = line_of(&t, "cycles: 0");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:44:"),
            "cycles must be greater than zero, got 0",
        ],
    );
}

#[test]
fn duplicate_detail_ids() {
    let t = demo_with("  - id: RG3-S01", "  - id: RG3-W01");
    let second = t
        .lines()
        .enumerate()
        .filter(|(_, l)| l.contains("id: RG3-W01"))
        .nth(1)
        .unwrap()
        .0
        + 1;
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{second}:9:"),
            "duplicate detail id `RG3-W01`",
            "first used by details[0]",
        ],
    );
}

#[test]
fn thickness_not_positive() {
    let t = demo_with("    thickness_mm: 16", "    thickness_mm: 0");
    let line = line_of(&t, "thickness_mm: 0");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:19:"),
            "thickness_mm must be greater than zero",
        ],
    );
    let t = demo_with("    thickness_mm: 16", "    thickness_mm: -5");
    expect_error(&t, 2, &["thickness_mm must be greater than zero, got -5"]);
}

#[test]
fn material_not_defined() {
    let t = demo_with("    material: S355-thick", "    material: S335-thick");
    let line = line_of(&t, "S335-thick");
    expect_error(
        &t,
        2,
        &[
            &format!("bad.yaml:{line}:15:"),
            "material `S335-thick` is not defined",
            "did you mean `S355-thick`?",
        ],
    );
}

#[test]
fn wrong_enum_value_and_type() {
    let t = demo_with("strategy: safe-life", "strategy: safelife");
    expect_error(
        &t,
        2,
        &["unknown value `safelife`", "did you mean `safe-life`?"],
    );
    let t = demo_with("design_life_years: 25", "design_life_years: twenty-five");
    expect_error(&t, 2, &["invalid type", "give a plain number"]);
}

#[test]
fn override_needs_reason() {
    let t = demo_with(
        "  consequence: high\n",
        "  consequence: high\n  gamma_mf: {value: 1.25, reason: \"\"}\n",
    );
    expect_error(&t, 2, &["an override of gamma_mf needs a reason"]);
    let t = demo_with(
        "  consequence: high\n",
        "  consequence: high\n  gamma_mf: {value: 1.25, reason: \"inspection regime per KBM-SPEC-014\"}\n",
    );
    let (code, out, _) = assess_text("ok.yaml", &t);
    // with the lower γMf the bracket RG3-B01 passes too
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("γMf 1.25"));
}

#[test]
fn several_problems_reported_together() {
    let t = demo_with("    thickness_mm: 16", "    thickness_mm: 0")
        .replace("      category: 71", "      category: 70");
    let err = expect_error(
        &t,
        2,
        &["thickness_mm must be greater than zero", "category 70"],
    );
    assert!(err.contains("2 problems found"));
}

#[test]
fn missing_file_and_folder() {
    let out = seamlife()
        .args(["assess", "no-such-project.yaml"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("no-such-project.yaml: cannot read file"));
    let dir = tempfile::tempdir().unwrap();
    let out = seamlife().arg("assess").arg(dir.path()).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8(out.stderr)
        .unwrap()
        .contains("is a folder"));
}

#[test]
fn empty_and_huge_files() {
    expect_error("", 2, &["project file is empty"]);
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("huge.yaml");
    let f = std::fs::File::create(&p).unwrap();
    // sparse file just over the limit; never read
    f.set_len(seamlife::input::MAX_INPUT_BYTES + 1).unwrap();
    let out = seamlife().arg("assess").arg(&p).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8(out.stderr)
        .unwrap()
        .contains("limited to 64 MiB"));
}

#[test]
fn bad_output_path_leaves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let out = seamlife()
        .arg("assess")
        .arg(demo())
        .args(["--json", "-o"])
        .arg(dir.path().join("missing-folder/r.json"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8(out.stderr)
        .unwrap()
        .contains("cannot write"));
}

#[test]
fn bad_override_family_folder() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("broken.yaml"), "format: 1\nid: x\n").unwrap();
    let out = seamlife()
        .arg("--joint-classes")
        .arg(dir.path())
        .arg("classes")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("broken.yaml"), "{err}");
    assert!(err.contains("missing field"), "{err}");
}

#[test]
fn override_family_folder_adds_a_family() {
    // A copy of the EN family under another id proves families are data: no code change.
    let dir = tempfile::tempdir().unwrap();
    let en = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("joint-classes/en1993-1-9.yaml"),
    )
    .unwrap();
    std::fs::write(
        dir.path().join("firm.yaml"),
        en.replace("id: en1993-1-9", "id: firm-en"),
    )
    .unwrap();
    let out = seamlife()
        .arg("--joint-classes")
        .arg(dir.path())
        .arg("classes")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    assert!(String::from_utf8(out.stdout).unwrap().contains("firm-en"));
}
