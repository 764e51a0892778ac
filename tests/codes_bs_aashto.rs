//! The BS 7608 and AASHTO LRFD families: BS 7608 mean curves less d standard
//! deviations, its knees, thickness factor, environments and a worked damage sum; the
//! AASHTO LRFD pair (Fatigue I and Fatigue II) with cycles from the truck traffic, and
//! the hostile inputs of both. Each check value names its source beside it;
//! hand-worked values come from tests/tools/hand_worked.py (functions `bs7608` and
//! `aashto`, 40-digit decimal arithmetic, independent of seamlife) to 10 significant
//! figures.

use seamlife::catalogue::{Component, Library};
use seamlife::results::Results;

/// Relative tolerance for a hand-worked value written to 10 significant figures.
const HAND: f64 = 1e-9;

fn assert_hand(got: f64, want: f64, what: &str) {
    assert!(
        (got - want).abs() <= HAND * want.abs(),
        "{what}: got {got}, want {want}"
    );
}

fn assess(yaml: &str) -> Result<Results, seamlife::Error> {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("project.yaml");
    std::fs::write(&path, yaml).unwrap();
    let lib = Library::load(None).unwrap();
    seamlife::run_project(&path, &lib)
}

fn ok(yaml: &str) -> Results {
    assess(yaml).unwrap_or_else(|e| panic!("{e}"))
}

fn refused(yaml: &str) -> String {
    match assess(yaml) {
        Ok(_) => panic!("accepted:\n{yaml}"),
        Err(e) => {
            assert_eq!(e.exit_code(), 2, "{e}");
            e.to_string()
        }
    }
}

/// A one-detail project; `basis_extra` goes into the basis mapping.
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

/// Two blocks a year: 1e4 cycles of 80 MPa and 1e6 of 30 MPa.
const TWO_BLOCKS: &str = "    normal:
      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 80, cycles: 1.0e4}, {range_mpa: 30, cycles: 1.0e6}]}]";

fn curve(c: &seamlife::catalogue::ClassCurve) -> seamlife::assess::SnCurve {
    seamlife::assess::SnCurve::new(&c.segments, 2e6, c.reference_range_mpa)
}

#[test]
fn bs7608_design_curves_two_standard_deviations_below_the_mean() {
    let lib = Library::load(None).unwrap();
    let f = lib.get("bs7608").unwrap();
    assert!(f.catalogue.len() >= 25);
    // BS 7608 Table 10, class D: log C0 = 12.6007, σ = 0.2095, m = 3, d = 2 (from
    // memory): Sr(2e6) = 91.24799591, knee at 1e7 53.36215172 (the table's 53 MPa)
    let d = f
        .class_curve(Component::Normal, 91.0, Some("air"), 2.0)
        .unwrap();
    assert_eq!(d.class, "D");
    assert_hand(d.reference_range_mpa, 91.24799591, "D Sr(2e6)");
    let c = curve(&d);
    assert_eq!(c.knees[0].0, 1e7);
    assert_hand(c.knees[0].1, 53.36215172, "D knee");
    // beyond 1e7 the slope is m + 2 = 5, without cut-off (BS 7608 Fig. 17, from memory)
    assert_eq!(c.slopes, vec![3.0, 5.0]);
    assert!(!c.cut_off);
    // class B, m = 4: knee 100.3171072 (the table's 100 MPa); class C, m = 3.5:
    // Sr(2e6) = 123.8364725 (Table 10, from memory)
    let b = f
        .class_curve(Component::Normal, 150.0, Some("air"), 2.0)
        .unwrap();
    assert_hand(curve(&b).knees[0].1, 100.3171072, "B knee");
    assert_eq!(curve(&b).slopes, vec![4.0, 6.0]);
    let cc = f
        .class_curve(Component::Normal, 124.0, Some("air"), 2.0)
        .unwrap();
    assert_hand(cc.reference_range_mpa, 123.8364725, "C Sr(2e6)");
    // class S1 (shear), m = 8: Sr(2e6) = 99.08804287 (Table 10 class S, from memory)
    let s = f
        .class_curve(Component::Shear, 99.0, Some("air"), 2.0)
        .unwrap();
    assert_hand(s.reference_range_mpa, 99.08804287, "S1 Sr(2e6)");
}

