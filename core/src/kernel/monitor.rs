//! The plausibility monitor (documented on [`MonitorConfig`]).

use super::q::{ARMV6M, mul_q16_small, mul_u32_q16_floor, mul_wide, q16_from_f32};
use crate::error::{Error, in_range, non_negative, positive};

/// A fault found by the plausibility monitor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Fault {
    /// Current expected but none measured.
    OpenCoil,
    /// More current than the healthy coil can draw: shorted turns or a shorted coil.
    LowResistance,
    /// The reading does not change while the current should.
    SensorStuck,
    /// The reading lies outside the valid ADC window.
    SensorOutOfRange,
}

impl Fault {
    const fn code(self) -> u8 {
        match self {
            Fault::OpenCoil => 1,
            Fault::LowResistance => 2,
            Fault::SensorStuck => 3,
            Fault::SensorOutOfRange => 4,
        }
    }

    const fn from_code(code: u8) -> Option<Fault> {
        match code {
            1 => Some(Fault::OpenCoil),
            2 => Some(Fault::LowResistance),
            3 => Some(Fault::SensorStuck),
            4 => Some(Fault::SensorOutOfRange),
            _ => None,
        }
    }
}

/// `x >> 16` saturated to the `i32` range. It fits exactly when `x >> 47` is 0 or −1, which
/// is the high word shifted by 15: one shift and one compare on a 32-bit core instead of two
/// 64-bit compares.
#[inline(always)]
const fn shr16_saturate_i32(x: i64) -> i32 {
    let top = ((x >> 32) as i32) >> 15;
    if (top.wrapping_add(1) as u32) <= 1 {
        (x >> 16) as i32
    } else if top < 0 {
        i32::MIN
    } else {
        i32::MAX
    }
}

/// Conversion of ADC counts to microamps, and the valid window of readings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SenseScale {
    /// Reading at zero current, counts.
    pub offset_counts: i32,
    /// Current per count, µA, Q16.
    pub ua_per_count_q16: i32,
    /// Lowest valid reading, counts.
    pub min_valid_counts: u16,
    /// Highest valid reading, counts.
    pub max_valid_counts: u16,
}

impl SenseScale {
    /// Plan side: `amps_per_count` A per count, zero current at `offset_counts`, valid readings
    /// `min_valid_counts ..= max_valid_counts`.
    ///
    /// # Errors
    ///
    /// `amps_per_count` not positive or above 0.03 A (the Q16 µA range), `offset_counts` outside
    /// 0 ..= 65535, or an empty valid window.
    pub fn new(
        amps_per_count: f32,
        offset_counts: f32,
        min_valid_counts: u16,
        max_valid_counts: u16,
    ) -> Result<Self, Error> {
        let a = in_range(
            "amps_per_count",
            positive("amps_per_count", amps_per_count)?,
            1.0e-9,
            0.03,
        )?;
        let off = in_range("offset_counts", offset_counts, 0.0, 65535.0)?;
        if min_valid_counts > max_valid_counts {
            return Err(Error::OutOfRange {
                param: "min_valid_counts",
                value: min_valid_counts as f32,
                min: 0.0,
                max: max_valid_counts as f32,
            });
        }
        Ok(Self {
            offset_counts: libm::roundf(off) as i32,
            ua_per_count_q16: q16_from_f32(a * 1.0e6),
            min_valid_counts,
            max_valid_counts,
        })
    }

    /// The current a valid reading stands for, µA (saturating).
    #[inline]
    #[must_use]
    pub fn to_ua(&self, counts: u16) -> i32 {
        // `counts − offset` fits an i32 unless the offset lies within 2¹⁶ of `i32::MIN`; then
        // the (rare, raw-configuration) difference is formed in i64 as before.
        let wide = match (counts as i32).checked_sub(self.offset_counts) {
            // A plan's offset (0 ..= 65535) leaves |d| < 2¹⁶. On ARMv6-M that takes two 32-bit
            // products; elsewhere |d| < 2¹⁵ (any 12- to 15-bit ADC) needs no saturation
            // (|d·g| ≤ 2⁴⁶), which one shifted compare tells.
            Some(d) if ARMV6M && (d as u32).wrapping_add(0xFFFF) < 0x1_FFFF => {
                return mul_q16_small(d, self.ua_per_count_q16, 0);
            }
            Some(d) if !ARMV6M && d >> 15 == d >> 31 => {
                return (mul_wide(d, self.ua_per_count_q16) >> 16) as i32;
            }
            Some(d) => mul_wide(d, self.ua_per_count_q16),
            None => (counts as i64 - self.offset_counts as i64) * self.ua_per_count_q16 as i64,
        };
        shr16_saturate_i32(wide)
    }
}

