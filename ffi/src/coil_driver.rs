//! The coil driver of `lenz::drive` ([`CoilDriver`]): raw values, the opaque configuration,
//! the driver on a PWM channel whose duty the caller applies, and the per-tick update.
//!
//! In C the driver does not own the timer: [`lenz_coil_driver_update`] returns the duty for
//! the next tick (counts of the `max_duty` given at start), and the firmware writes it to its
//! PWM compare register. The duty is always the one the Rust driver wrote to its output.

use core::convert::Infallible;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::{
    CoilDriver, CoilDriverConfig, CoilDriverRaw, CoilFault, CoilPhase, CoilSense, HoldEstimatorRaw,
    HoldMode, PullInSource,
};

use crate::LenzStatus;
use crate::monitor::{LenzFault, LenzMonitorRaw};
use crate::offtimer::LenzTrackingOffTimerRaw;
use crate::opaque::{Out, get, inner, inner_mut, opaque};
use crate::trip::{LenzCause, LenzTripRaw};

/// Words of `LenzCoilDriverConfig`.
pub const LENZ_COIL_DRIVER_CONFIG_WORDS: usize = 220;
/// Words of `LenzCoilDriver` (its own copy of the configuration and its state).
pub const LENZ_COIL_DRIVER_WORDS: usize = 256;
/// `LenzCoilDriver` in 8-byte units (the driver holds 64-bit values: 8-byte alignment).
pub const LENZ_COIL_DRIVER_DWORDS: usize = 128;
const _: () = assert!(2 * LENZ_COIL_DRIVER_DWORDS == LENZ_COIL_DRIVER_WORDS);

/// The raw values of the hold estimator (Rust: `lenz::drive::HoldEstimatorRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzHoldEstimatorRaw {
    /// `1 − exp(−T·R_ref/L)`, Q31.
    pub step_q31: i32,
    /// `1/R_ref`, µA per mV, Q16.
    pub conductance_q16: i32,
    /// The reference duty, Q16 fraction (65536 = 1).
    pub reference_duty_q16: u32,
    /// `R_on − R_off`, mV per µA, Q24 (signed).
    pub delta_r_q24: i32,
    /// Bound of the estimate's error in hold, µA.
    pub error_bound_ua: i32,
}

/// The raw values of a coil driver configuration, as a constant can hold them (Rust:
/// `lenz::drive::CoilDriverRaw`; `lenz emit` or `lenz sim --firmware` produce them from a
/// plan).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzCoilDriverRaw {
    /// The off-timer, with the coil's estimator.
    pub off_timer: LenzTrackingOffTimerRaw,
    /// The hold estimator.
    pub hold: LenzHoldEstimatorRaw,
    /// The plausibility monitor, with the current sense scale.
    pub monitor: LenzMonitorRaw,
    /// The trip detector.
    pub trip: LenzTripRaw,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: u16,
    /// Supply per count, mV, Q16.
    pub supply_mv_per_count_q16: i32,
    /// Pull-in current, µA.
    pub pull_in_ua: i32,
    /// What must reach the pull-in current: 0 the estimate, anything else the measurement.
    pub pull_in_measured: u8,
    /// Shortest pull-in, ticks.
    pub pull_in_min_ticks: u32,
    /// Longest pull-in, ticks.
    pub pull_in_max_ticks: u32,
    /// Hold: 0 fixed duty, anything else the regulated current.
    pub hold_regulated: u8,
    /// Hold current of the regulation, µA.
    pub hold_current_ua: i32,
    /// Proportional gain of the regulation, Q32 duty per µA.
    pub hold_kp_q32: i32,
    /// Integral gain of the regulation, Q32 duty per µA per tick.
    pub hold_ki_q32: i32,
}

/// Coil driver settings (opaque; fill with `lenz_coil_driver_init`).
#[repr(C)]
pub struct LenzCoilDriverConfig {
    opaque: [u32; LENZ_COIL_DRIVER_CONFIG_WORDS],
}

/// One coil driver (opaque; fill with `lenz_coil_driver_start`). Holds its own copy of the
/// configuration.
#[repr(C)]
pub struct LenzCoilDriver {
    opaque: [u64; LENZ_COIL_DRIVER_DWORDS],
}

/// The PWM channel of the C driver: keeps the duty, the caller applies it.
#[derive(Debug)]
pub struct DutyOut {
    duty: u16,
    max: u16,
}

impl ErrorType for DutyOut {
    type Error = Infallible;
}

impl SetDutyCycle for DutyOut {
    fn max_duty_cycle(&self) -> u16 {
        self.max
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.duty = duty;
        Ok(())
    }
}

