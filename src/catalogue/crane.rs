//! The crane route of a family (EN 1991-3 with EN 1993-1-9): a detail without a block
//! spectrum gives the crane's stress-history class, the largest range and the dynamic
//! factor φfat; the damage-equivalent range is ΔσE,2 = λ·φfat·Δσ(max), with λ per class
//! from this table in the family file.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::{Component, FamilyProblem};
use crate::files::locate::YamlPath;

#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct CraneRoute {
    /// What the route is, e.g. "EN 1991-3 damage-equivalent range for cranes".
    pub name: String,
    /// The rule ΔσE,2 = λ·φfat·Δσ(max) and its clause.
    pub rule: String,
    /// Where the λ table comes from.
    pub source: String,
    /// The verification of ΔσE,2 and its clause.
    pub check_source: String,
    /// Stress-history class (S0 ... S9) -> λ for normal and shear stress.
    pub classes: BTreeMap<String, CraneLambda>,
}

#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct CraneLambda {
    pub normal: f64,
    pub shear: f64,
}

impl CraneLambda {
    pub fn get(&self, c: Component) -> f64 {
        match c {
            Component::Normal => self.normal,
            Component::Shear => self.shear,
        }
    }
}

impl CraneRoute {
    /// Every λ a positive finite number, and at least one class.
    pub(super) fn check(&self, path: &YamlPath) -> Result<(), FamilyProblem> {
        if self.classes.is_empty() {
            return Err(FamilyProblem::new(
                path.key("classes"),
                "the crane route lists no stress-history class",
            ));
        }
        for (name, l) in &self.classes {
            for c in [Component::Normal, Component::Shear] {
                let v = l.get(c);
                if !(v.is_finite() && v > 0.0) {
                    return Err(FamilyProblem::new(
                        path.key("classes").key(name).key(c.as_str()),
                        format!(
                            "λ of class {name} for {} stress must be a positive finite number, got {v}",
                            c.as_str()
                        ),
                    ));
                }
            }
        }
        Ok(())
    }
}
