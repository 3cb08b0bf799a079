//! When a scenario's events take effect, and the events that would have no effect.
//!
//! The closed loop ([`crate::closed_loop`]) runs whole control ticks: a scenario of duration
//! `D` at tick `T` runs `⌈D/T⌉` ticks, tick `k` starting at `kT`. Times are rounded to whole
//! nanoseconds first.
//!
//! - A **command** (`command = "on"` / `"off"`) is the application's demand: the firmware
//!   reads it at its control ticks, so it takes effect at the first tick at or after the
//!   event's time, `k = ⌈at/T⌉`.
//! - A **fault, supply change or load step** happens in the plant at its exact time.
//!
//! A scenario is rejected, at the position of the event (or of the scenario for its duration),
//! when something it describes would not happen:
//!
//! - its duration is shorter than one tick (nothing would be simulated);
//! - an event is at or after the end of the scenario;
//! - a command takes effect at the same tick as the next command (the firmware never sees it:
//!   an on and an off within one tick), or after the last tick;
//! - a command sets the demand it already has (the demand is off at the start);
//! - a check would measure nothing: `estimator-error` (measured before the first fault) with a
//!   fault at 0 s, `release-time` (measured after each demand-off) without a
//!   `command = "off"`.

use super::schema::{Action, Command, File, Property, Scenario};
use crate::si::format as si;

/// An event or duration that would have no effect: where, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Ineffective {
    /// Scenario index.
    pub scenario: usize,
    /// The table in the scenario and its index in the file (`[[scenario.event]]`, 2); `None`:
    /// the scenario itself.
    pub table: Option<(&'static str, usize)>,
    /// Dotted key of the value.
    pub key: String,
    /// What would not happen.
    pub problem: String,
}

const EVENT: &str = "[[scenario.event]]";
const CHECK: &str = "[[scenario.check]]";

/// An event's time in whole nanoseconds, rounded as the closed loop rounds it.
fn ns(t_s: f64) -> u64 {
    crate::closed_loop::ns(t_s)
}

/// The tick or duration in whole nanoseconds, rounded as the loop configuration is given them.
fn config_ns(t_s: f64) -> u64 {
    super::run::ns(t_s)
}

fn at_s(t_ns: u64) -> String {
    si(t_ns as f64 * 1e-9, "s")
}

fn demand(c: Command) -> &'static str {
    c.name()
}

/// Checks every scenario of `file` (module docs).
///
/// # Errors
///
/// The first event or duration that would have no effect.
pub fn check(file: &File) -> Result<(), Ineffective> {
    let tick_ns = config_ns(file.system.tick.get()).max(1);
    for (k, sc) in file.scenarios.iter().enumerate() {
        check_scenario(k, sc, tick_ns, file.system.motor.is_some())?;
    }
    Ok(())
}

fn check_scenario(k: usize, sc: &Scenario, tick_ns: u64, motor: bool) -> Result<(), Ineffective> {
    let duration_ns = config_ns(sc.duration.get());
    let err = |table: Option<(&'static str, usize)>, key: String, problem: String| Ineffective {
        scenario: k,
        table,
        key,
        problem,
    };
    let event = |j: usize| Some((EVENT, j));
    if duration_ns < tick_ns {
        return Err(err(
            None,
            format!("scenario[{k}].duration"),
            format!(
                "{} is shorter than one control tick ({}): nothing would be simulated",
                at_s(duration_ns),
                at_s(tick_ns)
            ),
        ));
    }
    let n_ticks = duration_ns.div_ceil(tick_ns);
    let end_ns = n_ticks * tick_ns;
    // In time order, as the closed loop takes them (a stable sort: file order breaks ties).
    let mut order: Vec<usize> = (0..sc.events.len()).collect();
    order.sort_by(|&a, &b| sc.events[a].at.get().total_cmp(&sc.events[b].at.get()));
    for &j in &order {
        let t = ns(sc.events[j].at.get());
        if t >= duration_ns {
            return Err(err(
                event(j),
                format!("scenario[{k}].event[{j}].at"),
                format!(
                    "{} is at or after the end of the scenario ({}): the event would not happen",
                    at_s(t),
                    at_s(duration_ns)
                ),
            ));
        }
    }
    let commands: Vec<(usize, Command, u64)> = order
        .iter()
        .filter_map(|&j| match sc.events[j].action {
            Action::Command(c) => Some((j, c, ns(sc.events[j].at.get()).div_ceil(tick_ns))),
            _ => None,
        })
        .collect();
    // A motor coasts at the start; a coil or a rail is off. A motor command is the same as
    // the one in force only with the same duty.
    let mut now = if motor {
        (Command::Coast, 1.0)
    } else {
        (Command::Off, 1.0)
    };
    for (n, &(j, c, tick)) in commands.iter().enumerate() {
        let key = format!("scenario[{k}].event[{j}].command");
        if tick >= n_ticks {
            return Err(err(
                event(j),
                key,
                format!(
                    "takes effect at the first control tick at or after its time, {}, which \
                     is past the end of the run ({}): the firmware would never see it",
                    at_s(tick * tick_ns),
                    at_s(end_ns)
                ),
            ));
        }
        if let Some(&(j2, c2, tick2)) = commands.get(n + 1)
            && tick2 == tick
        {
            return Err(err(
                event(j),
                key,
                format!(
                    "is lost: the `command = \"{}\"` of event[{j2}] takes effect at the same \
                     control tick ({}), so the firmware never sees this one; commands need at \
                     least one tick ({}) between them",
                    demand(c2),
                    at_s(tick * tick_ns),
                    at_s(tick_ns)
                ),
            ));
        }
        let duty = sc.events[j].duty;
        if (c, duty) == now {
            return Err(err(
                event(j),
                key,
                if motor {
                    format!(
                        "has no effect: the motor command is already {} here (it coasts at the \
                         start)",
                        demand(c)
                    )
                } else {
                    format!(
                        "has no effect: the demand is already {} here (it is off at the start)",
                        demand(c)
                    )
                },
            ));
        }
        now = (c, duty);
    }
    let first_fault = order
        .iter()
        .find(|&&j| !matches!(sc.events[j].action, Action::Command(_)));
    let check_of = |p: Property| sc.checks.iter().position(|c| c.property == p);
    if let Some(&j) = first_fault
        && ns(sc.events[j].at.get()) == 0
        && let Some(c) = check_of(Property::EstimatorError)
    {
        return Err(err(
            Some((CHECK, c)),
            format!("scenario[{k}].check[{c}].property"),
            format!(
                "estimator-error is measured before the first fault, and event[{j}] is at \
                 0 s: nothing would be measured"
            ),
        ));
    }
    if let Some(c) = check_of(Property::ReleaseTime)
        && !commands.iter().any(|x| x.1 == Command::Off)
    {
        return Err(err(
            Some((CHECK, c)),
            format!("scenario[{k}].check[{c}].property"),
            "release-time is measured after a `command = \"off\"`, and the scenario has none: \
             nothing would be measured"
                .into(),
        ));
    }
    Ok(())
}
