//! `lenz cost`: instructions, code bytes and state bytes per kernel call on Cortex-M targets,
//! measured under emulation, beside the straightforward f32/libm version (method:
//! [`crate::firmware::cost`]).

use std::process::ExitCode;

use serde::Serialize;

use crate::cli::CliError;
use crate::firmware::cost::{self, TargetCost};
use crate::firmware::{TARGETS, Target, Toolchain, budget};

/// Arguments of `lenz cost`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Target core: m0 (Cortex-M0), m3 (Cortex-M3) or m4f (Cortex-M4F); default all three.
    #[arg(long, value_name = "CORE", value_parser = target)]
    target: Option<Target>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    json: bool,
    /// Compare with the committed budget (benches/target/budget.json); exit 1 if exceeded.
    #[arg(long)]
    check_budget: bool,
    /// Write the measured counts with 10 % headroom to the budget file (all targets).
    #[arg(long, conflicts_with = "target")]
    write_budget: bool,
}

fn target(s: &str) -> Result<Target, String> {
    Target::from_key(s).ok_or_else(|| format!("`{s}` is not one of m0, m3, m4f"))
}

/// The `--json` output of `lenz cost`.
#[derive(Debug, Serialize)]
struct Report<'a> {
    method: &'static str,
    targets: &'a [TargetCost],
    #[serde(skip_serializing_if = "Option::is_none")]
    budget_violations: Option<Vec<String>>,
}

const METHOD: &str = "Instructions per call: qemu-system-arm -icount shift=4, SysTick ticks \
calibrated by a two-instruction loop, kernel loop minus the same loop calling an empty function, \
divided by the calls. Code bytes: nm sizes of the kernel symbol's call graph. State bytes: \
size_of the per-channel state on the target. Ratio: straightforward f32/libm version ÷ integer \
kernel.";

/// Measures the targets selected by `--target` (all by default).
///
/// # Errors
///
/// Missing tools or a failed build or run.
pub fn measure(only: Option<Target>) -> Result<Vec<TargetCost>, String> {
    let targets: Vec<Target> = only.map_or_else(|| TARGETS.to_vec(), |t| vec![t]);
    let tc = Toolchain::detect(&targets).map_err(|m| m.to_string().trim_end().to_string())?;
    targets.iter().map(|&t| cost::measure(&tc, t)).collect()
}

/// Runs `lenz cost`.
///
/// # Errors
///
/// Missing tools or a failed build or run (exit 2).
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let costs = measure(a.target).map_err(CliError)?;
    if a.write_budget {
        let b = budget::from_costs(&costs);
        let text = serde_json::to_string_pretty(&b).map_err(|e| CliError(e.to_string()))?;
        std::fs::write(budget::path(), text + "\n")
            .map_err(|e| CliError(format!("{}: {e}", budget::path().display())))?;
    }
    let violations = if a.check_budget {
        let b = budget::load().map_err(CliError)?;
        Some(budget::check(&b, &costs))
    } else {
        None
    };
    if a.json {
        let r = Report {
            method: METHOD,
            targets: &costs,
            budget_violations: violations.clone(),
        };
        outln!(
            "{}",
            serde_json::to_string(&r).map_err(|e| CliError(e.to_string()))?
        );
    } else {
        outln!("{}", cost::table(&costs));
        outln!("{METHOD}");
        if a.write_budget {
            outln!("Budget written to {}.", budget::path().display());
        }
        if let Some(v) = &violations {
            if v.is_empty() {
                outln!("Within the budget of {}.", budget::path().display());
            }
            for line in v {
                outln!("OVER BUDGET: {line}");
            }
        }
    }
    Ok(match violations {
        Some(v) if !v.is_empty() => ExitCode::from(1),
        _ => ExitCode::SUCCESS,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cli::Cli;
    use clap::Parser;

    #[test]
    fn target_flag_takes_the_three_cores_only() {
        assert_eq!(target("m0"), Ok(Target::M0));
        assert_eq!(target("m4f"), Ok(Target::M4f));
        let e = target("m7").unwrap_err();
        assert!(e.contains("m0, m3, m4f"), "{e}");
        let e = Cli::try_parse_from(["lenz", "cost", "--target", "m7"]).unwrap_err();
        assert!(e.to_string().contains("--target"), "{e}");
        assert!(Cli::try_parse_from(["lenz", "cost", "--target", "m3", "--json"]).is_ok());
        // The budget is written for every core at once.
        assert!(Cli::try_parse_from(["lenz", "cost", "--target", "m3", "--write-budget"]).is_err());
    }
}
