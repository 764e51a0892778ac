//! `seamlife diff`: the demo's revisions A and B, each kind of change a checker must
//! see (a loading block, a series file, a category, a status), the exit codes and bad
//! input. The demo numbers are invented (projects/kestrel-bay-runway*.yaml); expected
//! values are read from those files or from `assess --json` of the same files.

mod safety_common;

use safety_common::{cmd, mkfifo, root, run, run_in};
use serde_json::Value;
use std::path::{Path, PathBuf};

fn rev_a() -> PathBuf {
    root().join("projects/kestrel-bay-runway-rev-a.yaml")
}

fn rev_b() -> PathBuf {
    root().join("projects/kestrel-bay-runway.yaml")
}

/// `seamlife diff OLD NEW --json`: exit code and the diff model.
fn diff_json(old: &Path, new: &Path) -> (i32, Value) {
    let (code, out, err) = run(&mut cmd(&[
        "diff",
        old.to_str().unwrap(),
        new.to_str().unwrap(),
        "--json",
    ]));
    let v = serde_json::from_str(&out).unwrap_or_else(|e| panic!("{e}: {out} {err}"));
    (code, v)
}

fn items(list: &Value) -> Vec<String> {
    list.as_array()
        .unwrap()
        .iter()
        .map(|c| c["item"].as_str().unwrap().to_string())
        .collect()
}

fn ids(list: &Value) -> Vec<String> {
    list.as_array()
        .unwrap()
        .iter()
        .map(|c| c["id"].as_str().unwrap().to_string())
        .collect()
}

fn change<'a>(list: &'a Value, item: &str) -> &'a Value {
    list.as_array()
        .unwrap()
        .iter()
        .find(|c| c["item"] == item)
        .unwrap_or_else(|| panic!("no change {item} in {list}"))
}

fn changed<'a>(v: &'a Value, id: &str) -> &'a Value {
    v["changed"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["id"] == id)
        .unwrap_or_else(|| panic!("{id} not changed in {v}"))
}

/// `assess --json` of a project: its results model.
fn assess(project: &Path) -> Value {
    let (code, out, err) = run(&mut cmd(&[
        "assess",
        project.to_str().unwrap(),
        "--json",
        "-q",
    ]));
    assert!(code <= 1, "{err}");
    serde_json::from_str(&out).unwrap()
}

fn detail<'a>(r: &'a Value, id: &str) -> &'a Value {
    r["details"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["id"] == id)
        .unwrap()
}

/// A copy of revision B and its gauge record in a fresh folder, `edit` applied to the
/// project text (each replaced text must occur).
fn b_copy(edits: &[(&str, &str)]) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    let mut text = std::fs::read_to_string(rev_b()).unwrap();
    for (from, to) in edits {
        assert!(text.contains(from), "{from} not in the demo");
        text = text.replacen(from, to, 1);
    }
    std::fs::write(dir.path().join("b.yaml"), text).unwrap();
    std::fs::create_dir(dir.path().join("records")).unwrap();
    std::fs::copy(
        root().join("projects/records/rg3-sg4-record.csv"),
        dir.path().join("records/rg3-sg4-record.csv"),
    )
    .unwrap();
    dir
}

