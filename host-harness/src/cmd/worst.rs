//! Quick calculations over ranges: `lenz coil --supply 10.8..13.2 --inductance 45m±10% …`.
//!
//! Any numeric flag of a quick calculation (`coil`, `turnoff`, `boost`, `trip-time`,
//! `trip-threshold`, `motor`) takes a range or tolerance instead of a single value (forms in
//! [`crate::range_arg`]). Each figure of the command's `--json` report is then bounded over the
//! box of the ranges by the core's worst-case search ([`lenz::bounds::worst_case`]: every corner,
//! a grid between them and a golden-section refinement of interior extrema), and reported as
//! `min`, `max` and the corners `min_at`, `max_at` where they occur.
//!
//! Every point of that search is a single-value run of the same command: its arguments are the
//! ones typed, with each range replaced by a value, read by the same clap definitions and
//! computed by the same routine. So the figure at a reported corner is exactly what
//! `lenz coil --supply <that value> …` prints, and a run without ranges never comes here.

use std::any::TypeId;
use std::cell::RefCell;
use std::collections::{BTreeSet, HashMap};
use std::ffi::OsString;
use std::fmt;
use std::process::ExitCode;

use clap::{Arg, Command};
use lenz::Range;
use serde::Serialize;
use serde::de::{Deserialize, Deserializer, MapAccess, Visitor};
use serde_json::Value;

use super::table::{new_table, si};
use crate::cli::{CAUTION, CliError, MOTOR_CAUTION};
use crate::range_arg::{self, Spread};

/// The subcommands whose numeric flags take ranges.
pub const QUICK: &[&str] = &[
    "coil",
    "turnoff",
    "boost",
    "trip-time",
    "trip-threshold",
    "motor",
];

/// Most flags given as ranges at once: the search evaluates at least 3^N points.
pub const MAX_RANGED: usize = 8;

/// A command's report as ordered `(key, value)` pairs (the order of its `--json` keys).
#[derive(Debug, Clone, PartialEq)]
pub struct Figures(pub Vec<(String, Value)>);

impl<'de> Deserialize<'de> for Figures {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Ordered;
        impl<'de> Visitor<'de> for Ordered {
            type Value = Figures;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("a JSON object")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Figures, A::Error> {
                let mut v = Vec::new();
                while let Some((k, x)) = m.next_entry::<String, Value>()? {
                    v.push((k, x));
                }
                Ok(Figures(v))
            }
        }
        d.deserialize_map(Ordered)
    }
}

/// The figures of a command's report, in the order of its keys.
///
/// # Errors
///
/// The report does not serialize to a JSON object (a bug, reported rather than hidden).
pub fn figures_of<T: Serialize>(report: &T) -> Result<Figures, CliError> {
    let text = serde_json::to_string(report).map_err(|e| CliError(e.to_string()))?;
    serde_json::from_str(&text).map_err(|e| CliError(e.to_string()))
}

/// One flag given as a range.
#[derive(Debug, Clone)]
pub struct RangedFlag {
    /// The flag's long name, without the dashes.
    pub long: String,
    /// As typed.
    pub text: String,
    /// Its ends, in the flag's unit.
    pub spread: Spread,
    /// The flag's value name (its unit, as in `--help`).
    unit: String,
}

/// A quick calculation with at least one range.
#[derive(Debug, Clone)]
pub struct Ranged {
    /// The subcommand.
    pub command: String,
    /// The arguments without the ranged flags.
    base: Vec<OsString>,
    /// The ranged flags, in the order typed.
    pub flags: Vec<RangedFlag>,
    /// `--json` was given.
    json: bool,
}

impl Ranged {
    /// The arguments of the single-value run at `point` (one value per ranged flag).
    #[must_use]
    pub fn args_at(&self, point: &[f32]) -> Vec<OsString> {
        let mut v = self.base.clone();
        for (f, x) in self.flags.iter().zip(point) {
            v.push(format!("--{}={x}", f.long).into());
        }
        v
    }

