//! Details and stresses from CSV tables: results equal to the same details in the
//! project file, counted histories worked by hand, every error with its table, line
//! and column, streamed outputs equal to the results model, serial equal to parallel,
//! shards equal to the whole. Each check value names its source beside it.

#[path = "safety_common/mod.rs"]
mod common;

use std::path::Path;

use common::{cmd, hall, run, run_in};

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

const HEAD: &str = "seamlife: 1
project: {title: Batch, reference: B1, revision: A, prepared_by: P, date: 2026-01-01}
basis: {family: en1993-1-9, design_life_years: 25, strategy: damage-tolerant, consequence: low}
materials: {S355: {fy_mpa: 355}}
";

const EVENTS: &str = "events:
  - {name: loaded-passage, per_year: 9000}
  - {name: unloaded-passage, per_year: 9000}
";

const DETAILS: &str = "id,location,detail,category,shear_category,material,thickness_mm,group
G1-001,Girder 1 at 1.0 m,,80,,S355,20,girder-1
G1-002,\"Girder 1, at 2.0 m\",butt-transverse-shop-flat,,,S355,30,girder-1
G1-003,Girder 1 at 3.0 m,,71,80,S355,12,girder-1
";

const STRESSES: &str = "detail_id,component,event,range_mpa,max_mpa,min_mpa,mean_mpa,cycles
G1-001,normal,loaded-passage,60,,,,1
G1-001,normal,unloaded-passage,25,,,,1
G1-002,normal,loaded-passage,,40,-30,,2
G1-003,normal,loaded-passage,45,,,,1
G1-003,shear,loaded-passage,30,,,,1
";

/// A project folder with tables; returns the project file's path.
fn write_project(
    dir: &Path,
    extra_yaml: &str,
    details: &str,
    stresses: &str,
) -> std::path::PathBuf {
    std::fs::create_dir_all(dir.join("tables")).unwrap();
    std::fs::write(dir.join("tables/details.csv"), details).unwrap();
    std::fs::write(dir.join("tables/stresses.csv"), stresses).unwrap();
    let p = dir.join("project.yaml");
    std::fs::write(
        &p,
        format!(
            "{HEAD}{EVENTS}tables:\n  details: tables/details.csv\n  stresses: tables/stresses.csv\n{extra_yaml}"
        ),
    )
    .unwrap();
    p
}

fn json(dir: &Path, args: &[&str]) -> serde_json::Value {
    let (code, out, err) = run_in(dir, args);
    assert!(code <= 1, "{err}");
    serde_json::from_str(&out).unwrap_or_else(|e| panic!("{e}: {out}"))
}

