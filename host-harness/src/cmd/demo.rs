//! `lenz demo`: the worked example on the greenhouse demo system (invented values).

use std::process::ExitCode;

use lenz::{Bound, bounds::CoilCorner};
use serde::Serialize;

use super::table::{new_table, si};
use crate::cli::{CAUTION, CliError};
use crate::demo::{self, DemoCoil};

/// Arguments of `lenz demo`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Print the plan as JSON instead of tables.
    #[arg(long)]
    json: bool,
}

/// One worst-case figure of a demo coil.
#[derive(Debug, Serialize)]
struct Figure {
    coil: &'static str,
    figure: &'static str,
    unit: &'static str,
    bound: Bound<CoilCorner>,
}

fn figures(c: &DemoCoil) -> Result<Vec<Figure>, lenz::Error> {
    let s = &c.spread;
    let f = |figure, unit, bound| Figure {
        coil: c.name,
        figure,
        unit,
        bound,
    };
    Ok(vec![
        f("steady current", "A", s.steady_current_a()?),
        f("time constant", "s", s.time_constant_s()?),
        f("pull-in time", "s", s.pull_in_time_s(c.pull_in_a)?),
        f("stored energy", "J", s.stored_energy_j()?),
    ])
}

fn corner(c: &CoilCorner) -> String {
    format!(
        "{}, {:.0} °C, {}, {}",
        si(c.supply_v.into(), "V"),
        c.temp_c,
        si(c.inductance_h.into(), "H"),
        si(c.resistance_ohm.into(), "Ω")
    )
}

/// Runs `lenz demo`.
///
/// # Errors
///
/// Only if the shipped demo values fail validation.
pub fn run(a: &Args) -> Result<ExitCode, CliError> {
    let mut all = Vec::new();
    for c in [demo::valve(), demo::relay()] {
        let c = c.map_err(|e| CliError(e.to_string()))?;
        all.extend(figures(&c).map_err(|e| CliError(format!("{}: {e}", c.name)))?);
    }
    if a.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&all).map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    println!("lenz demo: greenhouse controller (all values invented for the demo)");
    println!("Worst-case coil plan over supply, coil temperature and part tolerances");
    println!("(corners: supply, coil temperature, inductance, resistance at 20 °C)\n");
    let mut t = new_table(&["Coil", "Figure", "Min", "at", "Max", "at"]);
    for f in &all {
        t.add_row(vec![
            f.coil.to_string(),
            f.figure.to_string(),
            si(f.bound.min.into(), f.unit),
            corner(&f.bound.min_at),
            si(f.bound.max.into(), f.unit),
            corner(&f.bound.max_at),
        ]);
    }
    println!("{t}");
    println!(
        "\nThe longest pull-in sits at the lowest supply with the hottest coil; the highest \
         current and stored energy at the highest supply with the coldest coil."
    );
    println!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}
