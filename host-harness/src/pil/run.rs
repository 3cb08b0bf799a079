//! A scenario with the control decisions taken by a firmware image.

use std::path::PathBuf;

use lenz_pil::wire;

use super::controller::{Failure, FirmwareController};
use super::costs::{TickBudget, TickCosts};
use super::session::{Calibration, Guards, Misbehaviour, Session};
use super::{elf, params};
use crate::closed_loop::{Property, RunEvent, RunResult};
use crate::firmware::Target;
use crate::scenario::File;
use crate::scenario::run::{Params, Record, RunSetupError, run_with};

/// Which image, on which core, with which limits.
#[derive(Debug, Clone, PartialEq)]
pub struct FirmwareRun {
    /// `qemu-system-arm` ([`super::session::qemu`]).
    pub qemu: PathBuf,
    /// The emulated core.
    pub target: Target,
    /// The ELF image.
    pub image: PathBuf,
    /// Wall-clock guards and the instruction limit.
    pub guards: Guards,
    /// The `tick_budget` property's limit (`None`: the property is left out).
    pub budget: Option<TickBudget>,
    /// Keep every actuation ([`PilOutcome::actuations`]).
    pub record_actuations: bool,
    /// The parameter block to send instead of the file's ([`super::params`]), for an image
    /// of one's own.
    pub params: Option<Vec<u8>>,
}

/// What a run in the loop produced.
#[derive(Debug, Clone)]
pub struct PilOutcome {
    /// The closed-loop result, with the `tick_budget` and `firmware_ran` properties.
    pub result: RunResult,
    /// Instructions per tick.
    pub costs: TickCosts,
    /// The image's failure, if it stopped answering.
    pub failure: Option<Failure>,
    /// The count's calibration.
    pub calibration: Calibration,
    /// The instruction limit of one tick.
    pub instruction_limit: u64,
    /// Every actuation (when recorded).
    pub actuations: Vec<wire::Actuation>,
}

impl FirmwareRun {
    /// Checks that the image is one the core can run (before anything is started).
    ///
    /// # Errors
    ///
    /// The file's problem, named.
    pub fn check_image(&self) -> Result<(), String> {
        elf::check(&self.image, self.target).map(|_| ())
    }
}

/// Runs scenario `index` of `file` with part values `p` and the decisions of the image.
///
/// Properties beside the file's: `firmware_ran` (0 stops; fails when the image faulted,
/// panicked, exited, ran past the instruction limit, broke the exchange or did not answer
/// within the wall-clock guard; the event names the tick and the last exchange), and, with a
/// budget, `tick_budget` (the largest instructions of any tick against the limit).
///
/// # Errors
///
/// The plan or plant reject a value, or the image could not be started: not a thumb image for
/// the core, no first frame, init refused the parameter block.
pub fn run_scenario(
    file: &File,
    index: usize,
    p: &Params,
    record: Record,
    fw: &FirmwareRun,
) -> Result<PilOutcome, RunSetupError> {
    fw.check_image().map_err(RunSetupError)?;
    let (mut result, mut ctrl) = run_with(file, index, p, record, |temp_c| {
        let block = match &fw.params {
            Some(b) => b.clone(),
            None => params::block(file, temp_c)?,
        };
        let session = Session::start(&fw.qemu, fw.target, &fw.image, &block, fw.guards)
            .map_err(|e| RunSetupError(e.0))?;
        Ok(FirmwareController::new(session, fw.record_actuations))
    })?;
    ctrl.finish();
    let tick_s = file.system.tick.get();
    let costs = ctrl.costs().clone();
    let failure = ctrl.failure().cloned();
    if let Some(b) = fw.budget {
        let limit = b.limit_instructions(tick_s);
        let over = matches!(
            failure,
            Some(Failure {
                what: Misbehaviour::Limit { .. },
                ..
            })
        );
        let value = if over {
            costs.max.max(ctrl.instruction_limit())
        } else {
            costs.max
        };
        result.properties.push(Property {
            name: "tick_budget",
            value: value as f64,
            limit: limit as f64,
            unit: "instructions",
            pass: value <= limit,
            bound: crate::closed_loop::Bound::Max,
            detail: None,
        });
    }
    if costs.ticks > 0 {
        result.events.push(RunEvent {
            t_s: costs.max_tick as f64 * tick_s,
            what: format!(
                "largest tick: {} instructions in tick {} (mean {:.1}, {} ticks counted)",
                costs.max, costs.max_tick, costs.mean, costs.ticks
            ),
        });
    }
    if let Some(f) = &failure {
        result.events.push(RunEvent {
            t_s: f.tick as f64 * tick_s,
            what: f.to_string(),
        });
    }
    result.properties.push(Property {
        name: "firmware_ran",
        value: f64::from(u8::from(failure.is_some())),
        limit: 0.0,
        unit: "stops",
        pass: failure.is_none(),
        bound: crate::closed_loop::Bound::Max,
        detail: failure.as_ref().map(ToString::to_string),
    });
    Ok(PilOutcome {
        result,
        costs,
        failure,
        calibration: ctrl.calibration(),
        instruction_limit: ctrl.instruction_limit(),
        actuations: ctrl.actuations().to_vec(),
    })
}
