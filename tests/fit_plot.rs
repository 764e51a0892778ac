//! The test-evaluation diagram: valid grey-scale SVG, every specimen drawn with the
//! marker of its result, the key and the values a checker reads, determinism.

use std::path::Path;

use seamlife::catalogue::{Component, Library};
use seamlife::fit::{self, FitOptions, FitResults, Method};
use seamlife::report::plots::{fit_diagram, FONT_FAMILY};

fn results(file: &Path, censored: bool) -> FitResults {
    let lib = Library::load(None).unwrap();
    let set = fit::input::read_tests(file).unwrap();
    let opts = FitOptions {
        component: Component::Normal,
        fixed_slope_m: None,
        method: Method::Tolerance,
        censored,
        date: "2026-12-02".into(),
    };
    fit::evaluate(&set, lib.get("en1993-1-9").unwrap(), &opts).unwrap()
}

fn set(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/fit")
        .join(name)
}

fn texts(doc: &roxmltree::Document) -> Vec<String> {
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect()
}

#[test]
fn diagram_is_grey_scale_svg_with_every_specimen() {
    let r = results(&set("set_a.csv"), false);
    let svg = fit_diagram(&r);
    let doc = roxmltree::Document::parse(&svg).expect("well-formed SVG");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    assert_eq!(root.attribute("width"), Some("640"));
    for n in doc.descendants().filter(|n| n.is_element()) {
        for attr in ["fill", "stroke"] {
            if let Some(c) = n.attribute(attr).filter(|c| c.starts_with('#')) {
                assert!(
                    c.len() == 7 && c[1..3] == c[3..5] && c[3..5] == c[5..7],
                    "grey only: {attr}={c}"
                );
            }
        }
        if n.has_tag_name("text") {
            assert_eq!(n.attribute("font-family"), Some(FONT_FAMILY));
        }
    }
    // Failures: filled black circles of radius 3, one per failure and one in the key.
    let filled = doc
        .descendants()
        .filter(|n| {
            n.has_tag_name("circle")
                && n.attribute("r") == Some("3")
                && n.attribute("fill") == Some("#000000")
        })
        .count();
    assert_eq!(filled, r.failures + 1);
    // Run-outs: an arrow head (a filled triangle) each, and one in the key.
    let arrows = doc
        .descendants()
        .filter(|n| {
            n.has_tag_name("polygon")
                && n.attribute("points").map(|p| p.split_whitespace().count()) == Some(3)
        })
        .count();
    assert_eq!(arrows, r.runouts + 1);
    let t = texts(&doc);
    let has = |s: &str| t.iter().any(|x| x.contains(s));
    assert!(has("Fatigue tests set_a.csv: 15 failures, 2 run-outs"));
    assert!(has("mean, free slope m = 2.33"));
    assert!(has("mean, fixed slope m = 3"));
    assert!(has("characteristic, fixed slope"));
    assert!(has("en1993-1-9 curve, ΔσC = 80"));
    // set A, tolerance, fixed slope: Δσk = 87.27 MPa (golden.json, scipy)
    assert!(has("Δσk = 87.3"), "{t:?}");
    assert!(has("ΔσC = 80"));
    assert!(has("run-out (excluded)"));
    assert!(has("k = 1.991 (fixed slope)"));
    assert_eq!(svg, fit_diagram(&r), "the same input gives the same bytes");
}

#[test]
fn censored_diagram_says_so_and_escapes_the_file_name() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("<a&b>.csv");
    std::fs::copy(set("set_c.csv"), &p).unwrap();
    let r = results(&p, true);
    let svg = fit_diagram(&r);
    let doc = roxmltree::Document::parse(&svg).expect("file name escaped in the SVG");
    let t = texts(&doc);
    assert!(t.iter().any(|x| x.contains("<a&b>.csv")), "{t:?}");
    assert!(t.iter().any(|x| x == "run-out (censored)"));
    // the censored fixed-slope fit is the category basis: its slope in the key
    let m = r.evaluations[2].slope_m;
    assert!(t
        .iter()
        .any(|x| x == &format!("mean, free slope m = {:.2}", m)));
}
