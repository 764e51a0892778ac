//! The code families beyond EN 1993-1-9 and IIW (DNV-RP-C203, BS 7608, ...): curves
//! in published form, environments, design curves below the mean, size rules, SCF.
//! Each check value names its source beside it; hand-worked values come from
//! tests/tools/hand_worked.py (40-digit decimal arithmetic, independent of seamlife)
//! to 10 significant figures.

use seamlife::catalogue::{Component, Library};
use seamlife::results::Results;

/// Relative tolerance for a hand-worked value written to 10 significant figures.
const HAND: f64 = 1e-9;

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

fn assert_hand(got: f64, want: f64, what: &str) {
    assert!(close(got, want, HAND), "{what}: got {got}, want {want}");
}

/// Assess one project text.
fn assess(yaml: &str) -> Result<Results, seamlife::Error> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("project.yaml");
    std::fs::write(&path, yaml).unwrap();
    let lib = Library::load(None).unwrap();
    seamlife::run_project(&path, &lib)
}

/// A one-detail project: `basis_extra` goes into the basis mapping, `detail` holds
/// the detail's own lines (after id, location, material).
fn project(family: &str, years: f64, basis_extra: &str, detail: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R, revision: A, prepared_by: P, date: 2026-01-01}}
basis: {{family: {family}, design_life_years: {years}, strategy: safe-life, consequence: high{basis_extra}}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: D1
    location: here
    material: S355
{detail}
"
    )
}

fn ok(yaml: &str) -> Results {
    assess(yaml).unwrap_or_else(|e| panic!("{e}"))
}

/// Two blocks a year: 1e4 cycles of 80 MPa and 1e6 of 30 MPa.
const TWO_BLOCKS: &str = "    normal:
      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 80, cycles: 1.0e4}, {range_mpa: 30, cycles: 1.0e6}]}]";

#[test]
fn every_catalogue_category_is_listed_by_its_family() {
    // the loader refuses it too; this states it for every shipped family
    let lib = Library::load(None).unwrap();
    assert!(lib.get("dnv-rp-c203").is_some());
    for f in &lib.families {
        for e in &f.catalogue {
            for c in [Component::Normal, Component::Shear] {
                if let Some(cat) = e.category(c) {
                    assert!(
                        f.curves.get(c).categories_mpa.contains(&cat),
                        "{} {}: {cat}",
                        f.id,
                        e.key
                    );
                    // a family with published classes has a class for it
                    if !f.curves.get(c).classes.is_empty() {
                        assert!(f.class_of(c, cat).is_some(), "{} {}", f.id, e.key);
                    }
                }
            }
        }
    }
}

#[test]
fn dnv_curves_in_air_from_log_a() {
    let lib = Library::load(None).unwrap();
    let f = lib.get("dnv-rp-c203").unwrap();
    assert!(f.catalogue.len() >= 25);
    // DNV-RP-C203 Table 2-1, curve D in air: log a1 = 12.164, m = 3 to 1e7 (from
    // memory): Δσ(2e6) = 90.01675121, knee 52.64211545 (Table 2-1 lists 52.63)
    let d = f
        .class_curve(Component::Normal, 90.0, Some("air"), 0.0)
        .unwrap();
    assert_eq!(d.class, "D");
    assert_hand(d.reference_range_mpa, 90.01675121, "D air Δσ(2e6)");
    let c = seamlife::assess::SnCurve::new(&d.segments, 2e6, d.reference_range_mpa);
    assert_eq!(c.knees[0].0, 1e7);
    assert_hand(c.knees[0].1, 52.64211545, "D air knee");
    assert!(!c.cut_off); // m = 5 continues without cut-off (2.4.4, from memory)
                         // Table 2-1, curve B1: log a1 = 15.117, m = 4 (from memory): Δσ(2e6) = 159.9530409,
                         // knee at 1e7 106.9670454 (Table 2-1 lists 106.97)
    let b1 = f
        .class_curve(Component::Normal, 160.0, Some("air"), 0.0)
        .unwrap();
    assert_eq!(b1.segments[0].slope_m, 4.0);
    assert_hand(b1.reference_range_mpa, 159.9530409, "B1 Δσ(2e6)");
    let c = seamlife::assess::SnCurve::new(&b1.segments, 2e6, b1.reference_range_mpa);
    assert_hand(c.knees[0].1, 106.9670454, "B1 knee");
    // Table 2-1, curve W3: log a1 = 10.970 (from memory): knee 21.05393769 (listed 21.05)
    let w3 = f
        .class_curve(Component::Normal, 36.0, Some("air"), 0.0)
        .unwrap();
    let c = seamlife::assess::SnCurve::new(&w3.segments, 2e6, w3.reference_range_mpa);
    assert_hand(c.knees[0].1, 21.05393769, "W3 knee");
}

