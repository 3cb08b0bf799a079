//! `lenz sim FILE...`: runs every scenario of the files in the closed loop and checks every
//! property. Exit code 0 when all hold, 1 when any fails, 2 on bad input.

use std::path::PathBuf;
use std::process::ExitCode;

use serde::Serialize;

use super::common::{CAUTION, CliError};
use super::table::new_table;
use crate::closed_loop::Property;
use crate::firmware::Target;
use crate::pil::{FirmwareRun, TickBudget, TickCosts};
use crate::report::{Outcome, Sink};
use crate::scenario::{
    File,
    run::{Params, Record},
};
use crate::system::batch::{DEFAULT_TICK_FRACTION, load_all, run_all, run_all_firmware};

/// Arguments of `lenz sim`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario files (TOML).
    #[arg(value_name = "FILE", required = true)]
    files: Vec<PathBuf>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
    /// Write the waveform of every scenario as CSV into this folder.
    #[arg(long, value_name = "DIR")]
    csv: Option<PathBuf>,
    /// Write an SVG plot of every scenario into this folder.
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
    /// Write a JUnit XML report (one test case per scenario and property) to this file.
    #[arg(long, value_name = "FILE")]
    junit: Option<PathBuf>,
    /// Replay run I of a sweep with seed S (the part values of that run), as `S:I`.
    #[arg(long, value_name = "S:I", value_parser = replay)]
    replay: Option<(u64, u64)>,
    /// Take the control decisions from this firmware image (an ELF built on the lenz-pil
    /// runtime), run on an emulated Cortex-M in lock-step with the plant; needs --core.
    #[arg(long, value_name = "ELF", requires = "core")]
    firmware: Option<PathBuf>,
    /// The emulated core of --firmware: m0 (microbit), m3 (lm3s6965evb), m4f (mps2-an386).
    #[arg(long, value_name = "CORE", value_parser = core_key, requires = "firmware")]
    core: Option<Target>,
    /// Core clock of --firmware, MHz: the tick-budget property then checks the worst tick's
    /// time at this clock (one instruction per cycle) against --tick-fraction of the tick.
    #[arg(long, value_name = "MHZ", value_parser = clock_mhz, requires = "firmware")]
    clock: Option<f64>,
    /// Share of the tick period the tick function may take with --clock (default 0.5).
    #[arg(long, value_name = "F", value_parser = fraction, requires = "clock")]
    tick_fraction: Option<f64>,
    /// The tick-budget property without --clock: the largest instructions allowed in a tick.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..), requires = "firmware", conflicts_with = "clock")]
    tick_budget: Option<u64>,
}

/// The firmware run the flags ask for, if any.
fn firmware_run(a: &Args) -> Result<Option<FirmwareRun>, CliError> {
    let (Some(image), Some(target)) = (&a.firmware, a.core) else {
        return Ok(None);
    };
    let budget = match (a.clock, a.tick_budget) {
        (Some(mhz), _) => Some(TickBudget::Clock {
            mhz,
            fraction: a.tick_fraction.unwrap_or(DEFAULT_TICK_FRACTION),
        }),
        (None, Some(n)) => Some(TickBudget::Instructions(n)),
        (None, None) => None,
    };
    crate::system::batch::firmware_run(image, target, budget).map(Some)
}

fn core_key(s: &str) -> Result<Target, String> {
    Target::from_key(s).ok_or_else(|| format!("'{s}' is not a core (m0, m3 or m4f)"))
}

fn clock_mhz(s: &str) -> Result<f64, String> {
    let v: f64 = s
        .trim()
        .parse()
        .map_err(|_| format!("'{s}' is not a clock in MHz"))?;
    if v.is_finite() && v > 0.0 && v <= 1000.0 {
        Ok(v)
    } else {
        Err(format!("'{s}': the clock must lie in (0, 1000] MHz"))
    }
}

fn fraction(s: &str) -> Result<f64, String> {
    let v: f64 = s
        .trim()
        .parse()
        .map_err(|_| format!("'{s}' is not a fraction"))?;
    if v.is_finite() && v > 0.0 && v <= 1.0 {
        Ok(v)
    } else {
        Err(format!("'{s}': the share of the tick must lie in (0, 1]"))
    }
}

/// The instructions-per-tick table of a firmware run.
#[must_use]
pub fn cost_table(outcomes: &[Outcome], costs: &[TickCosts]) -> comfy_table::Table {
    let mut t = new_table(&["Scenario", "Ticks", "Max", "At tick", "Mean", "99 %", "Min"]);
    for (o, c) in outcomes.iter().zip(costs) {
        t.add_row(vec![
            o.scenario.clone(),
            c.ticks.to_string(),
            c.max.to_string(),
            c.max_tick.to_string(),
            format!("{:.1}", c.mean),
            c.quantile(0.99).to_string(),
            c.min.to_string(),
        ]);
    }
    t
}

/// Parses `S:I`.
///
/// # Errors
///
/// Not two unsigned integers separated by a colon.
pub fn replay(s: &str) -> Result<(u64, u64), String> {
    let (a, b) = s
        .split_once(':')
        .ok_or_else(|| format!("'{s}' is not SEED:INDEX"))?;
    let seed = a
        .trim()
        .parse()
        .map_err(|_| format!("'{a}' is not a seed (an unsigned integer)"))?;
    let index = b
        .trim()
        .parse()
        .map_err(|_| format!("'{b}' is not a run index (an unsigned integer)"))?;
    Ok((seed, index))
}

