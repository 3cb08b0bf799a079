#![doc = include_str!("../README.md")]
#![cfg_attr(not(test), no_std)]

pub mod armature;
pub mod boost;
pub mod bounds;
pub mod coil;
pub mod drive;
mod error;
pub mod kernel;
mod message;
pub mod motor;
#[cfg(test)]
mod testing;
pub mod trip;
pub mod turnoff;

pub use bounds::{Bound, Range};
pub use coil::{Coil, CoilParams, PwmSteadyState};
pub use error::Error;
