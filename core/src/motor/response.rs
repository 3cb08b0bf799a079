//! The exact second-order step response (module docs of [`super`]) and the peak currents of
//! start, reversal and short-circuit brake.

use super::Motor;
use super::params::{Dynamics, check_load, check_supply};
use crate::error::{Error, finite_result};

/// The largest current magnitude of a transient.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Peak {
    /// The current of largest magnitude, signed (positive is forward). Units: A.
    pub current_a: f32,
    /// When it occurs after the step; `None` when the current approaches its final value
    /// without overshoot (the peak is then that final value, the supremum). Units: s.
    pub time_s: Option<f32>,
}

impl Peak {
    /// `|current_a|`, A.
    #[must_use]
    pub fn magnitude_a(&self) -> f32 {
        libm::fabsf(self.current_a)
    }
}

/// A solution of `x'' + 2α·x' + ω₀²·x = 0` with `x(0) = x0`, `x'(0) = d0`, in the one form
/// for the three damping cases of the module docs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Mode2 {
    alpha: f64,
    w0sq: f64,
    /// `β² = α² − ω₀²`.
    disc: f64,
    /// `√|β²|`.
    root: f64,
    x0: f64,
    d0: f64,
}

/// `sinh(y)/y`, 1 at 0.
fn sinhc(y: f64) -> f64 {
    if y == 0.0 { 1.0 } else { libm::sinh(y) / y }
}

/// `sin(y)/y`, 1 at 0.
fn sinc(y: f64) -> f64 {
    if y == 0.0 { 1.0 } else { libm::sin(y) / y }
}

/// `atanh(x)/x`, 1 at 0 (|x| < 1).
fn atanhc(x: f64) -> f64 {
    if x == 0.0 { 1.0 } else { libm::atanh(x) / x }
}

/// `atan(x)/x`, 1 at 0.
fn atanc(x: f64) -> f64 {
    if x == 0.0 { 1.0 } else { libm::atan(x) / x }
}

impl Mode2 {
    pub fn new(alpha: f64, w0sq: f64, x0: f64, d0: f64) -> Self {
        let disc = alpha * alpha - w0sq;
        Self {
            alpha,
            w0sq,
            disc,
            root: libm::sqrt(libm::fabs(disc)),
            x0,
            d0,
        }
    }

    /// `(e^(−αt)·C(t), e^(−αt)·S(t))`.
    fn basis(&self, t: f64) -> (f64, f64) {
        let b = self.root;
        if self.disc > 0.0 {
            let y = b * t;
            if y <= 1.0 {
                let e = libm::exp(-self.alpha * t);
                (e * libm::cosh(y), e * t * sinhc(y))
            } else {
                // e^(s1 t), e^(s2 t) with the slow root in the cancellation-free form.
                let s1 = -self.w0sq / (self.alpha + b);
                let s2 = -(self.alpha + b);
                let (e1, e2) = (libm::exp(s1 * t), libm::exp(s2 * t));
                (0.5 * (e1 + e2), 0.5 * (e1 - e2) / b)
            }
        } else {
            let e = libm::exp(-self.alpha * t);
            let y = b * t;
            (e * libm::cos(y), e * t * sinc(y))
        }
    }

    /// `p = α·x'(0) + ω₀²·x(0)`.
    fn p(&self) -> f64 {
        self.alpha * self.d0 + self.w0sq * self.x0
    }

    /// `x(t)`.
    pub fn value(&self, t: f64) -> f64 {
        let (c, s) = self.basis(t);
        self.x0 * c + (self.d0 + self.alpha * self.x0) * s
    }

    /// `x'(t)`.
    pub fn slope(&self, t: f64) -> f64 {
        let (c, s) = self.basis(t);
        self.d0 * c - self.p() * s
    }

    /// `∫₀ᵗ x dt`, from integrating the equation once: `(x'(0) − x'(t) + 2α(x(0) − x(t)))/ω₀²`.
    #[cfg(test)]
    pub fn integral(&self, t: f64) -> f64 {
        (self.d0 - self.slope(t) + 2.0 * self.alpha * (self.x0 - self.value(t))) / self.w0sq
    }

