//! SVG figures of the calculation package: the S-N diagram of one stress component, the
//! utilisation chart of all details, and the range histogram and range-mean matrix of a
//! counted record; and the diagram of a fatigue test evaluation.
//!
//! Every function is pure: it reads the results model and returns a whole SVG document,
//! and the same input gives the same bytes. Series are told apart by line style,
//! markers, hatching and grey level, never by colour, so that a figure reads the same
//! printed in black and white. Text is written as SVG `<text>` in Libertinus Serif, a
//! font that Typst embeds and uses when it places the figure.

mod fit;
mod histogram;
mod matrix;
mod population;
mod sn;
mod utilisation;

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

pub use fit::{fit_diagram, FIT_SIZE};
pub use histogram::histogram;
pub use matrix::matrix_heatmap;
pub use population::{utilisation_distribution, utilisation_spread, DISTRIBUTION_SIZE};
pub use sn::sn_diagram;
pub use utilisation::utilisation_chart;
#[cfg(test)]
use {matrix::*, sn::*, utilisation::*};

// ---------------------------------------------------------------------------------
// Shared drawing helpers
// ---------------------------------------------------------------------------------

/// Room for a line of 11 px text across a figure, pixels (the figures are 640 wide
/// and their text starts 10 px in).
const LINE_ROOM_PX: f64 = 620.0;

/// Where the record comes from and what the count found, one line that fits the
/// figure: a long file name or column is cut in the middle with "…" (the package text
/// above the figure names both in full).
fn record_line(rec: &CountedRecord) -> String {
    let line = |file: &str, column: &str| {
        format!(
            "{file}, column {column}: {} samples; per record {} full and {} half cycles",
            rec.samples, rec.full_cycles, rec.half_cycles
        )
    };
    // 10 % margin over the rough width estimate.
    let fits = |s: &str| f64::from(text_width(s, 11.0)) * 1.1 <= LINE_ROOM_PX;
    let column = shortened(&rec.column, 24);
    let file = cut_middle(&rec.file, |f| fits(&line(f, &column)));
    line(&file, &column)
}

/// A figure title naming a user text (an event): the text is cut at its end with "…"
/// so that the title, in 13 px type, fits the figure's width.
fn record_title(what: &str, name: &str) -> String {
    let fits = |n: &str| f64::from(text_width(&format!("{what}{n}"), 13.0)) * 1.1 <= LINE_ROOM_PX;
    format!("{what}{}", cut_end(name, fits))
}

/// `s` whole when `fits` accepts it, else as long a start of it with "…" as `fits`
/// allows.
fn cut_end(s: &str, fits: impl Fn(&str) -> bool) -> String {
    cut_with_mark(s, false, fits)
}

/// `s` whole when `fits` accepts it, else its start and end around a "…", as long as
/// `fits` allows.
fn cut_middle(s: &str, fits: impl Fn(&str) -> bool) -> String {
    cut_with_mark(s, true, fits)
}

