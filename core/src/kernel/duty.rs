//! Duty limiter for a boost stage: clamps the controller's duty request, every tick, to the
//! duty limits of the plan as functions of the measured input voltage, with a soft-start slew
//! limit and an immediate cut on output overvoltage.
//!
//! # Decisions, per tick, in this order
//!
//! 1. **Readings out of range** (fail safe): an input reading outside the planned window
//!    `vin_lo_counts ..= vin_hi_counts`, or an output reading outside
//!    `vout_lo_counts ..= vout_hi_counts` (a sense line shorted or open, an ADC at its rail),
//!    gives duty 0 and restarts the soft start.
//! 2. **Output overvoltage**: an output reading at or above `ov_trip_counts` cuts the duty to 0
//!    at once; switching resumes only when the reading has fallen to `ov_resume_counts` or
//!    below (hysteresis), and then from 0 through the soft start.
//! 3. **Duty limits**: the request (saturated to `0 ..= full_scale`) is clamped to the
//!    smallest of the saturation, gain-peak and light-load limits, each interpolated from its
//!    table at the measured input, and to the constant minimum-off-time limit.
//! 4. **Soft start**: the allowed duty rises by at most `slew_q8` (1/256 duty count) per tick
//!    above the last output; it may fall at once.
//! 5. **Minimum on time**: a duty below `min_on_counts` is output as 0 (the pulse is skipped);
//!    the soft-start ramp keeps rising underneath.
//!
//! # Tables and interpolation without division
//!
//! Each limit is stored at `N` = [`DUTY_TABLE_LEN`] input readings `vin_lo_counts + i·2^shift`, in
//! duty counts with 8 fractional bits (Q8). Between nodes the kernel interpolates linearly:
//! with `o = vin − vin_lo`, `i = o >> shift`, `f = o & (2^shift − 1)`,
//! `y = t[i] + ((t[i+1] − t[i])·f >> shift)`: one multiply and shifts, no division. The output
//! is the interpolated value rounded down to whole counts.
//!
//! The plan-side constructor makes the tables conservative: it evaluates the plan's limit at
//! the nodes and at interior points of every segment and lowers the nodes until the chord lies
//! at or below every evaluated point; node values are rounded down to 1/256 count. A limit
//! that a node does not have (no saturation current, no resistive loss, no light-load
//! condition) is stored as full scale. With part tolerances given (`inductance_tol`,
//! `resistance_tol`) each node holds the lowest limit over the four corners `L·(1 ± tol_L)`,
//! `R·(1 ± tol_R)`; every limit is monotonic in each of them, and a unit test checks the corners
//! against the general worst-case search of [`crate::bounds::worst_case`].
//!
//! Accuracy, measured at every reading of a 4 ..= 6 V window (1242 counts, 64 per segment,
//! full scale 1000 counts; the unit tests below): the table limit never lies above the plan's
//! limit and at most 0.083 counts below it (where the light-load limit has a kink at its
//! CCM/DCM change). The tick therefore returns at most the plan's limit and at least one count
//! below its floor.
//!
//! # Cost and state
//!
//! Three interpolations (three 32×32→64 multiplies), compares, shifts. State: 8 bytes per
//! channel (last duty in Q8, overvoltage latch).

use super::q::{clamp_i64, mul_wide};
use crate::boost::{BoostStage, LightLoad, OperatingPoint};
use crate::bounds::Range;
use crate::error::{Error, in_range, positive};

/// Number of nodes of each duty-limit table.
pub const DUTY_TABLE_LEN: usize = 32;

/// Interior points per table segment at which the constructor checks the chord.
const CHECKS_PER_SEGMENT: usize = 5;

/// Factor on the largest chord excess found at the checks (the checks include the segment
/// middle, where a locally quadratic excess peaks; the factor covers the rest).
const EXCESS_FACTOR: f64 = 1.25;

/// Absolute margin on every node, duty (covers the f32 rounding of the plan's limits).
const NODE_MARGIN: f64 = 1.0e-6;

/// The limit tables: saturation, gain peak, light-load overvoltage.
const LIMIT_TABLES: usize = 3;

/// What the plan-side constructor needs besides the stage.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyLimiterParams {
    /// Input voltage window; readings outside it give duty 0. Units: V.
    pub input_v: Range,
    /// Wanted output voltage. Units: V.
    pub output_v: f32,
    /// Heaviest load current (the saturation and gain-peak limits are lowest there). Units: A.
    pub max_load_current_a: f32,
    /// Light-load condition for the overvoltage limit; `None` for none.
    pub light_load: Option<LightLoad>,
    /// Input voltage per ADC count (divider and reference folded in). Units: V.
    pub input_v_per_count: f32,
    /// Output voltage per ADC count. Units: V.
    pub output_v_per_count: f32,
    /// Largest ADC reading; a reading there is taken as saturated (out of range).
    pub adc_max_counts: u16,
    /// Duty register value for duty 1 (the PWM timer period).
    pub duty_full_scale: u16,
    /// Time for the soft start to ramp from 0 to full scale; 0 for no slew limit. Units: s.
    pub soft_start_s: f32,
    /// Tick period of the limiter. Units: s.
    pub tick_s: f32,
    /// Output voltage at which switching is cut. Units: V.
    pub overvoltage_v: f32,
    /// Output voltage at or below which switching resumes after a cut. Units: V.
    pub resume_v: f32,
    /// Relative tolerance of the inductance, `0 ..= 0.99`: each table holds the lowest limit over
    /// the corners `L·(1 ± tol)`.
    pub inductance_tol: f32,
    /// Relative tolerance of the inductor and switch resistances together, `0 ..= 0.99`.
    pub resistance_tol: f32,
}

