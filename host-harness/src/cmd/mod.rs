//! One module per `lenz` subcommand.

pub mod boost;
pub mod coil;
pub mod cost;
pub mod demo;
pub mod motor;
pub mod outputs;
pub mod plan;
pub mod sim;
pub mod sweep;
pub mod table;
pub mod trip;
pub mod turnoff;