#[test]
fn demo_revision_a_to_b_shows_exactly_the_changes_made() {
    let (code, v) = diff_json(&rev_a(), &rev_b());
    // revision B adds bracket RG3-B01, which fails: an added detail that does not pass
    assert_eq!(code, 1);
    assert_eq!(v["worse"], serde_json::json!(["RG3-B01"]));
    // the revision table of rev B: "Splice thickness changed to 40 mm; bracket detail added"
    assert_eq!(
        items(&v["project"]),
        ["project.revision", "project.date", "project.revisions[B]"]
    );
    assert_eq!(change(&v["project"], "project.revision")["old"], "A");
    assert_eq!(change(&v["project"], "project.revision")["new"], "B");
    assert_eq!(change(&v["project"], "project.date")["old"], "2026-10-02");
    assert_eq!(change(&v["project"], "project.date")["new"], "2026-11-20");
    assert_eq!(ids(&v["added"]), ["RG3-B01", "RG3-B02"]);
    assert_eq!(ids(&v["removed"]), Vec::<String>::new());
    assert_eq!(ids(&v["changed"]), ["RG3-W02"]);
    assert_eq!(v["unchanged"], 6);

    let w02 = changed(&v, "RG3-W02");
    assert_eq!(
        items(&w02["inputs"]),
        [
            "description",
            "material",
            "fy_mpa",
            "thickness_mm",
            "normal.loading[loaded passage].block[1].max_mpa",
            "normal.loading[loaded passage].block[1].min_mpa",
            "normal.loading[unloaded passage].block[1].max_mpa",
            "normal.loading[unloaded passage].block[1].min_mpa",
        ]
    );
    let inp = &w02["inputs"];
    // values as written in the two demo files
    assert_eq!(change(inp, "material")["old"], "S355-mid");
    assert_eq!(change(inp, "material")["new"], "S355-thick");
    assert_eq!(change(inp, "fy_mpa")["old"], 345.0);
    assert_eq!(change(inp, "fy_mpa")["new"], 335.0);
    assert_eq!(change(inp, "thickness_mm")["old"], 25.0);
    assert_eq!(change(inp, "thickness_mm")["new"], 40.0);
    let max = change(inp, "normal.loading[loaded passage].block[1].max_mpa");
    assert_eq!(
        (max["old"].as_f64(), max["new"].as_f64()),
        (Some(118.0), Some(88.0))
    );
    let min = change(inp, "normal.loading[unloaded passage].block[1].min_mpa");
    assert_eq!(
        (min["old"].as_f64(), min["new"].as_f64()),
        (Some(17.0), Some(13.0))
    );

    // the result changes are those of the two assessments
    let (ra, rb) = (assess(&rev_a()), assess(&rev_b()));
    let (da, db) = (detail(&ra, "RG3-W02"), detail(&rb, "RG3-W02"));
    let res = &w02["results"];
    for key in ["utilisation", "damage", "life_years", "reserve_factor"] {
        assert_eq!(change(res, key)["old"], da[key], "{key}");
        assert_eq!(change(res, key)["new"], db[key], "{key}");
    }
    assert_eq!(
        change(res, "required_category_mpa")["old"],
        da["required_category"]
    );
    assert!(!items(res).contains(&"status".to_string()));
    assert_eq!(w02["old_status"], "pass");
    assert_eq!(w02["new_status"], "pass");
    assert_eq!(w02["status_move"], "same");
    assert_eq!(v["added"][0]["status"], "fail");
    assert_eq!(
        v["added"][0]["utilisation"],
        detail(&rb, "RG3-B01")["utilisation"]
    );
}

#[test]
fn results_models_give_the_same_diff_as_project_files() {
    let dir = tempfile::tempdir().unwrap();
    for (p, name) in [(rev_a(), "a.json"), (rev_b(), "b.json")] {
        std::fs::write(
            dir.path().join(name),
            serde_json::to_vec(&assess(&p)).unwrap(),
        )
        .unwrap();
    }
    let (code_p, vp) = diff_json(&rev_a(), &rev_b());
    let (code_r, vr) = diff_json(&dir.path().join("a.json"), &dir.path().join("b.json"));
    assert_eq!(code_p, code_r);
    assert_eq!(vr["old"]["kind"], "results");
    assert_eq!(vp["old"]["kind"], "project");
    assert_eq!(vr["old"]["project_sha256"], vp["old"]["project_sha256"]);
    for key in [
        "project",
        "added",
        "removed",
        "changed",
        "unchanged",
        "worse",
    ] {
        assert_eq!(vp[key], vr[key], "{key}");
    }
    // a model against a project file works too
    let (_, vm) = diff_json(&dir.path().join("a.json"), &rev_b());
    assert_eq!(vm["changed"], vp["changed"]);
}

