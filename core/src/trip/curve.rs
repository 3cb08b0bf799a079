//! Inverse-time (IDMT) overcurrent curves: trip time at a constant current, the reset
//! characteristic, and trip time under a varying current by the integral form.
//!
//! # The curves
//!
//! With `M = I/I_s` the multiple of the pickup current `I_s` and `TMS` the time multiplier
//! (IEEE: time dial `TD`, used the same way):
//!
//! ```text
//! t(M) = TMS · ( k / (M^α − 1) + c )        for M > 1
//! ```
//!
//! | Name | k | α | c | reset `t_r` | Source |
//! |---|---|---|---|---|---|
//! | IEC standard inverse (type A) | 0.14 | 0.02 | 0 | — | IEC 60255-151:2009 |
//! | IEC very inverse (type B) | 13.5 | 1 | 0 | — | IEC 60255-151:2009 |
//! | IEC extremely inverse (type C) | 80 | 2 | 0 | — | IEC 60255-151:2009 |
//! | long-time inverse | 120 | 1 | 0 | — | relay practice, see below |
//! | IEEE moderately inverse (type D) | 0.0515 | 0.02 | 0.114 | 4.85 | IEEE Std C37.112-1996; IEC 60255-151:2009 |
//! | IEEE very inverse (type E) | 19.61 | 2 | 0.491 | 21.6 | IEEE Std C37.112-1996; IEC 60255-151:2009 |
//! | IEEE extremely inverse (type F) | 28.2 | 2 | 0.1217 | 29.1 | IEEE Std C37.112-1996; IEC 60255-151:2009 |
//!
//! The **long-time inverse** curve (k 120, α 1) is a relay-practice curve printed in the
//! manuals of many numerical relays beside the IEC curves; it is *not* one of the six curve
//! types A–F of IEC 60255-151. It suits slow overloads of windings.
//!
//! IEC curves have no additive term; the IEEE ones add `c` (C37.112's `B`), also scaled by the
//! multiplier.
//!
//! # Reset
//!
//! IEEE Std C37.112 gives an inverse reset below pickup, `t_r(M) = TD · t_r / (1 − M²)` for
//! `M < 1`: the integrating element runs back from full to zero in that time. For the IEC
//! curves IEC 60255-151 allows an instantaneous or a definite-time reset; this crate uses the
//! instantaneous reset (the integral returns to zero at once below pickup).
//!
//! # Varying current: the integral form
//!
//! An inverse-time element trips when `∫ dt / t(M(t)) = 1` (IEEE Std C37.112-1996, integral
//! equation). For a piecewise-constant current each segment of length `Δt` adds `Δt / t(M)`;
//! [`InverseTime::trip_time_profile_s`] sums these exactly and returns the time where the sum
//! reaches one. Below pickup an IEEE curve subtracts `Δt / t_r(M)` (never below zero); an IEC
//! curve resets to zero.
//!
//! # Definite-time minimum
//!
//! [`InverseTime::with_definite_min_s`] sets a floor `t_min`: the element never trips faster
//! than `t_min` at any current, `t = max(t(M), t_min)`.
//!
//! # Numerics
//!
//! `M^α − 1` is evaluated as `expm1(α ln M)`, which keeps f32 digits for `α = 0.02` near
//! pickup (`1.5^0.02 − 1 = 0.0081`: a plain power would lose four digits to the subtraction).

use crate::error::{Error, finite, in_range, non_negative, positive};

/// Largest pickup current accepted, A.
pub const PICKUP_MAX_A: f32 = 1.0e5;
/// Time multiplier range accepted.
pub const MULTIPLIER_MIN: f32 = 1.0e-3;
/// Largest time multiplier accepted.
pub const MULTIPLIER_MAX: f32 = 100.0;

