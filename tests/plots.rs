//! The report figures: valid SVG, the labels and values a checker reads, grey-scale
//! cues, escaping, determinism and the awkward cases.

use std::path::Path;

use seamlife::catalogue::Library;
use seamlife::report::plots::{
    histogram, matrix_heatmap, sn_diagram, utilisation_chart, FONT_FAMILY, UTILISATION_MAX_BARS,
};
use seamlife::results::{
    BlockResult, ComponentResult, CountedRecord, CurvePoint, CurveResult, DetailResult,
    HistogramBin, MatrixCell, MeanStressCorrection, SizeCorrection, Status,
};

// ---------------------------------------------------------------------------------
// Reading the SVG
// ---------------------------------------------------------------------------------

/// Parse as XML (fails the test when it is not) and check the frame every figure
/// shares: an <svg> root with size and viewBox, real <text> in the report font, and
/// nothing that points outside the document.
fn parse(svg: &str) -> roxmltree::Document<'_> {
    let doc = roxmltree::Document::parse(svg).expect("the SVG is well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    let (w, h) = (
        root.attribute("width").unwrap(),
        root.attribute("height").unwrap(),
    );
    assert_eq!(
        root.attribute("viewBox"),
        Some(format!("0 0 {w} {h}").as_str())
    );
    for n in doc.descendants().filter(|n| n.has_tag_name("text")) {
        assert_eq!(n.attribute("font-family"), Some(FONT_FAMILY));
    }
    for n in doc.descendants().filter(|n| n.is_element()) {
        // Grey scale only: every fill and stroke colour has r = g = b.
        for attr in ["fill", "stroke"] {
            if let Some(c) = n.attribute(attr).filter(|c| c.starts_with('#')) {
                assert!(
                    c.len() == 7 && c[1..3] == c[3..5] && c[3..5] == c[5..7],
                    "grey only: {attr}={c}"
                );
            }
        }
        assert!(
            n.attributes().all(|a| a.name() != "href"),
            "no external references"
        );
        assert!(!matches!(
            n.tag_name().name(),
            "image" | "script" | "foreignObject"
        ));
    }
    doc
}

/// The text of every <text> element, trimmed, in document order.
fn texts(svg: &str) -> Vec<String> {
    parse(svg)
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect()
}

fn has_text(svg: &str, wanted: &str) -> bool {
    texts(svg).iter().any(|t| t == wanted)
}

fn assert_text(svg: &str, wanted: &str) {
    assert!(
        has_text(svg, wanted),
        "missing text {wanted:?}; have {:?}",
        texts(svg)
    );
}

/// y of the <text> whose content is exactly `wanted`.
fn text_y(svg: &str, wanted: &str) -> f64 {
    let doc = parse(svg);
    let n = doc
        .descendants()
        .find(|n| n.has_tag_name("text") && n.text().map(str::trim) == Some(wanted))
        .unwrap_or_else(|| panic!("no text {wanted:?}"));
    n.attribute("y").unwrap().parse().unwrap()
}

fn svg_height(svg: &str) -> u32 {
    parse(svg)
        .root_element()
        .attribute("height")
        .unwrap()
        .parse()
        .unwrap()
}

// ---------------------------------------------------------------------------------
// Building results by hand
// ---------------------------------------------------------------------------------

fn point(cycles: f64, range_mpa: f64, symbol: &str) -> CurvePoint {
    CurvePoint {
        cycles,
        range_mpa,
        symbol: Some(symbol.into()),
        name: None,
    }
}

/// EN 1993-1-9 Fig. 7.1 normal-stress curve (from memory): m = 3 to 5·10^6 (ΔσD),
/// m = 5 to 10^8 (ΔσL), cut-off below ΔσL; knees by the formulas
/// ΔσD = ΔσC·(2/5)^(1/3) and ΔσL = ΔσD·(5/100)^(1/5) (eqs. (7.2), (7.3)).
fn en_normal(cat: f64) -> CurveResult {
    let d = cat * (2.0f64 / 5.0).powf(1.0 / 3.0);
    let l = d * (5.0f64 / 100.0).powf(1.0 / 5.0);
    CurveResult {
        reference_cycles: 2e6,
        reference_range_mpa: cat,
        slopes: vec![3.0, 5.0],
        knees: vec![point(5e6, d, "ΔσD"), point(1e8, l, "ΔσL")],
        cut_off: true,
    }
}

