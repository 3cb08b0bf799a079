//! `lenz-harness`: the host side of lenz. Your firmware in the loop: a simulated coil (or boost
//! stage), its faults and its tolerances, run against your own controller from your own
//! `cargo test`, with every property reported as value against limit.
//!
//! # Your own firmware in the loop
//!
//! A scenario file (TOML, see [`scenario`]) describes the drive system once: coil, supply and
//! temperature ranges, clamp, switch, sense chain, tick and PWM, ratings, requirements,
//! tolerances, and the scenarios with their checks. [`System`] is built from it; from the
//! system, [`FirmwareInputs`] are what your firmware computes at init from the nominal
//! description (the `lenz` kernel configurations and the ADC scaling). Your controller is
//! anything implementing [`closed_loop::Controller`]: built from the firmware inputs, called
//! once per control tick with the ADC readings of the previous tick, returning the switch
//! drive.
//!
//! ```
//! use lenz::kernel::{EstimatorConfig, EstimatorState};
//! use lenz_harness::closed_loop::{Actuation, Controller, Sensed, Telemetry};
//! use lenz_harness::{FirmwareInputs, SweepOptions, System};
//!
//! /// A valve driver (yours would be a `no_std` crate): full drive while commanded open, the
//! /// current estimator kernel reporting its estimate.
//! struct MyValve {
//!     fw: FirmwareInputs,
//!     estimator: EstimatorConfig,
//!     state: EstimatorState,
//!     on: bool,
//! }
//!
//! impl MyValve {
//!     fn new(fw: &FirmwareInputs) -> MyValve {
//!         let coil = fw.coil().expect("a coil drive");
//!         MyValve { fw: *fw, estimator: coil.estimator, state: EstimatorState::new(), on: false }
//!     }
//! }
//!
//! impl Controller for MyValve {
//!     fn tick(&mut self, s: &Sensed) -> Actuation {
//!         let supply_mv = self.fw.supply_mv(s.supply_counts); // integer: counts to mV
//!         self.estimator.update(&mut self.state, self.on, supply_mv);
//!         self.on = s.demand;
//!         if s.demand { Actuation::ON } else { Actuation::OFF }
//!     }
//!     fn telemetry(&self) -> Telemetry {
//!         let estimate_a = Some(f64::from(self.state.current_ua()) * 1e-6);
//!         Telemetry { estimate_a, ..Telemetry::default() }
//!     }
//! }
//!
//! // Invented values (a 24 V greenhouse irrigation valve).
//! const FILE: &str = r#"
//! [system]
//! name = "irrigation valve"
//! tick = "100us"
//! pwm_frequency = "20kHz"
//! [system.supply]
//! min = "21.6V"
//! nominal = "24V"
//! max = "26.4V"
//! [system.temperature]
//! min = -20
//! nominal = 20
//! max = 85
//! [system.coil]
//! inductance = "120mH"
//! resistance = "32ohm"
//! pull_in_current = "0.45A"
//! release_current = "75mA"
//! [system.clamp.freewheel]
//! diode_drop = "0.7V"
//! [system.switch]
//! on_resistance = "0.1ohm"
//! breakdown = "66V"
//! [system.sense]
//! adc_bits = 12
//! adc_reference = "3.3V"
//! shunt = "10mohm"
//! gain = 20
//! bias = "80.57mV"
//! supply_divider = 0.0909
//! output_divider = 0.025
//! [tolerances]
//! inductance = { dist = "normal", rel = 0.03 }
//! supply = { dist = "uniform" }
//!
//! [[scenario]]
//! name = "open and close"
//! duration = "60ms"
//! [[scenario.event]]
//! at = "1ms"
//! command = "on"
//! [[scenario.event]]
//! at = "40ms"
//! command = "off"
//! [[scenario.check]]
//! property = "pull-in-time"
//! max = "10ms"
//! [[scenario.check]]
//! property = "estimator-error"
//! max = "30mA"
//! [[scenario.check]]
//! property = "peak-switch-voltage"
//! max = "30V"
//! "#;
//!
//! # fn main() -> Result<(), Box<dyn std::error::Error>> {
//! let sys = System::from_toml("valve.toml", FILE)?; // or System::from_file(path)
//! let report = sys.run_all(MyValve::new)?;
//! report.write_junit(std::env::temp_dir().join("lenz-doc").join("valve.xml"))?;
//! assert!(report.all_hold(), "{report}"); // the message lists what failed, value and limit
//!
//! // Over the tolerances: runs, seed, threads, shard.
//! let sweep = sys.sweep(&SweepOptions::runs(8).seed(7).jobs(2), MyValve::new)?;
//! assert!(sweep.all_hold(), "{sweep}"); // a failure names its worst run as seed:index
//!
//! // Replay one run of the sweep, with waveforms, to debug it.
//! let run = sys.replay("7:3", MyValve::new)?;
//! let t = run.property("open and close", "pull_in_time").expect("checked").value;
//! assert_eq!(sweep.value("open and close", "pull_in_time", 3), Some(t));
//! # Ok(())
//! # }
//! ```
//!
//! `examples/door-lock/` in the repository is a complete user crate: a `no_std` lock firmware
//! on the integer kernels, its scenario file, and tests in the closed loop and in a sweep.
//!
//! # The rest of the crate
//!
//! The `lenz` binary's commands (quick calculations, plans, the demo) live in [`cli`]; they
//! parse, call the library and print. Values with SI prefixes are read and written by [`si`];
//! the quick calculations over ranges are bounded by [`worst`]; bad input is an
//! [`InputError`]. The reports of runs ([`report`]: [`RunReport`], [`SweepReport`], the
//! per-scenario [`Outcome`], JUnit, CSV, SVG, HTML) are written through a [`report::Sink`]
//! into output folders staged by [`outputs`]; several files' scenarios run as one batch in
//! [`system::batch`]. The system layer is [`system`], the plant simulator
//! [`plant`], the closed loop that runs firmware against it [`closed_loop`] (faults in
//! [`faults`]), and example firmware built from the kernels is in [`controllers`]: the
//! `lenz::drive` drivers on the simulated embedded-hal outputs of [`sim_pins`].

pub mod cli;
pub mod closed_loop;
// `outln!` is defined here and used by the commands: textual macro scope, so before `cmd`.
#[macro_use]
mod out;
mod cmd;
pub mod controllers;
pub mod demo;
pub mod faults;
pub mod firmware;
pub mod input_error;
pub mod outputs;
pub mod pil;
pub mod plant;
pub mod range_arg;
pub mod report;
pub mod scenario;
pub mod si;
pub mod sim_pins;
pub mod sweep;
pub mod system;
pub mod worst;

pub use input_error::InputError;
pub use report::Outcome;
pub use system::{FirmwareInputs, RunReport, SweepOptions, SweepReport, System};
