//! `report --previous`: the "changes since revision X" section, the marks in the
//! summary and on the sheets, from a project file or a results model, and bad input.
//! Needs typst and pdftotext (`bash .ci/install-tools` installs both). The demo
//! numbers are invented; expected texts come from the two demo files.

mod pdf;

use pdf::*;
use std::path::{Path, PathBuf};

fn rev_a() -> PathBuf {
    root().join("projects/kestrel-bay-runway-rev-a.yaml")
}

fn rev_b() -> PathBuf {
    root().join("projects/kestrel-bay-runway.yaml")
}

fn page_with<'a>(pg: &'a [String], needle: &str) -> &'a str {
    pg.iter()
        .find(|p| squash(p).contains(needle))
        .unwrap_or_else(|| panic!("no page with {needle}"))
}

/// The text from the page holding `needle` to the end of the next page (a section may
/// start low on a page and go on over the next).
fn pages_from(pg: &[String], needle: &str) -> String {
    let i = pg
        .iter()
        .position(|p| squash(p).contains(needle))
        .unwrap_or_else(|| panic!("no page with {needle}"));
    pg[i..(i + 2).min(pg.len())].join("\n")
}

fn sheet<'a>(pg: &'a [String], id: &str) -> &'a str {
    pg.iter()
        .find(|p| p.contains("DETAIL SHEET") && squash(p).contains(&format!("Detail {id}")))
        .unwrap_or_else(|| panic!("no sheet for {id}"))
}

/// The line of the summary table that starts with `id`.
fn summary_row(pg: &[String], id: &str) -> String {
    let summary = page_with(pg, "Summary 9 details assessed");
    summary
        .lines()
        .find(|l| l.trim_start().starts_with(id))
        .unwrap_or_else(|| panic!("{id} not in the summary"))
        .to_string()
}

fn render_b(dir: &Path, name: &str, previous: Option<&Path>) -> (i32, String, PathBuf) {
    let pdf = dir.join(name);
    let mut extra: Vec<&str> = Vec::new();
    let prev;
    if let Some(p) = previous {
        prev = p.to_str().unwrap().to_string();
        extra.extend(["--previous", prev.as_str()]);
    }
    let (code, _, err) = render(&rev_b(), &pdf, &extra);
    (code, err, pdf)
}

#[test]
fn the_package_shows_the_changes_since_revision_a() {
    let dir = tempfile::tempdir().unwrap();
    let (code, err, pdf) = render_b(dir.path(), "b.pdf", Some(&rev_a()));
    // the demo's revision B has a failing detail
    assert_eq!(code, 1, "{err}");
    let pg = pages(&pdf);
    let all = squash(&pg.join("\n"));
    assert!(all.contains("Changes since revision A"));
    let ch = squash(&pages_from(&pg, "compared with revision A of 2026-10-02"));
    assert!(
        ch.contains("2 added, 0 removed, 1 changed, 6 unchanged."),
        "{ch}"
    );
    assert!(ch.contains("Status worse: RG3-B01"), "{ch}");
    assert!(ch.contains("kestrel-bay-runway-rev-a.yaml"), "{ch}");
    // the changed inputs of RG3-W02 with their values in the two files
    for row in [
        "thickness_mm 25 40",
        "material S355-mid S355-thick",
        "fy_mpa 345 335",
    ] {
        assert!(ch.contains(row), "{row} not in: {ch}");
    }
    assert!(ch.contains("Added detail"));
    assert!(!ch.contains("Removed detail"));
    // the summary marks the changed values of RG3-W02 and the added ids, not the others
    let w02 = squash(&summary_row(&pg, "RG3-W02"));
    assert!(w02.contains("0.218 † 0.218 † 114 † 1.64 †"), "{w02}");
    assert!(squash(&summary_row(&pg, "RG3-B01")).starts_with("RG3-B01 †"));
    assert!(!summary_row(&pg, "RG3-S01").contains('†'));
    // the sheets say what changed
    let s = squash(sheet(&pg, "RG3-W02"));
    assert!(s.contains("Changed since revision A"), "{s}");
    assert!(s.contains("thickness_mm 25 → 40"), "{s}");
    assert!(squash(sheet(&pg, "RG3-B01")).contains("New in revision B: not in revision A."));
    let s01 = sheet(&pg, "RG3-S01");
    assert!(!s01.contains("since revision") && !s01.contains('†'));
}

#[test]
fn without_previous_nothing_is_marked_and_a_results_model_gives_the_same_section() {
    let dir = tempfile::tempdir().unwrap();
    let (_, _, plain) = render_b(dir.path(), "plain.pdf", None);
    let text = pages(&plain).join("\n");
    assert!(!text.contains("Changes since"));
    assert!(!text.contains('†'));
    // the old revision as a results model
    let model = dir.path().join("rev-a.json");
    let o = seamlife()
        .args(["assess", rev_a().to_str().unwrap(), "--json", "-o"])
        .arg(&model)
        .output()
        .unwrap();
    assert!(o.status.code().unwrap() <= 1);
    let (_, _, from_yaml) = render_b(dir.path(), "y.pdf", Some(&rev_a()));
    let (code, err, from_json) = render_b(dir.path(), "j.pdf", Some(&model));
    assert_eq!(code, 1, "{err}");
    let section = |p: &Path| {
        let pg = pages(p);
        squash(page_with(&pg, "compared with revision A"))
    };
    let (y, j) = (section(&from_yaml), section(&from_json));
    assert!(j.contains("results model rev-a.json"), "{j}");
    assert_eq!(
        y.replace("project file kestrel-bay-runway-rev-a.yaml", "X"),
        j.replace("results model rev-a.json", "X")
    );
    // the same inputs give the same bytes
    let (_, _, again) = render_b(dir.path(), "y2.pdf", Some(&rev_a()));
    assert_eq!(
        std::fs::read(&from_yaml).unwrap(),
        std::fs::read(&again).unwrap()
    );
}

#[test]
fn a_bad_previous_is_refused_before_any_pdf() {
    let dir = tempfile::tempdir().unwrap();
    for bad in ["missing.yaml", "/dev/zero"] {
        let p = PathBuf::from(bad);
        let (code, err, pdf) = render_b(dir.path(), "x.pdf", Some(&p));
        assert_eq!(code, 2, "{bad}: {err}");
        assert!(err.contains(bad), "{err}");
        assert!(!pdf.exists());
    }
    // the package never replaces the previous revision's file
    let old = dir.path().join("old.yaml");
    std::fs::copy(rev_a(), &old).unwrap();
    let before = std::fs::read(&old).unwrap();
    let o = seamlife()
        .arg("report")
        .arg(rev_b())
        .arg("--previous")
        .arg(&old)
        .arg("-o")
        .arg(&old)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert_eq!(std::fs::read(&old).unwrap(), before);
}
