//! The firmware inputs: what firmware computes at init from the nominal description.
//!
//! A firmware engineer plans the kernels from datasheet values (the description's nominal
//! values and nominal sense chain), not from the part in front of them: the gap between the
//! two is what the closed loop checks. [`FirmwareInputs`] holds, for one planning temperature
//! (a board sensor reading, or the nominal temperature):
//!
//! - the sense scaling, ADC counts ↔ A and V ([`SenseInputs`]);
//! - for a coil drive ([`CoilInputs`]): the coil model, the clamp, the current estimator, the
//!   tracking off-timer, the plausibility monitor and the trip detector, with the settings
//!   they were planned from;
//! - for a boost stage ([`BoostInputs`]): the stage and, with `[controller.boost]`, the duty
//!   limiter.
//!
//! Each configuration comes from the kernel's own constructor (`XxxConfig::new`), so a user's
//! firmware built from these is built exactly as it would be built at init on the chip.
//!
//! # Settings without `[controller.coil]`
//!
//! The monitor thresholds and the trip threshold are firmware settings. A file with
//! `[controller.coil]` gives them; without it they are derived (common practice, no source):
//! trip at the switch current rating or 90 % of the current channel's full scale, whichever is
//! lower; monitor tolerance 10 % of the pull-in current (at least 8 counts) plus 20 % of the
//! estimate, open coil when the estimate is above the release current and the reading at or
//! below a quarter of it for 5 samples, stuck sensor after 100 ms of unchanged readings while
//! the estimate moved by the release current.

use lenz::kernel::{
    DutyLimiterConfig, EstimatorConfig, MonitorConfig, MonitorParams, SenseScale,
    TrackingOffTimerConfig, TripConfig, TripParams,
};
use lenz::{Coil, Range};

use super::firmware_movement::{MovementInputs, movement_inputs};
use super::{SetupError, clamp, coil, sense};
use crate::scenario::{self, Controller, File};

/// Lowest and highest valid reading, counts from either rail: a reading on a rail is a fault.
pub const RAIL_MARGIN_COUNTS: u16 = 10;

/// Sense scaling of the nominal chain.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SenseInputs {
    /// Coil current per count, A.
    pub amps_per_count: f32,
    /// Current reading at zero current, counts.
    pub current_zero_counts: f32,
    /// The current scale of the kernels: µA per count (Q16), offset, valid window.
    pub current: SenseScale,
    /// Supply voltage per count, V.
    pub supply_v_per_count: f32,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: f32,
    /// Supply per count, mV, Q16 (one multiply and a shift per tick).
    pub supply_mv_per_count_q16: i32,
    /// Output voltage per count, V.
    pub output_v_per_count: f32,
    /// Largest ADC code.
    pub adc_max_counts: u16,
}

/// The coil firmware's settings the monitor and trip detector are planned from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoilSettings {
    /// Pull-in ends when the current reaches this, A (`[controller.coil] pull_in_current`, else
    /// the coil's pull-in current).
    pub pull_in_a: f32,
    /// Shortest pull-in, s (`[controller.coil]`, else 0).
    pub pull_in_min_s: f32,
    /// Hold duty, 0 … 1 (`[controller.coil]`, else 1: no PWM economy).
    pub hold_duty: f32,
    /// Instantaneous trip threshold, A.
    pub trip_a: f32,
    /// Monitor thresholds.
    pub monitor: MonitorParams,
}

/// The kernel configurations of a coil drive.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoilInputs {
    /// The nominal coil model (winding, switch, shunt and source resistance in the loop).
    pub coil: Coil,
    /// The clamp (core form).
    pub clamp: lenz::turnoff::Clamp,
    /// The coil's pull-in current, A.
    pub pull_in_a: f32,
    /// The coil's release current, A.
    pub release_a: f32,
    /// The coil's must-hold current (below it the armature drops out), A, if described.
    pub must_hold_a: Option<f32>,
    /// The settings below were planned from.
    pub settings: CoilSettings,
    /// Current estimator: on path of the coil, off path through the clamp.
    pub estimator: EstimatorConfig,
    /// Tracking off-timer down to the release current (`None`: an unclamped switch-off, which
    /// it does not track).
    pub off_timer: Option<TrackingOffTimerConfig>,
    /// Plausibility monitor.
    pub monitor: MonitorConfig,
    /// Trip detector parameters (instantaneous, one sample, latching).
    pub trip_params: TripParams,
    /// Trip detector.
    pub trip: TripConfig,
    /// The armature movement detector and the seated inductance (with
    /// `[system.coil.armature]`; `None` without one), planned with the example driver's
    /// longest pull-in as its deadline ([`super::firmware_movement`]).
    pub movement: Option<MovementInputs>,
}

