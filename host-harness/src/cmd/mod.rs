//! One module per `lenz` subcommand.

pub mod boost;
pub mod coil;
pub mod common;
pub mod cost;
pub mod demo;
pub mod emit;
pub mod motor;
pub mod plan;
pub mod sim;
pub mod sweep;
pub mod table;
pub mod trip;
pub mod turnoff;
pub mod worst;