/// The raw thresholds of a [`MonitorConfig`], for constants emitted by the host tool
/// ([`MonitorConfig::from_raw`], [`MonitorConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MonitorRaw {
    /// Sense scaling and valid window.
    pub scale: SenseScale,
    /// Absolute part of the tolerance band, µA.
    pub abs_tol_ua: i32,
    /// Relative part of the tolerance band, Q16 (65536 = 100 %).
    pub rel_tol_q16: i32,
    /// Estimates at or above this expect a measurable current, µA.
    pub open_min_estimate_ua: i32,
    /// Measured currents at or below this count as none, µA.
    pub open_max_ua: i32,
    /// Consecutive samples before a fault is raised (0 is taken as 1).
    pub persistence: u16,
    /// Consecutive unchanged readings before the sensor counts as stuck.
    pub stuck_samples: u16,
    /// Change of the estimate during a frozen reading that proves it stuck, µA.
    pub stuck_min_change_ua: i32,
}

/// Thresholds and persistence of the plausibility monitor (shared by channels): compares the
/// estimator's current with a measured current sample and raises distinct faults after a
/// stated persistence.
///
/// # Decisions, per sample, in this order
///
/// 1. **Sensor out of range**: the reading lies outside `min_valid_counts ..= max_valid_counts`
///    (a shorted or open sense line, an ADC stuck at a rail). Such a reading is never taken as
///    zero current; after `persistence` consecutive such readings the fault is raised.
/// 2. **Sensor stuck**: the reading has not changed for `stuck_samples` consecutive samples
///    while the estimate moved by more than `stuck_min_change_ua` since it froze.
/// 3. **Open coil**: the estimate is at least `open_min_estimate_ua` but the measured current is
///    at most `open_max_ua`, for `persistence` consecutive samples.
/// 4. **Low resistance** (shorted turns, shorted coil): the measured current exceeds the estimate
///    by more than the tolerance band `abs_tol_ua + rel_tol·|estimate|`, for `persistence`
///    consecutive samples. Shorted turns lower both L and R, so the current rises faster and
///    settles higher than the model of the healthy coil predicts.
///
/// A measured current below the estimate (a hot coil) is not a fault by itself. The first fault
/// raised is latched until [`MonitorState::reset`].
///
/// Measured current: `(counts − offset_counts) · ua_per_count_q16 >> 16`, µA. No division, no
/// float, saturating. State: 16 bytes per channel.
///
/// Arithmetic: the measured current of a reading within 2¹⁵ counts of the offset (every 12-
/// to 15-bit ADC; within 2¹⁶ on Cortex-M0) is one product without saturation, and a relative
/// tolerance below 100 % makes the band term one unsigned product whose result fits 31 bits;
/// on Cortex-M0 each of the two takes two 32-bit multiplies instead of the four of
/// [`mul_wide`](crate::kernel::q::mul_wide) (or the 64-bit library multiply). Other raw
/// configurations take the 64-bit forms. The results equal those of the all-`i64`
/// formulation for every input (unit test `same_as_the_64_bit_formulation`). Measured under
/// emulation (`lenz cost`): 84.4 instructions per sample on Cortex-M0, 61.5 on Cortex-M3,
/// 62.4 on Cortex-M4F.
///
/// # Examples
///
/// ```
/// # use lenz::kernel::{Fault, MonitorConfig, MonitorParams, MonitorState, SenseScale};
/// // Demo sense chain (invented): 12-bit ADC, 4.028 mA per count, zero current at 100
/// // counts, readings outside 10 ..= 4085 invalid.
/// let scale = SenseScale::new(4.028e-3, 100.0, 10, 4085)?;
/// let cfg = MonitorConfig::new(scale, &MonitorParams {
///     abs_tol_a: 0.05,
///     rel_tol: 0.2,
///     open_min_estimate_a: 0.1,
///     open_max_a: 0.02,
///     persistence: 3,
///     stuck_samples: 20,
///     stuck_min_change_a: 0.1,
/// })?;
/// let mut s = MonitorState::new();
/// // Estimate 0.5 A and a reading of 0.5 A (224 counts): plausible.
/// assert_eq!(cfg.update(&mut s, 500_000, 224), None);
/// // Estimate 0.5 A but the reading stays at zero current: an open coil after 3 samples.
/// assert_eq!(cfg.update(&mut s, 500_000, 100), None);
/// assert_eq!(cfg.update(&mut s, 500_000, 101), None);
/// assert_eq!(cfg.update(&mut s, 500_000, 100), Some(Fault::OpenCoil));
/// s.reset();
/// assert_eq!(s.fault(), None);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
// Through the raw values, so a deserialized configuration is made by `from_raw` as any other.
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(from = "MonitorRaw", into = "MonitorRaw"))]
pub struct MonitorConfig {
    scale: SenseScale,
    abs_tol_ua: i32,
    rel_tol_q16: i32,
    open_min_estimate_ua: i32,
    open_max_ua: i32,
    persistence: u16,
    stuck_samples: u16,
    stuck_min_change_ua: i32,
}