/// One of the inverse-time curves (see the module docs for constants and sources).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Curve {
    /// IEC standard inverse, IEC 60255-151 type A.
    IecStandardInverse,
    /// IEC very inverse, IEC 60255-151 type B.
    IecVeryInverse,
    /// IEC extremely inverse, IEC 60255-151 type C.
    IecExtremelyInverse,
    /// Long-time inverse (k 120, α 1) of relay practice; not an IEC 60255-151 type.
    LongTimeInverse,
    /// IEEE moderately inverse, IEEE C37.112 / IEC 60255-151 type D.
    IeeeModeratelyInverse,
    /// IEEE very inverse, IEEE C37.112 / IEC 60255-151 type E.
    IeeeVeryInverse,
    /// IEEE extremely inverse, IEEE C37.112 / IEC 60255-151 type F.
    IeeeExtremelyInverse,
}

/// The constants of a curve: `t = TMS·(k/(M^α − 1) + c)`, reset `TMS·t_r/(1 − M²)`.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CurveConstants {
    /// `k` (IEEE: `A`), s.
    pub k_s: f32,
    /// Exponent `α` (IEEE: `p`).
    pub alpha: f32,
    /// Additive term `c` (IEEE: `B`), s; zero for the IEC curves.
    pub c_s: f32,
    /// Reset constant `t_r`, s, for curves with an inverse reset (IEEE); `None` resets at once.
    pub reset_s: Option<f32>,
}

impl Curve {
    /// All curves, in the order of the module table.
    pub const ALL: [Curve; 7] = [
        Curve::IecStandardInverse,
        Curve::IecVeryInverse,
        Curve::IecExtremelyInverse,
        Curve::LongTimeInverse,
        Curve::IeeeModeratelyInverse,
        Curve::IeeeVeryInverse,
        Curve::IeeeExtremelyInverse,
    ];

    /// The curve's constants.
    ///
    /// Sources: IEC 60255-151:2009 (types A–F), IEEE Std C37.112-1996 (D–F and their reset);
    /// the long-time inverse from relay practice (module docs).
    #[must_use]
    pub const fn constants(self) -> CurveConstants {
        let (k_s, alpha, c_s, reset_s) = match self {
            Curve::IecStandardInverse => (0.14, 0.02, 0.0, None),
            Curve::IecVeryInverse => (13.5, 1.0, 0.0, None),
            Curve::IecExtremelyInverse => (80.0, 2.0, 0.0, None),
            Curve::LongTimeInverse => (120.0, 1.0, 0.0, None),
            Curve::IeeeModeratelyInverse => (0.0515, 0.02, 0.114, Some(4.85)),
            Curve::IeeeVeryInverse => (19.61, 2.0, 0.491, Some(21.6)),
            Curve::IeeeExtremelyInverse => (28.2, 2.0, 0.1217, Some(29.1)),
        };
        CurveConstants {
            k_s,
            alpha,
            c_s,
            reset_s,
        }
    }

    /// The short command-line name: `iec-si`, `iec-vi`, `iec-ei`, `iec-lti`, `ieee-mi`,
    /// `ieee-vi`, `ieee-ei`.
    #[must_use]
    pub const fn name(self) -> &'static str {
        match self {
            Curve::IecStandardInverse => "iec-si",
            Curve::IecVeryInverse => "iec-vi",
            Curve::IecExtremelyInverse => "iec-ei",
            Curve::LongTimeInverse => "iec-lti",
            Curve::IeeeModeratelyInverse => "ieee-mi",
            Curve::IeeeVeryInverse => "ieee-vi",
            Curve::IeeeExtremelyInverse => "ieee-ei",
        }
    }

    /// The curve with the given short name ([`Curve::name`]).
    #[must_use]
    pub fn from_name(name: &str) -> Option<Curve> {
        Curve::ALL.into_iter().find(|c| c.name() == name)
    }

    /// Trip time at multiple `m` with multiplier one, s, or `None` at or below pickup
    /// (`m ≤ 1`) or for a non-finite `m`.
    #[must_use]
    pub fn unit_time_s(self, m: f32) -> Option<f32> {
        if !m.is_finite() || m <= 1.0 {
            return None;
        }
        let c = self.constants();
        let denom = libm::expm1f(c.alpha * libm::logf(m));
        if denom.is_nan() || denom <= 0.0 {
            return None;
        }
        let t = c.k_s / denom + c.c_s;
        t.is_finite().then_some(t)
    }
}

