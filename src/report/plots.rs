//! SVG figures of the calculation package: the S-N diagram of one stress component, the
//! utilisation chart of all details, and the range histogram and range-mean matrix of a
//! counted record.
//!
//! Every function is pure: it reads the results model and returns a whole SVG document,
//! and the same input gives the same bytes. Series are told apart by line style,
//! markers, hatching and grey level, never by colour, so that a figure reads the same
//! printed in black and white. Text is written as SVG `<text>` in Libertinus Serif, a
//! font that Typst embeds and uses when it places the figure.

use std::ops::Range;

use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::element::{DashedPathElement, DottedPathElement};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::results::{
    BlockResult, ComponentResult, CountedRecord, CurveResult, DetailResult, HistogramBin,
    MatrixCell, Status,
};

/// Font family of every text element.
pub const FONT_FAMILY: &str = "Libertinus Serif";
/// Size of the S-N diagram, px.
pub const SN_SIZE: (u32, u32) = (640, 420);
/// Size of the range histogram, px.
pub const HISTOGRAM_SIZE: (u32, u32) = (640, 360);
/// Size of the range-mean matrix, px.
pub const HEATMAP_SIZE: (u32, u32) = (640, 440);
/// Width of the utilisation chart, px; its height grows with the number of bars.
pub const UTILISATION_WIDTH: u32 = 640;
/// Most bars in the utilisation chart; beyond this the highest are shown.
pub const UTILISATION_MAX_BARS: usize = 60;

type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;
type Drawn = Result<(), DrawingAreaErrorKind<std::io::Error>>;
type Pt = (f64, f64);
/// A pixel box (x0, y0, x1, y1).
type PxBox = (i32, i32, i32, i32);

const INK: RGBColor = RGBColor(0, 0, 0);
const DARK: RGBColor = RGBColor(64, 64, 64);
const MID: RGBColor = RGBColor(110, 110, 110);
const BAR: RGBColor = RGBColor(190, 190, 190);
const GRID_MAJOR: RGBColor = RGBColor(180, 180, 180);
const GRID_MINOR: RGBColor = RGBColor(228, 228, 228);
const PAPER: RGBColor = RGBColor(255, 255, 255);

// ---------------------------------------------------------------------------------
// S-N diagram
// ---------------------------------------------------------------------------------

/// Log-log S-N diagram of one stress component: the characteristic curve (solid, cut-off
/// dotted), the design curve after γMf (dashed), the labelled reference point and knees,
/// the design spectrum over the design life as a stepped cumulative line with a marker
/// per block (hollow below the cut-off), and the damage-equivalent range at the
/// reference cycles.
pub fn sn_diagram(c: &ComponentResult, design_life_years: f64) -> String {
    let plan = SnPlan::new(c);
    render(SN_SIZE, |root| draw_sn(root, c, design_life_years, &plan))
}

/// One step of the cumulative spectrum: `cycles` blocks at or above `range`.
#[derive(Debug, Clone, PartialEq)]
struct Step {
    cycles: f64,
    range: f64,
    damaging: bool,
}

/// Blocks sorted by design range, largest first, with cumulative cycles over the
/// design life. Blocks without a positive range or cycles cannot sit on a log plot.
fn spectrum(blocks: &[BlockResult]) -> Vec<Step> {
    let mut sorted: Vec<&BlockResult> = blocks
        .iter()
        .filter(|b| positive(b.design_range_mpa) && positive(b.cycles_design_life))
        .collect();
    // Stable sort: equal ranges keep their input order.
    sorted.sort_by(|a, b| b.design_range_mpa.total_cmp(&a.design_range_mpa));
    let mut n = 0.0;
    sorted
        .iter()
        .map(|b| {
            n += b.cycles_design_life;
            Step {
                cycles: n,
                range: b.design_range_mpa,
                damaging: b.damage > 0.0,
            }
        })
        .collect()
}

/// Axis ranges of the S-N diagram and the data to draw.
struct SnPlan {
    x: (f64, f64),
    y: (f64, f64),
    steps: Vec<Step>,
}

impl SnPlan {
    fn new(c: &ComponentResult) -> SnPlan {
        let steps = spectrum(&c.blocks);
        let ch = &c.characteristic_curve;
        let de = &c.design_curve;

        // Cycles: at least 10^4 to 10^9, widened by decades to hold every point with
        // some room, and a decade right of the last knee for its label.
        let mut x_lo: f64 = 1e4;
        let mut x_hi: f64 = 1e9;
        if let Some(first) = steps.first() {
            x_lo = x_lo.min(decade_floor(first.cycles / 2.0));
        }
        if let Some(last) = steps.last() {
            x_hi = x_hi.max(decade_ceil(last.cycles * 2.0));
        }
        if positive(ch.reference_cycles) {
            x_lo = x_lo.min(decade_floor(ch.reference_cycles / 10.0));
        }
        for k in ch.knees.iter().chain(&de.knees) {
            if positive(k.cycles) {
                x_hi = x_hi.max(decade_ceil(k.cycles * 5.0));
            }
        }
        let x_lo = x_lo.max(1.0);
        let x_hi = x_hi.min(1e15).max(x_lo * 10.0);

        // Ranges: every block, knee and the equivalent range, and the first segment up
        // to twice the reference range.
        let mut lo: Vec<f64> = Vec::new();
        let mut hi: Vec<f64> = Vec::new();
        for s in &steps {
            lo.push(s.range);
            hi.push(s.range);
        }
        for cv in [ch, de] {
            lo.push(cv.reference_range_mpa);
            lo.extend(cv.knees.iter().map(|k| k.range_mpa));
            if !cv.cut_off {
                let (main, _) = curve_path(cv, x_lo, x_hi);
                lo.extend(main.last().map(|p| p.1));
            }
        }
        hi.push(2.0 * ch.reference_range_mpa);
        if positive(c.design_equivalent_range_mpa) {
            lo.push(c.design_equivalent_range_mpa);
            hi.push(c.design_equivalent_range_mpa);
        }
        let lo = lo
            .into_iter()
            .filter(|v| positive(*v))
            .fold(f64::MAX, f64::min);
        let hi = hi.into_iter().filter(|v| positive(*v)).fold(0.0, f64::max);
        let (y_lo, y_hi) = if lo < f64::MAX && hi > 0.0 {
            let y_lo = nice_down(lo / 1.25);
            (y_lo, nice_up(hi * 1.15).max(y_lo * 10.0))
        } else {
            (10.0, 1000.0)
        };
        SnPlan {
            x: (x_lo, x_hi),
            y: (y_lo, y_hi),
            steps,
        }
    }
}

