//! Batch benchmark: the whole `seamlife assess --csv` process on generated tables of
//! the invented runway hall (benches/support/batchgen.rs), with wall time and peak
//! memory of each run, and the time of each stage in-process. Goals (2-core machine):
//! 100 000 details × 3 events < 2 s; the same with 50-step histories per event
//! (15 M history rows) < 5 s; peak memory < 1 GB; 1 000 000 details < 20 s.
//!
//! `cargo bench --bench batch`. `SEAMLIFE_BENCH_CASES` picks cases (`blocks,histories,million`),
//! `SEAMLIFE_BENCH_RUNS` the repeats (default 3), `SEAMLIFE_BENCH_BIN` another
//! seamlife binary to run (an earlier build, for a before/after comparison).

#[path = "support/batchgen.rs"]
mod batchgen;

// the same allocator as the binary, so that the stage times are the binary's
#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

use std::path::Path;
use std::process::Command;
use std::time::Instant;

/// Wall time (s) and peak resident memory (MB) of one child process.
fn run_child(project: &Path, out: &Path) -> (f64, f64) {
    let t = Instant::now();
    // SEAMLIFE_BENCH_BIN: another build, to compare before and after on the same tables
    let bin = std::env::var("SEAMLIFE_BENCH_BIN")
        .unwrap_or_else(|_| env!("CARGO_BIN_EXE_seamlife").to_string());
    let mut child = Command::new(bin)
        .arg("assess")
        .arg(project)
        .args(["--csv", "--quiet", "-o"])
        .arg(out)
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("run seamlife");
    let pid = child.id() as libc::pid_t;
    let mut status = 0;
    // SAFETY: an all-zero rusage is a valid value for wait4 to fill.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: wait4 on our own child with valid pointers; the child is reaped here.
    let r = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
    let wall = t.elapsed().as_secs_f64();
    assert_eq!(r, pid, "wait4");
    let _ = child.try_wait();
    assert!(
        libc::WIFEXITED(status) && libc::WEXITSTATUS(status) <= 1,
        "seamlife failed: status {status}"
    );
    // ru_maxrss is in kilobytes on Linux
    (wall, usage.ru_maxrss as f64 / 1024.0)
}

fn case(name: &str, details: usize, steps: usize, runs: usize, goal_s: f64) {
    let dir = tempfile::tempdir().expect("temp dir");
    let t = Instant::now();
    batchgen::write_batch(
        dir.path(),
        batchgen::BatchSpec {
            details,
            history_steps: steps,
            seed: 20261127,
        },
    )
    .expect("write tables");
    let rows: u64 = std::fs::read_dir(dir.path().join("tables"))
        .expect("tables")
        .map(|e| {
            let p = e.expect("entry").path();
            std::fs::read(&p)
                .map(|b| b.iter().filter(|&&c| c == b'\n').count() as u64)
                .unwrap_or(0)
        })
        .sum();
    let bytes: u64 = std::fs::read_dir(dir.path().join("tables"))
        .expect("tables")
        .map(|e| e.expect("entry").metadata().map(|m| m.len()).unwrap_or(0))
        .sum();
    println!(
        "{name}: {details} details, {steps} history steps, {rows} table rows, {:.0} MB of tables (written in {:.1} s)",
        bytes as f64 / 1e6,
        t.elapsed().as_secs_f64()
    );
    let project = dir.path().join("project.yaml");
    let out = dir.path().join("out.csv");
    let mut walls = Vec::new();
    let mut peak: f64 = 0.0;
    for _ in 0..runs {
        let (w, m) = run_child(&project, &out);
        walls.push(w);
        peak = peak.max(m);
    }
    walls.sort_by(|a, b| a.total_cmp(b));
    println!(
        "{name}: whole process {:.2} s best, {:.2} s median of {runs}; peak memory {:.0} MB; goal < {goal_s} s and < 1000 MB: {}",
        walls[0],
        walls[walls.len() / 2],
        peak,
        if walls[0] < goal_s && peak < 1000.0 { "met" } else { "NOT met" }
    );
    stages(&project);
}

/// The stages in-process: read and check, count series, assess (parallel).
fn stages(project: &Path) {
    let lib = seamlife::catalogue::Library::load(None).expect("families");
    let t = Instant::now();
    let loaded = seamlife::load_checked(project, &lib, Default::default()).expect("project loads");
    let t_load = t.elapsed().as_secs_f64();
    let fam = lib.get(&loaded.project.file.basis.family).expect("family");
    let engine = seamlife::assess::Engine::new(&loaded.project, fam, &loaded.histories).lean();
    let t = Instant::now();
    let mut n = 0usize;
    let mut start = 0;
    while start < engine.len() {
        let end = (start + 4096).min(engine.len());
        n += engine.assess_range(start..end).len();
        start = end;
    }
    let t_assess = t.elapsed().as_secs_f64();
    println!(
        "  stages: read tables and check {t_load:.2} s, assess {n} details for CSV rows {t_assess:.2} s ({} threads)",
        rayon::current_num_threads()
    );
}

fn main() {
    let cases =
        std::env::var("SEAMLIFE_BENCH_CASES").unwrap_or_else(|_| "blocks,histories,million".into());
    let runs: usize = std::env::var("SEAMLIFE_BENCH_RUNS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(3);
    for c in cases.split(',') {
        match c.trim() {
            "blocks" => case("blocks", 100_000, 0, runs, 2.0),
            "histories" => case("histories", 100_000, 50, runs, 5.0),
            "million" => case("million", 1_000_000, 0, runs.min(2), 20.0),
            other => eprintln!("unknown case `{other}`"),
        }
    }
}
