//! The coil model: an inductance in series with a copper winding whose resistance follows its
//! temperature, driven through a switch from a supply, with a freewheel diode across the coil.
//!
//! # Model
//!
//! ```text
//!  supply ──R_source──┬──────────────┐
//!                     │              │
//!                 freewheel        coil: L, R_w(T)
//!                 diode (V_f)        │
//!                     │              │
//!                     └──────────────┤
//!                                 switch (R_sw, V_sw) ── R_shunt ── ground
//! ```
//!
//! - **On** (switch closed): `L di/dt = (V_s − V_sw) − R_on i` with
//!   `R_on = R_w(T) + R_sw + R_source + R_shunt`. Step response
//!   `i(t) = I_∞ + (i₀ − I_∞) e^(−t/τ)`, `I_∞ = (V_s − V_sw)/R_on`, `τ = L/R_on`
//!   (first-order RL, every circuits textbook).
//! - **Off** (switch open, current freewheeling): `L di/dt = −V_f − R_w(T) i` until the current
//!   reaches zero, where the diode blocks.
//! - **Copper**: `R_w(T) = R_ref (1 + α₂₀ (T − 20 °C)) / (1 + α₂₀ (T_ref − 20 °C))` with
//!   `α₂₀ = 0.00393 /K` for annealed copper at 20 °C (IEC 60028:1925, International standard of
//!   resistance for copper). The coefficient is referred to 20 °C; a resistance given at another
//!   reference temperature is first referred back to 20 °C, which is what the formula does.
//!
//! Units are SI throughout: henry, ohm, volt, ampere, second, degree Celsius.
//!
//! # Numerics
//!
//! All routines use forms that keep f32 digits: `1 − e^(−x)` as `−expm1(−x)` and
//! `ln((I_∞ − i₀)/(I_∞ − i_x))` as `ln1p((i_x − i₀)/(I_∞ − i_x))`. Over the ranges documented on
//! each routine they agree with an f64 evaluation to 1e-4 relative (property tests in this file).

use crate::error::{Error, finite, in_range, non_negative, positive};

/// Temperature coefficient of resistance of annealed copper at 20 °C, per kelvin.
///
/// Source: IEC 60028:1925, International standard of resistance for copper (100 % IACS:
/// resistivity 1/58 Ω·mm²/m at 20 °C, α₂₀ = 0.00393 /K).
pub const COPPER_ALPHA20_PER_K: f32 = 0.00393;

/// Lowest coil temperature accepted by the routines, °C.
pub const TEMP_MIN_C: f32 = -200.0;
/// Highest coil temperature accepted by the routines, °C.
pub const TEMP_MAX_C: f32 = 400.0;

/// Largest inductance accepted, H.
pub const INDUCTANCE_MAX_H: f32 = 1.0e3;
/// Smallest inductance accepted, H.
pub const INDUCTANCE_MIN_H: f32 = 1.0e-9;
/// Largest winding resistance accepted, Ω.
pub const RESISTANCE_MAX_OHM: f32 = 1.0e6;
/// Smallest winding resistance accepted, Ω.
pub const RESISTANCE_MIN_OHM: f32 = 1.0e-6;
/// Largest supply voltage accepted, V.
pub const SUPPLY_MAX_V: f32 = 1.0e4;
/// Largest PWM frequency accepted, Hz.
pub const FREQUENCY_MAX_HZ: f32 = 1.0e8;
/// Largest time argument accepted, s.
pub const TIME_MAX_S: f32 = 1.0e6;
/// Largest coil current magnitude accepted (coil and switch-off plans), A.
pub const CURRENT_MAX_A: f32 = 1.0e5;

