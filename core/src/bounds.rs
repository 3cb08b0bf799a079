//! Worst-case evaluation over parameter ranges: every figure as `min ..= max`, each with the
//! corner (the parameter values) that produced it.
//!
//! # Method: corners plus interior extrema
//!
//! A figure is evaluated on a grid over every parameter range that includes all the corners
//! (five levels per parameter for up to four parameters, three beyond). The grid points with the
//! smallest and the largest value are then refined, one parameter at a time, by golden-section
//! search within the neighbouring grid cells, twice over all parameters. So:
//!
//! - a figure that is monotonic in each parameter gets its exact bounds from the corners (the
//!   refinement cannot move away from a corner that is already the extreme);
//! - a figure with an interior extremum (a ripple that peaks at an interior duty, a pull-in time
//!   against resistance) gets it located to the golden-section tolerance, provided the extremum
//!   is not narrower than a grid cell. Tests in this file show both cases.
//!
//! If the figure cannot be evaluated at some point (for example a coil that never pulls in at
//! the hot, low-supply corner), the evaluation returns that point's error: a worst case that
//! does not exist is an error, not a bound.

use crate::coil::{Coil, CoilParams};
use crate::error::{Error, finite};

/// A closed parameter range `min ..= max`.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Range {
    min: f32,
    max: f32,
}

impl Range {
    /// The range `min ..= max`.
    ///
    /// # Errors
    ///
    /// Either end not finite, or `min > max` (reported as `param` out of range).
    pub fn new(param: &'static str, min: f32, max: f32) -> Result<Self, Error> {
        finite(param, min)?;
        finite(param, max)?;
        if min > max {
            return Err(Error::OutOfRange {
                param,
                value: min,
                min: f32::NEG_INFINITY,
                max,
            });
        }
        Ok(Self { min, max })
    }

    /// A single value.
    ///
    /// # Errors
    ///
    /// `value` not finite.
    pub fn exact(param: &'static str, value: f32) -> Result<Self, Error> {
        Self::new(param, value, value)
    }

    /// `nominal` with a relative tolerance: `nominal·(1 − tol) ..= nominal·(1 + tol)`.
    ///
    /// # Errors
    ///
    /// `nominal` not finite, `rel_tol` outside `0 ..= 0.99`.
    pub fn tolerance(param: &'static str, nominal: f32, rel_tol: f32) -> Result<Self, Error> {
        finite(param, nominal)?;
        crate::error::in_range("rel_tol", rel_tol, 0.0, 0.99)?;
        let a = nominal * (1.0 - rel_tol);
        let b = nominal * (1.0 + rel_tol);
        Self::new(param, a.min(b), a.max(b))
    }

    /// Lower end.
    #[must_use]
    pub const fn min(&self) -> f32 {
        self.min
    }

    /// Upper end.
    #[must_use]
    pub const fn max(&self) -> f32 {
        self.max
    }

    /// Midpoint.
    #[must_use]
    pub fn mid(&self) -> f32 {
        // The sum overflows near f32::MAX; the halves never do (and halving is exact there).
        let sum = self.min + self.max;
        if sum.is_finite() {
            0.5 * sum
        } else {
            0.5 * self.min + 0.5 * self.max
        }
    }

    fn at(&self, frac: f32) -> f32 {
        let span = self.max - self.min;
        if span.is_finite() {
            self.min + span * frac
        } else {
            // Ends of opposite sign near ±f32::MAX: the weighted sum cannot overflow.
            self.min * (1.0 - frac) + self.max * frac
        }
    }
}

/// The extremes of a figure with the points that produced them.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Bound<C> {
    /// Smallest value.
    pub min: f32,
    /// Largest value.
    pub max: f32,
    /// Where the smallest value occurs.
    pub min_at: C,
    /// Where the largest value occurs.
    pub max_at: C,
}

impl<C> Bound<C> {
    /// Maps both corners to another representation.
    pub fn map_corner<D>(self, mut f: impl FnMut(C) -> D) -> Bound<D> {
        Bound {
            min: self.min,
            max: self.max,
            min_at: f(self.min_at),
            max_at: f(self.max_at),
        }
    }
}

const GOLDEN: f32 = 0.618_034;