/// The plan of a boost stage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoostInputs {
    /// The stage.
    pub stage: lenz::boost::BoostStage,
    /// The duty limiter (with `[controller.boost]`).
    pub duty_limiter: Option<DutyLimiterConfig>,
}

/// What firmware computes at init from the nominal description (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirmwareInputs {
    /// Control tick, s.
    pub tick_s: f32,
    /// PWM frequency, Hz.
    pub pwm_frequency_hz: f32,
    /// The temperature the plans are made for, °C.
    pub temp_c: f32,
    /// Supply range, V.
    pub supply_v: Range,
    /// Nominal supply, V.
    pub supply_nominal_v: f32,
    /// Sense scaling.
    pub sense: SenseInputs,
    /// The coil drive's kernels (`None` for a boost stage).
    pub coil: Option<CoilInputs>,
    /// The boost stage's plan (`None` for a coil drive).
    pub boost: Option<BoostInputs>,
    /// The motor bridge's model and driver settings (`None` unless `[system.motor]`).
    pub motor: Option<super::MotorInputs>,
}

impl FirmwareInputs {
    /// The coil inputs.
    ///
    /// # Errors
    ///
    /// The system is not a coil drive.
    pub fn coil(&self) -> Result<&CoilInputs, SetupError> {
        self.coil
            .as_ref()
            .ok_or_else(|| SetupError::new("system: a coil firmware needs [system.coil]"))
    }

    /// The plan of a [`lenz::drive::CoilDriver`] for this system: the coil, clamp, supply range,
    /// sense scaling, monitor and trip detector of these inputs, the pull-in setting and its
    /// shortest time from [`CoilSettings`], with the driver's own choices given here: the
    /// hold, what must reach the pull-in current, and the longest pull-in.
    ///
    /// # Errors
    ///
    /// The system is not a coil drive.
    pub fn coil_driver_params(
        &self,
        hold: lenz::drive::Hold,
        pull_in_source: lenz::drive::PullInSource,
        pull_in_max_s: f32,
    ) -> Result<lenz::drive::CoilDriverParams, SetupError> {
        let c = self.coil()?;
        Ok(lenz::drive::CoilDriverParams {
            coil: c.coil,
            temp_c: self.temp_c,
            tick_s: self.tick_s,
            clamp: c.clamp,
            supply_v: self.supply_v,
            release_a: c.release_a,
            pull_in_a: c.settings.pull_in_a,
            pull_in_source,
            pull_in_min_s: c.settings.pull_in_min_s,
            pull_in_max_s,
            hold,
            pwm_frequency_hz: self.pwm_frequency_hz,
            current_sense: self.sense.current,
            supply_v_per_count: self.sense.supply_v_per_count,
            supply_zero_counts: self.sense.supply_zero_counts,
            monitor: c.settings.monitor,
            trip: c.trip_params,
        })
    }

    /// The motor inputs.
    ///
    /// # Errors
    ///
    /// The system is not a motor bridge.
    pub fn motor(&self) -> Result<&super::MotorInputs, SetupError> {
        self.motor
            .as_ref()
            .ok_or_else(|| SetupError::new("system: a motor firmware needs [system.motor]"))
    }

    /// The plan of a [`lenz::drive::MotorDriver`] for this system with `settings` (a user's
    /// own, or `[controller.motor]`'s in [`super::MotorInputs::settings`]): the nominal motor,
    /// the sense scaling, the bridge guard's limits at the highest supply and the coldest
    /// winding of `file` (see [`super::motor::driver_params`]).
    ///
    /// # Errors
    ///
    /// The system is not a motor bridge; the resume margin's bound rejects a value.
    pub fn motor_driver_params(
        &self,
        file: &File,
        settings: &super::MotorSettings,
    ) -> Result<lenz::drive::MotorDriverParams, SetupError> {
        let m = self.motor()?;
        super::motor::driver_params(file, self, m, settings)
    }

