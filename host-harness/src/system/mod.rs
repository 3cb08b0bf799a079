//! The system layer: one typed description of a drive system, and everything computed from it
//! in one place each.
//!
//! A [`System`] is built once, from a scenario file ([`System::from_file`]) or from text
//! ([`System::from_toml`]): coil, supply and temperature ranges, clamp, switch, sense chain,
//! boost stage, tick and PWM, ratings, requirements, tolerances and scenarios. From it:
//!
//! - [`System::plan`]: the worst-case plan with its verdicts ([`plan`]);
//! - [`System::coil_plant`], [`System::boost_plant`], [`System::motor_plant`]: the plant for
//!   one draw of the tolerances ([`plant`], [`motor`]);
//! - [`System::firmware_inputs`]: the kernel configurations that firmware computes at init from
//!   the nominal description, and the sense scaling ([`FirmwareInputs`]);
//! - [`System::run_all`], [`System::sweep`], [`System::replay`]: the scenarios in the closed
//!   loop with *any* controller, built by the caller from the firmware inputs (the open
//!   controller slot, see the crate docs for a complete example).
//!
//! Nothing else maps a description to core types: the clamp kinds and their spellings are in
//! [`clamp`], the coil model in [`coil`], the sense chains in [`sense`].

pub mod batch;
pub mod clamp;
pub mod coil;
pub mod emit;
mod error;
pub mod firmware;
pub mod firmware_movement;
pub mod motor;
mod motor_currents;
mod motor_resume;
pub mod motor_stall;
pub mod plan;
mod plan_armature;
pub mod plant;
pub mod report;
mod run;
pub mod sense;
mod sweep;

use std::path::Path;

pub use clamp::ClampKind;
pub use error::SetupError;
pub use firmware::{BoostInputs, CoilInputs, CoilSettings, FirmwareInputs, SenseInputs};
pub use firmware_movement::MovementInputs;
pub use motor::{MotorInputs, MotorSettings};
pub use plan::{Figure, Report as PlanReport, Verdict};
pub use report::{RunReport, SweepReport};
pub use run::run_fallible;
pub use sweep::SweepOptions;

use crate::closed_loop::{Controller, RunResult};
use crate::scenario::run::{Params, Record};
use crate::scenario::{self, File, ScenarioError};

/// A drive system with its scenarios, built once from a description.
#[derive(Debug, Clone)]
pub struct System {
    name: String,
    text_hash: String,
    file: File,
}

