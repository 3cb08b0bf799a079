//! `lenz trip-time` and `lenz trip-threshold`: quick overcurrent calculations.

use std::process::ExitCode;

use lenz::trip::{Curve, DetectionDelay, InverseTime, ThresholdParams, ThresholdPlan};
use serde::Serialize;

use super::table::{new_table, si};
use crate::cli::{CAUTION, CliError, ampere, henry, plain, second, volt};

/// Arguments of `lenz trip-time`.
#[derive(Debug, clap::Args)]
pub struct TimeArgs {
    /// Curve: iec-si, iec-vi, iec-ei (IEC 60255-151 A–C), iec-lti (long-time inverse of relay
    /// practice, not an IEC 60255-151 type), ieee-mi, ieee-vi, ieee-ei (IEEE C37.112, D–F).
    #[arg(long, value_name = "NAME", value_parser = curve_name)]
    curve: Curve,
    /// Pickup current, A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    pickup: f64,
    /// Time multiplier (TMS; time dial TD for the IEEE curves).
    #[arg(long, value_name = "TMS", value_parser = plain, allow_hyphen_values = true)]
    multiplier: f64,
    /// The constant current, A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    current: f64,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

fn curve_name(s: &str) -> Result<Curve, String> {
    Curve::from_name(s).ok_or_else(|| {
        let names: Vec<_> = Curve::ALL.iter().map(|c| c.name()).collect();
        format!("unknown curve '{s}', expected one of {}", names.join(", "))
    })
}

/// The `--json` output of `lenz trip-time`.
#[derive(Debug, Serialize)]
struct TimeReport {
    curve: &'static str,
    pickup_a: f32,
    multiplier: f32,
    current_a: f32,
    multiple: f32,
    trip_time_s: f32,
}

const TIME_FLAGS: &[(&str, &str)] = &[
    ("pickup_a", "--pickup"),
    ("multiplier", "--multiplier"),
    ("current_a", "--current"),
];

/// Runs `lenz trip-time`.
///
/// # Errors
///
/// Bad input with the flag named; a current at or below pickup (the element never trips).
pub fn run_time(a: &TimeArgs) -> Result<ExitCode, CliError> {
    let el = InverseTime::new(a.curve, a.pickup as f32, a.multiplier as f32)
        .map_err(|e| CliError::from_lenz(e, TIME_FLAGS))?;
    let current = a.current as f32;
    let t = match el.trip_time_s(current) {
        Ok(t) => t,
        Err(lenz::Error::Unreachable { target, limit, .. }) => {
            return Err(CliError(format!(
                "--current: {} is at or below the pickup {}: the {} element never trips",
                si(target.into(), "A"),
                si(limit.into(), "A"),
                a.curve.name()
            )));
        }
        Err(e) => return Err(CliError::from_lenz(e, TIME_FLAGS)),
    };
    let r = TimeReport {
        curve: a.curve.name(),
        pickup_a: el.pickup_a(),
        multiplier: el.multiplier(),
        current_a: current.abs(),
        multiple: current.abs() / el.pickup_a(),
        trip_time_s: t,
    };
    if a.json {
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    let k = a.curve.constants();
    let mut tab = new_table(&["Quantity", "Value"]);
    tab.add_row(vec![
        "Curve".to_string(),
        format!("{} (k {}, α {}, c {})", r.curve, k.k_s, k.alpha, k.c_s),
    ]);
    tab.add_row(vec!["Pickup".to_string(), si(r.pickup_a.into(), "A")]);
    tab.add_row(vec![
        "Time multiplier".to_string(),
        format!("{}", r.multiplier),
    ]);
    tab.add_row(vec![
        "Current (multiple of pickup)".to_string(),
        format!("{} ({:.4})", si(r.current_a.into(), "A"), r.multiple),
    ]);
    tab.add_row(vec!["Trip time".to_string(), si(r.trip_time_s.into(), "s")]);
    outln!("{tab}");
    if a.curve == Curve::LongTimeInverse {
        outln!(
            "Note: long-time inverse (k 120, α 1) is a relay-practice curve, not one of the six \
             IEC 60255-151 curve types."
        );
    }
    outln!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}

/// Arguments of `lenz trip-threshold`.
#[derive(Debug, clap::Args)]
pub struct ThresholdArgs {
    /// Current the switch survives, A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    limit: f64,
    /// Highest supply voltage, V.
    #[arg(long, value_name = "V", value_parser = volt, allow_hyphen_values = true)]
    supply: f64,
    /// Smallest inductance of the load (saturated, or the wiring's for a shorted load), H.
    #[arg(long, value_name = "H", value_parser = henry, allow_hyphen_values = true)]
    inductance: f64,
    /// Detection delay: conversion, firmware latency and switch turn-off together, s.
    #[arg(long, value_name = "S", value_parser = second, allow_hyphen_values = true)]
    delay: f64,
    /// Sampling period, s; the worst case adds one period to the delay. Default 0
    /// (a hardware comparator).
    #[arg(long, value_name = "S", value_parser = second, allow_hyphen_values = true)]
    sample_period: Option<f64>,
    /// Largest normal current (inrush or PWM peak), A.
    #[arg(long, value_name = "A", value_parser = ampere, allow_hyphen_values = true)]
    normal_peak: Option<f64>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
}

/// The `--json` output of `lenz trip-threshold`.
#[derive(Debug, Serialize)]
struct ThresholdReport {
    threshold_a: f32,
    rise_during_delay_a: f32,
    peak_at_interrupt_a: f32,
    #[serde(skip_serializing_if = "Option::is_none")]
    margin_a: Option<f32>,
    delay_s: f32,
    di_dt_a_per_s: f32,
}

const THRESHOLD_FLAGS: &[(&str, &str)] = &[
    ("switch_limit_a", "--limit"),
    ("supply_max_v", "--supply"),
    ("inductance_min_h", "--inductance"),
    ("conversion_s", "--delay"),
    ("sample_period_s", "--sample-period"),
    ("delay_s", "--delay"),
    ("normal_peak_a", "--normal-peak"),
];

/// Why no threshold fits, with what would fix it.
fn no_fit(p: &ThresholdParams, e: lenz::Error) -> CliError {
    let lenz::Error::Unreachable { param, limit, .. } = e else {
        return CliError::from_lenz(e, THRESHOLD_FLAGS);
    };
    let t = p.delay.total_s().unwrap_or(f32::NAN);
    let di_dt = p.supply_max_v / p.inductance_min_h;
    let mut text = match (param, p.normal_peak_a) {
        ("normal_peak_a", Some(n)) => format!(
            "no threshold fits (--normal-peak): the current can rise {} (at {}/s) in the \
             worst-case delay {}, so the highest safe threshold {} is not above the normal peak \
             {}",
            si((di_dt * t).into(), "A"),
            si(di_dt.into(), "A"),
            si(t.into(), "s"),
            si(limit.into(), "A"),
            si(n.into(), "A"),
        ),
        _ => format!(
            "no threshold fits (--delay): in the worst-case delay {} the current can rise from \
             zero past the switch limit {} (at {}/s)",
            si(t.into(), "s"),
            si(p.switch_limit_a.into(), "A"),
            si(di_dt.into(), "A"),
        ),
    };
    match p.remedy() {
        Ok(r) => text.push_str(&format!(
            "; it would fit with a total delay of at most {} (faster detection, or a hardware \
             comparator with at most that delay) or an inductance of at least {}",
            si(r.max_delay_s.into(), "s"),
            si(r.min_inductance_h.into(), "H"),
        )),
        Err(_) => text.push_str(
            "; the normal peak is at or above the switch limit: a switch with a higher \
             current rating is needed",
        ),
    }
    CliError(text)
}

/// Runs `lenz trip-threshold`.
///
/// # Errors
///
/// Bad input with the flag named; no threshold fits, with the reason and the remedy.
pub fn run_threshold(a: &ThresholdArgs) -> Result<ExitCode, CliError> {
    let p = ThresholdParams {
        switch_limit_a: a.limit as f32,
        supply_max_v: a.supply as f32,
        inductance_min_h: a.inductance as f32,
        delay: DetectionDelay::lumped(a.sample_period.unwrap_or(0.0) as f32, a.delay as f32),
        normal_peak_a: a.normal_peak.map(|n| n as f32),
        shorted_load: None,
    };
    let plan: ThresholdPlan = match p.plan() {
        Ok(plan) => plan,
        Err(e @ lenz::Error::Unreachable { .. }) => return Err(no_fit(&p, e)),
        Err(e) => return Err(CliError::from_lenz(e, THRESHOLD_FLAGS)),
    };
    let r = ThresholdReport {
        threshold_a: plan.threshold_a,
        rise_during_delay_a: plan.rise_during_delay_a,
        peak_at_interrupt_a: plan.peak_at_interrupt_a,
        margin_a: plan.margin_a,
        delay_s: plan.delay_s,
        di_dt_a_per_s: plan.di_dt_a_per_s,
    };
    if a.json {
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    let mut tab = new_table(&["Quantity", "Value"]);
    tab.add_row(vec![
        "Worst-case di/dt (max supply / min inductance)".to_string(),
        si(r.di_dt_a_per_s.into(), "A/s"),
    ]);
    tab.add_row(vec![
        "Worst-case delay (incl. one sample period)".to_string(),
        si(r.delay_s.into(), "s"),
    ]);
    tab.add_row(vec![
        "Rise during the delay".to_string(),
        si(r.rise_during_delay_a.into(), "A"),
    ]);
    tab.add_row(vec![
        "Highest safe threshold".to_string(),
        si(r.threshold_a.into(), "A"),
    ]);
    tab.add_row(vec![
        "Peak current at interruption".to_string(),
        si(r.peak_at_interrupt_a.into(), "A"),
    ]);
    if let Some(m) = r.margin_a {
        tab.add_row(vec![
            "Margin above the normal peak".to_string(),
            si(m.into(), "A"),
        ]);
    }
    outln!("{tab}");
    outln!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}