/// The curve from `x_lo` to `x_hi` as straight pieces in log-log (vertices), and apart
/// from it the cut-off tail (horizontal from the last knee) when the curve has one.
fn curve_path(cv: &CurveResult, x_lo: f64, x_hi: f64) -> (Vec<Pt>, Vec<Pt>) {
    let Some(&m1) = cv.slopes.first() else {
        return (Vec::new(), Vec::new());
    };
    let (n_ref, s_ref) = (cv.reference_cycles, cv.reference_range_mpa);
    if !positive(n_ref) || !positive(s_ref) || !positive(m1) {
        return (Vec::new(), Vec::new());
    }
    // Range on a line of slope m through (N0, Δσ0): Δσ = Δσ0·(N0/N)^(1/m)
    // (EN 1993-1-9 eqs. (7.1)-(7.3) form, common to the IIW curves)
    let on_line = |n0: f64, s0: f64, m: f64, n: f64| s0 * (n0 / n).powf(1.0 / m);
    let first_knee = cv.knees.first().map_or(f64::INFINITY, |k| k.cycles);
    let start = x_lo.min(n_ref);
    let mut main = vec![(start, on_line(n_ref, s_ref, m1, start))];
    if n_ref > start && n_ref < first_knee {
        main.push((n_ref, s_ref));
    }
    for k in &cv.knees {
        if positive(k.range_mpa) && k.cycles > main[main.len() - 1].0 {
            main.push((k.cycles, k.range_mpa));
        }
    }
    let (n_end, s_end) = main[main.len() - 1];
    let end = x_hi.max(n_end);
    let mut tail = Vec::new();
    if cv.cut_off && !cv.knees.is_empty() {
        tail = vec![(n_end, s_end), (end, s_end)];
    } else {
        // The segment after the last knee continues without bound.
        let m = cv
            .slopes
            .get(cv.knees.len())
            .or(cv.slopes.last())
            .copied()
            .unwrap_or(m1);
        if end > n_end && positive(m) {
            main.push((end, on_line(n_end, s_end, m, end)));
        }
    }
    (main, tail)
}

fn draw_sn(root: &Area, c: &ComponentResult, years: f64, plan: &SnPlan) -> Drawn {
    const PLOT_W: u32 = 458;
    let (x_lo, x_hi) = plan.x;
    let (y_lo, y_hi) = plan.y;
    let ch = &c.characteristic_curve;
    let de = &c.design_curve;

    let title = format!(
        "{} stress, {} = {} MPa: S-N curves and design spectrum",
        capitalised(&c.component),
        c.category_symbol,
        fmt_num(c.category_mpa, 1)
    );
    root.draw_text(&title, &font(13.0, HPos::Left, VPos::Top), (10, 9))?;

    let (plot, side) = root.split_horizontally(PLOT_W);
    let x_major = log_ticks(x_lo, x_hi, &[1.0]);
    let x_minor = log_ticks(x_lo, x_hi, &[2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]);
    let y_decades = (y_hi / y_lo).log10();
    let y_major = if y_decades <= 3.2 {
        log_ticks(y_lo, y_hi, &[1.0, 2.0, 5.0])
    } else {
        log_ticks(y_lo, y_hi, &[1.0])
    };
    let y_minor: Vec<f64> = log_ticks(y_lo, y_hi, &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0])
        .into_iter()
        .filter(|v| !y_major.contains(v))
        .collect();

    let mut chart = ChartBuilder::on(&plot)
        .margin_top(34)
        .margin_right(12)
        .margin_left(4)
        .margin_bottom(4)
        .x_label_area_size(42)
        .y_label_area_size(50)
        .build_cartesian_2d(
            (x_lo..x_hi)
                .log_scale()
                .with_key_points(x_major)
                .with_light_points(x_minor),
            (y_lo..y_hi)
                .log_scale()
                .with_key_points(y_major)
                .with_light_points(y_minor),
        )?;
    let x_fmt = |v: &f64| pow10(v.log10().round() as i32);
    let y_fmt = |v: &f64| fmt_num(*v, 2);
    chart
        .configure_mesh()
        .x_desc("N (cycles)")
        .y_desc(format!("{} (MPa)", c.symbol))
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt)
        .label_style(font(11.0, HPos::Center, VPos::Center))
        .axis_desc_style(font(12.0, HPos::Center, VPos::Center))
        .bold_line_style(GRID_MAJOR.stroke_width(1))
        .light_line_style(GRID_MINOR.stroke_width(1))
        .axis_style(INK.stroke_width(1))
        .draw()?;
    chart.draw_series(std::iter::once(Rectangle::new(
        [(x_lo, y_lo), (x_hi, y_hi)],
        INK.stroke_width(1),
    )))?;

    let clip = |pts: &[Pt]| clip_log(pts, plan.x, plan.y);
    let corner_lo = chart.backend_coord(&(x_lo, y_lo));
    let corner_hi = chart.backend_coord(&(x_hi, y_hi));
    let mut free = Occupancy::new((corner_lo.0, corner_hi.1, corner_hi.0, corner_lo.1));

    // Spectrum first, so that the curves lie on top of it.
    if let Some(first) = plan.steps.first() {
        let mut path = vec![(x_lo, first.range)];
        for (i, s) in plan.steps.iter().enumerate() {
            if i > 0 {
                path.push((plan.steps[i - 1].cycles, s.range));
            }
            path.push((s.cycles, s.range));
        }
        for piece in clip(&path) {
            free.add_path(&to_px(&chart, &piece));
            chart.draw_series(std::iter::once(PathElement::new(
                piece,
                MID.stroke_width(2),
            )))?;
        }
    }

    // Design curve: dashed; its cut-off: fine dots.
    let (d_main, d_tail) = curve_path(de, x_lo, x_hi);
    for piece in clip(&d_main) {
        free.add_path(&to_px(&chart, &piece));
        chart.draw_series(std::iter::once(DashedPathElement::new(
            piece,
            8,
            4,
            INK.stroke_width(1),
        )))?;
    }
    for piece in clip(&d_tail) {
        free.add_path(&to_px(&chart, &piece));
        chart.draw_series(std::iter::once(DottedPathElement::new(piece, 0, 5, |p| {
            Circle::new(p, 1, INK.filled())
        })))?;
    }
    // Characteristic curve: solid; its cut-off: heavier dots.
    let (c_main, c_tail) = curve_path(ch, x_lo, x_hi);
    for piece in clip(&c_main) {
        free.add_path(&to_px(&chart, &piece));
        chart.draw_series(std::iter::once(PathElement::new(
            piece,
            INK.stroke_width(2),
        )))?;
    }
    for piece in clip(&c_tail) {
        free.add_path(&to_px(&chart, &piece));
        chart.draw_series(std::iter::once(DottedPathElement::new(piece, 0, 6, |p| {
            Circle::new(p, 2, INK.filled())
        })))?;
    }

    let inside = |p: Pt| p.0 >= x_lo && p.0 <= x_hi && p.1 >= y_lo && p.1 <= y_hi;

    // Spectrum markers: filled where the block does damage, hollow below the cut-off.
    for s in &plan.steps {
        let p = (s.cycles, s.range);
        if inside(p) {
            let q = chart.backend_coord(&p);
            free.add_box((q.0 - 5, q.1 - 5, q.0 + 5, q.1 + 5));
            marker(root, Marker::Circle { filled: s.damaging }, q)?;
        }
    }

    // Reference point and knees of the characteristic curve, labelled with their
    // symbols and values (MPa).
    let ref_label = reference_label(c);
    let mut points = vec![(
        (ch.reference_cycles, ch.reference_range_mpa),
        format!("{ref_label} = {}", fmt_num(ch.reference_range_mpa, 1)),
    )];
    for (i, k) in ch.knees.iter().enumerate() {
        points.push((
            (k.cycles, k.range_mpa),
            format!(
                "{} = {}",
                knee_symbol(k.symbol.as_deref(), i),
                fmt_fixed(k.range_mpa, 1)
            ),
        ));
    }
    let mut labels: Vec<((i32, i32), String, &[Place])> = Vec::new();
    for (p, label) in points {
        if inside(p) {
            let q = chart.backend_coord(&p);
            free.add_box((q.0 - 4, q.1 - 4, q.0 + 4, q.1 + 4));
            marker(root, Marker::Square, q)?;
            labels.push((q, label, &CURVE_POINT_PLACES));
        }
    }

    // Damage-equivalent design range at the reference cycles.
    let eq_symbol = equivalent_symbol(c);
    if positive(c.design_equivalent_range_mpa) {
        let p = (ch.reference_cycles, c.design_equivalent_range_mpa);
        if inside(p) {
            let q = chart.backend_coord(&p);
            free.add_box((q.0 - 6, q.1 - 6, q.0 + 6, q.1 + 6));
            marker(root, Marker::Diamond, q)?;
            let label = format!("{eq_symbol} = {}", fmt_fixed(p.1, 1));
            labels.push((q, label, &MARKER_PLACES));
        }
    }
    for (q, label, places) in labels {
        let (pos, h, v) = free.place(q, &label, 11.0, places);
        root.draw_text(&label, &font(11.0, h, v), pos)?;
    }

    draw_sn_key(&side, c, years, plan, &ref_label, &eq_symbol)
}

