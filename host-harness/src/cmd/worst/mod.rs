//! `lenz coil|turnoff|boost|trip-time|trip-threshold|motor` with ranges: prints the bounds
//! that [`crate::worst`] computes, as a table or `--json`.

mod print;

use std::ffi::OsString;
use std::process::ExitCode;

pub use crate::worst::{Bounded, Figures, Ranged, bound_all, figures_of, find};
pub use print::Json;

use crate::cli::{CAUTION, CliError, MOTOR_CAUTION};

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
