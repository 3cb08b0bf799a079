//! The coil current estimator (documented on [`EstimatorConfig`]).

use super::q::{ARMV6M, clamp_i64, mul_q16_round_small, mul_wide, q16_from_f32, q31_from_f32};
use crate::coil::Coil;
use crate::error::{Error, in_range, non_negative, positive};

/// Saturation limit of estimator currents, µA (2³⁰ µA ≈ 1073.7 A).
pub const CURRENT_LIMIT_UA: i32 = 1 << 30;

const LOOP_R_MIN_OHM: f32 = 0.05;
const LOOP_R_MAX_OHM: f32 = 50_000.0;
const STEP_RATIO_MIN: f32 = 1.0e-6;
const STEP_RATIO_MAX: f32 = 1.0e3;
const MV_PER_V: f32 = 1000.0;
/// `1/R` in A/V is `1000/R` in µA/mV.
const UA_PER_MV_PER_SIEMENS: f32 = 1000.0;

/// The freewheel (switch-off) path of the estimator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct OffPath {
    /// `1 − exp(−T·R_off/L)`, Q31.
    pub step_q31: i32,
    /// `1/R_off`, µA per mV, Q16.
    pub conductance_q16: i32,
    /// Constant voltage of the clamp opposing the current, mV.
    pub clamp_mv: i32,
    /// `true` for a clamp across the switch: the supply keeps driving the coil while off.
    pub supply_coupled: bool,
}

/// The raw coefficients of an [`EstimatorConfig`], for constants emitted by the host tool
/// ([`EstimatorConfig::from_raw`], [`EstimatorConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct EstimatorRaw {
    /// `1 − exp(−T·R_on/L)` of the on path, Q31 (`0 ..= 2³¹ − 1` from a plan).
    pub on_step_q31: i32,
    /// `1/R_on`, µA per mV, Q16.
    pub on_conductance_q16: i32,
    /// Voltage across the closed switch, mV.
    pub switch_drop_mv: i32,
    /// The freewheel path.
    pub off: OffPath,
}

/// Estimator coefficients for one coil, temperature and tick period (shared by channels): the
/// exact zero-order-hold update of the RL model, integer only.
///
/// # Algorithm
///
/// Over one tick of length `T` the applied voltage `u` is held constant, so the RL equation
/// `L di/dt = u − R i` integrates exactly to
///
/// ```text
/// i[k+1] = a·i[k] + (1 − a)·u[k]/R,      a = exp(−T·R/L)
///        = i[k] + c·(I_t − i[k]),        c = 1 − a,  I_t = u/R (the current the tick heads to)
/// ```
///
/// (closed form of the first-order step response; not forward Euler, which would use
/// `c = T·R/L` and run 2.26 % high after ten ticks at `T/τ = 0.06`).
///
/// - **On**: `u = V_supply − V_switch`, `R = R_on` (winding plus series resistances).
/// - **Off**: the current freewheels through the clamp: `u = k·V_supply − V_clamp` with
///   `k = 0` for a clamp across the coil (diode, diode plus zener, resistor plus diode) and
///   `k = 1` for a clamp across the switch; `R = R_off`. The diode blocks at zero: once the
///   update reaches zero or below, the current is zero and stays there while off.
///
/// # Fixed point
///
/// State: the current in microamps (`i32`) and the fraction below one microamp carried from the
/// last tick (`u32`, units of 2⁻³¹ µA). Carrying the fraction (error feedback) removes the dead
/// band a plain rounded IIR update has near its target (`0.5/c` µA, half an ampere at
/// `c = 10⁻⁶`); the remaining bias is below 1 µA.
///
/// Coefficients: `c` in Q31, the loop conductance `1/R` in Q16 µA per mV. One tick costs two
/// 32×32→64 multiplies, shifts and compares: no float, no division. The saturations are
/// decided on the top word of the product and the operands' signs, so no 64-bit compare is
/// needed; on Cortex-M0 (no 32×32→64 multiply) a voltage below 2¹⁶ mV (65.5 V) takes a target
/// from two 32-bit multiplies instead of four, exactly the same value. Measured by `lenz
/// cost`: 91.5 instructions per tick on Cortex-M0, 37.5 on Cortex-M3, 34.5 on Cortex-M4F.
///
/// # Ranges
///
/// Documented and checked by the plan constructor: loop resistance 0.05 Ω ..= 50 kΩ,
/// `T/τ` 10⁻⁶ ..= 1000. At run time the target and the state saturate at ±[`CURRENT_LIMIT_UA`]
/// (about ±1073 A) and supply readings below zero count as 0 V.
///
/// # Examples
///
/// ```
/// # use lenz::{CoilParams, kernel::{EstimatorConfig, EstimatorState}};
/// let coil = CoilParams::new(0.040, 24.0).validate()?;
/// let cfg = EstimatorConfig::new(&coil, 20.0, 100e-6)?;
/// let mut s = EstimatorState::new();
/// for _ in 0..10 {
///     cfg.update(&mut s, true, 12_000);
/// }
/// // 12 V step into 40 mH / 24 Ω: 0.225594182 A after 1 ms (closed form).
/// assert!((s.current_ua() - 225_594).abs() <= 30);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct EstimatorConfig {
    on_step_q31: i32,
    on_conductance_q16: i32,
    switch_drop_mv: i32,
    off: OffPath,
}