/// Evaluates `figure` over the box `ranges` by corners plus interior extrema (see the module
/// docs) and returns its bounds with the points where they occur.
///
/// # Errors
///
/// The first error `figure` returns at any evaluated point, or [`Error::NotFinite`] (param
/// `"figure"`) if it returns a non-finite value.
pub fn worst_case<const N: usize, F>(
    ranges: &[Range; N],
    figure: F,
) -> Result<Bound<[f32; N]>, Error>
where
    F: Fn(&[f32; N]) -> Result<f32, Error>,
{
    let eval = |p: &[f32; N]| -> Result<f32, Error> { finite("figure", figure(p)?) };
    let levels: usize = if N <= 4 { 5 } else { 3 };
    let mut total: usize = 1;
    for r in ranges {
        if r.min < r.max {
            total = total.saturating_mul(levels);
        }
    }
    let mut first = [0.0f32; N];
    for (p, r) in first.iter_mut().zip(ranges) {
        *p = r.min;
    }
    let v0 = eval(&first)?;
    let mut best = Bound {
        min: v0,
        max: v0,
        min_at: first,
        max_at: first,
    };
    for index in 0..total {
        let mut rest = index;
        let mut p = [0.0f32; N];
        for (x, r) in p.iter_mut().zip(ranges) {
            if r.min < r.max {
                let level = rest % levels;
                rest /= levels;
                *x = r.at(level as f32 / (levels - 1) as f32);
            } else {
                *x = r.min;
            }
        }
        let v = eval(&p)?;
        if v < best.min {
            best.min = v;
            best.min_at = p;
        }
        if v > best.max {
            best.max = v;
            best.max_at = p;
        }
    }
    // Refine each extreme along each axis within the neighbouring grid cells.
    for want_max in [false, true] {
        let sign = if want_max { -1.0f32 } else { 1.0 };
        let (mut point, mut value) = if want_max {
            (best.max_at, best.max)
        } else {
            (best.min_at, best.min)
        };
        for _round in 0..2 {
            for axis in 0..N {
                let r = ranges[axis];
                if r.min >= r.max {
                    continue;
                }
                let cell = (r.max - r.min) / (levels - 1) as f32;
                let mut lo = (point[axis] - cell).max(r.min);
                let mut hi = (point[axis] + cell).min(r.max);
                let mut probe = point;
                let mut at = |x: f32| -> Result<f32, Error> {
                    probe[axis] = x;
                    Ok(sign * eval(&probe)?)
                };
                let mut x1 = hi - GOLDEN * (hi - lo);
                let mut x2 = lo + GOLDEN * (hi - lo);
                let mut f1 = at(x1)?;
                let mut f2 = at(x2)?;
                for _ in 0..40 {
                    if f1 <= f2 {
                        hi = x2;
                        x2 = x1;
                        f2 = f1;
                        x1 = hi - GOLDEN * (hi - lo);
                        f1 = at(x1)?;
                    } else {
                        lo = x1;
                        x1 = x2;
                        f1 = f2;
                        x2 = lo + GOLDEN * (hi - lo);
                        f2 = at(x2)?;
                    }
                }
                let (x, fx) = if f1 <= f2 { (x1, f1) } else { (x2, f2) };
                if fx < sign * value {
                    value = sign * fx;
                    point[axis] = x;
                }
            }
        }
        if want_max {
            best.max = value;
            best.max_at = point;
        } else {
            best.min = value;
            best.min_at = point;
        }
    }
    Ok(best)
}

/// One corner of a coil evaluation.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoilCorner {
    /// Supply voltage, V.
    pub supply_v: f32,
    /// Coil (winding) temperature, °C.
    pub temp_c: f32,
    /// Inductance, H.
    pub inductance_h: f32,
    /// Winding resistance at the reference temperature, Ω.
    pub resistance_ohm: f32,
}

/// A coil with its spreads: supply range, coil temperature range, and the part tolerances of
/// inductance and resistance (at the coil's reference temperature).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoilSpread {
    /// Nominal coil; its inductance and resistance are replaced by the ranges below.
    pub coil: CoilParams,
    /// Supply voltage range, V.
    pub supply_v: Range,
    /// Coil temperature range, °C.
    pub temp_c: Range,
    /// Inductance range, H.
    pub inductance_h: Range,
    /// Winding resistance range at the reference temperature, Ω.
    pub resistance_ohm: Range,
}

impl CoilSpread {
    /// A spread around `coil` with relative tolerances on inductance and resistance.
    ///
    /// # Errors
    ///
    /// Invalid coil, or tolerances outside `0 ..= 0.99`.
    pub fn new(
        coil: CoilParams,
        supply_v: Range,
        temp_c: Range,
        inductance_tol: f32,
        resistance_tol: f32,
    ) -> Result<Self, Error> {
        coil.validate()?;
        Ok(Self {
            coil,
            supply_v,
            temp_c,
            inductance_h: Range::tolerance("inductance_h", coil.inductance_h, inductance_tol)?,
            resistance_ohm: Range::tolerance(
                "resistance_ohm",
                coil.resistance_ohm,
                resistance_tol,
            )?,
        })
    }