opaque!(
    LenzCoilDriverConfig,
    CoilDriverConfig,
    LENZ_COIL_DRIVER_CONFIG_WORDS
);
opaque!(
    LenzCoilDriver,
    CoilDriver<CoilDriverConfig, DutyOut>,
    LENZ_COIL_DRIVER_WORDS
);

/// The driver's phase (Rust: `lenz::drive::CoilPhase`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzCoilPhase {
    /// Off, released: a demand energizes the coil.
    Idle = 0,
    /// Full drive until the pull-in current and the minimum pull-in time.
    PullIn = 1,
    /// Held by the PWM duty.
    Hold = 2,
    /// Off, the current still decaying: a demand waits.
    Releasing = 3,
    /// Latched off by a fault until `lenz_coil_driver_clear_fault`.
    Faulted = 4,
}

/// Why the driver latched off (Rust: `lenz::drive::CoilFault`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzCoilFault {
    /// No fault.
    None = 0,
    /// The trip detector latched (cause in `trip_cause`).
    Trip = 1,
    /// The plausibility monitor raised a fault (which in `plausibility`).
    Plausibility = 2,
    /// The switch output reported an error (not possible through this API).
    Output = 3,
    /// The armature did not move by the movement detector's deadline (not possible through
    /// this API, which plans no movement detector).
    Stuck = 4,
}

/// What a tick of the driver gives back.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzCoilDriverOutput {
    /// Duty for the next tick, counts of the `max_duty` given at start.
    pub duty: u16,
    /// Phase after the tick.
    pub phase: LenzCoilPhase,
    /// Latched fault.
    pub fault: LenzCoilFault,
    /// The trip's cause when `fault` is `LENZ_COIL_FAULT_TRIP`.
    pub trip_cause: LenzCause,
    /// The monitor's fault when `fault` is `LENZ_COIL_FAULT_PLAUSIBILITY`.
    pub plausibility: LenzFault,
    /// 1 once the off-timer has confirmed the release after the last switch-off.
    pub released: u8,
    /// 1 if the last pull-in ended at its maximum time.
    pub pull_in_timed_out: u8,
    /// Estimated coil current, µA.
    pub estimate_ua: i32,
}

impl From<LenzCoilDriverRaw> for CoilDriverRaw {
    fn from(c: LenzCoilDriverRaw) -> Self {
        Self {
            off_timer: c.off_timer.into(),
            hold: HoldEstimatorRaw {
                step_q31: c.hold.step_q31,
                conductance_q16: c.hold.conductance_q16,
                reference_duty_q16: c.hold.reference_duty_q16,
                delta_r_q24: c.hold.delta_r_q24,
                error_bound_ua: c.hold.error_bound_ua,
            },
            monitor: c.monitor.into(),
            trip: c.trip.into(),
            supply_zero_counts: c.supply_zero_counts,
            supply_mv_per_count_q16: c.supply_mv_per_count_q16,
            pull_in_ua: c.pull_in_ua,
            pull_in_source: if c.pull_in_measured != 0 {
                PullInSource::Measured
            } else {
                PullInSource::Estimate
            },
            pull_in_min_ticks: c.pull_in_min_ticks,
            pull_in_max_ticks: c.pull_in_max_ticks,
            hold_mode: if c.hold_regulated != 0 {
                HoldMode::Current
            } else {
                HoldMode::Duty
            },
            hold_current_ua: c.hold_current_ua,
            hold_kp_q32: c.hold_kp_q32,
            hold_ki_q32: c.hold_ki_q32,
            // The C API plans no armature movement detector (the driver keeps its timed
            // pull-in).
            movement: None,
        }
    }
}

impl From<CoilDriverRaw> for LenzCoilDriverRaw {
    fn from(r: CoilDriverRaw) -> Self {
        Self {
            off_timer: r.off_timer.into(),
            hold: LenzHoldEstimatorRaw {
                step_q31: r.hold.step_q31,
                conductance_q16: r.hold.conductance_q16,
                reference_duty_q16: r.hold.reference_duty_q16,
                delta_r_q24: r.hold.delta_r_q24,
                error_bound_ua: r.hold.error_bound_ua,
            },
            monitor: r.monitor.into(),
            trip: r.trip.into(),
            supply_zero_counts: r.supply_zero_counts,
            supply_mv_per_count_q16: r.supply_mv_per_count_q16,
            pull_in_ua: r.pull_in_ua,
            pull_in_measured: u8::from(r.pull_in_source == PullInSource::Measured),
            pull_in_min_ticks: r.pull_in_min_ticks,
            pull_in_max_ticks: r.pull_in_max_ticks,
            hold_regulated: u8::from(r.hold_mode == HoldMode::Current),
            hold_current_ua: r.hold_current_ua,
            hold_kp_q32: r.hold_kp_q32,
            hold_ki_q32: r.hold_ki_q32,
        }
    }
}