/// The raw coefficients of a [`DutyLimiterConfig`], for constants emitted by the host tool.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyLimiterRaw {
    /// Lowest valid input reading and first table node, counts.
    pub vin_lo_counts: u16,
    /// Highest valid input reading, counts.
    pub vin_hi_counts: u16,
    /// Node spacing `2^shift` counts (at most 16 is used).
    pub shift: u8,
    /// Saturation limit at the nodes, duty counts Q8.
    pub saturation_q8: [i32; DUTY_TABLE_LEN],
    /// Gain-peak limit at the nodes, duty counts Q8.
    pub gain_peak_q8: [i32; DUTY_TABLE_LEN],
    /// Light-load overvoltage limit at the nodes, duty counts Q8.
    pub light_load_q8: [i32; DUTY_TABLE_LEN],
    /// Minimum-off-time limit, duty counts Q8.
    pub min_off_q8: i32,
    /// Duties below this are output as 0, counts.
    pub min_on_counts: u16,
    /// Duty register value for duty 1.
    pub full_scale: u16,
    /// Soft-start rise per tick, duty counts Q8.
    pub slew_q8: i32,
    /// Lowest valid output reading, counts.
    pub vout_lo_counts: u16,
    /// Highest valid output reading, counts.
    pub vout_hi_counts: u16,
    /// Output reading that cuts switching, counts.
    pub ov_trip_counts: u16,
    /// Output reading at or below which switching resumes, counts.
    pub ov_resume_counts: u16,
}

/// Duty limiter coefficients (shared by channels).
///
/// Per tick, in this order: readings outside the planned input or output window give duty 0
/// (fail safe); an output at or above the overvoltage threshold cuts to 0 at once and switching
/// resumes only at or below the resume threshold; the request is clamped to the smallest of
/// the saturation, gain-peak and light-load limits (tables over the measured input, linear
/// interpolation by shifts, no division) and the minimum-off-time limit; the soft start lets the
/// duty rise by at most `slew_q8` per tick; a duty below the minimum on time is output as 0.
/// The tables are built conservatively from the plan: never above the plan's limit, at most
/// 0.083 counts below it in the unit tests' 4 ..= 6 V window.
///
/// # Examples
///
/// ```
/// # use lenz::{Range, boost::BoostStageParams, kernel::{DutyLimiterConfig, DutyLimiterParams, DutyLimiterState}};
/// // Heater rail (invented demo values), 12-bit ADCs, 1000-count PWM period, 10 kHz tick.
/// let stage = BoostStageParams::new(10e-6, 500e3)
///     .with_inductor_resistance_ohm(0.040)
///     .with_switch_resistance_ohm(0.025)
///     .with_diode_drop_v(0.35)
///     .with_saturation_current_a(2.0)
///     .with_min_off_time_s(100e-9)
///     .validate()?;
/// let cfg = DutyLimiterConfig::new(&stage, &DutyLimiterParams {
///     input_v: Range::new("input_v", 4.5, 5.5)?,
///     output_v: 12.0,
///     max_load_current_a: 0.5,
///     light_load: None,
///     input_v_per_count: 6.6 / 4096.0,
///     output_v_per_count: 16.5 / 4096.0,
///     adc_max_counts: 4095,
///     duty_full_scale: 1000,
///     soft_start_s: 10e-3,
///     tick_s: 100e-6,
///     overvoltage_v: 14.0,
///     resume_v: 13.0,
///     inductance_tol: 0.2,
///     resistance_tol: 0.3,
/// })?;
/// let mut s = DutyLimiterState::new();
/// let mut d = 0;
/// for _ in 0..200 {
///     d = cfg.update(&mut s, 1000, 3103, 2979); // full request, 5.0 V in, 12.0 V out
/// }
/// assert!(d > 0 && d <= cfg.limit_counts(3103));
/// assert_eq!(cfg.update(&mut s, 1000, 3103, 3500), 0); // 14.1 V: cut at once
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyLimiterConfig {
    r: DutyLimiterRaw,
}

/// Per-channel limiter state: 8 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyLimiterState {
    last_q8: i32,
    tripped: bool,
}

impl DutyLimiterState {
    /// Not switching, soft start from zero, no overvoltage latched.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            last_q8: 0,
            tripped: false,
        }
    }

    /// `true` while an overvoltage cut holds the duty at zero.
    #[must_use]
    pub const fn overvoltage(&self) -> bool {
        self.tripped
    }

    /// The last allowed duty before the minimum-on-time skip, counts Q8.
    #[must_use]
    pub const fn last_q8(&self) -> i32 {
        self.last_q8
    }

    /// Back to not switching, soft start from zero, no overvoltage latched (as
    /// [`DutyLimiterState::new`]).
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}

fn counts(param: &'static str, v: f32, v_per_count: f32, max: u16) -> Result<f32, Error> {
    let c = v / v_per_count;
    in_range(param, c, 0.0, max as f32)
}

