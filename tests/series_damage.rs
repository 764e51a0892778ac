//! The damage of a counted series summed cycle by cycle in the streaming count: equal
//! to a hand-summed value whatever the bins, equal to the limit of the cell sums as the
//! bins get finer, the same from parallel blocks as from the serial count, and the same
//! when several events read one file in one pass.

use seamlife::histories::damage::{CycleEffect, CycleRule, SharedRule};
use seamlife::ingest::{count_channels_rated, Channels, Ingest};
use seamlife::rainflow::{Cycle, ResidueMode};
use seamlife::series::{
    count_series_reference_rated, ColumnRef, CountOptions, SeriesSpec, SeriesUnit,
};
use seamlife::spectrum::{BinRule, SpectrumSpec};
use std::path::Path;
use std::sync::Arc;

/// Relative tolerance on hand-worked values given to 10 digits.
const HAND: f64 = 1e-9;

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs()
}

/// A one-detail project (category 56, EN 1993-1-9 family, 25 years) whose normal
/// stress is the series `series_yaml` repeated 2000 times a year.
fn project(series_yaml: &str, case: &str) -> String {
    format!(
        "seamlife: 1
project: {{title: T, reference: R, revision: A, prepared_by: P, date: 2026-12-02}}
basis: {{family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}}
materials: {{S355: {{fy_mpa: 355}}}}
details:
  - id: M1
    location: gauge
    detail: attachment-longitudinal-over-100
    mean_stress_case: {case}
    material: S355
    thickness_mm: 20
    normal:
      loading:
        - event: measured
          per_year: 2000
          series:
{series_yaml}"
    )
}

fn library() -> seamlife::catalogue::Library {
    seamlife::catalogue::Library::load(None).unwrap()
}

/// Damage of the first component: summed cycle by cycle (the normal path) and, for
/// comparison, with each range-mean cell as one block at its largest range.
fn damages(dir: &Path, yaml: &str) -> (f64, f64, serde_json::Value) {
    let p = dir.join("p.yaml");
    std::fs::write(&p, yaml).unwrap();
    let lib = library();
    let exact = seamlife::run_project(&p, &lib).unwrap();
    let project = seamlife::input::load_project_with(&p, &lib, Default::default()).unwrap();
    let fam = lib.get(&project.file.basis.family).unwrap();
    let h = seamlife::histories::build(&project).unwrap();
    let cells = seamlife::assess::assess(&project, fam, &h);
    let v = serde_json::to_value(&exact.details[0].components[0]).unwrap();
    (
        exact.details[0].components[0].damage,
        cells.details[0].components[0].damage,
        v,
    )
}

fn astm_record(dir: &Path) {
    // the ASTM E1049-85 example (reversals -2, 1, -3, 5, -1, 3, -4, 4, -2; from memory) × 10 MPa
    let mut rec = String::from("t,s\n");
    for (i, x) in [-20, 10, -30, 50, -10, 30, -40, 40, -20].iter().enumerate() {
        rec.push_str(&format!("{i},{x}\n"));
    }
    std::fs::write(dir.join("rec.csv"), rec).unwrap();
}

