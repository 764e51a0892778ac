//! Figures of the population of details: the distribution of utilisation, and the
//! spread of utilisation by detail type or by group.

use super::utilisation::{row_centres, row_label, status_fill, status_key, utilisation_ticks};
use super::*;
use crate::report::population::{PopulationRow, UtilisationBin, TOP_BIN_FROM};

/// Size of the utilisation distribution, px.
pub const DISTRIBUTION_SIZE: (u32, u32) = (640, 340);

/// Columns of details per utilisation bin, stacked by status (pass light, fail dark,
/// outside the method hatched), the limit 1.0 as a vertical line, the count over each
/// column.
pub fn utilisation_distribution(bins: &[UtilisationBin], details: usize) -> String {
    render(DISTRIBUTION_SIZE, |root| {
        draw_distribution(root, bins, details)
    })
}

fn draw_distribution(root: &Area, bins: &[UtilisationBin], details: usize) -> Drawn {
    root.draw_text(
        &format!("Distribution of utilisation over all {details} details"),
        &font(13.0, HPos::Left, VPos::Top),
        (10, 9),
    )?;
    let n = bins.len().max(1);
    let most = bins.iter().map(UtilisationBin::total).max().unwrap_or(0);
    let (_, y_hi, y_ticks, _) = linear_axis(0.0, (most as f64 * 1.12).max(1.0), 6);
    let y_ticks: Vec<f64> = y_ticks.into_iter().filter(|v| v.fract() == 0.0).collect();
    // Ticks at the bin edges every 0.2 (the axis runs in bins of 0.1).
    let x_ticks: Vec<f64> = (0..=n).filter(|k| k % 2 == 0).map(|k| k as f64).collect();
    let mut chart = ChartBuilder::on(root)
        .margin_top(40)
        .margin_right(20)
        .margin_left(8)
        .margin_bottom(4)
        .x_label_area_size(42)
        .y_label_area_size(52)
        .build_cartesian_2d(
            Linear::new(0.0, n as f64, x_ticks),
            Linear::new(0.0, y_hi, y_ticks),
        )?;
    let open_top = bins.last().is_some_and(|b| b.hi.is_none());
    let x_fmt = |v: &f64| {
        let k = v.round() as usize;
        if open_top && k + 1 >= n && k == n {
            String::new()
        } else {
            fmt_fixed(k as f64 / 10.0, 1)
        }
    };
    let y_fmt = |v: &f64| fmt_fixed(*v, 0);
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_desc("utilisation (–), bins of 0.1")
        .y_desc("details")
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .label_style(font(11.0, HPos::Center, VPos::Center))
        .axis_desc_style(font(12.0, HPos::Center, VPos::Center))
        .bold_line_style(GRID_MAJOR.stroke_width(1))
        .light_line_style(PAPER.stroke_width(0))
        .axis_style(INK.stroke_width(1))
        .draw()?;
    for (k, b) in bins.iter().enumerate() {
        let (x0, x1) = (k as f64 + 0.08, k as f64 + 0.92);
        let mut base = 0.0;
        for (count, status) in [
            (b.pass, Status::Pass),
            (b.fail, Status::Fail),
            (b.outside_method, Status::OutsideMethod),
        ] {
            if count == 0 {
                continue;
            }
            let top = base + count as f64;
            let a = chart.backend_coord(&(x0, top));
            let z = chart.backend_coord(&(x1, base));
            status_fill(root, status, (a.0, a.1, z.0, z.1))?;
            root.draw(&Rectangle::new([(a.0, a.1), z], INK.stroke_width(1)))?;
            base = top;
        }
        if b.total() > 0 {
            let p = chart.backend_coord(&(k as f64 + 0.5, base));
            root.draw_text(
                &b.total().to_string(),
                &font(10.0, HPos::Center, VPos::Bottom),
                (p.0, p.1 - 2),
            )?;
        }
    }
    if open_top {
        let p = chart.backend_coord(&(n as f64 - 0.5, 0.0));
        root.draw_text(
            &format!("≥ {}", fmt_fixed(TOP_BIN_FROM, 1)),
            &font(10.0, HPos::Center, VPos::Top),
            (p.0, p.1 + 18),
        )?;
    }
    let top = chart.backend_coord(&(10.0, y_hi));
    let bottom = chart.backend_coord(&(10.0, 0.0));
    draw_sample(root, Sample::Limit, top, bottom)?;
    root.draw_text(
        "limit 1.0",
        &font(11.0, HPos::Left, VPos::Top),
        (top.0 + 4, top.1 + 2),
    )?;
    status_key(root, DISTRIBUTION_SIZE.0 as i32 - 350, 24).map(|_| ())
}

const ROW_TOP: u32 = 50;
const ROW_BOTTOM: u32 = 64;
const ROW_PITCH: u32 = 16;
const ROW_NOTE_W: u32 = 170;
const ROW_LABEL_W: u32 = 190;

