//! Command-line interface of the `lenz` binary.
//!
//! Exit codes: 0 success; 1 a checked property failed (simulation commands); 2 bad or
//! unreachable input, reported as one line on stderr naming the parameter and the problem,
//! with nothing on stdout.

use std::fmt;
use std::process::ExitCode;

use clap::{Parser, Subcommand, error::ErrorKind};

use crate::cmd;
use crate::si::{self, Unit};

/// Caution printed with results that involve switching inductive loads.
pub const CAUTION: &str = "CAUTION: switching an inductive load off can produce hundreds of \
volts and dumps its stored energy into the switch and clamp. These figures are design aids, not \
a safety approval: mains-powered coils are lethal; follow local electrical codes and licensed \
practice.";

/// `lenz`: coil current, safe switch-off, boost duty limits and overcurrent trips.
#[derive(Debug, Parser)]
#[command(name = "lenz", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Quick coil calculation: time constant, steady current, step response, time to a target.
    Coil(cmd::coil::Args),
    /// The worked example: worst-case plans of the greenhouse demo coils (invented values).
    Demo(cmd::demo::Args),
    /// Cost per kernel call on Cortex-M0/M3/M4F under emulation, beside the f32/libm version.
    Cost(cmd::cost::Args),
}

/// An error that ends a command with exit code 2.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct CliError(pub String);

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl CliError {
    /// A plan error, with lenz parameter names replaced by the command-line flags in `flags`
    /// (pairs of parameter name and flag).
    #[must_use]
    pub fn from_lenz(e: lenz::Error, flags: &[(&str, &str)]) -> Self {
        let text = e.to_string();
        let param = e.param();
        let shown = flags
            .iter()
            .find(|(p, _)| *p == param)
            .map_or(param, |(_, f)| *f);
        CliError(text.replacen(param, shown, 1))
    }
}

macro_rules! unit_parsers {
    ($($name:ident => $unit:expr),* $(,)?) => {
        $(
            /// Clap value parser for this unit (SI prefixes accepted).
            ///
            /// # Errors
            ///
            /// The text is not a value in this unit.
            pub fn $name(s: &str) -> Result<f64, String> {
                si::parse(s, $unit).map_err(|e| e.to_string())
            }
        )*
    };
}

unit_parsers! {
    henry => Unit::Henry,
    ohm => Unit::Ohm,
    volt => Unit::Volt,
    ampere => Unit::Ampere,
    second => Unit::Second,
    hertz => Unit::Hertz,
    farad => Unit::Farad,
    celsius => Unit::Celsius,
    plain => Unit::None,
}

/// Runs the `lenz` binary with the process arguments.
#[must_use]
pub fn main() -> ExitCode {
    run(std::env::args_os())
}

/// Runs `lenz` with the given arguments (the first is the program name).
pub fn run<I, T>(args: I) -> ExitCode
where
    I: IntoIterator<Item = T>,
    T: Into<std::ffi::OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(cli) => cli,
        Err(e) => {
            return match e.kind() {
                ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
                    let _ = e.print();
                    ExitCode::SUCCESS
                }
                _ => {
                    let rendered = e.render().to_string();
                    let line = rendered
                        .lines()
                        .find(|l| !l.trim().is_empty())
                        .unwrap_or("invalid arguments");
                    eprintln!("lenz: {}", line.trim_start_matches("error: "));
                    ExitCode::from(2)
                }
            };
        }
    };
    let result = match cli.command {
        Command::Coil(a) => cmd::coil::run(&a),
        Command::Demo(a) => cmd::demo::run(&a),
        Command::Cost(a) => cmd::cost::run(&a),
    };
    match result {
        Ok(code) => code,
        Err(e) => {
            eprintln!("lenz: {e}");
            ExitCode::from(2)
        }
    }
}