/// An inverse-time overcurrent element: a curve with pickup, multiplier and optional
/// definite-time minimum.
///
/// # Examples
///
/// ```
/// use lenz::trip::{Curve, InverseTime};
/// // IEC very inverse, pickup 2.5 A, TMS 0.05, at 10 A: 0.05 · 13.5/(4 − 1) = 0.225 s.
/// let el = InverseTime::new(Curve::IecVeryInverse, 2.5, 0.05)?;
/// assert!((el.trip_time_s(10.0)? - 0.225).abs() < 1e-6);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct InverseTime {
    curve: Curve,
    pickup_a: f32,
    multiplier: f32,
    definite_min_s: f32,
}

/// A segment of a piecewise-constant current: `current_a` held for `duration_s`.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Segment {
    /// Length of the segment, s.
    pub duration_s: f32,
    /// Current during the segment, A (magnitude; negative values are taken as their size).
    pub current_a: f32,
}

impl InverseTime {
    /// An element on `curve` picking up above `pickup_a` with time multiplier `multiplier`.
    ///
    /// # Errors
    ///
    /// `pickup_a` not in `0 < I_s ≤ 1e5` A (`pickup_a`), `multiplier` outside
    /// `1e-3 ..= 100` (`multiplier`).
    pub fn new(curve: Curve, pickup_a: f32, multiplier: f32) -> Result<Self, Error> {
        positive("pickup_a", pickup_a)?;
        in_range("pickup_a", pickup_a, 0.0, PICKUP_MAX_A)?;
        in_range("multiplier", multiplier, MULTIPLIER_MIN, MULTIPLIER_MAX)?;
        Ok(Self {
            curve,
            pickup_a,
            multiplier,
            definite_min_s: 0.0,
        })
    }

    /// The same element with a definite-time minimum: it never trips faster than `t_min_s`.
    ///
    /// # Errors
    ///
    /// `t_min_s` negative or not finite, or above 1e6 s (`definite_min_s`).
    pub fn with_definite_min_s(mut self, t_min_s: f32) -> Result<Self, Error> {
        non_negative("definite_min_s", t_min_s)?;
        in_range("definite_min_s", t_min_s, 0.0, 1.0e6)?;
        self.definite_min_s = t_min_s;
        Ok(self)
    }

    /// The curve.
    #[must_use]
    pub const fn curve(&self) -> Curve {
        self.curve
    }

    /// Pickup current, A.
    #[must_use]
    pub const fn pickup_a(&self) -> f32 {
        self.pickup_a
    }

    /// Time multiplier (TMS or TD).
    #[must_use]
    pub const fn multiplier(&self) -> f32 {
        self.multiplier
    }

    /// Definite-time minimum, s (zero if none).
    #[must_use]
    pub const fn definite_min_s(&self) -> f32 {
        self.definite_min_s
    }

    /// Trip time at a constant `current_a`, s.
    ///
    /// # Errors
    ///
    /// `current_a` not finite ([`Error::NotFinite`]); at or below pickup the element never
    /// trips: [`Error::Unreachable`] with `param = "current_a"`, the current as target and
    /// the pickup as limit.
    pub fn trip_time_s(&self, current_a: f32) -> Result<f32, Error> {
        let i = finite("current_a", current_a)?.abs();
        let never = Error::Unreachable {
            param: "current_a",
            target: i,
            limit: self.pickup_a,
        };
        let m = i / self.pickup_a;
        let unit = self.curve.unit_time_s(m).ok_or(never)?;
        let t = (self.multiplier * unit).max(self.definite_min_s);
        if t.is_finite() { Ok(t) } else { Err(never) }
    }

