//! `lenz coil`: quick calculation for one coil at one temperature.

use std::process::ExitCode;

use lenz::CoilParams;
use serde::Serialize;

use super::table::{new_table, si};
use crate::cli::{CAUTION, CliError, ampere, celsius, henry, ohm, second, volt};

/// Arguments of `lenz coil`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coil inductance, H (SI prefixes accepted: 120m, 120mH).
    #[arg(long, value_name = "H", value_parser = henry, allow_hyphen_values = true)]
    inductance: f64,
    /// Winding resistance at 20 °C, Ω.
    #[arg(long, value_name = "OHM", value_parser = ohm, allow_hyphen_values = true)]
    resistance: f64,
    /// Supply voltage across the coil while on, V.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    supply: f64,
    /// Coil (winding) temperature, °C; default 20.
    #[arg(long, value_name = "C", value_parser = celsius, allow_hyphen_values = true)]
    temperature: Option<f64>,
    /// Current when the switch closes, A; default 0.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    initial_current: Option<f64>,
    /// Report the current this long after the switch closes, s.
    #[arg(long, value_name = "S", value_parser = second, allow_hyphen_values = true)]
    at: Option<f64>,
    /// Report the time to reach this current (pull-in), A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    target_current: Option<f64>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

/// The `--json` output of `lenz coil`.
#[derive(Debug, Serialize)]
struct Report {
    tau_s: f32,
    steady_current_a: f32,
    #[serde(skip_serializing_if = "Option::is_none")]
    current_at_a: Option<f32>,
    #[serde(skip_serializing_if = "Option::is_none")]
    time_to_target_s: Option<f32>,
    resistance_ohm: f32,
    temperature_c: f32,
    stored_energy_j: f32,
}

const FLAGS: &[(&str, &str)] = &[
    ("inductance_h", "--inductance"),
    ("resistance_ohm", "--resistance"),
    ("supply_v", "--supply"),
    ("temp_c", "--temperature"),
    ("initial_current_a", "--initial-current"),
    ("t_s", "--at"),
    ("target_current_a", "--target-current"),
];

fn compute(a: &Args) -> Result<Report, lenz::Error> {
    let coil = CoilParams::new(a.inductance as f32, a.resistance as f32).validate()?;
    let temp = a.temperature.unwrap_or(20.0) as f32;
    let supply = a.supply as f32;
    let i0 = a.initial_current.unwrap_or(0.0) as f32;
    let steady = coil.steady_current_a(supply, temp)?;
    let current_at_a =
        a.at.map(|t| coil.current_after_a(supply, temp, i0, t as f32))
            .transpose()?;
    let time_to_target_s = a
        .target_current
        .map(|target| coil.time_to_current_s(supply, temp, i0, target as f32))
        .transpose()?;
    Ok(Report {
        tau_s: coil.time_constant_s(temp)?,
        steady_current_a: steady,
        current_at_a,
        time_to_target_s,
        resistance_ohm: coil.resistance_ohm(temp)?,
        temperature_c: temp,
        stored_energy_j: coil.stored_energy_j(steady)?,
    })
}

/// A plan error in terms of the flags: the derived steady current (`current_a`) is blamed on
/// the flags it comes from, an unreachable target gives the current the coil settles at.
fn error(a: &Args, e: lenz::Error) -> CliError {
    match e {
        lenz::Error::OutOfRange {
            param: "current_a",
            value,
            max,
            ..
        } => CliError(format!(
            "--resistance: {} at --supply {} gives a steady current of {}, above the {} \
             the plan routines accept",
            si(a.resistance, "Ω"),
            si(a.supply, "V"),
            si(value.into(), "A"),
            si(max.into(), "A"),
        )),
        lenz::Error::Unreachable {
            param: "target_current_a",
            target,
            limit,
        } => CliError(format!(
            "--target-current: {} cannot be reached: the current settles at {} (the \
             reachable limit)",
            si(target.into(), "A"),
            si(limit.into(), "A"),
        )),
        other => CliError::from_lenz(other, FLAGS),
    }
}

/// Runs `lenz coil`.
///
/// # Errors
///
/// Bad or unreachable input, with the flag named.
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let r = compute(a).map_err(|e| error(a, e))?;
    if a.json {
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    let mut t = new_table(&["Quantity", "Value"]);
    t.add_row(vec![
        format!("Winding resistance at {} °C", r.temperature_c),
        si(r.resistance_ohm.into(), "Ω"),
    ]);
    t.add_row(vec!["Time constant τ".to_string(), si(r.tau_s.into(), "s")]);
    t.add_row(vec![
        "Steady current".to_string(),
        si(r.steady_current_a.into(), "A"),
    ]);
    t.add_row(vec![
        "Stored energy at steady current".to_string(),
        si(r.stored_energy_j.into(), "J"),
    ]);
    if let (Some(i), Some(at)) = (r.current_at_a, a.at) {
        t.add_row(vec![
            format!("Current after {}", si(at, "s")),
            si(i.into(), "A"),
        ]);
    }
    if let (Some(ts), Some(target)) = (r.time_to_target_s, a.target_current) {
        t.add_row(vec![
            format!("Time to reach {}", si(target, "A")),
            si(ts.into(), "s"),
        ]);
    }
    outln!("{t}");
    outln!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}