/// EN 1993-1-9 Fig. 7.2 shear curve (from memory): m = 5 to 10^8, cut-off below
/// ΔτL = ΔτC·(2/100)^(1/5).
fn en_shear(cat: f64) -> CurveResult {
    CurveResult {
        reference_cycles: 2e6,
        reference_range_mpa: cat,
        slopes: vec![5.0],
        knees: vec![point(1e8, cat * (2.0f64 / 100.0).powf(0.2), "ΔτL")],
        cut_off: true,
    }
}

/// IIW normal-stress curve (from memory): m = 3 to the knee at 10^7,
/// Δσk = FAT·(2e6/1e7)^(1/3), then m = 22, no cut-off.
fn iiw_normal(fat: f64) -> CurveResult {
    CurveResult {
        reference_cycles: 2e6,
        reference_range_mpa: fat,
        slopes: vec![3.0, 22.0],
        knees: vec![point(1e7, fat * (2e6f64 / 1e7).powf(1.0 / 3.0), "Δσk")],
        cut_off: false,
    }
}

fn scaled(c: &CurveResult, f: f64) -> CurveResult {
    let mut d = c.clone();
    d.reference_range_mpa *= f;
    for k in &mut d.knees {
        k.range_mpa *= f;
    }
    d
}

/// A block: design range (γFf = 1.0, so also the effective range), cycles over the
/// design life, and its endurance on the design curve as (segment, N), worked by hand
/// at each call; `None` below the cut-off. Its damage is n/N (Palmgren-Miner,
/// EN 1993-1-9 A.6). The cycles per year are set by `component`.
fn block(range_mpa: f64, cycles: f64, endurance: Option<(usize, f64)>) -> BlockResult {
    BlockResult {
        event: "passage".into(),
        origin: "given".into(),
        range_mpa,
        max_mpa: None,
        min_mpa: None,
        mean_mpa: None,
        amplitude_mpa: range_mpa / 2.0,
        stress_ratio: None,
        mean_stress_factor: 1.0,
        effective_range_mpa: range_mpa,
        design_range_mpa: range_mpa,
        cycles_per_year: 0.0,
        cycles_design_life: cycles,
        segment: endurance.map(|e| e.0),
        endurance_cycles: endurance.map(|e| e.1),
        damage: endurance.map_or(0.0, |e| cycles / e.1),
    }
}

/// A component on the given characteristic curve over a design life of `years`; the
/// design curve is it ÷ γMf. Everything else follows from the blocks: D = Σ n/N
/// (EN 1993-1-9 A.6) with D_lim = 1.0, and γFf·ΔσE,2 = ΔσC,d·(D/D_lim)^(1/m1)
/// (eq. (8.2) with A.6) with γFf = 1.0. The loading is stated variable amplitude, so no
/// constant-amplitude limit acts.
fn component(
    symbol: &str,
    category_symbol: &str,
    characteristic: CurveResult,
    gamma_mf: f64,
    years: f64,
    mut blocks: Vec<BlockResult>,
) -> ComponentResult {
    let cat = characteristic.reference_range_mpa;
    let m1 = characteristic.slopes[0];
    let shear = symbol == "Δτ";
    for b in &mut blocks {
        b.cycles_per_year = b.cycles_design_life / years;
    }
    let damage: f64 = blocks.iter().map(|b| b.damage).sum();
    let range_ratio = damage.powf(1.0 / m1);
    let equivalent = cat / gamma_mf * range_ratio;
    ComponentResult {
        component: if shear { "shear" } else { "normal" }.into(),
        symbol: symbol.into(),
        category_symbol: category_symbol.into(),
        category_mpa: cat,
        category_source: "hand".into(),
        catalogue_category_mpa: None,
        size: SizeCorrection {
            applies: false,
            thickness_mm: 12.0,
            effective_thickness_mm: 12.0,
            reference_mm: 25.0,
            exponent: None,
            factor: 1.0,
            source: "none".into(),
            exponent_from: "none".into(),
        },
        mean_stress: MeanStressCorrection {
            case: "welded".into(),
            case_name: "welded".into(),
            rule: "compressive-fraction".into(),
            source: "none".into(),
            applies: !shear,
            acted: false,
        },
        corrected_category_mpa: cat,
        gamma_mf,
        gamma_ff: 1.0,
        design_category_mpa: cat / gamma_mf,
        design_curve: scaled(&characteristic, 1.0 / gamma_mf),
        characteristic_curve: characteristic,
        curve_variant: None,
        constant_amplitude_limit_mpa: None,
        amplitude: "variable".into(),
        amplitude_basis: "stated in the project file".into(),
        constant_amplitude_rule_applied: false,
        resistance_at_cycles_mpa: None,
        cycles_design_life: blocks.iter().map(|b| b.cycles_design_life).sum(),
        damage_by_band: Vec::new(),
        damage_per_year: damage / years,
        damage,
        damage_limit: 1.0,
        equivalent_slope_m: m1,
        equivalent_range_mpa: equivalent,
        design_equivalent_range_mpa: equivalent,
        range_ratio,
        utilisation: damage,
        life_years: (damage > 0.0).then(|| years / damage),
        required_category_mpa: None,
        cycles_below_cut_off: blocks
            .iter()
            .filter(|b| b.segment.is_none())
            .map(|b| b.cycles_design_life)
            .sum(),
        max_range_mpa: blocks
            .iter()
            .map(|b| b.design_range_mpa)
            .fold(0.0, f64::max),
        // Δσ <= 1.5·fy, Δτ <= 1.5·fy/√3 for S355 (EN 1993-1-9 8(1))
        validity_limit_mpa: if shear {
            1.5 * 355.0 / 3f64.sqrt()
        } else {
            532.5
        },
        blocks,
        counted: Vec::new(),
        environment: None,
        scf: None,
        crane_route: None,
        improvement: None,
    }
}