#[test]
fn the_same_revision_has_no_changes_and_exit_0() {
    let (code, v) = diff_json(&rev_b(), &rev_b());
    assert_eq!(code, 0);
    assert_eq!(v["project"], serde_json::json!([]));
    assert_eq!(v["changed"], serde_json::json!([]));
    assert_eq!(v["unchanged"], 9);
    let (code, out, _) = run(&mut cmd(&[
        "diff",
        rev_b().to_str().unwrap(),
        rev_b().to_str().unwrap(),
    ]));
    assert_eq!(code, 0);
    assert!(
        out.contains("0 added, 0 removed, 0 changed, 9 unchanged"),
        "{out}"
    );
    assert!(out.contains("no status got worse"), "{out}");
    assert!(out.contains("licensed/chartered engineer prevail"), "{out}");
}

#[test]
fn a_changed_loading_block_is_listed_alone() {
    // RG3-G01's first block: 1 cycle per surge, 18000 surges a year (demo values)
    let dir = b_copy(&[(
        "{range_mpa: 38, cycles: 1}, {range_mpa: 16, cycles: 4}",
        "{range_mpa: 38, cycles: 2}, {range_mpa: 16, cycles: 4}",
    )]);
    let (code, v) = diff_json(&rev_b(), &dir.path().join("b.yaml"));
    assert_eq!(ids(&v["changed"]), ["RG3-G01"]);
    let g = changed(&v, "RG3-G01");
    let item = "normal.loading[crab traverse, surge].block[1].cycles_per_year";
    assert_eq!(items(&g["inputs"]), [item]);
    // cycles a year = cycles per occurrence x occurrences a year: 1 x 18000, 2 x 18000
    assert_eq!(change(&g["inputs"], item)["old"], 18000.0);
    assert_eq!(change(&g["inputs"], item)["new"], 36000.0);
    let d = change(&g["results"], "damage");
    assert!(d["new"].as_f64().unwrap() > d["old"].as_f64().unwrap());
    assert_eq!(v["project"], serde_json::json!([]));
    // RG3-B01 fails in both: no status got worse
    assert_eq!(code, 0);
}

#[test]
fn a_changed_series_file_is_found_by_its_hash() {
    let dir = b_copy(&[]);
    let rec = dir.path().join("records/rg3-sg4-record.csv");
    let text = std::fs::read_to_string(&rec).unwrap();
    // scale one line's gauge reading by 1.5 (the record's third line, a sample)
    let mut lines: Vec<String> = text.lines().map(String::from).collect();
    let cells: Vec<&str> = lines[2].split(',').collect();
    let last = cells.len() - 1;
    let x: f64 = cells[last].trim().parse().unwrap();
    let mut new_cells: Vec<String> = cells.iter().map(|c| c.to_string()).collect();
    new_cells[last] = format!("{}", x * 1.5 + 40.0);
    lines[2] = new_cells.join(",");
    std::fs::write(&rec, lines.join("\n") + "\n").unwrap();
    let (_, v) = diff_json(&rev_b(), &dir.path().join("b.yaml"));
    assert_eq!(ids(&v["changed"]), ["RG3-B02"]);
    let b02 = changed(&v, "RG3-B02");
    let item = "normal.series[measured operation (gauge SG-4)].sha256";
    let h = change(&b02["inputs"], item);
    let sha = |p: &Path| {
        use sha2::Digest;
        seamlife::files::hex(&sha2::Sha256::digest(std::fs::read(p).unwrap()))
    };
    assert_eq!(
        h["old"],
        sha(&root().join("projects/records/rg3-sg4-record.csv"))
    );
    assert_eq!(h["new"], sha(&rec));
    assert_ne!(h["old"], h["new"]);
    assert_eq!(items(&b02["inputs"])[0], item);
}