#[test]
fn dnv_seawater_and_free_corrosion() {
    let lib = Library::load(None).unwrap();
    let f = lib.get("dnv-rp-c203").unwrap();
    // DNV-RP-C203 Table 2-2, D with cathodic protection: log a1 = 11.764, m = 3 to 1e6
    // (from memory): knee 83.43213042; Δσ(2e6) on the m = 3 line 66.22012580
    let d = f
        .class_curve(Component::Normal, 90.0, Some("seawater-cp"), 0.0)
        .unwrap();
    assert_hand(d.reference_range_mpa, 66.22012580, "D CP line 1 at 2e6");
    let c = seamlife::assess::SnCurve::new(&d.segments, 2e6, d.reference_range_mpa);
    assert_eq!(c.knees[0].0, 1e6);
    assert_hand(c.knees[0].1, 83.43213042, "D CP knee");
    // the curve reads back its knee on either side of it
    assert!(close(c.range_at(1e6), 83.43213042, HAND));
    assert!(c.range_at(1.5e6) < 83.43213042 && c.range_at(1.5e6) > 66.2);
    // Table 2-4, D free corrosion: log a = 11.687, m = 3, no knee (from memory):
    // N(100 MPa) = 10^5.687 = 486407.2057
    let fc = f
        .class_curve(Component::Normal, 90.0, Some("free-corrosion"), 0.0)
        .unwrap();
    assert!(!fc.constant_amplitude_limit);
    let c = seamlife::assess::SnCurve::new(&fc.segments, 2e6, fc.reference_range_mpa);
    assert!(c.knees.is_empty());
    assert_hand(c.endurance(100.0).unwrap().0, 486407.2057, "D FC N(100)");
}

#[test]
fn dnv_worked_damage_sums_per_environment() {
    // Curve D, t = 20 mm (no size effect), 20 years, 1e4 × 80 MPa + 1e6 × 30 MPa a year
    // (DNV-RP-C203 Tables 2-1, 2-2, 2-4, from memory; Miner sum 2.2), hand-worked:
    // in air 0.1904120232 (N(80) = 2849246.602 on m = 3, N(30) = 166364398.1 on m = 5
    // from the knee); with CP 0.2823293196 (80 MPa lies below the 1e6 knee, on m = 5);
    // free corrosion 1.320704119 (one slope m = 3)
    for (env, want) in [
        ("air", 0.1904120232),
        ("seawater-cp", 0.2823293196),
        ("free-corrosion", 1.320704119),
    ] {
        let r = ok(&project(
            "dnv-rp-c203",
            20.0,
            &format!(", environment: {env}"),
            &format!("    detail: longitudinal-weld-manual\n    thickness_mm: 20\n{TWO_BLOCKS}"),
        ));
        let comp = &r.details[0].components[0];
        assert_hand(comp.damage, want, env);
        // DNV: no factors on the curve; the DFF acts on the damage (1.2, from memory)
        assert_eq!(comp.gamma_mf, 1.0);
        let used = comp.curve_variant.as_ref().unwrap();
        assert_eq!(used.name, format!("D {env}"));
        assert_eq!(used.from, "published class");
    }
    // a detail's own environment wins over the project's
    let r = ok(&project(
        "dnv-rp-c203",
        20.0,
        ", environment: air",
        &format!("    detail: longitudinal-weld-manual\n    environment: free-corrosion\n    thickness_mm: 20\n{TWO_BLOCKS}"),
    ));
    assert_hand(r.details[0].components[0].damage, 1.320704119, "detail env");
    // DFF 3: D ≤ 1/3 (DNV-RP-C203 1.2, from memory): utilisation 3·0.1904120232
    let r = ok(&project(
        "dnv-rp-c203",
        20.0,
        ", damage_case: dff-3",
        &format!("    detail: longitudinal-weld-manual\n    thickness_mm: 20\n{TWO_BLOCKS}"),
    ));
    assert!(close(r.details[0].utilisation, 3.0 * 0.1904120232, 1e-9));
}

