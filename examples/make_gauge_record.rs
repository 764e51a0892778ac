//! Writes the made-up strain-gauge record of the demo project:
//! `projects/records/rg3-sg4-record.csv`, 30 minutes at 20 Hz of gauge SG-4 on the
//! bottom flange of runway girder RG3 beside the festoon bracket. Invented scenario:
//! crane passages (a smooth influence-line bump per passage), girder vibration at its
//! first bending frequency, hoisting jolts, slow thermal drift and gauge noise.
//!
//! `cargo run --example make_gauge_record` (seeded: the same file every time).

use rand::distributions::Distribution;
use rand::SeedableRng;
use std::io::Write;

fn main() -> std::io::Result<()> {
    let rate_hz = 20.0;
    let minutes = 30.0;
    let n = (minutes * 60.0 * rate_hz) as usize;
    let mut rng = rand::rngs::StdRng::seed_from_u64(20261014);
    // gauge and amplifier noise, σ = 2.5 µε (invented)
    let noise = statrs::distribution::Normal::new(0.0, 2.5).expect("valid σ");
    // (start s, duration s, peak µε): loaded and unloaded passages past the gauge
    let passages = [
        (95.0, 13.0, 334.0),
        (260.0, 12.5, 128.0),
        (480.0, 14.0, 318.0),
        (655.0, 12.0, 131.0),
        (900.0, 13.5, 342.0),
        (1090.0, 12.0, 126.0),
        (1330.0, 14.5, 305.0),
        (1525.0, 12.0, 135.0),
        (1700.0, 13.0, 224.0),
    ];
    // hoisting jolts: (time s, amplitude µε)
    let jolts = [
        (60.0, 38.0),
        (445.0, 41.0),
        (870.0, 36.0),
        (1300.0, 33.0),
        (1670.0, 29.0),
    ];
    let f_girder = 5.6; // Hz, first bending mode of the invented girder
    let zeta: f64 = 0.02;
    let out_path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("projects/records/rg3-sg4-record.csv");
    std::fs::create_dir_all(out_path.parent().expect("folder"))?;
    let mut out = std::io::BufWriter::new(std::fs::File::create(&out_path)?);
    writeln!(out, "time_s,sg4_microstrain")?;
    for i in 0..n {
        let t = i as f64 / rate_hz;
        let mut e = 12.0 + 9.0 * (t / (minutes * 60.0) * std::f64::consts::PI).sin(); // thermal drift
        for &(t0, dur, peak) in &passages {
            let s = (t - t0) / dur;
            if (0.0..=1.0).contains(&s) {
                let bump = (std::f64::consts::PI * s).sin().powi(2);
                // quasi-static influence line plus vibration excited by the moving load
                e += peak
                    * bump
                    * (1.0 + 0.07 * (2.0 * std::f64::consts::PI * f_girder * (t - t0)).sin());
            }
            let after = t - (t0 + dur);
            if after > 0.0 && after < 8.0 {
                // free decay after the crane leaves the span
                let w = 2.0 * std::f64::consts::PI * f_girder;
                e += 0.05 * peak * (-zeta * w * after).exp() * (w * after).sin();
            }
        }
        for &(tj, a) in &jolts {
            let d = t - tj;
            if d > 0.0 && d < 10.0 {
                let w = 2.0 * std::f64::consts::PI * f_girder;
                e += a * (-zeta * w * d).exp() * (w * d).sin();
            }
        }
        e += noise.sample(&mut rng);
        writeln!(out, "{t:.2},{e:.2}")?;
    }
    out.flush()?;
    println!("wrote {} ({n} samples)", out_path.display());
    Ok(())
}
