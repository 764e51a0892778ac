//! Which details get a full sheet in the package. Every detail is listed in the
//! summary table whatever the selection; the cover and the summary state the rule.

use crate::error::{Error, InputError, InputErrorKind, Location};
use crate::results::{Results, Status};

/// Details up to which every one gets a sheet by default.
pub const ALL_SHEETS_UP_TO: usize = 200;
/// Sheets by default beyond [`ALL_SHEETS_UP_TO`] details: the highest utilisations.
pub const DEFAULT_TOP: usize = 100;

/// The rule choosing the details with a full sheet (`report --sheets`).
#[derive(Debug, Clone, PartialEq, Default)]
pub enum SheetSelection {
    /// Every detail up to [`ALL_SHEETS_UP_TO`], else the [`DEFAULT_TOP`] highest.
    #[default]
    Default,
    All,
    /// Failing details and those outside the method.
    Failing,
    /// Utilisation above the value.
    Above(f64),
    /// The N highest utilisations.
    Top(usize),
    /// The listed ids, in project order.
    Ids(Vec<String>),
}

impl SheetSelection {
    /// Parse `all`, `failing`, `above:U`, `top:N` or `ids:A,B,...`.
    pub fn parse(s: &str) -> Result<SheetSelection, String> {
        let (word, arg) = match s.split_once(':') {
            Some((w, a)) => (w.trim(), Some(a.trim())),
            None => (s.trim(), None),
        };
        match (word, arg) {
            ("all", None) => Ok(SheetSelection::All),
            ("failing", None) => Ok(SheetSelection::Failing),
            ("above", Some(a)) => match a.parse::<f64>() {
                Ok(u) if u.is_finite() && u >= 0.0 => Ok(SheetSelection::Above(u)),
                _ => Err(format!(
                    "`above:{a}` needs a utilisation >= 0, e.g. above:0.8"
                )),
            },
            ("top", Some(a)) => match a.parse::<usize>() {
                Ok(n) if n > 0 => Ok(SheetSelection::Top(n)),
                _ => Err(format!("`top:{a}` needs a whole number > 0, e.g. top:50")),
            },
            ("ids", Some(a)) => {
                let ids: Vec<String> = a
                    .split(',')
                    .map(|x| x.trim().to_string())
                    .filter(|x| !x.is_empty())
                    .collect();
                if ids.is_empty() {
                    Err("`ids:` needs detail ids, e.g. ids:G001-03,G002-17".into())
                } else {
                    Ok(SheetSelection::Ids(ids))
                }
            }
            _ => Err(format!(
                "`{}` is not a sheet selection",
                crate::files::text::one_line(&crate::files::clip(s))
            )),
        }
    }

    /// Indices of the details with a sheet, in project order, and the rule in words.
    pub fn select(&self, r: &Results) -> Result<(Vec<usize>, String), Error> {
        let n = r.details.len();
        let by_util = |k: usize| -> Vec<usize> {
            let mut order: Vec<usize> = (0..n).collect();
            // highest first; equal utilisations keep the project order
            order.sort_by(|&a, &b| {
                r.details[b]
                    .utilisation
                    .total_cmp(&r.details[a].utilisation)
            });
            order.truncate(k);
            order.sort_unstable();
            order
        };
        Ok(match self {
            SheetSelection::Default if n <= ALL_SHEETS_UP_TO => {
                ((0..n).collect(), "every detail has a sheet".into())
            }
            SheetSelection::Default => (
                by_util(DEFAULT_TOP),
                format!(
                    "sheets for the {DEFAULT_TOP} details of highest utilisation (the default beyond {ALL_SHEETS_UP_TO} details)"
                ),
            ),
            SheetSelection::All => ((0..n).collect(), "every detail has a sheet".into()),
            SheetSelection::Failing => (
                (0..n)
                    .filter(|&i| r.details[i].status != Status::Pass)
                    .collect(),
                "sheets for the details that fail or lie outside the method".into(),
            ),
            SheetSelection::Above(u) => (
                (0..n)
                    .filter(|&i| r.details[i].utilisation > *u)
                    .collect(),
                format!("sheets for the details of utilisation above {u}"),
            ),
            SheetSelection::Top(k) => (
                by_util(*k),
                format!("sheets for the {k} details of highest utilisation"),
            ),
            SheetSelection::Ids(ids) => {
                let mut chosen = Vec::with_capacity(ids.len());
                for id in ids {
                    match r.details.iter().position(|d| &d.id == id) {
                        Some(i) => chosen.push(i),
                        None => {
                            let near = crate::files::suggest(id, r.details.iter().map(|d| d.id.as_str()));
                            let mut e = InputError::new(
                                InputErrorKind::UnknownDetail,
                                Location::file(std::path::Path::new("--sheets")),
                                format!("no detail `{}` in the project", crate::files::clip(id)),
                            );
                            e = match near {
                                Some(s) => e.hint(format!("did you mean `{s}`?")),
                                None => e.hint("give ids as they appear in the results"),
                            };
                            return Err(Error::Input(e));
                        }
                    }
                }
                chosen.sort_unstable();
                chosen.dedup();
                (chosen, "sheets for the details named by the engineer".into())
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn selections_parse() {
        assert_eq!(SheetSelection::parse("all"), Ok(SheetSelection::All));
        assert_eq!(SheetSelection::parse("top:5"), Ok(SheetSelection::Top(5)));
        assert_eq!(
            SheetSelection::parse("above:0.8"),
            Ok(SheetSelection::Above(0.8))
        );
        assert_eq!(
            SheetSelection::parse("ids: A, B"),
            Ok(SheetSelection::Ids(vec!["A".into(), "B".into()]))
        );
        for bad in [
            "top:0",
            "top:x",
            "above:-1",
            "above:inf",
            "ids:",
            "some",
            "all:3",
        ] {
            assert!(SheetSelection::parse(bad).is_err(), "{bad}");
        }
    }
}