#[test]
fn every_cycle_enters_the_damage_sum_at_its_own_range_and_mean() {
    // Counted as a repeating history (ASTM E1049-85 §5.4.5, from memory; worked in
    // tests/series_cli.rs): full cycles 50..-40 (90 MPa), 40..-30 (70), 30..-10 (40)
    // and 10..-20 (30) per repetition, 2000·25 = 5e4 repetitions.
    // Stress relieved: 60 % of the compressive part counts (EN 1993-1-9 7.2.1(1)):
    //   Δσ_eff = 50 + 0.6·40 = 74, 40 + 0.6·30 = 58, 30 + 0.6·10 = 36, 10 + 0.6·20 = 22 MPa.
    // Category 56 (Table 8.4, from memory), γMf = 1.35 (Table 3.1), γFf = 1:
    //   ΔσC,d = 41.48148148, ΔσD,d = ΔσC,d·(2/5)^(1/3) = 30.56381688,
    //   ΔσL,d = ΔσD,d·(5/100)^(1/5) = 16.78810164 (Fig. 7.1, eqs. (7.1)-(7.3)).
    //   74, 58, 36 ≥ ΔσD,d: N = 2e6·(ΔσC,d/Δσ)^3 (eq. (7.1)) = 352287.8069,
    //     731659.1202, 3059745.247;
    //   ΔσL,d ≤ 22 < ΔσD,d: N = 5e6·(ΔσD,d/22)^5 (eq. (7.2)) = 25875845.24.
    //   D = Σ 5e4/N (A.6, Palmgren-Miner) = 0.2285407768 (hand-worked).
    // One range bin and two mean bins put all four cycles in one or two cells; the
    // per-cycle sum does not depend on the bins.
    let dir = tempfile::tempdir().unwrap();
    astm_record(dir.path());
    for bins in ["bins: 1", "bin_width_mpa: 10", "bin_width_mpa: 0.001"] {
        let s = format!("            file: rec.csv\n            column: s\n            unit: mpa\n            {bins}\n            mean_bins: 2\n");
        let (exact, cells, comp) = damages(dir.path(), &project(&s, "stress-relieved"));
        assert!(close(exact, 0.2285407768, HAND), "{bins}: {exact}");
        // the blocks (cells) carry the damage of their own cycles and sum to the total
        let blocks = comp["blocks"].as_array().unwrap();
        let sum: f64 = blocks.iter().map(|b| b["damage"].as_f64().unwrap()).sum();
        assert!(close(sum, exact, 1e-12), "{bins}: {sum} vs {exact}");
        assert_eq!(comp["counted"][0]["per_cycle"], true);
        // the cells at their largest range and weighted mean are never below it
        assert!(cells >= exact * (1.0 - 1e-12), "{bins}: {cells} < {exact}");
        if bins == "bins: 1" {
            // all at 90 MPa: clearly more (cell approximation)
            assert!(cells > 1.5 * exact, "{cells} vs {exact}");
        }
    }
}

/// A varied record: a sum of three sines with a slow drift, in MPa (invented).
fn varied_record(dir: &Path, n: usize) {
    let mut rec = String::from("t,a,b\n");
    for i in 0..n {
        let t = i as f64;
        let a = 40.0 * (t * 0.21).sin() + 25.0 * (t * 0.057).sin() + 9.0 * (t * 1.31).sin() - 10.0;
        let b = 0.6 * a + 15.0 * (t * 0.43).cos();
        rec.push_str(&format!("{i},{a:.4},{b:.4}\n"));
    }
    std::fs::write(dir.join("rec.csv"), rec).unwrap();
}

#[test]
fn the_per_cycle_sum_is_the_limit_of_ever_finer_bins() {
    // Cell sums approach the per-cycle sum as the bins shrink; once every cell holds
    // cycles of one range and mean they are equal (a cell block is then exactly its
    // cycles: Palmgren-Miner, EN 1993-1-9 A.6).
    let dir = tempfile::tempdir().unwrap();
    varied_record(dir.path(), 4000);
    for case in ["as-welded", "stress-relieved"] {
        let mut last_gap = f64::INFINITY;
        let mut exact_seen = None;
        for w in ["16", "4", "1", "0.25", "0.0625", "0.001"] {
            let s = format!("            file: rec.csv\n            column: a\n            unit: mpa\n            bin_width_mpa: {w}\n            mean_bins: 4096\n");
            let (exact, cells, _) = damages(dir.path(), &project(&s, case));
            if let Some(e) = exact_seen {
                assert!(close(exact, e, 1e-12), "per-cycle sum moved with the bins");
            }
            exact_seen = Some(exact);
            let gap = (cells - exact) / exact;
            if case == "as-welded" {
                // without a mean-stress effect a cell's largest range bounds its cycles
                assert!(gap >= -1e-12, "{case} {w}: {gap}");
                assert!(
                    gap <= last_gap + 1e-12,
                    "{case} {w}: {gap} after {last_gap}"
                );
            }
            last_gap = gap.abs();
        }
        // 0.001 MPa range bins (the finest accepted) and 1/16 MPa mean bins: every cell
        // of this record holds cycles of one range and mean
        assert!(last_gap < 1e-9, "{case}: finest bins still {last_gap} off");
    }
}

/// Single-slope curve N = 2e6·(80/Δσ)^3 with no cut-off (EN 1993-1-9 eq. (7.1) form,
/// invented category 80), no mean-stress rule.
#[derive(Debug)]
struct Slope3;

impl CycleRule for Slope3 {
    fn segments(&self) -> usize {
        1
    }
    fn effect(&self, c: &Cycle) -> CycleEffect {
        // n/N with N = 2e6·(80/Δσ)^3 (EN 1993-1-9 eq. (7.1) form)
        CycleEffect {
            damage: c.count * (c.range / 80.0).powi(3) / 2e6,
            segment: Some(1),
            mean_rule_acted: false,
            design_range_mpa: c.range,
        }
    }
}

