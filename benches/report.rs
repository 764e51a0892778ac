//! End-to-end timing of `report` on generated projects: a full package of 1000 details,
//! and a batch package of 10 000 details (summary of all, sheets for the 100 highest),
//! goal under 20 s each on a 2-core machine. Prints the figures of each stage, the
//! page count and the PDF size. Run with `cargo bench --bench report` (typst 0.15 must
//! be installed). `SEAMLIFE_BENCH_DETAILS=N` runs one full package of N details.

#[path = "support/batchgen.rs"]
mod batchgen;

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

/// Pages of a PDF: the page objects counted in its bytes (`/Type /Page`, not
/// `/Pages`), as typst writes them uncompressed.
fn page_count(pdf: &[u8]) -> usize {
    let mut n = 0;
    for key in [&b"/Type /Page"[..], &b"/Type/Page"[..]] {
        n += pdf
            .windows(key.len() + 1)
            .filter(|w| &w[..key.len()] == key && w[key.len()] != b's')
            .count();
    }
    n
}

/// Where the details come from: the YAML list of [`project`], or the CSV tables of
/// the generated runway hall (benches/support/batchgen.rs), as a batch project has them.
#[derive(Clone, Copy)]
enum Input {
    Yaml,
    Tables,
}

/// One package: `n` details, full sheets per `sheets` (`None`: every detail).
fn case(n: usize, input: Input, sheets: Option<&str>, goal_s: f64) {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = match input {
        Input::Yaml => {
            let path = dir.path().join("bench.yaml");
            std::fs::write(&path, project(n)).expect("write project");
            path
        }
        Input::Tables => {
            let spec = batchgen::BatchSpec {
                details: n,
                history_steps: 0,
                seed: 20261127,
            };
            batchgen::write_batch(dir.path(), spec).expect("write tables");
            dir.path().join("project.yaml")
        }
    };
    let lib = Library::load(None).expect("families");

    let t0 = Instant::now();
    let results = seamlife::run_project(&path, &lib).expect("assess");
    let t_assess = t0.elapsed();

    let t1 = Instant::now();
    let chosen = match sheets {
        None => seamlife::report::Sheets::all(&results),
        Some(rule) => {
            let sel = seamlife::report::sheets::SheetSelection::parse(rule).expect("selection");
            let (idx, words) = sel.select(&results).expect("select");
            seamlife::report::Sheets::of(&results, idx, words)
        }
    };
    let build = seamlife::report::build_files_for(&results, None, &chosen).expect("build files");
    let t_build = t1.elapsed();

    let tool = seamlife::report::typst::find(None).expect("typst 0.15 on PATH");
    // SEAMLIFE_BENCH_KEEP=DIR keeps the PDF and its Typst source there for inspection.
    let keep = std::env::var_os("SEAMLIFE_BENCH_KEEP").map(std::path::PathBuf::from);
    let out = keep
        .clone()
        .unwrap_or_else(|| dir.path().to_path_buf())
        .join(format!("bench-{n}.pdf"));
    let t2 = Instant::now();
    seamlife::report::typst::compile_to(&tool, &build, &out, 0, false, keep.is_some())
        .expect("typst");
    let t_typst = t2.elapsed();
    let total = t0.elapsed();
    let pdf = std::fs::read(&out).unwrap_or_default();
    let svg_bytes: usize = build
        .files
        .iter()
        .filter(|(n, _)| n.ends_with(".svg"))
        .map(|(_, b)| b.len())
        .sum();
    println!(
        "report benchmark: {n} details from {}, sheets: {} ({} sheets), {} files",
        match input {
            Input::Yaml => "the project file",
            Input::Tables => "tables",
        },
        sheets.unwrap_or("all"),
        chosen.count,
        build.files.len()
    );
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
    let met = if total.as_secs_f64() < goal_s {
        "met"
    } else {
        "NOT met"
    };
    println!(
        "  total report end to end:               {:>8.3} s  (goal < {goal_s} s: {met})",
        total.as_secs_f64()
    );
    println!(
        "  PDF: {} pages, {:.1} MB",
        page_count(&pdf),
        pdf.len() as f64 / 1e6
    );
}

fn main() {
    // SEAMLIFE_BENCH_DETAILS=N runs one full package of N details only.
    if let Some(n) = std::env::var("SEAMLIFE_BENCH_DETAILS")
        .ok()
        .and_then(|s| s.parse().ok())
    {
        case(n, Input::Yaml, None, 20.0);
        return;
    }
    // Goals: a full 1000-detail package, and a 10 000-detail batch package (details
    // from tables; summary of all, sheets for the 100 highest), each under 20 s on the
    // 2-core machine.
    case(1000, Input::Yaml, None, 20.0);
    case(10_000, Input::Tables, Some("top:100"), 20.0);
}
