//! `lenz sim FILE...`: runs every scenario of the files in the closed loop and checks every
//! property. Exit code 0 when all hold, 1 when any fails, 2 on bad input.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use serde::Serialize;

use super::common::{CAUTION, CliError};
use super::outputs::Staged;
use super::table::new_table;
use crate::closed_loop::{Property, Waveform};
use crate::firmware::Target;
use crate::pil::{self, FirmwareRun, Guards, TickBudget, TickCosts};
use crate::report::{self, Names, Outcome};
use crate::scenario::{
    self, File,
    run::{Params, Record},
};

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

/// Share of the tick period a tick function may take by default (half: room for the
/// instructions that take more than one cycle and for the rest of the firmware; common
/// practice, no source).
pub const DEFAULT_TICK_FRACTION: f64 = 0.5;

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
    // The image first: a wrong file is named even where the emulator is missing.
    crate::pil::elf::check(image, target).map_err(CliError)?;
    let fw = FirmwareRun {
        qemu: pil::session::qemu().map_err(CliError)?,
        target,
        image: image.clone(),
        guards: Guards::default(),
        budget,
        record_actuations: false,
        params: None,
    };
    Ok(Some(fw))
}

/// Runs every scenario of `files` with the decisions of the image in `fw`.
///
/// # Errors
///
/// A value the plans or the plant reject, or an image that cannot run.
pub fn run_all_firmware(
    files: &[(String, File)],
    params: impl Fn(&File) -> Params,
    record: Record,
    fw: &FirmwareRun,
    sink: &mut Sink,
) -> Result<(Vec<Outcome>, Vec<TickCosts>), CliError> {
    let mut out = Vec::new();
    let mut costs = Vec::new();
    for (name, f) in files {
        let p = params(f);
        for (k, sc) in f.scenarios.iter().enumerate() {
            let o = pil::run_scenario(f, k, &p, record, fw)
                .map_err(|e| CliError(scenario::locate_problem(name, &e.0).to_string()))?;
            costs.push(o.costs);
            let mut outcome = Outcome {
                file: name.clone(),
                system: f.system.name.clone(),
                scenario: sc.name.clone(),
                stem: sink.names.unique(&report::base_stem(name, &sc.name)),
                result: o.result,
            };
            sink.scenario(&outcome)?;
            outcome.result.waveform = Waveform::default();
            out.push(outcome);
        }
    }
    Ok((out, costs))
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

/// Loads every file; the first bad one ends the command.
///
/// # Errors
///
/// The file's problem, with its position.
pub fn load_all(files: &[PathBuf]) -> Result<Vec<(String, File)>, CliError> {
    files
        .iter()
        .map(|p| {
            scenario::load(p)
                .map(|f| (p.display().to_string(), f))
                .map_err(|e| CliError(e.to_string()))
        })
        .collect()
}

/// Runs every scenario of `files` with part values `params` (per file); each outcome goes
/// through `sink` (which writes its files) as soon as it is made, and is kept without its
/// waveform, so memory holds one scenario's waveform at a time.
///
/// # Errors
///
/// A value the plans or the plant reject, or a file `sink` cannot write.
pub fn run_all(
    files: &[(String, File)],
    params: impl Fn(&File) -> Params,
    record: Record,
    sink: &mut Sink,
) -> Result<Vec<Outcome>, CliError> {
    let mut out = Vec::new();
    for (name, f) in files {
        let p = params(f);
        for (k, sc) in f.scenarios.iter().enumerate() {
            let result = scenario::run::run(f, k, &p, record)
                .map_err(|e| CliError(scenario::locate_problem(name, &e.0).to_string()))?;
            let mut o = Outcome {
                file: name.clone(),
                system: f.system.name.clone(),
                scenario: sc.name.clone(),
                stem: sink.names.unique(&report::base_stem(name, &sc.name)),
                result,
            };
            sink.scenario(&o)?;
            o.result.waveform = Waveform::default();
            out.push(o);
        }
    }
    Ok(out)
}

/// Where the files of a run go: CSV waveforms, SVG plots, the JUnit report, each in a staged
/// folder ([`Staged`]) checked before the run.
#[derive(Debug, Default)]
pub struct Sink {
    stages: Vec<Staged>,
    /// Stage index and name prefix of the CSV files.
    csv: Option<(usize, String)>,
    /// Stage index and name prefix of the SVG plots.
    plot: Option<(usize, String)>,
    /// Stage index and file name of the JUnit report.
    junit: Option<(usize, String)>,
    names: Names,
}

impl Sink {
    /// Adds a staged folder; returns its index.
    pub fn add_stage(&mut self, s: Staged) -> usize {
        self.stages.push(s);
        self.stages.len() - 1
    }

    /// Writes the CSV files as `PREFIX<stem>.csv` into stage `k`.
    pub fn csv_into(&mut self, k: usize, prefix: &str) {
        self.csv = Some((k, prefix.to_string()));
    }

    /// Writes the SVG plots as `PREFIX<stem>.svg` into stage `k`.
    pub fn plot_into(&mut self, k: usize, prefix: &str) {
        self.plot = Some((k, prefix.to_string()));
    }

    /// Writes the JUnit report as `name` into stage `k`.
    pub fn junit_into(&mut self, k: usize, name: &str) {
        self.junit = Some((k, name.to_string()));
    }

    /// The outputs of `lenz sim`'s flags, each checked (and its folder created) now.
    ///
    /// # Errors
    ///
    /// A folder or file that cannot be written, naming the flag.
    pub fn for_flags(
        csv: Option<&Path>,
        plot: Option<&Path>,
        junit: Option<&Path>,
    ) -> Result<Sink, CliError> {
        let mut s = Sink::default();
        if let Some(dir) = csv {
            let k = s.add_stage(Staged::prepare("--csv", dir)?);
            s.csv_into(k, "");
        }
        if let Some(dir) = plot {
            let k = s.add_stage(Staged::prepare("--plot", dir)?);
            s.plot_into(k, "");
        }
        if let Some(p) = junit {
            let name = p
                .file_name()
                .and_then(|n| n.to_str())
                .filter(|n| !n.is_empty())
                .ok_or_else(|| CliError(format!("--junit {}: not a file name", p.display())))?
                .to_string();
            let parent = p
                .parent()
                .filter(|d| !d.as_os_str().is_empty())
                .unwrap_or(Path::new("."));
            let stage = Staged::prepare("--junit", parent)?;
            stage.check_name(Path::new(&name))?;
            let k = s.add_stage(stage);
            s.junit_into(k, &name);
        }
        Ok(s)
    }

    /// Whether the run must record waveforms.
    #[must_use]
    pub fn wants_waveforms(&self) -> bool {
        self.csv.is_some() || self.plot.is_some()
    }

    /// The staged folder `k` (for a command's own files).
    ///
    /// # Errors
    ///
    /// There is no folder `k`.
    pub fn staged(&mut self, k: usize) -> Result<&mut Staged, CliError> {
        self.stages
            .get_mut(k)
            .ok_or_else(|| CliError(format!("no output folder number {k}")))
    }

    /// Writes the CSV and SVG files of one scenario.
    ///
    /// # Errors
    ///
    /// A file cannot be written or drawn.
    pub fn scenario(&mut self, o: &Outcome) -> Result<(), CliError> {
        if let Some((k, prefix)) = self.csv.clone() {
            self.staged(k)?
                .write_with(&format!("{prefix}{}.csv", o.stem), |w| {
                    report::csv::write_csv(w, &o.result.waveform)
                })?;
        }
        if let Some((k, prefix)) = self.plot.clone() {
            let svg = report::svg::waveform_svg(o).map_err(CliError)?;
            self.staged(k)?
                .write(&format!("{prefix}{}.svg", o.stem), &svg)?;
        }
        Ok(())
    }

    /// Writes the JUnit report and moves every file into place; returns the files.
    ///
    /// # Errors
    ///
    /// A file cannot be written or moved.
    pub fn finish(mut self, outcomes: &[Outcome]) -> Result<Vec<PathBuf>, CliError> {
        if let Some((k, name)) = self.junit.clone() {
            self.staged(k)?
                .write(&name, &report::junit::to_junit(outcomes))?;
        }
        let mut written = Vec::new();
        for s in std::mem::take(&mut self.stages) {
            written.extend(s.commit()?);
        }
        Ok(written)
    }
}

impl Drop for Sink {
    fn drop(&mut self) {
        // Last prepared first: a folder an earlier flag created is empty only once the later
        // flags' staging folders in it are gone.
        while let Some(s) = self.stages.pop() {
            drop(s);
        }
    }
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