/// The key beside the S-N diagram: one line sample or marker per series, then the
/// design-curve values.
fn draw_sn_key(
    side: &Area,
    c: &ComponentResult,
    years: f64,
    plan: &SnPlan,
    ref_label: &str,
    eq_symbol: &str,
) -> Drawn {
    let ch = &c.characteristic_curve;
    let de = &c.design_curve;
    let x0 = 4;
    let tx = x0 + 34;
    let mut y = 46;
    let line_h = 15;
    let body = font(11.0, HPos::Left, VPos::Center);
    let mut entry = |sample: Sample, lines: &[String]| -> Drawn {
        draw_sample(side, sample, (x0, y), (x0 + 28, y))?;
        for (i, l) in lines.iter().enumerate() {
            side.draw_text(l, &body, (tx, y + i as i32 * line_h))?;
        }
        y += line_h * lines.len() as i32 + 6;
        Ok(())
    };
    entry(Sample::Solid, &["characteristic curve".into()])?;
    let design_note = if (c.gamma_mf - 1.0).abs() < 1e-12 {
        "= characteristic, γMf = 1".to_string()
    } else {
        format!("characteristic ÷ γMf = {}", fmt_num(c.gamma_mf, 3))
    };
    entry(Sample::Dashed, &["design curve".into(), design_note])?;
    if ch.cut_off || de.cut_off {
        entry(
            Sample::Dotted,
            &["cut-off: lower ranges".into(), "cause no damage".into()],
        )?;
    }
    if !plan.steps.is_empty() {
        entry(
            Sample::Spectrum,
            &[
                format!("design spectrum γFf·{},", c.symbol),
                format!("cumulative, {} years", fmt_num(years, 2)),
            ],
        )?;
        if plan.steps.iter().any(|s| !s.damaging) {
            let why = if c.constant_amplitude_rule_applied {
                "constant amplitude ≤ limit"
            } else {
                "below the cut-off"
            };
            entry(
                Sample::Hollow,
                &["block without damage:".into(), why.into()],
            )?;
        }
    }
    if positive(c.design_equivalent_range_mpa) {
        entry(
            Sample::Diamond,
            &[
                eq_symbol.to_string(),
                format!("at N = {}", fmt_cycles(ch.reference_cycles)),
            ],
        )?;
    }
    entry(Sample::Square, &["reference point, knees".into()])?;

    let head = bold(11.0, HPos::Left, VPos::Center);
    y += 4;
    side.draw_text("Design curve (MPa)", &head, (x0, y))?;
    y += line_h;
    side.draw_text(
        &format!("{ref_label}/γMf = {}", fmt_num(de.reference_range_mpa, 1)),
        &body,
        (x0, y),
    )?;
    for (i, k) in de.knees.iter().enumerate() {
        y += line_h;
        side.draw_text(
            &format!(
                "{}/γMf = {}",
                knee_symbol(k.symbol.as_deref(), i),
                fmt_fixed(k.range_mpa, 1)
            ),
            &body,
            (x0, y),
        )?;
    }
    y += line_h;
    let slopes: Vec<String> = de.slopes.iter().map(|m| fmt_num(*m, 2)).collect();
    side.draw_text(&format!("slopes m = {}", slopes.join(", ")), &body, (x0, y))?;
    y += line_h;
    let total: f64 = plan.steps.last().map_or(0.0, |s| s.cycles);
    side.draw_text(
        &format!("Σn = {} cycles", fmt_cycles(total)),
        &body,
        (x0, y),
    )?;
    y += line_h;
    side.draw_text(&format!("D = {}", fmt_sig(c.damage, 3)), &body, (x0, y))?;
    Ok(())
}

/// Where a label may sit beside its point: offset (px) and text anchor.
type Place = (i32, i32, HPos, VPos);

/// Labels of curve points: above right first (clear of a falling curve), then the
/// other corners.
const CURVE_POINT_PLACES: [Place; 4] = [
    (6, -5, HPos::Left, VPos::Bottom),
    (-6, 5, HPos::Right, VPos::Top),
    (-6, -5, HPos::Right, VPos::Bottom),
    (6, 5, HPos::Left, VPos::Top),
];

/// Labels of a lone marker: right, below, left, above.
const MARKER_PLACES: [Place; 4] = [
    (9, 0, HPos::Left, VPos::Center),
    (0, 8, HPos::Center, VPos::Top),
    (-9, 0, HPos::Right, VPos::Center),
    (0, -8, HPos::Center, VPos::Bottom),
];