impl DutyLimiterConfig {
    /// Builds the tables from the boost plan of `stage` (see the module docs).
    ///
    /// # Errors
    ///
    /// Bad parameters, named; the plan's errors at any table node; a window wider than the
    /// tables can span (`input_v`); overvoltage thresholds not inside the valid output window
    /// or not ordered (`resume_v < overvoltage_v`).
    pub fn new(stage: &BoostStage, p: &DutyLimiterParams) -> Result<Self, Error> {
        let vpc_in = positive("input_v_per_count", p.input_v_per_count)?;
        let vpc_out = positive("output_v_per_count", p.output_v_per_count)?;
        let fs = p.duty_full_scale;
        if fs == 0 {
            return Err(Error::NotPositive {
                param: "duty_full_scale",
            });
        }
        let adc_max = p.adc_max_counts;
        let lo = libm::ceilf(counts("input_v", p.input_v.min(), vpc_in, adc_max)?);
        let hi = libm::floorf(counts("input_v", p.input_v.max(), vpc_in, adc_max)?);
        if lo > hi {
            return Err(Error::OutOfRange {
                param: "input_v",
                value: p.input_v.max(),
                min: lo * vpc_in,
                max: f32::INFINITY,
            });
        }
        let (lo, hi) = (lo as u16, hi as u16);
        let span = u32::from(hi - lo);
        let mut shift = 0u8;
        while ((DUTY_TABLE_LEN as u32 - 1) << shift) < span {
            shift += 1;
        }
        let tick = positive("tick_s", p.tick_s)?;
        let soft = in_range("soft_start_s", p.soft_start_s, 0.0, 1.0e4)?;
        let fs_q8 = f64::from(fs) * 256.0;
        let slew_q8 = if soft > 0.0 {
            libm::round(fs_q8 * f64::from(tick) / f64::from(soft)).clamp(1.0, fs_q8) as i32
        } else {
            fs_q8 as i32
        };
        let ov = libm::floorf(counts("overvoltage_v", p.overvoltage_v, vpc_out, adc_max)?);
        let resume = libm::floorf(counts("resume_v", p.resume_v, vpc_out, adc_max)?);
        if resume >= ov {
            return Err(Error::OutOfRange {
                param: "resume_v",
                value: p.resume_v,
                min: 0.0,
                max: (ov - 1.0) * vpc_out,
            });
        }
        if ov > f32::from(adc_max) - 1.0 {
            return Err(Error::OutOfRange {
                param: "overvoltage_v",
                value: p.overvoltage_v,
                min: 0.0,
                max: (f32::from(adc_max) - 1.0) * vpc_out,
            });
        }
        // A boost output never lies below half the pass-through voltage while the input is
        // present: a lower reading is a broken sense line, not a low output.
        let pass_v = p.input_v.min() - stage.params().diode_drop_v;
        let vout_lo = libm::floorf((0.5 * pass_v / vpc_out).max(0.0)) as u16;

        // Tolerance corners: every limit falls monotonically with the inductance (more ripple:
        // saturation; smaller K: light load) or with the resistances (gain peak falls with
        // more loss, saturation and light load with less), so its lowest value over the box
        // sits at one of the four corners (checked against the general worst-case search in
        // the unit tests).
        let tl = in_range("inductance_tol", p.inductance_tol, 0.0, 0.99)?;
        let tr = in_range("resistance_tol", p.resistance_tol, 0.0, 0.99)?;
        let nominal = *stage.params();
        let mut corners = [nominal; 4];
        for (k, c) in corners.iter_mut().enumerate() {
            let lf = if k & 1 == 0 { 1.0 - tl } else { 1.0 + tl };
            let rf = if k & 2 == 0 { 1.0 - tr } else { 1.0 + tr };
            c.inductance_h = nominal.inductance_h * lf;
            c.inductor_resistance_ohm = nominal.inductor_resistance_ohm * rf;
            c.switch_resistance_ohm = nominal.switch_resistance_ohm * rf;
        }
        let n_corners = if tl == 0.0 && tr == 0.0 { 1 } else { 4 };
        let mut stages = [*stage; 4];
        for (st, c) in stages.iter_mut().zip(corners).take(n_corners) {
            *st = c.validate()?;
        }
        let limits_at = |counts_in: f64| -> Result<[f64; LIMIT_TABLES], Error> {
            let op = OperatingPoint {
                light_load: p.light_load,
                ..OperatingPoint::with_load_current(
                    (counts_in * f64::from(vpc_in)) as f32,
                    p.output_v,
                    p.max_load_current_a,
                )
            };
            let mut out = [1.0f64; LIMIT_TABLES];
            for st in stages.iter().take(n_corners) {
                let l = st.duty_limits(&op)?;
                for (o, v) in out.iter_mut().zip([
                    l.saturation.unwrap_or(1.0),
                    l.gain_peak.map_or(1.0, |g| g.duty),
                    l.light_load.unwrap_or(1.0),
                ]) {
                    *o = o.min(f64::from(v));
                }
            }
            Ok(out)
        };
        let step = f64::from(1u32 << shift);
        let mut nodes = [[0.0f64; DUTY_TABLE_LEN]; LIMIT_TABLES];
        for i in 0..DUTY_TABLE_LEN {
            let l = limits_at(f64::from(lo) + i as f64 * step)?;
            for (t, v) in nodes.iter_mut().zip(l) {
                t[i] = v;
            }
        }
        // Lower the nodes until every chord lies at or below the limit at the interior checks.
        let mut lowered = nodes;
        if shift > 0 {
            for seg in 0..DUTY_TABLE_LEN - 1 {
                let mut excess = [0.0f64; LIMIT_TABLES];
                for j in 1..=CHECKS_PER_SEGMENT {
                    let frac = j as f64 / (CHECKS_PER_SEGMENT + 1) as f64;
                    let c = f64::from(lo) + (seg as f64 + frac) * step;
                    let l = limits_at(c)?;
                    for k in 0..LIMIT_TABLES {
                        let chord = nodes[k][seg] + (nodes[k][seg + 1] - nodes[k][seg]) * frac;
                        excess[k] = excess[k].max(chord - l[k]);
                    }
                }
                for k in 0..LIMIT_TABLES {
                    let e = EXCESS_FACTOR * excess[k];
                    lowered[k][seg] = lowered[k][seg].min(nodes[k][seg] - e);
                    lowered[k][seg + 1] = lowered[k][seg + 1].min(nodes[k][seg + 1] - e);
                }
            }
        }
        let to_q8 = |d: f64| libm::floor((d - NODE_MARGIN).clamp(0.0, 1.0) * fs_q8) as i32;
        let table = |k: usize| {
            let mut t = [0i32; DUTY_TABLE_LEN];
            for (q, d) in t.iter_mut().zip(lowered[k]) {
                *q = to_q8(d);
            }
            t
        };
        let params = stage.params();
        let f_sw = f64::from(params.frequency_hz);
        let min_off = 1.0 - f64::from(params.min_off_time_s) * f_sw;
        let min_on = libm::ceil(f64::from(params.min_on_time_s) * f_sw * f64::from(fs));
        Ok(Self::from_raw(DutyLimiterRaw {
            vin_lo_counts: lo,
            vin_hi_counts: hi,
            shift,
            saturation_q8: table(0),
            gain_peak_q8: table(1),
            light_load_q8: table(2),
            min_off_q8: to_q8(min_off),
            min_on_counts: min_on.clamp(0.0, f64::from(fs)) as u16,
            full_scale: fs,
            slew_q8,
            vout_lo_counts: vout_lo,
            vout_hi_counts: adc_max - 1,
            ov_trip_counts: ov as u16,
            ov_resume_counts: resume as u16,
        }))
    }

