//! The PDF package: content against the JSON results, page structure, determinism,
//! escaping of hostile text, failure modes. Needs typst and pdftotext
//! (`bash .ci/install-tools` installs both).

mod pdf;

use pdf::*;
use std::path::Path;

fn check_package(project: &Path) {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("p.pdf");
    let (code, out, err) = render(project, &pdf, &[]);
    assert!(code == 0 || code == 1, "exit {code}: {err}");
    assert!(out.contains("wrote"));
    let v = json_results(project);
    let pg = pages(&pdf);
    let all = squash(&pg.join("\n"));
    let details = v["details"].as_array().unwrap();
    let n = details.len();
    // Every detail id and its utilisation rounded as in the report (3 decimals).
    for d in details {
        let id = d["id"].as_str().unwrap();
        let u = format!("{:.3}", d["utilisation"].as_f64().unwrap());
        assert!(all.contains(id), "{id} missing");
        let sheet = pg
            .iter()
            .find(|p| squash(p).contains(&format!("Detail {id}")) && p.contains("DETAIL SHEET"))
            .unwrap_or_else(|| panic!("no sheet for {id}"));
        assert!(
            squash(sheet).contains(&format!("Utilisation {u}")),
            "{id}: {u} not on its sheet"
        );
        let dmg = d["damage"].as_f64().unwrap();
        if (1e-3..1e5).contains(&dmg) {
            assert!(
                squash(sheet).contains(&format!("Damage {dmg:.3}")),
                "{id} damage {dmg:.3}"
            );
        }
    }
    // The governing detail is named in the summary with its utilisation.
    let gov = v["summary"]["governing_detail"].as_str().unwrap();
    let gu = format!("{:.3}", v["summary"]["max_utilisation"].as_f64().unwrap());
    assert!(all.contains(&format!("Governing detail: {gov} at utilisation {gu}")));
    // One sheet per detail: each detail sheet starts on its own page.
    let starts: Vec<usize> = pg
        .iter()
        .enumerate()
        .filter(|(_, p)| p.contains("DETAIL SHEET"))
        .map(|(i, _)| i)
        .collect();
    assert_eq!(starts.len(), n);
    for (k, i) in starts.iter().enumerate() {
        assert!(pg[*i].contains(&format!("DETAIL SHEET {} OF {n}", k + 1)));
    }
    // Every page carries reference, revision, page X of Y and the short input hash.
    let reference = v["project"]["reference"].as_str().unwrap();
    let rev = v["project"]["revision"].as_str().unwrap();
    let hash = &v["input"]["sha256"].as_str().unwrap()[..12];
    for (i, p) in pg.iter().enumerate() {
        let s = squash(p);
        assert!(
            s.contains(&format!("{reference} rev {rev}")),
            "page {}",
            i + 1
        );
        assert!(
            s.contains(&format!("page {} of {}", i + 1, pg.len())),
            "page {}",
            i + 1
        );
        assert!(s.contains(hash), "page {}", i + 1);
    }
    // Cautions early: on the first page.
    assert!(squash(&pg[0]).contains("review by a licensed or chartered engineer prevail"));
    assert!(squash(&pg[0]).contains("engineer's responsibility"));
    // Appendix: full hash and tool version.
    assert!(all.contains(v["input"]["sha256"].as_str().unwrap()));
    assert!(all.contains(&format!("seamlife {}", env!("CARGO_PKG_VERSION"))));
}

#[test]
fn demo_package_matches_results() {
    check_package(&root().join("projects/kestrel-bay-runway.yaml"));
}

#[test]
fn measured_record_appears_in_the_package() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("p.pdf");
    let (code, _, err) = render(
        &root().join("projects/kestrel-bay-runway.yaml"),
        &pdf,
        &["--keep-source"],
    );
    assert!(code <= 1, "{err}");
    let text = squash(&pages(&pdf).join("\n"));
    let v = json_results(&root().join("projects/kestrel-bay-runway.yaml"));
    let d = v["details"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["id"] == "RG3-B02")
        .unwrap();
    let rec = &d["components"][0]["counted"][0];
    assert!(text.contains("Counted record: measured operation (gauge SG-4)"));
    assert!(text.contains(&format!(
        "rainflow (ASTM E1049-85) gave {} full and {} half cycles",
        rec["full_cycles"], rec["half_cycles"]
    )));
    assert!(text.contains("residue handling repeated"));
    assert!(text.contains("Range histogram of the counted record"));
    assert!(text.contains("Range-mean matrix of the counted record"));
    // both figures of the record were built and embedded
    let plots = dir.path().join("p-typst/plots");
    let names: Vec<String> = std::fs::read_dir(&plots)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert!(names.iter().any(|n| n.ends_with("-rec0-hist.svg")));
    assert!(names.iter().any(|n| n.ends_with("-rec0-matrix.svg")));
    let main = std::fs::read_to_string(dir.path().join("p-typst/main.typ")).unwrap();
    assert!(main.contains("-rec0-hist.svg") && main.contains("-rec0-matrix.svg"));
}