    /// The first two times `t > 0` where `x'(t) = 0` (module docs), `None` where there is none.
    pub fn extrema(&self) -> [Option<f64>; 2] {
        let (d0, p) = (self.d0, self.p());
        if self.disc > 0.0 {
            // tanh(βt) = β·d0/p: one root when 0 < β·d0/p < 1.
            if p == 0.0 || d0 == 0.0 {
                return [None, None];
            }
            let ratio = d0 / p;
            let x = self.root * ratio;
            if ratio > 0.0 && x < 1.0 {
                [Some(ratio * atanhc(x)), None]
            } else {
                [None, None]
            }
        } else if self.disc == 0.0 {
            if p != 0.0 && d0 / p > 0.0 {
                [Some(d0 / p), None]
            } else {
                [None, None]
            }
        } else {
            if d0 == 0.0 && p == 0.0 {
                return [None, None];
            }
            let wd = self.root;
            // First θ = ω_d·t in (0, π] with tan θ = ω_d·d0/p.
            let t1 = if d0 > 0.0 && p > 0.0 {
                (d0 / p) * atanc(wd * d0 / p)
            } else {
                let phi = libm::atan2(wd * d0, p);
                let theta = if phi > 0.0 {
                    phi
                } else {
                    phi + core::f64::consts::PI
                };
                theta / wd
            };
            [Some(t1), Some(t1 + core::f64::consts::PI / wd)]
        }
    }
}

/// The transient of the current after a step of the applied voltage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Transient {
    /// Final (steady) current and speed.
    pub i_final: f64,
    pub w_final: f64,
    /// Current deviation from its final value.
    pub current: Mode2,
    /// Speed deviation from its final value.
    pub speed: Mode2,
}

impl Transient {
    /// The response of `d` from `(i0, w0)` to the voltage `v` with load torque `t` held.
    pub fn new(d: &Dynamics, v: f64, t: f64, i0: f64, w0: f64) -> Self {
        let (alpha, w0sq) = d.alpha_w0sq();
        let (i_f, w_f) = d.steady(v, t);
        Self {
            i_final: i_f,
            w_final: w_f,
            current: Mode2::new(alpha, w0sq, i0 - i_f, d.di_dt(v, i0, w0)),
            speed: Mode2::new(alpha, w0sq, w0 - w_f, d.dw_dt(t, i0, w0)),
        }
    }

    /// Current at `t`, A.
    pub fn current_at(&self, t: f64) -> f64 {
        self.i_final + self.current.value(t)
    }

    /// Speed at `t`, rad/s.
    pub fn speed_at(&self, t: f64) -> f64 {
        self.w_final + self.speed.value(t)
    }

    /// The largest current magnitude over `t ≥ 0` and when it occurs (`None`: the final value,
    /// approached).
    pub fn peak(&self) -> (f64, Option<f64>) {
        let mut best = (self.i_final, None);
        let mut consider = |i: f64, at: Option<f64>| {
            if libm::fabs(i) > libm::fabs(best.0) {
                best = (i, at);
            }
        };
        consider(self.current_at(0.0), Some(0.0));
        for t in self.current.extrema().into_iter().flatten() {
            consider(self.current_at(t), Some(t));
        }
        best
    }
}

fn peak_result(tr: &Transient) -> Result<Peak, Error> {
    let (i, at) = tr.peak();
    let current_a = finite_result("supply_v", i as f32)?;
    let time_s = match at {
        Some(t) => Some(finite_result("supply_v", t as f32)?),
        None => None,
    };
    Ok(Peak { current_a, time_s })
}

impl Motor {
    /// The transient from `(i0, w0)` after the applied voltage steps to `v` (checked inputs).
    pub(crate) fn transient(
        &self,
        temp_c: f32,
        v: f64,
        t: f64,
        i0: f64,
        w0: f64,
    ) -> Result<Transient, Error> {
        let d = self.dynamics(temp_c, true)?;
        Ok(Transient::new(&d, v, t, i0, w0))
    }

    /// The steady state at `supply_v` as the start of a reversal or a brake; errors when the
    /// motor stalls there.
    fn running(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
    ) -> Result<(f64, f64), Error> {
        let s = self.steady_state(supply_v, temp_c, load_torque_nm)?;
        Ok((f64::from(s.current_a), f64::from(s.speed_rad_s)))
    }