/// Description of a coil and its drive, before validation.
///
/// Build with [`CoilParams::new`] and the `with_*` setters, then call [`CoilParams::validate`]
/// to get a [`Coil`].
///
/// # Examples
///
/// ```
/// use lenz::coil::CoilParams;
/// // Demo valve (invented): 120 mH, 32 Ω at 20 °C, 0.7 V freewheel diode.
/// let coil = CoilParams::new(0.120, 32.0).with_diode_drop_v(0.7).validate()?;
/// assert!((coil.time_constant_s(20.0)? - 3.75e-3).abs() < 1e-8);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoilParams {
    /// Coil inductance. Units: H.
    pub inductance_h: f32,
    /// Winding resistance at `reference_temp_c`. Units: Ω.
    pub resistance_ohm: f32,
    /// Temperature at which `resistance_ohm` holds. Units: °C. Default 20.
    pub reference_temp_c: f32,
    /// Temperature coefficient of the winding referred to 20 °C. Units: 1/K.
    /// Default [`COPPER_ALPHA20_PER_K`].
    pub alpha20_per_k: f32,
    /// Switch on-resistance in the on loop. Units: Ω. Default 0.
    pub switch_resistance_ohm: f32,
    /// Supply source resistance in the on loop. Units: Ω. Default 0.
    pub source_resistance_ohm: f32,
    /// Shunt resistance in the on loop (low side, with the switch). Units: Ω. Default 0.
    pub shunt_resistance_ohm: f32,
    /// Constant voltage drop of the switch when on (saturation voltage). Units: V. Default 0.
    pub switch_drop_v: f32,
    /// Forward drop of the freewheel diode across the coil. Units: V. Default 0.
    pub diode_drop_v: f32,
}

impl CoilParams {
    /// A coil of `inductance_h` henry and `resistance_ohm` ohm at 20 °C, copper winding, ideal
    /// switch and diode, no series resistance.
    #[must_use]
    pub const fn new(inductance_h: f32, resistance_ohm: f32) -> Self {
        Self {
            inductance_h,
            resistance_ohm,
            reference_temp_c: 20.0,
            alpha20_per_k: COPPER_ALPHA20_PER_K,
            switch_resistance_ohm: 0.0,
            source_resistance_ohm: 0.0,
            shunt_resistance_ohm: 0.0,
            switch_drop_v: 0.0,
            diode_drop_v: 0.0,
        }
    }

    /// Sets the temperature at which the winding resistance was given, °C.
    #[must_use]
    pub const fn with_reference_temp_c(mut self, temp_c: f32) -> Self {
        self.reference_temp_c = temp_c;
        self
    }

    /// Sets the winding's temperature coefficient referred to 20 °C, 1/K.
    #[must_use]
    pub const fn with_alpha20_per_k(mut self, alpha: f32) -> Self {
        self.alpha20_per_k = alpha;
        self
    }

    /// Sets the switch on-resistance, Ω.
    #[must_use]
    pub const fn with_switch_resistance_ohm(mut self, r: f32) -> Self {
        self.switch_resistance_ohm = r;
        self
    }

    /// Sets the supply source resistance, Ω.
    #[must_use]
    pub const fn with_source_resistance_ohm(mut self, r: f32) -> Self {
        self.source_resistance_ohm = r;
        self
    }

    /// Sets the shunt resistance in the on loop, Ω.
    #[must_use]
    pub const fn with_shunt_resistance_ohm(mut self, r: f32) -> Self {
        self.shunt_resistance_ohm = r;
        self
    }

    /// Sets the switch's constant on-state drop, V.
    #[must_use]
    pub const fn with_switch_drop_v(mut self, v: f32) -> Self {
        self.switch_drop_v = v;
        self
    }

    /// Sets the freewheel diode's forward drop, V.
    #[must_use]
    pub const fn with_diode_drop_v(mut self, v: f32) -> Self {
        self.diode_drop_v = v;
        self
    }

    /// Checks every field and returns the validated coil.
    ///
    /// # Errors
    ///
    /// Names the first field that is not finite, not positive where it must be, negative, or
    /// outside its documented range.
    pub fn validate(&self) -> Result<Coil, Error> {
        in_range(
            "inductance_h",
            positive("inductance_h", self.inductance_h)?,
            INDUCTANCE_MIN_H,
            INDUCTANCE_MAX_H,
        )?;
        in_range(
            "resistance_ohm",
            positive("resistance_ohm", self.resistance_ohm)?,
            RESISTANCE_MIN_OHM,
            RESISTANCE_MAX_OHM,
        )?;
        in_range("alpha20_per_k", self.alpha20_per_k, 0.0, 0.01)?;
        let coil = Coil { p: *self };
        in_range(
            "reference_temp_c",
            self.reference_temp_c,
            coil.temp_min_c(),
            TEMP_MAX_C,
        )?;
        for (name, r) in [
            ("switch_resistance_ohm", self.switch_resistance_ohm),
            ("source_resistance_ohm", self.source_resistance_ohm),
            ("shunt_resistance_ohm", self.shunt_resistance_ohm),
        ] {
            in_range(name, non_negative(name, r)?, 0.0, RESISTANCE_MAX_OHM)?;
        }
        for (name, v) in [
            ("switch_drop_v", self.switch_drop_v),
            ("diode_drop_v", self.diode_drop_v),
        ] {
            in_range(name, non_negative(name, v)?, 0.0, SUPPLY_MAX_V)?;
        }
        Ok(coil)
    }
}

