//! `lenz sim FILE...`: runs every scenario of the files in the closed loop and checks every
//! property. Exit code 0 when all hold, 1 when any fails, 2 on bad input.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use serde::Serialize;

use super::outputs::Staged;
use super::table::{new_table, si};
use crate::cli::{CAUTION, CliError};
use crate::closed_loop::{Property, Waveform};
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

/// A value in engineering notation, or "never" for an infinite time.
pub fn value(v: f64, unit: &str) -> String {
    if v.is_infinite() && unit == "s" {
        "never".into()
    } else if unit == "trips" {
        format!("{v:.0}")
    } else {
        si(v, unit)
    }
}

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
                value(p.limit, p.unit),
                if p.pass { "pass" } else { "FAIL" }.to_string(),
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
    let outcomes = run_all(&files, params, record, &mut sink)?;
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
                .map(|o| ScenarioReport {
                    file: &o.file,
                    system: &o.system,
                    scenario: &o.scenario,
                    passed: o.result.passed(),
                    properties: &o.result.properties,
                    events: &o.result.events,
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
