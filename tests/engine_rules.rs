//! Engine rules that decide pass or fail: constant amplitude only where the loading is
//! constant, mean-stress rules on normal stress only, the IIW range check for constant
//! amplitude, the equivalent range at the damage limit, checks compared like with like.
//! Each check value names its source beside it.

use std::path::Path;

use seamlife::catalogue::Library;
use seamlife::results::{Results, Status};

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

/// Assess a project text written into `dir` (series paths are relative to it).
fn assess_in(dir: &Path, yaml: &str) -> Results {
    let path = dir.join("project.yaml");
    std::fs::write(&path, yaml).unwrap();
    let lib = Library::load(None).unwrap();
    seamlife::run_project(&path, &lib).unwrap_or_else(|e| panic!("{e}"))
}

fn project(family: &str, strategy: &str, consequence: &str, years: f64, detail: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R, revision: A, prepared_by: P, date: 2026-01-01}}
basis: {{family: {family}, design_life_years: {years}, strategy: {strategy}, consequence: {consequence}}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: D1
    location: here
    material: S355
    thickness_mm: 20
{detail}
"
    )
}

#[test]
fn base_metal_in_reversed_shear_takes_no_mean_stress_credit() {
    // EN 1993-1-9, damage tolerant, low consequence: γMf = 1.00 (Table 3.1). Base metal in
    // shear, ΔτC = 100 (Table 8.1, from memory), m = 5 (Fig. 7.2). ±50 MPa is Δτ = 100;
    // 1e5 cycles a year for 25 years = 2.5e6 cycles; N = 2e6·(100/100)^5 = 2e6;
    // D = 2.5e6/2e6 = 1.25 (hand-worked). The 60 % compressive-part rule of 7.2.1(1)
    // acts on normal stress only, so the full shear range counts and the detail fails.
    let dir = tempfile::tempdir().unwrap();
    let r = assess_in(
        dir.path(),
        &project(
            "en1993-1-9",
            "damage-tolerant",
            "low",
            25.0,
            "    detail: base-metal-shear
    shear:
      loading: [{event: e, per_year: 1e5, blocks: [{max_mpa: 50, min_mpa: -50, cycles: 1}]}]",
        ),
    );
    let d = &r.details[0];
    let c = &d.components[0];
    assert_eq!(c.component, "shear");
    assert!(!c.mean_stress.applies);
    assert_eq!(c.blocks[0].mean_stress_factor, 1.0);
    assert!(close(c.damage, 1.25, 1e-12));
    assert_eq!(d.status, Status::Fail);
    assert!(d
        .warnings
        .iter()
        .all(|w| w.code != "mean-stress-not-applied"));
}

#[test]
fn iiw_constant_amplitude_is_checked_on_the_range() {
    // IIW, damage tolerant, low consequence: γM = 1.00 (IIW 6.3, from memory). FAT 90 at
    // 60 MPa for 5e6 cycles: N = 2e6·(90/60)^3 = 6.75e6, D = 5e6/6.75e6 = 0.740741
    // (hand-worked). Constant amplitude is verified on the range, γF·Δσ <= ΔσR(n)/γM
    // (equivalent to D <= 1), not against the variable-amplitude Miner limit 0.5 (IIW,
    // from memory): ΔσR(5e6) = 90·(2e6/5e6)^(1/3) = 66.3126 MPa, 60/66.3126 = 0.904806.
    let dir = tempfile::tempdir().unwrap();
    let r = assess_in(
        dir.path(),
        &project(
            "iiw",
            "damage-tolerant",
            "low",
            50.0,
            "    normal: {category: 90, loading: [{event: e, per_year: 1e5, blocks: [{range_mpa: 60, cycles: 1}]}]}",
        ),
    );
    let d = &r.details[0];
    let c = &d.components[0];
    assert_eq!(c.amplitude, "constant");
    assert!(close(c.damage, 0.740741, 1e-6));
    assert_eq!(c.damage_limit, 1.0);
    assert!(close(c.resistance_at_cycles_mpa.unwrap(), 66.3126, 1e-6));
    assert!(close(d.checks[0].value, 0.904806, 1e-6));
    assert!(close(d.utilisation, 0.740741, 1e-6));
    assert_eq!(d.status, Status::Pass);
    // The equivalent range at the damage limit: 90·0.740741^(1/3) = 81.4325 MPa (hand-worked)
    assert!(close(c.equivalent_range_mpa, 81.4325, 1e-6));
}

