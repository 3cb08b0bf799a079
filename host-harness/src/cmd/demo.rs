//! `lenz demo`: the worked example on the greenhouse demo system (invented values).
//!
//! 1. The worst-case coil plan table of the demo coils (also the whole `--json` output): the
//!    coil figures of the valve and relay files' own plans, so one description gives both.
//! 2. For each shipped scenario file (valve, relay, boost rail, vent motor; built into the
//!    binary): its plan with verdicts (`lenz plan`) and its scenarios in the closed loop
//!    (`lenz sim`).
//! 3. A report folder (`--out`, default `lenz-report/` in the current directory): `index.html`
//!    with the plan and result tables linking every scenario's SVG plot (`plots/`) and CSV
//!    waveform (`csv/`), the JUnit XML and `results.json`; the last line names the page.
//!
//! Exit code 0 when every verdict and property holds, 1 otherwise. A release build runs it in
//! well under a second.

use std::path::PathBuf;
use std::process::ExitCode;

use super::common::{CAUTION, CliError};
use super::table::{new_table, si};
use crate::demo::{SCENARIO_FILES, coil_figures};
use crate::outputs::Staged;
use crate::report::Sink;

/// Arguments of `lenz demo`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Print the plan as JSON instead of tables (no scenarios, no report folder).
    #[arg(long)]
    json: bool,
    /// Folder of the report (index.html, SVG plots, CSV waveforms, JUnit XML).
    #[arg(long, value_name = "DIR", default_value = "lenz-report")]
    out: PathBuf,
}

/// Runs `lenz demo`.
///
/// # Errors
///
/// Only if the shipped demo values fail validation.
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    // The report folder is checked before any work (`--json` writes none).
    let report = if a.json {
        None
    } else {
        let mut sink = Sink::default();
        let mut stage = Staged::prepare("--out", &a.out)?;
        stage.sub_folder("plots")?;
        stage.sub_folder("csv")?;
        for name in ["junit.xml", "results.json", "index.html"] {
            stage.check_name(std::path::Path::new(name))?;
        }
        let k = sink.add_stage(stage);
        sink.csv_into(k, "csv/");
        sink.plot_into(k, "plots/");
        sink.junit_into(k, "junit.xml");
        Some((sink, k))
    };
    let all = coil_figures()?;
    let Some((sink, k)) = report else {
        outln!(
            "{}",
            serde_json::to_string_pretty(&all).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    };
    outln!("lenz demo: greenhouse controller (all values invented for the demo)");
    outln!("Worst-case coil plan over supply, coil temperature and part tolerances");
    outln!("(corners: supply, coil temperature, inductance, resistance at 20 °C)");
    outln!(
        "The coils of valve.toml and relay.toml with their whole loop (winding, switch \
         on-resistance, supply source resistance, shunt): the same figures as their plans below.\n"
    );
    let mut t = new_table(&["Coil", "Figure", "Min", "at", "Max", "at"]);
    for f in &all {
        t.add_row(vec![
            f.coil.to_string(),
            f.figure.to_string(),
            si(f.bound.min.into(), f.unit),
            f.bound.min_text.clone(),
            si(f.bound.max.into(), f.unit),
            f.bound.max_text.clone(),
        ]);
    }
    outln!("{t}");
    outln!(
        "\nThe longest pull-in sits at the lowest supply with the hottest coil; the highest \
         current and stored energy at the highest supply with the coldest coil."
    );
    let passed = scenarios_and_report(&a.out, sink, k)?;
    Ok(if passed {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}

/// Runs the demo scenario files, prints their plans and results, and writes the report folder
/// `out` through `sink` (its staged folder `k`); returns whether every verdict and property
/// holds.
fn scenarios_and_report(out: &std::path::Path, mut sink: Sink, k: usize) -> Result<bool, CliError> {
    use crate::report::{Outcome, html};
    use crate::scenario::run::{Params, Record};

    let mut loaded = Vec::new();
    for (name, text) in SCENARIO_FILES {
        let f = crate::scenario::parse(name, text).map_err(|e| CliError(e.to_string()))?;
        loaded.push(((*name).to_string(), f));
    }
    let mut all_ok = true;
    let mut plans = Vec::new();
    let mut outcomes: Vec<Outcome> = Vec::new();
    for (name, f) in &loaded {
        outln!();
        all_ok &= super::plan::print_tables(name, f)?;
        let rep = crate::system::plan::plan(f).map_err(|e| CliError(e.0))?;
        plans.push(rep);
        let runs = crate::system::batch::run_all(
            std::slice::from_ref(&(name.clone(), f.clone())),
            |_| Params::NOMINAL,
            Record::Every,
            &mut sink,
        )?;
        outln!("{name}: demo scenarios in the closed loop");
        outln!("{}", super::sim::table(&runs, false));
        all_ok &= runs.iter().all(|o| o.result.passed());
        outcomes.extend(runs);
    }
    let sections: Vec<html::Section<'_>> = loaded
        .iter()
        .zip(&plans)
        .map(|((name, _), plan)| {
            // The outcomes are in file order: this file's are one contiguous run.
            let first = outcomes.iter().position(|o| &o.file == name).unwrap_or(0);
            let n = outcomes.iter().filter(|o| &o.file == name).count();
            html::Section {
                file: name,
                plan,
                outcomes: outcomes.get(first..first + n).unwrap_or(&[]),
            }
        })
        .collect();
    let page = html::index(
        "lenz demo: greenhouse controller",
        "All values are invented for the demo. These figures are design aids, not a safety \
         approval.",
        &sections,
        "plots",
        "csv",
        "junit.xml",
    );
    let results = serde_json::json!({
        "plans": plans,
        "scenarios": outcomes
            .iter()
            .map(|o| serde_json::json!({
                "file": o.file,
                "system": o.system,
                "scenario": o.scenario,
                "passed": o.result.passed(),
                "properties": o.result.properties,
                "events": o.result.events,
            }))
            .collect::<Vec<_>>(),
    });
    let text = serde_json::to_string_pretty(&results).map_err(|e| CliError(e.to_string()))?;
    let stage = sink.staged(k)?;
    stage.write("results.json", &text)?;
    stage.write("index.html", &page)?;
    sink.finish(&outcomes)?;
    let index = out.join("index.html");
    outln!(
        "\n{}",
        if all_ok {
            "Every verdict and property holds."
        } else {
            "A verdict or property fails (see the tables)."
        }
    );
    outln!("{CAUTION}");
    outln!("Report written to {}", index.display());
    Ok(all_ok)
}