#[test]
fn bs7608_another_d_is_stated_and_used() {
    // class F with d = 3: Sr(2e6) = 57.59127165; the mean (d = 0) 95.20432278 (BS 7608
    // Table 10, from memory)
    for (d, want) in [(3.0, 57.59127165), (0.0, 95.20432278)] {
        let r = ok(&project(
            "bs7608",
            20.0,
            &format!(", std_devs_below_mean: {{value: {d}, reason: client rule}}"),
            &format!(
                "    detail: attachment-longitudinal-upto-150\n    thickness_mm: 12\n{TWO_BLOCKS}"
            ),
        ));
        assert_hand(r.details[0].components[0].corrected_category_mpa, want, "F");
        assert_eq!(
            r.basis
                .method
                .iter()
                .filter(|m| m.contains(&format!("{d} standard deviations")))
                .count(),
            1
        );
    }
}

#[test]
fn bs7608_worked_damage_sums_thickness_and_environments() {
    // class F, t = 12 mm, 20 years, 1e4 × 80 MPa + 1e6 × 30 MPa a year (BS 7608 Table
    // 10 d = 2 and the Miner sum, from memory): in air D = 0.6473981890 (30 MPa on
    // m + 2 = 5 below the knee 39.82294127); free corrosion (life / 2, slope 3 throughout)
    // D = 2.034255656 (the file rounds log C0 - log 2 to 11.9360)
    for (env, want) in [("air", 0.6473981890), ("free-corrosion", 2.034255656)] {
        let r = ok(&project(
            "bs7608",
            20.0,
            &format!(", environment: {env}"),
            &format!(
                "    detail: attachment-longitudinal-upto-150\n    thickness_mm: 12\n{TWO_BLOCKS}"
            ),
        ));
        assert_hand(r.details[0].components[0].damage, want, env);
        assert_hand(r.details[0].utilisation, want, env); // damage ratio, D_lim = 1
    }
    // constant amplitude 35 MPa (below the 1e7 knee): no damage in air; with cathodic
    // protection no non-propagating limit, D = 1.048826256 (BS 7608 4.6, from memory)
    let ca = "    normal:\n      loading: [{event: e, per_year: 1, blocks: [{range_mpa: 35, cycles: 1.0e6}]}]";
    let det = format!("    detail: attachment-longitudinal-upto-150\n    thickness_mm: 12\n{ca}");
    let air = ok(&project("bs7608", 20.0, "", &det));
    assert_eq!(air.details[0].components[0].damage, 0.0);
    let cp = ok(&project("bs7608", 20.0, ", environment: seawater-cp", &det));
    assert_hand(cp.details[0].components[0].damage, 1.048826256, "CP CA");
    // size factor (16/25)^0.25 = 0.8944271910 above t_ref = 16 mm (BS 7608 (1993), from
    // memory)
    let r = ok(&project(
        "bs7608",
        20.0,
        "",
        &format!(
            "    detail: attachment-longitudinal-upto-150\n    thickness_mm: 25\n{TWO_BLOCKS}"
        ),
    ));
    assert_hand(r.details[0].components[0].size.factor, 0.8944271910, "ks");
}

/// A one-detail AASHTO project: ADTT 900, n = 1, 75 years.
fn bridge(detail: &str, blocks: &str) -> String {
    project(
        "aashto-lrfd",
        75.0,
        ", adtt_single_lane: 900, cycles_per_truck_passage: 1",
        &format!("    detail: {detail}\n    thickness_mm: 20\n    normal:\n      loading: [{{event: truck, per_year: 1, blocks: [{blocks}]}}]"),
    )
}

