//! `lenz plan FILE`: prints the system's worst-case plan ([`crate::system::plan`]): every
//! design number as bounds (each with the corner that produced it), and the verdicts.
//!
//! Exit code 0 when every verdict passes, 1 when one fails, 2 on bad input.

use std::path::PathBuf;
use std::process::ExitCode;

use super::common::{CAUTION, CliError};
use super::table::new_table;
use crate::scenario::{self, File};
use crate::system::plan::plan;

/// Arguments of `lenz plan`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML); only its `[system]` is used.
    #[arg(value_name = "FILE")]
    file: PathBuf,
    /// Print one JSON object instead of the tables.
    #[arg(long)]
    json: bool,
}

pub use crate::report::text::num;

/// Prints the plan tables of `f` (human form); returns whether every verdict passes.
///
/// # Errors
///
/// A plan routine rejects a value of the file.
pub fn print_tables(name: &str, f: &File) -> Result<bool, CliError> {
    let rep =
        plan(f).map_err(|e| CliError(crate::scenario::locate_problem(name, &e.0).to_string()))?;
    outln!("{}: worst-case plan of {}", name, rep.system);
    let mut t = new_table(&["Figure", "Min", "at", "Max", "at"]);
    for fig in &rep.figures {
        t.add_row(vec![
            fig.figure.to_string(),
            num(fig.min, fig.unit),
            fig.min_text.clone(),
            num(fig.max, fig.unit),
            fig.max_text.clone(),
        ]);
    }
    outln!("{t}");
    let mut v = new_table(&["Verdict", "Worst", "Limit", "Result", "Note"]);
    for x in &rep.verdicts {
        v.add_row(vec![
            x.check.clone(),
            x.value.map_or_else(|| "—".to_string(), |y| num(y, x.unit)),
            num(x.limit, x.unit),
            if x.pass { "pass" } else { "FAIL" }.to_string(),
            x.note.clone().unwrap_or_default(),
        ]);
    }
    outln!("{v}");
    Ok(rep.passed)
}

/// Runs `lenz plan`.
///
/// # Errors
///
/// Bad input (exit 2).
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let name = a.file.display().to_string();
    let f = scenario::load(&a.file).map_err(|e| CliError(e.to_string()))?;
    let passed = if a.json {
        let mut rep = plan(&f)
            .map_err(|e| CliError(crate::scenario::locate_problem(&name, &e.0).to_string()))?;
        rep.file = name;
        outln!(
            "{}",
            serde_json::to_string_pretty(&rep).map_err(|e| CliError(e.to_string()))?
        );
        rep.passed
    } else {
        let passed = print_tables(&name, &f)?;
        outln!(
            "{}",
            if passed {
                "Every verdict passes."
            } else {
                "A verdict fails."
            }
        );
        outln!("{CAUTION}");
        passed
    };
    Ok(if passed {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