#[test]
fn iiw_demo_package_matches_results() {
    check_package(&root().join("projects/kestrel-bay-trolley-frame.yaml"));
}

#[test]
fn two_renders_are_byte_identical() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.pdf");
    let b = dir.path().join("sub-b.pdf");
    let p = root().join("projects/kestrel-bay-runway.yaml");
    assert!(render(&p, &a, &[]).0 <= 1);
    assert!(render(&p, &b, &[]).0 <= 1);
    assert_eq!(std::fs::read(&a).unwrap(), std::fs::read(&b).unwrap());
}

#[test]
fn no_machine_paths_in_the_document() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("x.pdf");
    render(&root().join("projects/kestrel-bay-runway.yaml"), &pdf, &[]);
    let bytes = std::fs::read(&pdf).unwrap();
    let hay = String::from_utf8_lossy(&bytes);
    for needle in [
        root().display().to_string(),
        dir.path().display().to_string(),
        "seamlife-build-".into(),
    ] {
        assert!(!hay.contains(&needle), "{needle} in PDF");
    }
    let text = pages(&pdf).join("\n");
    assert!(!text.contains(&root().display().to_string()));
}

const HOSTILE: &str = r##"# [ ] $ * _ @ <lbl> \ // "q" #set text(red) $x^2$ *bold* _it_ @ref = head -- ~ Ørsted Δσ≤τ ÆØÅ Ж ✓"##;

#[test]
fn hostile_strings_render_literally() {
    let dir = tempfile::tempdir().unwrap();
    let yaml = format!(
        "seamlife: 1
project:
  title: {h}
  reference: 'R-1 #[x]'
  revision: 'A_1'
  prepared_by: {h}
  checked_by: '@who'
  date: 2026-11-20
  client: {h}
  revisions: [{{revision: A, date: 2026-11-20, description: {h}}}]
basis: {{family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: 'D#1 [x]'
    location: {h}
    description: {h}
    material: S355
    thickness_mm: 20
    normal:
      category: 80
      loading:
        - event: {h}
          per_year: 1000
          blocks: [{{range_mpa: 60, cycles: 1}}]
",
        h = serde_json::to_string(HOSTILE).unwrap()
    );
    let p = dir.path().join("hostile.yaml");
    std::fs::write(&p, yaml).unwrap();
    let pdf = dir.path().join("h.pdf");
    let (code, _, err) = render(&p, &pdf, &[]);
    assert_eq!(code, 0, "{err}");
    let text = pages_raw(&pdf).join("\n");
    let flat = squash(&text);
    // The whole hostile string appears as written, several times (title, location, event...).
    assert!(flat.matches(&squash(HOSTILE)).count() >= 4, "{flat}");
    assert!(flat.contains("D#1 [x]"));
    assert!(flat.contains("R-1 #[x] rev A_1"));
}

#[test]
fn broken_override_template_gives_error_and_no_pdf() {
    let dir = tempfile::tempdir().unwrap();
    let tpl = dir.path().join("tpl");
    std::fs::create_dir(&tpl).unwrap();
    // A Tera syntax error in a firm's title block.
    std::fs::write(
        tpl.join("title-block.typ.tera"),
        "#page[ {{ r.project.title | typst }\n",
    )
    .unwrap();
    let pdf = dir.path().join("o.pdf");
    let p = root().join("projects/kestrel-bay-runway.yaml");
    let (code, _, err) = render(&p, &pdf, &["--templates", tpl.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("template error") && err.contains("title-block.typ.tera"),
        "{err}"
    );
    assert!(!pdf.exists());
    // A template that renders but does not typeset: typst's own error and the template name.
    std::fs::write(
        tpl.join("title-block.typ.tera"),
        "#page[ #nosuchfunction() ]\n",
    )
    .unwrap();
    let (code, _, err) = render(&p, &pdf, &["--templates", tpl.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("typst could not compile"), "{err}");
    assert!(err.contains("unknown variable: nosuchfunction"), "{err}");
    assert!(err.contains("in template `title-block.typ.tera`"), "{err}");
    assert!(!pdf.exists());
    // nothing half-written beside it
    let left: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(left.len(), 1, "{left:?}");
}

#[test]
fn override_title_block_is_used() {
    let dir = tempfile::tempdir().unwrap();
    let tpl = dir.path().join("tpl");
    std::fs::create_dir(&tpl).unwrap();
    std::fs::write(
        tpl.join("title-block.typ.tera"),
        "#page(header: none)[\n= Harrow & Vale Consulting\nJob {{ r.project.reference | typst }}\n{% include \"cautions.typ.tera\" %}\n]\n",
    )
    .unwrap();
    let pdf = dir.path().join("o.pdf");
    let p = root().join("projects/kestrel-bay-runway.yaml");
    let (code, _, err) = render(&p, &pdf, &["--templates", tpl.to_str().unwrap()]);
    assert!(code <= 1, "{err}");
    let first = squash(&pages(&pdf)[0]);
    assert!(first.contains("Harrow & Vale Consulting"));
    assert!(first.contains("Job KB-2231"));
}

#[test]
fn typst_missing_exits_3_with_install_hint() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("o.pdf");
    let p = root().join("projects/kestrel-bay-runway.yaml");
    let (code, _, err) = render(&p, &pdf, &["--typst", "/nonexistent/typst"]);
    assert_eq!(code, 3);
    assert!(
        err.contains("cargo install --locked typst-cli --version 0.15.1"),
        "{err}"
    );
    assert!(!pdf.exists());
    // the same through the environment variable
    let o = seamlife()
        .env("SEAMLIFE_TYPST", "/nonexistent/typst")
        .arg("report")
        .arg(&p)
        .arg("-o")
        .arg(&pdf)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(3));
}

#[test]
fn wrong_typst_version_exits_3() {
    let dir = tempfile::tempdir().unwrap();
    let fake = dir.path().join("typst");
    std::fs::write(&fake, "#!/bin/sh\necho 'typst 0.11.0 (abc)'\n").unwrap();
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(&fake, std::fs::Permissions::from_mode(0o755)).unwrap();
    }
    let pdf = dir.path().join("o.pdf");
    let p = root().join("projects/kestrel-bay-runway.yaml");
    let (code, _, err) = render(&p, &pdf, &["--typst", fake.to_str().unwrap()]);
    assert_eq!(code, 3);
    assert!(err.contains("0.11.0") && err.contains("0.15.x"), "{err}");
}

#[test]
fn keep_source_and_pdf_a() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("pkg.pdf");
    let p = root().join("projects/kestrel-bay-runway.yaml");
    let (code, _, err) = render(&p, &pdf, &["--keep-source", "--pdf-a"]);
    assert!(code <= 1, "{err}");
    let src = dir.path().join("pkg-typst");
    assert!(src.join("main.typ").exists());
    assert!(src.join("project.yaml").exists());
    assert!(src.join("plots/utilisation.svg").exists());
    let bytes = std::fs::read(&pdf).unwrap();
    // PDF/A-2b declares its part and conformance in the XMP metadata (ISO 19005-2, from memory)
    let hay = String::from_utf8_lossy(&bytes);
    assert!(
        hay.contains("pdfaid:part") || hay.contains("pdfaid"),
        "no PDF/A id"
    );
}