#[test]
fn aashto_units_and_constants() {
    let lib = Library::load(None).unwrap();
    let f = lib.get("aashto-lrfd").unwrap();
    assert!(f.catalogue.len() >= 25);
    let pair = f.aashto_pair().unwrap();
    // AASHTO LRFD Table 6.6.1.2.5-1, category A: A = 250e8 ksi³ (from memory);
    // × 6.894757³ = 8.194017780e12 MPa³, log10 = 12.91349690 (common practice conversion)
    let a = &pair.categories["A"];
    assert_hand(a.constant_mpa3(pair.ksi_to_mpa), 8.194017780e12, "A MPa³");
    let la = f.curves.normal.classes["A"].curves["atmospheric"][0]
        .log_a
        .unwrap();
    assert!((la - 12.91349690).abs() < 5e-4);
    // Table 6.6.1.2.5-3: (ΔF)TH 24 ksi = 165.474168 MPa, listed 165.5 (from memory)
    assert!((a.threshold_mpa - 165.474168).abs() < 0.05);
    // E′: 3.9e8 ksi³ = 1.278266774e11 MPa³; 2.6 ksi = 17.9263682 MPa (listed 17.9)
    let e = &pair.categories["E′"];
    assert_hand(e.constant_mpa3(pair.ksi_to_mpa), 1.278266774e11, "E′ MPa³");
    assert!((e.threshold_mpa - 17.9263682).abs() < 0.05);
    // Table 3.4.1-1: Fatigue I γ = 1.75, Fatigue II γ = 0.80 (2014 edition, from memory)
    assert_eq!(pair.fatigue_i_factor.value, 1.75);
    assert_eq!(f.partial_factors.gamma_ff.value, 0.80);
    // every entry names a letter of the list
    for en in &f.catalogue {
        assert!(pair
            .categories
            .contains_key(en.category_letter.as_deref().unwrap()));
    }
}

#[test]
fn aashto_finite_life_in_force_with_a_spectrum() {
    // category E′, ADTT 900 <= 6485 (Table 6.6.1.2.3-2, from memory): Fatigue II in
    // force. N = 365·75·1·900 = 24637500 (eq. 6.6.1.2.5-3); (Δf)eff of 0.7 × 17 and
    // 0.3 × 24 MPa = 19.64913053 (C6.6.1.2.5); (A/N)^(1/3) = 17.31149020; ratio
    // 0.8·19.649/17.311 = 0.9080272258; D = ratio³ = 0.7486806541, life 100.1762228
    // years; Fatigue I 1.75·24/17.9 = 2.346368715 (not in force) — hand-worked
    let r = ok(&bridge(
        "cover-plate-end-t-over-20",
        "{range_mpa: 17, cycles: 0.7}, {range_mpa: 24, cycles: 0.3}",
    ));
    let d = &r.details[0];
    let t = d.truck_pair.as_ref().unwrap();
    assert_eq!(t.category_letter, "E′");
    assert_eq!(t.cycles_design_life, 24637500.0);
    assert_hand(t.effective_range_mpa, 19.64913053, "Δf eff");
    assert_hand(t.finite_life_resistance_mpa, 17.31149020, "(A/N)^(1/3)");
    assert_hand(t.fatigue_ii_ratio, 0.9080272258, "Fatigue II");
    assert_hand(t.fatigue_i_ratio, 2.346368715, "Fatigue I");
    assert_eq!(t.in_force, "fatigue-ii");
    assert!(!t.fatigue_i_passes && t.fatigue_ii_passes);
    // the detail passes on the check in force; both checks are stated
    assert_eq!(d.status, seamlife::results::Status::Pass);
    assert_eq!(d.checks.len(), 2);
    assert_eq!(d.governing_check, "fatigue-ii");
    assert_hand(d.utilisation, 0.7486806541, "utilisation");
    // the Palmgren-Miner sum on the m = 3 curve with γ = 0.8 is the same number
    assert_hand(d.components[0].damage, 0.7486806541, "D");
    assert_hand(d.life_years.unwrap(), 100.1762228, "life");
    assert_hand(d.reserve_factor.unwrap(), 1.0 / 0.9080272258, "reserve");
}

