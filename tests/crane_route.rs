//! The EN 1991-3 crane route of the EN family: ΔσE,2 = λ·φfat·Δσ(max) with λ per
//! stress-history class from the family file, verified by EN 1993-1-9 eq. (8.2).

use seamlife::catalogue::{Component, Library};
use seamlife::results::Results;

fn assess(yaml: &str) -> Result<Results, seamlife::Error> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("project.yaml");
    std::fs::write(&path, yaml).unwrap();
    let lib = Library::load(None).unwrap();
    seamlife::run_project(&path, &lib)
}

fn project(family: &str, components: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R, revision: A, prepared_by: P, date: 2026-01-01}}
basis: {{family: {family}, design_life_years: 25, strategy: safe-life, consequence: high}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: C1
    location: runway girder
    material: S355
    detail: attachment-transverse-l-upto-50
    thickness_mm: 20
{components}
"
    )
}

#[test]
fn lambda_per_stress_history_class() {
    let lib = Library::load(None).unwrap();
    let route = lib.get("en1993-1-9").unwrap().crane_route.as_ref().unwrap();
    // EN 1991-3 Table 2.12 (from memory): λ for normal stress 2^((i-7)/3) and for
    // shear stress 2^((i-7)/5), rounded to three places as tabulated
    let want = [
        ("S0", 0.198, 0.379),
        ("S1", 0.250, 0.436),
        ("S2", 0.315, 0.500),
        ("S3", 0.397, 0.575),
        ("S4", 0.500, 0.660),
        ("S5", 0.630, 0.758),
        ("S6", 0.794, 0.871),
        ("S7", 1.000, 1.000),
        ("S8", 1.260, 1.149),
        ("S9", 1.587, 1.320),
    ];
    assert_eq!(route.classes.len(), 10);
    for (i, (class, n, s)) in want.iter().enumerate() {
        let l = &route.classes[*class];
        assert_eq!(l.get(Component::Normal), *n, "{class}");
        assert_eq!(l.get(Component::Shear), *s, "{class}");
        // the tabulated values follow the powers of two within one unit of the third
        // place (S1 and S3 shear are listed 0.436 and 0.575 against 0.4353 and 0.5743;
        // EN 1991-3 Table 2.12, from memory)
        let k = i as f64 - 7.0;
        assert!((2f64.powf(k / 3.0) - n).abs() < 1.1e-3, "{class}");
        assert!((2f64.powf(k / 5.0) - s).abs() < 1.1e-3, "{class}");
    }
    assert!(route.source.contains("EN 1991-3 Table 2.12"));
    // the other families offer no crane route
    assert!(lib.get("iiw").unwrap().crane_route.is_none());
}

#[test]
fn worked_check_value_normal_shear_and_interaction() {
    // Class S4, φfat = 1.1 (invented figures): normal Δσ(max) = 100 MPa on ΔσC = 80,
    // shear Δτ(max) = 40 MPa on ΔτC = 80, γFf = 1.0, γMf = 1.35 (EN 1993-1-9 Table 3.1):
    // ΔσE,2 = 0.5·1.1·100 = 55 MPa, eq. (8.2) 55·1.35/80 = 0.928125;
    // ΔτE,2 = 0.66·1.1·40 = 29.04 MPa, 29.04·1.35/80 = 0.49005;
    // eq. (8.3) 0.928125^3 + 0.49005^5 = 0.8277636793 (hand-worked)
    let r = assess(&project(
        "en1993-1-9",
        "    normal:
      crane: {stress_history_class: S4, max_range_mpa: 100, phi_fat: 1.1}
    shear:
      category: 80
      crane: {stress_history_class: S4, max_range_mpa: 40, phi_fat: 1.1}",
    ))
    .unwrap();
    let d = &r.details[0];
    let n = &d.components[0];
    let cr = n.crane_route.as_ref().unwrap();
    assert_eq!(cr.lambda, 0.5);
    assert!((cr.equivalent_range_mpa - 55.0).abs() < 1e-12);
    assert!(cr.check_source.contains("eq. (8.2)"));
    assert!((d.checks[0].value - 0.928125).abs() < 1e-12);
    assert!((d.checks[1].value - 0.49005).abs() < 1e-12);
    assert!((d.checks[2].value - 0.8277636793).abs() < 1e-9);
    assert_eq!(n.amplitude, "variable");
    // the sheet's notes state the route, the λ and its clause
    assert!(d
        .notes
        .iter()
        .any(|t| t.contains("class S4, λ = 0.5") && t.contains("EN 1991-3 Table 2.12")));
    // the required category passes: 80 is the lowest listed at 0.928 (71 gives 1.046)
    assert_eq!(d.required_category, Some(80.0));
}

#[test]
fn bad_crane_input_is_refused() {
    let bad = |family: &str, comp: &str, what: &str| {
        let e = assess(&project(family, comp)).unwrap_err();
        assert_eq!(e.exit_code(), 2, "{e}");
        let text = e.to_string();
        assert!(text.contains(what), "{text}");
    };
    let crane = |c: &str| format!("    normal:\n      crane: {c}");
    bad(
        "iiw",
        &crane("{stress_history_class: S4, max_range_mpa: 100, phi_fat: 1.1}"),
        "family `iiw` offers no crane route",
    );
    bad(
        "en1993-1-9",
        &crane("{stress_history_class: S10, max_range_mpa: 100, phi_fat: 1.1}"),
        "unknown stress-history class `S10`",
    );
    bad(
        "en1993-1-9",
        &crane("{stress_history_class: S4, max_range_mpa: 100, phi_fat: 0.5}"),
        "phi_fat must lie between 1 and 3",
    );
    bad(
        "en1993-1-9",
        &crane("{stress_history_class: S4, max_range_mpa: 100, phi_fat: .nan}"),
        "phi_fat must lie between 1 and 3",
    );
    bad(
        "en1993-1-9",
        &crane("{stress_history_class: S4, max_range_mpa: 1.0e300, phi_fat: 1.1}"),
        "max_range_mpa is 1.000e300, above the largest accepted",
    );
    bad(
        "en1993-1-9",
        &crane("{stress_history_class: S4, max_range_mpa: -5, phi_fat: 1.1}"),
        "max_range_mpa",
    );
    bad(
        "en1993-1-9",
        &crane("{stress_history_class: S4, max_range_mpa: 100, phi_fat: 1.1, lambda: 2}"),
        "unknown key `lambda`",
    );
    bad(
        "en1993-1-9",
        "    normal:
      crane: {stress_history_class: S4, max_range_mpa: 100, phi_fat: 1.1}
      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 30, cycles: 1}]}]",
        "give either `loading:` or `crane:`",
    );
    bad(
        "en1993-1-9",
        "    normal:
      loading: []",
        "loading lists no events",
    );
}