/// A detail for the utilisation chart, which reads its id, utilisation and status.
/// The rest follows from the utilisation on a 25-year design life: utilisation =
/// D/D_lim = design life / fatigue life with D_lim = 1.0 (Palmgren-Miner, EN 1993-1-9
/// A.6), and a detail fails when it exceeds 1.0 unless it lies outside the method.
fn detail(id: &str, utilisation: f64, status: Status) -> DetailResult {
    assert!(
        status == Status::OutsideMethod || (utilisation > 1.0) == (status == Status::Fail),
        "fixture: {id} {utilisation} {status:?}"
    );
    DetailResult {
        id: id.into(),
        location: "web".into(),
        description: None,
        detail_key: None,
        catalogue_reference: None,
        catalogue_description: None,
        material: "S355".into(),
        fy_mpa: 355.0,
        thickness_mm: 12.0,
        group: None,
        status,
        utilisation,
        governing_check: "normal".into(),
        checks: Vec::new(),
        damage: utilisation,
        damage_limit: 1.0,
        life_years: (utilisation > 0.0).then(|| 25.0 / utilisation),
        reserve_factor: None,
        reserve_factor_upper: None,
        required_category: None,
        components: Vec::new(),
        interaction: None,
        warnings: Vec::new(),
        notes: Vec::new(),
        truck_pair: None,
    }
}

/// A counted record holding the given bins and cells. Its totals follow from them:
/// the cycles counted (the matrix's, else the histogram's) as full cycles and at most
/// one half cycle, with half cycles for the residue, so reversals = 2·full + half + 1
/// (each full cycle closes two reversals, R residue points leave R − 1 half cycles;
/// ASTM E1049-85 rainflow counting). A record without cycles is a constant one.
fn record(histogram: Vec<HistogramBin>, matrix: Vec<MatrixCell>) -> CountedRecord {
    let total: f64 = if matrix.is_empty() {
        histogram.iter().map(|b| b.cycles).sum()
    } else {
        matrix.iter().map(|c| c.cycles).sum()
    };
    let full = total.floor() as u64;
    let half = u64::from(total.fract() == 0.5);
    let reversals = 2 * full + half + 1;
    let constant = histogram.is_empty() && matrix.is_empty();
    let (min_mpa, max_mpa) = if constant {
        (12.0, 12.0)
    } else {
        (-20.0, 60.0)
    };
    CountedRecord {
        event: "trolley run".into(),
        file: "gauge.csv".into(),
        column: "SG1".into(),
        unit: "mpa".into(),
        scale: 1.0,
        modulus_mpa: None,
        samples: reversals.max(1000),
        reversals,
        full_cycles: full,
        half_cycles: half,
        min_mpa,
        max_mpa,
        mean_mpa: 12.0,
        std_dev_mpa: if constant { 0.0 } else { 9.0 },
        constant,
        gate_mpa: 0.0,
        residue: "half-cycles".into(),
        repeats_per_year: 100.0,
        bin_width_mpa: 10.0,
        mean_bin_width_mpa: 10.0,
        histogram,
        matrix,
        per_cycle: false,
    }
}

