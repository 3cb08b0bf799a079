//! Thermal overload of coil and motor windings in the form of IEC 60255-149.
//!
//! # Model
//!
//! The winding is one thermal body with time constant `τ`. Its thermal state `θ` is the
//! temperature rise as a fraction of the rise at the trip level, so that a constant current
//! `I` settles at `θ∞ = (I/(k·I_B))²` (`I_B` the basic current, `k` the pickup factor; the
//! element trips at `θ = 1`, which a steady `k·I_B` just reaches):
//!
//! ```text
//! dθ/dt = ((I/(k I_B))² − θ) / τ
//! ```
//!
//! From a prior steady load `I_P` (`θ₀ = (I_P/(k I_B))²`) the time to `θ = 1` is
//!
//! ```text
//! t = τ · ln( (I² − I_P²) / (I² − (k I_B)²) )        (hot; I_P = 0: cold)
//! ```
//!
//! which is the IEC 60255-149:2013 operate characteristic (the cold curve is the `I_P = 0`
//! case). Above `k·I_B` it trips; at or below it never does. For large `I` the adiabatic
//! approximation `t ≈ τ (k I_B)²/I²` follows.
//!
//! The same ODE over a step `Δt` of constant current has the exact discrete update
//!
//! ```text
//! θ[n+1] = b·θ[n] + (1 − b)·(I/(k I_B))²,     b = exp(−Δt/τ)
//! ```
//!
//! which the thermal accumulator of the trip detector kernel uses in fixed point.
//!
//! # Numerics
//!
//! The log of a ratio near one is written `ln1p((1 − θ₀)/(θ∞ − 1))`, which keeps f32 digits
//! when `I ≫ k I_B`.

use crate::error::{Error, finite, in_range, non_negative, positive};

/// A thermal overload element (IEC 60255-149 form).
///
/// # Examples
///
/// ```
/// use lenz::trip::Thermal;
/// // τ 600 s, I_B 2.5 A, k 1.05: 5 A from cold trips after 193.47 s.
/// let th = Thermal::new(600.0, 1.05, 2.5)?;
/// assert!((th.trip_time_s(5.0, 0.0)? - 193.4676).abs() < 1e-2);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Thermal {
    time_constant_s: f32,
    pickup_factor: f32,
    base_current_a: f32,
}

impl Thermal {
    /// An element with thermal time constant `time_constant_s`, pickup factor `pickup_factor`
    /// (`k`, typically 1.05 to 1.2) and basic current `base_current_a` (`I_B`, the winding's
    /// rated continuous current).
    ///
    /// # Errors
    ///
    /// `time_constant_s` outside `1e-3 ..= 1e7` s, `pickup_factor` outside `0.1 ..= 10`,
    /// `base_current_a` not in `0 < I_B ≤ 1e5` A.
    pub fn new(
        time_constant_s: f32,
        pickup_factor: f32,
        base_current_a: f32,
    ) -> Result<Self, Error> {
        in_range("time_constant_s", time_constant_s, 1.0e-3, 1.0e7)?;
        in_range("pickup_factor", pickup_factor, 0.1, 10.0)?;
        positive("base_current_a", base_current_a)?;
        in_range("base_current_a", base_current_a, 0.0, 1.0e5)?;
        Ok(Self {
            time_constant_s,
            pickup_factor,
            base_current_a,
        })
    }

    /// Thermal time constant, s.
    #[must_use]
    pub const fn time_constant_s(&self) -> f32 {
        self.time_constant_s
    }

    /// The trip level `k·I_B`, A: the steady current that just reaches `θ = 1`.
    #[must_use]
    pub fn trip_level_a(&self) -> f32 {
        self.pickup_factor * self.base_current_a
    }

    /// Steady thermal state of a constant current: `(I/(k I_B))²`.
    ///
    /// # Errors
    ///
    /// `current_a` not finite, or so large that the state does not fit an `f32`
    /// ([`Error::OutOfRange`], the maximum being `k·I_B·√f32::MAX`).
    pub fn steady_state(&self, current_a: f32) -> Result<f32, Error> {
        let i = finite("current_a", current_a)?.abs();
        let x = i / self.trip_level_a();
        let theta = x * x;
        if theta.is_finite() {
            Ok(theta)
        } else {
            // √f32::MAX = 1.8446743e19 (2^64 within rounding).
            let max = self.trip_level_a() * 1.844_674_3e19;
            Err(Error::OutOfRange {
                param: "current_a",
                value: i,
                min: 0.0,
                max: if max.is_finite() { max } else { f32::MAX },
            })
        }
    }

    /// Trip time at a constant `current_a` after a long prior load `prior_a` (0 for a cold
    /// winding), s. Zero when the prior load alone is already at or above the trip level.
    ///
    /// # Errors
    ///
    /// Non-finite currents; at or below the trip level `k·I_B` the element never trips:
    /// [`Error::Unreachable`] with `param = "current_a"` and the trip level as limit.
    pub fn trip_time_s(&self, current_a: f32, prior_a: f32) -> Result<f32, Error> {
        let theta0 = self.steady_state(finite("prior_a", prior_a)?)?;
        self.trip_time_from_state_s(current_a, theta0)
    }