#[test]
fn table_details_assess_like_the_same_details_in_the_project_file() {
    let dir = tempfile::tempdir().unwrap();
    write_project(dir.path(), "", DETAILS, STRESSES);
    let t = json(dir.path(), &["assess", "project.yaml", "--json"]);
    // The same three details written in the project file.
    let yaml = format!(
        "{HEAD}details:
  - id: G1-001
    location: Girder 1 at 1.0 m
    material: S355
    thickness_mm: 20
    group: girder-1
    normal: {{category: 80, loading: [{{event: loaded-passage, per_year: 9000, blocks: [{{range_mpa: 60, cycles: 1}}]}}, {{event: unloaded-passage, per_year: 9000, blocks: [{{range_mpa: 25, cycles: 1}}]}}]}}
  - id: G1-002
    location: Girder 1, at 2.0 m
    detail: butt-transverse-shop-flat
    material: S355
    thickness_mm: 30
    group: girder-1
    normal: {{loading: [{{event: loaded-passage, per_year: 9000, blocks: [{{max_mpa: 40, min_mpa: -30, cycles: 2}}]}}]}}
  - id: G1-003
    location: Girder 1 at 3.0 m
    material: S355
    thickness_mm: 12
    group: girder-1
    normal: {{category: 71, loading: [{{event: loaded-passage, per_year: 9000, blocks: [{{range_mpa: 45, cycles: 1}}]}}]}}
    shear: {{category: 80, loading: [{{event: loaded-passage, per_year: 9000, blocks: [{{range_mpa: 30, cycles: 1}}]}}]}}
"
    );
    std::fs::write(dir.path().join("same.yaml"), yaml).unwrap();
    let y = json(dir.path(), &["assess", "same.yaml", "--json"]);
    assert_eq!(t["details"], y["details"]);
    assert_eq!(t["summary"], y["summary"]);
    // G1-001 by hand (EN 1993-1-9, γMf = 1.00 damage tolerant low, Table 3.1): two
    // given blocks of different ranges are variable amplitude; 60 MPa above ΔσD =
    // 58.94450 lies on m = 3, N = 2e6·(80/60)^3 = 4.740741e6; 25 MPa is below ΔσL =
    // 32.37705 (Fig. 7.1, eqs. (7.2)-(7.3), hand-worked) and does no damage;
    // D = 9000·25/4.740741e6 = 0.04746094 (Palmgren-Miner).
    let d = &t["details"][0];
    assert!(close(d["damage"].as_f64().unwrap(), 0.04746094, 1e-6));
    assert_eq!(d["group"], "girder-1");
    // the tables' hashes are in the results model (SHA-256, common practice)
    let files = t["input"]["table_files"].as_array().unwrap();
    assert_eq!(files.len(), 2);
    assert_eq!(
        files[0]["sha256"],
        seamlife::input::sha256_hex(DETAILS.as_bytes())
    );
}

#[test]
fn a_history_is_counted_and_every_cycle_damages_at_its_own_range() {
    let dir = tempfile::tempdir().unwrap();
    let p = write_project(
        dir.path(),
        "  histories: tables/histories.csv\n",
        "id,location,category,material,thickness_mm\nH1,a passage,80,S355,20\n",
        "detail_id,component,event,range_mpa,cycles\n",
    );
    std::fs::write(
        dir.path().join("tables/histories.csv"),
        "detail_id,component,event,stress_mpa\nH1,normal,loaded-passage,0\nH1,normal,loaded-passage,40\nH1,normal,loaded-passage,10\nH1,normal,loaded-passage,55\nH1,normal,loaded-passage,0\n",
    )
    .unwrap();
    let _ = p;
    let t = json(dir.path(), &["assess", "project.yaml", "--json"]);
    let c = &t["details"][0]["components"][0];
    // ASTM E1049-85 rainflow of 0, 40, 10, 55, 0, by hand: the pair 40/10 closes as a
    // full cycle of 30 MPa; the residue 0, 55, 0 gives two half cycles of 55 MPa (half
    // cycles: one occurrence counted on its own, the default for histories).
    let r = &c["counted"][0];
    assert_eq!(r["full_cycles"], 1);
    assert_eq!(r["half_cycles"], 2);
    assert_eq!(r["per_cycle"], true);
    assert_eq!(c["amplitude"], "variable");
    // 9000 passages a year for 25 years: 225000 cycles of 30 MPa, below ΔσL = 32.37705,
    // no damage; 2 × 0.5 × 225000 = 225000 cycles of 55 MPa on m = 5 below ΔσD:
    // N = 5e6·(58.94450/55)^5 = 7.069247e6, D = 225000/7.069247e6 = 0.03182800
    // (EN 1993-1-9 eqs. (7.2)-(7.3), hand-worked)
    assert!(close(c["damage"].as_f64().unwrap(), 0.03182800, 1e-6));
}

/// Assess a broken project and return the error text (exit code 2 asserted).
fn error_of(dir: &Path, args: &[&str]) -> String {
    let (code, _, err) = run_in(dir, args);
    assert_eq!(code, 2, "{err}");
    err
}

