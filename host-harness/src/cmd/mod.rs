//! One module per `lenz` subcommand.

pub mod coil;
pub mod demo;
pub mod sim;
pub mod sweep;
pub mod table;
pub mod trip;