#[test]
fn default_output_name_from_reference_and_revision() {
    let dir = tempfile::tempdir().unwrap();
    let p = root().join("projects/kestrel-bay-runway.yaml");
    let o = seamlife()
        .current_dir(dir.path())
        .arg("report")
        .arg(&p)
        .output()
        .unwrap();
    assert!(o.status.code().unwrap() <= 1);
    assert!(dir.path().join("KB-2231-revB-fatigue.pdf").exists());
}

#[test]
fn bs7608_demo_package_matches_results() {
    check_package(&root().join("projects/kestrel-bay-gangway.yaml"));
}

#[test]
fn aashto_demo_package_states_both_checks_with_their_clauses() {
    let project = root().join("projects/heron-creek-bridge.yaml");
    check_package(&project);
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("p.pdf");
    let (code, _, err) = render(&project, &pdf, &[]);
    assert_eq!(code, 0, "{err}");
    let all = squash(&pages(&pdf).join("\n"));
    let v = json_results(&project);
    for d in v["details"].as_array().unwrap() {
        let t = &d["truck_pair"];
        // each detail states both ratios, rounded as in the package
        for key in ["fatigue_i_ratio", "fatigue_ii_ratio"] {
            // (the table's columns may interleave in the text: the number alone)
            let x = format!("{:.3}", t[key].as_f64().unwrap());
            assert!(all.contains(&x), "{} {key}: {x}", d["id"]);
        }
    }
    // the clauses of both checks and of the cycle count (AASHTO LRFD 6.6.1.2, from memory)
    for clause in [
        "6.6.1.2.5-1",
        "6.6.1.2.5-2",
        "6.6.1.2.5-3",
        "Table 6.6.1.2.3-2",
        "Fatigue I (infinite life)",
        "Fatigue II (finite life)",
    ] {
        assert!(all.contains(clause), "{clause}");
    }
}