#[test]
fn iiw_equivalent_range_reflects_the_damage_limit() {
    // IIW variable amplitude, FAT 80, γM 1.0, D_lim = 0.5 (IIW 4.3.1, from memory).
    // Blocks of 60 and 50 MPa, 2.5e5 of each a year for 10 years, both above the knee
    // 80·0.2^(1/3) = 46.78 MPa, m = 3: N60 = 2e6·(80/60)^3 = 4.74074e6, N50 = 2e6·(80/50)^3
    // = 8.192e6; D = 2.5e6/4.74074e6 + 2.5e6/8.192e6 = 0.527344 + 0.305176 = 0.832520,
    // D/D_lim = 1.665039: fails (hand-worked). γF·ΔσE,2 = 80·(D/D_lim)^(1/3) = 94.8196 MPa,
    // above the design resistance 80 MPa, so the figure shows the failure.
    let dir = tempfile::tempdir().unwrap();
    let r = assess_in(
        dir.path(),
        &project(
            "iiw",
            "damage-tolerant",
            "low",
            10.0,
            "    normal: {category: 80, loading: [{event: e, per_year: 2.5e5, blocks: [{range_mpa: 60, cycles: 1}, {range_mpa: 50, cycles: 1}]}]}",
        ),
    );
    let d = &r.details[0];
    let c = &d.components[0];
    assert_eq!(c.amplitude, "variable");
    assert!(close(c.damage, 0.832520, 1e-6));
    assert!(close(d.utilisation, 1.665039, 1e-6));
    assert!(close(c.design_equivalent_range_mpa, 94.8196, 1e-6));
    assert!(c.design_equivalent_range_mpa > c.design_category_mpa);
    assert_eq!(d.status, Status::Fail);
}

/// A record of `periods` repetitions of 0, 50, 5, 45: each period holds one cycle
/// 5 <-> 45 (range 40) inside one cycle 0 <-> 50 (range 50), both of mean 25 MPa
/// (ASTM E1049-85 rainflow, worked by hand; the residue closes with `repeated`).
fn nested_record(periods: usize) -> String {
    let mut s = String::from("stress_mpa\n");
    for _ in 0..periods {
        s.push_str("0\n50\n5\n45\n");
    }
    s.push_str("0\n");
    s
}

#[test]
fn a_counted_record_in_one_cell_is_variable_amplitude() {
    // EN 1993-1-9, ΔσC 80, γMf 1.0: ΔσD = 80·0.4^(1/3) = 58.9445 MPa, ΔσL = 58.9445·(5e6/1e8)^(1/5)
    // = 32.3810 MPa (Fig. 7.1, eqs. (7.2)-(7.3), hand-worked). 100 periods of the record,
    // repeated 4000 times a year for 25 years: 1e7 cycles of 40 MPa and 1e7 of 50 MPa.
    // As blocks (variable amplitude, m = 5 below ΔσD): N50 = 5e6·(58.9445/50)^5 = 1.138509e7,
    // N40 = 5e6·(58.9445/40)^5 = 3.474455e7; D = 1e7/1.138509e7 + 1e7/3.474455e7
    // = 0.878340 + 0.287816 = 1.166157 (hand-worked): fails.
    // Counted with 20 MPa range bins both ranges fall into one cell; the damage is still
    // summed over every cycle at its own range (EN 1993-1-9 A.6 term by term), so the
    // count gives the blocks' 1.166157, not the cell at its largest range 50 MPa
    // (2e7/1.138509e7 = 1.756683).
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("rec.csv"), nested_record(100)).unwrap();
    let series = project(
        "en1993-1-9",
        "damage-tolerant",
        "low",
        25.0,
        "    normal:
      category: 80
      loading:
        - event: measured
          per_year: 4000
          series: {file: rec.csv, column: stress_mpa, unit: mpa, bin_width_mpa: 20, mean_bins: 2}",
    );
    let counted = assess_in(dir.path(), &series);
    let c = &counted.details[0].components[0];
    assert_eq!(c.amplitude, "variable");
    assert!(!c.constant_amplitude_rule_applied);
    assert_eq!(c.counted[0].full_cycles, 200);
    assert!(close(c.damage, 1.166157, 1e-6));
    assert_eq!(counted.details[0].status, Status::Fail);

    let blocks = project(
        "en1993-1-9",
        "damage-tolerant",
        "low",
        25.0,
        "    normal: {category: 80, loading: [{event: e, per_year: 4000, blocks: [{range_mpa: 40, mean_mpa: 25, cycles: 100}, {range_mpa: 50, mean_mpa: 25, cycles: 100}]}]}",
    );
    let given = assess_in(dir.path(), &blocks);
    let g = &given.details[0].components[0];
    assert!(close(g.damage, 1.166157, 1e-6));
    assert!(
        close(c.damage, g.damage, 1e-12),
        "{} vs {}",
        c.damage,
        g.damage
    );
}