#[test]
fn every_table_error_names_file_line_column_and_detail() {
    let cases: [(&str, &str, &[&str]); 8] = [
        (
            DETAILS,
            "detail_id,component,event,range_mpa,cycles\nG1-099,normal,loaded-passage,60,1\n",
            &["stresses.csv:2:1:", "unknown detail `G1-099`"],
        ),
        (
            DETAILS,
            "detail_id,component,event,range_mpa,cycles\nG1-001,normal,loaded-pasage,60,1\n",
            &["stresses.csv:2:15:", "event `loaded-pasage` is not declared", "did you mean `loaded-passage`"],
        ),
        (
            DETAILS,
            "detail_id,component,event,range_mpa,max_mpa,min_mpa,cycles\nG1-001,normal,loaded-passage,60,40,,1\n",
            &["stresses.csv:2:33:", "detail `G1-001`: the row gives both `range_mpa` and max/min"],
        ),
        (
            DETAILS,
            "detail_id,component,event,range_mpa,cycles\nG1-001,normal,loaded-passage,6O,1\n",
            &["stresses.csv:2:30:", "`range_mpa` is `6O`, not a number"],
        ),
        (
            DETAILS,
            "detail_id,component,event,range_mpa,cycles\nG1-001,axial,loaded-passage,60,1\n",
            &["stresses.csv:2:8:", "component `axial` is neither `normal` nor `shear`"],
        ),
        (
            "id,location,category,material,thickness_mm\nG1,a,80,S355,20\nG1,b,80,S355,20\n",
            "detail_id,component,event,range_mpa,cycles\n",
            &["details.csv:3:1:", "duplicate detail id `G1` (first on line 2)"],
        ),
        (
            "id,location,category,material,thickness_mm,colour\nG1,a,80,S355,20,red\n",
            "detail_id,component,event,range_mpa,cycles\n",
            &["details.csv:1:44:", "unknown column `colour`"],
        ),
        (
            "id,location,category,material\nG1,a,80,S355\n",
            "detail_id,component,event,range_mpa,cycles\n",
            &["details.csv:1:1:", "no column `thickness_mm`"],
        ),
    ];
    for (details, stresses, needles) in cases {
        let dir = tempfile::tempdir().unwrap();
        write_project(dir.path(), "", details, stresses);
        let err = error_of(dir.path(), &["assess", "project.yaml"]);
        for n in needles {
            assert!(err.contains(n), "missing {n:?} in {err}");
        }
    }
}

#[test]
fn checks_of_the_project_point_at_table_cells() {
    let dir = tempfile::tempdir().unwrap();
    // category 72 is not an EN category; a negative range; an unknown catalogue key
    let details = DETAILS
        .replace(
            "G1-003,Girder 1 at 3.0 m,,71",
            "G1-003,Girder 1 at 3.0 m,,72",
        )
        .replace("butt-transverse-shop-flat", "butt-transverse-shp-flat");
    let stresses = STRESSES.replace(
        "G1-001,normal,loaded-passage,60",
        "G1-001,normal,loaded-passage,-60",
    );
    write_project(dir.path(), "", &details, &stresses);
    let err = error_of(dir.path(), &["lint", "project.yaml"]);
    for n in [
        "stresses.csv:2:30: detail `G1-001`: range_mpa must be greater than zero",
        "details.csv:3:29: detail `G1-002`: `butt-transverse-shp-flat` is not in the en1993-1-9 catalogue",
        "details.csv:4:27: detail `G1-003`: normal category 72 is not one of the en1993-1-9 categories",
    ] {
        assert!(err.contains(n), "missing {n:?} in {err}");
    }
}

#[test]
fn ids_are_unique_across_the_project_file_and_the_tables() {
    let dir = tempfile::tempdir().unwrap();
    let p = write_project(dir.path(), "", DETAILS, STRESSES);
    let mut text = std::fs::read_to_string(&p).unwrap();
    text.push_str("details:\n  - {id: G1-002, location: x, material: S355, thickness_mm: 10, normal: {category: 80, loading: [{event: e, per_year: 1, blocks: [{range_mpa: 10, cycles: 1}]}]}}\n");
    std::fs::write(&p, text).unwrap();
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(
        err.contains(
            "details.csv:3:1: duplicate detail id `G1-002`: the project file defines it too"
        ),
        "{err}"
    );
}