fn cell(range_lo: f64, mean_lo: f64, cycles: f64) -> MatrixCell {
    MatrixCell {
        range_lo_mpa: range_lo,
        range_hi_mpa: range_lo + 10.0,
        mean_lo_mpa: mean_lo,
        mean_hi_mpa: mean_lo + 10.0,
        cycles,
        max_range_mpa: range_lo + 9.0,
        mean_mpa: mean_lo + 5.0,
    }
}

fn demo() -> seamlife::results::Results {
    let library = Library::load(None).expect("embedded families");
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("projects/kestrel-bay-runway.yaml");
    seamlife::run_project(&path, &library).expect("demo project runs")
}

// ---------------------------------------------------------------------------------
// S-N diagram
// ---------------------------------------------------------------------------------

#[test]
fn sn_diagram_labels_axes_knees_and_values() {
    // ΔσC 100, γMf 1.0: 80 MPa lies above ΔσD = 73.68062997, on m = 3:
    // N = 2e6·(100/80)^3 = 3906250 exactly (EN 1993-1-9 eq. (7.1)); 30 MPa lies below
    // ΔσL = 40.47131645 and does no damage (Fig. 7.1 cut-off; hand-worked by
    // tests/tools/hand_worked.py).
    let c = component(
        "Δσ",
        "ΔσC",
        en_normal(100.0),
        1.0,
        25.0,
        vec![
            block(80.0, 1e5, Some((1, 3906250.0))),
            block(30.0, 1e6, None),
        ],
    );
    let svg = sn_diagram(&c, 25.0);
    // Axis titles with units (the range symbol comes from the component).
    assert_text(&svg, "N (cycles)");
    assert_text(&svg, "Δσ (MPa)");
    // Every decade from 10^4 to 10^9 labelled.
    for d in ["10⁴", "10⁵", "10⁶", "10⁷", "10⁸", "10⁹"] {
        assert_text(&svg, d);
    }
    // Intermediate range ticks on a span of two decades or so (1-2-5).
    for t in ["20", "50", "100"] {
        assert_text(&svg, t);
    }
    // ΔσD = (2/5)^(1/3)·ΔσC = 73.68062997 and ΔσL = (5/100)^(1/5)·ΔσD = 40.47131645 for
    // ΔσC = 100 (EN 1993-1-9 Fig. 7.1 knee formulas, hand-worked), printed to 0.1 MPa.
    assert_text(&svg, "ΔσC = 100");
    assert_text(&svg, "ΔσD = 73.7");
    assert_text(&svg, "ΔσL = 40.5");
    // γMf = 1.0: the design curve coincides, and the key says so.
    assert_text(&svg, "= characteristic, γMf = 1");
    assert_text(&svg, "ΔσD/γMf = 73.7");
    // A cut-off curve: the key names it; a block below it is marked hollow and named.
    assert_text(&svg, "cut-off: lower ranges");
    assert_text(&svg, "block without damage:");
    assert_text(&svg, "below the cut-off");
    // Spectrum over the design life in the key.
    assert_text(&svg, "cumulative, 25 years");
    assert_text(&svg, "Σn = 1.1·10⁶ cycles");
    // D = 1e5/3906250 = 0.0256 (EN 1993-1-9 A.6, hand-worked), printed to 3 figures;
    // γFf·ΔσE,2 = 100·0.0256^(1/3) = 29.47 (eq. (8.2) with A.6, hand-worked)
    assert_text(&svg, "D = 0.0256");
    assert_text(&svg, "γFf·ΔσE,2 = 29.5");
}

#[test]
fn sn_diagram_design_values_after_gamma_mf() {
    // ΔσC,d = 100/1.35 = 74.07407407, ΔσD,d = 54.57824442 < 60: m = 3,
    // N = 2e6·(74.07407407/60)^3 = 3763352.846 (EN 1993-1-9 eq. (7.1), hand-worked)
    let c = component(
        "Δσ",
        "ΔσC",
        en_normal(100.0),
        1.35,
        50.0,
        vec![block(60.0, 2e5, Some((1, 3763352.846)))],
    );
    let svg = sn_diagram(&c, 50.0);
    // ΔσC/γMf = 74.07407407, ΔσD/γMf = 54.57824442, ΔσL/γMf = 29.97875292 (EN 1993-1-9
    // eq. (8.2) denominator, Fig. 7.1 knee formulas; hand-worked), printed to 0.1 MPa
    assert_text(&svg, "ΔσC/γMf = 74.1");
    assert_text(&svg, "ΔσD/γMf = 54.6");
    assert_text(&svg, "ΔσL/γMf = 30.0");
    assert_text(&svg, "characteristic ÷ γMf = 1.35");
    assert_text(&svg, "slopes m = 3, 5");
    // D = 2e5/3763352.846 = 0.0531441 (A.6, hand-worked), printed to 3 figures
    assert_text(&svg, "D = 0.0531");
    // The design curve is dashed: plotters writes each dash as its own polyline, so
    // there are many more polylines than series.
    let polylines = svg.matches("<polyline").count();
    assert!(polylines > 20, "dashes drawn: {polylines}");
}

