//! Scenario files: one TOML file describes a drive system, the controller under test, the
//! tolerances of a sweep and a list of scenarios with the properties that must hold.
//!
//! # Layout of a file
//!
//! ```toml
//! [system]                       # the drive system
//! name = "irrigation valve"
//! tick = "100us"                 # control tick
//! pwm_frequency = "20kHz"
//! [system.supply]                # min, nominal, max, source_resistance
//! [system.temperature]           # min, nominal, max (°C)
//! [system.coil]                  # or [system.boost], or [system.motor]
//! [system.clamp.freewheel]       # one clamp kind: freewheel, diode-zener, across-switch,
//!                                # resistor-diode, unclamped
//! [system.switch]                # on_resistance, breakdown
//! [system.sense]                 # shunt, gain, adc_bits, adc_reference, gain_error, offset,
//!                                # noise, voltage_divider
//! [system.ratings]               # switch_voltage, switch_current, switch_energy, clamp_energy
//! [system.requirements]          # release_time, pull_in_time, output_ripple, saturation_margin
//! [controller.coil]              # or [controller.boost], [controller.motor]: the example
//!                                # controller's parameters
//!                                # (optional: a file for your own controller has none)
//! [tolerances]                   # inductance = { dist = "normal", rel = 0.03 }, ...
//! [[scenario]]                   # name, duration, supply, temperature, noise_seed
//! [[scenario.event]]             # at = "10ms", then one of command / fault / supply / load
//! [[scenario.check]]             # property = "peak-switch-voltage", max = "60V"
//!                                # (hold-current takes `min`, default the coil's hold_current)
//! ```
//!
//! `[system.coil]` takes `pull_in_current`, `release_current` and, optionally, the must-hold
//! `hold_current` (the lower limit of `hold-current` and of the plan's hold verdict). The
//! properties: `peak-switch-voltage`, `clamp-energy`, `switch-energy`, `peak-current`,
//! `trip-latency`, `no-trip`, `release-time`, `output-band`, `estimator-error`,
//! `pull-in-time`, `hold-current`, `coil-temperature`, `coil-power` ([`Property`]).
//!
//! A motor bridge (`[system.motor]`: a brushed DC motor on an H-bridge, see
//! [`MotorStage`]; the bridge's switches are `[system.switch]`, the bus capacitor's rating
//! `[system.ratings] bus_voltage`) takes the commands `forward` and `reverse` (with an optional
//! `duty`, default 1), `brake` and `coast` (a coil's `on` and `off` do not apply), load torque
//! steps (`load_torque = "30mNm"`), the faults `jam`, `overload` (with `load_torque` above the
//! motor's `rated_torque`), `open-winding`, `shorted-winding` (with `factor`) and
//! `supply-cannot-sink` besides the sensor and supply faults, and the properties
//! `bus-voltage`, `time-to-speed` (with `speed` in rad/s), `jam-latency`,
//! `reversal-peak-current`, `winding-temperature`, `peak-current` and `no-trip`
//! (`host-harness/scenarios/motor.toml`).
//!
//! Values take SI prefixes and an optional unit symbol as strings (`"120mH"`, `"4.7u"`), or
//! plain TOML numbers in the base unit. The shipped files in `host-harness/scenarios/` are
//! commented examples of every table.
//!
//! # Errors
//!
//! Every problem is reported as `FILE:LINE:COLUMN: key `PATH`: PROBLEM`, where `PATH` is the
//! dotted key of the value (`system.coil.inductance`, `scenario[1].event[0].at`) and the
//! position is the value's own (or its table's, for checks across a table's values). Unknown
//! keys, missing keys, values that are not numbers in the right unit and values out of range
//! are all errors; nothing is silently ignored or clamped. Problems found later, when a plan or
//! the plant rejects a value (`lenz plan`, `lenz sim`, `lenz sweep`), take the same form: the
//! rejected parameter is mapped to the key it comes from ([`run`]) and placed at that key's
//! value ([`position`]), so a message never names an internal parameter.
//!
//! # When events take effect
//!
//! A command takes effect at the first control tick at or after its time; a fault, supply
//! change or load step at its exact time. An event that would have no effect (lost between
//! ticks, at or after the end, setting the demand it already has) or a scenario that would
//! simulate or measure nothing is an error at its position: see [`timing`].
//!
//! # Limits
//!
//! A file has at most 1 MiB, 1 000 scenarios and 10 000 events per scenario ([`limits`]), so
//! reading, planning and running it take bounded memory.

