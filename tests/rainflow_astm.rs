//! The rainflow example of ASTM E1049-85.
//!
//! Load sequence and tabulated counts from the standard's rainflow counting
//! example (§5.4.4, Fig. 6 and its table), from memory. The same counts are
//! produced by PyPI rainflow 3.2.0 extract_cycles
//! (tests/data/rainflow/astm_example.cycles.csv).

mod common;

use common::ASTM_EXAMPLE;
use seamlife::rainflow::{count_slice, cycles, Cycle, RainflowCounter, ResidueMode};

#[test]
fn astm_example_half_and_full_cycles() {
    let (c, stats) = cycles(&ASTM_EXAMPLE, 0.0, ResidueMode::HalfCycles);
    let mut halves: Vec<f64> = c
        .iter()
        .filter(|c| c.count == 0.5)
        .map(|c| c.range)
        .collect();
    let fulls: Vec<f64> = c
        .iter()
        .filter(|c| c.count == 1.0)
        .map(|c| c.range)
        .collect();
    halves.sort_by(f64::total_cmp);
    // half cycles of range 3, 4, 8, 9, 8, 6 and one full cycle of range 4
    // (ASTM E1049-85 rainflow example, from memory; golden from PyPI rainflow 3.2.0 extract_cycles)
    assert_eq!(halves, vec![3.0, 4.0, 6.0, 8.0, 8.0, 9.0]);
    assert_eq!(fulls, vec![4.0]);
    assert_eq!(stats.full_cycles, 1);
    assert_eq!(stats.half_cycles, 6);
    assert_eq!(stats.reversals, 9);
}

#[test]
fn astm_example_table_by_range() {
    // ASTM E1049-85 rainflow example table, cycles per range (from memory):
    // range 3: 0.5, range 4: 1.5, range 6: 0.5, range 8: 1.0, range 9: 0.5
    let expected = [(3.0, 0.5), (4.0, 1.5), (6.0, 0.5), (8.0, 1.0), (9.0, 0.5)];
    let mut table: Vec<(f64, f64)> = Vec::new();
    count_slice(
        &ASTM_EXAMPLE,
        0.0,
        ResidueMode::HalfCycles,
        &mut |c: Cycle| match table.iter_mut().find(|(r, _)| *r == c.range) {
            Some(e) => e.1 += c.count,
            None => table.push((c.range, c.count)),
        },
    );
    table.sort_by(|a, b| a.0.total_cmp(&b.0));
    assert_eq!(table, expected);
    let total: f64 = table.iter().map(|e| e.1).sum();
    // 4 cycles in all = (9 reversals - 1) / 2 (ASTM E1049-85 example, from memory)
    assert_eq!(total, 4.0);
}

#[test]
fn astm_example_means_match_reference() {
    // (count, range, mean): the ASTM E1049-85 example table with the means of its
    // reversals, equal to the golden count of PyPI rainflow 3.2.0 extract_cycles
    // (tests/data/rainflow/astm_example.cycles.csv)
    let (c, _) = cycles(&ASTM_EXAMPLE, 0.0, ResidueMode::HalfCycles);
    common::assert_same(
        &common::key_sorted(&c),
        &common::astm_example_cycles(),
        0.0,
        "ASTM example",
    );
}

#[test]
fn astm_example_as_repeating_history() {
    // Repeating history, counted from the highest peak (ASTM E1049-85 §5.4.5, from memory).
    // Worked by hand: one repetition closes at the junction -2 | -2 (a plateau), the
    // closed sequence from the peak is 5 -1 3 -4 4 -2 1 -3 5, giving full cycles
    // -1..3 (range 4), -2..1 (range 3), 4..-3 (range 7) and 5..-4 (range 9).
    let (c, stats) = cycles(&ASTM_EXAMPLE, 0.0, ResidueMode::Repeated);
    let mut expected = vec![
        (1.0, 4.0, 1.0),
        (1.0, 3.0, -0.5),
        (1.0, 7.0, 0.5),
        (1.0, 9.0, 0.5),
    ];
    common::sort_keys(&mut expected);
    common::assert_same(
        &common::key_sorted(&c),
        &expected,
        0.0,
        "ASTM example repeated",
    );
    assert_eq!(stats.full_cycles, 4);
    assert_eq!(stats.half_cycles, 0);
}

#[test]
fn astm_example_streamed_sample_by_sample() {
    // same counts whether the record comes as a slice or one sample at a time
    let mut by_sample = Vec::new();
    let mut counter = RainflowCounter::new(0.0);
    for &x in &ASTM_EXAMPLE {
        counter.push(x, &mut |c| by_sample.push(c));
    }
    let stats = counter.finish(ResidueMode::HalfCycles, &mut |c| by_sample.push(c));
    let (sliced, _) = cycles(&ASTM_EXAMPLE, 0.0, ResidueMode::HalfCycles);
    assert_eq!(common::sorted(by_sample), common::sorted(sliced));
    // extremes of the example sequence (from memory, as above)
    assert_eq!((stats.min, stats.max), (-4.0, 5.0));
}
