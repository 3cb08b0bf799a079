//! `lenz motor`: quick calculation for a brushed DC motor on an H-bridge.

use std::process::ExitCode;

use lenz::motor::{Motor, MotorParams};
use serde::Serialize;

use super::table::{new_table, si};
use crate::cli::{
    CAUTION, CliError, MOTOR_CAUTION, celsius, henry, kilogram_square_metre, newton_metre,
    newton_metre_per_ampere, newton_metre_second, ohm, volt,
};

/// Arguments of `lenz motor`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Supply voltage across the bridge, V.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    supply: f64,
    /// Winding resistance at 20 °C, Ω (SI prefixes accepted: 1.5, 1500m).
    #[arg(long, value_name = "OHM", value_parser = ohm, allow_hyphen_values = true)]
    resistance: f64,
    /// Winding inductance, H (2m, 2mH).
    #[arg(long, value_name = "H", value_parser = henry, allow_hyphen_values = true)]
    inductance: f64,
    /// Torque constant, N·m/A (equal to the back-EMF constant in V·s/rad).
    #[arg(long, value_name = "NM_PER_A", value_parser = newton_metre_per_ampere, allow_hyphen_values = true)]
    torque_constant: f64,
    /// Inertia of rotor and load, kg·m²; gives the mechanical figures and the transients.
    #[arg(long, value_name = "KG_M2", value_parser = kilogram_square_metre, allow_hyphen_values = true)]
    inertia: Option<f64>,
    /// Viscous friction, N·m·s/rad; default 0.
    #[arg(long, value_name = "NM_S_PER_RAD", value_parser = newton_metre_second, allow_hyphen_values = true)]
    friction: Option<f64>,
    /// Constant load torque opposing the rotation, held during transients, N·m; default 0.
    #[arg(long, value_name = "NM", value_parser = newton_metre, allow_hyphen_values = true)]
    load_torque: Option<f64>,
    /// Winding temperature, °C; default 20.
    #[arg(long, value_name = "C", value_parser = celsius, allow_hyphen_values = true)]
    temperature: Option<f64>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

/// The `--json` output of `lenz motor`.
#[derive(Debug, Serialize)]
struct Report {
    stall_current_a: f32,
    stall_torque_nm: f32,
    speed_rad_s: f32,
    current_a: f32,
    electrical_time_constant_s: f32,
    #[serde(skip_serializing_if = "Option::is_none")]
    mechanical_time_constant_s: Option<f32>,
    #[serde(skip_serializing_if = "Option::is_none")]
    start_peak_current_a: Option<f32>,
    #[serde(skip_serializing_if = "Option::is_none")]
    reversal_peak_current_a: Option<f32>,
    #[serde(skip_serializing_if = "Option::is_none")]
    brake_peak_current_a: Option<f32>,
    #[serde(skip_serializing_if = "Option::is_none")]
    kinetic_energy_j: Option<f32>,
    resistance_ohm: f32,
    temperature_c: f32,
    #[serde(skip)]
    peak_times_s: [Option<f32>; 3],
}

const FLAGS: &[(&str, &str)] = &[
    ("inductance_h", "--inductance"),
    ("resistance_ohm", "--resistance"),
    ("supply_v", "--supply"),
    ("temp_c", "--temperature"),
    ("torque_constant_nm_per_a", "--torque-constant"),
    ("inertia_kg_m2", "--inertia"),
    ("friction_nm_s_per_rad", "--friction"),
    ("load_torque_nm", "--load-torque"),
];

fn compute(a: &Args, motor: &Motor) -> Result<Report, lenz::Error> {
    let temp = a.temperature.unwrap_or(20.0) as f32;
    let supply = a.supply as f32;
    let load = a.load_torque.unwrap_or(0.0) as f32;
    let steady = motor.steady_state(supply, temp, load)?;
    let mut r = Report {
        stall_current_a: motor.stall_current_a(supply, temp)?,
        stall_torque_nm: motor.stall_torque_nm(supply, temp)?,
        speed_rad_s: steady.speed_rad_s,
        current_a: steady.current_a,
        electrical_time_constant_s: motor.electrical_time_constant_s(temp)?,
        mechanical_time_constant_s: None,
        start_peak_current_a: None,
        reversal_peak_current_a: None,
        brake_peak_current_a: None,
        kinetic_energy_j: None,
        resistance_ohm: motor.resistance_ohm(temp)?,
        temperature_c: temp,
        peak_times_s: [None; 3],
    };
    if a.inertia.is_some() {
        let start = motor.start_peak(supply, temp, load)?;
        let reversal = motor.reversal_peak(supply, temp, load)?;
        let brake = motor.brake_peak(supply, temp, load)?;
        r.mechanical_time_constant_s = Some(motor.mechanical_time_constant_s(temp)?);
        r.start_peak_current_a = Some(start.magnitude_a());
        r.reversal_peak_current_a = Some(reversal.magnitude_a());
        r.brake_peak_current_a = Some(brake.magnitude_a());
        r.kinetic_energy_j = Some(motor.kinetic_energy_j(steady.speed_rad_s)?);
        r.peak_times_s = [start.time_s, reversal.time_s, brake.time_s];
    }
    Ok(r)
}