/// A validated coil and drive; see the [module docs](self) for the model.
///
/// Every routine takes the coil temperature explicitly, so one `Coil` serves every corner of a
/// worst-case evaluation.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Coil {
    p: CoilParams,
}

/// The periodic steady state of a coil under PWM with a freewheel diode.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct PwmSteadyState {
    /// Current at the end of the off interval (the minimum). Units: A.
    pub min_a: f32,
    /// Current at the end of the on interval (the maximum). Units: A.
    pub max_a: f32,
    /// Average current over one period. Units: A.
    pub mean_a: f32,
    /// `true` when the current never falls to zero (continuous conduction); `false` when the
    /// freewheel diode stops conducting during each off interval.
    pub continuous: bool,
}

impl PwmSteadyState {
    /// Peak-to-peak ripple, `max_a − min_a`. Units: A.
    #[must_use]
    pub fn ripple_a(&self) -> f32 {
        self.max_a - self.min_a
    }
}

impl Coil {
    /// The parameters this coil was validated from.
    #[must_use]
    pub const fn params(&self) -> &CoilParams {
        &self.p
    }

    /// Inductance, H.
    #[must_use]
    pub const fn inductance_h(&self) -> f32 {
        self.p.inductance_h
    }

    /// Lowest temperature the linear copper model accepts for this coil, °C: the larger of
    /// [`TEMP_MIN_C`] and the temperature where the winding would fall to 10 % of its 20 °C
    /// resistance.
    #[must_use]
    pub fn temp_min_c(&self) -> f32 {
        if self.p.alpha20_per_k > 0.0 {
            let t = 20.0 - 0.9 / self.p.alpha20_per_k;
            if t > TEMP_MIN_C { t } else { TEMP_MIN_C }
        } else {
            TEMP_MIN_C
        }
    }

    fn check_temp(&self, temp_c: f32) -> Result<f32, Error> {
        in_range("temp_c", temp_c, self.temp_min_c(), TEMP_MAX_C)
    }

    /// Winding resistance referred to 20 °C, Ω.
    #[must_use]
    pub fn resistance20_ohm(&self) -> f32 {
        self.p.resistance_ohm / (1.0 + self.p.alpha20_per_k * (self.p.reference_temp_c - 20.0))
    }

    /// Winding resistance at `temp_c`, Ω (IEC 60028 linear copper model, see module docs).
    ///
    /// # Errors
    ///
    /// `temp_c` not finite or outside `temp_min_c()..=TEMP_MAX_C`.
    pub fn resistance_ohm(&self, temp_c: f32) -> Result<f32, Error> {
        let t = self.check_temp(temp_c)?;
        Ok(self.resistance20_ohm() * (1.0 + self.p.alpha20_per_k * (t - 20.0)))
    }

    /// Resistance of the loop while the switch is on: winding at `temp_c` plus switch, source
    /// and shunt resistances, Ω.
    ///
    /// # Errors
    ///
    /// As [`Coil::resistance_ohm`].
    pub fn on_loop_resistance_ohm(&self, temp_c: f32) -> Result<f32, Error> {
        Ok(self.resistance_ohm(temp_c)? + self.series_resistance_ohm())
    }

    /// Switch, source and shunt resistance together (everything in the on loop but the
    /// winding), Ω.
    #[must_use]
    pub fn series_resistance_ohm(&self) -> f32 {
        self.p.switch_resistance_ohm + self.p.source_resistance_ohm + self.p.shunt_resistance_ohm
    }

    /// Resistance of the freewheel loop (the winding alone; the diode sits across the coil), Ω.
    ///
    /// # Errors
    ///
    /// As [`Coil::resistance_ohm`].
    pub fn off_loop_resistance_ohm(&self, temp_c: f32) -> Result<f32, Error> {
        self.resistance_ohm(temp_c)
    }

