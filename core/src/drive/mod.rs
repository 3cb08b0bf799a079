//! Drivers on embedded-hal 1.0: the kernels wired together as firmware runs them, on a switch
//! output.
//!
//! - [`CoilDriver`]: a valve, relay or contactor coil on one switch output. Pull-in at full
//!   drive, hold by PWM duty or by regulating the measured current, the current estimator,
//!   plausibility monitor, trip detector and off-timer wired in, re-energize only after the
//!   release, faults latched with their cause.
//! - [`BoostLoop`]: a boost stage's integer PI output-voltage loop behind the duty limiter
//!   (soft start, input following, overvoltage cut).
//!
//! Both are generic over [`SetDutyCycle`](embedded_hal::pwm::SetDutyCycle); a switch on a
//! plain [`OutputPin`](embedded_hal::digital::OutputPin) goes through [`OnOffSwitch`] (one
//! step: off or full drive). embedded-hal 1.0 has no ADC trait, so readings come into each
//! tick as numbers (ADC counts), and the scaling comes from the plan.
//!
//! # For firmware authors
//!
//! - Plan once: `XxxConfig::new(&params)` (f32, validated; at init on a chip with an FPU or
//!   on the host) or `XxxConfig::from_raw(raw)` (a `const fn`: constants emitted by the host
//!   tool can live in flash).
//! - `new(&CONFIG, output)` takes the output and puts it in its safe state at once (duty 0:
//!   coil off, boost switch off); `free()` gives it back.
//! - Call `update(...)` once per control tick from the control interrupt, with that tick's
//!   readings. It never blocks: it reads nothing, writes the output only when the duty
//!   changes, and returns. Integer only, no division, no allocation, no panic.
//! - An output error is returned from the tick that met it, after the driver tried to switch
//!   off; the driver stays latched off until cleared.
//! - Run the control tick synchronously with the PWM (the control interrupt on the PWM
//!   timer's update event, the tick a whole number of PWM periods), so a duty written in a
//!   tick applies from the tick's start.
//!
//! # RAM per channel
//!
//! | Driver | State | Configuration (shareable, flash) |
//! |---|---|---|
//! | [`CoilDriver`] | [`CoilDriverState`]: 128 bytes, plus the output handle, the configuration handle and 10 bytes (PWM resolution, hold duty), padded to 8: 144 bytes with a reference on a 32-bit target | [`CoilDriverConfig`]: 880 bytes |
//! | [`MotorDriver`] | [`MotorDriverState`]: 56 bytes, plus the configuration handle, the three outputs and 8 bytes (PWM resolution): 68 bytes with a reference and zero-sized outputs on a 32-bit target | [`MotorDriverConfig`]: 92 bytes |
//! | [`BoostLoop`] | [`BoostLoopState`]: 24 bytes, plus the output and configuration handles | [`BoostLoopConfig`]: 424 bytes |
//!
//! (Sizes asserted by unit tests; a reference as the configuration handle is one pointer.)
//! On Cortex-M, with the configuration as a `&'static` reference and a 4-byte PWM handle, a
//! whole [`CoilDriver`] is 152 bytes (136 before the armature movement detector's 16) and a whole [`BoostLoop`] 32 (`size_of`, printed by the
//! target images).
//!
//! # Cost per tick
//!
//! `lenz cost` measures both ticks on Cortex-M0/M3/M4F (rows `coil_driver`: the demo valve in
//! its hold; `boost_driver`: the demo rail regulating), held to `benches/target/budget.json`;
//! the target images check them bit for bit against the host on generated vectors, and the
//! disassembly check finds no soft-float or division helper in their call graphs. See the
//! cost table in the repository's README.
//!
//! # Examples
//!
//! A pull-in, hold and switch-off cycle of the demo valve (invented values) on a PWM with
//! 1000 steps, with a perfect current sense standing in for the ADC:
//!
//! ```
//! # use lenz::{CoilParams, Range, turnoff::Clamp};
//! # use lenz::kernel::{MonitorParams, SenseScale, TripParams};
//! # use lenz::drive::{CoilDriver, CoilDriverConfig, CoilDriverParams, CoilPhase, CoilSense, Hold, PullInSource};
//! # struct Pwm(u16);
//! # impl embedded_hal::pwm::ErrorType for Pwm { type Error = core::convert::Infallible; }
//! # impl embedded_hal::pwm::SetDutyCycle for Pwm {
//! #     fn max_duty_cycle(&self) -> u16 { 1000 }
//! #     fn set_duty_cycle(&mut self, d: u16) -> Result<(), Self::Error> { self.0 = d; Ok(()) }
//! # }
//! let coil = CoilParams::new(0.120, 32.0).validate()?;
//! let amps_per_count = 0.5e-3;
//! let cfg = CoilDriverConfig::new(&CoilDriverParams {
//!     coil,
//!     temp_c: 20.0,
//!     tick_s: 100e-6,
//!     clamp: Clamp::Zener { zener_v: 24.0, forward_v: 0.7 },
//!     supply_v: Range::new("supply_v", 21.6, 26.4)?,
//!     release_a: 0.075,
//!     pull_in_a: 0.45,
//!     pull_in_source: PullInSource::Estimate,
//!     pull_in_min_s: 5e-3,
//!     pull_in_max_s: 50e-3,
//!     hold: Hold::Duty { duty: 0.75 },
//!     pwm_frequency_hz: 20e3,
//!     current_sense: SenseScale::new(amps_per_count, 100.0, 10, 4085)?,
//!     supply_v_per_count: 0.01,
//!     supply_zero_counts: 0.0,
//!     monitor: MonitorParams {
//!         abs_tol_a: 0.05, rel_tol: 0.2, open_min_estimate_a: 0.1, open_max_a: 0.01,
//!         persistence: 5, stuck_samples: 1000, stuck_min_change_a: 0.05,
//!     },
//!     trip: TripParams {
//!         sample_period_s: 100e-6, amps_per_count, instantaneous_counts: 3000,
//!         full_scale_counts: 3995, blanking_s: 0.0, persistence_n: 1, persistence_m: 1,
//!         stuck_samples: 0, inverse: None, thermal: None, retries: 0, retry_delay_s: 0.0,
//!     },
//! })?;
//! let mut valve = CoilDriver::new(&cfg, Pwm(1000)).map_err(|(e, _)| e).unwrap();
//! assert_eq!(valve.output().0, 0); // off at once
//! let mut sense = CoilSense { current_counts: 100, supply_counts: 2400 };
//! let mut phases = Vec::new();
//! for tick in 0..600 {
//!     let demand = tick < 400;
//!     let phase = valve.update(demand, sense).unwrap();
//!     if phases.last() != Some(&phase) {
//!         phases.push(phase);
//!     }
//!     // A perfect sense: the estimate, in counts above the 100-count offset.
//!     sense.current_counts = 100 + (valve.estimate_ua() as f32 / 500.0).round() as u16;
//! }
//! use CoilPhase::*;
//! assert_eq!(phases, [PullIn, Hold, Releasing, Idle]);
//! assert_eq!(valve.fault(), None);
//! # Ok::<(), lenz::Error>(())
//! ```

mod boost;
mod boost_config;
mod coil;
mod coil_config;
mod coil_status;
mod duty;
mod error;
mod hold;
mod motor;
mod motor_config;
mod motor_status;
mod supply;
mod switch;

#[cfg(test)]
mod tests;

pub use boost::{BoostLoop, BoostLoopState};
pub use boost_config::{BoostLoopConfig, BoostLoopParams, BoostLoopRaw};
pub use coil::{CoilDriver, CoilDriverState, CoilSense};
pub use coil_config::{
    CoilDriverConfig, CoilDriverParams, CoilDriverRaw, Hold, HoldMode, PullInSource,
};
pub use coil_status::{CoilFault, CoilPhase};
pub use duty::DUTY_ONE_Q16;
pub use error::{DriveError, DriveErrorKind};
pub use hold::{HOLD_LOOP_BIAS_MV, HoldEstimatorConfig, HoldEstimatorRaw};
pub use motor::{MotorDriveError, MotorDriver, MotorDriverState, MotorSense};
pub use motor_config::{MotorDriverConfig, MotorDriverParams, MotorDriverRaw};
pub use motor_status::{BridgeError, MotorDriverFault};
pub use switch::{OnOffSwitch, PinError};
