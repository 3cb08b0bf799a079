//! Command-line interface of the `lenz` binary.
//!
//! Exit codes: 0 success; 1 a checked property failed (simulation commands); 2 bad or
//! unreachable input, reported as one line on stderr naming the parameter and the problem,
//! with nothing on stdout. A command's stdout is written once it has finished (see
//! `out.rs`): when the reader has gone (a closed pipe) the rest is dropped quietly and the
//! exit code stays the command's; any other write error is exit 2 with a message.

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

/// Caution printed with motor results, beside [`CAUTION`].
pub const MOTOR_CAUTION: &str = "CAUTION: a motor draws up to its stall current at every start, \
nearly twice that when reversed at speed, and returns its current to the supply when it coasts \
or brakes, which can lift a bus that cannot sink current above its rating. Keep hands clear of \
the driven mechanism while testing.";

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
    /// Brushed DC motor on an H-bridge: stall, steady state, time constants and the exact peak
    /// currents of start, reversal and short-circuit brake.
    Motor(cmd::motor::Args),
    /// The worked example: worst-case plans of the greenhouse demo (invented values), its
    /// scenarios in the closed loop and a report folder.
    Demo(cmd::demo::Args),
    /// Worst-case design numbers of a scenario file's system, with verdicts.
    Plan(cmd::plan::Args),
    /// Run the scenarios of scenario files in the closed loop and check their properties.
    Sim(cmd::sim::Args),
    /// Monte Carlo sweep over the tolerances of a scenario file, in parallel.
    Sweep(cmd::sweep::Args),
    /// Combine the `--json` outputs of `lenz sweep --shard K/N` into one summary.
    SweepMerge(cmd::sweep::MergeArgs),
    /// Switch-off through a clamp: decay times, peak switch voltage, energy split, verdicts.
    Turnoff(cmd::turnoff::Args),
    /// Inverse-time trip time at a constant current (IEC 60255-151, IEEE C37.112 curves).
    TripTime(cmd::trip::TimeArgs),
    /// Highest safe instantaneous trip threshold from the switch limit, di/dt and delay.
    TripThreshold(cmd::trip::ThresholdArgs),
    /// Boost stage: mode, duty, inductor currents, output ripple and duty limits with reasons.
    Boost(cmd::boost::Args),
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
    newton_metre => Unit::NewtonMetre,
    newton_metre_per_ampere => Unit::NewtonMetrePerAmpere,
    kilogram_square_metre => Unit::KilogramSquareMetre,
    newton_metre_second => Unit::NewtonMetreSecondPerRadian,
    plain => Unit::None,
}

/// Folds clap's multi-line message into one line: the text up to the usage section.
fn one_line(rendered: &str) -> String {
    let parts: Vec<&str> = rendered
        .lines()
        .map(str::trim)
        .take_while(|l| !l.starts_with("Usage:") && !l.starts_with("For more information"))
        .filter(|l| !l.is_empty())
        .collect();
    let text = parts.join(" ");
    let text = text.trim_start_matches("error: ");
    if text.is_empty() {
        "invalid arguments".to_string()
    } else {
        text.to_string()
    }
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
                ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => match e.print() {
                    Ok(()) => ExitCode::SUCCESS,
                    Err(w) if w.kind() == std::io::ErrorKind::BrokenPipe => ExitCode::SUCCESS,
                    Err(w) => {
                        complain(&format!("cannot write to standard output: {w}"));
                        ExitCode::from(2)
                    }
                },
                _ => {
                    complain(&one_line(&e.render().to_string()));
                    ExitCode::from(2)
                }
            };
        }
    };
    // Text a command printed before an earlier command in this thread failed is not ours.
    let _ = crate::out::take();
    let result = match cli.command {
        Command::Coil(a) => cmd::coil::run(&a),
        Command::Motor(a) => cmd::motor::run(&a),
        Command::Demo(a) => cmd::demo::run(&a),
        Command::Plan(a) => cmd::plan::run(&a),
        Command::Sim(a) => cmd::sim::run(&a),
        Command::Sweep(a) => cmd::sweep::run(&a),
        Command::SweepMerge(a) => cmd::sweep::merge(&a),
        Command::Turnoff(a) => cmd::turnoff::run(&a),
        Command::TripTime(a) => cmd::trip::run_time(&a),
        Command::TripThreshold(a) => cmd::trip::run_threshold(&a),
        Command::Boost(a) => cmd::boost::run(&a),
        Command::Cost(a) => cmd::cost::run(&a),
    };
    let text = crate::out::take();
    match result {
        // Printed only on success: a failed command leaves stdout empty.
        Ok(code) => match crate::out::write_to(&mut std::io::stdout().lock(), &text) {
            Ok(_) => code,
            Err(e) => {
                complain(&format!("cannot write to standard output: {e}"));
                ExitCode::from(2)
            }
        },
        Err(e) => {
            complain(&e.to_string());
            ExitCode::from(2)
        }
    }
}

/// One line on stderr; a stderr that cannot be written is ignored (the exit code still
/// tells).
fn complain(text: &str) {
    use std::io::Write as _;
    let _ = writeln!(std::io::stderr().lock(), "lenz: {text}");
}