    /// On-state time constant `τ = L / R_on` at `temp_c`, s.
    ///
    /// # Errors
    ///
    /// As [`Coil::resistance_ohm`].
    pub fn time_constant_s(&self, temp_c: f32) -> Result<f32, Error> {
        Ok(self.p.inductance_h / self.on_loop_resistance_ohm(temp_c)?)
    }

    /// Voltage across the coil loop while on: supply less the switch drop, never below zero
    /// (a switch with a forward drop conducts no current below it), V.
    ///
    /// # Errors
    ///
    /// `supply_v` not finite, negative, or above [`SUPPLY_MAX_V`].
    pub fn drive_voltage_v(&self, supply_v: f32) -> Result<f32, Error> {
        let v = in_range(
            "supply_v",
            non_negative("supply_v", supply_v)?,
            0.0,
            SUPPLY_MAX_V,
        )?;
        let u = v - self.p.switch_drop_v;
        Ok(if u > 0.0 { u } else { 0.0 })
    }

    /// Steady (final) current with the switch on, `I_∞ = (V_s − V_sw) / R_on`, A.
    ///
    /// # Errors
    ///
    /// As [`Coil::drive_voltage_v`] and [`Coil::resistance_ohm`].
    pub fn steady_current_a(&self, supply_v: f32, temp_c: f32) -> Result<f32, Error> {
        Ok(self.drive_voltage_v(supply_v)? / self.on_loop_resistance_ohm(temp_c)?)
    }

    /// Magnetic energy stored at `current_a`, `½ L i²`, J.
    ///
    /// # Errors
    ///
    /// `current_a` not finite or its magnitude above [`CURRENT_MAX_A`].
    pub fn stored_energy_j(&self, current_a: f32) -> Result<f32, Error> {
        let i = check_current("current_a", current_a)?;
        Ok(0.5 * self.p.inductance_h * i * i)
    }

    /// Current `t_s` seconds after the switch closes from an initial current `i0_a`:
    /// `i(t) = i₀ + (I_∞ − i₀)(1 − e^(−t/τ))`, A.
    ///
    /// # Errors
    ///
    /// Bad supply, temperature, initial current, or `t_s` negative or above [`TIME_MAX_S`].
    pub fn current_after_a(
        &self,
        supply_v: f32,
        temp_c: f32,
        i0_a: f32,
        t_s: f32,
    ) -> Result<f32, Error> {
        let i0 = check_current("initial_current_a", i0_a)?;
        let t = in_range("t_s", non_negative("t_s", t_s)?, 0.0, TIME_MAX_S)?;
        let i_inf = self.steady_current_a(supply_v, temp_c)?;
        let tau = self.time_constant_s(temp_c)?;
        Ok(i0 + (i_inf - i0) * -libm::expm1f(-t / tau))
    }

    /// Time for the current to go from `i0_a` to `target_a` with the switch on,
    /// `t = τ ln((I_∞ − i₀)/(I_∞ − i_x))`, s. Zero when the target equals the initial current.
    ///
    /// # Errors
    ///
    /// [`Error::Unreachable`] with the steady current as the limit when the current never
    /// reaches the target (the target lies at or beyond the steady current, or on the other
    /// side of the initial current); input errors as for [`Coil::current_after_a`].
    pub fn time_to_current_s(
        &self,
        supply_v: f32,
        temp_c: f32,
        i0_a: f32,
        target_a: f32,
    ) -> Result<f32, Error> {
        let i0 = check_current("initial_current_a", i0_a)?;
        let ix = check_current("target_current_a", target_a)?;
        let i_inf = self.steady_current_a(supply_v, temp_c)?;
        let tau = self.time_constant_s(temp_c)?;
        if ix == i0 {
            return Ok(0.0);
        }
        // The current moves monotonically from i0 towards i_inf and never reaches i_inf.
        let reachable = if i0 < i_inf {
            ix > i0 && ix < i_inf
        } else {
            ix < i0 && ix > i_inf
        };
        if !reachable {
            return Err(Error::Unreachable {
                param: "target_current_a",
                target: ix,
                limit: i_inf,
            });
        }
        let t = tau * libm::log1pf((ix - i0) / (i_inf - ix));
        crate::error::finite_result("target_current_a", t)
    }