/// Per-channel estimator state: 8 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct EstimatorState {
    current_ua: i32,
    frac: u32,
}

impl EstimatorState {
    /// Zero current.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            current_ua: 0,
            frac: 0,
        }
    }

    /// Starts from a known current (for example a measured one), saturated to the estimator's
    /// range.
    #[must_use]
    pub const fn with_current_ua(current_ua: i32) -> Self {
        Self {
            current_ua: clamp_i64(current_ua as i64, 0, CURRENT_LIMIT_UA as i64) as i32,
            frac: 0,
        }
    }

    /// Estimated current, µA.
    #[must_use]
    pub const fn current_ua(&self) -> i32 {
        self.current_ua
    }

    /// Back to zero current (as [`EstimatorState::new`]).
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}

fn step_q31(tick_s: f32, r_ohm: f32, l_h: f32, param: &'static str) -> Result<i32, Error> {
    let x = tick_s * r_ohm / l_h;
    if in_range(param, x, STEP_RATIO_MIN, STEP_RATIO_MAX).is_err() {
        // Reported in seconds: the ticks this coil's time constant admits.
        let tau = l_h / r_ohm;
        return Err(Error::OutOfRange {
            param,
            value: tick_s,
            min: STEP_RATIO_MIN * tau,
            max: STEP_RATIO_MAX * tau,
        });
    }
    Ok(q31_from_f32(-libm::expm1f(-x)))
}

fn conductance_q16(r_ohm: f32, param: &'static str) -> Result<i32, Error> {
    in_range(param, r_ohm, LOOP_R_MIN_OHM, LOOP_R_MAX_OHM)?;
    Ok(q16_from_f32(UA_PER_MV_PER_SIEMENS / r_ohm))
}

fn volts_to_mv(param: &'static str, v: f32) -> Result<i32, Error> {
    let v = in_range(param, non_negative(param, v)?, 0.0, 2.0e6)?;
    Ok(libm::roundf(v * MV_PER_V) as i32)
}

impl EstimatorConfig {
    /// Coefficients for `coil` at `temp_c`, ticking every `tick_s` seconds, freewheeling
    /// through the coil's diode (drop `diode_drop_v`) when off.
    ///
    /// # Errors
    ///
    /// Bad temperature or tick, or a loop resistance or `tick/τ` outside the documented ranges
    /// ([*Ranges*](EstimatorConfig#ranges)), named as `loop_resistance_ohm` or `tick_s`.
    pub fn new(coil: &Coil, temp_c: f32, tick_s: f32) -> Result<Self, Error> {
        let diode_v = coil.params().diode_drop_v;
        Self::with_clamp(coil, temp_c, tick_s, 0.0, diode_v, false)
    }

    /// Coefficients with a general off path: `extra_off_resistance_ohm` in series with the
    /// winding while off (a resistor clamp), a constant `clamp_v` opposing the current, and
    /// `supply_coupled` for a clamp across the switch (the coil then sees `V_clamp − V_supply`).
    ///
    /// # Errors
    ///
    /// As [`EstimatorConfig::new`], plus a negative or non-finite resistance or clamp voltage.
    pub fn with_clamp(
        coil: &Coil,
        temp_c: f32,
        tick_s: f32,
        extra_off_resistance_ohm: f32,
        clamp_v: f32,
        supply_coupled: bool,
    ) -> Result<Self, Error> {
        let tick = positive("tick_s", tick_s)?;
        let extra = non_negative("extra_off_resistance_ohm", extra_off_resistance_ohm)?;
        let l = coil.inductance_h();
        let r_on = coil.on_loop_resistance_ohm(temp_c)?;
        let r_off = coil.off_loop_resistance_ohm(temp_c)? + extra;
        Ok(Self {
            on_step_q31: step_q31(tick, r_on, l, "tick_s")?,
            on_conductance_q16: conductance_q16(r_on, "loop_resistance_ohm")?,
            switch_drop_mv: volts_to_mv("switch_drop_v", coil.params().switch_drop_v)?,
            off: OffPath {
                step_q31: step_q31(tick, r_off, l, "tick_s")?,
                conductance_q16: conductance_q16(r_off, "loop_resistance_ohm")?,
                clamp_mv: volts_to_mv("clamp_v", clamp_v)?,
                supply_coupled,
            },
        })
    }