impl From<MonitorRaw> for MonitorConfig {
    fn from(raw: MonitorRaw) -> Self {
        Self::from_raw(raw)
    }
}

impl From<MonitorConfig> for MonitorRaw {
    fn from(cfg: MonitorConfig) -> Self {
        cfg.raw()
    }
}

/// Plan-side description of the monitor, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MonitorParams {
    /// Absolute tolerance between estimate and measurement, A.
    pub abs_tol_a: f32,
    /// Relative tolerance between estimate and measurement (0.2 = 20 %).
    pub rel_tol: f32,
    /// Estimates at or above this expect a measurable current, A.
    pub open_min_estimate_a: f32,
    /// Measured currents at or below this count as none, A.
    pub open_max_a: f32,
    /// Consecutive samples before a fault is raised.
    pub persistence: u16,
    /// Consecutive unchanged readings before the sensor counts as stuck.
    pub stuck_samples: u16,
    /// Change of the estimate during a frozen reading that proves it stuck, A.
    pub stuck_min_change_a: f32,
}

impl MonitorConfig {
    /// Plan side: builds the integer configuration.
    ///
    /// # Errors
    ///
    /// A negative or non-finite tolerance or threshold, a relative tolerance above 10, a
    /// current above 2000 A, or a zero persistence or stuck count.
    pub fn new(scale: SenseScale, p: &MonitorParams) -> Result<Self, Error> {
        let ua = |name: &'static str, a: f32| -> Result<i32, Error> {
            let a = in_range(name, non_negative(name, a)?, 0.0, 2000.0)?;
            Ok(libm::roundf(a * 1.0e6) as i32)
        };
        let rel = in_range("rel_tol", non_negative("rel_tol", p.rel_tol)?, 0.0, 10.0)?;
        if p.persistence == 0 {
            return Err(Error::NotPositive {
                param: "persistence",
            });
        }
        if p.stuck_samples == 0 {
            return Err(Error::NotPositive {
                param: "stuck_samples",
            });
        }
        Ok(Self {
            scale,
            abs_tol_ua: ua("abs_tol_a", p.abs_tol_a)?,
            rel_tol_q16: q16_from_f32(rel),
            open_min_estimate_ua: ua("open_min_estimate_a", p.open_min_estimate_a)?,
            open_max_ua: ua("open_max_a", p.open_max_a)?,
            persistence: p.persistence,
            stuck_samples: p.stuck_samples,
            stuck_min_change_ua: ua("stuck_min_change_a", p.stuck_min_change_a)?,
        })
    }

    /// Thresholds from raw values (constants emitted by the host tool). Any values are safe
    /// to run; wrong ones only make the monitor wrong, never panic.
    #[must_use]
    pub const fn from_raw(raw: MonitorRaw) -> Self {
        Self {
            scale: raw.scale,
            abs_tol_ua: raw.abs_tol_ua,
            rel_tol_q16: raw.rel_tol_q16,
            open_min_estimate_ua: raw.open_min_estimate_ua,
            open_max_ua: raw.open_max_ua,
            persistence: if raw.persistence == 0 {
                1
            } else {
                raw.persistence
            },
            stuck_samples: raw.stuck_samples,
            stuck_min_change_ua: raw.stuck_min_change_ua,
        }
    }

    /// The raw thresholds: `MonitorConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> MonitorRaw {
        MonitorRaw {
            scale: self.scale,
            abs_tol_ua: self.abs_tol_ua,
            rel_tol_q16: self.rel_tol_q16,
            open_min_estimate_ua: self.open_min_estimate_ua,
            open_max_ua: self.open_max_ua,
            persistence: self.persistence,
            stuck_samples: self.stuck_samples,
            stuck_min_change_ua: self.stuck_min_change_ua,
        }
    }

    /// Sense scaling and valid window.
    #[must_use]
    pub const fn scale(&self) -> &SenseScale {
        &self.scale
    }

    /// Absolute part of the tolerance band, µA.
    #[must_use]
    pub const fn abs_tol_ua(&self) -> i32 {
        self.abs_tol_ua
    }

    /// Relative part of the tolerance band, Q16 (65536 = 100 %).
    #[must_use]
    pub const fn rel_tol_q16(&self) -> i32 {
        self.rel_tol_q16
    }

    /// Estimates at or above this expect a measurable current, µA.
    #[must_use]
    pub const fn open_min_estimate_ua(&self) -> i32 {
        self.open_min_estimate_ua
    }

    /// Measured currents at or below this count as none, µA.
    #[must_use]
    pub const fn open_max_ua(&self) -> i32 {
        self.open_max_ua
    }

    /// Consecutive samples before a fault is raised.
    #[must_use]
    pub const fn persistence(&self) -> u16 {
        self.persistence
    }

    /// Consecutive unchanged readings before the sensor counts as stuck.
    #[must_use]
    pub const fn stuck_samples(&self) -> u16 {
        self.stuck_samples
    }

    /// Change of the estimate during a frozen reading that proves it stuck, µA.
    #[must_use]
    pub const fn stuck_min_change_ua(&self) -> i32 {
        self.stuck_min_change_ua
    }

    /// Checks one sample and returns the latched fault, if any.
    ///
    /// # Arguments
    ///
    /// - `estimate_ua`: the estimator's current for the sampling instant, µA.
    /// - `counts`: the raw current reading.
    ///
    /// # Returns
    ///
    /// `None` while plausible; the first fault raised, from then on until
    /// [`MonitorState::reset`].
    pub fn update(&self, s: &mut MonitorState, estimate_ua: i32, counts: u16) -> Option<Fault> {
        // Test the byte first: the common case (no fault) is then one compare.
        if s.fault != 0
            && let Some(f) = Fault::from_code(s.fault)
        {
            return Some(f);
        }
        let raised = self.decide(s, estimate_ua, counts);
        if let Some(f) = raised {
            s.fault = f.code();
        }
        raised
    }

    fn decide(&self, s: &mut MonitorState, estimate_ua: i32, counts: u16) -> Option<Fault> {
        let p = self.persistence;
        if counts < self.scale.min_valid_counts || counts > self.scale.max_valid_counts {
            s.range_count = s.range_count.saturating_add(1);
            return (s.range_count >= p).then_some(Fault::SensorOutOfRange);
        }
        s.range_count = 0;

        if counts == s.last_counts {
            s.same_count = s.same_count.saturating_add(1);
            // |estimate − frozen| is exact as a u32; any move exceeds a negative threshold.
            let change = self.stuck_min_change_ua;
            let moved = estimate_ua.abs_diff(s.estimate_at_freeze_ua);
            if s.same_count >= self.stuck_samples && (change < 0 || moved > change as u32) {
                return Some(Fault::SensorStuck);
            }
        } else {
            s.same_count = 0;
            s.last_counts = counts;
            s.estimate_at_freeze_ua = estimate_ua;
        }

        let measured = self.scale.to_ua(counts);
        if estimate_ua >= self.open_min_estimate_ua && measured <= self.open_max_ua {
            s.open_count = s.open_count.saturating_add(1);
            if s.open_count >= p {
                return Some(Fault::OpenCoil);
            }
        } else {
            s.open_count = 0;
        }
        // measured > est + abs + ⌊|est|·rel/2¹⁶⌋ ⇔ ⌊|est|·rel/2¹⁶⌋ < L with the integer
        // L = measured − est − abs, an i32 unless the raw tolerances are extreme.
        let rel = self.rel_tol_q16;
        let l = measured
            .checked_sub(estimate_ua)
            .and_then(|x| x.checked_sub(self.abs_tol_ua));
        let high = match l {
            // A relative tolerance below 100 % (every plan's in practice): the band term is
            // below 2³¹ and one unsigned product gives it exactly.
            Some(l) if (rel as u32) < (1 << 16) => {
                (mul_u32_q16_floor(estimate_ua.unsigned_abs(), rel as u32) as i32) < l
            }
            _ => {
                // |estimate|·rel as ±(estimate·rel): one 32×32→64 product, exact for every
                // i32 (|i32::MIN·rel| ≤ 2⁶², so the negation cannot overflow); then
                // ⌊prod/2¹⁶⌋ < L ⇔ prod < L·2¹⁶.
                let signed = mul_wide(estimate_ua, rel);
                let prod = if estimate_ua < 0 { -signed } else { signed };
                match l {
                    Some(l) => prod < (l as i64) << 16,
                    None => {
                        measured as i64 > estimate_ua as i64 + self.abs_tol_ua as i64 + (prod >> 16)
                    }
                }
            }
        };
        if high {
            s.low_r_count = s.low_r_count.saturating_add(1);
            if s.low_r_count >= p {
                return Some(Fault::LowResistance);
            }
        } else {
            s.low_r_count = 0;
        }
        None
    }
}