/// The `--json` output.
#[derive(Debug, Serialize)]
struct Report<'a> {
    passed: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    replay: Option<ReplayInfo>,
    scenarios: Vec<ScenarioReport<'a>>,
}

#[derive(Debug, Serialize)]
struct ReplayInfo {
    seed: u64,
    index: u64,
    params: Params,
}

#[derive(Debug, Serialize)]
struct ScenarioReport<'a> {
    file: &'a str,
    system: &'a str,
    scenario: &'a str,
    passed: bool,
    properties: &'a [Property],
    events: &'a [crate::closed_loop::RunEvent],
    #[serde(skip_serializing_if = "Option::is_none")]
    tick_instructions: Option<&'a TickCosts>,
}

pub use crate::report::text::value;

/// The human table of `outcomes`.
#[must_use]
pub fn table(outcomes: &[Outcome], show_file: bool) -> comfy_table::Table {
    let mut header = vec!["Scenario", "Property", "Value", "Limit", "Result"];
    if show_file {
        header.insert(0, "File");
    }
    let mut t = new_table(&header);
    for o in outcomes {
        for p in &o.result.properties {
            let mut row = vec![
                o.scenario.clone(),
                p.name.replace('_', " "),
                value(p.value, p.unit),
                match p.bound {
                    crate::closed_loop::Bound::Max => value(p.limit, p.unit),
                    crate::closed_loop::Bound::Min => format!("≥ {}", value(p.limit, p.unit)),
                },
                match &p.detail {
                    Some(d) => format!("{}\n{d}", if p.pass { "pass" } else { "FAIL" }),
                    None => if p.pass { "pass" } else { "FAIL" }.to_string(),
                },
            ];
            if show_file {
                row.insert(0, o.file.clone());
            }
            t.add_row(row);
        }
    }
    t
}

/// Runs `lenz sim`.
///
/// # Errors
///
/// Bad input (exit 2).
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let files = load_all(&a.files)?;
    let params = |f: &File| match a.replay {
        Some((seed, index)) => Params::draw(f, seed, index),
        None => Params::NOMINAL,
    };
    // Every output path is checked before the first scenario runs.
    let mut sink = Sink::for_flags(a.csv.as_deref(), a.plot.as_deref(), a.junit.as_deref())?;
    let record = if sink.wants_waveforms() {
        Record::Every
    } else {
        Record::None
    };
    let fw = firmware_run(a)?;
    let (outcomes, costs) = match &fw {
        Some(fw) => run_all_firmware(&files, params, record, fw, &mut sink)?,
        None => (run_all(&files, params, record, &mut sink)?, Vec::new()),
    };
    sink.finish(&outcomes)?;
    let passed = outcomes.iter().all(|o| o.result.passed());
    if a.json {
        let rep = Report {
            passed,
            replay: a.replay.and_then(|(seed, index)| {
                files.first().map(|(_, f)| ReplayInfo {
                    seed,
                    index,
                    params: Params::draw(f, seed, index),
                })
            }),
            scenarios: outcomes
                .iter()
                .enumerate()
                .map(|(k, o)| ScenarioReport {
                    file: &o.file,
                    system: &o.system,
                    scenario: &o.scenario,
                    passed: o.result.passed(),
                    properties: &o.result.properties,
                    events: &o.result.events,
                    tick_instructions: costs.get(k),
                })
                .collect(),
        };
        crate::out::json(&rep).map_err(|e| CliError(e.to_string()))?;
    } else {
        if let Some((seed, index)) = a.replay {
            for (name, f) in &files {
                outln!(
                    "{name}: replaying sweep run {index} of seed {seed}: {}",
                    describe(&Params::draw(f, seed, index))
                );
            }
        }
        outln!("{}", table(&outcomes, files.len() > 1));
        if let Some(fw) = &fw {
            outln!(
                "\nInstructions per tick of {} on the {} ({}, qemu -icount):",
                fw.image.display(),
                fw.target.core(),
                fw.target.machine()
            );
            outln!("{}", cost_table(&outcomes, &costs));
        }
        let failed: usize = outcomes.iter().map(|o| o.result.violations().len()).sum();
        if passed {
            outln!("\nAll properties hold ({} scenarios).", outcomes.len());
        } else {
            outln!("\n{failed} properties do not hold.");
        }
        outln!("{CAUTION}");
    }
    Ok(if passed {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}

/// One line naming the part values of a run.
#[must_use]
pub fn describe(p: &Params) -> String {
    let mut parts = vec![
        format!("L ×{:.4}", p.inductance),
        format!("R ×{:.4}", p.resistance),
        format!("clamp ×{:.4}", p.clamp),
        format!("sense gain ×{:.4}", p.sense_gain),
        format!("load ×{:.4}", p.load),
    ];
    if let Some(v) = p.supply_v {
        parts.push(format!("supply {v:.3} V"));
    }
    if let Some(t) = p.temp_c {
        parts.push(format!("coil {t:.1} °C"));
    }
    let mut s = parts.join(", ");
    if p.supply_v.is_some() || p.temp_c.is_some() {
        s.push_str(" (as drawn: a scenario that sets its own supply or temperature keeps it)");
    }
    s
}