#[test]
fn a_detail_without_stress_rows_warns_or_with_strict_stops() {
    let dir = tempfile::tempdir().unwrap();
    let details = format!("{DETAILS}G1-004,Girder 1 at 4.0 m,,80,,S355,20,girder-1\n");
    write_project(dir.path(), "", &details, STRESSES);
    let (code, out, err) = run_in(dir.path(), &["assess", "project.yaml"]);
    assert_eq!(code, 0, "{err}");
    assert!(err.contains("warning: detail `G1-004` (tables/details.csv line 5) has no row in the stresses or histories table and is not assessed"), "{err}");
    assert!(out.contains("3 details: 3 pass"), "{out}");
    let err = error_of(dir.path(), &["assess", "project.yaml", "--strict"]);
    assert!(
        err.contains(
            "details.csv:5:1: detail `G1-004` has no row in the stresses or histories table"
        ),
        "{err}"
    );
}

#[test]
fn blocks_and_a_history_for_one_event_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    write_project(
        dir.path(),
        "  histories: tables/histories.csv\n",
        DETAILS,
        STRESSES,
    );
    std::fs::write(
        dir.path().join("tables/histories.csv"),
        "detail_id,component,event,stress_mpa\nG1-001,normal,loaded-passage,0\nG1-001,normal,loaded-passage,50\n",
    )
    .unwrap();
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(err.contains("histories.csv:2:15: detail `G1-001`: event `loaded-passage` of its normal stress has rows in the stresses table too"), "{err}");
}

#[test]
fn bad_history_cells_and_hostile_table_files_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    write_project(
        dir.path(),
        "  histories: tables/histories.csv\n",
        "id,location,category,material,thickness_mm\nH1,a,80,S355,20\n",
        "detail_id,component,event,range_mpa,cycles\n",
    );
    let h = dir.path().join("tables/histories.csv");
    for (text, needle) in [
        ("detail_id,component,event,stress_mpa\nH1,normal,loaded-passage,0\nH1,normal,loaded-passage,nan\n", "histories.csv:3:26: detail `H1`: `stress_mpa` is `nan`, not a finite number"),
        ("detail_id,component,event,stress_mpa\nH1,normal,loaded-passage,0\nH1,normal,loaded-passage,1e400\n", "histories.csv:3:26: detail `H1`: `stress_mpa` is `1e400`, not a finite number"),
        ("detail_id,component,event,stress_mpa\nH1,normal,loaded-passage,0\nH1,normal,loaded-passage,\"5\n", "histories.csv:3:26: a quoted cell is not closed on its line"),
    ] {
        std::fs::write(&h, text).unwrap();
        let err = error_of(dir.path(), &["assess", "project.yaml"]);
        assert!(err.contains(needle), "missing {needle:?} in {err}");
    }
    // a 2 MB line is refused and not echoed
    let mut big = String::from("detail_id,component,event,stress_mpa\nH1,normal,loaded-passage,");
    big.push_str(&"7".repeat(2 << 20));
    std::fs::write(&h, big).unwrap();
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(
        err.contains("histories.csv:2:1: line is longer than 1 MiB"),
        "{err}"
    );
    assert!(err.len() < 2000, "the line was echoed: {} bytes", err.len());
    // a folder, a pipe and a device in place of a table
    std::fs::remove_file(&h).unwrap();
    std::fs::create_dir(&h).unwrap();
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(
        err.contains("table `tables/histories.csv` is not a regular file"),
        "{err}"
    );
    std::fs::remove_dir(&h).unwrap();
    let st = std::process::Command::new("mkfifo")
        .arg(&h)
        .status()
        .unwrap();
    assert!(st.success());
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(err.contains("is not a regular file"), "{err}");
    std::fs::remove_file(&h).unwrap();
    std::os::unix::fs::symlink("/dev/zero", &h).unwrap();
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(
        err.contains("lies outside the project folder") || err.contains("is not a regular file"),
        "{err}"
    );
    // a table outside the project folder
    let outside = tempfile::tempdir().unwrap();
    std::fs::write(outside.path().join("d.csv"), DETAILS).unwrap();
    let p = dir.path().join("project.yaml");
    let text = std::fs::read_to_string(&p).unwrap().replace(
        "details: tables/details.csv",
        &format!("details: {}", outside.path().join("d.csv").display()),
    );
    std::fs::write(&p, text).unwrap();
    let err = error_of(dir.path(), &["assess", "project.yaml"]);
    assert!(err.contains("lies outside the project folder"), "{err}");
}

