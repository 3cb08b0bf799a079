//! Example controllers: the `lenz::drive` drivers, planned as a firmware engineer would plan
//! them, on the harness's simulated outputs ([`crate::sim_pins`]). What runs in a tick is the
//! driver firmware links, unchanged (integer only); these files hold only the plans and the
//! choice of output.
//!
//! - [`valve`]: valve/relay driver ([`lenz::drive::CoilDriver`]): pull-in at full voltage,
//!   PWM hold, current estimator, plausibility monitor, trip detector, off-timer before
//!   re-energizing.
//! - [`motor`]: bridge motor driver ([`lenz::drive::MotorDriver`]): soft start, brake before
//!   reversal, speed from back-EMF, jam detector.
//! - [`boost`]: boost regulator ([`lenz::drive::BoostLoop`]): PI voltage loop behind the duty
//!   limiter.

pub mod boost;
pub mod motor;
pub mod valve;

pub use boost::{BoostPlan, BoostRegulator, BoostRegulatorConfig};
pub use motor::BridgeMotorDriver;
pub use valve::{PULL_IN_GRACE_S, PWM_MAX_DUTY, ValveDriver, ValveDriverConfig, ValvePlan};