#[test]
fn a_changed_category_and_a_status_that_got_worse_give_exit_1() {
    // the gusset's hand category 71 -> 36 and its surges 18000 -> 36000 a year
    let dir = b_copy(&[
        ("      category: 71\n", "      category: 36\n"),
        ("          per_year: 18000\n", "          per_year: 36000\n"),
    ]);
    let (code, v) = diff_json(&rev_b(), &dir.path().join("b.yaml"));
    assert_eq!(ids(&v["changed"]), ["RG3-G01"]);
    let g = changed(&v, "RG3-G01");
    let cat = change(&g["inputs"], "normal.category_mpa");
    assert_eq!(
        (cat["old"].as_f64(), cat["new"].as_f64()),
        (Some(71.0), Some(36.0))
    );
    // cycles a year = cycles per occurrence x occurrences a year: 1 x 18000, 1 x 36000
    let c = change(
        &g["inputs"],
        "normal.loading[crab traverse, surge].block[1].cycles_per_year",
    );
    assert_eq!(
        (c["old"].as_f64(), c["new"].as_f64()),
        (Some(18000.0), Some(36000.0))
    );
    // the status follows from the assessment of the edited file
    let r = assess(&dir.path().join("b.yaml"));
    assert_eq!(detail(&r, "RG3-G01")["status"], "fail");
    assert_eq!(g["status_move"], "worse");
    let s = change(&g["results"], "status");
    assert_eq!(
        (&s["old"], &s["new"]),
        (&Value::from("pass"), &Value::from("fail"))
    );
    assert_eq!(v["worse"], serde_json::json!(["RG3-G01"]));
    assert_eq!(code, 1);
    let (_, out, _) = run(&mut cmd(&[
        "diff",
        rev_b().to_str().unwrap(),
        dir.path().join("b.yaml").to_str().unwrap(),
    ]));
    assert!(out.contains("RG3-G01  PASS -> FAIL  (WORSE)"), "{out}");
    assert!(out.contains("STATUS WORSE: RG3-G01"), "{out}");
    // the other way round the status got better: exit 0
    let (code, v) = diff_json(&dir.path().join("b.yaml"), &rev_b());
    assert_eq!(code, 0);
    assert_eq!(changed(&v, "RG3-G01")["status_move"], "better");
    assert_eq!(v["worse"], serde_json::json!([]));
}

#[test]
fn csv_has_one_row_per_change() {
    let (code, out, _) = run(&mut cmd(&[
        "diff",
        rev_a().to_str().unwrap(),
        rev_b().to_str().unwrap(),
        "--csv",
    ]));
    assert_eq!(code, 1);
    let mut rd = csv::Reader::from_reader(out.as_bytes());
    let head: Vec<String> = rd.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(
        head,
        [
            "detail_id",
            "change",
            "item",
            "old_value",
            "new_value",
            "status_move"
        ]
    );
    let rows: Vec<csv::StringRecord> = rd.records().map(|r| r.unwrap()).collect();
    let (_, v) = diff_json(&rev_a(), &rev_b());
    let w02 = changed(&v, "RG3-W02");
    let n = v["project"].as_array().unwrap().len()
        + 2 * 2
        + w02["inputs"].as_array().unwrap().len()
        + w02["results"].as_array().unwrap().len();
    assert_eq!(rows.len(), n);
    let t = rows
        .iter()
        .find(|r| &r[0] == "RG3-W02" && &r[2] == "thickness_mm")
        .unwrap();
    assert_eq!((&t[1], &t[3], &t[4], &t[5]), ("input", "25", "40", "same"));
    let a = rows
        .iter()
        .find(|r| &r[0] == "RG3-B01" && &r[2] == "status")
        .unwrap();
    assert_eq!((&a[1], &a[3], &a[4]), ("added", "", "fail"));
}

