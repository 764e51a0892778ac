//! `seamlife verify`: a submitted results model re-run and compared. Each kind of
//! change a checker must catch is made to a copy of the demo and must be reported.

use assert_cmd::Command;
use serde_json::Value;
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn seamlife() -> Command {
    Command::cargo_bin("seamlife").unwrap()
}

/// A copy of the demo project and its record in a fresh folder.
fn demo_copy() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        root().join("projects/kestrel-bay-runway.yaml"),
        dir.path().join("kestrel-bay-runway.yaml"),
    )
    .unwrap();
    std::fs::create_dir(dir.path().join("records")).unwrap();
    std::fs::copy(
        root().join("projects/records/rg3-sg4-record.csv"),
        dir.path().join("records/rg3-sg4-record.csv"),
    )
    .unwrap();
    dir
}

/// `assess --json` of the copy into results.json (with extra arguments first).
fn submit(dir: &Path, extra: &[&str]) {
    let out = seamlife()
        .current_dir(dir)
        .args(extra)
        .args(["assess", "kestrel-bay-runway.yaml", "--json", "-q"])
        .args(["-o", "results.json"])
        .output()
        .unwrap();
    // the demo has details that fail on purpose: exit 1 is its normal outcome
    assert!(out.status.code().unwrap() <= 1, "{out:?}");
}

/// `verify --json results.json` in `dir`: exit code and findings.
fn verify(dir: &Path, extra: &[&str]) -> (i32, Value) {
    let out = seamlife()
        .current_dir(dir)
        .args(["verify", "results.json", "--json"])
        .args(extra)
        .output()
        .unwrap();
    let code = out.status.code().unwrap();
    let v = serde_json::from_slice(&out.stdout).unwrap_or(Value::Null);
    (code, v)
}

fn differing_paths(v: &Value) -> Vec<String> {
    v["values"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| d["path"].as_str().unwrap().to_string())
        .collect()
}

fn input_same(v: &Value, kind: &str) -> bool {
    v["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["kind"] == kind)
        .unwrap_or_else(|| panic!("no {kind} input in {v}"))["same"]
        .as_bool()
        .unwrap()
}

fn edit_json(path: &Path, f: impl FnOnce(&mut Value)) {
    let mut v: Value = serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    f(&mut v);
    std::fs::write(path, serde_json::to_string_pretty(&v).unwrap()).unwrap();
}

fn detail<'a>(v: &'a mut Value, id: &str) -> &'a mut Value {
    v["details"]
        .as_array_mut()
        .unwrap()
        .iter_mut()
        .find(|d| d["id"] == id)
        .unwrap()
}

#[test]
fn untouched_submission_agrees() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 0, "{v}");
    assert_eq!(v["agree"], true);
    assert!(v["values"].as_array().unwrap().is_empty());
    // every number and string of the nine details is compared, not a sample
    assert!(v["values_compared"].as_u64().unwrap() > 1000, "{v}");
    // project, the one series file and the embedded family are hashed
    let kinds: Vec<&str> = v["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|i| i["kind"].as_str().unwrap())
        .collect();
    assert_eq!(kinds, ["project", "series", "family"]);
}

#[test]
fn model_records_the_family_file_hash() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.path().join("results.json")).unwrap())
            .unwrap();
    let text = std::fs::read(root().join("joint-classes/en1993-1-9.yaml")).unwrap();
    use sha2::Digest;
    let want: String = sha2::Sha256::digest(&text)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    assert_eq!(v["family"]["sha256"], Value::String(want));
    assert!(!v["family"]["data_version"].as_str().unwrap().is_empty());
}

#[test]
fn tampered_value_is_found() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    edit_json(&dir.path().join("results.json"), |v| {
        let d = detail(v, "RG3-W02");
        let x = d["damage"].as_f64().unwrap();
        // 1e-6 relative: far beyond the default tolerance of 1e-9 (the command's default)
        d["damage"] = Value::from(x * (1.0 + 1e-6));
    });
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 1, "{v}");
    assert_eq!(differing_paths(&v), ["details[RG3-W02].damage"]);
    let rel = v["values"][0]["relative"].as_f64().unwrap();
    assert!((rel - 1e-6).abs() < 1e-9, "{rel}");
    // the inputs themselves are untouched
    assert!(input_same(&v, "project") && input_same(&v, "series"));
    // a looser tolerance accepts it
    let (code, _) = verify(dir.path(), &["--rtol", "1e-5"]);
    assert_eq!(code, 0);
}

#[test]
fn changed_status_string_is_found() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    edit_json(&dir.path().join("results.json"), |v| {
        detail(v, "RG3-B01")["status"] = Value::from("pass");
    });
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 1);
    assert!(
        differing_paths(&v).contains(&"details[RG3-B01].status".to_string()),
        "{v}"
    );
}

#[test]
fn changed_block_is_found() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    let p = dir.path().join("kestrel-bay-runway.yaml");
    let text = std::fs::read_to_string(&p).unwrap();
    let edited = text.replacen(
        "blocks: [{range_mpa: 70, cycles: 1}, {range_mpa: 18, cycles: 2}]",
        "blocks: [{range_mpa: 72, cycles: 1}, {range_mpa: 18, cycles: 2}]",
        1,
    );
    assert_ne!(text, edited);
    std::fs::write(&p, edited).unwrap();
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 1, "{v}");
    assert!(!input_same(&v, "project"));
    let paths = differing_paths(&v);
    assert!(
        paths.contains(&"details[RG3-S01].damage".to_string()),
        "{paths:?}"
    );
    // the block's own range is named (blocks are matched by position within a component)
    assert!(
        paths
            .iter()
            .any(|p| p.starts_with("details[RG3-S01].components[normal].blocks[0].range_mpa")),
        "{paths:?}"
    );
    // no other detail moved
    assert!(
        paths.iter().all(|p| !p.starts_with("details[")
            || p.starts_with("details[RG3-S01]")
            || p.starts_with("details[RG3-B0")),
        "{paths:?}"
    );
}

