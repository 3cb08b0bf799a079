//! Example controllers, built only from the `lenz` kernels, written as a firmware engineer
//! would write them: integer state, coefficients planned once at start-up, one `tick` per
//! control interrupt. Copy them as a starting point for your own firmware; the
//! [`Controller`](crate::closed_loop::Controller) impls are the only harness-specific part.
//!
//! - [`valve`]: valve/relay driver: pull-in at full voltage, PWM hold, current estimator,
//!   plausibility monitor, latched trip.

pub mod valve;

pub use valve::{ValveDriver, ValveDriverConfig, ValvePlan};
