//! The range-mean matrix of a counted record as a grey-scale heat map.

use super::*;

/// The range-mean matrix of a counted record as a heat map: range on x, mean on y (MPa),
/// grey level by class of cycles per record (log classes), with a key of the classes.
/// Cells large enough carry their count.
pub fn matrix_heatmap(rec: &CountedRecord) -> String {
    render(HEATMAP_SIZE, |root| draw_heatmap(root, rec))
}

/// Class bounds of cycle counts: decades (every second one for wide spans), or 1-2-5
/// steps when the counts span two decades or less. Returns ascending bounds.
pub(super) fn cycle_classes(c_lo: f64, c_hi: f64) -> Vec<f64> {
    // Exponents clamped to those of f64, so that no count makes the lists endless.
    let e_lo = (c_lo.log10().floor() as i32).clamp(-330, 310);
    let e_hi = ((c_hi.log10().floor() as i32).clamp(-330, 310) + 1).max(e_lo + 1);
    let span = e_hi - e_lo;
    if span <= 2 {
        let mut b: Vec<f64> = (e_lo..e_hi)
            .flat_map(|e| [1.0, 2.0, 5.0].map(|m| m * 10f64.powi(e)))
            .collect();
        b.push(10f64.powi(e_hi));
        // Drop empty classes at both ends.
        while b.len() > 2 && b[1] <= c_lo {
            b.remove(0);
        }
        while b.len() > 2 && b[b.len() - 2] > c_hi {
            b.pop();
        }
        b
    } else {
        let step = ((span + 7) / 8).max(1);
        let mut b = Vec::new();
        let mut e = e_lo;
        while e < e_hi {
            b.push(10f64.powi(e));
            e += step;
        }
        b.push(10f64.powi(e));
        b
    }
}

/// Grey level of class `i` of `k`: light for few cycles, dark for many.
pub(super) fn class_grey(i: usize, k: usize) -> u8 {
    let t = if k <= 1 {
        0.5
    } else {
        i as f64 / (k - 1) as f64
    };
    // Lightness from 0.86 down to 0.12 (common practice for grey-scale maps).
    ((0.86 - 0.74 * t) * 255.0).round() as u8
}

pub(super) fn class_of(bounds: &[f64], v: f64) -> usize {
    let k = bounds.len() - 1;
    (0..k).rev().find(|&i| v >= bounds[i]).unwrap_or(0)
}