fn output(d: &CoilDriver<CoilDriverConfig, DutyOut>) -> LenzCoilDriverOutput {
    let (fault, trip_cause, plausibility) = match d.fault() {
        None => (LenzCoilFault::None, LenzCause::None, LenzFault::None),
        Some(CoilFault::Trip(c)) => (LenzCoilFault::Trip, c.into(), LenzFault::None),
        Some(CoilFault::Plausibility(f)) => {
            (LenzCoilFault::Plausibility, LenzCause::None, Some(f).into())
        }
        Some(CoilFault::Output) => (LenzCoilFault::Output, LenzCause::None, LenzFault::None),
        Some(CoilFault::Stuck) => (LenzCoilFault::Stuck, LenzCause::None, LenzFault::None),
    };
    LenzCoilDriverOutput {
        duty: d.output().duty,
        phase: match d.phase() {
            CoilPhase::Idle => LenzCoilPhase::Idle,
            CoilPhase::PullIn => LenzCoilPhase::PullIn,
            CoilPhase::Hold => LenzCoilPhase::Hold,
            CoilPhase::Releasing => LenzCoilPhase::Releasing,
            CoilPhase::Faulted => LenzCoilPhase::Faulted,
        },
        fault,
        trip_cause,
        plausibility,
        released: u8::from(d.released()),
        pull_in_timed_out: u8::from(d.pull_in_timed_out()),
        estimate_ua: d.estimate_ua(),
    }
}

/// Loads a configuration from raw values (`CoilDriverConfig::from_raw`: any values are safe to
/// run).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg_out` writable, `raw` readable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_coil_driver_init(
    cfg_out: *mut LenzCoilDriverConfig,
    raw: *const LenzCoilDriverRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(CoilDriverConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// The raw values of a configuration.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_coil_driver_init`, `raw_out`
/// writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_coil_driver_raw(
    cfg: *const LenzCoilDriverConfig,
    raw_out: *mut LenzCoilDriverRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `raw_out` is writable by the contract above.
        let out = unsafe { Out::new(raw_out) }?;
        out.set(cfg.raw().into());
        Ok(())
    })())
}

/// Starts a driver with a copy of `cfg` on a PWM of `max_duty` counts, at duty 0 (off).
///
/// Writes `ok_out` = 1, or 0 when the PWM's resolution cannot set the hold duty within 1 % of
/// full scale (`max_duty` 0 or too small); then the driver is not started and must not be
/// used.
///
/// # Safety
///
/// Each pointer is null or valid: `drv_out` and `ok_out` writable, `cfg` initialised by
/// `lenz_coil_driver_init`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_coil_driver_start(
    drv_out: *mut LenzCoilDriver,
    cfg: *const LenzCoilDriverConfig,
    max_duty: u16,
    ok_out: *mut u8,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `drv_out` is writable by the contract above.
        let out = unsafe { Out::new(drv_out) }?;
        // SAFETY: `ok_out` is writable by the contract above.
        let ok = unsafe { Out::new(ok_out) }?;
        let pwm = DutyOut {
            duty: 0,
            max: max_duty,
        };
        match CoilDriver::new(*cfg, pwm) {
            Ok(d) => {
                out.set_inner(d);
                ok.set(1);
            }
            Err(_) => ok.set(0),
        }
        Ok(())
    })())
}

/// One control tick ([`CoilDriver::update`]): the application's demand and the tick's
/// current and supply readings in, the duty for the next tick and the driver's status out.
///
/// # Safety
///
/// Each pointer is null or valid: `drv` started by `lenz_coil_driver_start`, `out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_coil_driver_update(
    drv: *mut LenzCoilDriver,
    demand: bool,
    current_counts: u16,
    supply_counts: u16,
    out: *mut LenzCoilDriverOutput,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `drv` is started by the contract above.
        let d = unsafe { inner_mut(drv) }?;
        // SAFETY: `out` is writable by the contract above.
        let o = unsafe { Out::new(out) }?;
        // The output cannot fail (`Infallible`).
        let _ = d.update(
            demand,
            CoilSense {
                current_counts,
                supply_counts,
            },
        );
        o.set(output(d));
        Ok(())
    })())
}

/// Clears a latched fault (`CoilDriver::clear_fault`): the coil is energized again only on
/// demand and after the release.
///
/// # Safety
///
/// `drv` is null or started by `lenz_coil_driver_start`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_coil_driver_clear_fault(drv: *mut LenzCoilDriver) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `drv` is started by the contract above.
        let d = unsafe { inner_mut(drv) }?;
        d.clear_fault();
        Ok(())
    })())
}