#[test]
fn sn_diagram_marks_the_equivalent_range() {
    // ΔσC 71, γMf 1.35: ΔσC,d = 52.59259259, ΔσD,d = 38.75055354 < 50, so m = 3:
    // N = 2e6·(52.59259259/50)^3 = 2327521.618 (EN 1993-1-9 eq. (7.1)); 4e5 cycles give
    // D = 0.1718566208 (A.6) and γFf·ΔσE,2 = ΔσC,d·(D/D_lim)^(1/3) = 29.24017738 MPa
    // (eq. (8.2) with A.6, D_lim = 1.0), the same as 50·(4e5/2e6)^(1/3) for one block
    // (all hand-worked by tests/tools/hand_worked.py).
    let on_71 = |b: BlockResult| component("Δσ", "ΔσC", en_normal(71.0), 1.35, 25.0, vec![b]);
    let c = on_71(block(50.0, 4e5, Some((1, 2327521.618))));
    assert!((c.damage - 0.1718566208).abs() <= 1e-9 * 0.1718566208);
    assert!((c.design_equivalent_range_mpa - 29.24017738).abs() <= 1e-9 * 29.24017738);
    let svg = sn_diagram(&c, 25.0);
    // γFf·ΔσE,2 at the 2·10^6 reference cycles (EN 1993-1-9 8(2) notation), to 0.1 MPa
    assert_text(&svg, "γFf·ΔσE,2 = 29.2");
    assert_text(&svg, "at N = 2·10⁶");
    assert_text(&svg, "D = 0.172");
    // A diamond: the only four-point polygon in the figure.
    assert!(svg.contains("<polygon"));
    // Without damage there is no equivalent range to mark: 20 MPa lies below
    // ΔσL,d = 21.28491458 (Fig. 7.1 cut-off, hand-worked), so D = 0.
    let c = on_71(block(20.0, 4e5, None));
    assert_eq!(c.design_equivalent_range_mpa, 0.0);
    let svg = sn_diagram(&c, 25.0);
    assert!(!texts(&svg).iter().any(|t| t.starts_with("γFf·ΔσE,2")));
    assert!(!svg.contains("<polygon"));
    assert_text(&svg, "D = 0");
}

#[test]
fn sn_diagram_shear_curve_has_one_segment() {
    // ΔτL = (2/100)^(1/5)·ΔτC = 36.58440415 for ΔτC = 80 (EN 1993-1-9 Fig. 7.2 formula,
    // hand-worked); the 31 MPa block lies below it and does no damage.
    let c = component(
        "Δτ",
        "ΔτC",
        en_shear(80.0),
        1.0,
        25.0,
        vec![block(31.0, 2.25e5, None)],
    );
    let svg = sn_diagram(&c, 25.0);
    assert_text(&svg, "Δτ (MPa)");
    assert_text(&svg, "ΔτC = 80");
    assert_text(&svg, "ΔτL = 36.6");
    assert_text(&svg, "slopes m = 5");
    assert!(!svg.contains("ΔσD"));
    assert!(texts(&svg)[0].starts_with("Shear stress"));
}

#[test]
fn sn_diagram_open_tail_has_no_cut_off() {
    // IIW FAT 90: knee at 10^7 = (2e6/1e7)^(1/3)·FAT = 52.63231929 (IIW 3.2.1, from
    // memory; hand-worked). The 40 MPa block lies below it, on m = 22:
    // N = 1e7·(52.63231929/40)^22 = 4190205925, D = 3e6/N = 0.0007159552665 (IIW curve
    // form, from memory; hand-worked by tests/tools/hand_worked.py).
    let c = component(
        "Δσ",
        "FAT",
        iiw_normal(90.0),
        1.0,
        20.0,
        vec![block(40.0, 3e6, Some((2, 4190205925.0)))],
    );
    let svg = sn_diagram(&c, 20.0);
    assert_text(&svg, "D = 0.000716");
    assert_text(&svg, "FAT = 90");
    assert_text(&svg, "Δσk = 52.6");
    assert_text(&svg, "slopes m = 3, 22");
    assert!(!texts(&svg).iter().any(|t| t.contains("cut-off")));
}

