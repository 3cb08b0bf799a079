//! `lenz-harness`: the host side of lenz. The `lenz` binary's commands (quick calculations,
//! plans, the demo) live in [`cli`]; values with SI prefixes are read by [`si`].

pub mod cli;
pub mod closed_loop;
mod cmd;
pub mod controllers;
pub mod demo;
pub mod faults;
pub mod firmware;
pub mod plant;
pub mod report;
pub mod scenario;
pub mod si;
pub mod sweep;
