//! The duty limiter's configuration, raw constants, state and per-tick update.

use crate::kernel::q::mul_frac_q16_floor;

/// Number of nodes of each duty-limit table.
pub const DUTY_TABLE_LEN: usize = 32;

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

/// Duty limiter coefficients for a boost stage (shared by channels): clamps the controller's
/// duty request, every tick, to the duty limits of the plan as functions of the measured input
/// voltage, with a soft-start slew limit and an immediate cut on output overvoltage.
///
/// # Decisions, per tick, in this order
///
/// 1. **Readings out of range** (fail safe): an input reading outside the planned window
///    `vin_lo_counts ..= vin_hi_counts`, or an output reading outside
///    `vout_lo_counts ..= vout_hi_counts` (a sense line shorted or open, an ADC at its rail),
///    gives duty 0 and restarts the soft start.
/// 2. **Output overvoltage**: an output reading at or above `ov_trip_counts` cuts the duty to 0
///    at once; switching resumes only when the reading has fallen to `ov_resume_counts` or
///    below (hysteresis), and then from 0 through the soft start.
/// 3. **Duty limits**: the request (saturated to `0 ..= full_scale`) is clamped to the
///    smallest of the saturation, gain-peak and light-load limits, each interpolated from its
///    table at the measured input, and to the constant minimum-off-time limit.
/// 4. **Soft start**: the allowed duty rises by at most `slew_q8` (1/256 duty count) per tick
///    above the last output; it may fall at once.
/// 5. **Minimum on time**: a duty below `min_on_counts` is output as 0 (the pulse is skipped);
///    the soft-start ramp keeps rising underneath.
///
/// # Tables and interpolation without division
///
/// Each limit is stored at `N` = [`DUTY_TABLE_LEN`] input readings `vin_lo_counts + i·2^shift`, in
/// duty counts with 8 fractional bits (Q8). Between nodes the kernel interpolates linearly:
/// with `o = vin − vin_lo`, `i = o >> shift`, `f = o & (2^shift − 1)`,
/// `y = t[i] + ((t[i+1] − t[i])·f >> shift)`: one multiply and shifts, no division. The output
/// is the interpolated value rounded down to whole counts.
///
/// The plan-side constructor makes the tables conservative: it evaluates the plan's limit at
/// the nodes and at interior points of every segment and lowers the nodes until the chord lies
/// at or below every evaluated point; node values are rounded down to 1/256 count. A limit
/// that a node does not have (no saturation current, no resistive loss, no light-load
/// condition) is stored as full scale. With part tolerances given (`inductance_tol`,
/// `resistance_tol`) each node holds the lowest limit over the four corners `L·(1 ± tol_L)`,
/// `R·(1 ± tol_R)`; every limit is monotonic in each of them, and a unit test checks the corners
/// against the general worst-case search of [`crate::bounds::worst_case`].
///
/// Accuracy, measured at every reading of a 4 ..= 6 V window (1242 counts, 64 per segment, full
/// scale 1000 counts; unit test `every_reading_in_the_window_is_within_one_lsb_below_the_plan`):
/// the table limit never lies above the plan's limit and at most 0.083 counts below it (where the
/// light-load limit has a kink at its CCM/DCM change). The tick therefore returns at most the
/// plan's limit and at least one count below its floor.
///
/// # Cost and state
///
/// Three interpolations, compares, shifts, all in `i32` (the limits and the request lie in
/// `0 ..= 2²⁴` in Q8): each interpolation takes the fraction between two nodes as a Q16 number
/// and one 32×32→64 multiply (two 32-bit multiplies on Cortex-M0), exact against the `i64`
/// formulation (unit test `same_as_the_64_bit_formulation`). One index check covers the three
/// tables. Measured by `lenz cost`: 157.9 instructions per tick on Cortex-M0, 115.0 on
/// Cortex-M3, 112.0 on Cortex-M4F. State: 8 bytes per channel (last duty in Q8, overvoltage
/// latch).
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
    pub(super) r: DutyLimiterRaw,
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

impl DutyLimiterConfig {
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

    /// The limit table `t` interpolated at `off = vin − vin_lo`, duty counts Q8; 0 when `off`
    /// lies beyond the table (a raw configuration's node spacing too small for its window).
    /// The result lies between the two nodes, so it fits an `i32`.
    pub(super) fn interp(&self, t: &[i32; DUTY_TABLE_LEN], off: u32) -> i32 {
        let shift = self.shift_bits();
        let idx = (off >> shift) as usize;
        if idx < DUTY_TABLE_LEN - 1 {
            interp_at(t[idx], t[idx + 1], frac_q16(off, shift))
        } else if idx == DUTY_TABLE_LEN - 1 {
            t[idx]
        } else {
            0
        }
    }

