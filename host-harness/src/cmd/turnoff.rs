//! `lenz turnoff`: quick switch-off calculation for one coil, current and clamp.

use std::process::ExitCode;

use lenz::turnoff::{
    AIR_BREAKDOWN_V_PER_M, Clamp, DecayEnd, PASCHEN_MIN_V, RELEASE_FRACTION_COMMON_PRACTICE,
    SwitchOff, avalanche_energy_lossless_j,
};
use serde::Serialize;

use super::common::{CAUTION, CliError, ampere, henry, ohm, volt};
use super::table::{new_table, si};
use super::worst::{Figures, figures_of};

/// Arguments of `lenz turnoff`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coil inductance, H (SI prefixes accepted: 120m, 120mH).
    #[arg(long, value_name = "H", value_parser = henry)]
    inductance: f64,
    /// Coil resistance during the decay (the winding at its temperature), Ω.
    #[arg(long, value_name = "OHM", value_parser = ohm)]
    resistance: f64,
    /// Coil current when the switch opens, A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    current: f64,
    /// Clamp: diode:VF, zener:VZ:VF (diode plus zener across the coil), switch:VCL (clamp
    /// across the switch), resistor:RS:VF (resistor plus diode), none:CP (unclamped, switch
    /// node capacitance).
    #[arg(long, value_name = "KIND", allow_hyphen_values = true)]
    clamp: String,
    /// Supply voltage, V; default 0, needed for switch: and none:.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    supply: Option<f64>,
    /// Report the time for the current to fall to this value (relay drop-out, safe
    /// re-energize or reverse), A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    release_current: Option<f64>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

/// The `--json` output of `lenz turnoff`.
#[derive(Debug, Serialize)]
struct Report {
    #[serde(skip_serializing_if = "Option::is_none")]
    time_to_release_s: Option<f32>,
    time_to_zero_s: Option<f32>,
    peak_switch_voltage_v: f32,
    clamp_energy_j: f32,
    resistance_energy_j: f32,
    supply_energy_j: f32,
    stored_energy_j: f32,
}

const FLAGS: &[(&str, &str)] = &[
    ("inductance_h", "--inductance"),
    ("resistance_ohm", "--resistance"),
    ("supply_v", "--supply"),
    ("initial_current_a", "--current"),
    ("target_current_a", "--release-current"),
    ("forward_v", "--clamp VF"),
    ("zener_v", "--clamp VZ"),
    ("clamp_v", "--clamp VCL"),
    ("clamp_resistance_ohm", "--clamp RS"),
    ("capacitance_f", "--clamp CP"),
];

fn plan(a: &Args) -> Result<SwitchOff, CliError> {
    let clamp = crate::system::clamp::cli_clamp(&a.clamp)?;
    let supply = match (a.supply, clamp) {
        (Some(v), _) => v as f32,
        (None, Clamp::Switch { .. } | Clamp::Unclamped { .. }) => {
            return Err(CliError(format!(
                "--supply: needed for a {}: clamp (the supply stays in the decaying loop)",
                clamp.kind()
            )));
        }
        (None, _) => 0.0,
    };
    if let Clamp::Switch { clamp_v } = clamp
        && clamp_v.is_finite()
        && supply.is_finite()
        && clamp_v <= supply
    {
        return Err(CliError(format!(
            "--clamp VCL: a clamp across the switch at {clamp_v} V does not lie above the \
                 supply of {supply} V, so the current would not decay"
        )));
    }
    SwitchOff::new(
        a.inductance as f32,
        a.resistance as f32,
        supply,
        a.current as f32,
        clamp,
    )
    .map_err(|e| CliError::from_lenz(e, FLAGS))
}

fn report(s: &SwitchOff, release: Option<f32>) -> Result<(Report, DecayEnd), lenz::Error> {
    let end = s.decay_end()?;
    Ok((
        Report {
            time_to_release_s: release.map(|r| s.time_to_current_s(r)).transpose()?,
            time_to_zero_s: end.time_to_zero_s(),
            peak_switch_voltage_v: s.peak_switch_voltage_v()?,
            clamp_energy_j: s.clamp_energy_j()?,
            resistance_energy_j: s.resistance_energy_j()?,
            supply_energy_j: s.supply_energy_j()?,
            stored_energy_j: s.stored_energy_j(),
        },
        end,
    ))
}

