//! Write a large generated project file, for measuring memory and speed on big inputs.
//!
//! cargo run --release --example big_project -- OUT.yaml [DETAILS]
//!
//! DETAILS defaults to 100000 (about 38 MB of YAML). The details cycle through a few
//! catalogue entries with invented demo numbers; they describe no real structure.
//! Measure with e.g. `/usr/bin/time -v target/release/seamlife assess OUT.yaml --json -o r.json`.

use std::io::Write;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(out) = args.first() else {
        eprintln!("usage: big_project OUT.yaml [DETAILS]");
        return ExitCode::from(2);
    };
    let n: usize = match args.get(1).map(|s| s.parse()) {
        None => 100_000,
        Some(Ok(n)) => n,
        Some(Err(_)) => {
            eprintln!("DETAILS must be a whole number");
            return ExitCode::from(2);
        }
    };
    let file = match std::fs::File::create(out) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("cannot create {out}: {e}");
            return ExitCode::from(2);
        }
    };
    let mut w = std::io::BufWriter::new(file);
    match write_project(&mut w, n).and_then(|_| w.flush()) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("cannot write {out}: {e}");
            ExitCode::from(2)
        }
    }
}

fn write_project(w: &mut impl Write, n: usize) -> std::io::Result<()> {
    write!(
        w,
        "seamlife: 1
project:
  title: Generated yard crane runway (large-input check)
  reference: GEN-{n}
  revision: A
  prepared_by: generator
  date: 2026-11-20
basis:
  family: en1993-1-9
  design_life_years: 25
  strategy: safe-life
  consequence: high
materials:
  S355: {{fy_mpa: 355}}
details:
"
    )?;
    let kinds = [
        "butt-transverse-shop-flat",
        "stiffener-vertical-web",
        "attachment-longitudinal-over-100",
        "longitudinal-weld-automatic",
        "crane-web-flange-fillet",
    ];
    for i in 0..n {
        let r = 30 + (i * 7) % 60;
        writeln!(
            w,
            "  - id: G{i:06}
    location: girder {g} node {i}
    detail: {k}
    material: S355
    thickness_mm: {t}
    normal:
      loading:
        - event: loaded passage
          per_year: 9000
          blocks: [{{max_mpa: {r}, min_mpa: 5, cycles: 1}}, {{range_mpa: {s}, cycles: 2}}]
        - event: empty passage
          per_year: 9000
          blocks: [{{range_mpa: {u}, cycles: 1}}]",
            g = i / 50,
            k = kinds[i % kinds.len()],
            t = 12 + (i * 3) % 30,
            s = r / 3,
            u = r / 2,
        )?;
    }
    Ok(())
}