    /// Peak current of the start from standstill: `i = 0`, `ω = 0`, then `supply_v` applied
    /// with `load_torque_nm` held (exact second-order solution, module docs).
    ///
    /// # Errors
    ///
    /// Supply not positive or above the coil's [`crate::coil::SUPPLY_MAX_V`], load torque
    /// negative or not finite, temperature out of range, inertia not stated.
    ///
    /// # Examples
    ///
    /// ```
    /// # use lenz::motor::MotorParams;
    /// // Vent motor (invented): 12 V, 1.5 Ω, 2 mH, k 0.03, J 2e-5, b 1e-6, load 0.02 N·m.
    /// let m = MotorParams::new(2e-3, 1.5, 0.03)
    ///     .with_inertia_kg_m2(2e-5)
    ///     .with_friction_nm_s_per_rad(1e-6)
    ///     .validate()?;
    /// let p = m.start_peak(12.0, 20.0, 0.02)?;
    /// assert!((p.current_a - 7.3027).abs() < 1e-3); // below the 8 A stall current
    /// # Ok::<(), lenz::Error>(())
    /// ```
    pub fn start_peak(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
    ) -> Result<Peak, Error> {
        let v = check_supply(supply_v)?;
        let t = check_load(load_torque_nm)?;
        peak_result(&self.transient(temp_c, v, t, 0.0, 0.0)?)
    }

    /// Peak current magnitude of a reversal: from the steady state at `+supply_v` the bridge
    /// applies `−supply_v`, load torque held (the result's sign is negative: the new direction).
    ///
    /// # Errors
    ///
    /// As [`Motor::start_peak`], and [`Error::Unreachable`] when the load stalls the motor.
    pub fn reversal_peak(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
    ) -> Result<Peak, Error> {
        let (i0, w0) = self.running(supply_v, temp_c, load_torque_nm)?;
        let v = check_supply(supply_v)?;
        let t = check_load(load_torque_nm)?;
        peak_result(&self.transient(temp_c, -v, t, i0, w0)?)
    }

    /// Peak current of a short-circuit brake: from the steady state at `supply_v` the bridge
    /// shorts the winding (both low-side switches on, `0 V`), load torque held.
    ///
    /// # Errors
    ///
    /// As [`Motor::reversal_peak`].
    pub fn brake_peak(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
    ) -> Result<Peak, Error> {
        let (i0, w0) = self.running(supply_v, temp_c, load_torque_nm)?;
        let t = check_load(load_torque_nm)?;
        peak_result(&self.transient(temp_c, 0.0, t, i0, w0)?)
    }

    /// Peak current of a short-circuit brake from the state `(current_a, speed_rad_s)`, load
    /// torque held. A steady run at speed `ω` carries `(b·ω + T)/k`; a rotor coasting with its
    /// diodes blocked carries none. The response is linear in the initial current, so over a
    /// range of initial currents the largest peak is at one of its ends.
    ///
    /// # Errors
    ///
    /// `speed_rad_s` negative, not finite or above 10⁶ rad/s; `current_a` not finite or beyond
    /// ±[`crate::coil::CURRENT_MAX_A`]; load and temperature as [`Motor::start_peak`]; inertia
    /// not stated.
    pub fn brake_peak_from_state(
        &self,
        temp_c: f32,
        load_torque_nm: f32,
        current_a: f32,
        speed_rad_s: f32,
    ) -> Result<Peak, Error> {
        use crate::coil::CURRENT_MAX_A;
        use crate::error::in_range;
        let w = f64::from(in_range("speed_rad_s", speed_rad_s, 0.0, 1.0e6)?);
        let i0 = f64::from(in_range(
            "current_a",
            current_a,
            -CURRENT_MAX_A,
            CURRENT_MAX_A,
        )?);
        let t = check_load(load_torque_nm)?;
        let d = self.dynamics(temp_c, true)?;
        peak_result(&Transient::new(&d, 0.0, t, i0, w))
    }