fn clamp_text(c: &Clamp) -> String {
    match *c {
        Clamp::Diode { forward_v } => format!("freewheel diode, {}", si(forward_v.into(), "V")),
        Clamp::Zener { zener_v, forward_v } => format!(
            "diode {} + zener {} across the coil",
            si(forward_v.into(), "V"),
            si(zener_v.into(), "V")
        ),
        Clamp::Switch { clamp_v } => {
            format!("clamp across the switch at {}", si(clamp_v.into(), "V"))
        }
        Clamp::Resistor {
            resistance_ohm,
            forward_v,
        } => format!(
            "resistor {} + diode {} across the coil",
            si(resistance_ohm.into(), "Ω"),
            si(forward_v.into(), "V")
        ),
        Clamp::Unclamped { capacitance_f } => format!(
            "none (switch node capacitance {})",
            si(capacitance_f.into(), "F")
        ),
    }
}

/// The verdict lines: what the parts must withstand, and the warnings.
fn verdict_lines(s: &SwitchOff, r: &Report) -> Result<Vec<String>, lenz::Error> {
    let mut lines = Vec::new();
    let vpk = r.peak_switch_voltage_v;
    match *s.clamp() {
        Clamp::Unclamped { .. } => {
            lines.push(format!(
                "WARNING: unclamped switch-off. The switch node would ring to {} before the \
                 switch breaks down; a real switch avalanches at its breakdown voltage first \
                 (evaluate that as --clamp switch:V_BR against its avalanche rating). Add a \
                 clamp.",
                si(vpk.into(), "V")
            ));
            if vpk > PASCHEN_MIN_V {
                lines.push(format!(
                    "WARNING: {} is above the {PASCHEN_MIN_V} V minimum of the Paschen curve \
                     (air, 1 atm): contacts and gaps can arc; holding it off in air takes at \
                     least {} at 3 kV/mm.",
                    si(vpk.into(), "V"),
                    si(f64::from(vpk / AIR_BREAKDOWN_V_PER_M), "m")
                ));
            }
        }
        Clamp::Switch { clamp_v } => {
            lines.push(format!(
                "Switch: breakdown (V_DS(max)) must be at least {}; in avalanche or active clamp \
                 it takes {} per switch-off, {} peak: check its single-pulse avalanche rating \
                 E_AS at the operating junction temperature.",
                si(vpk.into(), "V"),
                si(r.clamp_energy_j.into(), "J"),
                si(s.peak_clamp_power_w()?.into(), "W"),
            ));
            let bound = avalanche_energy_lossless_j(
                s.inductance_h(),
                s.initial_current_a(),
                clamp_v,
                s.supply_v(),
            )?;
            lines.push(format!(
                "The supply adds {} during the decay; the R = 0 shortcut ½LI²·Vcl/(Vcl − Vs) \
                 would give {} (an upper bound).",
                si(r.supply_energy_j.into(), "J"),
                si(bound.into(), "J")
            ));
        }
        _ => {
            lines.push(format!(
                "Switch: must block at least {} (choose V_DS(max) with margin above it).",
                si(vpk.into(), "V")
            ));
            lines.push(format!(
                "Clamp part: must absorb {} per switch-off and {} peak.",
                si(r.clamp_energy_j.into(), "J"),
                si(s.peak_clamp_power_w()?.into(), "W")
            ));
        }
    }
    Ok(lines)
}

/// The `--json` report at single values as ordered figures: the points of the worst case
/// over ranges ([`super::worst`]).
///
/// # Errors
///
/// As a single-value run.
pub fn figures(a: &Args) -> Result<Figures, CliError> {
    figures_of(&evaluate(a)?.1)
}

