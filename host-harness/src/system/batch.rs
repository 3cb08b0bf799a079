//! A batch run: every scenario of several scenario files in the closed loop, with each file's
//! built-in `[controller]` or with the decisions of a firmware image on an emulated core
//! (`lenz sim`, `lenz demo`). Each outcome goes through a [`Sink`] (which writes its files) as
//! soon as it is made and is kept without its waveform, so memory holds one scenario's
//! waveform at a time.

use std::path::{Path, PathBuf};

use crate::closed_loop::Waveform;
use crate::firmware::Target;
use crate::input_error::InputError;
use crate::pil::{self, FirmwareRun, Guards, TickBudget, TickCosts};
use crate::report::{self, Outcome, Sink};
use crate::scenario::{
    self, File,
    run::{Params, Record},
};

/// Share of the tick period a tick function may take by default (half: room for the
/// instructions that take more than one cycle and for the rest of the firmware; common
/// practice, no source).
pub const DEFAULT_TICK_FRACTION: f64 = 0.5;

/// The firmware-in-the-loop run of `image` on `target`, with the tick budget `budget`: the
/// image is checked first (a wrong file is named even where the emulator is missing), then
/// the emulator is found.
///
/// # Errors
///
/// The image is not an ELF for `target`, or the emulator cannot be found.
pub fn firmware_run(
    image: &Path,
    target: Target,
    budget: Option<TickBudget>,
) -> Result<FirmwareRun, InputError> {
    pil::elf::check(image, target).map_err(InputError)?;
    Ok(FirmwareRun {
        qemu: pil::session::qemu().map_err(InputError)?,
        target,
        image: image.to_path_buf(),
        guards: Guards::default(),
        budget,
        record_actuations: false,
        params: None,
    })
}

/// Loads every file; the first bad one ends the command.
///
/// # Errors
///
/// The file's problem, with its position.
pub fn load_all(files: &[PathBuf]) -> Result<Vec<(String, File)>, InputError> {
    files
        .iter()
        .map(|p| {
            scenario::load(p)
                .map(|f| (p.display().to_string(), f))
                .map_err(|e| InputError(e.to_string()))
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
) -> Result<Vec<Outcome>, InputError> {
    let mut out = Vec::new();
    for (name, f) in files {
        let p = params(f);
        for (k, sc) in f.scenarios.iter().enumerate() {
            let result = scenario::run::run(f, k, &p, record)
                .map_err(|e| InputError(scenario::locate_problem(name, &e.0).to_string()))?;
            let mut o = Outcome {
                file: name.clone(),
                system: f.system.name.clone(),
                scenario: sc.name.clone(),
                stem: sink.unique_stem(&report::base_stem(name, &sc.name)),
                result,
            };
            sink.scenario(&o)?;
            o.result.waveform = Waveform::default();
            out.push(o);
        }
    }
    Ok(out)
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
) -> Result<(Vec<Outcome>, Vec<TickCosts>), InputError> {
    let mut out = Vec::new();
    let mut costs = Vec::new();
    for (name, f) in files {
        let p = params(f);
        for (k, sc) in f.scenarios.iter().enumerate() {
            let o = pil::run_scenario(f, k, &p, record, fw)
                .map_err(|e| InputError(scenario::locate_problem(name, &e.0).to_string()))?;
            costs.push(o.costs);
            let mut outcome = Outcome {
                file: name.clone(),
                system: f.system.name.clone(),
                scenario: sc.name.clone(),
                stem: sink.unique_stem(&report::base_stem(name, &sc.name)),
                result: o.result,
            };
            sink.scenario(&outcome)?;
            outcome.result.waveform = Waveform::default();
            out.push(outcome);
        }
    }
    Ok((out, costs))
}
