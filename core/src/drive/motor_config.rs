//! The bridge motor driver's configuration: the speed estimator, jam detector and bridge guard
//! it wires together, and the scaling of its readings, planned from SI values or loaded from
//! raw constants.

use crate::error::{Error, in_range, positive};
use crate::kernel::{
    BridgeGuardConfig, BridgeGuardParams, BridgeGuardRaw, JamConfig, JamParams, JamRaw, SenseScale,
    SpeedEstimatorConfig, SpeedEstimatorRaw,
};
use crate::motor::Motor;

/// Plan-side description of a bridge motor driver, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct MotorDriverParams {
    /// The motor and its bridge (inertia stated: the bridge guard's plan needs it).
    pub motor: Motor,
    /// Winding temperature the speed estimator is planned for, °C.
    pub temp_c: f32,
    /// Control tick: the period of [`MotorDriver::update`](super::MotorDriver::update), s.
    pub tick_s: f32,
    /// Time constant of the speed estimate's low-pass, s (0: none).
    pub speed_filter_s: f32,
    /// The bridge guard: soft start, brake and reversal speeds, dead time (its `tick_s` must
    /// be the tick).
    pub guard: BridgeGuardParams,
    /// The jam, overload and open-winding detector (its `tick_s` must be the tick).
    pub jam: JamParams,
    /// Winding current sense (signed: zero current at the offset), scale and valid window.
    pub current_sense: SenseScale,
    /// Supply voltage per supply ADC count, V.
    pub supply_v_per_count: f32,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: f32,
}

/// The raw values of a [`MotorDriverConfig`], for constants emitted by the host tool
/// ([`MotorDriverConfig::from_raw`], [`MotorDriverConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MotorDriverRaw {
    /// The speed estimator.
    pub speed: SpeedEstimatorRaw,
    /// The jam detector.
    pub jam: JamRaw,
    /// The bridge guard.
    pub guard: BridgeGuardRaw,
    /// The current sense.
    pub current_sense: SenseScale,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: u16,
    /// Supply per count, mV, Q16.
    pub supply_mv_per_count_q16: i32,
}

/// The bridge motor driver's configuration (shared by channels driving the same motor with
/// the same settings; can live in flash, see [`MotorDriverConfig::from_raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MotorDriverConfig {
    speed: SpeedEstimatorConfig,
    jam: JamConfig,
    guard: BridgeGuardConfig,
    current_sense: SenseScale,
    supply_zero_counts: u16,
    supply_mv_per_count_q16: i32,
}

fn same_tick(param: &'static str, t: f32, tick: f32) -> Result<(), Error> {
    if (t - tick).abs() > 1.0e-6 * tick {
        return Err(Error::OutOfRange {
            param,
            value: t,
            min: tick,
            max: tick,
        });
    }
    Ok(())
}

impl MotorDriverConfig {
    /// Plan side: the integer configuration of a bridge motor driver, each kernel planned by
    /// its own constructor ([`SpeedEstimatorConfig::new`], [`JamConfig::new`],
    /// [`BridgeGuardConfig::new`]).
    ///
    /// # Errors
    ///
    /// The kernels' errors; and, named: `tick_s` (not positive, or the guard's or the jam
    /// detector's tick differs from it: reported as the kernel's own `tick_s` value),
    /// `supply_v_per_count`, `supply_zero_counts`.
    pub fn new(p: &MotorDriverParams) -> Result<Self, Error> {
        let tick = positive("tick_s", p.tick_s)?;
        same_tick("tick_s", p.guard.tick_s, tick)?;
        same_tick("tick_s", p.jam.tick_s, tick)?;
        let speed = SpeedEstimatorConfig::new(&p.motor, p.temp_c, tick, p.speed_filter_s)?;
        let jam = JamConfig::new(&p.jam)?;
        let guard = BridgeGuardConfig::new(&p.motor, &p.guard)?;
        let v_per_count = in_range(
            "supply_v_per_count",
            positive("supply_v_per_count", p.supply_v_per_count)?,
            1.0e-6,
            30.0,
        )?;
        let zero = in_range("supply_zero_counts", p.supply_zero_counts, 0.0, 65_535.0)?;
        Ok(Self {
            speed,
            jam,
            guard,
            current_sense: p.current_sense,
            supply_zero_counts: libm::roundf(zero) as u16,
            supply_mv_per_count_q16: libm::roundf(v_per_count * 1000.0 * 65536.0) as i32,
        })
    }

    /// From raw values (constants emitted by the host tool). Any values are safe to run: wrong
    /// ones make the driver wrong (and most likely fault it off), never panic.
    #[must_use]
    pub const fn from_raw(raw: MotorDriverRaw) -> Self {
        Self {
            speed: SpeedEstimatorConfig::from_raw(raw.speed),
            jam: JamConfig::from_raw(raw.jam),
            guard: BridgeGuardConfig::from_raw(raw.guard),
            current_sense: raw.current_sense,
            supply_zero_counts: raw.supply_zero_counts,
            supply_mv_per_count_q16: raw.supply_mv_per_count_q16,
        }
    }

    /// The raw values: `MotorDriverConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> MotorDriverRaw {
        MotorDriverRaw {
            speed: self.speed.raw(),
            jam: self.jam.raw(),
            guard: self.guard.raw(),
            current_sense: self.current_sense,
            supply_zero_counts: self.supply_zero_counts,
            supply_mv_per_count_q16: self.supply_mv_per_count_q16,
        }
    }

    /// The speed estimator.
    #[inline]
    #[must_use]
    pub const fn speed(&self) -> &SpeedEstimatorConfig {
        &self.speed
    }

    /// The jam detector.
    #[inline]
    #[must_use]
    pub const fn jam(&self) -> &JamConfig {
        &self.jam
    }

    /// The bridge guard.
    #[inline]
    #[must_use]
    pub const fn guard(&self) -> &BridgeGuardConfig {
        &self.guard
    }

    /// The current sense.
    #[inline]
    #[must_use]
    pub const fn current_sense(&self) -> &SenseScale {
        &self.current_sense
    }

    /// The supply in mV for a supply reading (saturating, negative as 0).
    #[inline]
    #[must_use]
    pub fn supply_mv(&self, counts: u16) -> i32 {
        super::supply::supply_mv(
            counts,
            self.supply_zero_counts,
            self.supply_mv_per_count_q16,
        )
    }
}