pub mod limits;
pub mod position;
pub mod quantity;
pub mod run;
pub mod schema;
mod schema_motor;
pub mod timing;
mod unmoved;

use std::fmt;
use std::path::Path;

pub use schema::{
    Action, Armature, BoostController, BoostStage, Check, ClampSpec, Coil, CoilController, Command,
    Controller, Dist, Event, Fault, FaultSpec, File, MotorController, MotorOpenWinding,
    MotorOverload, MotorStage, Property, PwmDecay, Scenario, System,
};

/// A problem in a scenario file, with its position.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ScenarioError {
    /// File name as given.
    pub file: String,
    /// Line, from 1 (0: no position, e.g. the file could not be read).
    pub line: usize,
    /// Column, from 1.
    pub column: usize,
    /// Dotted key path of the value (empty: the whole file).
    pub key: String,
    /// What is wrong.
    pub problem: String,
}

impl fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.line == 0 {
            write!(f, "{}: ", self.file)?;
        } else {
            write!(f, "{}:{}:{}: ", self.file, self.line, self.column)?;
        }
        if !self.key.is_empty() {
            write!(f, "key `{}`: ", self.key)?;
        }
        f.write_str(&self.problem)
    }
}

impl std::error::Error for ScenarioError {}

/// Line and column (both from 1) of byte `offset` in `text`.
fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(text.len());
    let head = text.get(..offset).unwrap_or(text);
    let line = head.matches('\n').count() + 1;
    let col = head.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, col)
}

/// A problem found after parsing (a plan or the plant rejects a value), given as `key `K`:
/// problem` (the form of [`run::RunSetupError`]), placed at the key's position in the file
/// `file`, which is read again; without a key or a position, the file name alone.
#[must_use]
pub fn locate_problem(file: &str, message: &str) -> ScenarioError {
    let (key, problem) = message
        .strip_prefix("key `")
        .and_then(|rest| rest.split_once("`: "))
        .map_or((String::new(), message.to_string()), |(k, p)| {
            (k.to_string(), p.to_string())
        });
    let (line, column) = std::fs::read_to_string(file)
        .ok()
        .filter(|_| !key.is_empty())
        .and_then(|text| position::key_offset(&text, &key).map(|o| line_col(&text, o)))
        .unwrap_or((0, 0));
    ScenarioError {
        file: file.to_string(),
        line,
        column,
        key,
        problem,
    }
}

/// Reads and checks a scenario file.
///
/// # Errors
///
/// The file cannot be read, or it has a problem (see the module docs).
pub fn load(path: &Path) -> Result<File, ScenarioError> {
    let name = path.display().to_string();
    let bytes = read(path)?;
    let text = String::from_utf8(bytes).map_err(|_| ScenarioError {
        file: name.clone(),
        line: 0,
        column: 0,
        key: String::new(),
        problem: "not UTF-8 text".into(),
    })?;
    parse(&name, &text)
}

/// The bytes of a scenario file, read no further than the size limit ([`limits`]).
///
/// # Errors
///
/// The file cannot be read, or it is longer than the limit.
pub fn read(path: &Path) -> Result<Vec<u8>, ScenarioError> {
    use std::io::Read as _;
    let fail = |problem: String| ScenarioError {
        file: path.display().to_string(),
        line: 0,
        column: 0,
        key: String::new(),
        problem,
    };
    let f = std::fs::File::open(path).map_err(|e| fail(format!("cannot read the file: {e}")))?;
    let mut bytes = Vec::new();
    f.take(limits::MAX_FILE_BYTES as u64 + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| fail(format!("cannot read the file: {e}")))?;
    if bytes.len() > limits::MAX_FILE_BYTES {
        return Err(fail(format!(
            "longer than {} bytes (1 MiB), the limit of a scenario file",
            limits::MAX_FILE_BYTES
        )));
    }
    Ok(bytes)
}

