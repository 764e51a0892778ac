//! `seamlife schema`: the published schemas equal the generated ones, every demo
//! project and the starter validate against the project schema, a demo results model
//! and diff model against theirs, and files the program refuses are refused by the
//! schema too.

mod safety_common;

use safety_common::{cmd, root, run, run_in};
use serde_json::Value;
use std::path::{Path, PathBuf};

fn schema(kind: &str) -> Value {
    let (code, out, err) = run(&mut cmd(&["schema", kind]));
    assert_eq!(code, 0, "{err}");
    serde_json::from_str(&out).unwrap()
}

fn validator(kind: &str) -> jsonschema::Validator {
    jsonschema::validator_for(&schema(kind)).unwrap()
}

/// A YAML file as the JSON value a YAML editor extension validates.
fn yaml_value(p: &Path) -> Value {
    let y: serde_yaml::Value = serde_yaml::from_str(&std::fs::read_to_string(p).unwrap()).unwrap();
    serde_json::to_value(y).unwrap()
}

fn errors(v: &jsonschema::Validator, x: &Value) -> Vec<String> {
    v.iter_errors(x)
        .map(|e| format!("{} at {}", e, e.instance_path()))
        .collect()
}

fn demo_projects() -> Vec<PathBuf> {
    [
        "projects/kestrel-bay-runway.yaml",
        "projects/kestrel-bay-runway-rev-a.yaml",
        "projects/kestrel-bay-trolley-frame.yaml",
        "projects/kestrel-bay-fit/kestrel-bay-bracket.yaml",
        "projects/kestrel-bay-hall/project.yaml",
    ]
    .iter()
    .map(|p| root().join(p))
    .collect()
}

#[test]
fn published_schemas_are_the_generated_ones() {
    for kind in ["project", "results", "diff", "review", "spectrum-part"] {
        let (code, out, _) = run(&mut cmd(&["schema", kind]));
        assert_eq!(code, 0);
        let file = root().join(format!("schemas/{kind}.schema.json"));
        assert_eq!(
            std::fs::read_to_string(&file).unwrap(),
            out,
            "{} is stale: run `seamlife schema {kind} -o {}`",
            file.display(),
            file.display()
        );
        let v: Value = serde_json::from_str(&out).unwrap();
        assert_eq!(v["$schema"], "https://json-schema.org/draft/2020-12/schema");
        assert!(v["title"].as_str().unwrap().starts_with("seamlife"));
    }
    let (code, _, err) = run(&mut cmd(&["schema", "drawing"]));
    assert_eq!(code, 2);
    assert!(err.contains("project") && err.contains("results"), "{err}");
}

#[test]
fn every_demo_project_and_the_starter_validate() {
    let v = validator("project");
    for p in demo_projects() {
        let x = yaml_value(&p);
        assert_eq!(errors(&v, &x), Vec::<String>::new(), "{}", p.display());
    }
    let dir = tempfile::tempdir().unwrap();
    let (code, _, err) = run_in(dir.path(), &["new", "fresh"]);
    assert_eq!(code, 0, "{err}");
    let starter = dir.path().join("fresh/project.yaml");
    let text = std::fs::read_to_string(&starter).unwrap();
    assert_eq!(
        text.lines().next().unwrap(),
        "# yaml-language-server: $schema=project.schema.json"
    );
    // the schema it names is written beside it and is the published one
    assert_eq!(
        std::fs::read_to_string(dir.path().join("fresh/project.schema.json")).unwrap(),
        std::fs::read_to_string(root().join("schemas/project.schema.json")).unwrap()
    );
    assert_eq!(errors(&v, &yaml_value(&starter)), Vec::<String>::new());
    let (code, _, err) = run(&mut cmd(&["lint", starter.to_str().unwrap()]));
    assert_eq!(code, 0, "{err}");
}

/// A change made to a copy of a project.
type Edit = Box<dyn Fn(&mut Value)>;