fn cut_with_mark(s: &str, middle: bool, fits: impl Fn(&str) -> bool) -> String {
    if fits(s) {
        return s.to_string();
    }
    let c: Vec<char> = s.chars().collect();
    for keep in (1..c.len()).rev() {
        let head = if middle { keep.div_ceil(2) } else { keep };
        let tail = &c[c.len() - (keep - head)..];
        let t: String = c[..head].iter().chain(&['…']).chain(tail).collect();
        if fits(&t) {
            return t;
        }
    }
    "…".to_string()
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
            // advance widths of Libertinus Serif Regular (its hmtx table)
            'W' => 0.95,
            'M' => 0.84,
            'm' | 'w' | '…' => 0.78,
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
    // An axis end that is not a positive finite number has no decades to mark; the
    // exponents are clamped to those of f64 so the loop always ends.
    if !(positive(lo) && positive(hi)) || hi < lo {
        return Vec::new();
    }
    let e0 = (lo.log10().floor() as i32).clamp(-330, 310);
    let e1 = (hi.log10().ceil() as i32).clamp(-330, 310);
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
    // At most a few hundred ticks, whatever the ends (a span that overflowed to
    // infinity would otherwise ask for an endless list).
    let count = (((b - a) / step).round() as i64).clamp(0, 1000);
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

/// The log-log S-N axes shared by the S-N diagram and the test-evaluation diagram:
/// cycles N to the right in decades, the range up with ticks at `y_major` (MPa), light
/// grid lines, axis names and a frame round the plot.
fn sn_axes<'a, 'b>(
    plot: &'a Area<'b>,
    (x_lo, x_hi): (f64, f64),
    (y_lo, y_hi): (f64, f64),
    y_major: Vec<f64>,
    y_desc: &str,
) -> Result<
    ChartContext<'a, SVGBackend<'b>, impl CoordTranslate<From = Pt>>,
    DrawingAreaErrorKind<std::io::Error>,
> {
    let x_major = log_ticks(x_lo, x_hi, &[1.0]);
    let x_minor = log_ticks(x_lo, x_hi, &[2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]);
    let y_minor: Vec<f64> = log_ticks(y_lo, y_hi, &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0])
        .into_iter()
        .filter(|v| !y_major.contains(v))
        .collect();
    let mut chart = ChartBuilder::on(plot)
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
        .y_desc(y_desc)
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
    Ok(chart)
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

    #[test]
    fn long_file_names_are_cut_in_the_middle() {
        // Short: whole.
        assert_eq!(cut_middle("records/sg4.csv", |_| true), "records/sg4.csv");
        // Long: start and end kept around "…", as much as the test allows.
        let name = format!("records/{}.csv", "x".repeat(100));
        let cut = cut_middle(&name, |s| s.chars().count() <= 21);
        assert_eq!(cut, format!("records/{}…{}.csv", "xx", "xxxxxx"));
        assert_eq!(cut.chars().count(), 21);
        assert_eq!(cut_end(&name, |s| s.chars().count() <= 12), "records/xxx…");
        // A long event name in a figure title is cut to the figure's width.
        let title = record_title("Range histogram of the counted record: ", &"W".repeat(80));
        assert!(title.ends_with('…'), "{title}");
        assert!(f64::from(text_width(&title, 13.0)) * 1.1 <= LINE_ROOM_PX);
    }

    fn knee(cycles: f64, range_mpa: f64, symbol: &str) -> CurvePoint {
        CurvePoint {
            cycles,
            range_mpa,
            symbol: Some(symbol.into()),
            name: None,
        }
    }

    /// EN 1993-1-9 Fig. 7.1 normal-stress curve (from memory): m = 3 to 5·10^6,
    /// m = 5 to 10^8, cut-off there; knees by the formulas ΔσD = ΔσC·(2/5)^(1/3) and
    /// ΔσL = ΔσD·(5/100)^(1/5) (eqs. (7.2), (7.3)).
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
        // Start at 10^4 on m = 3: 100·(2e6/1e4)^(1/3) = 584.8035476 MPa (EN 1993-1-9
        // eq. (7.1) form; hand-worked to 10 significant figures by
        // tests/tools/hand_worked.py, hence the 1e-9 relative tolerance)
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * b.abs();
        assert_eq!(main[0].0, 1e4);
        assert!(close(main[0].1, 584.8035476));
        assert_eq!(main[1], (2e6, 100.0));
        assert_eq!(main[2].0, 5e6);
        // ΔσD = ΔσC·(2/5)^(1/3) = 73.68062997, ΔσL = ΔσD·(5/100)^(1/5) = 40.47131645 for
        // ΔσC = 100 (EN 1993-1-9 Fig. 7.1 knee formulas, eqs. (7.2), (7.3); hand-worked)
        assert!(close(main[2].1, 73.68062997));
        assert!(close(main[3].1, 40.47131645));
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
        // Δσ(10^9) = Δσk·(10^7/10^9)^(1/22) (IIW 3.2.1 form, from memory; hand-worked to
        // 10 significant figures: 0.8111308308·Δσk)
        assert!((end.1 / k - 0.01f64.powf(1.0 / 22.0)).abs() < 1e-12);
        assert!((end.1 / k - 0.8111308308).abs() < 1e-9);
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
        // ΔτL = 80·(2/100)^(1/5) = 36.58440415 (EN 1993-1-9 Fig. 7.2, hand-worked to 10
        // significant figures)
        assert!((main[2].1 - 36.58440415).abs() <= 1e-9 * 36.58440415);
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
