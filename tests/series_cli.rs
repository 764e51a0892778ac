//! Measured or simulated series through the command line and the project file:
//! `seamlife count`, series loading events, and their bad-input cases (exit code 2).

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn seamlife() -> Command {
    Command::cargo_bin("seamlife").unwrap()
}

fn record() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/records/rg3-sg4-record.csv")
}

/// A one-detail project whose normal stress is the series `series_yaml` (indented
/// under `series:`), plus optional block events.
fn project(series_yaml: &str, extra_events: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R, revision: A, prepared_by: P, date: 2026-11-20}}
basis: {{family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: M1
    location: gauge
    detail: attachment-longitudinal-over-100
    material: S355
    thickness_mm: 20
    normal:
      loading:
        - event: measured
          per_year: 2000
          series:
{series_yaml}
{extra_events}"
    )
}

/// Run `assess --json` on `yaml` written to `dir/p.yaml`.
fn assess_in(dir: &Path, yaml: &str) -> (i32, String, String) {
    let p = dir.join("p.yaml");
    std::fs::write(&p, yaml).unwrap();
    let o = seamlife()
        .arg("assess")
        .arg(&p)
        .arg("--json")
        .output()
        .unwrap();
    (
        o.status.code().unwrap(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

fn series(file: &str, column: &str) -> String {
    format!("            file: {file}\n            column: {column}\n            unit: mpa\n")
}

#[test]
fn count_command_writes_spectrum_csv_and_svgs() {
    let dir = tempfile::tempdir().unwrap();
    let svg = dir.path().join("h.svg");
    let msvg = dir.path().join("m.svg");
    let o = seamlife()
        .arg("count")
        .arg(record())
        .args([
            "--column",
            "sg4_microstrain",
            "--unit",
            "microstrain",
            "--modulus-mpa",
            "210000",
        ])
        .args(["--gate-mpa", "2", "--bins", "48", "--svg"])
        .arg(&svg)
        .arg("--matrix-svg")
        .arg(&msvg)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    let text = String::from_utf8(o.stdout).unwrap();
    let err = String::from_utf8(o.stderr).unwrap();
    assert!(text.starts_with("range_mpa,mean_mpa,cycles,"));
    // Repeated residue: every cycle is full, so the spectrum's cycles equal the full
    // cycles reported (conservation of the count, common practice).
    let total: f64 = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(2).unwrap().parse::<f64>().unwrap())
        .sum();
    let full: f64 = err
        .split(" full")
        .next()
        .and_then(|s| s.rsplit(' ').next())
        .unwrap()
        .parse()
        .unwrap();
    assert_eq!(total, full);
    assert!(err.contains("36000 samples"));
    for p in [&svg, &msvg] {
        let s = std::fs::read_to_string(p).unwrap();
        roxmltree::Document::parse(&s).unwrap();
    }
}

#[test]
fn count_by_column_number_matches_by_name() {
    let by_name = seamlife()
        .arg("count")
        .arg(record())
        .args(["--column", "sg4_microstrain"])
        .output()
        .unwrap();
    let by_index = seamlife()
        .arg("count")
        .arg(record())
        .args(["--column", "2"])
        .output()
        .unwrap();
    assert_eq!(by_name.status.code(), Some(0));
    assert_eq!(by_name.stdout, by_index.stdout);
}

fn count_err(file: &Path, column: &str) -> String {
    let o = seamlife()
        .arg("count")
        .arg(file)
        .args(["--column", column])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    String::from_utf8(o.stderr).unwrap()
}

#[test]
fn count_command_bad_inputs() {
    let dir = tempfile::tempdir().unwrap();
    let w = |name: &str, text: &str| {
        let p = dir.path().join(name);
        std::fs::write(&p, text).unwrap();
        p
    };
    let e = count_err(&w("nn.csv", "t,s\n0,1\n1,abc\n2,3\n"), "s");
    assert!(
        e.contains("line 3") && e.contains("'abc' is not a number"),
        "{e}"
    );
    let e = count_err(&w("nan.csv", "t,s\n0,1\n1,NaN\n"), "s");
    assert!(
        e.contains("line 3") && e.contains("not a finite number"),
        "{e}"
    );
    let e = count_err(&w("inf.csv", "t,s\n0,1\n1,inf\n2,0\n"), "s");
    assert!(
        e.contains("line 3") && e.contains("not a finite number"),
        "{e}"
    );
    let e = count_err(&w("empty.csv", ""), "s");
    assert!(e.contains("holds no samples"), "{e}");
    let e = count_err(&w("one.csv", "t,s\n0,1\n"), "s");
    assert!(e.contains("single sample"), "{e}");
    let e = count_err(
        &w("cols.csv", "time,gauge_a,gauge_b\n0,1,2\n1,2,3\n"),
        "gauge_c",
    );
    assert!(
        e.contains("columns present: 'time', 'gauge_a', 'gauge_b'"),
        "{e}"
    );
    let e = count_err(&dir.path().join("missing.csv"), "s");
    assert!(e.contains("cannot open"), "{e}");
    let e = count_err(dir.path(), "s");
    assert!(e.contains("error:"), "{e}");
    // a constant signal is not an error: no cycles, stated
    let o = seamlife()
        .arg("count")
        .arg(w("flat.csv", "t,s\n0,5\n1,5\n2,5\n"))
        .args(["--column", "s"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0));
    assert!(String::from_utf8(o.stderr)
        .unwrap()
        .contains("the signal is constant"));
}

#[test]
fn project_series_errors_name_the_project_line_and_the_csv_line() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("bad.csv"), "t,s\n0,1\n1,x7\n2,3\n").unwrap();
    let yaml = project(&series("bad.csv", "s"), "");
    let (code, _, err) = assess_in(dir.path(), &yaml);
    assert_eq!(code, 2, "{err}");
    // `file:` is on line 16 of the generated project, its value at column 19
    assert!(err.contains("p.yaml:16:19:"), "{err}");
    assert!(
        err.contains("line 3") && err.contains("'x7' is not a number"),
        "{err}"
    );

    let yaml = project(&series("bad.csv", "stress"), "");
    let (code, _, err) = assess_in(dir.path(), &yaml);
    assert_eq!(code, 2);
    assert!(err.contains("columns present: 't', 's'"), "{err}");

    let yaml = project(&series("nope.csv", "s"), "");
    let (code, _, err) = assess_in(dir.path(), &yaml);
    assert_eq!(code, 2);
    assert!(err.contains("cannot open series file `nope.csv`"), "{err}");
}