    /// Current reading → µA, as the firmware computes it.
    #[must_use]
    pub fn current_ua(&self, counts: u16) -> i32 {
        self.sense.current.to_ua(counts)
    }

    /// Supply reading → mV, as the firmware computes it (one multiply, one shift; negative
    /// readings below the zero count give 0).
    #[must_use]
    pub fn supply_mv(&self, counts: u16) -> i32 {
        let zero = self.sense.supply_zero_counts.round() as i64;
        let d = i64::from(counts) - zero;
        ((d * i64::from(self.sense.supply_mv_per_count_q16)) >> 16).clamp(0, i64::from(i32::MAX))
            as i32
    }
}

/// The firmware inputs of `file` planned at `temp_c`.
///
/// # Errors
///
/// A kernel's constructor rejects a value (named, under the table it came from).
pub fn inputs(file: &File, temp_c: f64) -> Result<FirmwareInputs, SetupError> {
    let s = &file.system;
    let nominal = sense::nominal(file);
    let apc = nominal.current.units_per_count() as f32;
    let zero = nominal.current.zero_counts() as f32;
    let max_code = nominal.current.max_code();
    let current = SenseScale::new(
        apc,
        zero,
        RAIL_MARGIN_COUNTS,
        max_code.saturating_sub(RAIL_MARGIN_COUNTS),
    )
    .map_err(crate::scenario::run::lenz_err(file, "system.sense", None))?;
    let supply_v_per_count = nominal.supply.units_per_count() as f32;
    let sense = SenseInputs {
        amps_per_count: apc,
        current_zero_counts: zero,
        current,
        supply_v_per_count,
        supply_zero_counts: nominal.supply.zero_counts() as f32,
        supply_mv_per_count_q16: (f64::from(supply_v_per_count) * 1000.0 * 65536.0).round() as i32,
        output_v_per_count: nominal.output.units_per_count() as f32,
        adc_max_counts: max_code,
    };
    let tick_s = s.tick.get() as f32;
    let temp = temp_c as f32;
    let coil = match (s.coil, s.clamp) {
        (Some(c), Some(k)) => Some(coil_inputs(file, &c, &k, &sense, tick_s, temp)?),
        _ => None,
    };
    let boost = match &s.boost {
        Some(b) => Some(boost_inputs(file, b, &sense)?),
        None => None,
    };
    let motor = match &s.motor {
        Some(m) => Some(super::motor::inputs(file, m)?),
        None => None,
    };
    Ok(FirmwareInputs {
        tick_s,
        pwm_frequency_hz: s.pwm_frequency.get() as f32,
        temp_c: temp,
        supply_v: coil::supply_range(file)?,
        supply_nominal_v: s.supply.nominal.get() as f32,
        sense,
        coil,
        boost,
        motor,
    })
}

/// The coil firmware's settings: `[controller.coil]`, or derived (module docs).
fn settings(file: &File, c: &scenario::Coil, sense: &SenseInputs, tick_s: f32) -> CoilSettings {
    if let Controller::Coil(k) = &file.controller {
        let m = &k.monitor;
        return CoilSettings {
            pull_in_a: k.pull_in_current.get() as f32,
            pull_in_min_s: k.pull_in_min_time.get() as f32,
            hold_duty: k.hold_duty.get() as f32,
            trip_a: k.trip_current.get() as f32,
            monitor: MonitorParams {
                abs_tol_a: m.abs_tol.get() as f32,
                rel_tol: m.rel_tol.get() as f32,
                open_min_estimate_a: m.open_min_estimate.get() as f32,
                open_max_a: m.open_max.get() as f32,
                persistence: m.persistence,
                stuck_samples: m.stuck_samples,
                stuck_min_change_a: m.stuck_min_change.get() as f32,
            },
        };
    }
    let full_scale_a = sense.amps_per_count
        * f32::from(sense.adc_max_counts)
        * (1.0 - sense.current_zero_counts / f32::from(sense.adc_max_counts.max(1)));
    let rating = file
        .system
        .ratings
        .switch_current
        .map_or(f32::INFINITY, |r| r.get() as f32);
    let pull_in = c.pull_in_current.get() as f32;
    let release = c.release_current.get() as f32;
    CoilSettings {
        pull_in_a: pull_in,
        pull_in_min_s: 0.0,
        hold_duty: 1.0,
        trip_a: rating.min(0.9 * full_scale_a),
        monitor: MonitorParams {
            abs_tol_a: (0.1 * pull_in).max(8.0 * sense.amps_per_count),
            rel_tol: 0.2,
            open_min_estimate_a: release,
            open_max_a: 0.25 * release,
            persistence: 5,
            stuck_samples: (0.1 / tick_s).round().clamp(1.0, f32::from(u16::MAX)) as u16,
            stuck_min_change_a: release,
        },
    }
}

