//! Figures of the whole population of details for the package: how the utilisations
//! are spread, and how they gather by detail type and by group, with the governing
//! detail of each named. Read from the results model only; nothing here is
//! engineering arithmetic, only counting and ordering of the model's utilisations.

use serde::Serialize;

use crate::results::{DetailResult, Results, Status};

/// Fewest details for which the package shows the population section; below it the
/// utilisation chart of every detail says the same.
pub const POPULATION_MIN_DETAILS: usize = 20;
/// Width of a utilisation bin of the distribution.
pub const BIN_WIDTH: f64 = 0.1;
/// The distribution's last bin starts here and takes every higher utilisation.
pub const TOP_BIN_FROM: f64 = 2.0;
/// Most rows of the by-type and by-group figures and tables (the highest are shown).
pub const MAX_ROWS: usize = 40;

/// One bin of the utilisation distribution: details with lo <= U < hi, by status.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct UtilisationBin {
    pub lo: f64,
    /// `None` for the open last bin.
    pub hi: Option<f64>,
    pub pass: usize,
    pub fail: usize,
    pub outside_method: usize,
}

impl UtilisationBin {
    pub fn total(&self) -> usize {
        self.pass + self.fail + self.outside_method
    }
}

/// The details of one detail type (catalogue entry) or one group.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PopulationRow {
    pub name: String,
    pub details: usize,
    pub failed: usize,
    pub outside_method: usize,
    pub min_utilisation: f64,
    pub median_utilisation: f64,
    pub max_utilisation: f64,
    /// The detail with the highest utilisation of the row (the first in project order
    /// on a tie).
    pub governing_id: String,
}

/// Everything the population section shows.
#[derive(Debug, Clone, Serialize, PartialEq, Default)]
pub struct Population {
    /// Whether the section is shown (enough details).
    pub shown: bool,
    pub details: usize,
    pub bins: Vec<UtilisationBin>,
    /// Median, 90th and 99th percentile (nearest rank) and largest finite utilisation.
    pub median: f64,
    pub p90: f64,
    pub p99: f64,
    pub max: f64,
    /// Details with utilisation above 0.8, and above 1.0.
    pub above_0_8: usize,
    pub above_1_0: usize,
    /// Details whose utilisation is not finite (outside the method).
    pub not_finite: usize,
    /// By catalogue entry ("by hand" when a detail has none), highest first.
    pub by_type: Vec<PopulationRow>,
    pub types_total: usize,
    /// By the details' `group`, highest first; empty when no detail has a group.
    pub by_group: Vec<PopulationRow>,
    pub groups_total: usize,
    /// Details without a group when some have one.
    pub ungrouped: usize,
}

/// Nearest-rank percentile of sorted values (common practice): the value at rank
/// ceil(p·n).
fn percentile(sorted: &[f64], p: f64) -> f64 {
    if sorted.is_empty() {
        return 0.0;
    }
    let rank = (p * sorted.len() as f64).ceil().max(1.0) as usize;
    sorted[rank.min(sorted.len()) - 1]
}

/// The bin index of a utilisation: width [`BIN_WIDTH`] up to [`TOP_BIN_FROM`], then
/// the open top bin; a non-finite utilisation goes to the top bin.
fn bin_index(u: f64, top: usize) -> usize {
    if !u.is_finite() || u >= TOP_BIN_FROM {
        return top;
    }
    // Bin k holds k·w <= u < (k+1)·w; multiplying by 10 keeps the bin edges exact.
    let k = (u.max(0.0) * 10.0 + 1e-9).floor() as usize;
    k.min(top)
}

/// The distribution's bins: from 0 up to the bin holding the largest utilisation, at
/// least to 1.2 so that the limit and the bins just above it show.
fn bins(details: &[DetailResult]) -> Vec<UtilisationBin> {
    let top = (TOP_BIN_FROM / BIN_WIDTH).round() as usize;
    let mut counts = vec![(0usize, 0usize, 0usize); top + 1];
    for d in details {
        let c = &mut counts[bin_index(d.utilisation, top)];
        match d.status {
            Status::Pass => c.0 += 1,
            Status::Fail => c.1 += 1,
            Status::OutsideMethod => c.2 += 1,
        }
    }
    let used = counts
        .iter()
        .rposition(|c| c.0 + c.1 + c.2 > 0)
        .unwrap_or(0)
        .max(11);
    counts
        .iter()
        .take(used + 1)
        .enumerate()
        .map(|(k, &(pass, fail, outside_method))| UtilisationBin {
            lo: k as f64 / 10.0,
            hi: (k < top).then(|| (k + 1) as f64 / 10.0),
            pass,
            fail,
            outside_method,
        })
        .collect()
}