#[test]
fn parallel_blocks_give_the_serial_per_cycle_sum() {
    let dir = tempfile::tempdir().unwrap();
    varied_record(dir.path(), 20000);
    let spec = SeriesSpec {
        path: dir.path().join("rec.csv"),
        column: ColumnRef::Name("a".into()),
        has_header: true,
        unit: SeriesUnit::Mpa,
        scale: 1.0,
    };
    let rule: SharedRule = Arc::new(Slope3);
    for mode in [ResidueMode::Repeated, ResidueMode::HalfCycles] {
        let opts = CountOptions {
            gate_mpa: 0.0,
            mode,
            bins: SpectrumSpec {
                range: BinRule::MaxBins(32),
                mean: BinRule::MaxBins(8),
            },
        };
        let (serial, st) =
            count_series_reference_rated(&spec, &opts, std::slice::from_ref(&rule)).unwrap();
        // the direct sum over the cycles (Palmgren-Miner, EN 1993-1-9 A.6)
        let mut direct = 0.0;
        let (cycles, _) = seamlife::rainflow::cycles(
            &std::fs::read_to_string(&spec.path)
                .unwrap()
                .lines()
                .skip(1)
                .map(|l| l.split(',').nth(1).unwrap().parse::<f64>().unwrap())
                .collect::<Vec<_>>(),
            0.0,
            mode,
        );
        for c in &cycles {
            direct += Slope3.effect(c).damage;
        }
        assert!(close(st[0].damage, direct, 1e-12));
        for block_bytes in [64usize, 1000, 1 << 20] {
            let v = count_channels_rated(
                &spec,
                &Channels::These(vec![ColumnRef::Name("a".into())]),
                &opts,
                Ingest { block_bytes },
                &|_, _| {},
                &[vec![rule.clone(), rule.clone()]],
            )
            .unwrap();
            let (cc, t) = &v[0];
            // the same cells and counts (weighted means may differ in the last bits)
            assert_eq!(cc.counted.matrix.len(), serial.matrix.len());
            for (x, y) in cc.counted.matrix.iter().zip(&serial.matrix) {
                assert_eq!(
                    (x.range_lo_mpa, x.mean_lo_mpa, x.cycles, x.max_range_mpa),
                    (y.range_lo_mpa, y.mean_lo_mpa, y.cycles, y.max_range_mpa)
                );
            }
            assert_eq!(t.len(), 2);
            for t in t {
                assert!(close(t.damage, direct, 1e-12), "{block_bytes}");
                let cells = t.cell_damage(&cc.counted.matrix);
                let sum: f64 = cells.iter().sum();
                assert!(close(sum, direct, 1e-12), "{block_bytes}: cells {sum}");
                assert_eq!(t.bands[0].0, cc.counted.total_cycles);
                // the cycles by design range (for the reserve-factor search) are the
                // serial count's, bin by bin (whole and half cycles add exactly)
                assert_eq!(t.ranges.bins(), st[0].ranges.bins(), "{block_bytes}");
                assert_eq!(t.ranges.cycles(), cc.counted.total_cycles);
            }
        }
    }
}

#[test]
fn several_events_on_one_file_match_one_file_each() {
    // two columns of one file, one of them used twice, against copies of the file
    let dir = tempfile::tempdir().unwrap();
    varied_record(dir.path(), 3000);
    std::fs::copy(dir.path().join("rec.csv"), dir.path().join("copy.csv")).unwrap();
    let ev = |file: &str, col: &str| {
        format!("        - event: {file}-{col}\n          per_year: 500\n          series:\n            file: {file}\n            column: {col}\n            unit: mpa\n")
    };
    let with = |events: &str| {
        project("", "as-welded")
            .replace("          series:\n", "")
            .replace(
                "        - event: measured\n          per_year: 2000\n",
                events,
            )
    };
    let one = with(&(ev("rec.csv", "a") + &ev("rec.csv", "b") + &ev("rec.csv", "a")));
    let split = with(&(ev("rec.csv", "a") + &ev("copy.csv", "b") + &ev("copy.csv", "a")));
    let run = |yaml: &str| {
        let p = dir.path().join("p.yaml");
        std::fs::write(&p, yaml).unwrap();
        seamlife::run_project(&p, &library()).unwrap().details[0].components[0].clone()
    };
    let (a, b) = (run(&one), run(&split));
    assert!(
        close(a.damage, b.damage, 1e-12),
        "{} vs {}",
        a.damage,
        b.damage
    );
    assert_eq!(a.blocks.len(), b.blocks.len());
    for (x, y) in a.counted.iter().zip(&b.counted) {
        assert_eq!(x.matrix, y.matrix);
        assert_eq!(x.full_cycles, y.full_cycles);
    }
    // the three events: a, b and a again, the two a's alike
    assert_eq!(a.counted.len(), 3);
    assert_eq!(a.counted[0].matrix, a.counted[2].matrix);
    assert_ne!(a.counted[0].matrix, a.counted[1].matrix);
}

