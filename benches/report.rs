//! End-to-end timing of `report` on a generated 1000-detail project (goal: under 20 s
//! on a 2-core machine). Prints the figures of each stage. Run with
//! `cargo bench --bench report` (typst 0.15 must be installed). `SEAMLIFE_BENCH_DETAILS`
//! changes the detail count.

use std::time::Instant;

use seamlife::catalogue::Library;

/// A project of `n` details cycling through a few detail types (invented demo numbers).
fn project(n: usize) -> String {
    let mut y = String::from(
        "seamlife: 1
project: {title: Benchmark runway, reference: BENCH-1000, revision: A, prepared_by: bench, date: 2026-11-20}
basis: {family: en1993-1-9, design_life_years: 25, strategy: safe-life, consequence: high}
materials: {S355: {fy_mpa: 355}}
details:
",
    );
    let kinds = [
        "butt-transverse-shop-flat",
        "stiffener-vertical-l-upto-50",
        "attachment-longitudinal-over-100",
        "longitudinal-weld-automatic",
        "crane-web-flange-fillet",
    ];
    for i in 0..n {
        let k = kinds[i % kinds.len()];
        let r = 30 + (i * 7) % 60;
        let t = 12 + (i * 3) % 30;
        let shear = if i % 4 == 0 {
            ", shear: {category: 80, loading: [{event: passage, per_year: 9000, blocks: [{range_mpa: 25, cycles: 1}]}]}"
        } else {
            ""
        };
        y.push_str(&format!(
            "  - {{id: B{i:04}, location: girder {g} node {i}, detail: {k}, material: S355, thickness_mm: {t}, normal: {{loading: [{{event: loaded passage, per_year: 9000, blocks: [{{max_mpa: {r}, min_mpa: 5, cycles: 1}}, {{range_mpa: {s}, cycles: 2}}]}}, {{event: unloaded passage, per_year: 9000, blocks: [{{range_mpa: {u}, cycles: 1}}]}}]}}{shear}}}\n",
            g = i / 50,
            s = r / 3,
            u = r / 2,
        ));
    }
    y
}

fn main() {
    let n: usize = std::env::var("SEAMLIFE_BENCH_DETAILS")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(1000);
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("bench.yaml");
    std::fs::write(&path, project(n)).expect("write project");
    let lib = Library::load(None).expect("families");

    let t0 = Instant::now();
    let results = seamlife::run_project(&path, &lib).expect("assess");
    let t_assess = t0.elapsed();

    let t1 = Instant::now();
    let build = seamlife::report::build_files(&results, None).expect("build files");
    let t_build = t1.elapsed();

    let tool = seamlife::report::typst::find(None).expect("typst 0.15 on PATH");
    // SEAMLIFE_BENCH_KEEP=DIR keeps the PDF and its Typst source there for inspection.
    let keep = std::env::var_os("SEAMLIFE_BENCH_KEEP").map(std::path::PathBuf::from);
    let out = keep
        .clone()
        .unwrap_or_else(|| dir.path().to_path_buf())
        .join("bench.pdf");
    let t2 = Instant::now();
    seamlife::report::typst::compile_to(&tool, &build, &out, 0, false, keep.is_some())
        .expect("typst");
    let t_typst = t2.elapsed();
    let total = t0.elapsed();
    let size = std::fs::metadata(&out).map(|m| m.len()).unwrap_or(0);
    let svg_bytes: usize = build
        .files
        .iter()
        .filter(|(n, _)| n.ends_with(".svg"))
        .map(|(_, b)| b.len())
        .sum();
    println!("report benchmark: {n} details, {} files", build.files.len());
    println!(
        "  assess (load, check, spectra, engine): {:>8.3} s",
        t_assess.as_secs_f64()
    );
    println!(
        "  templates + SVG plots ({:.1} MB SVG):  {:>8.3} s",
        svg_bytes as f64 / 1e6,
        t_build.as_secs_f64()
    );
    println!(
        "  typst compile (typst {}):           {:>8.3} s",
        tool.version,
        t_typst.as_secs_f64()
    );
    println!(
        "  total report end to end:               {:>8.3} s  (goal < 20 s)",
        total.as_secs_f64()
    );
    println!("  PDF size: {:.1} MB", size as f64 / 1e6);
}
