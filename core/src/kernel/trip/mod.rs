//! The trip detector: instantaneous trip with blanking and N-of-M persistence, inverse time,
//! thermal image, stuck sensor, retry then latch, and a log of the last trips. The algorithm,
//! its fixed-point formats, ranges, resolution and cost are documented on [`TripConfig`].

mod block;
mod config;
mod log;
mod plan;
mod state;
mod table;
mod update;
mod verdict;

#[cfg(test)]
mod tests;

pub use config::{TripConfig, TripRaw};
pub use log::TripLog;
pub use plan::{BLOCK_TAU_FRACTION, TripParams};
pub use state::{BLOCK_LOG2_MAX, THETA_ONE_Q24, TripState, theta_q24_from_f32};
pub use table::{
    INVERSE_M_MAX, INVERSE_M_MIN, INVERSE_TABLE_ERROR_MAX, INVERSE_TABLE_LEN,
    INVERSE_TABLE_OCTAVES, INVERSE_TABLE_STEPS, InverseTable,
};
pub use verdict::{Cause, TripEvent, Verdict};