/// One line per row (a detail type or a group): a bar from the lowest to the highest
/// utilisation of its details, a tick at the median, a mark at the highest (filled
/// when a detail of the row fails) with its value and the detail that has it.
pub fn utilisation_spread(title: &str, rows: &[PopulationRow]) -> String {
    let n = rows.len().max(1) as u32;
    let size = (UTILISATION_WIDTH, ROW_TOP + n * ROW_PITCH + ROW_BOTTOM);
    render(size, |root| draw_spread(root, title, rows, size))
}

fn draw_spread(root: &Area, title: &str, rows: &[PopulationRow], size: (u32, u32)) -> Drawn {
    root.draw_text(title, &font(13.0, HPos::Left, VPos::Top), (10, 9))?;
    if rows.is_empty() {
        root.draw_text(
            "nothing to show",
            &font(12.0, HPos::Center, VPos::Center),
            (size.0 as i32 / 2, size.1 as i32 / 2),
        )?;
        return Ok(());
    }
    let n = rows.len();
    let px = 10.0;
    let fits = |s: &str| f64::from(text_width(s, px)) * 1.1 <= f64::from(ROW_LABEL_W - 14);
    let labels: Vec<String> = rows
        .iter()
        .map(|r| cut_end(&format!("{} ({})", r.name, r.details), fits))
        .collect();
    let max_u = rows
        .iter()
        .map(|r| r.max_utilisation)
        .filter(|u| u.is_finite())
        .fold(0.0, f64::max);
    let (x_max, ticks) = utilisation_ticks(max_u);
    let centres = row_centres(n);
    let mut chart = ChartBuilder::on(root)
        .margin_top(ROW_TOP)
        .margin_bottom(ROW_BOTTOM - 44)
        .margin_right(ROW_NOTE_W)
        .margin_left(6)
        .x_label_area_size(44)
        .y_label_area_size(ROW_LABEL_W)
        .build_cartesian_2d(
            Linear::new(0.0, x_max, ticks),
            Linear::new(0.0, n as f64, centres.clone()),
        )?;
    let x_fmt = |v: &f64| fmt_fixed(*v, 1);
    let y_fmt = |v: &f64| row_label(&labels, n, *v);
    chart
        .configure_mesh()
        .disable_y_mesh()
        .x_desc("utilisation (–): lowest to highest, | median, ◆ highest with a failure")
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .x_label_style(font(11.0, HPos::Center, VPos::Center))
        .y_label_style(font(px, HPos::Center, VPos::Center))
        .axis_desc_style(font(11.0, HPos::Center, VPos::Center))
        .bold_line_style(GRID_MAJOR.stroke_width(1))
        .light_line_style(PAPER.stroke_width(0))
        .axis_style(INK.stroke_width(1))
        .draw()?;
    let clamp = |u: f64| {
        if u.is_finite() {
            u.clamp(0.0, x_max)
        } else {
            x_max
        }
    };
    let limit_top = chart.backend_coord(&(1.0, n as f64));
    let limit_bottom = chart.backend_coord(&(1.0, 0.0));
    draw_sample(root, Sample::Limit, limit_top, limit_bottom)?;
    for (i, r) in rows.iter().enumerate() {
        let y = centres[i];
        let a = chart.backend_coord(&(clamp(r.min_utilisation), y));
        let b = chart.backend_coord(&(clamp(r.max_utilisation), y));
        root.draw(&Rectangle::new(
            [(a.0, a.1 - 3), (b.0.max(a.0 + 1), b.1 + 3)],
            BAR.filled(),
        ))?;
        root.draw(&Rectangle::new(
            [(a.0, a.1 - 3), (b.0.max(a.0 + 1), b.1 + 3)],
            INK.stroke_width(1),
        ))?;
        let m = chart.backend_coord(&(clamp(r.median_utilisation), y));
        root.draw(&PathElement::new(
            vec![(m.0, m.1 - 6), (m.0, m.1 + 6)],
            INK.stroke_width(2),
        ))?;
        let mark = if r.failed + r.outside_method > 0 {
            Marker::Diamond
        } else {
            Marker::Circle { filled: false }
        };
        marker(root, mark, b)?;
        let note = format!(
            "{} at {}",
            fmt_fixed(r.max_utilisation, 3),
            shortened(&r.governing_id, 18)
        );
        let nx = chart.backend_coord(&(x_max, y)).0 + 6;
        root.draw_text(&note, &font(px, HPos::Left, VPos::Center), (nx, b.1))?;
    }
    root.draw_text(
        "limit 1.0",
        &font(11.0, HPos::Center, VPos::Bottom),
        (limit_top.0, limit_top.1 - 4),
    )?;
    Ok(())
}
