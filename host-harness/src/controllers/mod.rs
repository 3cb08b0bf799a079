//! Example controllers, built only from the `lenz` kernels, written as a firmware engineer
//! would write them: integer state, coefficients planned once at start-up, one `tick` per
//! control interrupt. Copy them as a starting point for your own firmware; the
//! [`Controller`](crate::closed_loop::Controller) impls are the only harness-specific part.
//!
//! - [`valve`]: valve/relay driver: pull-in at full voltage, PWM hold, current estimator,
//!   plausibility monitor, trip detector, off-timer before re-energizing.
//! - [`boost`]: boost regulator: PI voltage loop behind the duty limiter.

pub mod boost;
pub mod valve;

pub use boost::{BoostPlan, BoostRegulator, BoostRegulatorConfig};
pub use valve::{ValveDriver, ValveDriverConfig, ValvePlan};