    /// Coefficients from raw fixed-point values (for constants emitted by the host tool).
    /// The caller is responsible for their validity; the update still cannot overflow or panic.
    #[must_use]
    pub const fn from_raw(raw: EstimatorRaw) -> Self {
        Self {
            on_step_q31: raw.on_step_q31,
            on_conductance_q16: raw.on_conductance_q16,
            switch_drop_mv: raw.switch_drop_mv,
            off: raw.off,
        }
    }

    /// The raw coefficients: `EstimatorConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> EstimatorRaw {
        EstimatorRaw {
            on_step_q31: self.on_step_q31,
            on_conductance_q16: self.on_conductance_q16,
            switch_drop_mv: self.switch_drop_mv,
            off: self.off,
        }
    }

    /// The off path.
    #[must_use]
    pub const fn off_path(&self) -> &OffPath {
        &self.off
    }

    /// `1 − a` of the on path, Q31.
    #[must_use]
    pub const fn on_step_q31(&self) -> i32 {
        self.on_step_q31
    }

    /// `1/R_on`, µA per mV, Q16.
    #[must_use]
    pub const fn on_conductance_q16(&self) -> i32 {
        self.on_conductance_q16
    }

    /// Switch drop, mV.
    #[must_use]
    pub const fn switch_drop_mv(&self) -> i32 {
        self.switch_drop_mv
    }

    /// Advances the estimate by one tick and returns the new estimate, µA.
    ///
    /// # Arguments
    ///
    /// - `switch_on`: the switch state held during the tick that ends now.
    /// - `supply_mv`: the measured (or nominal) supply during that tick, mV; negative readings
    ///   count as 0 V.
    ///
    /// # Returns
    ///
    /// The estimated current at the end of the tick, µA, in `0 ..= CURRENT_LIMIT_UA`.
    ///
    /// With coefficients from [`EstimatorConfig::new`] or [`EstimatorConfig::with_clamp`] (steps in
    /// `0 ..= 1` Q31) and a state made by this module, the result is the exact fixed-point update
    /// above ([*Algorithm*](EstimatorConfig#algorithm)). Raw coefficients outside those ranges (a
    /// negative step) give an unspecified result, still in range and without overflow or panic.
    #[inline]
    pub fn update(&self, state: &mut EstimatorState, switch_on: bool, supply_mv: i32) -> i32 {
        let supply = if supply_mv > 0 { supply_mv } else { 0 };
        if switch_on {
            let u = supply.saturating_sub(self.switch_drop_mv);
            let u = if u > 0 { u } else { 0 };
            let target = on_target_ua(u, self.on_conductance_q16);
            advance(state, self.on_step_q31, target)
        } else {
            self.off_from(state, supply)
        }
    }

    /// [`EstimatorConfig::update`] with the switch open (the off-timer's tick).
    #[inline(always)]
    pub(crate) fn update_off(&self, state: &mut EstimatorState, supply_mv: i32) -> i32 {
        let supply = if supply_mv > 0 { supply_mv } else { 0 };
        self.off_from(state, supply)
    }

    /// The off-path tick from a supply already clamped at zero.
    #[inline(always)]
    fn off_from(&self, state: &mut EstimatorState, supply: i32) -> i32 {
        let coupled = if self.off.supply_coupled { supply } else { 0 };
        let u = coupled.saturating_sub(self.off.clamp_mv);
        let target = off_target_ua(u, self.off.conductance_q16);
        advance(state, self.off.step_q31, target)
    }
}