/// Pixel boxes already drawn on in a plot area, to place labels clear of them.
struct Occupancy {
    area: PxBox,
    boxes: Vec<PxBox>,
}

impl Occupancy {
    fn new(area: PxBox) -> Occupancy {
        Occupancy {
            area,
            boxes: Vec::new(),
        }
    }

    fn add_box(&mut self, b: PxBox) {
        self.boxes.push(b);
    }

    /// A polyline in pixels, as small boxes every few pixels along it.
    fn add_path(&mut self, pts: &[(i32, i32)]) {
        for w in pts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let len = f64::from((b.0 - a.0).abs().max((b.1 - a.1).abs()));
            let steps = (len / 3.0).ceil().max(1.0) as i32;
            for i in 0..=steps {
                let t = f64::from(i) / f64::from(steps);
                let x = a.0 + (t * f64::from(b.0 - a.0)).round() as i32;
                let y = a.1 + (t * f64::from(b.1 - a.1)).round() as i32;
                self.boxes.push((x - 2, y - 2, x + 2, y + 2));
            }
        }
    }

    /// The first place for `text` at `anchor` that stays in the area and clear of
    /// everything drawn, else the one with the fewest clashes; the label's box is then
    /// taken.
    fn place(
        &mut self,
        anchor: (i32, i32),
        text: &str,
        px: f64,
        places: &[Place],
    ) -> ((i32, i32), HPos, VPos) {
        let w = text_width(text, px);
        let h = (px * 1.2).ceil() as i32;
        let label_box = |&(dx, dy, hp, vp): &Place| -> PxBox {
            let (x, y) = (anchor.0 + dx, anchor.1 + dy);
            let (x0, x1) = match hp {
                HPos::Left => (x, x + w),
                HPos::Right => (x - w, x),
                HPos::Center => (x - w / 2, x + w / 2),
            };
            let (y0, y1) = match vp {
                VPos::Bottom => (y - h, y + 2),
                VPos::Top => (y - 1, y + h),
                VPos::Center => (y - h / 2, y + h / 2),
            };
            (x0, y0, x1, y1)
        };
        let clashes = |b: PxBox| -> usize {
            let outside = b.0 < self.area.0 + 2
                || b.1 < self.area.1 + 2
                || b.2 > self.area.2 - 2
                || b.3 > self.area.3 - 2;
            self.boxes.iter().filter(|o| overlaps(b, **o)).count() + if outside { 1000 } else { 0 }
        };
        // The first clear place, else the one with the fewest clashes (first on ties).
        let mut best: Option<(usize, usize)> = None;
        for (i, p) in places.iter().enumerate() {
            let n = clashes(label_box(p));
            if best.is_none_or(|(_, fewest)| n < fewest) {
                best = Some((i, n));
            }
            if n == 0 {
                break;
            }
        }
        match best {
            Some((i, _)) => {
                let p = places[i];
                self.boxes.push(label_box(&p));
                ((anchor.0 + p.0, anchor.1 + p.1), p.2, p.3)
            }
            None => (anchor, HPos::Left, VPos::Bottom),
        }
    }
}

fn overlaps(a: PxBox, b: PxBox) -> bool {
    a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
}

/// Symbol of the reference range, with the size factor when it changes the category.
fn reference_label(c: &ComponentResult) -> String {
    let f = c.size.factor;
    if c.size.applies && (f - 1.0).abs() > 1e-9 {
        format!("{}·{}", fmt_num(f, 3), c.category_symbol)
    } else {
        c.category_symbol.clone()
    }
}

fn knee_symbol(symbol: Option<&str>, i: usize) -> String {
    symbol.map_or_else(|| format!("knee {}", i + 1), str::to_string)
}

/// γFf·ΔσE,2: the subscript names the 2·10^6 reference cycles where they apply.
fn equivalent_symbol(c: &ComponentResult) -> String {
    let n = c.characteristic_curve.reference_cycles;
    if (n - 2e6).abs() < 1.0 {
        format!("γFf·{}E,2", c.symbol)
    } else {
        format!("γFf·{}E", c.symbol)
    }
}

// ---------------------------------------------------------------------------------
// Utilisation chart
// ---------------------------------------------------------------------------------

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

struct BarLayout {
    font_px: f64,
    label_w: u32,
    height: u32,
    labels: Vec<String>,
}

const BAR_TOP: u32 = 52;
const BAR_BOTTOM: u32 = 70;
/// Room right of the axis for the value and the status words.
const BAR_NOTE_W: u32 = 150;
const BAR_MAX_LABEL_CHARS: usize = 34;

