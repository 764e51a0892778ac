//! Whole-process speed of `seamlife count` on large generated CSV records:
//! `cargo bench --bench ingest`.
//!
//! Writes (once; kept in the temporary folder, never in the crate) a seeded random
//! walk of SEAMLIFE_BENCH_ROWS rows (1e8 unless told) in one column, and a 16-channel
//! record of SEAMLIFE_BENCH_MULTI_ROWS rows (1e7 unless told), then times the release
//! binary as a separate process: wall time, user and system CPU time and peak resident
//! memory of the child (wait4). Figures:
//! - single channel: rows per second of wall time, memory;
//! - 16 channels: one `--all-columns` run against 16 runs of one `--column` each;
//! - `assess` of a project whose SEAMLIFE_BENCH_DETAILS details (8 unless told) read
//!   the single-channel record: one pass with every detail's per-cycle damage, its
//!   cycles' design-range bins and the reserve-factor and category searches on them.
//!
//! SEAMLIFE_BENCH_BIN runs another seamlife binary instead (an earlier build, to
//! compare before and after on the same files).
//!
//! The machine may be shared: user CPU time is printed beside wall time. The last
//! lines, `RESULT name=value`, are for scripts.

use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

/// Times of one child process.
#[derive(Clone, Copy, Debug, Default)]
struct Run {
    wall_s: f64,
    user_s: f64,
    sys_s: f64,
    max_rss_mb: f64,
}

// The child is reaped by wait4, which also gives its resource use.
#[allow(clippy::zombie_processes)]
fn run(args: &[&str]) -> Run {
    let t = Instant::now();
    let bin = std::env::var("SEAMLIFE_BENCH_BIN")
        .unwrap_or_else(|_| env!("CARGO_BIN_EXE_seamlife").to_string());
    let child = Command::new(bin)
        .args(args)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("run seamlife");
    let pid = child.id() as libc::pid_t;
    let mut status = 0;
    // SAFETY: rusage is plain data; wait4 fills it for the child just spawned.
    let mut ru: libc::rusage = unsafe { std::mem::zeroed() };
    let r = unsafe { libc::wait4(pid, &mut status, 0, &mut ru) };
    let wall_s = t.elapsed().as_secs_f64();
    assert_eq!(r, pid, "wait4");
    assert!(
        // assess exits 1 when a detail fails, which the bench does not mind
        libc::WIFEXITED(status) && libc::WEXITSTATUS(status) <= 1,
        "seamlife {args:?} failed ({status})"
    );
    let secs = |tv: libc::timeval| tv.tv_sec as f64 + tv.tv_usec as f64 * 1e-6;
    Run {
        wall_s,
        user_s: secs(ru.ru_utime),
        sys_s: secs(ru.ru_stime),
        // ru_maxrss is in KiB on Linux
        max_rss_mb: ru.ru_maxrss as f64 / 1024.0,
    }
}

/// Best (least wall time) of `n` runs.
fn best(n: usize, args: &[&str]) -> Run {
    (0..n)
        .map(|_| run(args))
        .min_by(|a, b| a.wall_s.total_cmp(&b.wall_s))
        .expect("one run")
}