#[test]
fn sn_diagram_widens_the_axes_for_huge_counts_and_low_ranges() {
    // 10^10 cycles over the design life and a range far below ΔσL = 40.47131645. The
    // 120 MPa block on m = 3: N = 2e6·(100/120)^3 = 1157407.407 (EN 1993-1-9 eq. (7.1),
    // hand-worked).
    let c = component(
        "Δσ",
        "ΔσC",
        en_normal(100.0),
        1.0,
        100.0,
        vec![
            block(120.0, 1e3, Some((1, 1157407.407))),
            block(4.0, 1e10, None),
        ],
    );
    let svg = sn_diagram(&c, 100.0);
    // The cycles axis runs past 10^10 (to 10^11) and starts below the 10^3 of the
    // first block, with every decade labelled.
    for d in ["10²", "10³", "10¹⁰", "10¹¹"] {
        assert_text(&svg, d);
    }
    // The range axis comes down below the 4 MPa block (to 2, the 1-2-5 value below
    // 4/1.25) and up to 500.
    for t in ["2", "5", "10", "500"] {
        assert_text(&svg, t);
    }
    // Both block markers are drawn (circles of radius 3 inside the frame).
    let doc = parse(&svg);
    let markers = doc
        .descendants()
        .filter(|n| n.has_tag_name("circle") && n.attribute("r") == Some("3"))
        .count();
    // The hollow marker is a white disc and a black ring: 2 + 1 circles, plus the key's.
    assert!(markers >= 3, "markers: {markers}");
    // D = 1e3/1157407.407 = 0.000864 (A.6, hand-worked)
    assert_text(&svg, "D = 0.000864");
}

#[test]
fn sn_diagram_without_blocks_still_draws_the_curves() {
    let c = component("Δσ", "ΔσC", en_normal(36.0), 1.35, 25.0, Vec::new());
    let svg = sn_diagram(&c, 25.0);
    assert_text(&svg, "ΔσC = 36");
    // ΔσD = (2/5)^(1/3)·36 = 26.52502679 (EN 1993-1-9 Fig. 7.1 knee formula, hand-worked)
    assert_text(&svg, "ΔσD = 26.5");
    assert_text(&svg, "Σn = 0 cycles");
    assert!(!texts(&svg).iter().any(|t| t.starts_with("design spectrum")));
}

#[test]
fn sn_diagram_for_every_component_of_the_demo() {
    let results = demo();
    for d in &results.details {
        for c in &d.components {
            let svg = sn_diagram(c, results.basis.design_life_years);
            assert_text(&svg, "N (cycles)");
            assert_text(&svg, &format!("{} (MPa)", c.symbol));
            assert_eq!(svg, sn_diagram(c, results.basis.design_life_years));
            // Each knee of the characteristic curve is labelled with its symbol.
            for k in &c.characteristic_curve.knees {
                let sym = k.symbol.clone().unwrap();
                assert!(
                    texts(&svg)
                        .iter()
                        .any(|t| t.starts_with(&format!("{sym} = "))),
                    "{}: knee {sym}",
                    d.id
                );
            }
        }
    }
}

// ---------------------------------------------------------------------------------
// Utilisation chart
// ---------------------------------------------------------------------------------