/// One exact step `i += c·(I_t − i)` with the carried fraction, blocked at zero and saturated
/// at [`CURRENT_LIMIT_UA`]; returns the new current.
#[inline(always)]
fn advance(state: &mut EstimatorState, step_q31: i32, target_ua: i32) -> i32 {
    // A state made by this module lies in 0 ..= 2^30 and the target in ±2^30, so their
    // difference fits an i32 and the product with the Q31 step is one 32×32→64 multiply.
    let current = state.current_ua;
    let diff = target_ua.wrapping_sub(current);
    let acc = mul_wide(diff, step_q31) + state.frac as i64;
    // |diff·step| < 2^62 for a step in 0 ..= 1, so the whole part fits an i32, and the new
    // current lies between the old one and the target.
    let whole = (acc >> 31) as i32;
    // acc − whole·2^31: the low 31 bits, as acc is split with an arithmetic shift.
    let frac = (acc as u32) & 0x7FFF_FFFF;
    let i = current.wrapping_add(whole);
    let (i, frac) = if i > 0 {
        (
            if i < CURRENT_LIMIT_UA {
                i
            } else {
                CURRENT_LIMIT_UA
            },
            frac,
        )
    } else {
        // The switch or the freewheel diode blocks reverse current.
        (0, 0)
    };
    state.current_ua = i;
    state.frac = frac;
    i
}

/// `(u·g + 2^15) >> 16` (µA from mV and a Q16 conductance) saturated into `0 ..= 2^30`, for
/// `u ≥ 0`.
///
/// The rounded product `p = u·g + 2^15` is in range exactly when `p >> 46` is 0, which is the
/// top word of `p` shifted by 14: the top word alone decides, no 64-bit compare, and its sign
/// picks the bound otherwise (`p >> 16 = 2^30` itself lands on the upper bound). On ARMv6-M a
/// voltage below 2¹⁶ mV (65.5 V) takes [`mul_q16_round_small`] (two 32-bit multiplies) instead
/// of the four of [`mul_wide`]; both are exact.
#[inline(always)]
fn on_target_ua(u_mv: i32, g_q16: i32) -> i32 {
    if ARMV6M && u_mv < (1 << 16) {
        on_target_small(u_mv, g_q16)
    } else {
        on_target_wide(u_mv, g_q16)
    }
}

/// [`on_target_ua`] for `0 ≤ u < 2¹⁶` from [`mul_q16_round_small`].
#[inline(always)]
fn on_target_small(u_mv: i32, g_q16: i32) -> i32 {
    let t = mul_q16_round_small(u_mv, g_q16);
    if t < 0 {
        0
    } else if t < CURRENT_LIMIT_UA {
        t
    } else {
        CURRENT_LIMIT_UA
    }
}

/// [`on_target_ua`] from the wide product.
#[inline(always)]
fn on_target_wide(u_mv: i32, g_q16: i32) -> i32 {
    let p = mul_wide(u_mv, g_q16) + (1 << 15);
    let top = (p >> 32) as i32;
    if top >> 14 == 0 {
        (p >> 16) as i32
    } else if g_q16 < 0 {
        // Out of range means |u·g| ≥ 2⁴⁶ − 2¹⁵, so u > 0 and the sign is g's. (Testing g, not
        // p, keeps the compiler from forming the product a second time for a 64-bit compare.)
        0
    } else {
        CURRENT_LIMIT_UA
    }
}

/// As [`on_target_ua`] for any `u`, saturated into `−2^30 ..= 2^30` (in range when `p >> 46`
/// is 0 or −1).
#[inline(always)]
fn off_target_ua(u_mv: i32, g_q16: i32) -> i32 {
    if ARMV6M && (u_mv as u32).wrapping_add(0xFFFF) < 0x1_FFFF {
        off_target_small(u_mv, g_q16)
    } else {
        off_target_wide(u_mv, g_q16)
    }
}

/// [`off_target_ua`] for `|u| < 2¹⁶` from [`mul_q16_round_small`].
#[inline(always)]
fn off_target_small(u_mv: i32, g_q16: i32) -> i32 {
    let t = mul_q16_round_small(u_mv, g_q16);
    if t < -CURRENT_LIMIT_UA {
        -CURRENT_LIMIT_UA
    } else if t < CURRENT_LIMIT_UA {
        t
    } else {
        CURRENT_LIMIT_UA
    }
}