#[test]
fn aashto_infinite_life_in_force_and_cycles_per_passage() {
    // category C′, ADTT 900 > 745 (Table 6.6.1.2.3-2, from memory): Fatigue I in force,
    // 1.75·31/82.7 = 0.6559854897 (eq. 6.6.1.2.5-1); Fatigue II 0.6387298705 stated
    let r = ok(&bridge(
        "stiffener-toe-web-or-flange",
        "{range_mpa: 31, cycles: 1}",
    ));
    let d = &r.details[0];
    let t = d.truck_pair.as_ref().unwrap();
    assert_eq!(t.in_force, "fatigue-i");
    assert_hand(t.fatigue_i_ratio, 0.6559854897, "Fatigue I");
    assert_hand(t.fatigue_ii_ratio, 0.6387298705, "Fatigue II");
    assert_hand(d.utilisation, 0.6559854897, "utilisation");
    assert_eq!(d.governing_check, "fatigue-i");
    // 48 MPa: 1.75·48 = 84 > 82.7 fails Fatigue I, which is in force, although
    // Fatigue II (0.8·48 = 38.4 against (A/N)^(1/3) = 38.83) passes: the detail fails
    let r = ok(&bridge(
        "stiffener-toe-web-or-flange",
        "{range_mpa: 48, cycles: 1}",
    ));
    let d = &r.details[0];
    assert_eq!(d.status, seamlife::results::Status::Fail);
    assert!(d.truck_pair.as_ref().unwrap().fatigue_ii_passes);
    // a detail's own n = 2 doubles N: 365·75·2·900 = 49275000 (eq. 6.6.1.2.5-3)
    let yaml = bridge("stiffener-toe-web-or-flange", "{range_mpa: 31, cycles: 1}").replace(
        "    thickness_mm: 20\n",
        "    thickness_mm: 20\n    cycles_per_truck_passage: 2\n",
    );
    let r = ok(&yaml);
    assert_eq!(
        r.details[0].truck_pair.as_ref().unwrap().cycles_design_life,
        49275000.0
    );
}

#[test]
fn truck_traffic_inputs_are_checked() {
    let good = bridge("stiffener-toe-web-or-flange", "{range_mpa: 31, cycles: 1}");
    for (from, to, want) in [
        (
            "adtt_single_lane: 900",
            "adtt_single_lane: -5",
            "adtt_single_lane must be greater than zero",
        ),
        (
            "adtt_single_lane: 900",
            "adtt_single_lane: .nan",
            "adtt_single_lane is not a number",
        ),
        (
            "adtt_single_lane: 900",
            "adtt_single_lane: 1.0e400",
            "adtt_single_lane is infinite",
        ),
        (
            "adtt_single_lane: 900",
            "adtt_single_lane: 90000",
            "above the largest accepted",
        ),
        (
            "cycles_per_truck_passage: 1",
            "cycles_per_truck_passage: 0",
            "cycles_per_truck_passage must be greater than zero",
        ),
        (
            ", adtt_single_lane: 900",
            "",
            "needs basis.adtt_single_lane",
        ),
        (
            "    detail: stiffener-toe-web-or-flange\n",
            "    normal_category_unused: 1\n",
            "unknown key",
        ),
    ] {
        let msg = refused(&good.replacen(from, to, 1));
        assert!(msg.contains(want), "{want} not in {msg}");
        // located: file:line:col
        assert!(msg.contains("project.yaml:"), "{msg}");
    }
    // a detail without a catalogue entry (its letter sets the threshold)
    let msg = refused(&good.replacen("    detail: stiffener-toe-web-or-flange\n", "", 1));
    assert!(msg.contains("needs a catalogue entry"), "{msg}");
    // shear is not assessed by the pair
    let msg = refused(&good.replacen(
        "      loading:",
        "      loading: [{event: truck, per_year: 1, blocks: [{range_mpa: 31, cycles: 1}]}]\n    shear:\n      category: 56\n      loading:",
        1,
    ));
    assert!(msg.contains("normal stress ranges only"), "{msg}");
    // traffic on a family without the pair form
    let msg = refused(&project(
        "bs7608",
        20.0,
        ", adtt_single_lane: 100",
        &format!(
            "    detail: attachment-longitudinal-upto-150\n    thickness_mm: 12\n{TWO_BLOCKS}"
        ),
    ));
    assert!(msg.contains("does not verify by truck traffic"), "{msg}");
}