    /// Current and speed `t_s` seconds after the applied voltage steps from the state
    /// `(i0_a, w0_rad_s)` to `applied_v` (which may be negative or zero), load torque held:
    /// `(current A, speed rad/s)`.
    ///
    /// # Errors
    ///
    /// Any argument not finite; `applied_v` beyond ±[`crate::coil::SUPPLY_MAX_V`], `t_s`
    /// negative or above [`crate::coil::TIME_MAX_S`]; load and temperature as
    /// [`Motor::start_peak`].
    pub fn state_after(
        &self,
        applied_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
        i0_a: f32,
        w0_rad_s: f32,
        t_s: f32,
    ) -> Result<(f32, f32), Error> {
        use crate::coil::{CURRENT_MAX_A, SUPPLY_MAX_V, TIME_MAX_S};
        use crate::error::in_range;
        let v = in_range("applied_v", applied_v, -SUPPLY_MAX_V, SUPPLY_MAX_V)?;
        let i0 = in_range("initial_current_a", i0_a, -CURRENT_MAX_A, CURRENT_MAX_A)?;
        let w0 = in_range("initial_speed_rad_s", w0_rad_s, -1.0e6, 1.0e6)?;
        let t = in_range("t_s", t_s, 0.0, TIME_MAX_S)?;
        let load = check_load(load_torque_nm)?;
        let tr = self.transient(temp_c, f64::from(v), load, f64::from(i0), f64::from(w0))?;
        let t = f64::from(t);
        Ok((
            finite_result("t_s", tr.current_at(t) as f32)?,
            finite_result("t_s", tr.speed_at(t) as f32)?,
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;

    /// The three damping cases against the textbook forms written with the roots.
    #[test]
    fn mode_matches_root_forms() {
        // Overdamped: roots -1 and -4 (α = 2.5, ω₀² = 4); x(0) = 1, x'(0) = 0:
        // x = (4 e^(-t) - e^(-4t))/3.
        let m = Mode2::new(2.5, 4.0, 1.0, 0.0);
        for t in [0.0f64, 0.1, 0.3, 1.0, 3.0] {
            let want = (4.0 * (-t).exp() - (-4.0 * t).exp()) / 3.0;
            assert!(isclose(m.value(t), want, 1e-14, 1e-16), "{t}");
        }
        // Critical: α = 2, ω₀² = 4: x = (1 + 2t) e^(-2t) for x(0) = 1, x'(0) = 0.
        let m = Mode2::new(2.0, 4.0, 1.0, 0.0);
        for t in [0.0f64, 0.2, 1.0] {
            let want = (1.0 + 2.0 * t) * (-2.0 * t).exp();
            assert!(isclose(m.value(t), want, 1e-14, 1e-16), "{t}");
        }
        // Underdamped: α = 1, ω₀² = 5 (ω_d = 2): x = e^(-t) sin(2t)/2 for x(0) = 0, x'(0) = 1,
        // extrema where tan(2t) = 2, i.e. t = atan(2)/2 and + π/2.
        let m = Mode2::new(1.0, 5.0, 0.0, 1.0);
        let t = 0.7f64;
        assert!(isclose(
            m.value(t),
            (-t).exp() * (2.0 * t).sin() / 2.0,
            1e-14,
            0.0
        ));
        let [a, b] = m.extrema();
        assert!(isclose(a.unwrap(), 2f64.atan() / 2.0, 1e-14, 0.0));
        assert!(isclose(
            b.unwrap(),
            2f64.atan() / 2.0 + core::f64::consts::FRAC_PI_2,
            1e-14,
            0.0
        ));
        // Integral of the same: ∫ e^(-t) sin(2t)/2 dt from 0 to t (closed form by parts).
        let want = 0.5 * (2.0 - (-t).exp() * ((2.0 * t).sin() + 2.0 * (2.0 * t).cos())) / 5.0;
        assert!(isclose(m.integral(t), want, 1e-13, 0.0));
    }

    #[test]
    fn near_critical_is_continuous() {
        // The extremum time and value move continuously through β = 0.
        let at = |w0sq: f64| {
            let m = Mode2::new(2.0, w0sq, -1.0, 3.0);
            let t = m.extrema()[0].unwrap();
            (t, m.value(t))
        };
        let (tc, vc) = at(4.0);
        for eps in [1e-9, 1e-6] {
            for w in [4.0 * (1.0 + eps), 4.0 * (1.0 - eps)] {
                let (t, v) = at(w);
                assert!(
                    isclose(t, tc, 1e-5, 0.0) && isclose(v, vc, 1e-5, 0.0),
                    "{w}"
                );
            }
        }
    }
}
