//! Every figure of a report bounded over the ranges by `lenz::bounds::worst_case`.

use std::cell::RefCell;
use std::collections::{BTreeSet, HashMap};
use std::ffi::OsString;

use lenz::Range;
use serde_json::Value;

use super::{Figures, Ranged};
use crate::input_error::InputError;

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
    eval: &dyn Fn(&[OsString]) -> Result<Figures, InputError>,
) -> Result<Vec<(String, Bounded)>, InputError> {
    let mut ranges = Vec::new();
    for f in &r.flags {
        let range =
            Range::new("range", f.spread.min as f32, f.spread.max as f32).map_err(|_| {
                InputError(format!(
                    "--{}: '{}' is outside the f32 range",
                    f.long, f.text
                ))
            })?;
        ranges.push(range);
    }
    let cache: RefCell<HashMap<Vec<u32>, Result<Figures, InputError>>> = RefCell::default();
    let at = |p: &[f32]| -> Result<Figures, InputError> {
        let key: Vec<u32> = p.iter().map(|x| x.to_bits()).collect();
        if let Some(hit) = cache.borrow().get(&key) {
            return hit.clone();
        }
        let got =
            eval(&r.args_at(p)).map_err(|e| InputError(format!("{e} (at {})", r.corner_text(p))));
        cache.borrow_mut().insert(key, got.clone());
        got
    };
    let first: Vec<f32> = ranges.iter().map(Range::min).collect();
    let keys = at(&first)?;
    let failure: RefCell<Option<InputError>> = RefCell::default();
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
                        InputError(format!(
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
                    .unwrap_or_else(|| InputError(format!("{key}: {e}"))));
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
