//! The utilisation chart of all details.

use super::*;

/// Horizontal bars of the utilisation of each detail, highest on top, with the limit
/// 1.0 as a vertical line. Failing bars are dark, bars outside the method hatched, and
/// both carry their status in words. Beyond [`UTILISATION_MAX_BARS`] details the
/// highest are shown and the title says so.
pub fn utilisation_chart(details: &[DetailResult]) -> String {
    let mut order: Vec<&DetailResult> = details.iter().collect();
    // Stable sort: equal utilisations keep the project order.
    order.sort_by(|a, b| b.utilisation.total_cmp(&a.utilisation));
    let total = order.len();
    order.truncate(UTILISATION_MAX_BARS);
    let layout = BarLayout::new(&order);
    render((UTILISATION_WIDTH, layout.height), |root| {
        draw_utilisation(root, &order, total, &layout)
    })
}

pub(super) struct BarLayout {
    pub(super) font_px: f64,
    pub(super) label_w: u32,
    pub(super) height: u32,
    pub(super) labels: Vec<String>,
}

pub(super) const BAR_TOP: u32 = 52;
pub(super) const BAR_BOTTOM: u32 = 70;
/// Room right of the axis for the value and the status words.
pub(super) const BAR_NOTE_W: u32 = 150;
pub(super) const BAR_MAX_LABEL_CHARS: usize = 34;
/// Widest label area, pixels; a longer id is cut with "…" to fit it.
pub(super) const BAR_MAX_LABEL_W: u32 = 220;

/// `id` cut to at most [`BAR_MAX_LABEL_CHARS`] characters and, with a margin for the
/// rough width estimate, to the label area, with "…" where it was cut.
fn bar_label(id: &str, font_px: f64) -> String {
    // 10 % margin over the estimate; 14 px of the area are the gap to the axis.
    let fits = |s: &str| f64::from(text_width(s, font_px)) * 1.1 <= f64::from(BAR_MAX_LABEL_W - 14);
    cut_end(&shortened(id, BAR_MAX_LABEL_CHARS), fits)
}

impl BarLayout {
    fn new(order: &[&DetailResult]) -> BarLayout {
        let n = order.len().max(1) as u32;
        let (pitch, font_px) = match n {
            0..=12 => (26, 11.0),
            13..=30 => (20, 11.0),
            _ => (13, 10.0),
        };
        let labels: Vec<String> = order.iter().map(|d| bar_label(&d.id, font_px)).collect();
        let widest = labels
            .iter()
            .map(|l| text_width(l, font_px))
            .max()
            .unwrap_or(0);
        let label_w = (widest as u32 + 14).clamp(60, BAR_MAX_LABEL_W);
        BarLayout {
            font_px,
            label_w,
            height: BAR_TOP + n * pitch + BAR_BOTTOM,
            labels,
        }
    }
}

/// Axis end and tick step of the utilisation axis: at least 1.2 so that the limit
/// shows, at most 2.0; longer bars are drawn broken with their value.
pub(super) fn utilisation_axis(max_u: f64) -> (f64, f64) {
    let top = if max_u.is_finite() { max_u * 1.05 } else { 2.0 };
    let top = top.clamp(1.2, 2.0);
    // Ticks per unit: 10 (step 0.1) or 5 (step 0.2); dividing keeps the values exact.
    let per_unit = if top <= 1.2 { 10.0 } else { 5.0 };
    ((top * per_unit - 1e-9).ceil() / per_unit, 1.0 / per_unit)
}