    fn corner_text(&self, point: &[f32]) -> String {
        self.flags
            .iter()
            .zip(point)
            .map(|(f, &x)| format!("--{} {}", f.long, value_text(f64::from(x), &f.unit)))
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// A flag value for people, in the unit of its value name.
fn value_text(x: f64, unit: &str) -> String {
    let symbol = match unit {
        "V" => "V",
        "A" => "A",
        "H" => "H",
        "OHM" => "Ω",
        "S" => "s",
        "HZ" => "Hz",
        "F" => "F",
        "C" => return format!("{x} °C"),
        _ => return format!("{x}"),
    };
    si(x, symbol)
}

/// Reads one number of `arg` with the flag's own value parser.
fn read_value(arg: &Arg, text: &str) -> Result<f64, String> {
    let long = arg.get_long().unwrap_or_default();
    let cmd = Command::new("lenz")
        .no_binary_name(true)
        .arg(arg.clone().required(false));
    let m = cmd
        .try_get_matches_from([format!("--{long}={text}")])
        .map_err(|e| {
            std::error::Error::source(&e).map_or_else(|| e.kind().to_string(), |s| s.to_string())
        })?;
    m.get_one::<f64>(arg.get_id().as_str())
        .copied()
        .ok_or_else(|| format!("'{text}' is not a value"))
}

/// The flags given as ranges in the arguments of a quick calculation, or `None` (then the
/// command runs as always).
///
/// # Errors
///
/// A range that cannot be read, or more than [`MAX_RANGED`] of them; the message names the
/// flag.
pub fn find(root: &Command, args: &[OsString]) -> Result<Option<Ranged>, CliError> {
    let Some(name) = args.get(1).and_then(|a| a.to_str()) else {
        return Ok(None);
    };
    if !QUICK.contains(&name)
        || args
            .iter()
            .any(|a| ["--help", "-h", "--version", "-V"].contains(&a.to_str().unwrap_or_default()))
    {
        return Ok(None);
    }
    let Some(sub) = root.find_subcommand(name) else {
        return Ok(None);
    };
    let numeric: Vec<&Arg> = sub
        .get_arguments()
        .filter(|a| a.get_long().is_some() && a.get_value_parser().type_id() == TypeId::of::<f64>())
        .collect();
    let mut base: Vec<OsString> = args.iter().take(2).cloned().collect();
    let mut flags = Vec::new();
    let mut json = false;
    let mut i = 2;
    while let Some(token) = args.get(i) {
        let text = token.to_str().unwrap_or_default();
        json |= text == "--json";
        let flag = text.strip_prefix("--").and_then(|rest| {
            let (long, inline) = match rest.split_once('=') {
                Some((l, v)) => (l, Some(v)),
                None => (rest, None),
            };
            numeric
                .iter()
                .find(|a| a.get_long() == Some(long))
                .map(|a| (*a, inline))
        });
        if let Some((arg, inline)) = flag {
            let (value, used) = match inline {
                Some(v) => (Some(v.to_string()), 1),
                None => (
                    args.get(i + 1).and_then(|v| v.to_str()).map(str::to_string),
                    2,
                ),
            };
            if let Some(value) = value.filter(|v| range_arg::is_range(v)) {
                let long = arg.get_long().unwrap_or_default();
                let spread = range_arg::parse(&value, |s| read_value(arg, s))
                    .map_err(|e| CliError(format!("--{long}: {e}")))?;
                flags.push(RangedFlag {
                    long: long.to_string(),
                    text: value,
                    spread,
                    unit: arg
                        .get_value_names()
                        .and_then(|v| v.first())
                        .map_or_else(String::new, |s| s.as_str().to_string()),
                });
                i += used;
                continue;
            }
        }
        base.push(token.clone());
        i += 1;
    }
    if flags.is_empty() {
        return Ok(None);
    }
    if flags.len() > MAX_RANGED {
        let names: Vec<String> = flags.iter().map(|f| format!("--{}", f.long)).collect();
        return Err(CliError(format!(
            "{}: at most {MAX_RANGED} flags take ranges at once, {} given",
            names.join(", "),
            flags.len()
        )));
    }
    for (k, f) in flags.iter().enumerate() {
        if flags[..k].iter().any(|g| g.long == f.long) {
            return Err(CliError(format!("--{}: given more than once", f.long)));
        }
    }
    Ok(Some(Ranged {
        command: name.to_string(),
        base,
        flags,
        json,
    }))
}

/// One figure over the ranges.
#[derive(Debug, Clone, PartialEq)]
pub enum Bounded {
    /// A number: its extremes and where they occur.
    Number {
        /// Smallest value.
        min: f32,
        /// Largest value.
        max: f32,
        /// Where the smallest value occurs (one value per ranged flag).
        min_at: Vec<f32>,
        /// Where the largest value occurs.
        max_at: Vec<f32>,
    },
    /// Not a number (a mode, a reason, a name): the distinct values met at the points
    /// evaluated.
    Values(Vec<Value>),
}

/// [`lenz::bounds::worst_case`] for a number of ranges known only at run time.
fn worst_case_dyn(
    ranges: &[Range],
    figure: &dyn Fn(&[f32]) -> Result<f32, lenz::Error>,
) -> Result<lenz::Bound<Vec<f32>>, lenz::Error> {
    macro_rules! sized {
        ($($n:literal)*) => {
            match ranges.len() {
                $($n => {
                    let r: [Range; $n] = ranges
                        .try_into()
                        .map_err(|_| lenz::Error::NotFinite { param: "ranges" })?;
                    lenz::bounds::worst_case(&r, |p| figure(p)).map(|b| b.map_corner(|c| c.to_vec()))
                })*
                _ => Err(lenz::Error::NotFinite { param: "ranges" }),
            }
        };
    }
    sized!(1 2 3 4 5 6 7 8)
}

/// Every figure of the report over the ranges of `r`; `eval` runs the command at single
/// values (the arguments of [`Ranged::args_at`]).
///
/// # Errors
///
/// The command fails at some point of the box (the message gives that point), or a figure is a
/// number at some points and not at others.
pub fn bound_all(
    r: &Ranged,
    eval: &dyn Fn(&[OsString]) -> Result<Figures, CliError>,
) -> Result<Vec<(String, Bounded)>, CliError> {
    let mut ranges = Vec::new();
    for f in &r.flags {
        let range =
            Range::new("range", f.spread.min as f32, f.spread.max as f32).map_err(|_| {
                CliError(format!(
                    "--{}: '{}' is outside the f32 range",
                    f.long, f.text
                ))
            })?;
        ranges.push(range);
    }
    let cache: RefCell<HashMap<Vec<u32>, Result<Figures, CliError>>> = RefCell::default();
    let at = |p: &[f32]| -> Result<Figures, CliError> {
        let key: Vec<u32> = p.iter().map(|x| x.to_bits()).collect();
        if let Some(hit) = cache.borrow().get(&key) {
            return hit.clone();
        }
        let got =
            eval(&r.args_at(p)).map_err(|e| CliError(format!("{e} (at {})", r.corner_text(p))));
        cache.borrow_mut().insert(key, got.clone());
        got
    };
    let first: Vec<f32> = ranges.iter().map(Range::min).collect();
    let keys = at(&first)?;
    let failure: RefCell<Option<CliError>> = RefCell::default();
    let mut out = Vec::new();
    for (key, sample) in &keys.0 {
        if !sample.is_number() {
            continue;
        }
        let figure = |p: &[f32]| -> Result<f32, lenz::Error> {
            let value = at(p).and_then(|f| {
                f.0.iter()
                    .find(|(k, _)| k == key)
                    .and_then(|(_, v)| v.as_f64())
                    .ok_or_else(|| {
                        CliError(format!(
                            "{key}: has no value at {} (it has one at {})",
                            r.corner_text(p),
                            r.corner_text(&first)
                        ))
                    })
            });
            match value {
                Ok(v) => Ok(v as f32),
                Err(e) => {
                    failure.borrow_mut().get_or_insert(e);
                    Err(lenz::Error::NotFinite { param: "figure" })
                }
            }
        };
        match worst_case_dyn(&ranges, &figure) {
            Ok(b) => out.push((
                key.clone(),
                Bounded::Number {
                    min: b.min,
                    max: b.max,
                    min_at: b.min_at,
                    max_at: b.max_at,
                },
            )),
            Err(e) => {
                return Err(failure
                    .borrow_mut()
                    .take()
                    .unwrap_or_else(|| CliError(format!("{key}: {e}"))));
            }
        }
    }
    // The other keys: the distinct values over every point evaluated.
    let mut result = Vec::new();
    for (key, _) in &keys.0 {
        if let Some(pos) = out.iter().position(|(k, _)| k == key) {
            result.push(out.swap_remove(pos));
            continue;
        }
        let mut seen = BTreeSet::new();
        let mut values = Vec::new();
        for f in cache.borrow().values().flatten() {
            let v =
                f.0.iter()
                    .find(|(k, _)| k == key)
                    .map_or(Value::Null, |(_, v)| v.clone());
            if seen.insert(v.to_string()) {
                values.push(v);
            }
        }
        values.sort_by_key(Value::to_string);
        result.push((key.clone(), Bounded::Values(values)));
    }
    Ok(result)
}

/// A figure's name and unit from its JSON key: `steady_current_a` is "steady current" in A.
#[must_use]
pub fn name_and_unit(key: &str) -> (String, &'static str) {
    const SUFFIXES: &[(&str, &str)] = &[
        ("_a_per_s", "A/s"),
        ("_rad_s", "rad/s"),
        ("_ohm", "Ω"),
        ("_hz", "Hz"),
        ("_nm", "N·m"),
        ("_a", "A"),
        ("_s", "s"),
        ("_v", "V"),
        ("_j", "J"),
        ("_w", "W"),
        ("_c", "°C"),
        ("_f", "F"),
        ("_h", "H"),
    ];
    for (suffix, unit) in SUFFIXES {
        if let Some(stem) = key.strip_suffix(suffix) {
            return (stem.replace('_', " "), unit);
        }
    }
    (key.replace('_', " "), "")
}

fn number_text(x: f32, unit: &str) -> String {
    match unit {
        "" => format!("{x:.5}"),
        "°C" => format!("{x} °C"),
        u => si(x.into(), u),
    }
}

fn values_text(values: &[Value]) -> String {
    let parts: Vec<String> = values
        .iter()
        .map(|v| match v {
            Value::String(s) => s.clone(),
            Value::Null => "—".to_string(),
            other => other.to_string(),
        })
        .collect();
    if parts.len() > 1 {
        format!("{} (varies over the ranges)", parts.join(" or "))
    } else {
        parts.concat()
    }
}

/// The `--json` form: each numeric key an object with `min`, `max`, `min_at`, `max_at`
/// (corners keyed by flag name, in the flag's base unit); a key that is not a number keeps its
/// value when it is the same everywhere, else the list of its values. Keys in the report's
/// order; numbers as f32, as in the single-value output.
pub struct Json<'a> {
    /// The ranges.
    pub ranged: &'a Ranged,
    /// The bounded figures.
    pub figures: &'a [(String, Bounded)],
}

/// A corner: each ranged flag with its value there.
struct Corner<'a>(&'a Ranged, &'a [f32]);

impl Serialize for Corner<'_> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = s.serialize_map(Some(self.1.len()))?;
        for (f, x) in self.0.flags.iter().zip(self.1) {
            m.serialize_entry(&f.long, x)?;
        }
        m.end()
    }
}

