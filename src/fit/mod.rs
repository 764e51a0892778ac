//! Deriving a detail category from fatigue tests: the statistics.

pub mod stats;