/// Rows of details gathered by `key`, highest utilisation first (then by name), at
/// most [`MAX_ROWS`]; also the number of distinct keys.
fn rows_by<'a>(
    details: &'a [DetailResult],
    key: impl Fn(&'a DetailResult) -> Option<String>,
) -> (Vec<PopulationRow>, usize) {
    let mut index: std::collections::HashMap<String, usize> = Default::default();
    let mut members: Vec<(String, Vec<&DetailResult>)> = Vec::new();
    for d in details {
        let Some(k) = key(d) else { continue };
        let i = *index.entry(k.clone()).or_insert_with(|| {
            members.push((k, Vec::new()));
            members.len() - 1
        });
        members[i].1.push(d);
    }
    let total = members.len();
    let mut rows: Vec<PopulationRow> = members
        .into_iter()
        .map(|(name, ds)| {
            let mut us: Vec<f64> = ds.iter().map(|d| d.utilisation).collect();
            us.sort_by(f64::total_cmp);
            let mut gov = ds[0];
            for d in &ds[1..] {
                if d.utilisation.total_cmp(&gov.utilisation).is_gt() {
                    gov = d;
                }
            }
            PopulationRow {
                name,
                details: ds.len(),
                failed: ds.iter().filter(|d| d.status == Status::Fail).count(),
                outside_method: ds
                    .iter()
                    .filter(|d| d.status == Status::OutsideMethod)
                    .count(),
                min_utilisation: us[0],
                median_utilisation: percentile(&us, 0.5),
                max_utilisation: us[us.len() - 1],
                governing_id: gov.id.clone(),
            }
        })
        .collect();
    rows.sort_by(|a, b| {
        b.max_utilisation
            .total_cmp(&a.max_utilisation)
            .then_with(|| a.name.cmp(&b.name))
    });
    rows.truncate(MAX_ROWS);
    (rows, total)
}

/// The name of a detail's type: its catalogue entry key, or the category set by hand.
fn type_name(d: &DetailResult) -> String {
    match &d.detail_key {
        Some(k) => k.clone(),
        None => {
            let cats: Vec<String> = d
                .components
                .iter()
                .map(|c| format!("{}", c.category_mpa))
                .collect();
            format!("by hand, category {} MPa", cats.join("/"))
        }
    }
}

impl Population {
    pub fn of(r: &Results) -> Population {
        let ds = &r.details;
        let mut finite: Vec<f64> = ds
            .iter()
            .map(|d| d.utilisation)
            .filter(|u| u.is_finite())
            .collect();
        finite.sort_by(f64::total_cmp);
        let (by_type, types_total) = rows_by(ds, |d| Some(type_name(d)));
        let (by_group, groups_total) = rows_by(ds, |d| d.group.clone());
        Population {
            shown: ds.len() >= POPULATION_MIN_DETAILS,
            details: ds.len(),
            bins: bins(ds),
            median: percentile(&finite, 0.5),
            p90: percentile(&finite, 0.9),
            p99: percentile(&finite, 0.99),
            max: finite.last().copied().unwrap_or(0.0),
            above_0_8: ds.iter().filter(|d| d.utilisation > 0.8).count(),
            above_1_0: ds.iter().filter(|d| d.utilisation > 1.0).count(),
            not_finite: ds.len() - finite.len(),
            by_type,
            types_total,
            ungrouped: if groups_total > 0 {
                ds.iter().filter(|d| d.group.is_none()).count()
            } else {
                0
            },
            by_group,
            groups_total,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nearest_rank_percentiles() {
        // Nearest-rank definition (common practice): rank ceil(p·n).
        let v: Vec<f64> = (1..=10).map(f64::from).collect();
        assert_eq!(percentile(&v, 0.5), 5.0);
        assert_eq!(percentile(&v, 0.9), 9.0);
        assert_eq!(percentile(&v, 0.99), 10.0);
        assert_eq!(percentile(&[3.0], 0.5), 3.0);
        assert_eq!(percentile(&[], 0.5), 0.0);
    }

    #[test]
    fn bins_hold_their_lower_edge() {
        let top = 20;
        assert_eq!(bin_index(0.0, top), 0);
        assert_eq!(bin_index(0.1, top), 1);
        assert_eq!(bin_index(0.3, top), 3);
        assert_eq!(bin_index(0.999, top), 9);
        assert_eq!(bin_index(1.0, top), 10);
        assert_eq!(bin_index(1.999, top), 19);
        assert_eq!(bin_index(2.0, top), 20);
        assert_eq!(bin_index(55.0, top), 20);
        assert_eq!(bin_index(f64::INFINITY, top), 20);
        assert_eq!(bin_index(f64::NAN, top), 20);
    }
}
