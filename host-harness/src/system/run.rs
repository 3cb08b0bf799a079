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
    let inputs = firmware::inputs(file, pt.temp_c)?;
    let loop_err =
        |e: closed_loop::RunError| SetupError::new(format!("scenario '{}': {e}", sc.name));
    let s = &file.system;
    if let Some(b) = &s.boost {
        let mut plant = plant::boost_plant(file, b, p, pt.supply_v)?;
        // The input was up before the rail is enabled: the output starts precharged through
        // the diode.
        plant.settle_off();
        let mut ctrl = make(&inputs)?;
        closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)
    } else {
        let mut plant = plant::coil_plant(file, p, pt.supply_v, pt.temp_c)?;
        plant.set_record_events(false);
        let mut ctrl = make(&inputs)?;
        closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)
    }
}
