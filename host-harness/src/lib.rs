//! `lenz-harness`: the host side of lenz. The `lenz` binary's commands (quick calculations,
//! plans, the demo) live in [`cli`]; values with SI prefixes are read by [`si`].

pub mod cli;
mod cmd;
pub mod demo;
pub mod plant;
pub mod scenario;
pub mod si;