impl BarLayout {
    fn new(order: &[&DetailResult]) -> BarLayout {
        let n = order.len().max(1) as u32;
        let (pitch, font_px) = match n {
            0..=12 => (26, 11.0),
            13..=30 => (20, 11.0),
            _ => (13, 10.0),
        };
        let labels: Vec<String> = order
            .iter()
            .map(|d| shortened(&d.id, BAR_MAX_LABEL_CHARS))
            .collect();
        let widest = labels
            .iter()
            .map(|l| text_width(l, font_px))
            .max()
            .unwrap_or(0);
        let label_w = (widest as u32 + 14).clamp(60, 220);
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
fn utilisation_axis(max_u: f64) -> (f64, f64) {
    let top = if max_u.is_finite() { max_u * 1.05 } else { 2.0 };
    let top = top.clamp(1.2, 2.0);
    // Ticks per unit: 10 (step 0.1) or 5 (step 0.2); dividing keeps the values exact.
    let per_unit = if top <= 1.2 { 10.0 } else { 5.0 };
    ((top * per_unit - 1e-9).ceil() / per_unit, 1.0 / per_unit)
}

fn draw_utilisation(root: &Area, order: &[&DetailResult], total: usize, lay: &BarLayout) -> Drawn {
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
    let (x_max, step) = utilisation_axis(max_u);
    let per_unit = (1.0 / step).round();
    let ticks: Vec<f64> = (0..=((x_max * per_unit).round() as usize))
        .map(|i| i as f64 / per_unit)
        .collect();
    let centres: Vec<f64> = (0..n).map(|i| n as f64 - i as f64 - 0.5).collect();

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
    let y_fmt = |v: &f64| {
        let i = (n as f64 - v - 0.5).round();
        if i >= 0.0 {
            lay.labels.get(i as usize).cloned().unwrap_or_default()
        } else {
            String::new()
        }
    };
    chart
        .configure_mesh()
        .disable_y_mesh()
        .x_desc("utilisation (–), governing check of each detail")
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
    let mut kx = lay.label_w as i32 + 6;
    let key_font = font(11.0, HPos::Left, VPos::Center);
    for (status, label) in [
        (Status::Pass, "pass"),
        (Status::Fail, "FAIL"),
        (Status::OutsideMethod, "OUTSIDE METHOD"),
    ] {
        let r = (kx, ky - 5, kx + 22, ky + 5);
        match status {
            Status::Pass => root.draw(&Rectangle::new([(r.0, r.1), (r.2, r.3)], BAR.filled()))?,
            Status::Fail => root.draw(&Rectangle::new([(r.0, r.1), (r.2, r.3)], DARK.filled()))?,
            Status::OutsideMethod => hatch(root, r, 5)?,
        }
        root.draw(&Rectangle::new(
            [(r.0, r.1), (r.2, r.3)],
            INK.stroke_width(1),
        ))?;
        root.draw_text(label, &key_font, (kx + 28, ky))?;
        kx += 28 + text_width(label, 11.0) + 20;
    }
    draw_sample(root, Sample::Limit, (kx + 11, ky - 9), (kx + 11, ky + 9))?;
    root.draw_text("limit", &key_font, (kx + 20, ky))?;
    Ok(())
}

/// Diagonal hatching at 45° inside a pixel rectangle (x0, y0, x1, y1), `gap` px apart.
fn hatch(root: &Area, (x0, y0, x1, y1): PxBox, gap: i32) -> Drawn {
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

// ---------------------------------------------------------------------------------
// Range histogram
// ---------------------------------------------------------------------------------

/// Range histogram of a counted record: bars over the range bins (MPa, linear axis),
/// cycles per record on a log axis.
pub fn histogram(rec: &CountedRecord) -> String {
    render(HISTOGRAM_SIZE, |root| draw_histogram(root, rec))
}

fn draw_histogram(root: &Area, rec: &CountedRecord) -> Drawn {
    let (w, h) = HISTOGRAM_SIZE;
    root.draw_text(
        &format!("Range histogram of the counted record: {}", rec.event),
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

/// Where the record comes from and what the count found, one line.
fn record_line(rec: &CountedRecord) -> String {
    format!(
        "{}, column {}: {} samples; per record {} full and {} half cycles",
        rec.file, rec.column, rec.samples, rec.full_cycles, rec.half_cycles
    )
}

fn no_cycles(root: &Area, rec: &CountedRecord, (w, h): (u32, u32)) -> Drawn {
    root.draw(&Rectangle::new(
        [(10, 48), (w as i32 - 10, h as i32 - 10)],
        INK.stroke_width(1),
    ))?;
    let mid = (w as i32 / 2, h as i32 / 2);
    root.draw_text(
        "no cycles counted",
        &font(14.0, HPos::Center, VPos::Center),
        mid,
    )?;
    let why = if rec.constant {
        "the record is constant"
    } else {
        "no range above the gate"
    };
    root.draw_text(
        why,
        &font(11.0, HPos::Center, VPos::Center),
        (mid.0, mid.1 + 20),
    )?;
    Ok(())
}

// ---------------------------------------------------------------------------------
// Range-mean matrix
// ---------------------------------------------------------------------------------

/// The range-mean matrix of a counted record as a heat map: range on x, mean on y (MPa),
/// grey level by class of cycles per record (log classes), with a key of the classes.
/// Cells large enough carry their count.
pub fn matrix_heatmap(rec: &CountedRecord) -> String {
    render(HEATMAP_SIZE, |root| draw_heatmap(root, rec))
}

/// Class bounds of cycle counts: decades (every second one for wide spans), or 1-2-5
/// steps when the counts span two decades or less. Returns ascending bounds.
fn cycle_classes(c_lo: f64, c_hi: f64) -> Vec<f64> {
    let e_lo = c_lo.log10().floor() as i32;
    let e_hi = (c_hi.log10().floor() as i32 + 1).max(e_lo + 1);
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
fn class_grey(i: usize, k: usize) -> u8 {
    let t = if k <= 1 {
        0.5
    } else {
        i as f64 / (k - 1) as f64
    };
    // Lightness from 0.86 down to 0.12 (common practice for grey-scale maps).
    ((0.86 - 0.74 * t) * 255.0).round() as u8
}

fn class_of(bounds: &[f64], v: f64) -> usize {
    let k = bounds.len() - 1;
    (0..k).rev().find(|&i| v >= bounds[i]).unwrap_or(0)
}

fn draw_heatmap(root: &Area, rec: &CountedRecord) -> Drawn {
    let (w, h) = HEATMAP_SIZE;
    root.draw_text(
        &format!("Range-mean matrix of the counted record: {}", rec.event),
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

// ---------------------------------------------------------------------------------
// Shared drawing helpers
// ---------------------------------------------------------------------------------

/// Draw into an SVG string of the given size. Drawing into a string cannot fail on
/// I/O; should plotters report an error anyway, the figure says so instead.
fn render(size: (u32, u32), draw: impl FnOnce(&Area) -> Drawn) -> String {
    let mut buf = String::new();
    let result = {
        let root = SVGBackend::with_string(&mut buf, size).into_drawing_area();
        root.fill(&PAPER)
            .and_then(|()| draw(&root))
            .and_then(|()| root.present())
    };
    match result {
        Ok(()) => tidy_font_sizes(&buf),
        Err(e) => message_svg(size, &format!("figure not drawn: {e}")),
    }
}

/// plotters writes font-size as size/1.24 in full precision ("13.000000000000002");
/// round each to two decimals so that the attribute reads as set.
fn tidy_font_sizes(svg: &str) -> String {
    const KEY: &str = "font-size=\"";
    let mut out = String::with_capacity(svg.len());
    let mut rest = svg;
    while let Some(i) = rest.find(KEY) {
        let (head, tail) = rest.split_at(i + KEY.len());
        out.push_str(head);
        let end = tail.find('"').unwrap_or(tail.len());
        match tail[..end].parse::<f64>() {
            Ok(v) => out.push_str(&fmt_num(v, 2)),
            Err(_) => out.push_str(&tail[..end]),
        }
        rest = &tail[end..];
    }
    out.push_str(rest);
    out
}

/// A whole SVG document that only carries a message.
fn message_svg((w, h): (u32, u32), message: &str) -> String {
    format!(
        "<svg width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" xmlns=\"http://www.w3.org/2000/svg\">\n\
         <rect x=\"0\" y=\"0\" width=\"{w}\" height=\"{h}\" fill=\"#FFFFFF\" stroke=\"#000000\"/>\n\
         <text x=\"{}\" y=\"{}\" text-anchor=\"middle\" font-family=\"{FONT_FAMILY}\" font-size=\"12\">{}</text>\n\
         </svg>\n",
        w / 2,
        h / 2,
        xml_escape(message)
    )
}

fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c => out.push(c),
        }
    }
    out
}

/// Text style of `px` pixels.
fn font(px: f64, h: HPos, v: VPos) -> TextStyle<'static> {
    TextStyle::from((FONT_FAMILY, px * 1.24).into_font())
        .color(&INK)
        .pos(Pos::new(h, v))
}

/// Bold text style of `px` pixels.
fn bold(px: f64, h: HPos, v: VPos) -> TextStyle<'static> {
    TextStyle::from((FONT_FAMILY, px * 1.24, FontStyle::Bold).into_font())
        .color(&INK)
        .pos(Pos::new(h, v))
}

/// A linear axis with given tick values (plotters' own linear f64 axis chooses its
/// ticks itself).
struct Linear {
    inner: RangedCoordf64,
    ticks: Vec<f64>,
}

impl Linear {
    fn new(lo: f64, hi: f64, ticks: Vec<f64>) -> Linear {
        Linear {
            inner: (lo..hi).into(),
            ticks,
        }
    }
}

impl Ranged for Linear {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.inner.map(value, limit)
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            Vec::new()
        } else {
            self.ticks.clone()
        }
    }

    fn range(&self) -> Range<f64> {
        self.inner.range()
    }
}

/// Rough width of a text in pixels, for placement only: Libertinus Serif runs about
/// half an em for digits and lower case, less for stops and superscripts, more for
/// capitals.
fn text_width(s: &str, px: f64) -> i32 {
    let em: f64 = s
        .chars()
        .map(|c| match c {
            '.' | ',' | '·' | ':' | ';' | '\'' | ' ' | 'i' | 'l' | 'j' | 't' | 'f' | 'r' => 0.3,
            '⁰' | '¹' | '²' | '³' | '⁴' | '⁵' | '⁶' | '⁷' | '⁸' | '⁹' | '⁻' => {
                0.32
            }
            'm' | 'w' | 'M' | 'W' => 0.78,
            c if c.is_uppercase() => 0.68,
            _ => 0.5,
        })
        .sum();
    (em * px).ceil() as i32
}

#[derive(Debug, Clone, Copy)]
enum Marker {
    Circle { filled: bool },
    Square,
    Diamond,
}

fn marker(root: &Area, m: Marker, (x, y): (i32, i32)) -> Drawn {
    match m {
        Marker::Circle { filled: true } => root.draw(&Circle::new((x, y), 3, INK.filled())),
        Marker::Circle { filled: false } => {
            root.draw(&Circle::new((x, y), 3, PAPER.filled()))?;
            root.draw(&Circle::new((x, y), 3, INK.stroke_width(1)))
        }
        Marker::Square => {
            root.draw(&Rectangle::new(
                [(x - 3, y - 3), (x + 3, y + 3)],
                PAPER.filled(),
            ))?;
            root.draw(&Rectangle::new(
                [(x - 3, y - 3), (x + 3, y + 3)],
                INK.stroke_width(1),
            ))
        }
        Marker::Diamond => {
            let pts = vec![(x, y - 5), (x + 5, y), (x, y + 5), (x - 5, y)];
            root.draw(&Polygon::new(pts, INK.filled()))
        }
    }
}

#[derive(Debug, Clone, Copy)]
enum Sample {
    Solid,
    Dashed,
    Dotted,
    Spectrum,
    Hollow,
    Diamond,
    Square,
    Limit,
}

/// A key sample (or a straight line) from `a` to `b` in pixels.
fn draw_sample(root: &Area, s: Sample, a: (i32, i32), b: (i32, i32)) -> Drawn {
    let mid = ((a.0 + b.0) / 2, (a.1 + b.1) / 2);
    match s {
        Sample::Solid => root.draw(&PathElement::new(vec![a, b], INK.stroke_width(2))),
        Sample::Dashed => root.draw(&DashedPathElement::new(
            vec![a, b],
            8,
            4,
            INK.stroke_width(1),
        )),
        Sample::Dotted => root.draw(&DottedPathElement::new(vec![a, b], 0, 6, |p| {
            Circle::new(p, 2, INK.filled())
        })),
        Sample::Spectrum => {
            root.draw(&PathElement::new(vec![a, b], MID.stroke_width(2)))?;
            marker(root, Marker::Circle { filled: true }, mid)
        }
        Sample::Hollow => marker(root, Marker::Circle { filled: false }, mid),
        Sample::Diamond => marker(root, Marker::Diamond, mid),
        Sample::Square => marker(root, Marker::Square, mid),
        Sample::Limit => root.draw(&DashedPathElement::new(
            vec![a, b],
            9,
            3,
            INK.stroke_width(2),
        )),
    }
}

// ---------------------------------------------------------------------------------
// Axes and numbers
// ---------------------------------------------------------------------------------

fn positive(v: f64) -> bool {
    v.is_finite() && v > 0.0
}

fn decade_floor(v: f64) -> f64 {
    10f64.powi(v.log10().floor() as i32)
}

fn decade_ceil(v: f64) -> f64 {
    10f64.powi(v.log10().ceil() as i32)
}

/// Largest 1-2-5 value at or below `v`.
fn nice_down(v: f64) -> f64 {
    let b = decade_floor(v);
    [5.0, 2.0, 1.0]
        .into_iter()
        .map(|m| m * b)
        .find(|x| *x <= v * (1.0 + 1e-9))
        .unwrap_or(b)
}

/// Smallest 1-2-5 value at or above `v`.
fn nice_up(v: f64) -> f64 {
    let b = decade_floor(v);
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * b)
        .find(|x| *x >= v * (1.0 - 1e-9))
        .unwrap_or(10.0 * b)
}

