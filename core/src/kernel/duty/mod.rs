//! The boost duty limiter: the controller's duty request clamped every tick to the plan's duty
//! limits at the measured input, with soft start and an overvoltage cut. Documented on
//! [`DutyLimiterConfig`].

mod config;
mod plan;

#[cfg(test)]
mod tests;

pub use config::{DUTY_TABLE_LEN, DutyLimiterConfig, DutyLimiterRaw, DutyLimiterState};
pub use plan::DutyLimiterParams;