/// The switch-off of `a`, its report and how the decay ends.
fn evaluate(a: &Args) -> Result<(SwitchOff, Report, DecayEnd), CliError> {
    let s = plan(a)?;
    let release = a.release_current.map(|r| r as f32);
    let (r, end) = report(&s, release).map_err(|e| CliError::from_lenz(e, FLAGS))?;
    Ok((s, r, end))
}

/// Runs `lenz turnoff`.
///
/// # Errors
///
/// Bad input (exit code 2), with the flag named.
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let (s, r, end) = evaluate(a)?;
    let release = a.release_current.map(|r| r as f32);
    if a.json {
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    // Without a release current, show the common-practice relay drop-out (10 % of the current
    // at switch-off, taken as the nominal current) and say so.
    let common = if release.is_none() {
        let rel = s
            .release_time_s(s.initial_current_a().max(f32::MIN_POSITIVE), None)
            .ok();
        rel.map(|x| x.time_s)
    } else {
        None
    };
    let lines = verdict_lines(&s, &r).map_err(|e| CliError::from_lenz(e, FLAGS))?;
    let mut t = new_table(&["Quantity", "Value"]);
    t.add_row(vec!["Clamp".to_string(), clamp_text(s.clamp())]);
    t.add_row(vec![
        "Current at switch-off".to_string(),
        si(s.initial_current_a().into(), "A"),
    ]);
    let tau_name = if matches!(s.clamp(), Clamp::Unclamped { .. }) {
        "Ring amplitude time constant 2L/R"
    } else {
        "Decay time constant L/R"
    };
    t.add_row(vec![
        tau_name.to_string(),
        si(s.time_constant_s().into(), "s"),
    ]);
    if let (Some(tr), Some(ix)) = (r.time_to_release_s, release) {
        t.add_row(vec![
            format!("Time to {}", si(ix.into(), "A")),
            si(tr.into(), "s"),
        ]);
    }
    if let Some(tc) = common {
        t.add_row(vec![
            format!(
                "Time to {:.0} % of the current (relay drop-out, common practice)",
                100.0 * RELEASE_FRACTION_COMMON_PRACTICE
            ),
            si(tc.into(), "s"),
        ]);
    }
    match end {
        DecayEnd::Finite { time_s } => {
            t.add_row(vec!["Time to zero".to_string(), si(time_s.into(), "s")]);
        }
        DecayEnd::Exponential { fraction, time_s } => {
            t.add_row(vec![
                format!(
                    "Time to zero: never (exponential decay); time to {:.0} %",
                    100.0 * fraction
                ),
                si(time_s.into(), "s"),
            ]);
        }
    }
    t.add_row(vec![
        "Peak switch voltage".to_string(),
        si(r.peak_switch_voltage_v.into(), "V"),
    ]);
    t.add_row(vec![
        "Stored energy ½LI²".to_string(),
        si(r.stored_energy_j.into(), "J"),
    ]);
    t.add_row(vec![
        if matches!(s.clamp(), Clamp::Unclamped { .. }) {
            "Energy left in the switch capacitance".to_string()
        } else {
            "Energy into the clamp".to_string()
        },
        si(r.clamp_energy_j.into(), "J"),
    ]);
    t.add_row(vec![
        "Energy into the coil resistance".to_string(),
        si(r.resistance_energy_j.into(), "J"),
    ]);
    t.add_row(vec![
        "Energy from the supply".to_string(),
        si(r.supply_energy_j.into(), "J"),
    ]);
    outln!("{t}");
    if a.supply.is_none() {
        outln!(
            "No --supply given: 0 V assumed, so the switch voltages above are relative to the \
             supply (add the supply voltage)."
        );
    }
    if common.is_some() {
        outln!(
            "No --release-current given: the drop-out current is taken as {:.0} % of the current \
             at switch-off, the relay datasheet convention for must-release (common practice, \
             not a standard; a real relay releases at a higher current, so this is the slow \
             side). The armature's own release motion comes on top.",
            100.0 * RELEASE_FRACTION_COMMON_PRACTICE
        );
    }
    for l in lines {
        outln!("{l}");
    }
    outln!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}
