//! The flags of a quick calculation given as ranges.

use std::any::TypeId;
use std::ffi::OsString;

use clap::{Arg, Command};

use super::{MAX_RANGED, QUICK};
use crate::input_error::InputError;
use crate::range_arg::{self, Spread};
use crate::si::format as si;

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
    pub unit: String,
}

/// A quick calculation with at least one range.
#[derive(Debug, Clone)]
pub struct Ranged {
    /// The subcommand.
    pub command: String,
    /// The arguments without the ranged flags.
    pub base: Vec<OsString>,
    /// The ranged flags, in the order typed.
    pub flags: Vec<RangedFlag>,
    /// `--json` was given.
    pub json: bool,
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

    /// The values of the ranged flags at `point`, for people.
    #[must_use]
    pub fn corner_text(&self, point: &[f32]) -> String {
        self.flags
            .iter()
            .zip(point)
            .map(|(f, &x)| format!("--{} {}", f.long, value_text(f64::from(x), &f.unit)))
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// A flag value for people, in the unit of its value name.
#[must_use]
pub fn value_text(x: f64, unit: &str) -> String {
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
pub fn find(root: &Command, args: &[OsString]) -> Result<Option<Ranged>, InputError> {
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
                    .map_err(|e| InputError(format!("--{long}: {e}")))?;
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
        return Err(InputError(format!(
            "{}: at most {MAX_RANGED} flags take ranges at once, {} given",
            names.join(", "),
            flags.len()
        )));
    }
    for (k, f) in flags.iter().enumerate() {
        if flags[..k].iter().any(|g| g.long == f.long) {
            return Err(InputError(format!("--{}: given more than once", f.long)));
        }
    }
    Ok(Some(Ranged {
        command: name.to_string(),
        base,
        flags,
        json,
    }))
}