pub(super) fn draw_utilisation(
    root: &Area,
    order: &[&DetailResult],
    total: usize,
    lay: &BarLayout,
) -> Drawn {
    let n = order.len();
    let title = if total > n {
        format!("Utilisation per detail: the {n} highest of {total} details")
    } else {
        "Utilisation per detail, highest first".to_string()
    };
    root.draw_text(&title, &font(13.0, HPos::Left, VPos::Top), (10, 9))?;
    if n == 0 {
        root.draw_text(
            "no details assessed",
            &font(12.0, HPos::Center, VPos::Center),
            (UTILISATION_WIDTH as i32 / 2, lay.height as i32 / 2),
        )?;
        return Ok(());
    }

    let max_u = order
        .iter()
        .map(|d| d.utilisation)
        .filter(|u| u.is_finite())
        .fold(0.0, f64::max);
    let (x_max, ticks) = utilisation_ticks(max_u);
    let centres = row_centres(n);

    let mut chart = ChartBuilder::on(root)
        .margin_top(BAR_TOP)
        .margin_bottom(BAR_BOTTOM - 44)
        .margin_right(BAR_NOTE_W)
        .margin_left(6)
        .x_label_area_size(44)
        .y_label_area_size(lay.label_w)
        .build_cartesian_2d(
            Linear::new(0.0, x_max, ticks),
            Linear::new(0.0, n as f64, centres.clone()),
        )?;
    let x_fmt = |v: &f64| fmt_fixed(*v, 1);
    let y_fmt = |v: &f64| row_label(&lay.labels, n, *v);
    chart
        .configure_mesh()
        .disable_y_mesh()
        .x_desc("utilisation (–): design life / fatigue life, governing check")
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .x_label_style(font(11.0, HPos::Center, VPos::Center))
        .y_label_style(font(lay.font_px, HPos::Center, VPos::Center))
        .axis_desc_style(font(12.0, HPos::Center, VPos::Center))
        .bold_line_style(GRID_MAJOR.stroke_width(1))
        .light_line_style(PAPER.stroke_width(0))
        .axis_style(INK.stroke_width(1))
        .draw()?;

    let half = 0.34;
    let mut notes: Vec<(i32, i32, String, Status)> = Vec::new();
    for (i, d) in order.iter().enumerate() {
        let yc = centres[i];
        let u = d.utilisation;
        let shown = if u.is_finite() {
            u.clamp(0.0, x_max)
        } else {
            x_max
        };
        let a = chart.backend_coord(&(0.0, yc + half));
        let b = chart.backend_coord(&(shown, yc - half));
        let (x0, y0, x1, y1) = (a.0, a.1, b.0.max(a.0 + 1), b.1);
        match d.status {
            Status::Pass => {
                root.draw(&Rectangle::new([(x0, y0), (x1, y1)], BAR.filled()))?;
            }
            Status::Fail => {
                root.draw(&Rectangle::new([(x0, y0), (x1, y1)], DARK.filled()))?;
            }
            Status::OutsideMethod => {
                root.draw(&Rectangle::new([(x0, y0), (x1, y1)], PAPER.filled()))?;
                hatch(root, (x0, y0, x1, y1), 5)?;
            }
        }
        root.draw(&Rectangle::new([(x0, y0), (x1, y1)], INK.stroke_width(1)))?;
        if !u.is_finite() || u > x_max {
            // Broken bar: a white gap near its end says it runs on.
            let gx = x1 - 12;
            root.draw(&Polygon::new(
                vec![
                    (gx, y1 + 2),
                    (gx + 4, y1 + 2),
                    (gx + 8, y0 - 2),
                    (gx + 4, y0 - 2),
                ],
                PAPER.filled(),
            ))?;
        }
        notes.push((x1 + 5, (y0 + y1) / 2, fmt_fixed(u, 3), d.status));
    }

    // Limit line at 1.0, over the bars and under the values.
    let top = chart.backend_coord(&(1.0, n as f64));
    let bottom = chart.backend_coord(&(1.0, 0.0));
    draw_sample(root, Sample::Limit, top, bottom)?;
    root.draw_text(
        "limit 1.0",
        &font(11.0, HPos::Center, VPos::Bottom),
        (top.0, top.1 - 4),
    )?;

    // Value at the end of each bar, then the status of a failing detail, on white so
    // that the limit line does not run through them.
    let value_font = font(lay.font_px, HPos::Left, VPos::Center);
    let status_font = bold(lay.font_px, HPos::Left, VPos::Center);
    let half_h = (lay.font_px * 0.6).ceil() as i32;
    for (x, y, value, status) in notes {
        let mut w = text_width(&value, lay.font_px);
        if status != Status::Pass {
            w += 6 + text_width(status.as_str(), lay.font_px * 1.05);
        }
        root.draw(&Rectangle::new(
            [(x - 2, y - half_h), (x + w + 2, y + half_h)],
            PAPER.filled(),
        ))?;
        root.draw_text(&value, &value_font, (x, y))?;
        if status != Status::Pass {
            let sx = x + text_width(&value, lay.font_px) + 6;
            root.draw_text(status.as_str(), &status_font, (sx, y))?;
        }
    }

    // Key.
    let ky = lay.height as i32 - 12;
    let kx = status_key(root, lay.label_w as i32 + 6, ky)?;
    let key_font = font(11.0, HPos::Left, VPos::Center);
    draw_sample(root, Sample::Limit, (kx + 11, ky - 9), (kx + 11, ky + 9))?;
    root.draw_text("limit", &key_font, (kx + 20, ky))?;
    Ok(())
}