/// Per-channel monitor state: 16 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MonitorState {
    estimate_at_freeze_ua: i32,
    range_count: u16,
    same_count: u16,
    open_count: u16,
    low_r_count: u16,
    last_counts: u16,
    fault: u8,
}

impl MonitorState {
    /// No fault, no history.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            estimate_at_freeze_ua: 0,
            range_count: 0,
            same_count: 0,
            open_count: 0,
            low_r_count: 0,
            last_counts: u16::MAX,
            fault: 0,
        }
    }

    /// The latched fault.
    #[must_use]
    pub const fn fault(&self) -> Option<Fault> {
        Fault::from_code(self.fault)
    }

    /// Clears the latched fault and the history.
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn never_panics_and_latches(
            off in any::<i32>(), scale in any::<i32>(), lo in any::<u16>(), hi in any::<u16>(),
            abs in any::<i32>(), rel in any::<i32>(), omin in any::<i32>(), omax in any::<i32>(),
            p in any::<u16>(), stuck in any::<u16>(), change in any::<i32>(),
            samples in proptest::collection::vec((any::<i32>(), any::<u16>()), 1..100),
        ) {
            let m = MonitorConfig::from_raw(MonitorRaw {
                scale: SenseScale { offset_counts: off, ua_per_count_q16: scale, min_valid_counts: lo, max_valid_counts: hi },
                abs_tol_ua: abs, rel_tol_q16: rel, open_min_estimate_ua: omin, open_max_ua: omax,
                persistence: p, stuck_samples: stuck, stuck_min_change_ua: change,
            });
            let mut s = MonitorState::new();
            let mut first = None;
            for (est, counts) in samples {
                let f = m.update(&mut s, est, counts);
                if first.is_none() {
                    first = f;
                }
                // Once raised, the same fault stays.
                prop_assert!(first.is_none() || f == first);
            }
        }
    }

    /// The decisions as first written, with every product and sum in i64 (the reference for
    /// the narrowed arithmetic of [`MonitorConfig::update`]).
    fn check_i64(
        m: &MonitorConfig,
        s: &mut MonitorState,
        estimate_ua: i32,
        counts: u16,
    ) -> Option<Fault> {
        if let Some(f) = Fault::from_code(s.fault) {
            return Some(f);
        }
        // A raw persistence of 0 is taken as 1 (MonitorRaw).
        let p = m.persistence.max(1);
        let raised = 'd: {
            if counts < m.scale.min_valid_counts || counts > m.scale.max_valid_counts {
                s.range_count = s.range_count.saturating_add(1);
                break 'd (s.range_count >= p).then_some(Fault::SensorOutOfRange);
            }
            s.range_count = 0;
            if counts == s.last_counts {
                s.same_count = s.same_count.saturating_add(1);
                let moved = (estimate_ua as i64 - s.estimate_at_freeze_ua as i64).abs();
                if s.same_count >= m.stuck_samples && moved > m.stuck_min_change_ua as i64 {
                    break 'd Some(Fault::SensorStuck);
                }
            } else {
                s.same_count = 0;
                s.last_counts = counts;
                s.estimate_at_freeze_ua = estimate_ua;
            }
            let d = counts as i64 - m.scale.offset_counts as i64;
            let measured = ((d * m.scale.ua_per_count_q16 as i64) >> 16)
                .clamp(i32::MIN as i64, i32::MAX as i64);
            let est = estimate_ua as i64;
            let open = est >= m.open_min_estimate_ua as i64 && measured <= m.open_max_ua as i64;
            s.open_count = if open {
                s.open_count.saturating_add(1)
            } else {
                0
            };
            if s.open_count >= p {
                break 'd Some(Fault::OpenCoil);
            }
            let band = m.abs_tol_ua as i64 + ((est.abs() * m.rel_tol_q16 as i64) >> 16);
            s.low_r_count = if measured > est + band {
                s.low_r_count.saturating_add(1)
            } else {
                0
            };
            if s.low_r_count >= p {
                break 'd Some(Fault::LowResistance);
            }
            None
        };
        if let Some(f) = raised {
            s.fault = f.code();
        }
        raised
    }

    /// An i32 that is often an edge value.
    fn edgy_i32() -> impl Strategy<Value = i32> {
        prop_oneof![
            any::<i32>(),
            Just(i32::MIN),
            Just(i32::MAX),
            Just(i32::MIN + 1),
            Just(0),
            Just(-1),
            -70_000i32..70_000,
            (i32::MIN..i32::MIN + 70_000),
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2000))]
        /// Same results and same state as the 64-bit formulation, on any configuration and
        /// samples (computed: exact integer identity, checked on edges and random values).
        #[test]
        fn same_as_the_64_bit_formulation(
            off in edgy_i32(), scale in edgy_i32(), lo in prop_oneof![any::<u16>(), 0u16..2],
            hi in any::<u16>(), abs in edgy_i32(), rel in edgy_i32(), omin in edgy_i32(),
            omax in edgy_i32(), p in 0u16..5, stuck in 0u16..5, change in edgy_i32(),
            samples in proptest::collection::vec(
                (prop_oneof![edgy_i32(), 0i32..3], prop_oneof![any::<u16>(), 0u16..4]), 1..60),
        ) {
            let m = MonitorConfig::from_raw(MonitorRaw {
                scale: SenseScale { offset_counts: off, ua_per_count_q16: scale, min_valid_counts: lo.min(hi), max_valid_counts: lo.max(hi) },
                abs_tol_ua: abs, rel_tol_q16: rel, open_min_estimate_ua: omin, open_max_ua: omax,
                persistence: p, stuck_samples: stuck, stuck_min_change_ua: change,
            });
            let (mut a, mut b) = (MonitorState::new(), MonitorState::new());
            for (est, counts) in samples {
                prop_assert_eq!(m.update(&mut a, est, counts), check_i64(&m, &mut b, est, counts));
                prop_assert_eq!(a, b);
                let d = counts as i64 - off as i64;
                let want = ((d * scale as i64) >> 16).clamp(i32::MIN as i64, i32::MAX as i64);
                prop_assert_eq!(m.scale.to_ua(counts) as i64, want);
            }
        }
    }

    /// Demo sense chain (invented): 12-bit ADC, 4.028 mA per count, zero current at 100 counts,
    /// readings outside 10 ..= 4085 invalid.
    fn monitor() -> MonitorConfig {
        let scale = SenseScale::new(4.028e-3, 100.0, 10, 4085).unwrap();
        MonitorConfig::new(
            scale,
            &MonitorParams {
                abs_tol_a: 0.05,
                rel_tol: 0.2,
                open_min_estimate_a: 0.1,
                open_max_a: 0.02,
                persistence: 3,
                stuck_samples: 20,
                stuck_min_change_a: 0.1,
            },
        )
        .unwrap()
    }

    fn counts_for(a: f32) -> u16 {
        (100.0 + a / 4.028e-3).round() as u16
    }

    /// The raw values carry every field, and `from_raw` is usable in a constant.
    #[test]
    fn raw_round_trip() {
        let m = monitor();
        assert_eq!(MonitorConfig::from_raw(m.raw()), m);
        const C: MonitorConfig = MonitorConfig::from_raw(MonitorRaw {
            scale: SenseScale {
                offset_counts: 1,
                ua_per_count_q16: 2,
                min_valid_counts: 3,
                max_valid_counts: 4,
            },
            abs_tol_ua: 5,
            rel_tol_q16: 6,
            open_min_estimate_ua: 7,
            open_max_ua: 8,
            persistence: 9,
            stuck_samples: 10,
            stuck_min_change_ua: 11,
        });
        assert_eq!(
            (
                C.scale().max_valid_counts,
                C.abs_tol_ua(),
                C.rel_tol_q16(),
                C.open_min_estimate_ua(),
                C.open_max_ua(),
                C.persistence(),
                C.stuck_samples(),
                C.stuck_min_change_ua()
            ),
            (4, 5, 6, 7, 8, 9, 10, 11)
        );
    }

    #[test]
    fn healthy_coil_raises_nothing() {
        let m = monitor();
        let mut s = MonitorState::new();
        for k in 0..200 {
            let i = 0.75 * (1.0 - (-(k as f32) / 30.0).exp());
            assert_eq!(
                m.update(&mut s, (i * 1e6) as i32, counts_for(i * 0.95)),
                None
            );
        }
    }

    #[test]
    fn each_fault_is_distinct_and_persistent() {
        let m = monitor();
        // Open coil: estimate 0.5 A, reading at zero current.
        let mut s = MonitorState::new();
        assert_eq!(m.update(&mut s, 500_000, 100), None);
        assert_eq!(m.update(&mut s, 500_000, 101), None);
        assert_eq!(m.update(&mut s, 500_000, 100), Some(Fault::OpenCoil));
        assert_eq!(s.fault(), Some(Fault::OpenCoil));
        // Low resistance: measured 1.0 A against an estimate of 0.5 A.
        let mut s = MonitorState::new();
        let c = counts_for(1.0);
        assert_eq!(m.update(&mut s, 500_000, c), None);
        assert_eq!(m.update(&mut s, 500_000, c + 1), None);
        assert_eq!(m.update(&mut s, 500_000, c), Some(Fault::LowResistance));
        // Out of range: a reading at the rail is a fault, not zero current.
        let mut s = MonitorState::new();
        for _ in 0..2 {
            assert_eq!(m.update(&mut s, 0, 0), None);
        }
        assert_eq!(m.update(&mut s, 0, 0), Some(Fault::SensorOutOfRange));
        let mut s = MonitorState::new();
        for _ in 0..2 {
            assert_eq!(m.update(&mut s, 0, 4095), None);
        }
        assert_eq!(m.update(&mut s, 0, 4095), Some(Fault::SensorOutOfRange));
        // Stuck: the reading freezes at 0.3 A while the estimate rises to 0.6 A.
        let mut s = MonitorState::new();
        let frozen = counts_for(0.3);
        let mut raised = None;
        for k in 0..40 {
            let est = 300_000 + k * 10_000;
            raised = m.update(&mut s, est, frozen);
            if raised.is_some() {
                break;
            }
        }
        assert_eq!(raised, Some(Fault::SensorStuck));
        s.reset();
        assert_eq!(s.fault(), None);
    }
}