#[test]
fn what_the_program_refuses_the_schema_refuses() {
    let v = validator("project");
    let base = yaml_value(&root().join("projects/kestrel-bay-runway.yaml"));
    let cases: Vec<(&str, Edit)> = vec![
        (
            "unknown key",
            Box::new(|x| x["details"][0]["thicknes_mm"] = Value::from(12)),
        ),
        (
            "text for a number",
            Box::new(|x| x["details"][0]["thickness_mm"] = Value::from("twelve")),
        ),
        (
            "missing key",
            Box::new(|x| {
                x["basis"]
                    .as_object_mut()
                    .unwrap()
                    .remove("design_life_years");
            }),
        ),
        (
            "unknown strategy",
            Box::new(|x| x["basis"]["strategy"] = Value::from("fail-safe")),
        ),
        (
            "schema version",
            Box::new(|x| x["seamlife"] = Value::from(2)),
        ),
        (
            "date form",
            Box::new(|x| x["project"]["date"] = Value::from("20 Nov 2026")),
        ),
        (
            "block without cycles",
            Box::new(|x| {
                x["details"][0]["normal"]["loading"][0]["blocks"][0]
                    .as_object_mut()
                    .unwrap()
                    .remove("cycles");
            }),
        ),
    ];
    for (what, edit) in cases {
        let mut x = base.clone();
        edit(&mut x);
        assert!(!v.is_valid(&x), "{what} passed the schema");
    }
    assert!(v.is_valid(&base));
}

#[test]
fn a_demo_results_model_and_diff_model_validate() {
    let demo = root().join("projects/kestrel-bay-runway.yaml");
    let rev_a = root().join("projects/kestrel-bay-runway-rev-a.yaml");
    let (code, out, _) = run(&mut cmd(&[
        "assess",
        demo.to_str().unwrap(),
        "--json",
        "-q",
    ]));
    assert_eq!(code, 1);
    let r: Value = serde_json::from_str(&out).unwrap();
    let v = validator("results");
    assert_eq!(errors(&v, &r), Vec::<String>::new());
    let mut bad = r.clone();
    bad["details"][0]["status"] = Value::from("maybe");
    assert!(!v.is_valid(&bad));

    let (code, out, _) = run(&mut cmd(&[
        "diff",
        rev_a.to_str().unwrap(),
        demo.to_str().unwrap(),
        "--json",
    ]));
    assert_eq!(code, 1);
    let d: Value = serde_json::from_str(&out).unwrap();
    let v = validator("diff");
    assert_eq!(errors(&v, &d), Vec::<String>::new());
    let mut bad = d.clone();
    bad["changed"][0]["status_move"] = Value::from("sideways");
    assert!(!v.is_valid(&bad));
}

#[test]
fn schema_output_is_never_written_over_a_folder() {
    let dir = tempfile::tempdir().unwrap();
    let (code, _, _) = run_in(dir.path(), &["schema", "results", "-o", "."]);
    assert_eq!(code, 2);
    let (code, _, _) = run_in(dir.path(), &["schema", "results", "-o", "r.schema.json"]);
    assert_eq!(code, 0);
    let v: Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("r.schema.json")).unwrap()).unwrap();
    assert_eq!(v, schema("results"));
}

#[test]
fn a_spectrum_part_validates_and_a_spoiled_one_does_not() {
    let v = validator("spectrum-part");
    let dir = tempfile::tempdir().unwrap();
    let part = dir.path().join("p.part.json");
    let (code, _, err) = run(&mut cmd(&[
        "count",
        safety_common::record().to_str().unwrap(),
        "--columns",
        "2,1",
        "--spectrum-out",
        part.to_str().unwrap(),
        "--sequence",
        "4",
    ]));
    assert_eq!(code, 0, "{err}");
    let x: Value = serde_json::from_str(&std::fs::read_to_string(&part).unwrap()).unwrap();
    assert_eq!(errors(&v, &x), Vec::<String>::new());
    // what the reader refuses by its types, the schema refuses too
    let spoil: [(&str, Edit); 3] = [
        (
            "unknown key",
            Box::new(|x| x["colour"] = Value::from("red")),
        ),
        (
            "text for a count",
            Box::new(|x| x["records"][0]["channels"][0]["samples"] = Value::from("many")),
        ),
        (
            "unknown residue rule",
            Box::new(|x| x["residue"] = Value::from("twice")),
        ),
    ];
    for (what, edit) in spoil {
        let mut y = x.clone();
        edit(&mut y);
        assert!(!errors(&v, &y).is_empty(), "{what}");
    }
}