#[test]
fn output_file_is_written_whole_and_never_over_an_input() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.yaml");
    std::fs::copy(rev_a(), &a).unwrap();
    let b = rev_b();
    let before = std::fs::read(&a).unwrap();
    let (code, _, err) = run_in(
        dir.path(),
        &[
            "diff",
            "a.yaml",
            b.to_str().unwrap(),
            "--json",
            "-o",
            "a.yaml",
        ],
    );
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("a.yaml"), "{err}");
    assert_eq!(std::fs::read(&a).unwrap(), before);
    // a hard link to the input is the input
    std::fs::hard_link(&a, dir.path().join("link.json")).unwrap();
    let (code, _, _) = run_in(
        dir.path(),
        &["diff", "a.yaml", b.to_str().unwrap(), "-o", "link.json"],
    );
    assert_eq!(code, 2);
    assert_eq!(std::fs::read(&a).unwrap(), before);
    // a folder is refused
    let (code, _, _) = run_in(
        dir.path(),
        &["diff", "a.yaml", b.to_str().unwrap(), "-o", "."],
    );
    assert_eq!(code, 2);
    // the series file of the new revision is an input too
    let rec = root().join("projects/records/rg3-sg4-record.csv");
    let rec_before = std::fs::read(&rec).unwrap();
    let (code, _, _) = run_in(
        dir.path(),
        &[
            "diff",
            "a.yaml",
            b.to_str().unwrap(),
            "--csv",
            "-o",
            rec.to_str().unwrap(),
        ],
    );
    assert_eq!(code, 2);
    assert_eq!(std::fs::read(&rec).unwrap(), rec_before);
    // a good output equals standard output
    let (code, _, _) = run_in(
        dir.path(),
        &[
            "diff",
            "a.yaml",
            b.to_str().unwrap(),
            "--json",
            "-o",
            "d.json",
        ],
    );
    assert_eq!(code, 1);
    let (_, mut v) = diff_json(&a, &b);
    let mut w: Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("d.json")).unwrap()).unwrap();
    // the old side is named as given: relative there, absolute here
    assert_eq!(w["old"]["file"], "a.yaml");
    w["old"]["file"] = Value::Null;
    v["old"]["file"] = Value::Null;
    assert_eq!(w, v);
}

#[test]
fn bad_inputs_exit_2_with_the_file_named() {
    let dir = tempfile::tempdir().unwrap();
    let b = rev_b();
    let b = b.to_str().unwrap();
    let check = |args: &[&str], needle: &str| {
        let (code, out, err) = run_in(dir.path(), args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(err.contains(needle), "{args:?}: {err}");
        assert!(out.is_empty(), "{args:?}: {out}");
    };
    check(&["diff", "missing.yaml", b], "missing.yaml");
    check(&["diff", b, "missing.json"], "missing.json");
    check(&["diff", "/dev/zero", b], "/dev/zero");
    check(&["diff", b, "/dev/zero"], "/dev/zero");
    std::fs::write(dir.path().join("junk.yaml"), b"\x00\x01binary\xff\xfe").unwrap();
    check(&["diff", "junk.yaml", b], "junk.yaml");
    std::fs::write(dir.path().join("list.yaml"), "- a\n- b\n").unwrap();
    check(&["diff", "list.yaml", b], "list.yaml");
    std::fs::write(dir.path().join("nojson.json"), "seamlife: 1\n").unwrap();
    check(&["diff", "nojson.json", b], "nojson.json:1:1");
    std::fs::write(dir.path().join("other.json"), "{\"a\": 1}").unwrap();
    check(&["diff", "other.json", b], "other.json");
    mkfifo(&dir.path().join("pipe.json"));
    check(&["diff", "pipe.json", b], "pipe.json");
    // a results model of a newer version
    let mut r = assess(&rev_b());
    r["model_version"] = Value::from(99);
    std::fs::write(dir.path().join("new.json"), serde_json::to_vec(&r).unwrap()).unwrap();
    check(&["diff", "new.json", b], "version 99");
    // one part of a sharded run
    let (code, _, _) = run_in(
        dir.path(),
        &[
            "assess",
            b,
            "--json",
            "-q",
            "--shard",
            "1/2",
            "-o",
            "part.json",
        ],
    );
    assert!(code <= 1);
    check(&["diff", "part.json", b], "part 1 of 2");
    // a model over the size limit (sparse)
    let f = std::fs::File::create(dir.path().join("huge.json")).unwrap();
    f.set_len(seamlife::checker::MAX_RESULTS_BYTES + 1).unwrap();
    check(&["diff", "huge.json", b], "huge.json");
}

#[test]
fn a_results_model_with_a_number_beyond_f64_is_refused() {
    // 1e999 overflows a 64-bit float: the model is refused with its line, not read as inf
    let dir = tempfile::tempdir().unwrap();
    let text = serde_json::to_string_pretty(&assess(&rev_b())).unwrap();
    let damage = "\"damage\": ";
    let at = text.find(damage).unwrap() + damage.len();
    let end = at + text[at..].find([',', '\n']).unwrap();
    let bad = format!("{}1e999{}", &text[..at], &text[end..]);
    std::fs::write(dir.path().join("inf.json"), bad).unwrap();
    let (code, out, err) = run_in(
        dir.path(),
        &["diff", "inf.json", rev_b().to_str().unwrap(), "--json"],
    );
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("inf.json:"), "{err}");
    assert!(out.is_empty());
}

