//! Quick calculations over ranges: `lenz coil --supply 10.8..13.2 --inductance 45m±10% …`.
//!
//! Any numeric flag of a quick calculation (`coil`, `turnoff`, `boost`, `trip-time`,
//! `trip-threshold`, `motor`) takes a range or tolerance instead of a single value (forms in
//! [`crate::range_arg`]). Each figure of the command's `--json` report is then bounded over the
//! box of the ranges by the core's worst-case search ([`lenz::bounds::worst_case`]: every corner,
//! a grid between them and a golden-section refinement of interior extrema), and reported as
//! `min`, `max` and the corners `min_at`, `max_at` where they occur.
//!
//! Every point of that search is a single-value run of the same command: its arguments are the
//! ones typed, with each range replaced by a value, read by the same clap definitions and
//! computed by the same routine. So the figure at a reported corner is exactly what
//! `lenz coil --supply <that value> …` prints, and a run without ranges never comes here.
//!
//! This module finds the ranges ([`find`]) and bounds the figures ([`bound_all`]); the `lenz`
//! binary prints them.

mod bound;
mod figures;
mod find;

pub use bound::{Bounded, bound_all};
pub use figures::{Figures, figures_of};
pub use find::{Ranged, RangedFlag, find, value_text};

/// The subcommands whose numeric flags take ranges.
pub const QUICK: &[&str] = &[
    "coil",
    "turnoff",
    "boost",
    "trip-time",
    "trip-threshold",
    "motor",
];

/// Most flags given as ranges at once: the search evaluates at least 3^N points.
pub const MAX_RANGED: usize = 8;