#[test]
fn utilisation_chart_sorts_labels_and_flags_failures() {
    let details = vec![
        detail("W01", 0.52, Status::Pass),
        detail("B01", 1.033, Status::Fail),
        detail("P01", 0.29, Status::Pass),
        detail("X07", 0.81, Status::OutsideMethod),
    ];
    let svg = utilisation_chart(&details);
    for id in ["W01", "B01", "P01", "X07"] {
        assert_text(&svg, id);
    }
    // Highest on top (smaller y).
    assert!(text_y(&svg, "B01") < text_y(&svg, "X07"));
    assert!(text_y(&svg, "X07") < text_y(&svg, "W01"));
    assert!(text_y(&svg, "W01") < text_y(&svg, "P01"));
    // Values with three decimals, as in the results table.
    for v in ["1.033", "0.810", "0.520", "0.290"] {
        assert_text(&svg, v);
    }
    // Status in words beside the failing bars, plus once each in the key.
    let t = texts(&svg);
    assert_eq!(t.iter().filter(|s| *s == "FAIL").count(), 2);
    assert_eq!(t.iter().filter(|s| *s == "OUTSIDE METHOD").count(), 2);
    assert_text(&svg, "limit 1.0");
    assert_text(
        &svg,
        "utilisation (–): design life / fatigue life, governing check",
    );
    // FAIL on the row of B01, not elsewhere.
    let fail_ys: Vec<f64> = parse(&svg)
        .descendants()
        .filter(|n| n.has_tag_name("text") && n.text().map(str::trim) == Some("FAIL"))
        .map(|n| n.attribute("y").unwrap().parse().unwrap())
        .collect();
    let row = text_y(&svg, "B01");
    assert!(
        fail_ys.iter().any(|y| (y - row).abs() <= 2.0),
        "{fail_ys:?} vs {row}"
    );
    assert!(fail_ys
        .iter()
        .all(|y| (y - text_y(&svg, "W01")).abs() > 5.0));
    // Failing bars are dark (parse checks that every colour is a grey).
    assert!(svg.contains("fill=\"#404040\""));
}

#[test]
fn utilisation_chart_escapes_hostile_ids() {
    let hostile = "a<b&\"c'";
    let svg = utilisation_chart(&[detail(hostile, 1.2, Status::Fail)]);
    assert_text(&svg, hostile);
    assert!(svg.contains("a&lt;b&amp;&quot;c&apos;"));
    assert!(!svg.contains(hostile));
}

#[test]
fn utilisation_chart_grows_and_caps_at_sixty() {
    let many: Vec<DetailResult> = (0..75)
        .map(|i| detail(&format!("D{i:02}"), 0.01 * i as f64, Status::Pass))
        .collect();
    let five = utilisation_chart(&many[..5]);
    let forty = utilisation_chart(&many[..40]);
    let all = utilisation_chart(&many);
    assert!(svg_height(&forty) > svg_height(&five));
    assert_eq!(UTILISATION_MAX_BARS, 60);
    assert_text(&all, "Utilisation per detail: the 60 highest of 75 details");
    // D74 .. D15 shown, D14 .. D00 left out.
    assert_text(&all, "D74");
    assert_text(&all, "D15");
    assert!(!has_text(&all, "D14"));
    assert!(!has_text(&all, "D00"));
    // All 40 ids fit, and the title does not claim a cut.
    assert_text(&forty, "Utilisation per detail, highest first");
    assert_text(&forty, "D00");
    // Sixty rows still fit an A4 page at this width (ratio about 1.41 + margins).
    assert!(svg_height(&all) <= 960, "height {}", svg_height(&all));
}

#[test]
fn utilisation_chart_of_one_detail_and_of_none() {
    let one = utilisation_chart(&[detail("ONLY", 7.5, Status::Fail)]);
    // A long bar is drawn to the axis end (2.0) and its value printed.
    assert_text(&one, "7.500");
    assert_text(&one, "2.0");
    let none = utilisation_chart(&[]);
    assert_text(&none, "no details assessed");
}

#[test]
fn utilisation_chart_of_the_demo_names_every_detail() {
    let results = demo();
    let svg = utilisation_chart(&results.details);
    for d in &results.details {
        assert_text(&svg, &d.id);
    }
    let fails = results
        .details
        .iter()
        .filter(|d| d.status == Status::Fail)
        .count();
    // One FAIL beside each failing bar, and one in the key.
    assert_eq!(
        texts(&svg).iter().filter(|t| *t == "FAIL").count(),
        fails + 1
    );
}

// ---------------------------------------------------------------------------------
// Histogram and matrix
// ---------------------------------------------------------------------------------

#[test]
fn histogram_bars_on_a_log_count_axis() {
    let bins = vec![
        HistogramBin {
            lo_mpa: 0.0,
            hi_mpa: 10.0,
            cycles: 3200.0,
        },
        HistogramBin {
            lo_mpa: 10.0,
            hi_mpa: 20.0,
            cycles: 410.0,
        },
        HistogramBin {
            lo_mpa: 20.0,
            hi_mpa: 30.0,
            cycles: 0.0,
        },
        HistogramBin {
            lo_mpa: 30.0,
            hi_mpa: 40.0,
            cycles: 0.5,
        },
    ];
    let svg = histogram(&record(bins, Vec::new()));
    assert_text(&svg, "stress range (MPa)");
    assert_text(&svg, "cycles per record");
    // Counts from 0.5 to 3200: decades 0.1 .. 10^4 on the axis.
    for t in ["0.1", "1", "10", "100", "1000", "10⁴"] {
        assert_text(&svg, t);
    }
    // Three bars with cycles (the empty bin is not drawn): each a filled rect and its
    // outline; plus the background and the frame.
    let rects = svg.matches("<rect").count();
    assert_eq!(rects, 1 + 3 * 2 + 1);
}

