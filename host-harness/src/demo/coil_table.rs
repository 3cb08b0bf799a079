//! The opening table of `lenz demo`: the worst-case coil figures of the shipped demo coils
//! (invented values), with their bounds and the corners where they occur.

use serde::Serialize;

use crate::input_error::InputError;

/// The shipped demo scenario files, built into the binary.
pub const SCENARIO_FILES: &[(&str, &str)] = &[
    ("valve.toml", include_str!("../../scenarios/valve.toml")),
    ("relay.toml", include_str!("../../scenarios/relay.toml")),
    ("boost.toml", include_str!("../../scenarios/boost.toml")),
    ("motor.toml", include_str!("../../scenarios/motor.toml")),
];

/// One worst-case figure of a demo coil (`lenz demo --json` prints the list).
#[derive(Debug, Serialize)]
pub struct CoilFigure {
    /// The coil's system name.
    pub coil: String,
    /// The figure's name, as in the plan.
    pub figure: &'static str,
    /// Its unit.
    pub unit: &'static str,
    /// Its bounds.
    pub bound: FigureBound,
}

/// A figure's bounds with the corners (supply, coil temperature, inductance, resistance at
/// 20 °C) where they occur.
#[derive(Debug, Serialize)]
pub struct FigureBound {
    /// Smallest value.
    pub min: f32,
    /// Largest value.
    pub max: f32,
    /// Where the smallest value occurs.
    pub min_at: serde_json::Value,
    /// Where the largest value occurs.
    pub max_at: serde_json::Value,
    /// Where the smallest value occurs, for people.
    #[serde(skip)]
    pub min_text: String,
    /// Where the largest value occurs, for people.
    #[serde(skip)]
    pub max_text: String,
}

/// The coil figures of the opening table.
pub const COIL_FIGURES: [&str; 4] = [
    "steady current",
    "time constant",
    "pull-in time",
    "stored energy",
];

/// The opening table's figures, taken from the plans of the shipped coil files (valve and
/// relay), so they are the very numbers of the per-file plans printed below them: one
/// description per coil, with its whole loop resistance (winding, switch on-resistance, supply
/// source resistance and shunt).
///
/// # Errors
///
/// A shipped file fails validation or its plan (a bug, reported rather than hidden).
pub fn coil_figures() -> Result<Vec<CoilFigure>, InputError> {
    let mut all = Vec::new();
    for (name, text) in SCENARIO_FILES {
        let f = crate::scenario::parse(name, text).map_err(|e| InputError(e.to_string()))?;
        if f.system.coil.is_none() {
            continue;
        }
        let rep = crate::system::plan::plan(&f)
            .map_err(|e| InputError(crate::scenario::locate_problem(name, &e.0).to_string()))?;
        for wanted in COIL_FIGURES {
            let fig = rep
                .figures
                .iter()
                .find(|g| g.figure == wanted)
                .ok_or_else(|| InputError(format!("{name}: the plan has no {wanted}")))?;
            all.push(CoilFigure {
                coil: rep.system.clone(),
                figure: fig.figure,
                unit: fig.unit,
                bound: FigureBound {
                    min: fig.min,
                    max: fig.max,
                    min_at: fig.min_at.clone(),
                    max_at: fig.max_at.clone(),
                    min_text: fig.min_text.clone(),
                    max_text: fig.max_text.clone(),
                },
            });
        }
    }
    Ok(all)
}
