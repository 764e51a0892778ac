//! Checks of the truck-traffic inputs of the AASHTO LRFD pair (`aashto-pair` families):
//! the single-lane ADTT and the cycles per truck passage, required there and refused
//! elsewhere; details of such a family name a catalogue entry and load normal stress.

use super::*;

/// Largest single-lane ADTT accepted (trucks per lane per day); a lane carries at most
/// about 20 000 vehicles a day (common practice).
const MAX_ADTT: f64 = 20_000.0;
/// Largest number of stress-range cycles per truck passage (AASHTO LRFD Table
/// 6.6.1.2.5-2 gives 1 to 5, from memory).
const MAX_CYCLES_PER_TRUCK: f64 = 50.0;

pub(super) fn check_truck_traffic(c: &mut Checker, file: &ProjectFile, family: Option<&Family>) {
    let Some(fam) = family else { return };
    let b = YamlPath::root().key("basis");
    let pair = fam.aashto_pair().is_some();
    let basis = &file.basis;
    for (key, v) in [
        ("adtt_single_lane", basis.adtt_single_lane),
        ("cycles_per_truck_passage", basis.cycles_per_truck_passage),
    ] {
        match (v, pair) {
            (Some(_), false) => c.push(
                b.key(key),
                InputErrorKind::UnknownOption,
                format!(
                    "family `{}` does not verify by truck traffic: {key} does not apply",
                    fam.id
                ),
                Some(format!("remove {key}; it belongs to families of the aashto-pair form (aashto-lrfd)")),
            ),
            (None, true) => c.push(
                b.clone(),
                InputErrorKind::MissingField,
                format!("family `{}` needs basis.{key}", fam.id),
                Some(if key == "adtt_single_lane" {
                    "give the single-lane average daily truck traffic (ADTT)SL, e.g. adtt_single_lane: 250".into()
                } else {
                    "give the stress-range cycles per truck passage n (AASHTO LRFD Table 6.6.1.2.5-2), e.g. cycles_per_truck_passage: 1".into()
                }),
            ),
            (Some(x), true) => {
                let (max, why) = if key == "adtt_single_lane" {
                    (MAX_ADTT, "trucks per lane per day; a lane carries at most about 20 000 vehicles a day")
                } else {
                    (MAX_CYCLES_PER_TRUCK, "AASHTO LRFD Table 6.6.1.2.5-2 gives 1 to 5 cycles per passage")
                };
                c.positive_upto(|| b.key(key), key, x, max, why);
            }
            (None, false) => {}
        }
    }
    let d = YamlPath::root().key("details");
    for (i, det) in file.details.iter().enumerate() {
        let p = || d.index(i);
        if let Some(n) = det.cycles_per_truck_passage {
            if pair {
                c.positive_upto(
                    || p().key("cycles_per_truck_passage"),
                    "cycles_per_truck_passage",
                    n,
                    MAX_CYCLES_PER_TRUCK,
                    "AASHTO LRFD Table 6.6.1.2.5-2 gives 1 to 5 cycles per passage",
                );
            } else {
                c.push(
                    p().key("cycles_per_truck_passage"),
                    InputErrorKind::UnknownOption,
                    format!(
                        "family `{}` does not verify by truck traffic: cycles_per_truck_passage does not apply",
                        fam.id
                    ),
                    Some("remove cycles_per_truck_passage".into()),
                );
            }
        }
        if !pair {
            continue;
        }
        if det.shear.is_some() {
            c.push(
                p().key("shear"),
                InputErrorKind::InvalidValue,
                format!(
                    "family `{}` checks normal stress ranges only (Fatigue I and II); a shear component is not assessed",
                    fam.id
                ),
                Some("give the range of the stress that acts at the detail as `normal:`".into()),
            );
        }
        if det.detail.is_none() {
            c.push(
                p(),
                InputErrorKind::MissingField,
                format!(
                    "detail `{}`: family `{}` needs a catalogue entry (`detail:`), whose category letter sets the threshold",
                    det.id, fam.id
                ),
                Some(format!("`seamlife classes {}` lists the entries", fam.id)),
            );
        }
    }
}
