//! The S-N diagram of a fatigue test evaluation.

use super::sn::{curve_path, Occupancy, CURVE_POINT_PLACES, MARKER_PLACES};
use super::*;
use crate::fit::{Evaluation, FitResults, LinePoint};

/// Size of the test-evaluation diagram, px.
pub const FIT_SIZE: (u32, u32) = (640, 430);

/// Log-log diagram of the tests: failures (filled circles), run-outs (hollow circles
/// with an arrow toward longer life), the mean and characteristic lines with the slope
/// free (solid thin, dashed) and fixed (grey long dashes, dots), the family's curve
/// through the supported category (thick grey) and the characteristic range at the
/// reference cycles (diamond).
pub fn fit_diagram(f: &FitResults) -> String {
    let plan = FitPlan::new(f);
    render(FIT_SIZE, |root| draw_fit(root, f, &plan))
}

/// The free- and fixed-slope evaluations drawn: those the category rests on
/// (maximum likelihood with `--censored`, else least squares).
fn drawn(f: &FitResults) -> (Option<&Evaluation>, Option<&Evaluation>) {
    let censored = f.category.basis.ends_with("-censored");
    let pick = |id: &str| {
        let want = if censored {
            format!("{id}-censored")
        } else {
            id.to_string()
        };
        f.evaluations.iter().find(|e| e.id == want)
    };
    (pick("free"), pick("fixed"))
}

struct FitPlan {
    x: (f64, f64),
    y: (f64, f64),
}

impl FitPlan {
    fn new(f: &FitResults) -> FitPlan {
        let cycles = f
            .specimens
            .iter()
            .map(|s| s.cycles)
            .filter(|v| positive(*v));
        let n_lo = cycles.clone().fold(f64::MAX, f64::min);
        let n_hi = cycles.fold(0.0, f64::max);
        let mut x_lo: f64 = 1e4;
        let mut x_hi: f64 = 1e8;
        if n_lo < f64::MAX {
            x_lo = x_lo.min(decade_floor(n_lo / 2.0));
            x_hi = x_hi.max(decade_ceil(n_hi * 2.0));
        }
        let x_lo = x_lo.max(1.0);
        let x_hi = x_hi.min(1e13).max(x_lo * 10.0);
        let mut vals: Vec<f64> = f.specimens.iter().map(|s| s.range_mpa).collect();
        vals.extend(f.category.characteristic_range_mpa);
        vals.extend(f.category.category_mpa);
        let lo = vals
            .iter()
            .copied()
            .filter(|v| positive(*v))
            .fold(f64::MAX, f64::min);
        let hi = vals
            .iter()
            .copied()
            .filter(|v| positive(*v))
            .fold(0.0, f64::max);
        let (y_lo, y_hi) = if lo < f64::MAX {
            // Room below for the category curve's knee.
            let y_lo = nice_down(lo / 1.6);
            (y_lo, nice_up(hi * 1.3).max(y_lo * 5.0))
        } else {
            (10.0, 1000.0)
        };
        FitPlan {
            x: (x_lo, x_hi),
            y: (y_lo, y_hi),
        }
    }
}

fn points(line: &[LinePoint]) -> Vec<Pt> {
    line.iter().map(|p| (p.cycles, p.range_mpa)).collect()
}

/// How one line series is drawn.
#[derive(Clone, Copy)]
enum Stroke {
    Thin,
    Dashed,
    LongDash,
    Dots,
    Category,
}

fn stroke_piece(root: &Area, s: Stroke, px: Vec<(i32, i32)>) -> Drawn {
    match s {
        Stroke::Thin => root.draw(&PathElement::new(px, INK.stroke_width(1))),
        Stroke::Dashed => root.draw(&DashedPathElement::new(px, 7, 4, INK.stroke_width(1))),
        Stroke::LongDash => root.draw(&DashedPathElement::new(px, 14, 5, MID.stroke_width(2))),
        Stroke::Dots => root.draw(&DottedPathElement::new(px, 0, 6, |p| {
            Circle::new(p, 2, INK.filled())
        })),
        Stroke::Category => root.draw(&PathElement::new(px, BAR.stroke_width(5))),
    }
}