/// [`off_target_ua`] from the wide product.
#[inline(always)]
fn off_target_wide(u_mv: i32, g_q16: i32) -> i32 {
    let p = mul_wide(u_mv, g_q16) + (1 << 15);
    let top = (p >> 32) as i32;
    if ((top >> 14).wrapping_add(1) as u32) < 2 {
        (p >> 16) as i32
    } else if (u_mv ^ g_q16) < 0 {
        // Out of range means |u·g| ≥ 2⁴⁵, so the sign of p is the sign of u·g.
        -CURRENT_LIMIT_UA
    } else {
        CURRENT_LIMIT_UA
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::CoilParams;
    use proptest::prelude::*;

    fn reference_coil() -> Coil {
        CoilParams::new(0.040, 24.0).validate().unwrap()
    }

    /// The raw values carry every field, and `from_raw` is usable in a constant.
    #[test]
    fn raw_round_trip() {
        let cfg =
            EstimatorConfig::with_clamp(&reference_coil(), 60.0, 100e-6, 10.0, 24.7, true).unwrap();
        assert_eq!(EstimatorConfig::from_raw(cfg.raw()), cfg);
        const C: EstimatorConfig = EstimatorConfig::from_raw(EstimatorRaw {
            on_step_q31: 1,
            on_conductance_q16: 2,
            switch_drop_mv: 3,
            off: OffPath {
                step_q31: 4,
                conductance_q16: 5,
                clamp_mv: 6,
                supply_coupled: true,
            },
        });
        assert_eq!(
            (C.on_step_q31(), C.on_conductance_q16(), C.switch_drop_mv()),
            (1, 2, 3)
        );
        assert_eq!(C.off_path().clamp_mv, 6);
        let mut s = EstimatorState::with_current_ua(5);
        s.reset();
        assert_eq!(s, EstimatorState::new());
    }

    #[test]
    fn exact_not_euler() {
        // CHECKS C1.2 (computed: closed form, ODE difference 1e-13): 40 mH, 24 Ω, 12 V step,
        // Ts = 100 µs, after 10 exact steps i = 0.225594182 A; forward Euler gives 0.230692443 A.
        let cfg = EstimatorConfig::new(&reference_coil(), 20.0, 100e-6).unwrap();
        let mut s = EstimatorState::new();
        for _ in 0..10 {
            cfg.update(&mut s, true, 12_000);
        }
        assert!((s.current_ua() - 225_594).abs() <= 25, "{}", s.current_ua());
        assert!((s.current_ua() - 230_692).abs() > 4_000);
        // a = exp(-Ts/tau) = 0.9417645336 (CHECKS C1.2), as Q31 1 - a.
        let c = 1.0 - 0.9417645336f64;
        assert!((cfg.on_step_q31() as f64 / (1u64 << 31) as f64 - c).abs() < 1e-8);
    }

    #[test]
    fn no_dead_band_at_tiny_steps() {
        // T/tau = 1e-5: a plain rounded update would stall 50 mA short of the target.
        let coil = CoilParams::new(10.0, 10.0).validate().unwrap();
        let cfg = EstimatorConfig::new(&coil, 20.0, 10e-6).unwrap();
        let mut s = EstimatorState::new();
        // 20 time constants at 1e5 ticks per tau.
        for _ in 0..2_000_000 {
            cfg.update(&mut s, true, 10_000);
        }
        assert!(
            (s.current_ua() - 1_000_000).abs() <= 20,
            "{}",
            s.current_ua()
        );
    }

    #[test]
    fn off_state_stops_at_zero() {
        let coil = CoilParams::new(0.120, 32.0)
            .with_diode_drop_v(0.7)
            .validate()
            .unwrap();
        let cfg = EstimatorConfig::new(&coil, 20.0, 100e-6).unwrap();
        let mut s = EstimatorState::with_current_ua(750_000);
        let mut ticks = 0;
        while cfg.update(&mut s, false, 24_000) > 0 {
            ticks += 1;
            assert!(ticks < 1000);
        }
        // Freewheel with Vf = 0.7 V reaches zero after 13.3630432 ms (CHECKS C2.1, computed).
        assert!((133..=134).contains(&ticks), "{ticks}");
        for _ in 0..10 {
            assert_eq!(cfg.update(&mut s, false, 24_000), 0);
        }
    }

    #[test]
    fn rejects_out_of_range_coefficients() {
        let coil = reference_coil();
        assert_eq!(
            EstimatorConfig::new(&coil, 20.0, 0.0).unwrap_err().param(),
            "tick_s"
        );
        // tick/tau = 1e-8 is below the documented range.
        assert_eq!(
            EstimatorConfig::new(&coil, 20.0, 1.6e-11)
                .unwrap_err()
                .param(),
            "tick_s"
        );
        let tiny = CoilParams::new(0.01, 0.01).validate().unwrap();
        assert_eq!(
            EstimatorConfig::new(&tiny, 20.0, 1e-4).unwrap_err().param(),
            "loop_resistance_ohm"
        );
    }

    /// The update written out in 64-bit arithmetic with plain clamps (the reference form of
    /// the type docs: computed, exact integer arithmetic).
    fn wide_reference(
        c: &EstimatorConfig,
        s: &mut EstimatorState,
        on: bool,
        supply_mv: i32,
    ) -> i32 {
        let supply = supply_mv.max(0) as i64;
        let lim = CURRENT_LIMIT_UA as i64;
        let (step, target) = if on {
            let u = (supply - c.switch_drop_mv as i64).clamp(0, i32::MAX as i64);
            let t = (u * c.on_conductance_q16 as i64 + (1 << 15)) >> 16;
            (c.on_step_q31 as i64, t.clamp(0, lim))
        } else {
            let coupled = if c.off.supply_coupled { supply } else { 0 };
            let u = (coupled - c.off.clamp_mv as i64).clamp(i32::MIN as i64, i32::MAX as i64);
            let t = (u * c.off.conductance_q16 as i64 + (1 << 15)) >> 16;
            (c.off.step_q31 as i64, t.clamp(-lim, lim))
        };
        let acc = (target - s.current_ua as i64) * step + s.frac as i64;
        let whole = acc.div_euclid(1 << 31);
        let i = s.current_ua as i64 + whole;
        let (i, frac) = if i <= 0 {
            (0, 0)
        } else {
            (i.min(lim), acc.rem_euclid(1 << 31) as u32)
        };
        s.current_ua = i as i32;
        s.frac = frac;
        i as i32
    }

    /// The ARMv6-M target forms equal the wide ones (computed: exact integer identity, every
    /// voltage of the small range against edge and pseudo-random conductances).
    #[test]
    fn small_targets_equal_wide_targets() {
        let mut x = 0x2545_F491_4F6C_DD1Du64;
        let mut gs = std::vec![
            0,
            1,
            -1,
            2_048_000,
            i32::MAX,
            i32::MIN,
            0x4000_0000,
            -0x4000_0000
        ];
        for _ in 0..40 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            gs.push(x as i32);
            gs.push((x >> 40) as i32); // conductances of plan size
        }
        for &g in &gs {
            for u in -0xFFFF..=0xFFFF {
                if u >= 0 {
                    assert_eq!(on_target_small(u, g), on_target_wide(u, g), "{u} {g}");
                }
                assert_eq!(off_target_small(u, g), off_target_wide(u, g), "{u} {g}");
            }
        }
    }

    proptest! {
        #[test]
        fn update_equals_wide_reference(
            on_step in 0..=i32::MAX, g in any::<i32>(), drop in any::<i32>(),
            off_step in 0..=i32::MAX, g_off in any::<i32>(), clamp in any::<i32>(),
            coupled in any::<bool>(), start in any::<i32>(),
            seq in proptest::collection::vec((any::<bool>(), any::<i32>()), 1..50),
        ) {
            let cfg = EstimatorConfig::from_raw(EstimatorRaw {
                on_step_q31: on_step, on_conductance_q16: g, switch_drop_mv: drop,
                off: OffPath {
                    step_q31: off_step, conductance_q16: g_off, clamp_mv: clamp,
                    supply_coupled: coupled,
                },
            });
            let mut s = EstimatorState::with_current_ua(start);
            let mut r = s;
            for (on, v) in seq {
                prop_assert_eq!(cfg.update(&mut s, on, v), wide_reference(&cfg, &mut r, on, v));
                prop_assert_eq!(s, r);
            }
        }

        #[test]
        fn update_never_overflows(
            on_step in any::<i32>(), g in any::<i32>(), drop in any::<i32>(),
            off_step in any::<i32>(), g_off in any::<i32>(), clamp in any::<i32>(),
            coupled in any::<bool>(), start in any::<i32>(),
            seq in proptest::collection::vec((any::<bool>(), any::<i32>()), 1..50),
        ) {
            let cfg = EstimatorConfig::from_raw(EstimatorRaw {
                on_step_q31: on_step, on_conductance_q16: g, switch_drop_mv: drop,
                off: OffPath {
                    step_q31: off_step, conductance_q16: g_off, clamp_mv: clamp,
                    supply_coupled: coupled,
                },
            });
            let mut s = EstimatorState::with_current_ua(start);
            for (on, v) in seq {
                let i = cfg.update(&mut s, on, v);
                prop_assert!((0..=CURRENT_LIMIT_UA).contains(&i));
            }
        }
    }
}