    /// Bounds of any coil figure `f(coil, supply_v, temp_c)` over the spread.
    ///
    /// # Errors
    ///
    /// The first error of `f` or of the coil validation at any evaluated corner.
    pub fn figure<F>(&self, f: F) -> Result<Bound<CoilCorner>, Error>
    where
        F: Fn(&Coil, f32, f32) -> Result<f32, Error>,
    {
        let ranges = [
            self.supply_v,
            self.temp_c,
            self.inductance_h,
            self.resistance_ohm,
        ];
        let b = worst_case(&ranges, |p| {
            let coil = CoilParams {
                inductance_h: p[2],
                resistance_ohm: p[3],
                ..self.coil
            }
            .validate()?;
            f(&coil, p[0], p[1])
        })?;
        Ok(b.map_corner(|p| CoilCorner {
            supply_v: p[0],
            temp_c: p[1],
            inductance_h: p[2],
            resistance_ohm: p[3],
        }))
    }

    /// Steady current with the switch on, A.
    ///
    /// # Errors
    ///
    /// As [`CoilSpread::figure`].
    pub fn steady_current_a(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|c, v, t| c.steady_current_a(v, t))
    }

    /// On-state time constant, s.
    ///
    /// # Errors
    ///
    /// As [`CoilSpread::figure`].
    pub fn time_constant_s(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|c, _, t| c.time_constant_s(t))
    }

    /// Stored energy at the steady current, J.
    ///
    /// # Errors
    ///
    /// As [`CoilSpread::figure`].
    pub fn stored_energy_j(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|c, v, t| c.stored_energy_j(c.steady_current_a(v, t)?))
    }

    /// Electrical pull-in time to `pull_in_a`, s. Its maximum sits at the lowest supply and
    /// the hottest coil.
    ///
    /// # Errors
    ///
    /// [`Error::Unreachable`] when some corner never pulls in, with that corner's steady current.
    pub fn pull_in_time_s(&self, pull_in_a: f32) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|c, v, t| c.pull_in_time_s(v, t, pull_in_a))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;

    #[test]
    fn finds_interior_extremum() {
        let r = [
            Range::new("x", 0.0, 1.0).unwrap(),
            Range::new("y", -1.0, 1.0).unwrap(),
        ];
        // Peak at x = 0.37 (between grid levels), y = 0.0; minimum at a corner.
        let b = worst_case(&r, |p| {
            Ok(1.0 - (p[0] - 0.37) * (p[0] - 0.37) - p[1] * p[1])
        })
        .unwrap();
        assert!(isclose(b.max as f64, 1.0, 0.0, 1e-6));
        assert!((b.max_at[0] - 0.37).abs() < 1e-3, "{:?}", b.max_at);
        assert!(b.max_at[1].abs() < 1e-3);
        assert!(isclose(b.min as f64, 1.0 - 0.63 * 0.63 - 1.0, 1e-6, 0.0));
    }

    #[test]
    fn coil_corners_are_the_physical_ones() {
        // Demo relay (invented): 12 V ±10 %, -20..70 °C, L ±10 %, R ±5 %.
        let s = CoilSpread::new(
            CoilParams::new(0.3, 120.0),
            Range::tolerance("supply_v", 12.0, 0.1).unwrap(),
            Range::new("temp_c", -20.0, 70.0).unwrap(),
            0.1,
            0.05,
        )
        .unwrap();
        let i = s.steady_current_a().unwrap();
        assert_eq!(i.max_at.supply_v, s.supply_v.max());
        assert_eq!(i.max_at.temp_c, -20.0);
        assert!(isclose(i.max_at.resistance_ohm as f64, 114.0, 1e-6, 0.0));
        let expected_max = 13.2 / (114.0 * (1.0 + 0.00393 * (-40.0)));
        assert!(isclose(i.max as f64, expected_max, 1e-5, 0.0));
        let p = s.pull_in_time_s(0.060).unwrap();
        assert_eq!(p.max_at.supply_v, s.supply_v.min());
        assert_eq!(p.max_at.temp_c, 70.0);
        // 10.8 V at 70 °C with R +5 %: the steady current is 71.6 mA, below a 75 mA pull-in.
        let never = s.pull_in_time_s(0.075);
        assert!(matches!(never, Err(Error::Unreachable { .. })));
    }
}
