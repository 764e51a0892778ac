//! The package of a large project: full sheets for the chosen details only, every
//! detail in the summary table, the rule stated; the same package from merged shards.

#[path = "safety_common/mod.rs"]
mod common;

use std::path::Path;

use common::{hall, run_in};

fn pdf_text(pdf: &Path) -> String {
    let out = std::process::Command::new("pdftotext")
        .args(["-layout"])
        .arg(pdf)
        .arg("-")
        .output()
        .expect("pdftotext (poppler-utils; .ci/install-tools installs it)");
    String::from_utf8_lossy(&out.stdout).into_owned()
}

fn report(dir: &Path, args: &[&str]) -> String {
    let (code, _, err) = run_in(dir, args);
    assert!(code <= 1, "{args:?}: {err}");
    err
}

/// The population section's figures, worked here from the `--csv` rows: nearest-rank
/// percentiles (rank ceil(p·n), common practice), counts above 0.8 and 1.0, and per
/// group the highest utilisation and the detail that has it.
fn population_section_agrees_with_the_rows(text: &str, csv: &str) {
    let flat = text.split_whitespace().collect::<Vec<_>>().join(" ");
    let mut rd = csv::Reader::from_reader(csv.as_bytes());
    let head = rd.headers().unwrap().clone();
    let col = |name: &str| head.iter().position(|h| h == name).unwrap();
    let (cu, cg, ci) = (col("utilisation"), col("group"), col("id"));
    let rows: Vec<(String, String, f64)> = rd
        .records()
        .map(|r| {
            let r = r.unwrap();
            (r[ci].to_string(), r[cg].to_string(), r[cu].parse().unwrap())
        })
        .collect();
    let mut u: Vec<f64> = rows.iter().map(|r| r.2).collect();
    u.sort_by(f64::total_cmp);
    let rank = |p: f64| u[((p * u.len() as f64).ceil() as usize).max(1) - 1];
    let stated = format!(
        "Utilisation over all {} details: median {:.3}, 90th percentile {:.3}, 99th percentile {:.3}, highest {:.3}",
        u.len(),
        rank(0.5),
        rank(0.9),
        rank(0.99),
        u[u.len() - 1]
    );
    assert!(flat.contains(&stated), "population line: {stated}");
    let above = |x: f64| u.iter().filter(|&&v| v > x).count();
    let stated = format!(
        "{} details lie above 0.8 and {} above the limit 1.0",
        above(0.8),
        above(1.0)
    );
    assert!(flat.contains(&stated), "{stated}");
    // the group of the highest utilisation heads the group table, its governing detail named
    let top = rows
        .iter()
        .fold(&rows[0], |a, b| if b.2 > a.2 { b } else { a });
    let in_group = rows.iter().filter(|r| r.1 == top.1).count();
    let fails = rows.iter().filter(|r| r.1 == top.1 && r.2 > 1.0).count();
    let row = format!(
        "{} {in_group} {fails} {:.3}",
        top.1,
        rows.iter()
            .filter(|r| r.1 == top.1)
            .map(|r| r.2)
            .fold(f64::MAX, f64::min)
    );
    assert!(flat.contains(&row), "group row {row}");
    assert!(
        flat.contains(&format!("{:.3} {}", top.2, top.0)),
        "group row ends with the highest and its detail {}",
        top.0
    );
}

#[test]
fn sheets_for_the_chosen_details_and_every_detail_in_the_summary() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // 250 details: over the all-sheets default of 200
    hall(d, 250, 0);
    report(d, &["report", "project.yaml", "-o", "default.pdf"]);
    let text = pdf_text(&d.join("default.pdf"));
    assert!(text.contains("DETAIL SHEET 1 OF 100"), "default sheets");
    assert!(text.contains("DETAIL SHEET 100 OF 100"));
    assert!(!text.contains("DETAIL SHEET 101"));
    assert!(text.contains("sheets for the 100 details of highest utilisation"));
    // every detail id appears in the summary table (ids G001-01 ... of the hall)
    let csv = run_in(d, &["assess", "project.yaml", "--csv"]).1;
    let ids: Vec<String> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().to_string())
        .collect();
    assert_eq!(ids.len(), 250);
    for id in &ids {
        assert!(text.contains(id.as_str()), "{id} missing from the package");
    }
    population_section_agrees_with_the_rows(&text, &csv);
    // named details only
    report(
        d,
        &[
            "report",
            "project.yaml",
            "--sheets",
            &format!("ids:{},{}", ids[3], ids[7]),
            "-o",
            "two.pdf",
        ],
    );
    let text = pdf_text(&d.join("two.pdf"));
    assert!(text.contains("DETAIL SHEET 2 OF 2"));
    assert!(!text.contains("DETAIL SHEET 3"));
    assert!(text.contains("sheets for the details named by the engineer"));
    // an unknown id is bad input, with the nearest id suggested, and no PDF
    let (code, _, err) = run_in(
        d,
        &[
            "report",
            "project.yaml",
            "--sheets",
            &format!("ids:{}x", ids[3]),
            "-o",
            "bad.pdf",
        ],
    );
    assert_eq!(code, 2, "{err}");
    assert!(err.contains(&format!("did you mean `{}`", ids[3])), "{err}");
    assert!(!d.join("bad.pdf").exists());
    let (code, _, err) = run_in(d, &["report", "project.yaml", "--sheets", "top:0"]);
    assert_eq!(code, 2, "{err}");
    // the same package from the merged results of three shards
    let mut parts = vec!["merge".to_string()];
    for k in 1..=3 {
        let name = format!("p{k}.json");
        report(
            d,
            &[
                "assess",
                "project.yaml",
                "--json",
                "--quiet",
                "--shard",
                &format!("{k}/3"),
                "-o",
                &name,
            ],
        );
        parts.push(name);
    }
    parts.extend(["-o".into(), "all.json".into()]);
    let args: Vec<&str> = parts.iter().map(|s| s.as_str()).collect();
    report(d, &args);
    report(d, &["report", "all.json", "-o", "merged.pdf"]);
    let a = std::fs::read(d.join("default.pdf")).unwrap();
    let b = std::fs::read(d.join("merged.pdf")).unwrap();
    assert!(
        a == b,
        "the package from merged shards differs from the direct one"
    );
}

#[test]
fn the_committed_batch_demo_is_what_the_generator_writes_and_assesses() {
    let dir = tempfile::tempdir().unwrap();
    hall(dir.path(), 2400, 0);
    let root = common::root().join("projects/kestrel-bay-hall");
    for f in ["project.yaml", "tables/details.csv", "tables/stresses.csv"] {
        assert!(
            std::fs::read(dir.path().join(f)).unwrap() == std::fs::read(root.join(f)).unwrap(),
            "{f} differs from `cargo run --example make_batch`"
        );
    }
    let (code, out, err) = run_in(&root, &["assess", "project.yaml", "--csv", "--quiet"]);
    assert!(code <= 1, "{err}");
    assert_eq!(out.lines().count(), 2401);
}