    /// Trip time at a constant `current_a` from thermal state `theta0` (see the module docs),
    /// s; zero if `theta0 ≥ 1`.
    ///
    /// # Errors
    ///
    /// As [`Thermal::trip_time_s`]; `theta0` negative or not finite.
    pub fn trip_time_from_state_s(&self, current_a: f32, theta0: f32) -> Result<f32, Error> {
        let i = finite("current_a", current_a)?.abs();
        let theta0 = non_negative("theta0", theta0)?;
        let level = self.trip_level_a();
        let x = i / level;
        let theta_inf = x * x;
        if !theta_inf.is_finite() || theta_inf <= 1.0 {
            return Err(Error::Unreachable {
                param: "current_a",
                target: i,
                limit: level,
            });
        }
        if theta0 >= 1.0 {
            return Ok(0.0);
        }
        let t = self.time_constant_s * libm::log1pf((1.0 - theta0) / (theta_inf - 1.0));
        crate::error::finite_result("current_a", t)
    }

    /// Thermal state after `t_s` at constant `current_a` from `theta0` (exact solution).
    ///
    /// # Errors
    ///
    /// Non-finite inputs, negative `t_s` or `theta0`.
    pub fn state_after(&self, theta0: f32, current_a: f32, t_s: f32) -> Result<f32, Error> {
        let theta0 = non_negative("theta0", theta0)?;
        let t = non_negative("t_s", t_s)?;
        let inf = self.steady_state(current_a)?;
        // θ₀ + (θ∞ − θ₀)(1 − e^(−t/τ)), with expm1 so that short steps keep their digits.
        let rise = -libm::expm1f(-t / self.time_constant_s);
        crate::error::finite_result("current_a", theta0 + (inf - theta0) * rise)
    }

    /// Adiabatic approximation of the trip time from cold, `τ (k I_B)²/I²`, s (good for
    /// `I ≫ k I_B`; it is always shorter than the exact time).
    ///
    /// # Errors
    ///
    /// `current_a` not finite or zero.
    pub fn adiabatic_trip_time_s(&self, current_a: f32) -> Result<f32, Error> {
        let i = positive("current_a", finite("current_a", current_a)?.abs())?;
        let x = self.trip_level_a() / i;
        crate::error::finite_result("current_a", self.time_constant_s * x * x)
    }

    /// The discrete decay factor `b = exp(−Δt/τ)` of a step `dt_s`.
    ///
    /// # Errors
    ///
    /// `dt_s` not positive.
    pub fn decay_factor(&self, dt_s: f32) -> Result<f32, Error> {
        let dt = positive("dt_s", dt_s)?;
        Ok(libm::expf(-dt / self.time_constant_s))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;
    use proptest::prelude::*;

    #[test]
    fn never_trips_at_level_and_at_once_when_hot() {
        let th = Thermal::new(600.0, 1.05, 2.5).unwrap();
        assert!(matches!(
            th.trip_time_s(2.625, 0.0),
            Err(Error::Unreachable { .. })
        ));
        assert_eq!(th.trip_time_s(5.0, 3.0).unwrap(), 0.0);
        assert!(th.adiabatic_trip_time_s(20.0).unwrap() < th.trip_time_s(20.0, 0.0).unwrap());
    }

    proptest! {
        #[test]
        fn agrees_with_f64(x in 1.02f64..50.0, p in 0.0f64..0.99) {
            let th = Thermal::new(600.0, 1.05, 2.5).unwrap();
            let lvl = 1.05f64 * 2.5;
            let (i, ip) = (x * lvl, p * lvl);
            let want = 600.0 * ((i * i - ip * ip) / (i * i - lvl * lvl)).ln();
            let got = th.trip_time_s(i as f32, ip as f32).unwrap() as f64;
            prop_assert!(isclose(got, want, 1e-4, 1e-4), "{got} vs {want}");
            // The state reaches one at the trip time.
            let s = th.state_after((p * p) as f32, i as f32, got as f32).unwrap();
            prop_assert!(isclose(s as f64, 1.0, 1e-4, 0.0));
        }

        #[test]
        fn no_panic_on_any_input(a in any::<f32>(), b in any::<f32>(), c in any::<f32>(),
                                 i in any::<f32>(), p in any::<f32>()) {
            if let Ok(th) = Thermal::new(a, b, c) {
                if let Ok(t) = th.trip_time_s(i, p) { prop_assert!(t.is_finite() && t >= 0.0); }
                let _ = th.trip_time_from_state_s(i, p);
                let _ = th.state_after(p, i, a);
                let _ = th.adiabatic_trip_time_s(i);
                let _ = th.decay_factor(p);
            }
        }
    }
}