#[test]
fn an_output_never_replaces_a_table() {
    let dir = tempfile::tempdir().unwrap();
    write_project(dir.path(), "", DETAILS, STRESSES);
    let err = error_of(
        dir.path(),
        &[
            "assess",
            "project.yaml",
            "--csv",
            "-o",
            "tables/stresses.csv",
        ],
    );
    assert!(err.contains("is a table of the project"), "{err}");
    assert_eq!(
        std::fs::read_to_string(dir.path().join("tables/stresses.csv")).unwrap(),
        STRESSES
    );
}

#[test]
fn streamed_rows_equal_the_results_model_serial_equals_parallel_and_shards_the_whole() {
    let dir = tempfile::tempdir().unwrap();
    hall(dir.path(), 500, 12);
    let d = dir.path();
    let model = json(d, &["assess", "project.yaml", "--json"]);
    let details = model["details"].as_array().unwrap();
    assert_eq!(details.len(), 500);
    // CSV rows: one per detail, the same numbers
    let (_, csv, _) = run_in(d, &["assess", "project.yaml", "--csv"]);
    let mut rows = csv::Reader::from_reader(csv.as_bytes());
    let heads = rows.headers().unwrap().clone();
    let col = |name: &str| heads.iter().position(|h| h == name).unwrap();
    let recs: Vec<csv::StringRecord> = rows.records().map(|r| r.unwrap()).collect();
    assert_eq!(recs.len(), 500);
    for (r, d) in recs.iter().zip(details) {
        assert_eq!(r[col("id")], *d["id"].as_str().unwrap());
        let u: f64 = r[col("utilisation")].parse().unwrap();
        assert_eq!(u, d["utilisation"].as_f64().unwrap());
        let dmg: f64 = r[col("normal_damage")].parse().unwrap();
        assert_eq!(dmg, d["components"][0]["damage"].as_f64().unwrap());
    }
    // JSON Lines: the same details, one per line
    let (_, jl, _) = run_in(d, &["assess", "project.yaml", "--jsonl"]);
    let lines: Vec<serde_json::Value> = jl
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.as_slice(), details.as_slice());
    // one thread gives the same bytes as two
    let serial = run(cmd(&["assess", "project.yaml", "--csv"])
        .current_dir(d)
        .env("RAYON_NUM_THREADS", "1"))
    .1;
    assert_eq!(serial, csv);
    // three shards, in order, give the whole
    let mut joined = Vec::new();
    for k in 1..=3 {
        let part = json(
            d,
            &[
                "assess",
                "project.yaml",
                "--json",
                "--shard",
                &format!("{k}/3"),
            ],
        );
        assert_eq!(part["shard"]["part"], k);
        joined.extend(part["details"].as_array().unwrap().iter().cloned());
    }
    assert_eq!(joined.as_slice(), details.as_slice());
    // bad shard specifications
    for s in ["0/3", "4/3", "1/0", "x", "2-3"] {
        let err = error_of(d, &["assess", "project.yaml", "--shard", s]);
        assert!(err.contains("is not of the form K/N"), "{s}: {err}");
    }
}