#[test]
fn changed_series_file_is_found() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    let p = dir.path().join("records/rg3-sg4-record.csv");
    let text = std::fs::read_to_string(&p).unwrap();
    // one sample of the record raised: a different file, whatever it does to the count
    let edited = text.replacen("0.10,15.42", "0.10,95.42", 1);
    assert_ne!(text, edited);
    std::fs::write(&p, edited).unwrap();
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 1, "{v}");
    assert!(input_same(&v, "project"));
    assert!(!input_same(&v, "series"));
}

#[test]
fn different_family_data_version_is_found() {
    let dir = demo_copy();
    let jc = dir.path().join("families");
    std::fs::create_dir(&jc).unwrap();
    let fam = std::fs::read_to_string(root().join("joint-classes/en1993-1-9.yaml")).unwrap();
    let edited = fam.replacen("data_version: \"", "data_version: \"firm-", 1);
    assert_ne!(fam, edited);
    std::fs::write(jc.join("en1993-1-9.yaml"), edited).unwrap();
    submit(dir.path(), &["--joint-classes", "families"]);
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 1, "{v}");
    let fam_data = v["versions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["what"] == "family data")
        .unwrap();
    assert_eq!(fam_data["same"], false);
    assert!(fam_data["submitted"].as_str().unwrap().starts_with("firm-"));
    assert!(!input_same(&v, "family"));
    // the curves themselves are the same, so no number differs (the origin does)
    let paths = differing_paths(&v);
    assert_eq!(paths, ["family.origin"], "{paths:?}");
    // verified with the same folder, everything agrees
    let (code, _) = verify(dir.path(), &["--joint-classes", "families"]);
    assert_eq!(code, 0);
}

#[test]
fn other_tool_version_alone_is_a_note() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    edit_json(&dir.path().join("results.json"), |v| {
        v["tool"]["version"] = Value::from("0.0.1");
    });
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 0, "{v}");
    let tool = v["versions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["what"] == "tool")
        .unwrap();
    assert_eq!(tool["same"], false);
    assert_eq!(tool["counts"], false);
}

#[test]
fn shard_is_verified_as_the_same_part() {
    let dir = demo_copy();
    let out = seamlife()
        .current_dir(dir.path())
        .args([
            "assess",
            "kestrel-bay-runway.yaml",
            "--json",
            "-q",
            "--shard",
            "2/3",
        ])
        .args(["-o", "results.json"])
        .output()
        .unwrap();
    assert!(out.status.code().unwrap() <= 1);
    let (code, v) = verify(dir.path(), &[]);
    assert_eq!(code, 0, "{v}");
}

#[test]
fn table_names_what_differs() {
    let dir = demo_copy();
    submit(dir.path(), &[]);
    edit_json(&dir.path().join("results.json"), |v| {
        detail(v, "RG3-W01")["life_years"] = Value::from(1.0);
    });
    let out = seamlife()
        .current_dir(dir.path())
        .args(["verify", "results.json", "kestrel-bay-runway.yaml"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("details[RG3-W01].life_years  submitted 1.0"),
        "{text}"
    );
    assert!(text.contains("DIFFERENCES FOUND"), "{text}");
    assert!(text.contains("Caution:"), "{text}");
}

#[test]
fn bad_input_exits_2_with_a_location() {
    let dir = demo_copy();
    let d = dir.path();
    let run = |args: &[&str]| {
        let out = seamlife()
            .current_dir(d)
            .arg("verify")
            .args(args)
            .output()
            .unwrap();
        (
            out.status.code().unwrap(),
            String::from_utf8_lossy(&out.stderr).into_owned(),
        )
    };
    std::fs::write(
        d.join("broken.json"),
        "{\n  \"model_version\": 2,\n  oops\n}\n",
    )
    .unwrap();
    let (code, err) = run(&["broken.json"]);
    assert_eq!(code, 2);
    assert!(err.contains("broken.json:3:"), "{err}");
    std::fs::write(d.join("wrong.json"), "{\"model_version\": \"two\"}").unwrap();
    let (code, err) = run(&["wrong.json"]);
    assert_eq!(code, 2);
    assert!(err.contains("wrong.json:1:"), "{err}");
    // a folder, a device and a missing file are refused before reading
    let (code, _) = run(&["records"]);
    assert_eq!(code, 2);
    let (code, _) = run(&["/dev/zero"]);
    assert_eq!(code, 2);
    let (code, _) = run(&["missing.json"]);
    assert_eq!(code, 2);
    // a model whose project is not beside it
    submit(d, &[]);
    std::fs::rename(d.join("kestrel-bay-runway.yaml"), d.join("elsewhere.yaml")).unwrap();
    let (code, err) = run(&["results.json"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("kestrel-bay-runway.yaml"), "{err}");
    let (code, _) = run(&["results.json", "elsewhere.yaml"]);
    assert_eq!(code, 0);
    for bad in ["-1", "nan", "inf"] {
        let (code, _) = run(&["results.json", "elsewhere.yaml", "--rtol", bad]);
        assert_eq!(code, 2, "--rtol {bad}");
    }
    // a model from a newer seamlife
    edit_json(&d.join("results.json"), |v| {
        v["model_version"] = Value::from(99)
    });
    let (code, err) = run(&["results.json", "elsewhere.yaml"]);
    assert_eq!(code, 2);
    assert!(err.contains("newer"), "{err}");
}