/// Parses and checks the text of a scenario file; `file` names it in errors.
///
/// # Errors
///
/// See the module docs.
pub fn parse(file: &str, text: &str) -> Result<File, ScenarioError> {
    let at = |offset: usize, key: String, problem: String| {
        let (line, column) = line_col(text, offset);
        ScenarioError {
            file: file.to_string(),
            line,
            column,
            key,
            problem,
        }
    };
    if let Some(problem) = limits::size_problem(text) {
        return Err(ScenarioError {
            file: file.to_string(),
            line: 0,
            column: 0,
            key: String::new(),
            problem,
        });
    }
    let de = toml::Deserializer::parse(text).map_err(|e| {
        let start = e.span().map_or(0, |s| s.start);
        at(start, String::new(), e.message().trim().to_string())
    })?;
    let parsed: File = serde_path_to_error::deserialize(de).map_err(|e| {
        let key = e.path().to_string();
        let key = if key == "." { String::new() } else { key };
        let inner = e.inner();
        let start = inner.span().map_or(0, |s| s.start);
        let (key, problem) = tidy(key, inner.message().trim());
        at(start, key, problem)
    })?;
    if let Some((key, scenario, problem)) = limits::count_problem(&parsed) {
        let place = scenario
            .and_then(|k| parsed.scenarios.get(k))
            .map(|s| Place {
                scenario: s.name.clone(),
                table: None,
                literal: None,
            });
        return Err(at(place.map_or(0, |p| locate(text, &p)), key, problem));
    }
    check_consistency(&parsed).map_err(|(key, needle, problem)| {
        let offset = needle.map_or(0, |n| locate(text, &n));
        at(offset, key, problem)
    })?;
    timing::check(&parsed).map_err(|t| {
        let place = Place {
            scenario: parsed
                .scenarios
                .get(t.scenario)
                .map_or_else(String::new, |s| s.name.clone()),
            table: t.table,
            literal: None,
        };
        at(locate(text, &place), t.key, t.problem)
    })?;
    Ok(parsed)
}

/// Speaks of keys rather than serde's fields, and moves a key named at the start of a
/// table-level message into the key path.
fn tidy(key: String, message: &str) -> (String, String) {
    let message = message
        .replace("missing field", "missing key")
        .replace("unknown field", "unknown key");
    if let Some((sub, problem)) = message
        .strip_prefix("key `")
        .and_then(|rest| rest.split_once("`: "))
    {
        let key = if key.is_empty() {
            sub.to_string()
        } else {
            format!("{key}.{sub}")
        };
        return (key, problem.to_string());
    }
    (key, message)
}

/// Where a place found by [`check_consistency`] is in the text: a scenario's name, then the
/// `n`-th `[[scenario.event]]` or `[[scenario.check]]` after it.
fn locate(text: &str, place: &Place) -> usize {
    if let Some(l) = place.literal {
        return text.find(l).unwrap_or(0);
    }
    let Some(name_at) = find_name(text, &place.scenario) else {
        return 0;
    };
    let Some((header, n)) = place.table else {
        return name_at;
    };
    let mut from = name_at;
    for k in 0..=n {
        match text.get(from..).and_then(|t| t.find(header)) {
            Some(off) => {
                if k == n {
                    return from + off;
                }
                from += off + header.len();
            }
            None => return name_at,
        }
    }
    name_at
}

fn find_name(text: &str, name: &str) -> Option<usize> {
    let quoted = format!("\"{name}\"");
    let mut from = 0;
    while let Some(off) = text.get(from..).and_then(|t| t.find(&quoted)) {
        let at = from + off;
        let line_start = text
            .get(..at)
            .and_then(|h| h.rfind('\n'))
            .map_or(0, |p| p + 1);
        let head = text.get(line_start..at).unwrap_or("").trim();
        if head.starts_with("name") && head.ends_with('=') {
            return Some(line_start);
        }
        from = at + quoted.len();
    }
    None
}