fn coil_inputs(
    file: &File,
    c: &scenario::Coil,
    k: &scenario::ClampSpec,
    sense: &SenseInputs,
    tick_s: f32,
    temp_c: f32,
) -> Result<CoilInputs, SetupError> {
    let model = coil::coil_model(file, c)?;
    let clamp = clamp::core_clamp(k);
    let release_a = c.release_current.get() as f32;
    // A tracked switch-off: the off-timer's estimator has the clamp's off path. Unclamped, the
    // ring is not tracked: the estimator decays through the winding alone.
    let (estimator, off_timer) = match clamp {
        lenz::turnoff::Clamp::Unclamped { .. } => (
            EstimatorConfig::with_clamp(&model, temp_c, tick_s, 0.0, 0.0, false)
                .map_err(crate::scenario::run::lenz_err(file, "system.coil", None))?,
            None,
        ),
        _ => {
            let t = TrackingOffTimerConfig::new(&model, temp_c, tick_s, &clamp, release_a)
                .map_err(crate::scenario::run::lenz_err(file, "system.clamp", None))?;
            (*t.estimator(), Some(t))
        }
    };
    let st = settings(file, c, sense, tick_s);
    let table = match file.controller {
        Controller::Coil(_) => "controller.coil",
        _ => "system.sense",
    };
    let monitor = MonitorConfig::new(sense.current, &st.monitor)
        .map_err(crate::scenario::run::lenz_err(file, table, None))?;
    let zero = sense.current_zero_counts.round();
    let full_scale = sense.adc_max_counts.saturating_sub(zero as u16);
    let threshold = (st.trip_a / sense.amps_per_count).ceil();
    if !(threshold >= 1.0 && threshold < f32::from(full_scale)) {
        return Err(SetupError::new(format!(
            "{table}: trip current {} A lies outside the current channel's range ({} … {} A)",
            st.trip_a,
            sense.amps_per_count,
            sense.amps_per_count * f32::from(full_scale)
        )));
    }
    let trip_params = TripParams {
        sample_period_s: tick_s,
        amps_per_count: sense.amps_per_count,
        instantaneous_counts: threshold as u16,
        full_scale_counts: full_scale,
        blanking_s: 0.0,
        persistence_n: 1,
        persistence_m: 1,
        stuck_samples: 0,
        inverse: None,
        thermal: None,
        retries: 0,
        retry_delay_s: 0.0,
    };
    let trip =
        TripConfig::new(&trip_params).map_err(crate::scenario::run::lenz_err(file, table, None))?;
    let movement = match &c.armature {
        Some(a) => Some(movement_inputs(
            file,
            a,
            &model,
            tick_s,
            sense.amps_per_count,
            st.pull_in_min_s + crate::controllers::PULL_IN_GRACE_S,
            temp_c,
        )?),
        None => None,
    };
    Ok(CoilInputs {
        coil: model,
        clamp,
        pull_in_a: c.pull_in_current.get() as f32,
        release_a,
        must_hold_a: c.hold_current.map(|h| h.get() as f32),
        settings: st,
        estimator,
        off_timer,
        monitor,
        trip_params,
        trip,
        movement,
    })
}

fn boost_inputs(
    file: &File,
    b: &scenario::BoostStage,
    sense: &SenseInputs,
) -> Result<BoostInputs, SetupError> {
    let stage = super::plan::boost_stage(file, b)?;
    let duty_limiter = match &file.controller {
        Controller::Boost(c) => Some(
            DutyLimiterConfig::new(
                &stage,
                &super::plan::duty_limiter_params(file, b, c, sense)?,
            )
            .map_err(crate::scenario::run::lenz_err(
                file,
                "controller.boost",
                None,
            ))?,
        ),
        Controller::Coil(_) | Controller::Motor(_) | Controller::Own => None,
    };
    Ok(BoostInputs {
        stage,
        duty_limiter,
    })
}