/// Values m·10^k with m from `mults` that lie in [lo, hi], ascending.
fn log_ticks(lo: f64, hi: f64, mults: &[f64]) -> Vec<f64> {
    let e0 = lo.log10().floor() as i32;
    let e1 = hi.log10().ceil() as i32;
    let mut out = Vec::new();
    for e in e0..=e1 {
        for m in mults {
            let v = m * 10f64.powi(e);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    out
}

/// A linear axis from `lo` to `hi` with about `target` ticks on a 1-2-5 step: returns
/// the rounded ends, the ticks and the decimals the tick labels need.
fn linear_axis(lo: f64, hi: f64, target: usize) -> (f64, f64, Vec<f64>, usize) {
    let span = if hi > lo { hi - lo } else { hi.abs().max(1.0) };
    let step = nice_up(span / target as f64);
    let a = (lo / step + 1e-9).floor() * step;
    let mut b = (hi / step - 1e-9).ceil() * step;
    if b <= a {
        b = a + step;
    }
    let count = ((b - a) / step).round() as i64;
    let ticks = (0..=count).map(|i| a + i as f64 * step).collect();
    let dp = if step >= 1.0 {
        0
    } else {
        (-step.log10()).ceil() as usize
    };
    (a, b, ticks, dp)
}

/// "10" with a superscript exponent, as printed on log axes.
fn pow10(e: i32) -> String {
    const SUP: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::from("10");
    if e < 0 {
        s.push('⁻');
    }
    for d in e.unsigned_abs().to_string().bytes() {
        s.push(SUP[(d - b'0') as usize]);
    }
    s
}

/// Cycle count as m·10ⁿ with two significant digits, e.g. "4.5·10⁵", or "10⁶".
fn fmt_cycles(v: f64) -> String {
    if !positive(v) {
        return "0".into();
    }
    if v < 1e4 {
        return fmt_num(v, 1);
    }
    let mut e = v.log10().floor() as i32;
    let mut m = (v / 10f64.powi(e) * 10.0).round() / 10.0;
    if m >= 10.0 {
        m /= 10.0;
        e += 1;
    }
    if (m - 1.0).abs() < 1e-9 {
        pow10(e)
    } else {
        format!("{}·{}", fmt_num(m, 1), pow10(e))
    }
}

/// Count for tick labels and cells: plain below 10⁴, else as [`fmt_cycles`].
fn fmt_count(v: f64) -> String {
    if v.abs() < 1e4 {
        fmt_num(v, 2)
    } else {
        fmt_cycles(v)
    }
}

/// `v` with at most `dp` decimals, trailing zeros removed, minus sign U+2212.
fn fmt_num(v: f64, dp: usize) -> String {
    let mut s = format!("{v:.dp$}");
    if s.contains('.') {
        while s.ends_with('0') {
            s.pop();
        }
        if s.ends_with('.') {
            s.pop();
        }
    }
    if s == "-0" {
        s = "0".into();
    }
    s.replace('-', "−")
}

/// `v` with exactly `dp` decimals, minus sign U+2212.
fn fmt_fixed(v: f64, dp: usize) -> String {
    let s = format!("{v:.dp$}");
    let zero = format!("-{:.dp$}", 0.0);
    if s == zero {
        return s[1..].to_string();
    }
    s.replace('-', "−")
}

/// `v` to `sig` significant digits (small damage sums stay readable).
fn fmt_sig(v: f64, sig: usize) -> String {
    if v == 0.0 || !v.is_finite() {
        return fmt_num(v, 0);
    }
    let e = v.abs().log10().floor() as i32;
    let dp = (sig as i32 - 1 - e).max(0) as usize;
    if e < -4 {
        let m = v / 10f64.powi(e);
        return format!("{}·{}", fmt_num(m, sig - 1), pow10(e));
    }
    fmt_num(v, dp)
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

/// At most `max` characters, the rest replaced by an ellipsis.
fn shortened(s: &str, max: usize) -> String {
    if s.chars().count() <= max {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(max - 1).collect();
        t.push('…');
        t
    }
}

/// Clip a polyline given in data coordinates to the box x × y, in log-log space where
/// the curve pieces are straight. Returns the visible pieces.
fn clip_log(pts: &[Pt], x: (f64, f64), y: (f64, f64)) -> Vec<Vec<Pt>> {
    let lg: Vec<Pt> = pts
        .iter()
        .filter(|p| positive(p.0) && positive(p.1))
        .map(|p| (p.0.log10(), p.1.log10()))
        .collect();
    let lo = (x.0.log10(), y.0.log10());
    let hi = (x.1.log10(), y.1.log10());
    let mut pieces: Vec<Vec<Pt>> = Vec::new();
    let mut current: Vec<Pt> = Vec::new();
    for w in lg.windows(2) {
        match clip_segment(w[0], w[1], lo, hi) {
            Some((a, b)) => {
                let joins = current
                    .last()
                    .is_some_and(|l| (l.0 - a.0).abs() < 1e-12 && (l.1 - a.1).abs() < 1e-12);
                if !joins {
                    if current.len() > 1 {
                        pieces.push(std::mem::take(&mut current));
                    }
                    current.clear();
                    current.push(a);
                }
                current.push(b);
            }
            None => {
                if current.len() > 1 {
                    pieces.push(std::mem::take(&mut current));
                }
                current.clear();
            }
        }
    }
    if current.len() > 1 {
        pieces.push(current);
    }
    pieces
        .into_iter()
        .map(|p| {
            p.into_iter()
                .map(|(a, b)| (10f64.powf(a), 10f64.powf(b)))
                .collect()
        })
        .collect()
}

/// Liang-Barsky clipping of the segment p0-p1 to the box lo-hi (common practice).
fn clip_segment(p0: Pt, p1: Pt, lo: Pt, hi: Pt) -> Option<(Pt, Pt)> {
    let (dx, dy) = (p1.0 - p0.0, p1.1 - p0.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [
        (-dx, p0.0 - lo.0),
        (dx, hi.0 - p0.0),
        (-dy, p0.1 - lo.1),
        (dy, hi.1 - p0.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let r = q / p;
            if p < 0.0 {
                if r > t1 {
                    return None;
                }
                t0 = t0.max(r);
            } else {
                if r < t0 {
                    return None;
                }
                t1 = t1.min(r);
            }
        }
    }
    if t1 - t0 <= 0.0 && !(dx == 0.0 && dy == 0.0) {
        return None;
    }
    Some((
        (p0.0 + t0 * dx, p0.1 + t0 * dy),
        (p0.0 + t1 * dx, p0.1 + t1 * dy),
    ))
}

/// A path in data coordinates as backend pixels, to mark where lines run.
fn to_px<DB: DrawingBackend, CT: CoordTranslate<From = Pt>>(
    chart: &ChartContext<'_, DB, CT>,
    piece: &[Pt],
) -> Vec<(i32, i32)> {
    piece
        .iter()
        .map(|p| chart.as_coord_spec().translate(p))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::results::CurvePoint;

    fn knee(cycles: f64, range_mpa: f64, symbol: &str) -> CurvePoint {
        CurvePoint {
            cycles,
            range_mpa,
            symbol: Some(symbol.into()),
            name: None,
        }
    }

    /// EN 1993-1-9 Fig. 7.1 normal-stress curve (from memory): m = 3 to 5·10^6,
    /// m = 5 to 10^8, cut-off there.
    fn en_normal(cat: f64) -> CurveResult {
        let d = cat * 0.4f64.powf(1.0 / 3.0);
        let l = d * 0.05f64.powf(0.2);
        CurveResult {
            reference_cycles: 2e6,
            reference_range_mpa: cat,
            slopes: vec![3.0, 5.0],
            knees: vec![knee(5e6, d, "ΔσD"), knee(1e8, l, "ΔσL")],
            cut_off: true,
        }
    }

    #[test]
    fn curve_path_runs_through_reference_and_knees() {
        let (main, tail) = curve_path(&en_normal(100.0), 1e4, 1e9);
        // Start at 10^4 on m = 3: 100·(2e6/1e4)^(1/3) = 584.8 MPa (EN 1993-1-9 eq. (7.1) form, hand-worked)
        assert_eq!(main[0].0, 1e4);
        assert!((main[0].1 - 584.80).abs() < 0.01);
        assert_eq!(main[1], (2e6, 100.0));
        assert_eq!(main[2].0, 5e6);
        // ΔσD = 0.737·ΔσC, ΔσL = 0.405·ΔσC (EN 1993-1-9 Fig. 7.1, from memory)
        assert!((main[2].1 - 73.68).abs() < 0.01);
        assert!((main[3].1 - 40.47).abs() < 0.01);
        assert_eq!(main.len(), 4);
        // Cut-off: horizontal from ΔσL to the right edge.
        assert_eq!(tail, vec![(1e8, main[3].1), (1e9, main[3].1)]);
    }

    #[test]
    fn open_tail_continues_on_the_last_slope() {
        // IIW normal stress (from memory): m = 3 to 10^7, then m = 22 without cut-off
        let k = 90.0 * (2e6f64 / 1e7).powf(1.0 / 3.0);
        let cv = CurveResult {
            reference_cycles: 2e6,
            reference_range_mpa: 90.0,
            slopes: vec![3.0, 22.0],
            knees: vec![knee(1e7, k, "Δσk")],
            cut_off: false,
        };
        let (main, tail) = curve_path(&cv, 1e4, 1e9);
        assert!(tail.is_empty());
        let end = main[main.len() - 1];
        assert_eq!(end.0, 1e9);
        // Δσ(10^9) = Δσk·(10^7/10^9)^(1/22) (IIW 3.2.1 form, hand-worked: 0.8112·Δσk)
        assert!((end.1 / k - 0.01f64.powf(1.0 / 22.0)).abs() < 1e-12);
        assert!((end.1 / k - 0.8112).abs() < 1e-4);
    }

    #[test]
    fn single_segment_shear_curve() {
        // EN 1993-1-9 Fig. 7.2 (from memory): m = 5 to 10^8, ΔτL = (2/100)^(1/5)·ΔτC
        let l = 80.0 * 0.02f64.powf(0.2);
        let cv = CurveResult {
            reference_cycles: 2e6,
            reference_range_mpa: 80.0,
            slopes: vec![5.0],
            knees: vec![knee(1e8, l, "ΔτL")],
            cut_off: true,
        };
        let (main, tail) = curve_path(&cv, 1e4, 1e9);
        assert_eq!(main.len(), 3);
        assert!((main[2].1 - 36.6).abs() < 0.05);
        assert_eq!(tail.len(), 2);
    }

    #[test]
    fn clipping_in_log_space_keeps_straight_pieces() {
        // A line from (10, 1000) to (1000, 10) clipped to [10, 1000] × [10, 100]: it
        // enters at (100, 100) (log-log straight line, hand-worked).
        let pieces = clip_log(
            &[(10.0, 1000.0), (1000.0, 10.0)],
            (10.0, 1000.0),
            (10.0, 100.0),
        );
        assert_eq!(pieces.len(), 1);
        let p = &pieces[0];
        assert!((p[0].0 - 100.0).abs() < 1e-9 && (p[0].1 - 100.0).abs() < 1e-9);
        assert!((p[1].0 - 1000.0).abs() < 1e-9 && (p[1].1 - 10.0).abs() < 1e-9);
        // Wholly outside: nothing.
        assert!(clip_log(
            &[(10.0, 500.0), (1000.0, 200.0)],
            (10.0, 1000.0),
            (10.0, 100.0)
        )
        .is_empty());
    }

    #[test]
    fn ticks_and_nice_values() {
        assert_eq!(log_ticks(10.0, 1000.0, &[1.0, 2.0, 5.0]).len(), 7);
        assert_eq!(log_ticks(1e4, 1e9, &[1.0]).len(), 6);
        assert_eq!(nice_down(37.0), 20.0);
        assert_eq!(nice_up(37.0), 50.0);
        assert_eq!(nice_up(100.0), 100.0);
        let (a, b, ticks, dp) = linear_axis(-37.0, 58.0, 8);
        assert_eq!((a, b, dp), (-40.0, 60.0, 0));
        assert_eq!(ticks, vec![-40.0, -20.0, 0.0, 20.0, 40.0, 60.0]);
        let (_, _, ticks, dp) = linear_axis(0.0, 0.9, 8);
        assert_eq!((ticks.len(), dp), (6, 1));
        // Utilisation axis: at least 1.2 so that the limit shows, at most 2.0.
        assert_eq!(utilisation_axis(0.3), (1.2, 0.1));
        assert_eq!(utilisation_axis(1.5), (1.6, 0.2));
        assert_eq!(utilisation_axis(7.5).0, 2.0);
    }

    #[test]
    fn number_formats() {
        assert_eq!(pow10(4), "10⁴");
        assert_eq!(pow10(10), "10¹⁰");
        assert_eq!(pow10(-1), "10⁻¹");
        assert_eq!(fmt_cycles(450_000.0), "4.5·10⁵");
        assert_eq!(fmt_cycles(1e6), "10⁶");
        assert_eq!(fmt_cycles(9.96e5), "10⁶");
        assert_eq!(fmt_num(100.0, 1), "100");
        assert_eq!(fmt_num(-12.5, 1), "−12.5");
        assert_eq!(fmt_fixed(-0.0001, 1), "0.0");
        assert_eq!(fmt_sig(0.004412, 3), "0.00441");
        assert_eq!(fmt_count(2500.0), "2500");
        assert_eq!(fmt_count(0.5), "0.5");
    }

    #[test]
    fn font_sizes_come_out_clean() {
        let svg =
            "<text font-size=\"13.000000000000002\">a</text><text font-size=\"10.5\">b</text>";
        assert_eq!(
            tidy_font_sizes(svg),
            "<text font-size=\"13\">a</text><text font-size=\"10.5\">b</text>"
        );
        let real = render((100, 50), |root| {
            root.draw_text("x", &font(13.0, HPos::Left, VPos::Top), (1, 1))
        });
        assert!(real.contains("font-size=\"13\""), "{real}");
    }

    #[test]
    fn cycle_classes_cover_the_counts() {
        // Counts over four decades: one class per decade.
        let b = cycle_classes(3.0, 45_000.0);
        assert_eq!(b, vec![1.0, 10.0, 100.0, 1000.0, 1e4, 1e5]);
        assert_eq!(class_of(&b, 3.0), 0);
        assert_eq!(class_of(&b, 45_000.0), 4);
        assert_eq!(class_of(&b, 1000.0), 3);
        // Narrow span: 1-2-5 steps, empty end classes dropped.
        let b = cycle_classes(3.0, 40.0);
        assert_eq!(b, vec![2.0, 5.0, 10.0, 20.0, 50.0]);
        // Wide span: every second decade.
        let b = cycle_classes(0.5, 1e12);
        assert!(b.len() - 1 <= 8);
        assert!(b[0] <= 0.5 && b[b.len() - 1] > 1e12);
        // Darker for more cycles.
        assert!(class_grey(0, 5) > class_grey(4, 5));
    }
}