/// The utilisation axis for bars up to `max_u`: its end and its tick values.
pub(super) fn utilisation_ticks(max_u: f64) -> (f64, Vec<f64>) {
    let (x_max, step) = utilisation_axis(max_u);
    let per_unit = (1.0 / step).round();
    let ticks = (0..=((x_max * per_unit).round() as usize))
        .map(|i| i as f64 / per_unit)
        .collect();
    (x_max, ticks)
}

/// Centres of `n` rows on a 0..n axis, the first row on top.
pub(super) fn row_centres(n: usize) -> Vec<f64> {
    (0..n).map(|i| n as f64 - i as f64 - 0.5).collect()
}

/// The label of the row whose centre is `v` on a 0..n axis (empty between rows).
pub(super) fn row_label(labels: &[String], n: usize, v: f64) -> String {
    let i = (n as f64 - v - 0.5).round();
    if i >= 0.0 {
        labels.get(i as usize).cloned().unwrap_or_default()
    } else {
        String::new()
    }
}

/// The fill of a status: pass light grey, fail dark grey, outside the method hatched.
pub(super) fn status_fill(root: &Area, status: Status, (x0, y0, x1, y1): PxBox) -> Drawn {
    match status {
        Status::Pass => root.draw(&Rectangle::new([(x0, y0), (x1, y1)], BAR.filled())),
        Status::Fail => root.draw(&Rectangle::new([(x0, y0), (x1, y1)], DARK.filled())),
        Status::OutsideMethod => hatch(root, (x0, y0, x1, y1), 5),
    }
}

/// The key of the three status fills on one line from (x, y); returns where it ends.
pub(super) fn status_key(
    root: &Area,
    mut x: i32,
    y: i32,
) -> Result<i32, DrawingAreaErrorKind<std::io::Error>> {
    let key_font = font(11.0, HPos::Left, VPos::Center);
    for (status, label) in [
        (Status::Pass, "pass"),
        (Status::Fail, "FAIL"),
        (Status::OutsideMethod, "OUTSIDE METHOD"),
    ] {
        let r = (x, y - 5, x + 22, y + 5);
        status_fill(root, status, r)?;
        root.draw(&Rectangle::new(
            [(r.0, r.1), (r.2, r.3)],
            INK.stroke_width(1),
        ))?;
        root.draw_text(label, &key_font, (x + 28, y))?;
        x += 28 + text_width(label, 11.0) + 20;
    }
    Ok(x)
}

/// Diagonal hatching at 45° inside a pixel rectangle (x0, y0, x1, y1), `gap` px apart.
pub(super) fn hatch(root: &Area, (x0, y0, x1, y1): PxBox, gap: i32) -> Drawn {
    let (left, right) = (x0.min(x1), x0.max(x1));
    let (top, bottom) = (y0.min(y1), y0.max(y1));
    let (w, h) = (right - left, bottom - top);
    if w <= 0 || h <= 0 {
        return Ok(());
    }
    let mut d = -h;
    while d < w {
        // Line from (left + d, bottom) up and right at 45°, clipped to the rectangle.
        let t0 = (-d).max(0);
        let t1 = (w - d).min(h);
        if t0 < t1 {
            root.draw(&PathElement::new(
                vec![(left + d + t0, bottom - t0), (left + d + t1, bottom - t1)],
                INK.stroke_width(1),
            ))?;
        }
        d += gap;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bar_labels_fit_the_label_area() {
        // Short ids and 34 narrow characters are kept whole.
        assert_eq!(bar_label("RG3-W01", 11.0), "RG3-W01");
        let narrow = "d".repeat(BAR_MAX_LABEL_CHARS);
        assert_eq!(bar_label(&narrow, 11.0), narrow);
        // Wide capitals are cut to the area (about 220 px), marked with "…".
        let wide = bar_label(&"W".repeat(60), 11.0);
        assert!(wide.ends_with('…'), "{wide}");
        assert!(f64::from(text_width(&wide, 11.0)) * 1.1 <= 206.0, "{wide}");
        assert!(wide.chars().count() > 15, "{wide}");
    }
}
