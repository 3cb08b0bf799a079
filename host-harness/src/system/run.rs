//! One scenario in the closed loop with any controller: the plant for the run's draw, the
//! firmware inputs at the run's coil temperature, the loop configuration of the scenario.

use super::{FirmwareInputs, SetupError, firmware, plant};
use crate::closed_loop::{self, Controller, RunResult};
use crate::scenario::File;
use crate::scenario::run::{Params, Record, loop_config, point};

/// Runs scenario `index` of `file` with part values `p` and the controller `make` builds.
///
/// # Errors
///
/// No such scenario, a value the plans, the plant or `make` reject, or a timing the closed
/// loop rejects.
pub fn run_fallible<C: Controller>(
    file: &File,
    index: usize,
    p: &Params,
    record: Record,
    make: impl FnOnce(&FirmwareInputs) -> Result<C, SetupError>,
) -> Result<RunResult, SetupError> {
    let sc = file
        .scenarios
        .get(index)
        .ok_or_else(|| SetupError::new(format!("no scenario number {index}")))?;
    let pt = point(file, sc, p);
    let cfg = loop_config(file, sc, p, &pt, record);
    let loop_err = |e: closed_loop::RunError| match e {
        closed_loop::RunError::Timing(param) => SetupError::new(format!(
            "key `{}`: the timing of scenario '{}' is not consistent (a zero tick, PWM period \
             or duration, or a sampling instant outside the tick)",
            crate::scenario::run::file_key(file, Some(index), param)
                .unwrap_or_else(|| format!("scenario[{index}]")),
            sc.name
        )),
        other => SetupError::new(format!("key `scenario[{index}]`: {other}")),
    };
    let s = &file.system;
    if let Some(m) = &s.motor {
        let mut plant = super::motor::plant(file, Some(index), m, p, pt.supply_v, pt.temp_c)?;
        let inputs = firmware::inputs(file, pt.temp_c)?;
        let mut ctrl = make(&inputs)?;
        return closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err);
    }
    if let Some(b) = &s.boost {
        let mut plant = plant::boost_plant(file, b, p, pt.supply_v)?;
        let inputs = firmware::inputs(file, pt.temp_c)?;
        // The input was up before the rail is enabled: the output starts precharged through
        // the diode.
        plant.settle_off();
        let mut ctrl = make(&inputs)?;
        closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)
    } else {
        // The plant first: a scenario value it rejects is named by the scenario's key.
        let mut plant = plant::coil_plant_in(file, Some(index), p, pt.supply_v, pt.temp_c)?;
        let inputs = firmware::inputs(file, pt.temp_c)?;
        plant.set_record_events(false);
        // Memory must not grow with the PWM periods of a long run: the properties need only
        // the worst switch-off.
        plant.set_keep_switch_offs(false);
        let mut ctrl = make(&inputs)?;
        closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)
    }
}