#[test]
fn stated_amplitude_overrides_what_the_blocks_show() {
    // EN ΔσC 80, γMf 1.0, ΔσD = 58.9445 MPa (Fig. 7.1). One block of 50 MPa, 1e6 cycles:
    // as constant amplitude it is below ΔσD and does no damage (Fig. 7.1); stated as
    // variable amplitude it lies on m = 5: N = 5e6·(58.9445/50)^5 = 1.138509e7,
    // D = 1e6/1.138509e7 = 0.0878341 (eq. (7.2), hand-worked).
    let dir = tempfile::tempdir().unwrap();
    let body = |amp: &str| {
        project(
            "en1993-1-9",
            "damage-tolerant",
            "low",
            1.0,
            &format!("    normal: {{category: 80{amp}, loading: [{{event: e, per_year: 1e6, blocks: [{{range_mpa: 50, cycles: 1}}]}}]}}"),
        )
    };
    let ca = assess_in(dir.path(), &body(""));
    assert_eq!(ca.details[0].components[0].amplitude, "constant");
    assert_eq!(ca.details[0].damage, 0.0);
    let va = assess_in(dir.path(), &body(", amplitude: variable"));
    let c = &va.details[0].components[0];
    assert_eq!(c.amplitude, "variable");
    assert_eq!(c.amplitude_basis, "stated in the project file");
    assert!(close(c.damage, 0.0878341, 1e-6));
}

#[test]
fn stating_constant_amplitude_is_checked() {
    let lib = Library::load(None).unwrap();
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("rec.csv"), nested_record(3)).unwrap();
    for (detail, needle) in [
        (
            "    normal: {category: 80, amplitude: constant, loading: [{event: e, per_year: 1, blocks: [{range_mpa: 50, cycles: 1}, {range_mpa: 40, cycles: 1}]}]}",
            "needs one stress range",
        ),
        (
            "    normal: {category: 80, amplitude: constant, loading: [{event: e, per_year: 1, series: {file: rec.csv, column: 1, unit: mpa}}]}",
            "a measured or simulated series is variable amplitude",
        ),
    ] {
        let path = dir.path().join("bad.yaml");
        std::fs::write(&path, project("en1993-1-9", "safe-life", "high", 1.0, detail)).unwrap();
        let e = seamlife::run_project(&path, &lib).unwrap_err();
        assert_eq!(e.exit_code(), 2);
        assert!(e.to_string().contains(needle), "{e}");
        assert!(e.to_string().contains("bad.yaml:"), "{e}");
    }
}

#[test]
fn hand_set_category_on_a_thick_plate_warns_of_no_size_effect() {
    // EN 1993-1-9 7.2.2: the size effect needs the detail's exponent; a hand-set category
    // without catalogue entry or `thickness_exponent` on t = 40 mm > 25 mm gets ks = 1 and
    // a warning.
    let dir = tempfile::tempdir().unwrap();
    let text = project(
        "en1993-1-9",
        "safe-life",
        "high",
        1.0,
        "    normal: {category: 90, loading: [{event: e, per_year: 1, blocks: [{range_mpa: 50, cycles: 1}]}]}",
    )
    .replace("thickness_mm: 20", "thickness_mm: 40");
    let r = assess_in(dir.path(), &text);
    let d = &r.details[0];
    assert_eq!(d.components[0].size.factor, 1.0);
    assert!(d
        .warnings
        .iter()
        .any(|w| w.code == "size-effect-not-applied"));
    // with the exponent given by hand: ks = (25/40)^0.2 = 0.910282 (EN 1993-1-9 7.2.2, hand-worked)
    let r = assess_in(
        dir.path(),
        &text.replace(
            "thickness_mm: 40",
            "thickness_mm: 40\n    thickness_exponent: 0.2",
        ),
    );
    let d = &r.details[0];
    assert!(close(d.components[0].size.factor, 0.910282, 1e-6));
    assert!(d
        .warnings
        .iter()
        .all(|w| w.code != "size-effect-not-applied"));
}