#[test]
fn matrix_heatmap_grey_levels_and_key() {
    let cells = vec![
        cell(0.0, 0.0, 4500.0),
        cell(10.0, 0.0, 320.0),
        cell(10.0, 10.0, 12.0),
        cell(20.0, -10.0, 1.5),
    ];
    let svg = matrix_heatmap(&record(Vec::new(), cells));
    assert_text(&svg, "stress range (MPa)");
    assert_text(&svg, "mean stress (MPa)");
    assert_text(&svg, "cycles n per record");
    // Counts from 1.5 to 4500: one class per decade from 1 to 10^4 (common practice).
    for k in [
        "1 ≤ n < 10",
        "10 ≤ n < 100",
        "100 ≤ n < 1000",
        "1000 ≤ n < 10⁴",
    ] {
        assert_text(&svg, k);
    }
    // Cells this large carry their counts.
    for n in ["4500", "320", "12", "1.5"] {
        assert_text(&svg, n);
    }
    // Negative means get a true minus sign.
    assert_text(&svg, "−10");
    // Four distinct grey fills for the four classes, darker for more cycles.
    let doc = parse(&svg);
    let grey_of = |n: &roxmltree::Node| -> Option<u8> {
        let f = n.attribute("fill")?;
        let v = u8::from_str_radix(f.get(1..3)?, 16).ok()?;
        (f.len() == 7 && f[1..3] == f[3..5] && f[3..5] == f[5..7] && v != 255).then_some(v)
    };
    let mut greys: Vec<u8> = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect"))
        .filter_map(|n| grey_of(&n))
        .collect();
    greys.sort_unstable();
    greys.dedup();
    assert_eq!(greys.len(), 4, "{greys:?}");
}

#[test]
fn empty_records_say_no_cycles_counted() {
    let rec = record(Vec::new(), Vec::new());
    assert!(rec.constant);
    let m = matrix_heatmap(&rec);
    assert_text(&m, "no cycles counted");
    assert_text(&m, "the record is constant");
    let h = histogram(&rec);
    assert_text(&h, "no cycles counted");
    // Zero-cycle cells count as empty too (an awkward input a count never yields).
    let z = matrix_heatmap(&record(Vec::new(), vec![cell(0.0, 0.0, 0.0)]));
    assert_text(&z, "no cycles counted");
}

// ---------------------------------------------------------------------------------
// Every figure
// ---------------------------------------------------------------------------------

#[test]
fn figures_are_deterministic_and_escape_text() {
    let hostile = "a<b&\"c'";
    // ΔσC 90, γMf 1.35: ΔσC,d = 66.66666667, ΔσD,d = 49.12041998 < 70, on m = 3:
    // N = 2e6·(66.66666667/70)^3 = 1727675.197 (EN 1993-1-9 eq. (7.1), hand-worked)
    let mut c = component(
        "Δσ",
        "ΔσC",
        en_normal(90.0),
        1.35,
        25.0,
        vec![block(70.0, 2e5, Some((1, 1727675.197)))],
    );
    c.symbol = hostile.into();
    let mut rec = record(
        vec![HistogramBin {
            lo_mpa: 0.0,
            hi_mpa: 5.0,
            cycles: 12.0,
        }],
        vec![cell(0.0, 0.0, 12.0)],
    );
    rec.event = hostile.into();
    rec.file = hostile.into();
    let details = vec![
        detail(hostile, 0.4, Status::Pass),
        detail("b", 0.4, Status::Pass),
    ];
    let render = || {
        [
            sn_diagram(&c, 25.0),
            utilisation_chart(&details),
            histogram(&rec),
            matrix_heatmap(&rec),
        ]
    };
    let first = render();
    assert_eq!(first, render());
    for svg in &first {
        parse(svg);
        assert!(texts(svg).iter().any(|t| t.contains(hostile)), "{svg}");
        assert!(!svg.contains(hostile));
    }
}