/// The whole run of a project: its first detail.
fn first_detail(dir: &Path, yaml: &str) -> seamlife::results::DetailResult {
    let p = dir.join("p.yaml");
    std::fs::write(&p, yaml).unwrap();
    seamlife::run_project(&p, &library()).unwrap().details[0].clone()
}

#[test]
fn reserve_factor_and_required_category_follow_the_per_cycle_damage() {
    use seamlife::histories::damage::RANGE_RESOLUTION;
    // The ASTM record of the first test, 5e4 repetitions over 25 years, category 56,
    // γMf 1.35, D_lim = 1. tests/tools/hand_worked.py (reserve) bisects D(k) = 1 with
    // every cycle at k·Δσ_eff (EN 1993-1-9 A.6 with eqs. (7.1)-(7.3)) and finds the
    // lowest category of Fig. 7.1 whose per-cycle damage passes (hand-worked):
    //   stress-relieved: k = 1.631341366, category 36 (D = 0.8670058594 there);
    //   as-welded:       k = 1.349007458, category 45 (D = 0.7850250000; at 40 it is
    //                    1.117740674).
    // One range bin puts all four cycles in one cell at 90 MPa, so the cells at their
    // largest range would give a clearly lower factor and a higher category.
    let dir = tempfile::tempdir().unwrap();
    astm_record(dir.path());
    let series = |extra: &str| {
        format!("            file: rec.csv\n            column: s\n            unit: mpa\n            bins: 1\n            mean_bins: 2\n{extra}")
    };
    for (case, k_hand, cat_hand) in [
        ("stress-relieved", 1.631341366, 36.0),
        ("as-welded", 1.349007458, 45.0),
    ] {
        let d = first_detail(dir.path(), &project(&series(""), case));
        let k = d.reserve_factor.unwrap();
        let up = d.reserve_factor_upper.unwrap();
        // the bracket holds the exact factor and is one bin wide at most
        assert!(k <= k_hand * (1.0 + HAND), "{case}: {k} > {k_hand}");
        assert!(k >= k_hand * (1.0 - RANGE_RESOLUTION), "{case}: {k}");
        assert!(up >= k_hand * (1.0 - HAND), "{case}: {up} < {k_hand}");
        assert!(up <= k_hand * (1.0 + RANGE_RESOLUTION), "{case}: {up}");
        assert!(up / k - 1.0 < 1e-3);
        // each bin holds one of the four ranges, so both ends are exact here
        assert!(
            close(k, k_hand, HAND) && close(up, k_hand, HAND),
            "{case}: {k} {up}"
        );
        assert_eq!(d.required_category, Some(cat_hand), "{case}");
        assert_eq!(d.components[0].required_category_mpa, Some(cat_hand));
        // the factor found, put on the record (`scale`), brings the per-cycle damage
        // to the limit: at most 1, and at least the damage one bin lower, (1+res)^-3
        // on the m = 3 segment where every scaled cycle lies (k·22 > ΔσD,d = 30.56)
        let at_k = first_detail(
            dir.path(),
            &project(&series(&format!("            scale: {k:.17}\n")), case),
        );
        let u = at_k.components[0].utilisation;
        assert!(u <= 1.0 + 1e-12, "{case}: D(k) = {u}");
        assert!(u >= (1.0 + RANGE_RESOLUTION).powi(-3), "{case}: D(k) = {u}");
        // the cells at their largest range (the rule before cycles were binned)
        let p = dir.path().join("p.yaml");
        let lib = library();
        std::fs::write(&p, self::project(&series(""), case)).unwrap();
        let project = seamlife::input::load_project_with(&p, &lib, Default::default()).unwrap();
        let fam = lib.get(&project.file.basis.family).unwrap();
        let h = seamlife::histories::build(&project).unwrap();
        let cells = seamlife::assess::assess(&project, fam, &h);
        let kc = cells.details[0].reserve_factor.unwrap();
        assert!(kc < 0.9 * k, "{case}: cells {kc} vs {k}");
        assert!(cells.details[0].required_category.unwrap() > cat_hand);
    }
}

