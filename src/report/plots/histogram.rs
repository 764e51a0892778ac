//! The range histogram of a counted record.

use super::*;

/// Range histogram of a counted record: bars over the range bins (MPa, linear axis),
/// cycles per record on a log axis.
pub fn histogram(rec: &CountedRecord) -> String {
    render(HISTOGRAM_SIZE, |root| draw_histogram(root, rec))
}

pub(super) fn draw_histogram(root: &Area, rec: &CountedRecord) -> Drawn {
    let (w, h) = HISTOGRAM_SIZE;
    root.draw_text(
        &record_title("Range histogram of the counted record: ", &rec.event),
        &font(13.0, HPos::Left, VPos::Top),
        (10, 9),
    )?;
    root.draw_text(
        &record_line(rec),
        &font(11.0, HPos::Left, VPos::Top),
        (10, 27),
    )?;
    let bins: Vec<&HistogramBin> = rec
        .histogram
        .iter()
        .filter(|b| positive(b.cycles) && b.hi_mpa > b.lo_mpa && b.lo_mpa.is_finite())
        .filter(|b| b.hi_mpa.is_finite())
        .collect();
    if bins.is_empty() {
        return no_cycles(root, rec, (w, h));
    }
    let lo = bins.iter().map(|b| b.lo_mpa).fold(f64::MAX, f64::min);
    let hi = bins.iter().map(|b| b.hi_mpa).fold(f64::MIN, f64::max);
    let (x_lo, x_hi, x_ticks, x_dp) = linear_axis(lo.min(0.0), hi, 8);
    let c_lo = bins.iter().map(|b| b.cycles).fold(f64::MAX, f64::min);
    let c_hi = bins.iter().map(|b| b.cycles).fold(0.0, f64::max);
    let y_lo = decade_floor(c_lo);
    let y_hi = decade_ceil(c_hi * 1.0001).max(y_lo * 10.0);
    let y_major = log_ticks(y_lo, y_hi, &[1.0]);
    let y_minor = log_ticks(y_lo, y_hi, &[2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]);

    let mut chart = ChartBuilder::on(root)
        .margin_top(48)
        .margin_right(20)
        .margin_left(8)
        .margin_bottom(4)
        .x_label_area_size(42)
        .y_label_area_size(58)
        .build_cartesian_2d(
            Linear::new(x_lo, x_hi, x_ticks),
            (y_lo..y_hi)
                .log_scale()
                .with_key_points(y_major)
                .with_light_points(y_minor),
        )?;
    let x_fmt = |v: &f64| fmt_fixed(*v, x_dp);
    let y_fmt = |v: &f64| fmt_count(*v);
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_desc("stress range (MPa)")
        .y_desc("cycles per record")
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .label_style(font(11.0, HPos::Center, VPos::Center))
        .axis_desc_style(font(12.0, HPos::Center, VPos::Center))
        .bold_line_style(GRID_MAJOR.stroke_width(1))
        .light_line_style(GRID_MINOR.stroke_width(1))
        .axis_style(INK.stroke_width(1))
        .draw()?;
    for b in &bins {
        let r = [(b.lo_mpa, y_lo), (b.hi_mpa, b.cycles.min(y_hi))];
        chart.draw_series(std::iter::once(Rectangle::new(r, BAR.filled())))?;
        chart.draw_series(std::iter::once(Rectangle::new(r, INK.stroke_width(1))))?;
    }
    chart.draw_series(std::iter::once(Rectangle::new(
        [(x_lo, y_lo), (x_hi, y_hi)],
        INK.stroke_width(1),
    )))?;
    if positive(rec.gate_mpa) && rec.gate_mpa < x_hi {
        let top = chart.backend_coord(&(rec.gate_mpa, y_hi));
        let bottom = chart.backend_coord(&(rec.gate_mpa, y_lo));
        draw_sample(root, Sample::Dashed, top, bottom)?;
        root.draw_text(
            &format!("gate {} MPa", fmt_num(rec.gate_mpa, 2)),
            &font(11.0, HPos::Left, VPos::Top),
            (top.0 + 4, top.1 + 4),
        )?;
    }
    Ok(())
}
