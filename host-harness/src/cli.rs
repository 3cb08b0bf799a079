//! Command-line interface of the `lenz` binary.
//!
//! Exit codes: 0 success; 1 a checked property failed (simulation commands); 2 bad or
//! unreachable input, reported as one line on stderr naming the parameter and the problem,
//! with nothing on stdout. A command's stdout is written once it has finished (see
//! `out.rs`): when the reader has gone (a closed pipe) the rest is dropped quietly and the
//! exit code stays the command's; any other write error is exit 2 with a message.

use std::process::ExitCode;

use clap::{CommandFactory, Parser, Subcommand, error::ErrorKind};

use crate::cmd;
pub use crate::cmd::common::{
    CAUTION, CliError, MOTOR_CAUTION, ampere, celsius, farad, henry, hertz, kilogram_square_metre,
    newton_metre, newton_metre_per_ampere, newton_metre_second, ohm, plain, second, volt,
};

/// `lenz`: coil current, safe switch-off, boost duty limits and overcurrent trips.
#[derive(Debug, Parser)]
#[command(name = "lenz", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// Said under the help of each quick calculation.
const RANGES_HELP: &str = "Ranges: every numeric flag also takes MIN..MAX (--supply 10.8..13.2), \
NOMINAL±TOL% (--inductance 45m±10%, or 45m+-10%) or NOMINAL±TOL; the figures are then reported \
as min and max, each with the values of the ranged flags where it occurs (with --json: an object \
with min, max, min_at, max_at).";

#[derive(Debug, Subcommand)]
enum Command {
    /// Quick coil calculation: time constant, steady current, step response, time to a target.
    #[command(after_help = RANGES_HELP)]
    Coil(cmd::coil::Args),
    /// Brushed DC motor on an H-bridge: stall, steady state, time constants and the exact peak
    /// currents of start, reversal and short-circuit brake.
    #[command(after_help = RANGES_HELP)]
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
    #[command(after_help = RANGES_HELP)]
    Turnoff(cmd::turnoff::Args),
    /// Inverse-time trip time at a constant current (IEC 60255-151, IEEE C37.112 curves).
    #[command(after_help = RANGES_HELP)]
    TripTime(cmd::trip::TimeArgs),
    /// Highest safe instantaneous trip threshold from the switch limit, di/dt and delay.
    #[command(after_help = RANGES_HELP)]
    TripThreshold(cmd::trip::ThresholdArgs),
    /// Boost stage: mode, duty, inductor currents, output ripple and duty limits with reasons.
    #[command(after_help = RANGES_HELP)]
    Boost(cmd::boost::Args),
    /// The firmware's kernel configurations of a scenario file as Rust or C constants, for
    /// chips without an FPU.
    Emit(cmd::emit::Args),
    /// Cost per kernel call on Cortex-M0/M3/M4F under emulation, beside the f32/libm version.
    Cost(cmd::cost::Args),
}

/// The figures of a quick calculation at single values (one point of a worst case over ranges).
fn quick_figures(args: &[std::ffi::OsString]) -> Result<cmd::worst::Figures, CliError> {
    let cli = Cli::try_parse_from(args).map_err(|e| CliError(one_line(&e.render().to_string())))?;
    match cli.command {
        Command::Coil(a) => cmd::coil::figures(&a),
        Command::Motor(a) => cmd::motor::figures(&a),
        Command::Turnoff(a) => cmd::turnoff::figures(&a),
        Command::TripTime(a) => cmd::trip::time_figures(&a),
        Command::TripThreshold(a) => cmd::trip::threshold_figures(&a),
        Command::Boost(a) => cmd::boost::figures(&a),
        _ => Err(CliError(
            "ranges are taken by the quick calculations only".into(),
        )),
    }
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
    let args: Vec<std::ffi::OsString> = args.into_iter().map(Into::into).collect();
    let ranged = match cmd::worst::find(&Cli::command(), &args) {
        Ok(r) => r,
        Err(e) => {
            complain(&e.to_string());
            return ExitCode::from(2);
        }
    };
    if let Some(r) = ranged {
        // Text a command printed before an earlier command in this thread failed is not ours.
        let _ = crate::out::take();
        return finish(cmd::worst::run(&r, &quick_figures));
    }
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
        Command::Emit(a) => cmd::emit::run(&a),
    };
    finish(result)
}

/// The exit code of a command's result, its output written to stdout on success; an error is
/// one line on stderr and exit code 2.
fn finish(result: Result<ExitCode, CliError>) -> ExitCode {
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