#[test]
fn dnv_thickness_rules_and_scf() {
    // Curve D, k = 0.20 above t_ref = 25 mm (DNV-RP-C203 2.4.3, Table 2-1, from
    // memory): t = 50 -> (25/50)^0.2 = 0.8705505633
    let r = ok(&project(
        "dnv-rp-c203",
        20.0,
        "",
        &format!("    detail: longitudinal-weld-manual\n    thickness_mm: 50\n{TWO_BLOCKS}"),
    ));
    let c = &r.details[0].components[0];
    assert_hand(c.size.factor, 0.8705505633, "ks D 50 mm");
    assert_hand(
        c.corrected_category_mpa,
        0.8705505633 * 90.01675121,
        "ks·Δσ(2e6)",
    );
    // Tubular joints: their own size rule t_ref = 32 mm, k = 0.25 (2.4.3, from
    // memory): t = 64 -> (32/64)^0.25 = 0.8408964153
    let tube = |extra: &str| {
        ok(&project(
            "dnv-rp-c203",
            20.0,
            "",
            &format!(
                "    detail: tubular-joint-hot-spot\n    thickness_mm: 64\n{extra}{TWO_BLOCKS}"
            ),
        ))
    };
    let r = tube("");
    let c = &r.details[0].components[0];
    assert_eq!(c.size.reference_mm, 32.0);
    assert_hand(c.size.factor, 0.8408964153, "tubular ks");
    // SCF 2 on the nominal stress: the same damage as ranges twice as large
    // (DNV-RP-C203 2.3: local stress = SCF × nominal, from memory)
    let scf = tube("    scf: 2.0\n");
    let doubled = ok(&project(
        "dnv-rp-c203",
        20.0,
        "",
        "    detail: tubular-joint-hot-spot\n    thickness_mm: 64
    normal:
      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 160, cycles: 1.0e4}, {range_mpa: 60, cycles: 1.0e6}]}]",
    ));
    let (a, b) = (
        scf.details[0].components[0].damage,
        doubled.details[0].components[0].damage,
    );
    assert!(close(a, b, 1e-12), "{a} vs {b}");
    assert!(scf.details[0].notes.iter().any(|n| n.contains("SCF = 2")));
    // the required class searched on the class curves passes, the next lower one fails
    let req = scf.details[0].required_category.unwrap();
    assert!(req >= 90.0, "{req}");
}