#[test]
fn path_outside_the_project_is_refused_unless_allowed() {
    let outer = tempfile::tempdir().unwrap();
    let proj = outer.path().join("proj");
    std::fs::create_dir(&proj).unwrap();
    std::fs::write(outer.path().join("rec.csv"), "t,s\n0,0\n1,50\n2,0\n3,50\n").unwrap();
    let yaml = project(&series("../rec.csv", "s"), "");
    let (code, _, err) = assess_in(&proj, &yaml);
    assert_eq!(code, 2);
    assert!(err.contains("lies outside the project folder"), "{err}");
    assert!(err.contains("allow_outside_project: true"), "{err}");
    let allowed = project(
        &format!(
            "{}            allow_outside_project: true\n",
            series("../rec.csv", "s")
        ),
        "",
    );
    let (code, out, err) = assess_in(&proj, &allowed);
    assert!(code <= 1, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        v["details"][0]["components"][0]["counted"][0]["file"],
        "../rec.csv"
    );
}

#[test]
fn constant_signal_gives_zero_damage_and_says_so() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("flat.csv"), "t,s\n0,40\n1,40\n2,40\n").unwrap();
    let (code, out, err) = assess_in(dir.path(), &project(&series("flat.csv", "s"), ""));
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let d = &v["details"][0];
    assert_eq!(d["damage"], 0.0);
    assert_eq!(d["components"][0]["counted"][0]["constant"], true);
    assert_eq!(d["components"][0]["counted"][0]["full_cycles"], 0);
}

/// Relative tolerance for a hand-worked value written to 10 significant figures
/// (rounding at most 5e-10 relative). The values are worked from the EN 1993-1-9
/// formulas in 40-digit decimal arithmetic by tests/tools/hand_worked.py, independently
/// of seamlife.
const HAND: f64 = 1e-9;

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= HAND * b.abs()
}