/// Load the shipped AASHTO file with `from` replaced by `to` from a folder; the error.
fn family_refused(from: &str, to: &str) -> String {
    let text = include_str!("../joint-classes/aashto-lrfd.yaml");
    assert_eq!(text.matches(from).count(), 1, "`{from}` must occur once");
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("a.yaml"), text.replacen(from, to, 1)).unwrap();
    let e = Library::load(Some(dir.path())).unwrap_err();
    e.to_string()
}

#[test]
fn pair_family_files_are_checked_and_located() {
    for (from, to, want) in [
        (
            "utilisation: aashto-pair",
            "utilisation: truck-pair",
            "unknown value `truck-pair`",
        ),
        (
            "utilisation: aashto-pair",
            "utilisation: damage-ratio",
            "verification.aashto_pair is given",
        ),
        (
            "threshold_mpa: 165.5",
            "threshold_mpa: 150",
            "differs from threshold_ksi",
        ),
        (
            "constant_ksi3: 250.0e8",
            "constant_ksi3: .nan",
            "constant_ksi3 is not a number",
        ),
        (
            "infinite_life_adtt: 530",
            "infinite_life_adtt: -1",
            "infinite_life_adtt must be greater than zero",
        ),
        (
            "constant_ksi3: 120.0e8",
            "constant_ksi3: 130.0e8",
            "must be one segment of m = 3 with log_a",
        ),
        (
            "    category_letter: \"A\"\n",
            "    category_letter: \"A+\"\n",
            "category_letter `A+` is not one of",
        ),
        (
            "    normal_category: 160\n    category_letter: \"A\"",
            "    normal_category: 125\n    category_letter: \"A\"",
            "stands for class `A` of category 160",
        ),
        (
            "ksi_to_mpa: 6.894757",
            "ksi_to_mpa: 0",
            "ksi_to_mpa must be greater than zero",
        ),
    ] {
        let msg = family_refused(from, to);
        assert!(msg.contains(want), "{want} not in {msg}");
        assert!(msg.contains("a.yaml:"), "not located: {msg}");
    }
}

#[test]
fn the_demo_projects_assess() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("projects");
    let lib = Library::load(None).unwrap();
    let g = seamlife::run_project(&root.join("kestrel-bay-gangway.yaml"), &lib).unwrap();
    assert_eq!(g.family.id, "bs7608");
    assert_eq!(g.summary.details, 4);
    let h = seamlife::run_project(&root.join("heron-creek-bridge.yaml"), &lib).unwrap();
    assert_eq!(h.family.id, "aashto-lrfd");
    assert!(h.details.iter().all(|d| d.truck_pair.is_some()));
    assert!(h
        .basis
        .method
        .iter()
        .any(|m| m.contains("Fatigue I (infinite life)")));
}

#[test]
fn classes_lists_the_new_families() {
    let bin = env!("CARGO_BIN_EXE_seamlife");
    let out = std::process::Command::new(bin)
        .arg("classes")
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.contains("bs7608") && text.contains("aashto-lrfd"),
        "{text}"
    );
    let out = std::process::Command::new(bin)
        .args(["classes", "aashto-lrfd"])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    // Table 6.6.1.2.5-3 and 6.6.1.2.3-2, category C′ (from memory)
    assert!(
        text.contains("(ΔF)TH = 12 ksi = 82.7 MPa, infinite life above (ADTT)SL 745"),
        "{text}"
    );
}
