//! `lenz boost`: quick calculation for one boost operating point: mode, duty, inductor
//! currents, output ripple and the duty limits with the binding reason.

use std::process::ExitCode;

use lenz::{
    Error,
    boost::{BoostPlan, BoostStageParams, OperatingPoint},
};
use serde::Serialize;

use super::table::{new_table, si};
use crate::cli::{CAUTION, CliError, ampere, farad, henry, hertz, ohm, second, volt};

/// Arguments of `lenz boost`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input voltage, V.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    vin: f64,
    /// Wanted output voltage, V.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    vout: f64,
    /// Load current, A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    iout: f64,
    /// Inductance, H (SI prefixes accepted: 10u, 10uH).
    #[arg(long, value_name = "H", value_parser = henry, allow_hyphen_values = true)]
    inductance: f64,
    /// Switching frequency, Hz.
    #[arg(long, value_name = "HZ", value_parser = hertz, allow_hyphen_values = true)]
    frequency: f64,
    /// Diode forward drop, V; default 0.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    diode_drop: Option<f64>,
    /// Inductor DC resistance, Ω; default 0.
    #[arg(long, value_name = "OHM", value_parser = ohm, allow_hyphen_values = true)]
    dcr: Option<f64>,
    /// Switch on-resistance, Ω; default 0.
    #[arg(long, value_name = "OHM", value_parser = ohm, allow_hyphen_values = true)]
    rds_on: Option<f64>,
    /// Inductor saturation current, A; no saturation limit without it.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    isat: Option<f64>,
    /// Minimum off time of the switch, s; default 0.
    #[arg(long, value_name = "S", value_parser = second, allow_hyphen_values = true)]
    min_off_time: Option<f64>,
    /// Output capacitance, F; adds the output ripple.
    #[arg(long, value_name = "F", value_parser = farad, allow_hyphen_values = true)]
    cout: Option<f64>,
    /// ESR of the output capacitor, Ω; default 0.
    #[arg(long, value_name = "OHM", value_parser = ohm, allow_hyphen_values = true)]
    esr: Option<f64>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

/// The `--json` output of `lenz boost`.
#[derive(Debug, Serialize)]
struct Report {
    mode: &'static str,
    duty: f32,
    average_inductor_current_a: f32,
    ripple_current_a: f32,
    peak_inductor_current_a: f32,
    k: f32,
    k_crit: f32,
    duty_max: f32,
    duty_max_reason: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    output_ripple_v: Option<f32>,
}

const FLAGS: &[(&str, &str)] = &[
    ("inductance_h", "--inductance"),
    ("frequency_hz", "--frequency"),
    ("inductor_resistance_ohm", "--dcr"),
    ("switch_resistance_ohm", "--rds-on"),
    ("diode_drop_v", "--diode-drop"),
    ("saturation_current_a", "--isat"),
    ("min_off_time_s", "--min-off-time"),
    ("output_capacitance_f", "--cout"),
    ("esr_ohm", "--esr"),
    ("input_v", "--vin"),
    ("output_v", "--vout"),
    ("load_current_a", "--iout"),
];

fn stage_params(a: &Args) -> BoostStageParams {
    let mut p = BoostStageParams::new(a.inductance as f32, a.frequency as f32)
        .with_inductor_resistance_ohm(a.dcr.unwrap_or(0.0) as f32)
        .with_switch_resistance_ohm(a.rds_on.unwrap_or(0.0) as f32)
        .with_diode_drop_v(a.diode_drop.unwrap_or(0.0) as f32)
        .with_min_off_time_s(a.min_off_time.unwrap_or(0.0) as f32);
    if let Some(i) = a.isat {
        p = p.with_saturation_current_a(i as f32);
    }
    if let Some(c) = a.cout {
        p = p.with_output_capacitor(c as f32, a.esr.unwrap_or(0.0) as f32);
    } else {
        p.esr_ohm = a.esr.unwrap_or(0.0) as f32;
    }
    p
}

fn compute(a: &Args) -> Result<BoostPlan, CliError> {
    let stage = stage_params(a)
        .validate()
        .map_err(|e| CliError::from_lenz(e, FLAGS))?;
    let op = OperatingPoint::with_load_current(a.vin as f32, a.vout as f32, a.iout as f32);
    stage.plan(&op).map_err(|e| match e {
        Error::Unreachable { target, limit, .. } => {
            // Name what binds, so the line says why the output is out of reach.
            let why = if target < limit {
                " (the lowest output: a boost stage cannot go below its input less the drops, \
                 nor below the minimum on time)"
                    .to_string()
            } else {
                stage.duty_limits(&op).map_or(String::new(), |l| {
                    format!(
                        " (duty_max {:.4}, {})",
                        l.duty_max,
                        l.duty_max_reason.as_str()
                    )
                })
            };
            CliError(format!(
                "--vout: {target} V cannot be reached; the reachable output is {limit:.4} V{why}"
            ))
        }
        other => CliError::from_lenz(other, FLAGS),
    })
}

/// Runs `lenz boost`.
///
/// # Errors
///
/// Bad or unreachable input, with the flag named and, for an unreachable output, the
/// reachable output.
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let p = compute(a)?;
    let r = Report {
        mode: p.mode.as_str(),
        duty: p.duty,
        average_inductor_current_a: p.average_inductor_current_a,
        ripple_current_a: p.ripple_current_a,
        peak_inductor_current_a: p.peak_inductor_current_a,
        k: p.k,
        k_crit: p.k_crit,
        duty_max: p.limits.duty_max,
        duty_max_reason: p.limits.duty_max_reason.as_str(),
        output_ripple_v: p.output_ripple.map(|o| o.total_v),
    };
    if a.json {
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    let mut t = new_table(&["Quantity", "Value"]);
    let mut row = |q: &str, v: String| {
        t.add_row(vec![q.to_string(), v]);
    };
    row("Mode", r.mode.to_uppercase());
    row("Duty", format!("{:.5}", r.duty));
    row(
        "K = 2L/(R·T); K_crit = D(1−D)²",
        format!("{:.5}; {:.5}", r.k, r.k_crit),
    );
    row("Efficiency", format!("{:.2} %", 100.0 * p.efficiency));
    row(
        "Average inductor current",
        si(r.average_inductor_current_a.into(), "A"),
    );
    row(
        "Ripple current (peak to peak)",
        si(r.ripple_current_a.into(), "A"),
    );
    row(
        "Peak inductor current",
        si(r.peak_inductor_current_a.into(), "A"),
    );
    if let Some(m) = p.saturation_margin {
        row("Saturation margin", format!("{:.1} %", 100.0 * m));
    }
    if let Some(o) = p.output_ripple {
        row(
            "Output ripple (capacitive + ESR)",
            format!(
                "{} ({} + {})",
                si(o.total_v.into(), "V"),
                si(o.capacitive_v.into(), "V"),
                si(o.esr_v.into(), "V")
            ),
        );
    }
    let l = p.limits;
    if let Some(d) = l.saturation {
        row("Duty limit: saturation", format!("{d:.5}"));
    }
    row(
        "Duty limit: minimum off time",
        format!("{:.5}", l.min_off_time),
    );
    if let Some(g) = l.gain_peak {
        row(
            "Duty limit: gain peak (peak gain, output)",
            format!(
                "{:.5} ({:.4}, {})",
                g.duty,
                g.gain,
                si(g.output_v.into(), "V")
            ),
        );
    }
    row(
        "Duty max (reason)",
        format!("{:.5} ({})", r.duty_max, r.duty_max_reason),
    );
    outln!("{t}");
    outln!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}