#[test]
fn a_changed_table_file_is_found_by_its_hash_and_its_detail_listed() {
    // a copy of the batch demo with one stress row of detail G001-00 changed
    let dir = tempfile::tempdir().unwrap();
    let hall = root().join("projects/kestrel-bay-hall");
    std::fs::create_dir(dir.path().join("tables")).unwrap();
    std::fs::copy(hall.join("project.yaml"), dir.path().join("project.yaml")).unwrap();
    std::fs::copy(
        hall.join("tables/details.csv"),
        dir.path().join("tables/details.csv"),
    )
    .unwrap();
    let stresses = std::fs::read_to_string(hall.join("tables/stresses.csv")).unwrap();
    let row = "G001-00,normal,loaded-passage,,27.19,0,,1\n";
    assert!(stresses.contains(row), "the demo's first stress row");
    std::fs::write(
        dir.path().join("tables/stresses.csv"),
        stresses.replacen(row, "G001-00,normal,loaded-passage,,30.5,0,,1\n", 1),
    )
    .unwrap();
    let (code, v) = diff_json(&hall.join("project.yaml"), &dir.path().join("project.yaml"));
    assert!(code <= 1);
    assert_eq!(items(&v["project"]), ["table[tables/stresses.csv].sha256"]);
    assert_eq!(ids(&v["changed"]), ["G001-00"]);
    let g = changed(&v, "G001-00");
    let c = change(
        &g["inputs"],
        "normal.loading[loaded-passage].block[1].max_mpa",
    );
    assert_eq!(
        (c["old"].as_f64(), c["new"].as_f64()),
        (Some(27.19), Some(30.5))
    );
    assert_eq!(v["unchanged"], 2399);
}

#[test]
fn a_changed_catalogue_entry_and_a_removed_component_are_listed() {
    // RG3-S01's stiffener entry changed for the transverse attachment entry, and the
    // shear component of RG3-W01 removed (demo keys of en1993-1-9)
    let dir = b_copy(&[
        (
            "detail: stiffener-vertical-l-upto-50",
            "detail: attachment-transverse-l-upto-50",
        ),
        (
            "    shear:\n      category: 80\n      loading:\n        - event: loaded passage\n          per_year: 9000\n          blocks: [{range_mpa: 31, cycles: 1}]\n        - event: unloaded passage\n          per_year: 9000\n          blocks: [{range_mpa: 12, cycles: 1}]\n",
            "",
        ),
    ]);
    let (_, v) = diff_json(&rev_b(), &dir.path().join("b.yaml"));
    assert_eq!(ids(&v["changed"]), ["RG3-W01", "RG3-S01"]);
    let s01 = changed(&v, "RG3-S01");
    let c = change(&s01["inputs"], "catalogue_entry");
    assert_eq!(c["old"], "stiffener-vertical-l-upto-50");
    assert_eq!(c["new"], "attachment-transverse-l-upto-50");
    let w01 = changed(&v, "RG3-W01");
    let c = change(&w01["inputs"], "shear.component");
    assert_eq!(
        (&c["old"], &c["new"]),
        (&Value::from("present"), &Value::Null)
    );
    assert_eq!(items(&w01["inputs"]), ["shear.component"]);
    // without its shear the weld is governed by the normal check alone
    assert_eq!(change(&w01["results"], "governing_check")["new"], "normal");
}

#[test]
fn a_full_standard_output_is_an_error_not_a_silent_loss() {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .unwrap();
    let (code, _, err) =
        run(cmd(&["diff", rev_a().to_str().unwrap(), rev_b().to_str().unwrap()]).stdout(full));
    assert_eq!(code, 3, "{err}");
    assert!(err.contains("cannot write to standard output"), "{err}");
}