fn runout_mark(root: &Area, (x, y): (i32, i32)) -> Drawn {
    root.draw(&PathElement::new(
        vec![(x + 4, y), (x + 14, y)],
        INK.stroke_width(1),
    ))?;
    root.draw(&Polygon::new(
        vec![(x + 16, y), (x + 11, y - 3), (x + 11, y + 3)],
        INK.filled(),
    ))?;
    marker(root, Marker::Circle { filled: false }, (x, y))
}

fn draw_fit(root: &Area, f: &FitResults, plan: &FitPlan) -> Drawn {
    const PLOT_W: u32 = 438;
    let (x_lo, x_hi) = plan.x;
    let (y_lo, y_hi) = plan.y;
    let sym = &f.family.range_symbol;
    let title = format!(
        "Fatigue tests {}: {} failures, {} run-outs",
        shortened(&f.input.file_name, 34),
        f.failures,
        f.runouts
    );
    root.draw_text(&title, &font(13.0, HPos::Left, VPos::Top), (10, 9))?;

    let (plot, side) = root.split_horizontally(PLOT_W);
    let y_major = log_ticks(y_lo, y_hi, &[1.0, 2.0, 5.0]);
    let chart = sn_axes(&plot, plan.x, plan.y, y_major, &format!("{sym} (MPa)"))?;
    let clip = |pts: &[Pt]| clip_log(pts, plan.x, plan.y);
    let corner_lo = chart.as_coord_spec().translate(&(x_lo, y_lo));
    let corner_hi = chart.as_coord_spec().translate(&(x_hi, y_hi));
    let mut free_px = Occupancy::new((corner_lo.0, corner_hi.1, corner_hi.0, corner_lo.1));
    let mut stroke = |s: Stroke, piece: &[Pt]| -> Drawn {
        let px = to_px(&chart, piece);
        free_px.add_path(&px);
        stroke_piece(root, s, px)
    };

    // The category curve first, under everything else.
    if let Some(cv) = &f.category_curve {
        let (main, tail) = curve_path(cv, x_lo, x_hi);
        for piece in clip(&main).into_iter().chain(clip(&tail)) {
            stroke(Stroke::Category, &piece)?;
        }
    }
    let (free, fixed) = drawn(f);
    for (e, mean, ch) in [
        (fixed, Stroke::LongDash, Stroke::Dots),
        (free, Stroke::Thin, Stroke::Dashed),
    ] {
        let Some(e) = e else { continue };
        for piece in clip(&points(&e.mean_line)) {
            stroke(mean, &piece)?;
        }
        for piece in clip(&points(&e.characteristic_line)) {
            stroke(ch, &piece)?;
        }
    }
    let inside = |p: Pt| p.0 >= x_lo && p.0 <= x_hi && p.1 >= y_lo && p.1 <= y_hi;
    for s in &f.specimens {
        let p = (s.cycles, s.range_mpa);
        if !inside(p) {
            continue;
        }
        let q = chart.as_coord_spec().translate(&p);
        if s.runout {
            free_px.add_box((q.0 - 4, q.1 - 4, q.0 + 17, q.1 + 4));
            runout_mark(root, q)?;
        } else {
            free_px.add_box((q.0 - 4, q.1 - 4, q.0 + 4, q.1 + 4));
            marker(root, Marker::Circle { filled: true }, q)?;
        }
    }
    // The characteristic range at the reference cycles and the category there,
    // labelled clear of the lines and markers.
    let n_ref = f.family.reference_cycles;
    let mut labels = Vec::new();
    if let Some(c) = f.category.category_mpa {
        let p = (n_ref, c);
        if inside(p) {
            let q = chart.as_coord_spec().translate(&p);
            free_px.add_box((q.0 - 4, q.1 - 4, q.0 + 4, q.1 + 4));
            marker(root, Marker::Square, q)?;
            let text = format!("{} = {}", f.family.category_symbol, fmt_num(c, 1));
            labels.push((q, text, &CURVE_POINT_PLACES));
        }
    }
    if let Some(dk) = f.category.characteristic_range_mpa {
        let p = (n_ref, dk);
        if inside(p) {
            let q = chart.as_coord_spec().translate(&p);
            free_px.add_box((q.0 - 6, q.1 - 6, q.0 + 6, q.1 + 6));
            // A paper-coloured rim keeps the diamond clear of the line through it.
            let rim = vec![
                (q.0, q.1 - 7),
                (q.0 + 7, q.1),
                (q.0, q.1 + 7),
                (q.0 - 7, q.1),
            ];
            root.draw(&Polygon::new(rim, PAPER.filled()))?;
            marker(root, Marker::Diamond, q)?;
            labels.push((q, format!("{sym}k = {}", fmt_fixed(dk, 1)), &MARKER_PLACES));
        }
    }
    for (q, text, places) in labels {
        let (pos, h, v) = free_px.place(q, &text, 11.0, places);
        root.draw_text(&text, &font(11.0, h, v), pos)?;
    }
    draw_fit_key(&side, f, free, fixed)
}

