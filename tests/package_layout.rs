//! Layout of the PDF package as a reader sees it: page structure, the cautions, long
//! strings without spaces, and characters the fonts cannot draw. Text and word boxes
//! come from pdftotext (`-raw`, `-layout`, `-bbox`); needs typst and pdftotext
//! (`bash .ci/install-tools` installs both).

mod pdf;

use pdf::*;
use std::ffi::OsStr;
use std::path::{Path, PathBuf};

/// Run `seamlife ARGS`; returns (exit code, stdout, stderr).
fn run(args: &[&OsStr]) -> (i32, String, String) {
    let o = seamlife().args(args).output().unwrap();
    (
        o.status.code().unwrap(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// Render `project` to `pdf`; returns the stderr.
fn report(project: &Path, pdf: &Path) -> String {
    let (code, _, err) = render(project, pdf, &[]);
    assert!(code == 0 || code == 1, "exit {code}: {err}");
    err
}

/// Render `project` into a new temporary folder; returns (folder, PDF path).
fn report_in_temp(project: &Path) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("p.pdf");
    report(project, &pdf);
    (dir, pdf)
}

/// Without any white space: a string that wrapped over lines is found whole.
fn solid(s: &str) -> String {
    s.chars().filter(|c| !c.is_whitespace()).collect()
}

/// One word of a page with its box in points (pdftotext -bbox).
struct Word {
    x0: f64,
    y0: f64,
    x1: f64,
    y1: f64,
    text: String,
}

impl Word {
    fn show(&self) -> String {
        format!(
            "{:?} at x {:.1}..{:.1}, y {:.1}..{:.1}",
            self.text, self.x0, self.x1, self.y0, self.y1
        )
    }
}

fn attr(tag: &str, name: &str) -> f64 {
    let at = tag.find(&format!("{name}=\"")).unwrap() + name.len() + 2;
    let end = at + tag[at..].find('"').unwrap();
    tag[at..end].parse().unwrap()
}

/// Words of every page, and the page width in points.
fn words(pdf: &Path) -> (f64, Vec<Vec<Word>>) {
    let html = pdftotext(pdf, "-bbox");
    let mut width = 0.0;
    let mut out: Vec<Vec<Word>> = Vec::new();
    for page in html.split("<page ").skip(1) {
        width = attr(page, "width");
        let mut ws = Vec::new();
        for w in page.split("<word ").skip(1) {
            let close = w.find('>').unwrap();
            let tag = &w[..close];
            let text = &w[close + 1..w.find("</word>").unwrap()];
            ws.push(Word {
                x0: attr(tag, "xMin"),
                y0: attr(tag, "yMin"),
                x1: attr(tag, "xMax"),
                y1: attr(tag, "yMax"),
                text: text.to_string(),
            });
        }
        out.push(ws);
    }
    (width, out)
}

/// Points per millimetre.
const MM: f64 = 72.0 / 25.4;

/// No word runs past the side margins of the page (18 mm left, 16 mm right in
/// style.typ.tera), and no two words of the same size on one line overlap: text that
/// runs into the next column or over the page number overlaps the words there.
fn assert_nothing_overflows(pdf: &Path, what: &str) {
    let (width, pages) = words(pdf);
    let (left, right) = (18.0 * MM - 1.0, width - 16.0 * MM + 1.0);
    for (p, ws) in pages.iter().enumerate() {
        for w in ws {
            assert!(
                w.x0 >= left && w.x1 <= right,
                "{what}, page {}: {} runs past the margin ({left:.1} to {right:.1} pt)",
                p + 1,
                w.show()
            );
        }
        for (i, a) in ws.iter().enumerate() {
            for b in &ws[i + 1..] {
                let (ha, hb) = (a.y1 - a.y0, b.y1 - b.y0);
                // Same type size (sub- and superscripts sit beside their base, in
                // smaller type) and mostly on one line.
                if ha.min(hb) <= 0.0 || ha.min(hb) / ha.max(hb) < 0.8 {
                    continue;
                }
                if a.y1.min(b.y1) - a.y0.max(b.y0) < 0.6 * ha.min(hb) {
                    continue;
                }
                let overlap = a.x1.min(b.x1) - a.x0.max(b.x0);
                assert!(
                    overlap <= 0.5,
                    "{what}, page {}: {} and {} overlap by {overlap:.1} pt",
                    p + 1,
                    a.show(),
                    b.show()
                );
            }
        }
    }
}

fn demos() -> [PathBuf; 2] {
    [
        root().join("projects/kestrel-bay-runway.yaml"),
        root().join("projects/kestrel-bay-trolley-frame.yaml"),
    ]
}

#[test]
fn detail_sheets_heading_shares_its_page_with_the_first_sheet() {
    for project in demos() {
        let (_dir, pdf) = report_in_temp(&project);
        let pg = pages(&pdf);
        // The heading itself (the contents line has leader dots and a page number).
        let with_heading: Vec<usize> = (0..pg.len())
            .filter(|&i| pg[i].lines().any(|l| l.trim() == "3 Detail sheets"))
            .collect();
        assert_eq!(with_heading.len(), 1, "{}", project.display());
        let page = &pg[with_heading[0]];
        assert!(page.contains("DETAIL SHEET 1 OF"), "{page}");
        // No page is a heading alone: every page has body text between its running
        // header and footer.
        for (i, p) in pg.iter().enumerate() {
            let lines: Vec<&str> = p.lines().filter(|l| !l.trim().is_empty()).collect();
            assert!(
                lines.len() > 4,
                "page {} of {}: {lines:?}",
                i + 1,
                project.display()
            );
        }
        assert_nothing_overflows(&pdf, &project.display().to_string());
    }
}

#[test]
fn cautions_state_each_point_once() {
    for project in demos() {
        let (_dir, pdf) = report_in_temp(&project);
        let v = json_results(&project);
        let pg = pages_raw(&pdf);
        let cover = squash(&pg[0]);
        let all = squash(&pg.join("\n"));
        let cautions = v["cautions"].as_array().unwrap();
        // One list marker per caution of the results, each caution once.
        assert_eq!(cover.matches('▸').count(), cautions.len(), "{cover}");
        for c in cautions {
            let c = squash(c.as_str().unwrap());
            assert_eq!(cover.matches(&c).count(), 1, "{c}");
        }
        // The family's own transcription note: on the cover, once in the package,
        // inside the point about transcribed data.
        let note = squash(v["family"]["transcription_note"].as_str().unwrap());
        assert_eq!(all.matches(&note).count(), 1, "{note}");
        let transcribed = cautions
            .iter()
            .map(|c| squash(c.as_str().unwrap()))
            .find(|c| c.contains("transcribed"))
            .unwrap();
        let family = v["family"]["id"].as_str().unwrap();
        assert!(
            cover.contains(&format!("{transcribed} For family {family}: {note}")),
            "{cover}"
        );
    }
}

/// A reference without spaces of the longest length the project check accepts
/// (`MAX_REFERENCE_CHARS`, 64): `KB-000X-001X-…`.
fn long_reference() -> String {
    let n = seamlife::input::check::MAX_REFERENCE_CHARS;
    let mut s = String::from("KB");
    let mut i = 0;
    while s.len() < n {
        s.push_str(&format!("-{i:03}X"));
        i += 1;
    }
    s.truncate(n);
    s
}

/// A project whose texts are long and have no spaces, with a counted record whose
/// file name is long too. Returns (project path, the strings to find).
fn long_strings_project(dir: &Path) -> (PathBuf, Vec<(&'static str, String)>) {
    let texts: Vec<(&'static str, String)> = vec![
        ("reference", long_reference()),
        // the longest revision accepted (16 characters)
        ("revision", "B-DRAFT-DRAFT-DR".to_string()),
        (
            "title",
            format!(
                "Runway girders {}end",
                "fatigue-of-welded-details-".repeat(4)
            ),
        ),
        ("client", "KestrelBayMarineServices".repeat(5)),
        ("structure", "RunwaygirderRG3".repeat(10)),
        ("prepared_by", format!("{}Ana", "Okonjo-".repeat(10))),
        ("checked_by", "Lindqvist".repeat(6)),
        ("revision description", "Splicethickness".repeat(12)),
        ("id", format!("RG3-{}", "W".repeat(56))),
        (
            "location",
            format!(
                "Bottom-flange{}",
                (0..18)
                    .map(|i| format!("segment{i:02}"))
                    .collect::<Vec<_>>()
                    .join("/")
            ),
        ),
        ("description", "wheel-load".repeat(20)),
        (
            "event",
            format!("loaded_passage_{}", "two_wheels_".repeat(8)),
        ),
        ("material", format!("S355J2+N_{}", "thick".repeat(8))),
        (
            "series file",
            format!("records/gauge_record_{}.csv", "x".repeat(90)),
        ),
    ];
    let t = |k: &str| texts.iter().find(|(n, _)| *n == k).unwrap().1.clone();
    let yaml = format!(
        "seamlife: 1
project:
  title: '{title}'
  reference: '{reference}'
  revision: '{revision}'
  prepared_by: '{prepared}'
  checked_by: '{checked}'
  date: 2026-11-20
  client: '{client}'
  structure: '{structure}'
  revisions:
    - {{revision: '{revision}', date: 2026-11-20, description: '{revdesc}', by: '{checked}'}}
basis: {{family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}}
materials:
  '{material}': {{fy_mpa: 355}}
details:
  - id: '{id}'
    location: '{location}'
    description: '{description}'
    detail: longitudinal-weld-automatic-both-sides
    material: '{material}'
    thickness_mm: 20
    normal:
      loading:
        - event: '{event}'
          per_year: 9000
          blocks: [{{range_mpa: 60, cycles: 1}}]
        - event: measured
          series: {{file: '{file}', column: stress, unit: mpa, record_hours: 1, hours_per_year: 1000}}
  - id: short-id
    location: Top flange
    material: '{material}'
    thickness_mm: 20
    normal:
      category: 80
      loading:
        - event: passage
          per_year: 1000
          blocks: [{{range_mpa: 40, cycles: 1}}]
",
        title = t("title"),
        reference = t("reference"),
        revision = t("revision"),
        prepared = t("prepared_by"),
        checked = t("checked_by"),
        client = t("client"),
        structure = t("structure"),
        revdesc = t("revision description"),
        material = t("material"),
        id = t("id"),
        location = t("location"),
        description = t("description"),
        event = t("event"),
        file = t("series file"),
    );
    let p = dir.join("long.yaml");
    std::fs::write(&p, yaml).unwrap();
    // A sawtooth record of invented stresses (demo input, MPa).
    std::fs::create_dir_all(dir.join("records")).unwrap();
    let mut csv = String::from("stress\n");
    for i in 0..400 {
        csv.push_str(&format!("{}\n", (i % 7) as f64 * 12.0 - 30.0));
    }
    std::fs::write(dir.join(t("series file")), csv).unwrap();
    (p, texts)
}

#[test]
fn long_strings_wrap_or_are_cut_with_a_mark() {
    let dir = tempfile::tempdir().unwrap();
    let (project, texts) = long_strings_project(dir.path());
    let pdf = dir.path().join("long.pdf");
    report(&project, &pdf);
    let pg = pages_raw(&pdf);
    let n = pg.len();
    let all = solid(&pg.join("\n"));
    let find = |k: &str| texts.iter().find(|(n, _)| *n == k).unwrap().1.clone();
    // Nothing is lost: every long text is in the package whole, wrapped or not.
    for (what, s) in &texts {
        assert!(all.contains(&solid(s)), "{what} missing: {s}");
    }
    // The cover holds the title block in full.
    let cover = solid(&pg[0]);
    for k in ["reference", "revision", "title", "client", "structure"] {
        assert!(
            cover.contains(&solid(&find(k))),
            "{k} not whole on the cover"
        );
    }
    // The detail sheet is headed with the whole id; the summary names it whole as the
    // governing detail and in its table.
    let id = find("id");
    assert!(all.contains(&format!("Detail{id}")));
    let summary = pg.iter().find(|p| p.contains("details assessed:")).unwrap();
    assert_eq!(solid(summary).matches(&id).count(), 2, "{summary}");
    // The footer of every page: the reference cut with "…", the revision (cut at 12
    // characters), the page number and the input hash, all on one line.
    let reference = find("reference");
    let layout = pages(&pdf);
    for (i, p) in layout.iter().enumerate() {
        let footer = p.lines().rev().find(|l| !l.trim().is_empty()).unwrap();
        assert!(
            footer.contains(&format!("page {} of {n}", i + 1)),
            "page {}: {footer}",
            i + 1
        );
        assert!(footer.contains("input SHA-256"), "page {}: {footer}", i + 1);
        let left = footer.trim_start().split("… rev ").next().unwrap();
        assert!(
            left.len() >= 20 && reference.starts_with(left),
            "page {}: {footer}",
            i + 1
        );
        assert!(
            footer.contains("… rev B-DRAFT-DRA…"),
            "page {}: {footer}",
            i + 1
        );
    }
    // The project file listing continues a long line on a line marked ↪.
    let listing = pg
        .iter()
        .rev()
        .find(|p| p.contains("A.3 Project file"))
        .unwrap();
    assert!(listing.contains("↪"));
    assert_nothing_overflows(&pdf, "long strings");
}

#[test]
fn undrawable_characters_are_warned_about_with_their_field() {
    let dir = tempfile::tempdir().unwrap();
    let project = dir.path().join("emoji.yaml");
    let demo =
        std::fs::read_to_string(root().join("projects/kestrel-bay-trolley-frame.yaml")).unwrap();
    // The third detail's location gets an emoji (U+1F600), its first event a CJK
    // character (U+6865); neither is in Libertinus Serif, New Computer Modern or
    // DejaVu Sans Mono.
    let mut yaml = String::new();
    let (mut detail, mut done_loc, mut done_event) = (0, false, false);
    for line in demo.lines() {
        let mut l = line.to_string();
        if line.trim_start().starts_with("- id:") {
            detail += 1;
        }
        if detail == 3 && !done_loc && line.trim_start().starts_with("location:") {
            l.push_str(" 😀");
            done_loc = true;
        }
        if detail == 3 && !done_event && line.trim_start().starts_with("- event:") {
            l.push_str(" 桥");
            done_event = true;
        }
        yaml.push_str(&l);
        yaml.push('\n');
    }
    assert!(done_loc && done_event);
    std::fs::write(&project, &yaml).unwrap();
    let loc_line = yaml.lines().position(|l| l.contains('😀')).unwrap() + 1;
    let expected = [
        format!(
            "{}:{loc_line}:",
            project.display()
        ),
        "details[2].location: character U+1F600 cannot be drawn by the package fonts and will show as a box".to_string(),
        "details[2].normal.loading[0].event: character U+6865 cannot be drawn by the package fonts".to_string(),
    ];
    // lint warns and still passes the file.
    let (code, out, err) = run(&["lint".as_ref(), project.as_os_str()]);
    assert_eq!(code, 0, "{err}");
    assert!(out.starts_with("ok:"));
    for e in &expected {
        assert!(err.contains(e.as_str()), "lint: {e:?} not in {err}");
    }
    assert_eq!(err.matches("cannot be drawn").count(), 2, "{err}");
    // report warns the same and writes the package.
    let pdf = dir.path().join("e.pdf");
    let err = report(&project, &pdf);
    for e in &expected {
        assert!(err.contains(e.as_str()), "report: {e:?} not in {err}");
    }
    assert!(pdf.exists());
    // The demo itself draws with the package fonts: no such warning.
    let (_, _, err) = run(&["lint".as_ref(), demos()[1].as_os_str()]);
    assert!(!err.contains("cannot be drawn"), "{err}");
}

#[test]
fn the_changes_section_and_its_marks_stay_inside_the_margins() {
    // `report --previous`: the changes section, the marked summary and the change
    // boxes of the sheets, on the demo's revision B against revision A
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("b.pdf");
    let old = root().join("projects/kestrel-bay-runway-rev-a.yaml");
    let (code, _, err) = render(
        &root().join("projects/kestrel-bay-runway.yaml"),
        &pdf,
        &["--previous", old.to_str().unwrap()],
    );
    assert!(code == 0 || code == 1, "exit {code}: {err}");
    assert_nothing_overflows(&pdf, "demo with --previous");
}
