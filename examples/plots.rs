//! Writes the report figures for the demo projects, a made-up counted record and a few
//! awkward cases as SVG files, to look at them:
//!
//! ```text
//! cargo run --example plots -- /tmp/plots
//! ```

use std::path::{Path, PathBuf};

use seamlife::catalogue::Library;
use seamlife::report::plots;
use seamlife::results::{CountedRecord, HistogramBin, MatrixCell, Status};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out = PathBuf::from(
        std::env::args()
            .nth(1)
            .unwrap_or_else(|| "/tmp/plots".into()),
    );
    std::fs::create_dir_all(&out)?;
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let library = Library::load(None)?;
    let mut written = Vec::new();
    let mut write = |name: &str, svg: String| -> std::io::Result<()> {
        let path = out.join(name);
        std::fs::write(&path, svg)?;
        written.push(path);
        Ok(())
    };

    let mut all_details = Vec::new();
    for project in ["kestrel-bay-runway", "kestrel-bay-trolley-frame"] {
        let results =
            seamlife::run_project(&root.join(format!("projects/{project}.yaml")), &library)?;
        let years = results.basis.design_life_years;
        for d in &results.details {
            for c in &d.components {
                write(
                    &format!("sn-{}-{}.svg", d.id, c.component),
                    plots::sn_diagram(c, years),
                )?;
            }
        }
        write(
            &format!("utilisation-{project}.svg"),
            plots::utilisation_chart(&results.details),
        )?;
        all_details.extend(results.details);
    }

    // Awkward cases: huge cycle counts, and a spectrum wholly below the cut-off.
    let mut huge = all_details[0].components[0].clone();
    for b in &mut huge.blocks {
        b.cycles_design_life *= 2e4;
    }
    write("sn-huge-cycles.svg", plots::sn_diagram(&huge, 25.0))?;
    let mut quiet = all_details[0].components[0].clone();
    for b in &mut quiet.blocks {
        b.design_range_mpa *= 0.3;
        b.segment = None;
        b.damage = 0.0;
    }
    quiet.damage = 0.0;
    quiet.design_equivalent_range_mpa = 0.0;
    write("sn-no-damage.svg", plots::sn_diagram(&quiet, 25.0))?;

    // Many details with awkward ids.
    let mut many = Vec::new();
    for i in 0..75 {
        let mut d = all_details[i % all_details.len()].clone();
        d.id = format!("{}<&\"'>-{i:02}", d.id);
        d.utilisation = 0.05 + 0.023 * i as f64;
        d.status = match i % 9 {
            0 => Status::OutsideMethod,
            _ if d.utilisation > 1.0 => Status::Fail,
            _ => Status::Pass,
        };
        many.push(d);
    }
    many[3].utilisation = 7.5;
    many[3].status = Status::Fail;
    write("utilisation-many.svg", plots::utilisation_chart(&many))?;
    write("utilisation-one.svg", plots::utilisation_chart(&many[3..4]))?;

    let rec = made_up_record();
    write("histogram.svg", plots::histogram(&rec))?;
    write("matrix.svg", plots::matrix_heatmap(&rec))?;
    // A coarse matrix: cells large enough to carry their counts.
    let mut coarse = rec.clone();
    coarse.bin_width_mpa = 20.0;
    coarse.mean_bin_width_mpa = 20.0;
    coarse.matrix = coarse
        .matrix
        .chunks(1)
        .filter(|c| c[0].range_lo_mpa % 20.0 == 0.0 && c[0].mean_lo_mpa % 20.0 == 0.0)
        .map(|c| {
            let mut m = c[0];
            m.range_hi_mpa = m.range_lo_mpa + 20.0;
            m.mean_hi_mpa = m.mean_lo_mpa + 20.0;
            m.cycles *= 4.0;
            m
        })
        .collect();
    write("matrix-coarse.svg", plots::matrix_heatmap(&coarse))?;
    let mut flat = rec.clone();
    flat.constant = true;
    flat.histogram.clear();
    flat.matrix.clear();
    write("matrix-empty.svg", plots::matrix_heatmap(&flat))?;
    write("histogram-empty.svg", plots::histogram(&flat))?;

    for p in written {
        println!("{}", p.display());
    }
    Ok(())
}

/// A counted record with a plausible shape: counts fall off with range and gather
/// around a mean of 10 MPa. The numbers are made up.
fn made_up_record() -> CountedRecord {
    let histogram = (0..32)
        .map(|i| {
            let lo = 5.0 * i as f64;
            let cycles = (2.0 * 2e4 * (-lo / 16.0).exp()).round() / 2.0;
            HistogramBin {
                lo_mpa: lo,
                hi_mpa: lo + 5.0,
                cycles,
            }
        })
        .filter(|b| b.cycles > 0.0)
        .collect();
    let mut matrix = Vec::new();
    for i in 0..32 {
        for j in 0..10 {
            let r = 5.0 * i as f64;
            let m = -40.0 + 10.0 * j as f64;
            let z = (m + 5.0 - 10.0) / 20.0;
            let cycles = (2.0 * 1.5e4 * (-(r + 2.5) / 14.0).exp() * (-z * z).exp()).round() / 2.0;
            if cycles > 0.0 {
                matrix.push(MatrixCell {
                    range_lo_mpa: r,
                    range_hi_mpa: r + 5.0,
                    mean_lo_mpa: m,
                    mean_hi_mpa: m + 10.0,
                    cycles,
                    max_range_mpa: r + 4.5,
                    mean_mpa: m + 5.0,
                });
            }
        }
    }
    CountedRecord {
        event: "gantry travel, one shift".into(),
        file: "records/gauge-07.csv".into(),
        column: "SG7".into(),
        unit: "mpa".into(),
        scale: 1.0,
        modulus_mpa: None,
        samples: 288_000,
        reversals: 61_000,
        full_cycles: 30_380,
        half_cycles: 12,
        min_mpa: -52.0,
        max_mpa: 118.0,
        mean_mpa: 9.6,
        std_dev_mpa: 14.2,
        constant: false,
        gate_mpa: 2.0,
        residue: "repeated".into(),
        repeats_per_year: 250.0,
        bin_width_mpa: 5.0,
        mean_bin_width_mpa: 10.0,
        histogram,
        matrix,
        per_cycle: false,
    }
}
