//! Throughput of the rainflow counter: `cargo bench --bench rainflow`.
//!
//! Counts a seeded random walk held in memory (1e8 samples unless
//! SEAMLIFE_BENCH_SAMPLES says otherwise), or the raw little-endian f64 file
//! named by SEAMLIFE_BENCH_INPUT, and prints samples per second, best of 3,
//! for: count only, count + Palmgren-Miner damage, count + binning (one
//! thread each), and count only and count + binning with the record cut
//! into one part per core.
//! The last lines, `RESULT name=value`, are for tests/tools/rainflow_speed_ratio.py.

use rand::{Rng, SeedableRng};
use seamlife::rainflow::{count_slice, count_slice_parallel, CountStats, Cycle, ResidueMode};
use seamlife::spectrum::{BinRule, Spectrum, SpectrumSpec};
use std::hint::black_box;
use std::time::Instant;

fn random_walk(n: usize, seed: u64) -> Vec<f64> {
    let mut rng = rand::rngs::StdRng::seed_from_u64(seed);
    let mut x = 0.0f64;
    (0..n)
        .map(|_| {
            x += rng.gen_range(-1.0..1.0);
            x
        })
        .collect()
}

fn read_raw(path: &str, limit: Option<usize>) -> Vec<f64> {
    let bytes = std::fs::read(path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
    let n = (bytes.len() / 8).min(limit.unwrap_or(usize::MAX));
    bytes[..n * 8]
        .chunks_exact(8)
        .map(|b| f64::from_le_bytes(b.try_into().unwrap()))
        .collect()
}

/// Best of 3 wall-clock seconds of `f`.
fn best_of_3<T>(mut f: impl FnMut() -> T) -> (f64, T) {
    let mut best = f64::INFINITY;
    let mut out = None;
    for _ in 0..3 {
        let t = Instant::now();
        let r = black_box(f());
        best = best.min(t.elapsed().as_secs_f64());
        out = Some(r);
    }
    (best, out.unwrap())
}

fn report(name: &str, n: usize, secs: f64, stats: &CountStats, extra: &str) -> f64 {
    let rate = n as f64 / secs;
    println!(
        "{name:<18} {:>8.1} M samples/s  ({secs:.3} s; {} reversals, {} full + {} half cycles{extra})",
        rate / 1e6,
        stats.reversals,
        stats.full_cycles,
        stats.half_cycles
    );
    rate
}

fn main() {
    let limit = std::env::var("SEAMLIFE_BENCH_SAMPLES")
        .ok()
        .map(|v| v.parse::<f64>().expect("SEAMLIFE_BENCH_SAMPLES: a number") as usize);
    let (xs, source) = match std::env::var("SEAMLIFE_BENCH_INPUT") {
        Ok(path) => (read_raw(&path, limit), path),
        Err(_) => {
            let n = limit.unwrap_or(100_000_000);
            (
                random_walk(n, 20_240_611),
                "seeded random walk (uniform steps in [-1, 1))".into(),
            )
        }
    };
    let n = xs.len();
    println!("rainflow bench: {n} samples from {source}; best of 3, one thread");

    // count only
    let (t, stats) =
        best_of_3(|| count_slice(&xs, 0.0, ResidueMode::HalfCycles, &mut |_c: Cycle| {}));
    let count_only = report("count only", n, t, &stats, "");

    // count + damage: Palmgren-Miner sum of n_i / N_i on N = 2e6 (100 / Δσ)^3
    let (t, (stats, damage)) = best_of_3(|| {
        let mut d = 0.0f64;
        let s = count_slice(&xs, 0.0, ResidueMode::HalfCycles, &mut |c: Cycle| {
            // 1/N = Δσ^3 / (2e6 · 100^3), S-N line of the EN 1993-1-9 eq. 7.1 form (m = 3, Δσc = 100 MPa)
            let r = c.range;
            // Palmgren-Miner: D = Σ n_i / N_i
            d += c.count * r * r * r * (1.0 / (2e6 * 1e6));
        });
        (s, d)
    });
    let with_damage = report(
        "count + damage",
        n,
        t,
        &stats,
        &format!("; D = {damage:.6e}"),
    );

    // count + binning into a range histogram / range-mean matrix
    let spec = SpectrumSpec {
        range: BinRule::MaxBins(128),
        mean: BinRule::MaxBins(64),
    };
    let (t, (stats, cells)) = best_of_3(|| {
        let mut sp = Spectrum::new(spec).unwrap();
        let s = count_slice(&xs, 0.0, ResidueMode::HalfCycles, &mut |c: Cycle| {
            sp.add(&c)
        });
        (s, sp.matrix().len())
    });
    let with_bins = report(
        "count + binning",
        n,
        t,
        &stats,
        &format!("; {cells} matrix cells"),
    );

    // count only, the record cut into one part per core
    let threads = std::thread::available_parallelism().map_or(1, |t| t.get());
    let (t, (stats, _)) = best_of_3(|| {
        count_slice_parallel(
            &xs,
            0.0,
            ResidueMode::HalfCycles,
            threads,
            || (),
            |_: &mut (), _c| {},
        )
    });
    let parallel = report(&format!("count only, {threads} thr"), n, t, &stats, "");

    // count + binning, one spectrum per part, merged at the end
    let (t, (stats, cells)) = best_of_3(|| {
        let (s, parts) = count_slice_parallel(
            &xs,
            0.0,
            ResidueMode::HalfCycles,
            threads,
            || Spectrum::new(spec).unwrap(),
            |sp: &mut Spectrum, c| sp.add(&c),
        );
        let mut parts = parts.into_iter();
        let mut sp = parts.next().unwrap();
        for p in parts {
            sp.merge(&p).unwrap();
        }
        (s, sp.matrix().len())
    });
    let parallel_bins = report(
        &format!("count + bins, {threads} thr"),
        n,
        t,
        &stats,
        &format!("; {cells} matrix cells"),
    );

    println!("RESULT samples={n}");
    println!("RESULT threads={threads}");
    println!("RESULT parallel_count_only_samples_per_s={parallel:.0}");
    println!("RESULT parallel_count_binning_samples_per_s={parallel_bins:.0}");
    println!("RESULT count_only_samples_per_s={count_only:.0}");
    println!("RESULT count_damage_samples_per_s={with_damage:.0}");
    println!("RESULT count_binning_samples_per_s={with_bins:.0}");
}
