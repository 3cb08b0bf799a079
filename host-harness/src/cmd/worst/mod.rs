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

mod bound;
mod figures;
mod find;
mod print;

use std::ffi::OsString;
use std::process::ExitCode;

pub use bound::{Bounded, bound_all};
pub use figures::{Figures, figures_of};
pub use find::{Ranged, find};
pub use print::Json;

use crate::cli::{CAUTION, CliError, MOTOR_CAUTION};

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

/// Runs a quick calculation with ranges: prints the bounds table (or JSON) and the caution.
///
/// # Errors
///
/// As [`bound_all`].
pub fn run(
    r: &Ranged,
    eval: &dyn Fn(&[OsString]) -> Result<Figures, CliError>,
) -> Result<ExitCode, CliError> {
    let figures = bound_all(r, eval)?;
    if r.json {
        outln!(
            "{}",
            serde_json::to_string(&Json {
                ranged: r,
                figures: &figures,
            })
            .map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    print::table(r, &figures);
    outln!(
        "Each figure's extremes over the ranges, with the values of the ranged flags where they \
         occur (corners, or an interior point where the figure peaks inside). Run `lenz {}` \
         with those values for the full report there.",
        r.command
    );
    outln!("{CAUTION}");
    if r.command == "motor" {
        outln!("{MOTOR_CAUTION}");
    }
    Ok(ExitCode::SUCCESS)
}