#[test]
fn bad_environment_and_scf_are_refused() {
    let bad = |basis: &str, det: &str, what: &str| {
        let e = assess(&project(
            "dnv-rp-c203",
            20.0,
            basis,
            &format!(
                "    detail: longitudinal-weld-manual\n    thickness_mm: 20\n{det}{TWO_BLOCKS}"
            ),
        ))
        .unwrap_err();
        let text = e.to_string();
        assert!(text.contains(what), "{text}");
        assert_eq!(e.exit_code(), 2);
    };
    bad(
        ", environment: seawater",
        "",
        "unknown environment `seawater`",
    );
    bad(
        "",
        "    environment: sea-cp\n",
        "unknown environment `sea-cp`",
    );
    bad(
        "",
        "    scf: 0.5\n",
        "scf must lie between 1 and 50, got 0.5",
    );
    bad("", "    scf: .nan\n", "scf must lie between 1 and 50");
    bad("", "    scf: 1.0e300\n", "scf must lie between 1 and 50");
    // EN publishes design curves: no standard deviations to choose
    let e = assess(&project(
        "en1993-1-9",
        20.0,
        ", std_devs_below_mean: {value: 2, reason: r}",
        "    thickness_mm: 20\n    normal: {category: 90, loading: [{event: e, per_year: 1, blocks: [{range_mpa: 30, cycles: 1}]}]}",
    ))
    .unwrap_err();
    assert!(
        e.to_string().contains("std_devs_below_mean does not apply"),
        "{e}"
    );
}

#[test]
fn catalogues_are_complete_and_their_descriptions_unique() {
    let lib = Library::load(None).unwrap();
    // EN 1993-1-9 Tables 8.1-8.10 hold about 90 constructional details of the
    // nominal-stress method; the IIW nominal-stress table over 60 common ones (from
    // memory): the shipped catalogues cover at least 85 and 60 of them
    assert!(lib.get("en1993-1-9").unwrap().catalogue.len() >= 85);
    assert!(lib.get("iiw").unwrap().catalogue.len() >= 60);
    for f in &lib.families {
        let mut seen = std::collections::BTreeMap::new();
        for e in &f.catalogue {
            let d = e.description.to_lowercase();
            if let Some(k) = seen.insert(d, e.key.clone()) {
                panic!("{}: `{}` and `{k}` share a description", f.id, e.key);
            }
            // every entry names where to look it up
            assert!(!e.reference.trim().is_empty(), "{} {}", f.id, e.key);
        }
    }
    // every EN table 8.1 to 8.10 is represented
    let en = lib.get("en1993-1-9").unwrap();
    for t in 1..=10 {
        let table = format!("Table 8.{t},");
        assert!(
            en.catalogue.iter().any(|e| e.reference.starts_with(&table)),
            "{table}"
        );
    }
}

#[test]
fn en_bolts_and_hollow_lattice_joints() {
    // EN 1993-1-9 Table 8.1, bolts in tension: ks = (30/d)^0.25 for d > 30 mm (from
    // memory): d = 36 mm -> 0.9554427922 (hand-worked)
    let r = ok(&project(
        "en1993-1-9",
        1.0,
        "",
        &format!("    detail: bolt-tension-threaded\n    thickness_mm: 36\n{TWO_BLOCKS}"),
    ));
    let c = &r.details[0].components[0];
    assert_eq!(c.category_mpa, 50.0);
    assert_eq!(c.size.reference_mm, 30.0);
    assert_hand(c.size.factor, 0.9554427922, "bolt ks");
    // EN 1993-1-9 Table 8.7, lattice gap joint t0/ti >= 2 (90, m = 5, from memory),
    // γMf = 1.35 (Table 3.1): 1e6 cycles of 60 MPa in one year:
    // D = 1e6/(2e6·(66.67/60)^5) = 0.295245 (hand-worked); the main curve (m = 3)
    // would give 0.3645
    let one_block = "    normal:
      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 60, cycles: 1.0e6}, {range_mpa: 59.9999999, cycles: 1}]}]";
    let r = ok(&project(
        "en1993-1-9",
        1.0,
        "",
        &format!("    detail: lattice-gap-chs-t0-ti-2\n    thickness_mm: 10\n{one_block}"),
    ));
    let c = &r.details[0].components[0];
    assert!(close(c.damage, 0.295245, 1e-6), "{}", c.damage);
    assert_eq!(
        c.curve_variant.as_ref().map(|v| v.name.as_str()),
        Some("hollow-joint")
    );
}

