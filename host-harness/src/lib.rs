//! `lenz-harness`: the host side of lenz. The `lenz` binary's commands (quick calculations,
//! plans, the demo) live in [`cli`]; values with SI prefixes are read by [`si`]. The plant
//! simulator is [`plant`], the closed loop that runs firmware against it is [`closed_loop`]
//! (faults in [`faults`]), and example firmware built from the kernels is in [`controllers`]: the `lenz::drive`
//! drivers on the simulated embedded-hal outputs of [`sim_pins`].

pub mod cli;
pub mod closed_loop;
// `outln!` is defined here and used by the commands: textual macro scope, so before `cmd`.
#[macro_use]
mod out;
mod cmd;
pub mod controllers;
pub mod demo;
pub mod faults;
pub mod firmware;
pub mod plant;
pub mod report;
pub mod scenario;
pub mod si;
pub mod sim_pins;
pub mod sweep;
