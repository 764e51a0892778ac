//! The S-N diagram of one stress component, its key and label placement.

use super::*;

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
pub(super) struct Step {
    pub(super) cycles: f64,
    pub(super) range: f64,
    pub(super) damaging: bool,
}

/// Blocks sorted by design range, largest first, with cumulative cycles over the
/// design life. Blocks without a positive range or cycles cannot sit on a log plot.
pub(super) fn spectrum(blocks: &[BlockResult]) -> Vec<Step> {
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
pub(super) struct SnPlan {
    pub(super) x: (f64, f64),
    pub(super) y: (f64, f64),
    pub(super) steps: Vec<Step>,
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
pub(super) fn curve_path(cv: &CurveResult, x_lo: f64, x_hi: f64) -> (Vec<Pt>, Vec<Pt>) {
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

pub(super) fn draw_sn(root: &Area, c: &ComponentResult, years: f64, plan: &SnPlan) -> Drawn {
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
    let y_decades = (y_hi / y_lo).log10();
    let y_major = if y_decades <= 3.2 {
        log_ticks(y_lo, y_hi, &[1.0, 2.0, 5.0])
    } else {
        log_ticks(y_lo, y_hi, &[1.0])
    };
    let mut chart = sn_axes(
        &plot,
        plan.x,
        plan.y,
        y_major,
        &format!("{} (MPa)", c.symbol),
    )?;

    let clip = |pts: &[Pt]| clip_log(pts, plan.x, plan.y);
    let corner_lo = chart.as_coord_spec().translate(&(x_lo, y_lo));
    let corner_hi = chart.as_coord_spec().translate(&(x_hi, y_hi));
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
            let q = chart.as_coord_spec().translate(&p);
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
            let q = chart.as_coord_spec().translate(&p);
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
            let q = chart.as_coord_spec().translate(&p);
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
pub(super) fn draw_sn_key(
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
pub(super) type Place = (i32, i32, HPos, VPos);

/// Labels of curve points: above right first (clear of a falling curve), then the
/// other corners.
pub(super) const CURVE_POINT_PLACES: [Place; 4] = [
    (6, -5, HPos::Left, VPos::Bottom),
    (-6, 5, HPos::Right, VPos::Top),
    (-6, -5, HPos::Right, VPos::Bottom),
    (6, 5, HPos::Left, VPos::Top),
];

/// Labels of a lone marker: right, below, left, above.
pub(super) const MARKER_PLACES: [Place; 4] = [
    (9, 0, HPos::Left, VPos::Center),
    (0, 8, HPos::Center, VPos::Top),
    (-9, 0, HPos::Right, VPos::Center),
    (0, -8, HPos::Center, VPos::Bottom),
];

/// Pixel boxes already drawn on in a plot area, to place labels clear of them.
pub(super) struct Occupancy {
    pub(super) area: PxBox,
    pub(super) boxes: Vec<PxBox>,
}

impl Occupancy {
    pub(super) fn new(area: PxBox) -> Occupancy {
        Occupancy {
            area,
            boxes: Vec::new(),
        }
    }

    pub(super) fn add_box(&mut self, b: PxBox) {
        self.boxes.push(b);
    }

    /// A polyline in pixels, as small boxes every few pixels along it.
    pub(super) fn add_path(&mut self, pts: &[(i32, i32)]) {
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
    pub(super) fn place(
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

pub(super) fn overlaps(a: PxBox, b: PxBox) -> bool {
    a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
}

/// Symbol of the reference range, with the size factor when it changes the category.
pub(super) fn reference_label(c: &ComponentResult) -> String {
    let f = c.size.factor;
    if c.size.applies && (f - 1.0).abs() > 1e-9 {
        format!("{}·{}", fmt_num(f, 3), c.category_symbol)
    } else {
        c.category_symbol.clone()
    }
}

pub(super) fn knee_symbol(symbol: Option<&str>, i: usize) -> String {
    symbol.map_or_else(|| format!("knee {}", i + 1), str::to_string)
}

/// γFf·ΔσE,2: the subscript names the 2·10^6 reference cycles where they apply.
pub(super) fn equivalent_symbol(c: &ComponentResult) -> String {
    let n = c.characteristic_curve.reference_cycles;
    if (n - 2e6).abs() < 1.0 {
        format!("γFf·{}E,2", c.symbol)
    } else {
        format!("γFf·{}E", c.symbol)
    }
}