    /// Reset time below pickup (IEEE curves): `TD · t_r / (1 − M²)`, s; `Some(0)` for a
    /// curve that resets at once; `None` at or above pickup.
    ///
    /// # Errors
    ///
    /// `current_a` not finite.
    pub fn reset_time_s(&self, current_a: f32) -> Result<Option<f32>, Error> {
        let i = finite("current_a", current_a)?.abs();
        let m = i / self.pickup_a;
        if m >= 1.0 {
            return Ok(None);
        }
        Ok(Some(match self.curve.constants().reset_s {
            Some(tr) => self.multiplier * tr / (1.0 - m * m),
            None => 0.0,
        }))
    }

    /// Rate of the integrating element at `current_a`, per second: `1/t` above pickup,
    /// `−1/t_r` below pickup for an inverse reset, and `None` for an instantaneous reset
    /// below pickup. Exactly at pickup the rate is zero.
    ///
    /// # Errors
    ///
    /// `current_a` not finite; a current so far above pickup that the rate does not fit an
    /// `f32` ([`Error::OutOfRange`] on `current_a`, the maximum being the largest current
    /// whose rate is finite).
    pub fn rate_per_s(&self, current_a: f32) -> Result<Option<f32>, Error> {
        let i = finite("current_a", current_a)?.abs();
        match self.trip_time_s(i) {
            Ok(t) => match 1.0 / t {
                r if r.is_finite() => Ok(Some(r)),
                _ => Err(Error::OutOfRange {
                    param: "current_a",
                    value: i,
                    min: 0.0,
                    max: self.rate_current_max_a(i),
                }),
            },
            Err(Error::Unreachable { .. }) => match self.reset_time_s(i)? {
                None => Ok(Some(0.0)),
                Some(tr) if tr > 0.0 => Ok(Some(-1.0 / tr)),
                Some(_) => Ok(None),
            },
            Err(e) => Err(e),
        }
    }