impl Serialize for Json<'_> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        #[derive(Serialize)]
        struct Number<'a> {
            min: f32,
            max: f32,
            min_at: Corner<'a>,
            max_at: Corner<'a>,
        }
        let mut m = s.serialize_map(Some(self.figures.len()))?;
        for (key, b) in self.figures {
            match b {
                Bounded::Number {
                    min,
                    max,
                    min_at,
                    max_at,
                } => m.serialize_entry(
                    key,
                    &Number {
                        min: *min,
                        max: *max,
                        min_at: Corner(self.ranged, min_at),
                        max_at: Corner(self.ranged, max_at),
                    },
                )?,
                Bounded::Values(values) if values.len() == 1 => {
                    m.serialize_entry(key, &values[0])?;
                }
                Bounded::Values(values) => m.serialize_entry(key, values)?,
            }
        }
        m.end()
    }
}

/// Runs a quick calculation with ranges: prints the bounds table (or JSON) and the caution.
///
/// # Errors
///
/// As [`bound_all`].
pub fn run(
    r: &Ranged,
    eval: &dyn Fn(&[OsString]) -> Result<Figures, CliError>,
) -> Result<ExitCode, CliError> {
    let figures = bound_all(r, eval)?;
    if r.json {
        println!(
            "{}",
            serde_json::to_string(&Json {
                ranged: r,
                figures: &figures,
            })
            .map_err(|e| CliError(e.to_string()))?
        );
        return Ok(ExitCode::SUCCESS);
    }
    let over: Vec<String> = r
        .flags
        .iter()
        .map(|f| {
            format!(
                "--{} {} … {}",
                f.long,
                value_text(f.spread.min, &f.unit),
                value_text(f.spread.max, &f.unit)
            )
        })
        .collect();
    println!("lenz {}: worst case over {}", r.command, over.join(", "));
    let mut t = new_table(&["Figure", "Min", "at", "Max", "at"]);
    for (key, b) in &figures {
        let (name, unit) = name_and_unit(key);
        match b {
            Bounded::Number {
                min,
                max,
                min_at,
                max_at,
            } => t.add_row(vec![
                name,
                number_text(*min, unit),
                r.corner_text(min_at),
                number_text(*max, unit),
                r.corner_text(max_at),
            ]),
            Bounded::Values(values) => t.add_row(vec![
                name,
                values_text(values),
                String::new(),
                String::new(),
                String::new(),
            ]),
        };
    }
    println!("{t}");
    println!(
        "Each figure's extremes over the ranges, with the values of the ranged flags where they \
         occur (corners, or an interior point where the figure peaks inside). Run `lenz {}` \
         with those values for the full report there.",
        r.command
    );
    println!("{CAUTION}");
    if r.command == "motor" {
        println!("{MOTOR_CAUTION}");
    }
    Ok(ExitCode::SUCCESS)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_and_units_from_keys() {
        assert_eq!(
            name_and_unit("steady_current_a"),
            ("steady current".into(), "A")
        );
        assert_eq!(name_and_unit("tau_s"), ("tau".into(), "s"));
        assert_eq!(name_and_unit("speed_rad_s"), ("speed".into(), "rad/s"));
        assert_eq!(name_and_unit("di_dt_a_per_s"), ("di dt".into(), "A/s"));
        assert_eq!(
            name_and_unit("stall_torque_nm"),
            ("stall torque".into(), "N·m")
        );
        assert_eq!(name_and_unit("resistance_ohm"), ("resistance".into(), "Ω"));
        assert_eq!(name_and_unit("k_crit"), ("k crit".into(), ""));
        assert_eq!(name_and_unit("duty"), ("duty".into(), ""));
    }

    #[test]
    fn figures_keep_the_key_order() {
        #[derive(Serialize)]
        struct R {
            zeta: f32,
            alpha: &'static str,
        }
        let f = figures_of(&R {
            zeta: 1.0,
            alpha: "x",
        })
        .unwrap();
        let keys: Vec<&str> = f.0.iter().map(|(k, _)| k.as_str()).collect();
        assert_eq!(keys, ["zeta", "alpha"]);
    }
}