    /// Electrical pull-in delay: time from zero current to the pull-in current `pull_in_a`,
    /// s. The armature's motion and the change of inductance it causes are not modelled.
    ///
    /// # Errors
    ///
    /// As [`Coil::time_to_current_s`]: a coil whose steady current stays at or below the pull-in
    /// current never pulls in, and the error reports the steady current.
    pub fn pull_in_time_s(&self, supply_v: f32, temp_c: f32, pull_in_a: f32) -> Result<f32, Error> {
        positive("pull_in_current_a", pull_in_a)?;
        self.time_to_current_s(supply_v, temp_c, 0.0, pull_in_a)
    }

    /// Exact periodic steady state under PWM at `duty` (0..=1) and `frequency_hz`, with the
    /// freewheel diode carrying the current while the switch is off.
    ///
    /// Continuous conduction (closed form, not the small-ripple approximation):
    /// `i_max = (I_on(1 − a_on) + a_on I_off (1 − a_off)) / (1 − a_on a_off)`,
    /// `i_min = I_off + (i_max − I_off) a_off`, with `I_on = V/R_on`, `I_off = −V_f/R_w`,
    /// `a_on = e^(−D T/τ_on)`, `a_off = e^(−(1−D) T/τ_off)`. When that `i_min` would be negative
    /// the diode stops conducting: each period starts from zero, `i_max = I_on (1 − a_on)`,
    /// `i_min = 0`. The mean is the exact integral of the exponential segments over a period.
    ///
    /// # Errors
    ///
    /// `duty` outside 0..=1, `frequency_hz` not positive or above [`FREQUENCY_MAX_HZ`], and the
    /// supply and temperature errors of [`Coil::steady_current_a`].
    pub fn pwm_steady_state(
        &self,
        supply_v: f32,
        temp_c: f32,
        duty: f32,
        frequency_hz: f32,
    ) -> Result<PwmSteadyState, Error> {
        let d = in_range("duty", duty, 0.0, 1.0)?;
        let f = in_range(
            "frequency_hz",
            positive("frequency_hz", frequency_hz)?,
            0.0,
            FREQUENCY_MAX_HZ,
        )?;
        let period = 1.0 / f;
        let r_on = self.on_loop_resistance_ohm(temp_c)?;
        let r_off = self.off_loop_resistance_ohm(temp_c)?;
        let i_on = self.drive_voltage_v(supply_v)? / r_on;
        let i_off = -self.p.diode_drop_v / r_off;
        let l = self.p.inductance_h;
        let t_on = d * period;
        let t_off = (1.0 - d) * period;
        let x_on = t_on * r_on / l;
        let x_off = t_off * r_off / l;
        let c_on = -libm::expm1f(-x_on);
        let c_off = -libm::expm1f(-x_off);
        let a_on = libm::expf(-x_on);
        let a_off = libm::expf(-x_off);
        let den = -libm::expm1f(-(x_on + x_off));
        let tau_on = l / r_on;
        let tau_off = l / r_off;
        let ccm_max = if den > 0.0 {
            (i_on * c_on + a_on * i_off * c_off) / den
        } else {
            0.0
        };
        let ccm_min = i_off * c_off + ccm_max * a_off;
        // The charges below are written without the cancelling differences of the textbook
        // form (`I t + (i₀ − I) τ (1 − e^(−t/τ))` loses every digit when t ≪ τ): a segment
        // from `i₀` towards `I` carries `τ (i₀ c + I (x − c))` with `c = 1 − e^(−x)`, and
        // `x − c` comes from `ramp_excess` (series for small x).
        let state = if ccm_min >= 0.0 || i_off == 0.0 {
            // On segment from i_min, off segment from i_max.
            let q_on = tau_on * (ccm_min * c_on + i_on * ramp_excess(x_on));
            let q_off = tau_off * (ccm_max * c_off + i_off * ramp_excess(x_off));
            PwmSteadyState {
                min_a: ccm_min,
                max_a: ccm_max,
                mean_a: (q_on + q_off) * f,
                continuous: ccm_min > 0.0 || d >= 1.0,
            }
        } else {
            // The diode blocks before the period ends: every period starts at zero.
            let max = i_on * c_on;
            let q_on = tau_on * i_on * ramp_excess(x_on);
            // Off from `max` towards `I_off < 0` until zero, after `t₀ = τ ln(1 + u)` with
            // `u = max/|I_off|`: the charge is `τ |I_off| (u − ln(1 + u))`.
            let q_off = tau_off * -i_off * log_excess(max / -i_off);
            PwmSteadyState {
                min_a: 0.0,
                max_a: max,
                mean_a: (q_on + q_off) * f,
                continuous: false,
            }
        };
        for v in [state.min_a, state.max_a, state.mean_a] {
            crate::error::finite_result("frequency_hz", v)?;
        }
        Ok(state)
    }