    /// `shift`, at most 16 whatever the field holds.
    #[inline(always)]
    fn shift_bits(&self) -> u32 {
        if self.r.shift > 16 {
            16
        } else {
            self.r.shift as u32
        }
    }

    /// The duty limit at input reading `vin_counts`, duty counts Q8 (0 outside the window).
    #[must_use]
    pub fn limit_q8(&self, vin_counts: u16) -> i32 {
        if vin_counts < self.r.vin_lo_counts || vin_counts > self.r.vin_hi_counts {
            return 0;
        }
        self.limit_at_q8(u32::from(vin_counts - self.r.vin_lo_counts))
    }

    /// [`DutyLimiterConfig::limit_q8`] at `off = vin − vin_lo` of a reading in the window:
    /// the lowest of the three tables and the minimum-off-time limit, in `0 ..= full scale`.
    #[inline(always)]
    fn limit_at_q8(&self, off: u32) -> i32 {
        let r = &self.r;
        let shift = self.shift_bits();
        let idx = (off >> shift) as usize;
        // Written out rather than a loop over the three tables (a loop over an array of
        // references was left as an iterator call on the thumb targets); one index check
        // for the three tables.
        let mut lim = r.min_off_q8;
        if idx < DUTY_TABLE_LEN - 1 {
            let f = frac_q16(off, shift);
            let sat = interp_at(r.saturation_q8[idx], r.saturation_q8[idx + 1], f);
            if sat < lim {
                lim = sat;
            }
            let peak = interp_at(r.gain_peak_q8[idx], r.gain_peak_q8[idx + 1], f);
            if peak < lim {
                lim = peak;
            }
            let light = interp_at(r.light_load_q8[idx], r.light_load_q8[idx + 1], f);
            if light < lim {
                lim = light;
            }
        } else {
            for t in [&r.saturation_q8, &r.gain_peak_q8, &r.light_load_q8] {
                let v = self.interp(t, off);
                if v < lim {
                    lim = v;
                }
            }
        }
        let fs_q8 = i32::from(r.full_scale) << 8;
        if lim < 0 {
            0
        } else if lim > fs_q8 {
            fs_q8
        } else {
            lim
        }
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
        // Everything in i32: the limit and the request lie in 0 ..= full scale (≤ 2²⁴ in Q8).
        let fs = i32::from(r.full_scale);
        let req_q8 = if request < 0 {
            0
        } else if request > fs {
            fs << 8
        } else {
            request << 8
        };
        let ramp_q8 = s.last_q8.saturating_add(r.slew_q8);
        let mut out = self.limit_at_q8(u32::from(vin_counts - r.vin_lo_counts));
        if ramp_q8 < out {
            out = ramp_q8;
        }
        if req_q8 < out {
            out = req_q8;
        }
        // A negative ramp (raw slew or state) gives 0; the upper end is the limit's.
        let out = if out < 0 { 0 } else { out };
        s.last_q8 = out;
        let whole = (out >> 8) as u16;
        if whole < r.min_on_counts { 0 } else { whole }
    }
}

/// The interpolation fraction of `off` between two nodes `2^shift` apart, Q16:
/// `(off mod 2^shift)·2^(16 − shift)` (exact for `off < 2¹⁶`, `shift ≤ 16`).
#[inline(always)]
fn frac_q16(off: u32, shift: u32) -> u32 {
    (off << (16 - shift)) & 0xFFFF
}

/// `a + ⌊(b − a)·f/2¹⁶⌋`: the chord between nodes `a` and `b` at the fraction `f < 2¹⁶`, in
/// `min(a, b) ..= max(a, b)`. `⌊(b − a)·(o mod 2^s)/2^s⌋` equals `⌊(b − a)·f/2¹⁶⌋` with
/// `f = (o mod 2^s)·2^(16 − s)`. A node difference beyond the `i32` range (raw tables only)
/// takes the `i64` product.
#[inline(always)]
fn interp_at(a: i32, b: i32, f_q16: u32) -> i32 {
    match b.checked_sub(a) {
        Some(d) => a + mul_frac_q16_floor(d, f_q16),
        None => (i64::from(a) + (((i64::from(b) - i64::from(a)) * i64::from(f_q16)) >> 16)) as i32,
    }
}
