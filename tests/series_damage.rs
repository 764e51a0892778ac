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