    /// Winding temperature from a measured winding resistance (inverse of the copper model):
    /// `T = 20 + (R/R₂₀ − 1)/α₂₀`, °C.
    ///
    /// # Errors
    ///
    /// `resistance_ohm` not positive, `alpha20_per_k` zero (no temperature can be inferred), or
    /// a result outside the accepted temperature range, reported with the resistance range that
    /// maps into it.
    pub fn temperature_from_resistance_c(&self, resistance_ohm: f32) -> Result<f32, Error> {
        let r = positive("resistance_ohm", resistance_ohm)?;
        if self.p.alpha20_per_k <= 0.0 {
            return Err(Error::NotPositive {
                param: "alpha20_per_k",
            });
        }
        let r20 = self.resistance20_ohm();
        let t = 20.0 + (r / r20 - 1.0) / self.p.alpha20_per_k;
        if t.is_finite() && t >= self.temp_min_c() && t <= TEMP_MAX_C {
            Ok(t)
        } else {
            let r_min = self.resistance_ohm(self.temp_min_c())?;
            let r_max = self.resistance_ohm(TEMP_MAX_C)?;
            Err(Error::OutOfRange {
                param: "resistance_ohm",
                value: r,
                min: r_min,
                max: r_max,
            })
        }
    }

    /// Winding temperature from the steady current measured at a known supply voltage: the loop
    /// resistance is `(V_s − V_sw)/I`, the winding's is that less the series resistances, °C.
    ///
    /// # Errors
    ///
    /// `current_a` not positive, or so large that the winding resistance would be zero or
    /// negative (reported with the allowed current range), and the errors of
    /// [`Coil::temperature_from_resistance_c`].
    pub fn temperature_from_steady_current_c(
        &self,
        supply_v: f32,
        current_a: f32,
    ) -> Result<f32, Error> {
        let i = positive("current_a", check_current("current_a", current_a)?)?;
        let u = self.drive_voltage_v(supply_v)?;
        if u <= 0.0 {
            return Err(Error::NotPositive { param: "supply_v" });
        }
        let r_w = u / i - self.series_resistance_ohm();
        if r_w > 0.0 {
            self.temperature_from_resistance_c(r_w)
        } else {
            Err(Error::OutOfRange {
                param: "current_a",
                value: i,
                min: 0.0,
                max: u / self.series_resistance_ohm(),
            })
        }
    }
}

fn check_current(param: &'static str, i: f32) -> Result<f32, Error> {
    in_range(param, finite(param, i)?, -CURRENT_MAX_A, CURRENT_MAX_A)
}

/// `x − (1 − e^(−x))` for `x ≥ 0` without cancellation: its Taylor series
/// `x²/2 − x³/6 + x⁴/24 − x⁵/120 + x⁶/720` below 0.1 (truncation below 5e-9 relative), the
/// direct form above (where the difference keeps at least 1/21 of `x`: about 1e-6 relative).
fn ramp_excess(x: f32) -> f32 {
    if x < 0.1 {
        let x2 = x * x;
        x2 * (0.5 - x * (1.0 / 6.0 - x * (1.0 / 24.0 - x * (1.0 / 120.0 - x * (1.0 / 720.0)))))
    } else {
        x + libm::expm1f(-x)
    }
}

