//! The boost duty loop's configuration: the duty limiter and the PI voltage loop's integer
//! settings.

use crate::boost::BoostStage;
use crate::error::{Error, in_range, non_negative};
use crate::kernel::{DutyLimiterConfig, DutyLimiterParams, DutyLimiterRaw};

/// Plan-side description of a boost duty loop, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostLoopParams {
    /// The duty limiter (input window and scaling, the wanted output voltage, soft start,
    /// overvoltage cut, the PWM's full scale in `duty_full_scale`).
    pub limiter: DutyLimiterParams,
    /// Proportional gain, duty (0 ..= 1) per volt of output error.
    pub kp_per_v: f32,
    /// Integral gain, duty per volt of output error per tick.
    pub ki_per_v_tick: f32,
}

/// The raw values of a [`BoostLoopConfig`] ([`BoostLoopConfig::from_raw`],
/// [`BoostLoopConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostLoopRaw {
    /// The duty limiter.
    pub limiter: DutyLimiterRaw,
    /// The output reading of the wanted voltage, counts.
    pub target_counts: u16,
    /// Proportional gain, duty counts per output count, Q16.
    pub kp_q16: i32,
    /// Integral gain, duty counts per output count per tick, Q16.
    pub ki_q16: i32,
}

/// The boost duty loop's configuration (shared by channels; can live in flash).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostLoopConfig {
    limiter: DutyLimiterConfig,
    target_counts: u16,
    kp_q16: i32,
    ki_q16: i32,
}

impl BoostLoopConfig {
    /// Plan side: the limiter for `stage` and the loop's gains in duty counts per output count.
    ///
    /// # Errors
    ///
    /// The errors of [`DutyLimiterConfig::new`]; a wanted output whose reading lies outside
    /// the ADC range (`output_v`); a gain that is negative, not finite, or too large for Q16
    /// (`kp_per_v`, `ki_per_v_tick`).
    pub fn new(stage: &BoostStage, p: &BoostLoopParams) -> Result<Self, Error> {
        let limiter = DutyLimiterConfig::new(stage, &p.limiter)?;
        let l = &p.limiter;
        let target = l.output_v / l.output_v_per_count;
        let target =
            in_range("output_v", target, 1.0, f32::from(l.adc_max_counts)).map_err(|_| {
                Error::OutOfRange {
                    param: "output_v",
                    value: l.output_v,
                    min: l.output_v_per_count,
                    max: l.output_v_per_count * f32::from(l.adc_max_counts),
                }
            })?;
        // Duty counts per output count, Q16.
        let per_count = l.output_v_per_count * f32::from(l.duty_full_scale) * 65_536.0;
        let gain = |name: &'static str, g: f32| -> Result<i32, Error> {
            let q = non_negative(name, g)? * per_count;
            in_range(name, q, 0.0, i32::MAX as f32).map_err(|_| Error::OutOfRange {
                param: name,
                value: g,
                min: 0.0,
                max: i32::MAX as f32 / per_count,
            })?;
            Ok(libm::roundf(q) as i32)
        };
        Ok(Self {
            limiter,
            target_counts: libm::roundf(target) as u16,
            kp_q16: gain("kp_per_v", p.kp_per_v)?,
            ki_q16: gain("ki_per_v_tick", p.ki_per_v_tick)?,
        })
    }

    /// From raw values (constants emitted by the host tool). Any values are safe to run.
    #[must_use]
    pub const fn from_raw(raw: BoostLoopRaw) -> Self {
        Self {
            limiter: DutyLimiterConfig::from_raw(raw.limiter),
            target_counts: raw.target_counts,
            kp_q16: raw.kp_q16,
            ki_q16: raw.ki_q16,
        }
    }

    /// The raw values: `BoostLoopConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> BoostLoopRaw {
        BoostLoopRaw {
            limiter: self.limiter.raw(),
            target_counts: self.target_counts,
            kp_q16: self.kp_q16,
            ki_q16: self.ki_q16,
        }
    }

    /// The duty limiter.
    #[inline]
    #[must_use]
    pub const fn limiter(&self) -> &DutyLimiterConfig {
        &self.limiter
    }

    /// The output reading of the wanted voltage, counts.
    #[inline]
    #[must_use]
    pub const fn target_counts(&self) -> u16 {
        self.target_counts
    }

    /// Proportional gain, duty counts per output count, Q16.
    #[inline]
    #[must_use]
    pub const fn kp_q16(&self) -> i32 {
        self.kp_q16
    }

    /// Integral gain, duty counts per output count per tick, Q16.
    #[inline]
    #[must_use]
    pub const fn ki_q16(&self) -> i32 {
        self.ki_q16
    }
}