    /// Coefficients from raw values (for constants emitted by the host tool). The caller is
    /// responsible for their meaning; the tick still cannot overflow or panic, and a table
    /// index outside the tables reads as limit 0.
    #[must_use]
    pub const fn from_raw(raw: DutyLimiterRaw) -> Self {
        Self { r: raw }
    }

    /// The raw coefficients: `DutyLimiterConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> DutyLimiterRaw {
        self.r
    }

    /// Lowest valid input reading and first table node, counts.
    #[must_use]
    pub const fn vin_lo_counts(&self) -> u16 {
        self.r.vin_lo_counts
    }

    /// Highest valid input reading, counts.
    #[must_use]
    pub const fn vin_hi_counts(&self) -> u16 {
        self.r.vin_hi_counts
    }

    /// Node spacing `2^shift` counts (at most 16 is used).
    #[must_use]
    pub const fn shift(&self) -> u8 {
        self.r.shift
    }

    /// Saturation limit at the nodes, duty counts Q8.
    #[must_use]
    pub const fn saturation_q8(&self) -> &[i32; DUTY_TABLE_LEN] {
        &self.r.saturation_q8
    }

    /// Gain-peak limit at the nodes, duty counts Q8.
    #[must_use]
    pub const fn gain_peak_q8(&self) -> &[i32; DUTY_TABLE_LEN] {
        &self.r.gain_peak_q8
    }

    /// Light-load overvoltage limit at the nodes, duty counts Q8.
    #[must_use]
    pub const fn light_load_q8(&self) -> &[i32; DUTY_TABLE_LEN] {
        &self.r.light_load_q8
    }

    /// Minimum-off-time limit, duty counts Q8.
    #[must_use]
    pub const fn min_off_q8(&self) -> i32 {
        self.r.min_off_q8
    }

    /// Duties below this are output as 0, counts.
    #[must_use]
    pub const fn min_on_counts(&self) -> u16 {
        self.r.min_on_counts
    }

    /// Duty register value for duty 1.
    #[must_use]
    pub const fn full_scale(&self) -> u16 {
        self.r.full_scale
    }

    /// Soft-start rise per tick, duty counts Q8.
    #[must_use]
    pub const fn slew_q8(&self) -> i32 {
        self.r.slew_q8
    }

    /// Lowest valid output reading, counts.
    #[must_use]
    pub const fn vout_lo_counts(&self) -> u16 {
        self.r.vout_lo_counts
    }

    /// Highest valid output reading, counts.
    #[must_use]
    pub const fn vout_hi_counts(&self) -> u16 {
        self.r.vout_hi_counts
    }

    /// Output reading that cuts switching, counts.
    #[must_use]
    pub const fn ov_trip_counts(&self) -> u16 {
        self.r.ov_trip_counts
    }

    /// Output reading at or below which switching resumes, counts.
    #[must_use]
    pub const fn ov_resume_counts(&self) -> u16 {
        self.r.ov_resume_counts
    }

    fn interp(&self, t: &[i32; DUTY_TABLE_LEN], off: u32) -> i64 {
        let shift = if self.r.shift > 16 { 16 } else { self.r.shift } as u32;
        let idx = (off >> shift) as usize;
        let frac = i64::from(off & ((1u32 << shift) - 1));
        let a = match t.get(idx) {
            Some(a) => i64::from(*a),
            None => return 0,
        };
        let b = match t.get(idx + 1) {
            Some(b) => i64::from(*b),
            None => a,
        };
        // frac < 2¹⁶: |(b − a)·frac| < 2⁴⁹. The difference fits an i32 for any table a plan
        // builds (duties in Q8), so the product is one `mul_wide` (no 64-bit library multiply
        // on Cortex-M0); raw tables at the extremes take the i64 product.
        let d = b - a;
        let prod = if d >= i32::MIN as i64 && d <= i32::MAX as i64 {
            mul_wide(d as i32, frac as i32)
        } else {
            d * frac
        };
        a + (prod >> shift)
    }

    /// The duty limit at input reading `vin_counts`, duty counts Q8 (0 outside the window).
    #[must_use]
    pub fn limit_q8(&self, vin_counts: u16) -> i32 {
        if vin_counts < self.r.vin_lo_counts || vin_counts > self.r.vin_hi_counts {
            return 0;
        }
        let off = u32::from(vin_counts - self.r.vin_lo_counts);
        // Written out rather than a loop over the three tables: the loop over an array of
        // references was left as an iterator call on the thumb targets.
        let mut lim = i64::from(self.r.min_off_q8);
        let sat = self.interp(&self.r.saturation_q8, off);
        if sat < lim {
            lim = sat;
        }
        let peak = self.interp(&self.r.gain_peak_q8, off);
        if peak < lim {
            lim = peak;
        }
        let light = self.interp(&self.r.light_load_q8, off);
        if light < lim {
            lim = light;
        }
        let fs_q8 = i64::from(self.r.full_scale) << 8;
        clamp_i64(lim, 0, fs_q8) as i32
    }

    /// The duty limit at input reading `vin_counts`, whole counts (rounded down).
    #[must_use]
    pub fn limit_counts(&self, vin_counts: u16) -> u16 {
        (self.limit_q8(vin_counts) >> 8) as u16
    }

    /// One tick: the allowed duty for `request` at the measured input and output.
    ///
    /// # Arguments
    ///
    /// - `request`: the controller's duty, counts (saturated to `0 ..= full_scale`).
    /// - `vin_counts`, `vout_counts`: the input and output ADC readings.
    ///
    /// # Returns
    ///
    /// The duty to apply, counts: 0 on out-of-range readings and during an overvoltage cut,
    /// otherwise at most the request, the limit at `vin_counts` and the soft-start ramp, and
    /// either 0 or at least `min_on_counts`.
    #[inline]
    pub fn update(
        &self,
        s: &mut DutyLimiterState,
        request: i32,
        vin_counts: u16,
        vout_counts: u16,
    ) -> u16 {
        let r = &self.r;
        if vin_counts < r.vin_lo_counts
            || vin_counts > r.vin_hi_counts
            || vout_counts < r.vout_lo_counts
            || vout_counts > r.vout_hi_counts
        {
            s.last_q8 = 0;
            return 0;
        }
        if s.tripped {
            if vout_counts > r.ov_resume_counts {
                s.last_q8 = 0;
                return 0;
            }
            s.tripped = false;
        }
        if vout_counts >= r.ov_trip_counts {
            s.tripped = true;
            s.last_q8 = 0;
            return 0;
        }
        let fs_q8 = i64::from(r.full_scale) << 8;
        let req_q8 = clamp_i64(i64::from(request), 0, i64::from(r.full_scale)) << 8;
        let ramp_q8 = i64::from(s.last_q8).saturating_add(i64::from(r.slew_q8));
        let mut out = i64::from(self.limit_q8(vin_counts));
        if ramp_q8 < out {
            out = ramp_q8;
        }
        if req_q8 < out {
            out = req_q8;
        }
        let out = clamp_i64(out, 0, fs_q8);
        s.last_q8 = out as i32;
        let whole = (out >> 8) as u16;
        if whole < r.min_on_counts { 0 } else { whole }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::boost::BoostStageParams;
    use proptest::prelude::*;
    extern crate std;
    use std::sync::OnceLock;

    const VPC_IN: f32 = 6.6 / 4096.0;
    const VPC_OUT: f32 = 24.75 / 4096.0;
    const FS: u16 = 1000;

    fn stage() -> BoostStage {
        // Heater rail of CHECKS section 3 with a 2 A inductor, 100 ns / 80 ns switch times.
        BoostStageParams::new(10e-6, 500e3)
            .with_inductor_resistance_ohm(0.040)
            .with_switch_resistance_ohm(0.025)
            .with_diode_drop_v(0.35)
            .with_saturation_current_a(2.0)
            .with_min_off_time_s(100e-9)
            .with_min_on_time_s(80e-9)
            .validate()
            .unwrap()
    }

    fn params() -> DutyLimiterParams {
        DutyLimiterParams {
            input_v: Range::new("input_v", 4.0, 6.0).unwrap(),
            output_v: 12.0,
            max_load_current_a: 0.5,
            light_load: Some(LightLoad {
                min_load_current_a: 0.05,
                max_output_v: 20.0,
            }),
            input_v_per_count: VPC_IN,
            output_v_per_count: VPC_OUT,
            adc_max_counts: 4095,
            duty_full_scale: FS,
            soft_start_s: 0.0,
            tick_s: 100e-6,
            overvoltage_v: 21.0,
            resume_v: 19.5,
            inductance_tol: 0.0,
            resistance_tol: 0.0,
        }
    }

    fn cfg() -> &'static DutyLimiterConfig {
        static CFG: OnceLock<DutyLimiterConfig> = OnceLock::new();
        CFG.get_or_init(|| DutyLimiterConfig::new(&stage(), &params()).unwrap())
    }

    /// The same limits with a 10 ms soft start at a 100 µs tick (10 counts per tick).
    fn cfg_soft() -> &'static DutyLimiterConfig {
        static CFG: OnceLock<DutyLimiterConfig> = OnceLock::new();
        CFG.get_or_init(|| {
            let mut p = params();
            p.soft_start_s = 10e-3;
            DutyLimiterConfig::new(&stage(), &p).unwrap()
        })
    }

    /// The plan's limit at a reading, in f64 duty (the reference the tables must follow).
    fn plan_limit(vin_counts: u16) -> f64 {
        let p = params();
        let op = OperatingPoint {
            light_load: p.light_load,
            ..OperatingPoint::with_load_current(
                (f64::from(vin_counts) * f64::from(VPC_IN)) as f32,
                p.output_v,
                p.max_load_current_a,
            )
        };
        f64::from(stage().duty_limits(&op).unwrap().duty_max)
    }

    fn mid_vout() -> u16 {
        (12.0 / VPC_OUT) as u16
    }

    /// The raw values carry every field, and the getters read them.
    #[test]
    fn raw_round_trip() {
        let c = cfg_soft();
        assert_eq!(DutyLimiterConfig::from_raw(c.raw()), *c);
        let r = c.raw();
        assert_eq!(
            (
                c.vin_lo_counts(),
                c.vin_hi_counts(),
                c.shift(),
                c.min_off_q8()
            ),
            (r.vin_lo_counts, r.vin_hi_counts, r.shift, r.min_off_q8)
        );
        assert_eq!(
            (c.saturation_q8(), c.gain_peak_q8(), c.light_load_q8()),
            (&r.saturation_q8, &r.gain_peak_q8, &r.light_load_q8)
        );
        assert_eq!(
            (
                c.min_on_counts(),
                c.full_scale(),
                c.slew_q8(),
                c.vout_lo_counts(),
                c.vout_hi_counts(),
                c.ov_trip_counts(),
                c.ov_resume_counts()
            ),
            (
                r.min_on_counts,
                r.full_scale,
                r.slew_q8,
                r.vout_lo_counts,
                r.vout_hi_counts,
                r.ov_trip_counts,
                r.ov_resume_counts
            )
        );
        let mut s = DutyLimiterState::new();
        c.update(&mut s, 500, 3103, mid_vout());
        s.reset();
        assert_eq!(s, DutyLimiterState::new());
    }

    #[test]
    fn every_reading_in_the_window_is_within_one_lsb_below_the_plan() {
        let c = cfg();
        let r = c.raw();
        let mut worst = 0.0f64;
        assert_eq!((r.vin_lo_counts, r.vin_hi_counts, r.shift), (2483, 3723, 6));
        for vin in r.vin_lo_counts..=r.vin_hi_counts {
            let want = plan_limit(vin) * f64::from(FS);
            let got = f64::from(c.limit_q8(vin)) / 256.0;
            assert!(got <= want + 1e-9, "vin {vin}: {got} above the plan {want}");
            worst = worst.max(want - got);
        }
        // Spacing 64 counts. The light-load limit has a kink where the stage at that limit
        // changes from CCM (low input) to DCM (high input), near 5.57 V here, and its DCM branch
        // is convex (the chord must be lowered by h²·f''/8 ≈ 0.06 counts); measured worst 0.083
        // counts, far below one duty count, so the output stays within one count of the floor
        // of the plan's limit.
        assert!(worst < 0.1, "worst table error {worst} counts");
    }

    #[test]
    fn tolerance_tables_hold_the_worst_case_over_l_and_r() {
        // L ±20 %, R ±30 %: each table node must lie at or below the lowest limit that the
        // general worst-case search (corners plus interior extrema) finds over the box.
        use crate::bounds::worst_case;
        let mut p = params();
        p.inductance_tol = 0.2;
        p.resistance_tol = 0.3;
        let c = DutyLimiterConfig::new(&stage(), &p).unwrap();
        let nominal = *stage().params();
        for vin in [2483u16, 2900, 3300, 3650] {
            let op = OperatingPoint {
                light_load: p.light_load,
                ..OperatingPoint::with_load_current(f32::from(vin) * VPC_IN, 12.0, 0.5)
            };
            let ranges = [
                Range::tolerance("inductance_h", nominal.inductance_h, 0.2).unwrap(),
                Range::tolerance("resistance", 1.0, 0.3).unwrap(),
            ];
            let b = worst_case(&ranges, |x| {
                let st = BoostStageParams {
                    inductance_h: x[0],
                    inductor_resistance_ohm: nominal.inductor_resistance_ohm * x[1],
                    switch_resistance_ohm: nominal.switch_resistance_ohm * x[1],
                    ..nominal
                }
                .validate()?;
                Ok(st.duty_limits(&op)?.duty_max)
            })
            .unwrap();
            let want = f64::from(b.min) * f64::from(FS);
            let got = f64::from(c.limit_q8(vin)) / 256.0;
            assert!(got <= want, "{vin}: table {got} above worst case {want}");
            assert!(
                got >= want - 0.2,
                "{vin}: table {got} far below worst case {want}"
            );
            // And the tolerance really lowers the limit against the nominal stage.
            assert!(got < f64::from(cfg().limit_q8(vin)) / 256.0 - 1.0);
        }
    }

    #[test]
    fn overvoltage_cuts_at_once_and_resumes_with_hysteresis() {
        let c = cfg();
        let mut s = DutyLimiterState::new();
        let vin = (5.0 / VPC_IN) as u16;
        assert_eq!(c.update(&mut s, 300, vin, mid_vout()), 300);
        let trip = c.raw().ov_trip_counts;
        let resume = c.raw().ov_resume_counts;
        assert_eq!(c.update(&mut s, 300, vin, trip), 0);
        assert!(s.overvoltage());
        assert_eq!(c.update(&mut s, 300, vin, resume + 1), 0);
        assert_eq!(c.update(&mut s, 300, vin, trip - 1), 0);
        assert_eq!(c.update(&mut s, 300, vin, resume), 300);
        assert!(!s.overvoltage());
    }

    #[test]
    fn soft_start_ramps_and_skips_short_pulses() {
        let c = cfg_soft();
        assert_eq!(c.raw().slew_q8, 10 << 8);
        assert_eq!(c.raw().min_on_counts, 40); // 80 ns at 500 kHz: D_min 0.04 (CHECKS C3.3)
        let vin = (5.0 / VPC_IN) as u16;
        let mut s = DutyLimiterState::new();
        let outs: std::vec::Vec<u16> = (0..6)
            .map(|_| c.update(&mut s, 500, vin, mid_vout()))
            .collect();
        assert_eq!(outs, [0, 0, 0, 40, 50, 60]);
        // An implausible output reading restarts the soft start.
        assert_eq!(c.update(&mut s, 500, vin, 0), 0);
        assert_eq!(c.update(&mut s, 500, vin, mid_vout()), 0);
    }

    #[test]
    fn binding_limit_follows_the_input() {
        // Saturation binds at low input, the light-load overvoltage limit at high input; the
        // kernel follows whichever is lower (the plan names it).
        let c = cfg();
        let p = params();
        for (v, reason) in [(4.5f32, "saturation"), (5.9, "light_load_overvoltage")] {
            let vin = (v / VPC_IN) as u16;
            let op = OperatingPoint {
                light_load: p.light_load,
                ..OperatingPoint::with_load_current(f32::from(vin) * VPC_IN, 12.0, 0.5)
            };
            let l = stage().duty_limits(&op).unwrap();
            assert_eq!(l.duty_max_reason.as_str(), reason);
            let want = f64::from(l.duty_max) * f64::from(FS);
            let got = f64::from(c.limit_counts(vin));
            assert!(got <= want && got >= want - 1.0, "{v} V: {got} vs {want}");
        }
    }

    proptest! {
        /// The interpolation through `mul_wide` equals the i64 product on any table values
        /// and offsets (computed: exact integer identity).
        #[test]
        fn interpolation_same_as_i64(a in any::<i32>(), b in any::<i32>(), off in any::<u32>(),
                                     shift in 0u8..20) {
            let mut raw = DutyLimiterConfig::from_raw(DutyLimiterRaw {
                vin_lo_counts: 0, vin_hi_counts: u16::MAX, shift,
                saturation_q8: [a; DUTY_TABLE_LEN], gain_peak_q8: [0; DUTY_TABLE_LEN],
                light_load_q8: [0; DUTY_TABLE_LEN], min_off_q8: 0, min_on_counts: 0,
                full_scale: 1, slew_q8: 0, vout_lo_counts: 0, vout_hi_counts: 0,
                ov_trip_counts: 0, ov_resume_counts: 0,
            }).r;
            raw.saturation_q8[1] = b;
            let cfg = DutyLimiterConfig::from_raw(raw);
            let sh = u32::from(shift.min(16));
            let off = off & ((2u32 << sh) - 1);
            let t = &cfg.r.saturation_q8;
            let idx = (off >> sh) as usize;
            let frac = i64::from(off & ((1u32 << sh) - 1));
            let want = match t.get(idx) {
                None => 0,
                Some(&x) => {
                    let y = i64::from(*t.get(idx + 1).unwrap_or(&x));
                    i64::from(x) + (((y - i64::from(x)) * frac) >> sh)
                }
            };
            prop_assert_eq!(cfg.interp(t, off), want);
        }
    }

    proptest! {
        #[test]
        fn tick_within_limits_and_one_lsb_of_the_plan(
            vin in 2483u16..=3723, request in any::<i32>(),
        ) {
            let c = cfg();
            let mut s = DutyLimiterState::new();
            let out = c.update(&mut s, request, vin, mid_vout());
            let exact = plan_limit(vin) * f64::from(FS);
            let want = exact.min(f64::from(request.clamp(0, i32::from(FS))));
            let want_counts = libm::floor(want) as i64;
            let want_counts = if want_counts < i64::from(c.raw().min_on_counts) { 0 } else { want_counts };
            prop_assert!(f64::from(out) <= exact + 1e-9);
            prop_assert!(i64::from(out) <= want_counts && i64::from(out) >= want_counts - 1,
                "out {} want {}", out, want_counts);
        }

        #[test]
        fn never_exceeds_any_limit(
            seq in proptest::collection::vec((any::<i32>(), 2400u16..3800, 0u16..4096), 1..64),
        ) {
            let c = cfg_soft();
            let r = c.raw();
            let mut s = DutyLimiterState::new();
            for (req, vin, vout) in seq {
                let before = s;
                let out = c.update(&mut s, req, vin, vout);
                prop_assert!(out <= r.full_scale);
                prop_assert!(i32::from(out) <= req.max(0));
                prop_assert!(out <= c.limit_counts(vin));
                prop_assert!(i32::from(out) << 8 <= before.last_q8() + r.slew_q8);
                prop_assert!(out == 0 || out >= r.min_on_counts);
                if vout >= r.ov_trip_counts || vin < r.vin_lo_counts || vin > r.vin_hi_counts {
                    prop_assert_eq!(out, 0);
                }
            }
        }

        #[test]
        fn raw_coefficients_never_panic(
            lo in any::<u16>(), hi in any::<u16>(), shift in any::<u8>(),
            t in any::<[i32; DUTY_TABLE_LEN]>(), min_off in any::<i32>(), min_on in any::<u16>(),
            fs in any::<u16>(), slew in any::<i32>(), thresholds in any::<[u16; 4]>(),
            seq in proptest::collection::vec((any::<i32>(), any::<u16>(), any::<u16>()), 1..32),
        ) {
            let c = DutyLimiterConfig::from_raw(DutyLimiterRaw {
                vin_lo_counts: lo, vin_hi_counts: hi, shift,
                saturation_q8: t, gain_peak_q8: t, light_load_q8: t,
                min_off_q8: min_off, min_on_counts: min_on, full_scale: fs, slew_q8: slew,
                vout_lo_counts: thresholds[0], vout_hi_counts: thresholds[1],
                ov_trip_counts: thresholds[2], ov_resume_counts: thresholds[3],
            });
            let mut s = DutyLimiterState::new();
            for (req, vin, vout) in seq {
                let out = c.update(&mut s, req, vin, vout);
                prop_assert!(out <= fs);
            }
        }
    }

    proptest! {
        // Each case builds the tables (a few hundred plan evaluations): fewer cases.
        #![proptest_config(ProptestConfig::with_cases(24))]
        #[test]
        fn constructor_never_panics(
            d in proptest::collection::vec(
                prop_oneof![
                    10 => (0.0f32..1.0).prop_map(|u| (true, u)),
                    1 => any::<f32>().prop_map(|x| (false, x)),
                    1 => proptest::sample::select(std::vec![
                        f32::NAN, f32::INFINITY, -1.0, 0.0, f32::MIN_POSITIVE / 2.0,
                    ]).prop_map(|x| (false, x)),
                ],
                10,
            ),
            fs in any::<u16>(), adc in any::<u16>(),
        ) {
            let v = |k: usize, lo: f32, hi: f32| match d[k] {
                (true, u) => lo + (hi - lo) * u,
                (false, x) => x,
            };
            let (a, b) = (v(0, 2.0, 8.0), v(1, 2.0, 8.0));
            let Ok(input_v) = Range::new("input_v", a.min(b), a.max(b)) else {
                return Ok(());
            };
            let p = DutyLimiterParams {
                input_v,
                output_v: v(2, 8.0, 16.0),
                max_load_current_a: v(3, 0.01, 1.0),
                light_load: Some(LightLoad {
                    min_load_current_a: v(4, 0.001, 0.1),
                    max_output_v: v(5, 10.0, 30.0),
                }),
                input_v_per_count: v(6, 1e-3, 1e-2),
                output_v_per_count: v(7, 5e-3, 2e-2),
                adc_max_counts: adc,
                duty_full_scale: fs,
                soft_start_s: v(8, 0.0, 0.1),
                tick_s: v(9, 1e-5, 1e-3),
                overvoltage_v: v(5, 10.0, 30.0) + 1.0,
                resume_v: v(5, 10.0, 30.0),
                inductance_tol: v(6, 0.0, 0.3),
                resistance_tol: v(7, 0.0, 0.3),
            };
            if let Ok(c) = DutyLimiterConfig::new(&stage(), &p) {
                let r = c.raw();
                prop_assert!(r.vin_lo_counts <= r.vin_hi_counts);
                prop_assert!(r.ov_resume_counts < r.ov_trip_counts);
                let mut s = DutyLimiterState::new();
                let out = c.update(&mut s, i32::MAX, r.vin_lo_counts, r.ov_resume_counts);
                prop_assert!(out <= r.full_scale);
            }
        }
    }
}