#[test]
fn a_detail_that_passes_exactly_keeps_a_reserve_factor_of_at_least_one() {
    // Put at its own reserve factor, the detail's exact damage is at most the limit; the
    // bins' upper edges lie a little above the cycles, but the factor stays >= 1 and
    // the detail's own category (56) stays the required one (common practice:
    // a passing detail needs no higher category). Stress-relieved factor
    // 1.631341366 (hand-worked, tests/tools/hand_worked.py).
    let dir = tempfile::tempdir().unwrap();
    astm_record(dir.path());
    let s = "            file: rec.csv\n            column: s\n            unit: mpa\n            scale: 1.6313\n";
    let d = first_detail(dir.path(), &project(s, "stress-relieved"));
    assert!(d.utilisation <= 1.0, "{}", d.utilisation);
    assert!(d.utilisation > 0.999, "{}", d.utilisation);
    assert_eq!(d.status, seamlife::results::Status::Pass);
    let k = d.reserve_factor.unwrap();
    assert!(
        (1.0..=1.631341366 / 1.6313 * (1.0 + 1e-9)).contains(&k),
        "{k}"
    );
    assert_eq!(d.required_category, Some(56.0));
}

#[test]
fn on_a_varied_record_the_bracket_holds_the_factor_that_brings_the_damage_to_the_limit() {
    use seamlife::histories::damage::RANGE_RESOLUTION;
    // Thousands of cycles of many ranges, some of them near the knee and the cut-off
    // after scaling: the factor is bracketed by the bins (one bin wide at most,
    // RANGE_RESOLUTION = 2^-11), and the record put at the bracket's ends (`scale`, which
    // scales every cycle's range, σmax and σmin; both mean-stress rules depend on their
    // ratio only, EN 1993-1-9 7.2.1(1)) gives per-cycle damage at most the limit at the
    // lower end and above it just past the upper end (Palmgren-Miner, A.6; D_lim = 1).
    let dir = tempfile::tempdir().unwrap();
    varied_record(dir.path(), 4000);
    let series = |extra: &str| {
        format!("            file: rec.csv\n            column: a\n            unit: mpa\n{extra}")
    };
    for case in ["as-welded", "stress-relieved"] {
        // the record at a third of its stresses (so that some category passes)
        let base = 1.0 / 3.0;
        let at = |f: f64| {
            let s = series(&format!("            scale: {:.17}\n", base * f));
            first_detail(dir.path(), &project(&s, case))
        };
        let d = at(1.0);
        let (k, up) = (d.reserve_factor.unwrap(), d.reserve_factor_upper.unwrap());
        assert!(
            k <= up && up / k - 1.0 <= RANGE_RESOLUTION,
            "{case}: {k} {up}"
        );
        let at = |f: f64| {
            let s = series(&format!("            scale: {:.17}\n", base * f));
            first_detail(dir.path(), &project(&s, case)).components[0].utilisation
        };
        let (u_lo, u_hi) = (at(k), at(up * (1.0 + 1e-9)));
        assert!(u_lo <= 1.0 + 1e-12, "{case}: D({k}) = {u_lo}");
        assert!(u_hi > 1.0, "{case}: D({up}) = {u_hi}");
        // the required category is the lowest listed whose per-cycle damage passes
        // (categories of EN 1993-1-9 Fig. 7.1, from memory; the detail's is 56)
        let cat = d.required_category.unwrap();
        let cats = [36.0, 40.0, 45.0, 50.0, 56.0, 63.0, 71.0, 80.0, 90.0, 100.0];
        let i = cats.iter().position(|&c| c == cat).unwrap();
        // a category c instead of 56 acts as the factor 56/c on every range
        let u_at = |c: f64| at(56.0 / c);
        assert!(u_at(cat) <= 1.0 + 1e-12, "{case}: {cat}");
        if i > 0 {
            assert!(u_at(cats[i - 1]) > 1.0, "{case}: {}", cats[i - 1]);
        }
    }
}