#[test]
fn iiw_interaction_governs_on_the_time_scale() {
    // IIW, γM 1.0, both components constant amplitude with one block each, 1e6 cycles over
    // 10 years. Normal FAT 80 at 60 MPa: D_σ = 1e6/(2e6·(80/60)^3) = 0.210938; shear FAT 80
    // at 60 MPa on m = 5: D_τ = 1e6/(2e6·(80/60)^5) = 0.118652 (hand-worked). Constant
    // amplitude: D_lim = 1.0 for each (range check). Interaction (IIW, from memory):
    // (D_σ^(1/3))^2 + (D_τ^(1/5))^2 = 0.354353 + 0.426295 = 0.780648 over CV = 0.5 is 1.561296
    // -> fails. On the time scale the check at s·T is (s·D_σ)^(2/3) + (s·D_τ)^(2/5) = 0.5;
    // s = 0.419933 solves it (worked by bisection outside the program), utilisation 1/s = 2.381330.
    let dir = tempfile::tempdir().unwrap();
    let r = assess_in(
        dir.path(),
        &project(
            "iiw",
            "damage-tolerant",
            "low",
            10.0,
            "    normal: {category: 80, loading: [{event: e, per_year: 1e5, blocks: [{range_mpa: 60, cycles: 1}]}]}
    shear: {category: 80, loading: [{event: e, per_year: 1e5, blocks: [{range_mpa: 60, cycles: 1}]}]}",
        ),
    );
    let d = &r.details[0];
    let i = d.checks.iter().find(|c| c.name == "interaction").unwrap();
    assert!(close(i.value, 0.780648, 1e-6));
    assert_eq!(i.limit, 0.5);
    assert!(!i.passes);
    assert_eq!(d.governing_check, "interaction");
    let s = 1.0 / d.utilisation;
    // the time-scale utilisation brings the interaction sum exactly to its limit
    assert!(close(
        (s * 0.2109375f64).powf(2.0 / 3.0) + (s * 0.11865234375f64).powf(2.0 / 5.0),
        0.5,
        1e-9
    ));
    assert!(close(d.utilisation, 2.381330, 1e-6));
    assert!(close(d.life_years.unwrap(), 10.0 / d.utilisation, 1e-12));
    assert_eq!(d.status, Status::Fail);
}

#[test]
fn judgement_calls_are_stated() {
    let dir = tempfile::tempdir().unwrap();
    let r = assess_in(
        dir.path(),
        &project(
            "iiw",
            "safe-life",
            "high",
            1.0,
            "    normal: {category: 80, loading: [{event: e, per_year: 1, blocks: [{range_mpa: 50, cycles: 1}]}]}",
        ),
    );
    let j = r.basis.judgements.join("\n");
    assert!(j.contains("fully compressive cycle"), "{j}");
    assert!(j.contains("still damage"), "{j}");
    assert!(j.contains("normal stress only"), "{j}");
    assert!(j.contains("at its own range and mean"), "{j}");
    assert!(r
        .basis
        .utilisation_rule
        .contains("design life divided by the fatigue life"));
}

#[test]
fn iiw_unwelded_base_metal_uses_its_own_curve() {
    // IIW `rolled-plate-plain`: FAT 160 on the unwelded steel curve, m = 5 to the knee at
    // 1e7, m = 22 beyond (IIW 3.2, from memory), mean-stress case 1: f(R = -1) = 1.6
    // (IIW 3.5.1, from memory). Safe life, high consequence γM = 1.30 (IIW Table 5.1, from
    // memory): FAT_d = 123.0769 MPa, knee 123.0769·0.2^(1/5) = 89.2037 MPa.
    // ±75 MPa (Δσ = 150, R = -1) -> Δσ_eff = 150/1.6 = 93.75 MPa, above the knee, m = 5:
    // N = 2e6·(123.0769/93.75)^5 = 7.799320e6; 4e5 cycles a year for 20 years = 8e6,
    // stated variable amplitude: D = 8e6/7.799320e6 = 1.025730, D/0.5 = 2.051461 (hand-worked).
    let dir = tempfile::tempdir().unwrap();
    let text = project(
        "iiw",
        "safe-life",
        "high",
        20.0,
        "    detail: rolled-plate-plain
    normal: {amplitude: variable, loading: [{event: e, per_year: 4e5, blocks: [{range_mpa: 150, mean_mpa: 0, cycles: 1}]}]}",
    );
    let r = assess_in(dir.path(), &text);
    let c = &r.details[0].components[0];
    let v = c.curve_variant.as_ref().unwrap();
    assert_eq!(v.name, "non-welded");
    assert_eq!(v.from, "catalogue entry");
    assert_eq!(c.design_curve.slopes, vec![5.0, 22.0]);
    assert!(close(c.design_curve.knees[0].range_mpa, 89.2037, 1e-6));
    assert!(close(c.blocks[0].effective_range_mpa, 93.75, 1e-12));
    assert!(close(c.damage, 1.025730, 1e-6));
    assert!(close(r.details[0].utilisation, 2.051461, 1e-6));
    // The welded curve (m = 3) would give N = 2e6·(123.0769/93.75)^3 = 4.525286e6 instead.
    assert!(close(
        c.blocks[0].endurance_cycles.unwrap(),
        7.799320e6,
        1e-6
    ));
    // A project may not choose the entry-only curve for all its details.
    let lib = Library::load(None).unwrap();
    let path = dir.path().join("all.yaml");
    std::fs::write(
        &path,
        text.replace(
            "consequence: high}",
            "consequence: high, curve_variant: non-welded}",
        ),
    )
    .unwrap();
    let e = seamlife::run_project(&path, &lib).unwrap_err();
    assert!(
        e.to_string().contains("unknown curve variant `non-welded`"),
        "{e}"
    );
}