#[test]
fn dnv_demo_dolphin_assesses_with_its_environments_and_scf() {
    // the invented Kestrel Bay mooring dolphin (projects/kestrel-bay-dolphin.yaml)
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("projects")
        .join("kestrel-bay-dolphin.yaml");
    let lib = Library::load(None).unwrap();
    let r = seamlife::run_project(&path, &lib).unwrap();
    assert_eq!(r.family.id, "dnv-rp-c203");
    assert_eq!(r.summary.details, 6);
    assert_eq!(r.summary.failed, 1);
    assert_eq!(r.summary.governing_detail.as_deref(), Some("MD2-K01"));
    let env = |id: &str| {
        let d = r.details.iter().find(|d| d.id == id).unwrap();
        (d.components[0].environment.clone(), d.components[0].scf)
    };
    // the project's seawater-cp, a detail's own free corrosion and air
    assert_eq!(env("MD2-K01"), (Some("seawater-cp".into()), Some(2.6)));
    assert_eq!(env("MD2-A01"), (Some("free-corrosion".into()), None));
    assert_eq!(env("MD2-F01"), (Some("air".into()), None));
    // DFF 3: D ≤ 1/3 (DNV-RP-C203 1.2, from memory)
    assert!((r.details[0].damage_limit - 1.0 / 3.0).abs() < 1e-15);
}

#[test]
fn crane_route_and_improvement_demos_assess() {
    // the invented demos projects/kestrel-bay-runway-crane-route.yaml (EN 1991-3 route)
    // and projects/kestrel-bay-trolley-frame-improved.yaml (IIW improvements)
    let run = |name: &str| {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("projects")
            .join(name);
        seamlife::run_project(&path, &Library::load(None).unwrap()).unwrap()
    };
    let r = run("kestrel-bay-runway-crane-route.yaml");
    assert_eq!(r.summary.details, 3);
    assert!(r
        .details
        .iter()
        .all(|d| d.components.iter().all(|c| c.crane_route.is_some())));
    // class S3: λ = 0.397 normal, 0.575 shear (EN 1991-3 Table 2.12, from memory)
    let w = &r.details[0];
    assert_eq!(w.components[0].crane_route.as_ref().unwrap().lambda, 0.397);
    assert_eq!(w.components[1].crane_route.as_ref().unwrap().lambda, 0.575);
    let r = run("kestrel-bay-trolley-frame-improved.yaml");
    // as welded FAT 80 fails, TIG dressed FAT 104 passes (IIW 6.4 × 1.3, from memory)
    assert_eq!(r.details[0].status, seamlife::results::Status::Fail);
    assert_eq!(r.details[1].status, seamlife::results::Status::Pass);
    assert!((r.details[1].components[0].category_mpa - 104.0).abs() < 1e-12);
}

#[test]
fn en_shear_studs_take_their_own_slope_m_8() {
    // EN 1993-1-9 Table 8.5 shear studs: ΔτC = 80 MPa on m = 8 (from memory);
    // γMf = 1.35 (Table 3.1, safe life, high consequence). 1e6 cycles of 40 MPa in
    // one year: N = 2e6·(80/(1.35·40))^8 = 4.640874380e7, D = 2.154766361e-2
    // (tests/tools/hand_worked.py, `stud`).
    let stud = "    detail: shear-stud-shear
    thickness_mm: 20
    shear:
      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 40, cycles: 1.0e6}]}]";
    let r = ok(&project("en1993-1-9", 1.0, "", stud));
    let c = &r.details[0].components[0];
    assert_eq!(c.component, "shear");
    assert_hand(c.damage, 2.154766361e-2, "stud damage on m = 8");
    // the same range on a shear detail of the ordinary m = 5 curve (Fig. 7.2):
    // D = 1e6/(2e6·(80/(1.35·40))^5) = 7.006302246e-2 (hand_worked.py, `stud`)
    let lap = stud.replace("shear-stud-shear", "lap-joint-fillet-shear");
    let r = ok(&project("en1993-1-9", 1.0, "", &lap));
    assert_hand(
        r.details[0].components[0].damage,
        7.006302246e-2,
        "lap joint damage on m = 5",
    );
}
