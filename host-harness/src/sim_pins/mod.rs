//! Simulated actuators behind the embedded-hal 1.0 traits, so the closed loop runs the
//! [`lenz::drive`] drivers unchanged: the code the harness checks is the code that ships.
//!
//! - [`SimPwm`]: a PWM channel ([`SetDutyCycle`](embedded_hal::pwm::SetDutyCycle)) with a
//!   stated `max_duty_cycle` resolution, as a timer's compare register would have.
//! - [`SimPin`]: a switch pin ([`OutputPin`](embedded_hal::digital::OutputPin)); a plain on/off
//!   switch drives the coil through [`lenz::drive::OnOffSwitch`].
//! - [`SimBridge`]: the two direction pins of an H-bridge (one per leg), read back as the
//!   bridge direction.
//! - [`CoilDriverLoop`], [`BoostLoopDriver`] and [`MotorDriverLoop`]: thin adapters from the
//!   [`Controller`](crate::closed_loop::Controller) interface to the drivers. Sensed ADC counts
//!   go into the driver's `update` as the firmware's ADC would hand them over; the output's
//!   state after the tick (pin level or duty register) becomes the
//!   [`Actuation`](crate::closed_loop::Actuation) the plant is switched with.
//!
//! Every output can be made to fail ([`OutputFault`]): a write then returns an error and leaves
//! the output as it was, as a real pin behind a broken driver stage or a bus expander that no
//! longer answers would. The driver must notice and latch off.
//!
//! The only floating point here is on the harness side of the adapter: turning a duty register
//! (counts of `max_duty_cycle`) into the PWM timing of the simulation, and the estimate into
//! amperes for the checks.

mod adapter;
mod bridge;
mod motor_adapter;
mod output;
mod pin;
mod pwm;

pub use adapter::{BoostLoopDriver, CoilDriverLoop};
pub use bridge::SimBridge;
pub use motor_adapter::MotorDriverLoop;
pub use output::{OutputFault, SimError, SimOutput};
pub use pin::SimPin;
pub use pwm::SimPwm;
