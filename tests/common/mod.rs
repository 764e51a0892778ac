//! Helpers shared by the integration tests.
#![allow(dead_code)]

use seamlife::rainflow::Cycle;
use std::cmp::Ordering;

/// ASTM E1049-85 rainflow example reversals A..I (from memory).
pub const ASTM_EXAMPLE: [f64; 9] = [-2.0, 1.0, -3.0, 5.0, -1.0, 3.0, -4.0, 4.0, -2.0];

/// The example's cycles as (count, range, mean), sorted: half cycles of range 3, 4,
/// 6, 8, 8, 9 and one full cycle of range 4 (ASTM E1049-85 rainflow example table,
/// from memory); each mean is (a + b)/2 of the two reversals bounding the cycle. The
/// same as the golden count of PyPI rainflow 3.2.0 extract_cycles
/// (tests/data/rainflow/astm_example.cycles.csv).
pub fn astm_example_cycles() -> Vec<(f64, f64, f64)> {
    let mut v = vec![
        (0.5, 3.0, -0.5),
        (0.5, 4.0, -1.0),
        (1.0, 4.0, 1.0),
        (0.5, 8.0, 1.0),
        (0.5, 9.0, 0.5),
        (0.5, 8.0, 0.0),
        (0.5, 6.0, 1.0),
    ];
    sort_keys(&mut v);
    v
}

/// (count, range, mean) of each cycle, sorted in a total order.
pub fn key_sorted(cycles: &[Cycle]) -> Vec<(f64, f64, f64)> {
    let mut v: Vec<(f64, f64, f64)> = cycles.iter().map(|c| (c.count, c.range, c.mean)).collect();
    sort_keys(&mut v);
    v
}

pub fn sort_keys(v: &mut [(f64, f64, f64)]) {
    v.sort_by(|a, b| {
        a.0.total_cmp(&b.0)
            .then(a.1.total_cmp(&b.1))
            .then(a.2.total_cmp(&b.2))
    });
}

/// Multisets equal: counts exactly, ranges and means within `tol`.
pub fn assert_same(actual: &[(f64, f64, f64)], expected: &[(f64, f64, f64)], tol: f64, what: &str) {
    assert_eq!(actual.len(), expected.len(), "{what}: number of cycles");
    for (i, (a, e)) in actual.iter().zip(expected).enumerate() {
        assert_eq!(a.0, e.0, "{what}: count of cycle {i}: {a:?} vs {e:?}");
        assert!(
            (a.1 - e.1).abs() <= tol,
            "{what}: range of cycle {i}: {a:?} vs {e:?}"
        );
        assert!(
            (a.2 - e.2).abs() <= tol,
            "{what}: mean of cycle {i}: {a:?} vs {e:?}"
        );
    }
}

/// Multisets equal up to `tol` on range and mean, by greedy matching (order-free,
/// for results that went through rounding and may sort differently).
pub fn same_within(actual: &[(f64, f64, f64)], expected: &[(f64, f64, f64)], tol: f64) -> bool {
    if actual.len() != expected.len() {
        return false;
    }
    let mut used = vec![false; actual.len()];
    'outer: for e in expected {
        for (j, a) in actual.iter().enumerate() {
            if !used[j] && a.0 == e.0 && (a.1 - e.1).abs() <= tol && (a.2 - e.2).abs() <= tol {
                used[j] = true;
                continue 'outer;
            }
        }
        return false;
    }
    true
}

/// Total order on cycles, every field.
pub fn cmp_cycle(a: &Cycle, b: &Cycle) -> Ordering {
    a.count
        .total_cmp(&b.count)
        .then(a.range.total_cmp(&b.range))
        .then(a.mean.total_cmp(&b.mean))
        .then(a.min.total_cmp(&b.min))
        .then(a.max.total_cmp(&b.max))
}

pub fn sorted(mut v: Vec<Cycle>) -> Vec<Cycle> {
    v.sort_by(cmp_cycle);
    v
}
