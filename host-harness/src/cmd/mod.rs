//! One module per `lenz` subcommand.

pub mod coil;
pub mod cost;
pub mod demo;
pub mod table;