impl System {
    /// Reads and checks a scenario file.
    ///
    /// # Errors
    ///
    /// The file cannot be read, or a value is wrong: `FILE:LINE:COLUMN: key `PATH`: PROBLEM`.
    pub fn from_file(path: impl AsRef<Path>) -> Result<System, ScenarioError> {
        let path = path.as_ref();
        let name = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| ScenarioError {
            file: name.clone(),
            line: 0,
            column: 0,
            key: String::new(),
            problem: format!("cannot read the file: {e}"),
        })?;
        System::from_toml(&name, &text)
    }

    /// Parses and checks the text of a scenario file; `name` names it in errors and reports.
    ///
    /// # Errors
    ///
    /// As [`System::from_file`].
    pub fn from_toml(name: &str, text: &str) -> Result<System, ScenarioError> {
        let file = scenario::parse(name, text)?;
        Ok(System {
            name: name.to_string(),
            text_hash: crate::sweep::fnv1a(text.as_bytes()),
            file,
        })
    }

    /// A system from an already parsed description (built in code); `name` names it in
    /// reports.
    #[must_use]
    pub fn from_description(name: &str, file: File) -> System {
        let hash = serde_json::to_vec(&file)
            .map(|b| crate::sweep::fnv1a(&b))
            .unwrap_or_default();
        System {
            name: name.to_string(),
            text_hash: hash,
            file,
        }
    }

    /// The file name as given.
    #[must_use]
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The description.
    #[must_use]
    pub fn description(&self) -> &File {
        &self.file
    }

    /// The scenarios' names, in file order.
    #[must_use]
    pub fn scenario_names(&self) -> Vec<&str> {
        self.file
            .scenarios
            .iter()
            .map(|s| s.name.as_str())
            .collect()
    }

    /// The worst-case plan with its verdicts.
    ///
    /// # Errors
    ///
    /// A plan routine rejects a value of the description (named).
    pub fn plan(&self) -> Result<PlanReport, SetupError> {
        let mut r = plan::plan(&self.file)?;
        r.file = self.name.clone();
        Ok(r)
    }

    /// The firmware inputs planned at the nominal temperature.
    ///
    /// # Errors
    ///
    /// A kernel's constructor rejects a value (named).
    pub fn firmware_inputs(&self) -> Result<FirmwareInputs, SetupError> {
        firmware::inputs(&self.file, self.file.system.temperature.nominal.get())
    }

    /// The firmware inputs planned at `temp_c` (a board sensor's reading at init).
    ///
    /// # Errors
    ///
    /// A kernel's constructor rejects a value (named).
    pub fn firmware_inputs_at(&self, temp_c: f64) -> Result<FirmwareInputs, SetupError> {
        firmware::inputs(&self.file, temp_c)
    }

    /// The coil drive's plant for part values `p` (a draw, or [`Params::NOMINAL`]) at
    /// `supply_v` and coil temperature `temp_c`.
    ///
    /// # Errors
    ///
    /// Not a coil drive, or the plant rejects a value (named).
    pub fn coil_plant(
        &self,
        p: &Params,
        supply_v: f64,
        temp_c: f64,
    ) -> Result<crate::plant::CoilDrive, SetupError> {
        plant::coil_plant(&self.file, p, supply_v, temp_c)
    }

    /// The boost stage's plant for part values `p` at `supply_v`.
    ///
    /// # Errors
    ///
    /// Not a boost stage, or the plant rejects a value (named).
    pub fn boost_plant(
        &self,
        p: &Params,
        supply_v: f64,
    ) -> Result<crate::plant::Boost, SetupError> {
        let b = self
            .file
            .system
            .boost
            .as_ref()
            .ok_or_else(|| SetupError::new("system: no [system.boost]"))?;
        plant::boost_plant(&self.file, b, p, supply_v)
    }

    /// The motor bridge's plant for part values `p` at `supply_v` and winding temperature
    /// `temp_c`, at rest with the description's load torque.
    ///
    /// # Errors
    ///
    /// Not a motor bridge, or the plant rejects a value (named).
    pub fn motor_plant(
        &self,
        p: &Params,
        supply_v: f64,
        temp_c: f64,
    ) -> Result<crate::closed_loop::MotorBridge, SetupError> {
        let m = self
            .file
            .system
            .motor
            .as_ref()
            .ok_or_else(|| SetupError::new("system: no [system.motor]"))?;
        motor::plant(&self.file, None, m, p, supply_v, temp_c)
    }

    /// The part values of run `index` of a sweep with `seed`.
    #[must_use]
    pub fn draw(&self, seed: u64, index: u64) -> Params {
        Params::draw(&self.file, seed, index)
    }

    /// Runs scenario `index` with part values `p` and the controller `make` builds from the
    /// firmware inputs (planned at the run's coil temperature).
    ///
    /// # Errors
    ///
    /// No such scenario, a value the plans or the plant reject, or a timing the closed loop
    /// rejects.
    pub fn run_scenario<C: Controller>(
        &self,
        index: usize,
        p: &Params,
        record: Record,
        make: impl FnOnce(&FirmwareInputs) -> C,
    ) -> Result<RunResult, SetupError> {
        run::run_fallible(&self.file, index, p, record, |fw| Ok(make(fw)))
    }

    /// Runs every scenario with nominal part values (waveforms recorded).
    ///
    /// # Errors
    ///
    /// As [`System::run_scenario`].
    pub fn run_all<C: Controller>(
        &self,
        make: impl Fn(&FirmwareInputs) -> C,
    ) -> Result<RunReport, SetupError> {
        self.run_with(&Params::NOMINAL, None, make)
    }

    /// Runs every scenario with the part values of run `index` of the sweep with `seed`: the
    /// run a sweep names as `seed:index`, again, with waveforms.
    ///
    /// # Errors
    ///
    /// As [`System::run_scenario`].
    pub fn replay_run<C: Controller>(
        &self,
        seed: u64,
        index: u64,
        make: impl Fn(&FirmwareInputs) -> C,
    ) -> Result<RunReport, SetupError> {
        self.run_with(&self.draw(seed, index), Some((seed, index)), make)
    }

    /// [`System::replay_run`] from the `SEED:INDEX` text a sweep report prints.
    ///
    /// # Errors
    ///
    /// `run` is not `SEED:INDEX` (named), or as [`System::run_scenario`].
    pub fn replay<C: Controller>(
        &self,
        run: &str,
        make: impl Fn(&FirmwareInputs) -> C,
    ) -> Result<RunReport, SetupError> {
        let (seed, index) = parse_replay(run)?;
        self.replay_run(seed, index, make)
    }

    fn run_with<C: Controller>(
        &self,
        p: &Params,
        replay: Option<(u64, u64)>,
        make: impl Fn(&FirmwareInputs) -> C,
    ) -> Result<RunReport, SetupError> {
        let mut names = crate::report::Names::default();
        let outcomes = (0..self.file.scenarios.len())
            .map(|k| {
                let result = self.run_scenario(k, p, Record::Every, &make)?;
                let scenario = self.file.scenarios[k].name.clone();
                Ok(crate::report::Outcome {
                    file: self.name.clone(),
                    system: self.file.system.name.clone(),
                    stem: names.unique(&crate::report::base_stem(&self.name, &scenario)),
                    scenario,
                    result,
                })
            })
            .collect::<Result<Vec<_>, SetupError>>()?;
        Ok(RunReport {
            file: self.name.clone(),
            system: self.file.system.name.clone(),
            replay,
            params: *p,
            outcomes,
        })
    }

    /// A Monte Carlo sweep over the tolerances with the controller `make` builds; `make` is
    /// called once per scenario and run, on the sweep's threads.
    ///
    /// # Errors
    ///
    /// A value the plans or the plant reject, or the thread pool cannot start.
    pub fn sweep<C: Controller>(
        &self,
        opts: &SweepOptions,
        make: impl Fn(&FirmwareInputs) -> C + Sync,
    ) -> Result<SweepReport, SetupError> {
        sweep::sweep(self, opts, make)
    }
}

/// Reads `SEED:INDEX`.
///
/// # Errors
///
/// Not of that form.
pub fn parse_replay(text: &str) -> Result<(u64, u64), SetupError> {
    let bad = || {
        SetupError::new(format!(
            "replay '{text}': expected SEED:INDEX (two whole numbers, as a sweep prints them)"
        ))
    };
    let (a, b) = text.split_once(':').ok_or_else(bad)?;
    let seed = a.trim().parse().map_err(|_| bad())?;
    let index = b.trim().parse().map_err(|_| bad())?;
    Ok((seed, index))
}