/// The normal-stress damage of the one component of `yaml`, from `assess --json`.
fn component_damage(dir: &Path, yaml: &str) -> f64 {
    let (code, out, err) = assess_in(dir, yaml);
    assert!(code <= 1, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    v["details"][0]["components"][0]["damage"].as_f64().unwrap()
}

#[test]
fn series_and_blocks_combine_in_one_component() {
    // The record: the ASTM E1049-85 rainflow example (reversals -2, 1, -3, 5, -1, 3,
    // -4, 4, -2; from memory) times 10 MPa, repeated 2000 times a year. Counted by hand
    // as a repeating history (ASTM E1049-85 §5.4.5, from memory): begin at the highest
    // peak, 50, -10, 30, -40, 40, -20, then the start of the next repetition, 10, -30,
    // 50 (the end -20 and the start -20 join into one valley). Read reversals onto a
    // stack; while the last range X (latest two points) is at least the range Y before
    // it, count Y as one cycle and drop its two points:
    //   50 -10 30:        X = 40 < Y = 60
    //   -40:              X = 70 >= Y = 40: cycle -10..30 (40 MPa)
    //   50 -40 40 -20 10: X = 30 < Y = 60
    //   -30:              X = 40 >= Y = 30: cycle -20..10 (30 MPa); then
    //                     50 -40 40 -30: X = 70 < Y = 80
    //   50:               X = 80 >= Y = 70: cycle 40..-30 (70 MPa); then stack 50 -40 50:
    //                     X = 90 >= Y = 90: cycle 50..-40 (90 MPa), closing the history.
    // Full cycles of 90, 70, 40 and 30 MPa per repetition. With 10 MPa range bins each
    // cycle has its own bin, so each block carries its own range.
    let dir = tempfile::tempdir().unwrap();
    let mut rec = String::from("t,s\n");
    for (i, x) in [-20, 10, -30, 50, -10, 30, -40, 40, -20].iter().enumerate() {
        rec.push_str(&format!("{i},{x}\n"));
    }
    std::fs::write(dir.path().join("rec.csv"), rec).unwrap();
    let s = "            file: rec.csv\n            column: s\n            unit: mpa\n            bin_width_mpa: 10\n";
    let blocks = "        - event: design passage\n          per_year: 9000\n          blocks: [{range_mpa: 70, cycles: 1}, {range_mpa: 45, cycles: 1}]\n";
    let series_only = component_damage(dir.path(), &project(s, ""));
    let both = component_damage(dir.path(), &project(s, blocks));
    let blocks_only = component_damage(
        dir.path(),
        &project(s, blocks)
            .replace(
                "        - event: measured\n          per_year: 2000\n          series:\n",
                "",
            )
            .replace(s, ""),
    );
    // Category 56 (attachment-longitudinal-over-100, EN 1993-1-9 Table 8.4, from memory),
    // γMf = 1.35 (Table 3.1, safe life, high consequence): ΔσC,d = 41.48148148,
    // ΔσD,d = ΔσC,d·(2/5)^(1/3) = 30.56381688, ΔσL,d = 16.78810164 (Fig. 7.1).
    // Record: 2000·25 = 5e4 cycles of each range. 90, 70, 40 MPa on m = 3,
    // N = 2e6·(ΔσC,d/Δσ)^3 (eq. (7.1)): 195823.6958, 416196.7180, 2230554.285;
    // 30 MPa < ΔσD,d on m = 5, N = 5e6·(ΔσD,d/30)^5 (eq. (7.2)): 5487842.965.
    // D = Σ 5e4/N = 0.4069942134 (A.6, Palmgren-Miner; hand-worked).
    assert!(close(series_only, 0.4069942134), "{series_only}");
    // Blocks: 9000·25 = 225000 cycles each of 70 and 45 MPa, both on m = 3:
    // D = 0.6842338306 (eq. (7.1), A.6; hand-worked)
    assert!(close(blocks_only, 0.6842338306), "{blocks_only}");
    // Damage adds over loading events (Palmgren-Miner, A.6): 1.091228044 (hand-worked)
    assert!(close(both, 1.091228044), "{both}");
}

#[test]
fn counted_record_damage_follows_the_reference_count() {
    // The block-loading signal counted with half cycles for the residue, as the golden
    // count of PyPI rainflow 3.2.0 extract_cycles does
    // (tests/data/rainflow/block_loading.cycles.csv). Its values are multiples of
    // 0.5 MPa, so every range is one too; with 0.5 MPa range bins each block carries
    // exactly the range of its cycles.
    let data = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/rainflow");
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        data.join("block_loading.signal.csv"),
        dir.path().join("rec.csv"),
    )
    .unwrap();
    let s = "            file: rec.csv\n            column: stress_mpa\n            unit: mpa\n            residue: half-cycles\n            bin_width_mpa: 0.5\n";
    let (code, out, err) = assess_in(dir.path(), &project(s, ""));
    assert!(code <= 1, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let c = &v["details"][0]["components"][0];

    // The golden cycles, and the damage of each by EN 1993-1-9 in this test: category
    // 56, γMf = 1.35 (Table 8.4 from memory, Table 3.1), 2000·25 = 5e4 repetitions of
    // the record; N = 2e6·(ΔσC,d/Δσ)^3 at or above ΔσD,d (eq. (7.1)),
    // 5e6·(ΔσD,d/Δσ)^5 down to ΔσL,d (eq. (7.2)), none below (7.1(3) cut-off).
    let c_d = 56.0 / 1.35;
    let d_d = c_d * 0.4f64.powf(1.0 / 3.0);
    let l_d = d_d * 0.05f64.powf(0.2);
    let mut rdr = csv::Reader::from_path(data.join("block_loading.cycles.csv")).unwrap();
    let (mut full, mut half, mut damage) = (0u64, 0u64, 0.0);
    for r in rdr.records() {
        let r = r.unwrap();
        let range: f64 = r[0].parse().unwrap();
        let count: f64 = r[2].parse().unwrap();
        if count == 1.0 {
            full += 1;
        } else {
            half += 1;
        }
        let n = if range >= d_d {
            2e6 * (c_d / range).powi(3)
        } else if range >= l_d {
            5e6 * (d_d / range).powi(5)
        } else {
            continue;
        };
        damage += count * 2000.0 * 25.0 / n;
    }
    // D = 1157.444407 (hand-worked from the same golden cycles by
    // tests/tools/hand_worked.py): the test's own sum agrees, and so does the program
    assert!(close(damage, 1157.444407), "{damage}");
    assert_eq!(c["counted"][0]["full_cycles"], full);
    assert_eq!(c["counted"][0]["half_cycles"], half);
    let got = c["damage"].as_f64().unwrap();
    assert!(close(got, 1157.444407), "{got}");
}

#[test]
fn record_mapping_by_hours() {
    // repeats per year = hours per year / record hours = 1000/0.5 = 2000 (demo scenario)
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(record(), dir.path().join("rec.csv")).unwrap();
    let s = "            file: rec.csv\n            column: 2\n            unit: microstrain\n            modulus_mpa: 210000\n            record_hours: 0.5\n            hours_per_year: 1000\n";
    let yaml = project(s, "").replace("          per_year: 2000\n", "");
    let (code, out, err) = assess_in(dir.path(), &yaml);
    assert!(code <= 1, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(
        v["details"][0]["components"][0]["counted"][0]["repeats_per_year"],
        2000.0
    );
    // the file's hash is recorded for the appendix
    assert_eq!(v["input"]["series_files"][0]["file"], "rec.csv");
    assert_eq!(
        v["input"]["series_files"][0]["sha256"]
            .as_str()
            .unwrap()
            .len(),
        64
    );
}

#[test]
fn demo_measured_detail_in_results() {
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/kestrel-bay-runway.yaml");
    let o = seamlife()
        .arg("assess")
        .arg(&p)
        .arg("--json")
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let d = v["details"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["id"] == "RG3-B02")
        .unwrap();
    let rec = &d["components"][0]["counted"][0];
    assert_eq!(rec["samples"], 36000);
    assert_eq!(rec["residue"], "repeated");
    assert!(!rec["histogram"].as_array().unwrap().is_empty());
    assert!(!rec["matrix"].as_array().unwrap().is_empty());
    // every counted block comes from a matrix cell
    let cells = rec["matrix"].as_array().unwrap().len();
    let blocks = d["components"][0]["blocks"].as_array().unwrap();
    assert_eq!(blocks.len(), cells);
    assert!(blocks.iter().all(|b| b["origin"] == "counted"));
}