/// `u − ln(1 + u)` for `u ≥ 0` without cancellation: its series
/// `u²/2 − u³/3 + u⁴/4 − … + u⁸/8` below 0.1 (truncation below 3e-8 relative), the direct form
/// above (where the difference keeps at least 1/22 of `u`: about 1e-6 relative).
fn log_excess(u: f32) -> f32 {
    if u < 0.1 {
        let u2 = u * u;
        u2 * (0.5
            - u * (1.0 / 3.0
                - u * (0.25 - u * (0.2 - u * (1.0 / 6.0 - u * (1.0 / 7.0 - u * 0.125))))))
    } else {
        u - libm::log1pf(u)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::{isclose, ref64};
    use proptest::prelude::*;

    fn demo_valve() -> Coil {
        CoilParams::new(0.120, 32.0)
            .with_diode_drop_v(0.7)
            .validate()
            .unwrap()
    }

    #[test]
    fn copper_reference_referral() {
        // CHECKS C1.4, computed from IEC 60028 (alpha20 = 0.00393 /K): a coil given as 24 ohm at
        // 25 °C is 17.98735 ohm at -40 °C; the wrong R25*(1 + a20*(T-25)) gives 17.8692.
        let c = CoilParams::new(0.1, 24.0)
            .with_reference_temp_c(25.0)
            .validate()
            .unwrap();
        assert!(isclose(
            c.resistance_ohm(-40.0).unwrap() as f64,
            17.98735,
            1e-6,
            0.0
        ));
        assert!(isclose(
            c.resistance_ohm(125.0).unwrap() as f64,
            33.25023,
            1e-6,
            0.0
        ));
    }

    #[test]
    fn unreachable_target_reports_steady_current() {
        let c = demo_valve();
        let e = c.time_to_current_s(24.0, 20.0, 0.0, 0.8).unwrap_err();
        assert_eq!(
            e,
            Error::Unreachable {
                param: "target_current_a",
                target: 0.8,
                limit: 0.75
            }
        );
        // Falling from above towards the steady current.
        let t = c.time_to_current_s(24.0, 20.0, 1.0, 0.8).unwrap();
        assert!(isclose(
            t as f64,
            3.75e-3 * (0.25f64 / 0.05).ln(),
            1e-5,
            0.0
        ));
    }

    #[test]
    fn series_resistance_in_on_loop_only() {
        let c = CoilParams::new(0.12, 32.0)
            .with_switch_resistance_ohm(0.5)
            .with_shunt_resistance_ohm(0.1)
            .validate()
            .unwrap();
        assert!(isclose(
            c.on_loop_resistance_ohm(20.0).unwrap() as f64,
            32.6,
            1e-6,
            0.0
        ));
        assert!(isclose(
            c.off_loop_resistance_ohm(20.0).unwrap() as f64,
            32.0,
            1e-6,
            0.0
        ));
        let t = c
            .temperature_from_steady_current_c(24.0, 24.0 / 32.6)
            .unwrap();
        assert!(isclose(t as f64, 20.0, 0.0, 1e-3));
    }

    #[test]
    fn pwm_short_period_keeps_its_digits() {
        // A draw that lost 4e-4 of the mean to cancellation (T/τ ≈ 1e-3, discontinuous):
        // mean 7.031932e-7 A where f64 gives 7.034899e-7 A.
        let (l, r, v, vf, d) = (
            0.524_356_37f32,
            890.5921f32,
            23.493_782f32,
            1.705_768_5f32,
            0.058_142_107f32,
        );
        let c = CoilParams::new(l, r)
            .with_diode_drop_v(vf)
            .validate()
            .unwrap();
        let f = 1.0 / (l / r * 10f32.powf(-2.971_183_8));
        let s = c.pwm_steady_state(v, 20.0, d, f).unwrap();
        let (min, max, mean) = ref64::pwm(
            v as f64, r as f64, r as f64, vf as f64, l as f64, d as f64, f as f64,
        );
        assert!(
            isclose(s.mean_a as f64, mean, 1e-5, 0.0),
            "mean {} vs {mean}",
            s.mean_a
        );
        assert!(
            isclose(s.max_a as f64, max, 1e-5, 0.0),
            "max {} vs {max}",
            s.max_a
        );
        assert_eq!((s.min_a, min), (0.0, 0.0));
    }

    #[test]
    fn pwm_dcm_starts_from_zero() {
        // Low duty and a large diode drop: the current falls to zero each period.
        let c = CoilParams::new(0.040, 24.0)
            .with_diode_drop_v(5.0)
            .validate()
            .unwrap();
        let s = c.pwm_steady_state(12.0, 20.0, 0.1, 500.0).unwrap();
        assert!(!s.continuous);
        assert_eq!(s.min_a, 0.0);
        let r = ref64::pwm(12.0, 24.0, 24.0, 5.0, 0.040, 0.1, 500.0);
        assert!(isclose(s.max_a as f64, r.1, 1e-5, 0.0));
        assert!(isclose(s.mean_a as f64, r.2, 1e-4, 0.0));
    }

    proptest! {
        // Documented range for the f32-vs-f64 agreement: L 10 uH..10 H, R 0.1..10 kOhm,
        // supply 1..100 V, temperature -40..150 °C, t up to 10 tau.
        #[test]
        fn step_response_matches_f64(
            l in 1e-5f32..10.0, r in 0.1f32..1e4, v in 1.0f32..100.0,
            temp in -40.0f32..150.0, frac in 0.0f32..10.0, i0_frac in 0.0f32..0.9,
        ) {
            let c = CoilParams::new(l, r).validate().unwrap();
            let r_t = ref64::copper(r as f64, 20.0, temp as f64);
            let tau = l as f64 / r_t;
            let i_inf = v as f64 / r_t;
            let i0 = i0_frac * (v / c.on_loop_resistance_ohm(temp).unwrap());
            let t = frac as f64 * tau;
            let got = c.current_after_a(v, temp, i0, t as f32).unwrap() as f64;
            let want = i_inf + (i0 as f64 - i_inf) * (-(t as f32 as f64) / tau).exp();
            prop_assert!(isclose(got, want, 1e-4, 0.0), "{got} vs {want}");
        }

        #[test]
        fn time_to_current_matches_f64(
            l in 1e-5f32..10.0, r in 0.1f32..1e4, v in 1.0f32..100.0,
            temp in -40.0f32..150.0, target_frac in 0.001f32..0.999,
        ) {
            let c = CoilParams::new(l, r).validate().unwrap();
            let i_inf = c.steady_current_a(v, temp).unwrap();
            let target = target_frac * i_inf;
            prop_assume!(target > 0.0 && target < i_inf);
            let got = c.time_to_current_s(v, temp, 0.0, target).unwrap() as f64;
            let r_t = ref64::copper(r as f64, 20.0, temp as f64);
            let want = (l as f64 / r_t) * ((v as f64 / r_t) / (v as f64 / r_t - target as f64)).ln();
            prop_assert!(isclose(got, want, 1e-4, 0.0), "{got} vs {want}");
        }

        // Range: duty 0.05..0.95, f such that T/tau 1e-3..10, diode 0..2 V, supply 5..60 V.
        #[test]
        fn pwm_matches_f64(
            l in 1e-3f32..1.0, r in 1.0f32..1e3, v in 5.0f32..60.0, vf in 0.0f32..2.0,
            d in 0.05f32..0.95, ratio_exp in -3.0f32..1.0,
        ) {
            let c = CoilParams::new(l, r).with_diode_drop_v(vf).validate().unwrap();
            let tau = l / r;
            let f = 1.0 / (tau * 10f32.powf(ratio_exp));
            prop_assume!(f <= FREQUENCY_MAX_HZ);
            let s = c.pwm_steady_state(v, 20.0, d, f).unwrap();
            let (min, max, mean) = ref64::pwm(v as f64, r as f64, r as f64, vf as f64, l as f64, d as f64, f as f64);
            let scale = max.abs().max(1e-12);
            prop_assert!(isclose(s.max_a as f64, max, 1e-4, 0.0), "max {} vs {max}", s.max_a);
            prop_assert!(isclose(s.min_a as f64, min, 1e-4, 1e-4 * scale), "min {} vs {min}", s.min_a);
            prop_assert!(isclose(s.mean_a as f64, mean, 1e-4, 1e-4 * scale), "mean {} vs {mean}", s.mean_a);
        }

        #[test]
        fn excess_forms_match_f64(x in 0.0f32..20.0) {
            let xd = x as f64;
            let want = xd + (-xd).exp_m1();
            prop_assert!(isclose(ramp_excess(x) as f64, want, 2e-6, 1e-30), "{x}");
            let want = xd - xd.ln_1p();
            prop_assert!(isclose(log_excess(x) as f64, want, 2e-6, 1e-30), "{x}");
        }

        #[test]
        fn temperature_round_trip(temp in -40.0f32..200.0) {
            let c = demo_valve();
            let r = c.resistance_ohm(temp).unwrap();
            let back = c.temperature_from_resistance_c(r).unwrap();
            prop_assert!((back - temp).abs() < 0.01);
        }
    }
}
