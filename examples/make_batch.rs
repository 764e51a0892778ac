//! Writes the batch demo of the invented Kestrel Bay boatyard: the runway hall's crane
//! girders with all their welded details in CSV tables.
//!
//! `cargo run --example make_batch -- DIR [DETAILS] [HISTORY_STEPS]` writes
//! `DIR/project.yaml` and `DIR/tables/*.csv` (seeded: the same files every time).
//! With HISTORY_STEPS > 0 the stresses come as influence-line histories per event,
//! otherwise as one block per event.

#[path = "../benches/support/batchgen.rs"]
mod batchgen;

fn main() -> std::io::Result<()> {
    let mut args = std::env::args().skip(1);
    let dir = args
        .next()
        .unwrap_or_else(|| "projects/kestrel-bay-hall".into());
    let details = args.next().and_then(|s| s.parse().ok()).unwrap_or(2400);
    let history_steps = args.next().and_then(|s| s.parse().ok()).unwrap_or(0);
    batchgen::write_batch(
        std::path::Path::new(&dir),
        batchgen::BatchSpec {
            details,
            history_steps,
            seed: 20261127,
        },
    )?;
    eprintln!("wrote {dir}/project.yaml and {dir}/tables/ ({details} details)");
    Ok(())
}