fn cli_error(e: lenz::Error, a: &Args) -> CliError {
    match e {
        lenz::Error::Unreachable {
            param: "load_torque_nm",
            target,
            limit,
        } => CliError(format!(
            "--load-torque: the motor stalls: {target} N·m is at or above the stall torque \
             {limit} N·m (at {} V and {} °C)",
            a.supply as f32,
            a.temperature.unwrap_or(20.0) as f32
        )),
        e => CliError::from_lenz(e, FLAGS),
    }
}

fn peak_row(name: &str, current: Option<f32>, at: Option<f32>) -> Option<Vec<String>> {
    let i = current?;
    let when = match at {
        Some(t) => format!(" at {}", si(t.into(), "s")),
        None => " (final value, no overshoot)".to_string(),
    };
    Some(vec![
        name.to_string(),
        format!("{}{when}", si(i.into(), "A")),
    ])
}

/// Runs `lenz motor`.
///
/// # Errors
///
/// Bad input, with the flag named; a load torque at or above the stall torque.
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let mut p = MotorParams::new(
        a.inductance as f32,
        a.resistance as f32,
        a.torque_constant as f32,
    )
    .with_friction_nm_s_per_rad(a.friction.unwrap_or(0.0) as f32);
    if let Some(j) = a.inertia {
        p = p.with_inertia_kg_m2(j as f32);
    }
    let motor = p.validate().map_err(|e| cli_error(e, a))?;
    let r = compute(a, &motor).map_err(|e| cli_error(e, a))?;
    if a.json {
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    let mut t = new_table(&["Quantity", "Value"]);
    let rpm = f64::from(r.speed_rad_s) * 60.0 / std::f64::consts::TAU;
    let rows = [
        Some(vec![
            format!("Winding resistance at {} °C", r.temperature_c),
            si(r.resistance_ohm.into(), "Ω"),
        ]),
        Some(vec![
            "Stall current".to_string(),
            si(r.stall_current_a.into(), "A"),
        ]),
        Some(vec![
            "Stall torque".to_string(),
            si(r.stall_torque_nm.into(), "N·m"),
        ]),
        Some(vec![
            "Steady speed".to_string(),
            format!("{} ({rpm:.0} rpm)", si(r.speed_rad_s.into(), "rad/s")),
        ]),
        Some(vec![
            "Steady current".to_string(),
            si(r.current_a.into(), "A"),
        ]),
        Some(vec![
            "Electrical time constant L/R".to_string(),
            si(r.electrical_time_constant_s.into(), "s"),
        ]),
        r.mechanical_time_constant_s
            .map(|tm| vec!["Mechanical time constant".to_string(), si(tm.into(), "s")]),
        peak_row(
            "Start peak current",
            r.start_peak_current_a,
            r.peak_times_s[0],
        ),
        peak_row(
            "Reversal peak current",
            r.reversal_peak_current_a,
            r.peak_times_s[1],
        ),
        peak_row(
            "Brake peak current",
            r.brake_peak_current_a,
            r.peak_times_s[2],
        ),
        r.kinetic_energy_j.map(|e| {
            vec![
                "Kinetic energy at steady speed".to_string(),
                si(e.into(), "J"),
            ]
        }),
    ];
    for row in rows.into_iter().flatten() {
        t.add_row(row);
    }
    outln!("{t}");
    if r.mechanical_time_constant_s.is_none() {
        outln!("Give --inertia for the mechanical time constant and the peak currents.");
    }
    outln!("{CAUTION}");
    outln!("{MOTOR_CAUTION}");
    Ok(ExitCode::SUCCESS)
}