    /// The largest current below `beyond_a` (a current whose rate is not finite) whose rate is
    /// finite: bisection on the bit patterns of the positive floats between pickup (rate zero)
    /// and `beyond_a`, the trip time falling as the current rises.
    fn rate_current_max_a(&self, beyond_a: f32) -> f32 {
        let finite_rate = |i: f32| self.trip_time_s(i).is_ok_and(|t| (1.0 / t).is_finite());
        let (mut lo, mut hi) = (self.pickup_a.to_bits(), beyond_a.to_bits());
        while hi > lo.saturating_add(1) {
            let mid = lo + (hi - lo) / 2;
            if finite_rate(f32::from_bits(mid)) {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        f32::from_bits(lo)
    }

    /// Trip time under a piecewise-constant current by the integral form (module docs): the
    /// segments follow one another from time zero with the integral empty; the last segment
    /// is held indefinitely.
    ///
    /// # Errors
    ///
    /// An empty profile, a segment with a non-finite or negative duration, or a non-finite
    /// current (`profile`); [`Error::Unreachable`] (`param = "profile"`) when the last
    /// segment is at or below pickup and the integral has not reached one by its start.
    pub fn trip_time_profile_s(&self, profile: &[Segment]) -> Result<f32, Error> {
        let Some(last) = profile.last() else {
            return Err(Error::NotPositive { param: "profile" });
        };
        let mut t0 = 0.0f32;
        let mut acc = 0.0f32;
        for (n, seg) in profile.iter().enumerate() {
            let is_last = n + 1 == profile.len();
            non_negative("profile", seg.duration_s)?;
            let rate = self.rate_per_s(finite("profile", seg.current_a)?)?;
            match rate {
                None => acc = 0.0,
                Some(r) if r > 0.0 => {
                    let need = (1.0 - acc) / r;
                    if is_last || need <= seg.duration_s {
                        let t = t0 + need;
                        return if t.is_finite() {
                            Ok(t)
                        } else {
                            Err(Error::NotFinite { param: "profile" })
                        };
                    }
                    acc += r * seg.duration_s;
                }
                Some(r) => acc = (acc + r * seg.duration_s).max(0.0),
            }
            t0 += seg.duration_s;
        }
        Err(Error::Unreachable {
            param: "profile",
            target: last.current_a.abs(),
            limit: self.pickup_a,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;
    use proptest::prelude::*;

    fn ref_time(c: Curve, m: f64) -> f64 {
        let k = c.constants();
        k.k_s as f64 / (m.powf(k.alpha as f64) - 1.0) + k.c_s as f64
    }

    #[test]
    fn names_round_trip() {
        for c in Curve::ALL {
            assert_eq!(Curve::from_name(c.name()), Some(c));
        }
        assert_eq!(Curve::from_name("iec-xx"), None);
    }

    #[test]
    fn never_trips_at_or_below_pickup() {
        let el = InverseTime::new(Curve::IecStandardInverse, 2.0, 1.0).unwrap();
        assert!(matches!(
            el.trip_time_s(2.0),
            Err(Error::Unreachable {
                param: "current_a",
                ..
            })
        ));
        assert!(el.trip_time_s(1.0).is_err());
        assert!(el.trip_time_s(f32::NAN).is_err());
    }

    #[test]
    fn definite_minimum_floors_the_time() {
        let el = InverseTime::new(Curve::IecExtremelyInverse, 1.0, 1.0)
            .unwrap()
            .with_definite_min_s(0.5)
            .unwrap();
        assert_eq!(el.trip_time_s(20.0).unwrap(), 0.5);
        assert!(isclose(
            el.trip_time_s(3.0).unwrap() as f64,
            10.0,
            1e-6,
            0.0
        ));
    }

    #[test]
    fn profile_with_reset_between_pulses() {
        // IEEE VI, TD 1: 2x for 3.5 s is half the trip time (7.0277 s); 0.5x for 14.4 s
        // resets half of full (28.8 s full reset): back at zero; then 2x trips after 7.0277 s.
        let el = InverseTime::new(Curve::IeeeVeryInverse, 1.0, 1.0).unwrap();
        let t2 = el.trip_time_s(2.0).unwrap();
        let tr = el.reset_time_s(0.5).unwrap().unwrap();
        let p = [
            Segment {
                duration_s: t2 / 2.0,
                current_a: 2.0,
            },
            Segment {
                duration_s: tr / 2.0,
                current_a: 0.5,
            },
            Segment {
                duration_s: 1.0,
                current_a: 2.0,
            },
        ];
        let t = el.trip_time_profile_s(&p).unwrap();
        assert!(isclose(
            t as f64,
            (t2 / 2.0 + tr / 2.0 + t2) as f64,
            1e-5,
            0.0
        ));
        assert!(el.trip_time_profile_s(&[]).is_err());
    }

    proptest! {
        #[test]
        fn agrees_with_f64(ci in 0usize..7, m in 1.05f32..100.0, tms in 0.01f32..10.0) {
            let c = Curve::ALL[ci];
            let el = InverseTime::new(c, 1.0, tms).unwrap();
            let t = el.trip_time_s(m).unwrap() as f64;
            let want = tms as f64 * ref_time(c, m as f64);
            prop_assert!(isclose(t, want, 2e-5, 0.0), "{c:?} m {m}: {t} vs {want}");
        }

        #[test]
        fn no_panic_on_any_input(a in any::<f32>(), b in any::<f32>(), i in any::<f32>(),
                                 d in any::<f32>()) {
            for c in Curve::ALL {
                let _ = c.unit_time_s(i);
                if let Ok(el) = InverseTime::new(c, a, b) {
                    if let Ok(t) = el.trip_time_s(i) { prop_assert!(t.is_finite() && t >= 0.0); }
                    let _ = el.reset_time_s(i);
                    let _ = el.rate_per_s(i);
                    let _ = el.with_definite_min_s(d);
                    let p = [Segment { duration_s: d, current_a: i }];
                    if let Ok(t) = el.trip_time_profile_s(&p) { prop_assert!(t.is_finite()); }
                }
            }
        }
    }
}