fn lcg(s: &mut u64) -> f64 {
    *s = s
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    // uniform in [-1, 1)
    ((*s >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
}

/// A seeded random walk of `rows` rows and `channels` columns with three decimals
/// (a gauge record in MPa), written once to `path`.
fn generate(path: &Path, rows: usize, channels: usize) {
    if std::fs::metadata(path).is_ok_and(|m| m.len() > 0) {
        return;
    }
    eprintln!(
        "writing {} ({rows} rows, {channels} columns)",
        path.display()
    );
    let tmp = path.with_extension("part");
    let mut w = BufWriter::with_capacity(1 << 20, std::fs::File::create(&tmp).unwrap());
    let head: Vec<String> = (1..=channels).map(|c| format!("sg{c}_mpa")).collect();
    writeln!(w, "{}", head.join(",")).unwrap();
    let mut s = 20_261_202u64;
    let mut x = vec![0.0f64; channels];
    let mut line = String::new();
    for _ in 0..rows {
        line.clear();
        for (c, v) in x.iter_mut().enumerate() {
            *v = (*v + 5.0 * lcg(&mut s)).clamp(-300.0, 300.0);
            if c > 0 {
                line.push(',');
            }
            use std::fmt::Write as _;
            write!(line, "{:.3}", v).unwrap();
        }
        line.push('\n');
        w.write_all(line.as_bytes()).unwrap();
    }
    w.flush().unwrap();
    drop(w);
    std::fs::rename(&tmp, path).unwrap();
}

fn env_rows(name: &str, default: f64) -> usize {
    std::env::var(name)
        .ok()
        .map(|v| v.parse::<f64>().expect("a number"))
        .unwrap_or(default) as usize
}

fn show(label: &str, rows: usize, r: &Run) {
    println!(
        "{label:<34} {:>7.1} M rows/s  wall {:.2} s, user {:.2} s, sys {:.2} s, peak memory {:.1} MB",
        rows as f64 / r.wall_s / 1e6,
        r.wall_s,
        r.user_s,
        r.sys_s,
        r.max_rss_mb
    );
}

fn main() {
    let dir = std::env::temp_dir();
    let rows = env_rows("SEAMLIFE_BENCH_ROWS", 1e8);
    let multi_rows = env_rows("SEAMLIFE_BENCH_MULTI_ROWS", 1e7);
    let single: PathBuf = dir.join(format!("seamlife-bench-{rows}x1.csv"));
    let multi: PathBuf = dir.join(format!("seamlife-bench-{multi_rows}x16.csv"));
    generate(&single, rows, 1);
    generate(&multi, multi_rows, 16);
    let threads = std::thread::available_parallelism().map_or(1, |t| t.get());
    println!("ingest bench: whole `seamlife count` process, best of 3, {threads} cores");
    let out = dir.join(format!("seamlife-bench-out-{}.csv", std::process::id()));
    let out_s = out.to_string_lossy().into_owned();
    let s = single.to_string_lossy().into_owned();
    // read once so that both runs find the file in the page cache
    let one = best(3, &["count", &s, "--column", "1", "-q", "-o", &out_s]);
    show(&format!("{rows} rows, 1 column"), rows, &one);

    // assess: details of the invented Kestrel Bay hall on the same record, as-welded and
    // stress-relieved in turn (each its own per-cycle rule)
    let details = env_rows("SEAMLIFE_BENCH_DETAILS", 8.0);
    let project = dir.join(format!("seamlife-bench-{rows}x1-{details}.yaml"));
    let mut yaml = String::from("seamlife: 1\nproject: {title: Kestrel Bay hall gauges, reference: KB-BENCH, revision: A, prepared_by: bench, date: 2026-12-02}\nbasis: {family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}\nmaterials: {S355: {fy_mpa: 355}}\ndetails:\n");
    for d in 0..details {
        let case = if d % 2 == 0 {
            "as-welded"
        } else {
            "stress-relieved"
        };
        yaml.push_str(&format!(
            "  - id: G{d}\n    location: bay {d}\n    detail: attachment-longitudinal-over-100\n    mean_stress_case: {case}\n    material: S355\n    thickness_mm: {}\n    normal:\n      loading:\n        - event: measured\n          per_year: 1\n          series: {{file: {}, column: sg1_mpa, unit: mpa}}\n",
            20 + d,
            single.file_name().unwrap().to_string_lossy()
        ));
    }
    std::fs::write(&project, yaml).unwrap();
    let p = project.to_string_lossy().into_owned();
    let assessed = best(3, &["assess", &p, "--csv", "--quiet", "-o", &out_s]);
    show(
        &format!("{rows} rows, assess {details} details"),
        rows,
        &assessed,
    );

    let m = multi.to_string_lossy().into_owned();
    let all = best(3, &["count", &m, "--all-columns", "-q", "-o", &out_s]);
    show(
        &format!("{multi_rows} rows, 16 columns at once"),
        multi_rows,
        &all,
    );
    let mut sum = Run::default();
    for c in 1..=16 {
        let r = best(
            1,
            &["count", &m, "--column", &c.to_string(), "-q", "-o", &out_s],
        );
        sum.wall_s += r.wall_s;
        sum.user_s += r.user_s;
        sum.sys_s += r.sys_s;
        sum.max_rss_mb = sum.max_rss_mb.max(r.max_rss_mb);
    }
    show(
        &format!("{multi_rows} rows, 16 runs of 1 column"),
        16 * multi_rows,
        &sum,
    );
    let ratio = sum.wall_s / all.wall_s;
    let ratio_cpu = (sum.user_s + sum.sys_s) / (all.user_s + all.sys_s);
    println!("16 channels: one pass {ratio:.1}x faster than 16 runs (wall), {ratio_cpu:.1}x (CPU)");
    let _ = std::fs::remove_file(&out);

    println!("RESULT single_rows={rows}");
    println!("RESULT single_rows_per_s={:.0}", rows as f64 / one.wall_s);
    println!("RESULT single_user_s={:.3}", one.user_s);
    println!("RESULT single_wall_s={:.3}", one.wall_s);
    println!("RESULT single_max_rss_mb={:.1}", one.max_rss_mb);
    println!("RESULT assess_details={details}");
    println!("RESULT assess_wall_s={:.3}", assessed.wall_s);
    println!("RESULT assess_user_s={:.3}", assessed.user_s);
    println!("RESULT assess_max_rss_mb={:.1}", assessed.max_rss_mb);
    println!("RESULT multi_wall_s={:.3}", all.wall_s);
    println!("RESULT multi_user_s={:.3}", all.user_s);
    println!("RESULT sixteen_runs_wall_s={:.3}", sum.wall_s);
    println!("RESULT multi_ratio_wall={ratio:.2}");
    println!("RESULT multi_ratio_cpu={ratio_cpu:.2}");
}