pub(super) fn draw_heatmap(root: &Area, rec: &CountedRecord) -> Drawn {
    let (w, h) = HEATMAP_SIZE;
    root.draw_text(
        &record_title("Range-mean matrix of the counted record: ", &rec.event),
        &font(13.0, HPos::Left, VPos::Top),
        (10, 9),
    )?;
    root.draw_text(
        &record_line(rec),
        &font(11.0, HPos::Left, VPos::Top),
        (10, 27),
    )?;
    let cells: Vec<&MatrixCell> = rec
        .matrix
        .iter()
        .filter(|c| positive(c.cycles))
        .filter(|c| c.range_hi_mpa > c.range_lo_mpa && c.mean_hi_mpa > c.mean_lo_mpa)
        .filter(|c| {
            [c.range_lo_mpa, c.range_hi_mpa, c.mean_lo_mpa, c.mean_hi_mpa]
                .iter()
                .all(|v| v.is_finite())
        })
        .collect();
    if cells.is_empty() {
        return no_cycles(root, rec, (w, h));
    }
    const KEY_W: u32 = 150;
    let (plot, key) = root.split_horizontally(w - KEY_W);

    let r_lo = cells
        .iter()
        .map(|c| c.range_lo_mpa)
        .fold(f64::MAX, f64::min);
    let r_hi = cells
        .iter()
        .map(|c| c.range_hi_mpa)
        .fold(f64::MIN, f64::max);
    let m_lo = cells.iter().map(|c| c.mean_lo_mpa).fold(f64::MAX, f64::min);
    let m_hi = cells.iter().map(|c| c.mean_hi_mpa).fold(f64::MIN, f64::max);
    let (x_lo, x_hi, x_ticks, x_dp) = linear_axis(r_lo.min(0.0), r_hi, 8);
    let (y_lo, y_hi, y_ticks, y_dp) = linear_axis(m_lo, m_hi, 8);

    let mut chart = ChartBuilder::on(&plot)
        .margin_top(48)
        .margin_right(12)
        .margin_left(8)
        .margin_bottom(4)
        .x_label_area_size(42)
        .y_label_area_size(58)
        .build_cartesian_2d(
            Linear::new(x_lo, x_hi, x_ticks),
            Linear::new(y_lo, y_hi, y_ticks),
        )?;
    let x_fmt = |v: &f64| fmt_fixed(*v, x_dp);
    let y_fmt = |v: &f64| fmt_fixed(*v, y_dp);
    chart
        .configure_mesh()
        .x_desc("stress range (MPa)")
        .y_desc("mean stress (MPa)")
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .label_style(font(11.0, HPos::Center, VPos::Center))
        .axis_desc_style(font(12.0, HPos::Center, VPos::Center))
        .bold_line_style(GRID_MINOR.stroke_width(1))
        .light_line_style(PAPER.stroke_width(0))
        .axis_style(INK.stroke_width(1))
        .draw()?;

    let c_lo = cells.iter().map(|c| c.cycles).fold(f64::MAX, f64::min);
    let c_hi = cells.iter().map(|c| c.cycles).fold(0.0, f64::max);
    let bounds = cycle_classes(c_lo, c_hi);
    let k = bounds.len() - 1;
    let boxes: Vec<((i32, i32), (i32, i32))> = cells
        .iter()
        .map(|c| {
            (
                chart.backend_coord(&(c.range_lo_mpa, c.mean_hi_mpa)),
                chart.backend_coord(&(c.range_hi_mpa, c.mean_lo_mpa)),
            )
        })
        .collect();
    // Counts go into the cells only when every one fits, so that none is missing.
    let fits = |px: f64| {
        cells.iter().zip(&boxes).all(|(c, (a, b))| {
            b.0 - a.0 >= text_width(&fmt_count(c.cycles), px) + 3
                && f64::from(b.1 - a.1) >= px * 1.3
        })
    };
    let count_font = [10.0, 9.0].into_iter().find(|px| fits(*px));
    for (c, &(a, b)) in cells.iter().zip(&boxes) {
        let g = class_grey(class_of(&bounds, c.cycles), k);
        root.draw(&Rectangle::new([a, b], RGBColor(g, g, g).filled()))?;
        root.draw(&Rectangle::new([a, b], PAPER.stroke_width(1)))?;
        if let Some(px) = count_font {
            let ink = if g < 128 { PAPER } else { INK };
            root.draw_text(
                &fmt_count(c.cycles),
                &font(px, HPos::Center, VPos::Center).color(&ink),
                ((a.0 + b.0) / 2, (a.1 + b.1) / 2),
            )?;
        }
    }
    chart.draw_series(std::iter::once(Rectangle::new(
        [(x_lo, y_lo), (x_hi, y_hi)],
        INK.stroke_width(1),
    )))?;
    if y_lo < 0.0 && y_hi > 0.0 {
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(x_lo, 0.0), (x_hi, 0.0)],
            MID.stroke_width(1),
        )))?;
    }

    // Key: darkest class on top.
    let kx = 6;
    let mut ky = 54;
    key.draw_text(
        "cycles n per record",
        &bold(11.0, HPos::Left, VPos::Center),
        (kx, ky),
    )?;
    ky += 20;
    for i in (0..k).rev() {
        let g = class_grey(i, k);
        key.draw(&Rectangle::new(
            [(kx, ky - 8), (kx + 22, ky + 8)],
            RGBColor(g, g, g).filled(),
        ))?;
        key.draw(&Rectangle::new(
            [(kx, ky - 8), (kx + 22, ky + 8)],
            INK.stroke_width(1),
        ))?;
        let label = format!(
            "{} ≤ n < {}",
            fmt_count(bounds[i]),
            fmt_count(bounds[i + 1])
        );
        key.draw_text(&label, &font(11.0, HPos::Left, VPos::Center), (kx + 30, ky))?;
        ky += 20;
    }
    ky += 6;
    for line in [
        format!("range bins {} MPa", fmt_num(rec.bin_width_mpa, 2)),
        format!("mean bins {} MPa", fmt_num(rec.mean_bin_width_mpa, 2)),
    ] {
        key.draw_text(&line, &font(11.0, HPos::Left, VPos::Center), (kx, ky))?;
        ky += 16;
    }
    Ok(())
}