fn draw_fit_key(
    side: &Area,
    f: &FitResults,
    free: Option<&Evaluation>,
    fixed: Option<&Evaluation>,
) -> Drawn {
    let x0 = 4;
    let tx = x0 + 34;
    let mut y = 46;
    let line_h = 15;
    let body = font(11.0, HPos::Left, VPos::Center);
    let sym = &f.family.range_symbol;
    let censored = f.category.basis.ends_with("-censored");
    let texts = |y: &mut i32, lines: &[String]| -> Drawn {
        for (i, l) in lines.iter().enumerate() {
            side.draw_text(l, &body, (tx, *y + i as i32 * line_h))?;
        }
        *y += line_h * lines.len() as i32 + 6;
        Ok(())
    };
    let mid = x0 + 10;
    marker(side, Marker::Circle { filled: true }, (mid, y))?;
    texts(&mut y, &["failure".into()])?;
    runout_mark(side, (mid - 4, y))?;
    texts(
        &mut y,
        &[if censored {
            "run-out (censored)".into()
        } else {
            "run-out (excluded)".into()
        }],
    )?;
    let m = |e: Option<&Evaluation>| e.map_or_else(String::new, |e| fmt_num(e.slope_m, 2));
    for (stroke, lines) in [
        (
            Stroke::Thin,
            vec![format!("mean, free slope m = {}", m(free))],
        ),
        (Stroke::Dashed, vec!["characteristic, free slope".into()]),
        (
            Stroke::LongDash,
            vec![format!("mean, fixed slope m = {}", m(fixed))],
        ),
        (Stroke::Dots, vec!["characteristic, fixed slope".into()]),
    ] {
        stroke_piece(side, stroke, vec![(x0, y), (x0 + 28, y)])?;
        texts(&mut y, &lines)?;
    }
    if let Some(c) = f.category.category_mpa {
        stroke_piece(side, Stroke::Category, vec![(x0, y), (x0 + 28, y)])?;
        texts(
            &mut y,
            &[format!(
                "{} curve, {} = {}",
                f.family.id,
                f.family.category_symbol,
                fmt_num(c, 1)
            )],
        )?;
    }
    marker(side, Marker::Diamond, (mid, y))?;
    texts(
        &mut y,
        &[
            format!("{sym}k at N = {}", fmt_cycles(f.family.reference_cycles)),
            "(category basis)".into(),
        ],
    )?;
    let head = bold(11.0, HPos::Left, VPos::Center);
    y += 4;
    side.draw_text("Characteristic curve", &head, (x0, y))?;
    y += line_h;
    let method = if f.method.kind == "tolerance" {
        "95 % survival, 75 % confidence"
    } else {
        "95 % prediction limit"
    };
    side.draw_text(method, &body, (x0, y))?;
    if let Some(e) = fixed {
        y += line_h;
        side.draw_text(
            &format!("n = {}, s = {}", e.n, fmt_fixed(e.std_dev_log10, 3)),
            &body,
            (x0, y),
        )?;
        if let Some(c) = &e.characteristic {
            y += line_h;
            side.draw_text(
                &format!("k = {} (fixed slope)", fmt_fixed(c.factor_k, 3)),
                &body,
                (x0, y),
            )?;
        }
    }
    Ok(())
}