/// A scenario, and optionally its `n`-th event or check table; or a literal text.
struct Place {
    scenario: String,
    table: Option<(&'static str, usize)>,
    literal: Option<&'static str>,
}

impl Place {
    fn literal(text: &'static str) -> Place {
        Place {
            scenario: String::new(),
            table: None,
            literal: Some(text),
        }
    }
}

type Inconsistency = (String, Option<Place>, String);

/// A supply a scenario or an event sets must lie within half the system's minimum and twice
/// its maximum (the same check for both).
fn supply_out_of_range(f: &File, v: f64) -> Option<String> {
    let sup = &f.system.supply;
    let (lo, hi) = (sup.min.get() * 0.5, sup.max.get() * 2.0);
    (v < lo || v > hi).then(|| {
        format!(
            "{} is far outside the system's supply range (allowed {} to {})",
            crate::si::format(v, "V"),
            crate::si::format(lo, "V"),
            crate::si::format(hi, "V"),
        )
    })
}

/// Checks across tables: controller and system kinds, scenario names, event times, checks
/// that apply to the kind of system.
fn check_consistency(f: &File) -> Result<(), Inconsistency> {
    let is_boost = f.system.boost.is_some();
    let is_motor = f.system.motor.is_some();
    match (&f.controller, is_motor) {
        (Controller::Motor(_), false) => {
            return Err((
                "controller.motor".into(),
                Some(Place::literal("[controller")),
                "a motor controller needs [system.motor]".into(),
            ));
        }
        (Controller::Coil(_) | Controller::Boost(_), true) => {
            return Err((
                "controller".into(),
                Some(Place::literal("[controller")),
                "a motor bridge needs [controller.motor] (or no [controller] for your own)".into(),
            ));
        }
        _ => {}
    }
    match (&f.controller, is_boost) {
        (Controller::Coil(_), true) => {
            return Err((
                "controller.coil".into(),
                Some(Place::literal("[controller")),
                "a coil controller cannot drive a boost stage: use [controller.boost]".into(),
            ));
        }
        (Controller::Boost(_), false) => {
            return Err((
                "controller.boost".into(),
                Some(Place::literal("[controller")),
                "a boost controller needs [system.boost]: use [controller.coil]".into(),
            ));
        }
        _ => {}
    }
    if f.scenarios.is_empty() {
        return Err((
            "scenario".into(),
            None,
            "missing key `scenario`: the file needs at least one [[scenario]]".into(),
        ));
    }
    for (k, s) in f.scenarios.iter().enumerate() {
        let place = |table: Option<(&'static str, usize)>| {
            Some(Place {
                scenario: s.name.clone(),
                table,
                literal: None,
            })
        };
        let needle = place(None);
        if s.name.trim().is_empty() {
            return Err((format!("scenario[{k}].name"), None, "is empty".into()));
        }
        if f.scenarios[..k].iter().any(|o| o.name == s.name) {
            return Err((
                format!("scenario[{k}].name"),
                needle,
                format!("scenario name '{}' is used twice", s.name),
            ));
        }
        if s.duration.get() > 60.0 {
            return Err((
                format!("scenario[{k}].duration"),
                needle,
                "longer than 60 s of simulated time".into(),
            ));
        }
        if s.duration.get() * f.system.pwm_frequency.get() > 2e7 {
            return Err((
                format!("scenario[{k}].duration"),
                needle,
                "more than 20 000 000 PWM periods".into(),
            ));
        }
        if s.duration.get() / f.system.tick.get() > 2e6 {
            return Err((
                format!("scenario[{k}].duration"),
                needle,
                "more than 2 000 000 control ticks".into(),
            ));
        }
        if let Some(v) = s.supply
            && let Some(problem) = supply_out_of_range(f, v.get())
        {
            return Err((format!("scenario[{k}].supply"), needle, problem));
        }
        for (j, e) in s.events.iter().enumerate() {
            let key = format!("scenario[{k}].event[{j}]");
            if e.at.get() > s.duration.get() {
                return Err((
                    format!("{key}.at"),
                    place(Some(("[[scenario.event]]", j))),
                    format!(
                        "{} s is after the end of the scenario ({} s)",
                        e.at.get(),
                        s.duration.get()
                    ),
                ));
            }
            if let Action::Supply(v, _) = e.action
                && let Some(problem) = supply_out_of_range(f, v)
            {
                return Err((
                    format!("{key}.supply"),
                    place(Some(("[[scenario.event]]", j))),
                    problem,
                ));
            }
            let motor_fault = matches!(
                e.action,
                Action::Fault(
                    FaultSpec::Jam
                        | FaultSpec::Overload(_)
                        | FaultSpec::OpenWinding
                        | FaultSpec::SupplyCannotSink
                        | FaultSpec::ShortedWinding { .. }
                ) | Action::LoadTorque(_)
            );
            let bad = match e.action {
                Action::Command(c) if c.is_motor() && !is_motor => {
                    Some("forward, reverse, brake and coast apply to a motor ([system.motor])")
                }
                Action::Command(c) if !c.is_motor() && is_motor => Some(
                    "a motor takes `command = \"forward\"`, \"reverse\", \"brake\" or \"coast\"",
                ),
                _ if motor_fault && !is_motor => {
                    Some("motor faults and load torque steps apply to a motor ([system.motor])")
                }
                Action::Fault(FaultSpec::Overload(t))
                    if f.system.motor.is_some_and(|m| {
                        t <= m.rated_torque.map_or(m.load_torque.get(), |r| r.get())
                    }) =>
                {
                    Some(
                        "an overload steps the load torque above the motor's rating \
                         (`rated_torque`, else `load_torque` of [system.motor]): raise `load_torque`",
                    )
                }
                Action::Load(_) | Action::Fault(FaultSpec::SwitchStuckOn) if is_motor => {
                    Some("does not apply to a motor bridge")
                }
                Action::Fault(
                    FaultSpec::ShortedCoil { .. }
                    | FaultSpec::ShortedTurns { .. }
                    | FaultSpec::OpenCoil,
                ) if is_motor => {
                    Some("coil faults apply to a coil drive: use open-winding or shorted-winding")
                }
                Action::Load(_) if !is_boost => Some("a load step applies to a boost stage"),
                Action::Fault(
                    FaultSpec::ShortedCoil { .. }
                    | FaultSpec::ShortedTurns { .. }
                    | FaultSpec::OpenCoil,
                ) if is_boost => Some("coil faults apply to a coil drive"),
                Action::Fault(
                    FaultSpec::StuckArmature
                    | FaultSpec::SluggishArmature(_)
                    | FaultSpec::ExcessLoad(_),
                ) if f.system.coil.and_then(|c| c.armature).is_none() => {
                    Some("armature faults need a [system.coil.armature]")
                }
                _ => None,
            };
            if let Some(b) = bad {
                return Err((key, place(Some(("[[scenario.event]]", j))), b.into()));
            }
        }
        let commands_on = s
            .events
            .iter()
            .any(|e| matches!(e.action, Action::Command(Command::On)));
        let drives = s.events.iter().any(|e| {
            matches!(
                e.action,
                Action::Command(Command::Forward | Command::Reverse)
            )
        });
        let jams = s
            .events
            .iter()
            .any(|e| matches!(e.action, Action::Fault(FaultSpec::Jam)));
        let reverses = {
            let mut order: Vec<&Event> = s.events.iter().collect();
            order.sort_by(|a, b| a.at.get().total_cmp(&b.at.get()));
            let mut last = None;
            let mut any = false;
            for e in order {
                if let Action::Command(c @ (Command::Forward | Command::Reverse)) = e.action {
                    any |= last.is_some_and(|l| l != c);
                    last = Some(c);
                }
            }
            any
        };
        for (j, c) in s.checks.iter().enumerate() {
            let key = format!("scenario[{k}].check[{j}].property");
            let bad = match c.property {
                p if p.is_motor() && !is_motor => Some("applies to a motor ([system.motor])"),
                Property::TimeToSpeed if !drives => Some(
                    "needs an event with `command = \"forward\"` or \"reverse\": without one it checks nothing",
                ),
                Property::JamLatency if !jams => {
                    Some("needs an event with `fault = \"jam\"`: without one it checks nothing")
                }
                Property::ReversalPeakCurrent if !reverses => Some(
                    "needs a `forward` and a later `reverse` command (or the other way round): \
                     without a reversal it checks nothing",
                ),
                Property::ReleaseTime
                | Property::ClampEnergy
                | Property::EstimatorError
                | Property::PullInTime
                | Property::HoldCurrent
                | Property::CoilTemperature
                | Property::CoilPower
                | Property::OutputBand
                    if is_motor =>
                {
                    Some("applies to a coil drive or a boost stage, not to a motor bridge")
                }
                Property::OutputBand if !is_boost => Some("output-band applies to a boost stage"),
                Property::ReleaseTime
                | Property::ClampEnergy
                | Property::EstimatorError
                | Property::PullInTime
                | Property::HoldCurrent
                | Property::CoilTemperature
                | Property::CoilPower
                    if is_boost =>
                {
                    Some("applies to a coil drive")
                }
                p if p.needs_armature() && f.system.coil.and_then(|k| k.armature).is_none() => {
                    Some("needs a [system.coil.armature]: without one nothing moves")
                }
                Property::PullInTime
                | Property::HoldCurrent
                | Property::CoilPower
                | Property::SeatTime
                | Property::ActuationEnergy
                | Property::SeatDetectionLatency
                | Property::DropoutDetectionLatency
                    if !commands_on =>
                {
                    Some("needs an event with `command = \"on\"`: without one it checks nothing")
                }
                Property::HoldCurrent
                    if c.min.is_none()
                        && f.system.coil.is_none_or(|k| k.hold_current.is_none()) =>
                {
                    Some(
                        "missing key `min`: the must-hold current (or give `hold_current` in [system.coil])",
                    )
                }
                _ => None,
            };
            if let Some(b) = bad {
                return Err((key, place(Some(("[[scenario.check]]", j))), b.into()));
            }
            if c.after > s.duration.get() {
                return Err((
                    format!("scenario[{k}].check[{j}].after"),
                    place(Some(("[[scenario.check]]", j))),
                    "is after the end of the scenario".into(),
                ));
            }
        }
        let expects_trip = s.events.iter().any(|e| e.expect_trip);
        for (j, c) in s.checks.iter().enumerate() {
            let key = format!("scenario[{k}].check[{j}].property");
            if s.checks[..j].iter().any(|o| o.property == c.property) {
                return Err((
                    key,
                    place(Some(("[[scenario.check]]", j))),
                    format!("{} is checked twice", c.property.name()),
                ));
            }
            if c.property == Property::TripLatency && !expects_trip {
                return Err((
                    key,
                    place(Some(("[[scenario.check]]", j))),
                    "trip-latency needs an event with `expect_trip = true`".into(),
                ));
            }
            if c.property == Property::NoTrip && expects_trip {
                return Err((
                    key,
                    place(Some(("[[scenario.check]]", j))),
                    "no-trip contradicts an event with `expect_trip = true`".into(),
                ));
            }
        }
        if s.checks.is_empty() {
            return Err((
                format!("scenario[{k}].check"),
                needle,
                "missing key `check`: a scenario needs at least one [[scenario.check]]".into(),
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::line_col;

    #[test]
    fn positions() {
        let t = "a = 1\nbb = 2\n  c = 3";
        assert_eq!(line_col(t, 0), (1, 1));
        assert_eq!(line_col(t, 6), (2, 1));
        assert_eq!(line_col(t, 11), (2, 6));
        assert_eq!(line_col(t, 15), (3, 3));
        assert_eq!(line_col(t, 99), (3, 8));
    }
}
