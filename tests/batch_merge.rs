//! `seamlife merge`: the parts of a sharded run give the very results model of the
//! unsharded run, byte for byte; parts that do not belong together are refused with the
//! file named and nothing written; `report` works from the merged model.

#[path = "safety_common/mod.rs"]
mod common;

use std::path::Path;

use common::{hall, run_in};

fn ok(dir: &Path, args: &[&str]) -> String {
    let (code, out, err) = run_in(dir, args);
    assert!(code <= 1, "{args:?}: {err}");
    out
}

fn bad(dir: &Path, args: &[&str]) -> String {
    let (code, out, err) = run_in(dir, args);
    assert_eq!(code, 2, "{args:?}: {out} {err}");
    err
}

/// Parts 1..=n of the project in `dir`, written as part-K.json.
fn parts(dir: &Path, n: usize) -> Vec<String> {
    (1..=n)
        .map(|k| {
            let name = format!("part-{k}.json");
            ok(
                dir,
                &[
                    "assess",
                    "project.yaml",
                    "--json",
                    "--quiet",
                    "--shard",
                    &format!("{k}/{n}"),
                    "-o",
                    &name,
                ],
            );
            name
        })
        .collect()
}

#[test]
fn merged_parts_equal_the_unsharded_run_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    hall(d, 300, 6);
    ok(d, &["assess", "project.yaml", "--json", "-o", "whole.json"]);
    let whole = std::fs::read(d.join("whole.json")).unwrap();
    for n in [1, 3, 7] {
        let names = parts(d, n);
        // given in reverse order: the merge puts them in part order
        let mut args = vec!["merge"];
        args.extend(names.iter().rev().map(|s| s.as_str()));
        args.extend(["-o", "merged.json"]);
        let (code, _, err) = run_in(d, &args);
        let summary: serde_json::Value =
            serde_json::from_slice(&std::fs::read(d.join("merged.json")).unwrap()).unwrap();
        // exit code as assess: 1 when a detail fails
        let all_pass = summary["summary"]["passed"] == summary["summary"]["details"];
        assert_eq!(code, if all_pass { 0 } else { 1 }, "{err}");
        assert!(
            err.contains(&format!("merged {n} parts: 300 details")),
            "{err}"
        );
        assert!(
            std::fs::read(d.join("merged.json")).unwrap() == whole,
            "merge of {n} parts differs from the whole run"
        );
        // standard output carries the same bytes
        let mut args = vec!["merge"];
        args.extend(names.iter().map(|s| s.as_str()));
        let (_, out, _) = run_in(d, &args);
        assert!(out.as_bytes() == whole.as_slice());
        for p in &names {
            std::fs::remove_file(d.join(p)).unwrap();
        }
    }
}

#[test]
fn parts_that_do_not_belong_together_are_refused_and_nothing_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    hall(d, 60, 0);
    let names = parts(d, 3);
    let no_out = |err: &str, what: &str| {
        assert!(
            !d.join("merged.json").exists(),
            "{what}: output left behind: {err}"
        );
    };
    // a part missing
    let err = bad(
        d,
        &["merge", "part-1.json", "part-3.json", "-o", "merged.json"],
    );
    assert!(err.contains("part 2 of 3 missing"), "{err}");
    no_out(&err, "missing");
    // a part twice
    let err = bad(
        d,
        &[
            "merge",
            "part-1.json",
            "part-2.json",
            "part-2.json",
            "part-3.json",
            "-o",
            "merged.json",
        ],
    );
    assert!(
        err.contains("is part 2 of 3, which part-2.json is too"),
        "{err}"
    );
    no_out(&err, "twice");
    // a whole run given as a part
    ok(d, &["assess", "project.yaml", "--json", "-o", "whole.json"]);
    let err = bad(
        d,
        &["merge", "part-1.json", "whole.json", "-o", "merged.json"],
    );
    assert!(
        err.contains("whole.json") && err.contains("not of a part"),
        "{err}"
    );
    // parts of another division of the same project
    let other = dir.path().join("other");
    std::fs::create_dir(&other).unwrap();
    ok(
        d,
        &[
            "assess",
            "project.yaml",
            "--json",
            "--shard",
            "2/2",
            "-o",
            "other/half.json",
        ],
    );
    let err = bad(
        d,
        &[
            "merge",
            "part-1.json",
            "other/half.json",
            "-o",
            "merged.json",
        ],
    );
    assert!(err.contains("is part 2 of 2"), "{err}");
    // a part assessed after a stress table changed (another SHA-256)
    let stresses = d.join("tables/stresses.csv");
    let text = std::fs::read_to_string(&stresses).unwrap();
    // the same rows with one cycle count changed
    let changed = text.replacen(",1\n", ",2\n", 1);
    assert_ne!(changed, text);
    std::fs::write(&stresses, changed).unwrap();
    ok(
        d,
        &[
            "assess",
            "project.yaml",
            "--json",
            "--shard",
            "2/3",
            "-o",
            "late-2.json",
        ],
    );
    let err = bad(
        d,
        &[
            "merge",
            "part-1.json",
            "late-2.json",
            "part-3.json",
            "-o",
            "merged.json",
        ],
    );
    assert!(
        err.contains("late-2.json") && err.contains("another table files (SHA-256)"),
        "{err}"
    );
    no_out(&err, "changed table");
    // the output must not replace a part
    let before = std::fs::read(d.join(&names[0])).unwrap();
    let err = bad(
        d,
        &[
            "merge",
            "part-1.json",
            "part-2.json",
            "part-3.json",
            "-o",
            "part-1.json",
        ],
    );
    assert!(err.contains("a part being merged"), "{err}");
    assert_eq!(std::fs::read(d.join(&names[0])).unwrap(), before);
}

#[test]
fn hostile_part_files_get_located_errors() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // not JSON: line and column of the fault
    std::fs::write(
        d.join("broken.json"),
        "{\n  \"model_version\": 2,\n  oops\n}\n",
    )
    .unwrap();
    let err = bad(d, &["merge", "broken.json"]);
    assert!(err.contains("broken.json:3:3"), "{err}");
    assert!(err.contains("not a seamlife results model"), "{err}");
    // JSON, but not a results model
    std::fs::write(d.join("other.json"), "{\"a\": 1}").unwrap();
    let err = bad(d, &["merge", "other.json"]);
    assert!(err.contains("not a seamlife results model"), "{err}");
    // a folder and a device are not read
    std::fs::create_dir(d.join("dir.json")).unwrap();
    let err = bad(d, &["merge", "dir.json"]);
    assert!(err.contains("not a regular file"), "{err}");
    let err = bad(d, &["merge", "/dev/zero"]);
    assert!(err.contains("not a regular file"), "{err}");
    // a missing file
    let err = bad(d, &["merge", "absent.json"]);
    assert!(
        err.contains("absent.json") && err.contains("cannot read"),
        "{err}"
    );
    // a number beyond f64 in a value (overflow to inf is refused by the JSON reader)
    std::fs::write(d.join("huge.json"), "{\"model_version\": 1e400}").unwrap();
    let err = bad(d, &["merge", "huge.json"]);
    assert!(err.contains("huge.json:1:"), "{err}");
}

#[test]
fn a_part_cannot_be_reported_alone() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    hall(d, 20, 0);
    parts(d, 2);
    let err = bad(d, &["report", "part-1.json", "-o", "p.pdf"]);
    assert!(
        err.contains("holds part 1 of 2 of the details only (10 of 20)"),
        "{err}"
    );
    assert!(err.contains("seamlife merge"), "{err}");
    assert!(!d.join("p.pdf").exists());
}
