//! Door-lock solenoid firmware: an example of a user's own crate checked by lenz.
//!
//! The greenhouse's door lock is a 12 V solenoid on one low-side switch with a freewheel diode
//! (every value in `door-lock.toml` is invented for the example). This module is what would run
//! in the control interrupt on the chip: `no_std`, integer only, no division, no allocation, no
//! panic, built on the `lenz` kernels:
//!
//! 1. Convert the supply reading to mV (one multiply, one shift).
//! 2. Advance the current estimator with the drive the previous tick applied. In PWM hold it
//!    gets the tick's average coil voltage `D·V_s − (1 − D)·V_f` (freewheel diode).
//! 3. Feed the previous tick's current reading to the trip detector (instantaneous
//!    overcurrent) and, against the estimate for that tick, to the plausibility monitor. Either
//!    latches the lock off with its cause ([`LockFault`]).
//! 4. `Idle` → (unlock request) → `PullIn` at full drive until the estimate reaches the pull-in
//!    setting after the armature's travel time → `Hold` at the hold duty → (request off or a
//!    fault) → `Releasing`: the tracking off-timer follows the decay, and only when it reports
//!    the release does the lock accept a new request.
//!
//! The configuration ([`LockConfig`]) is planned once: at init on a chip with an FPU, or on the
//! host and emitted as constants. Its kernel parts come from the `lenz` plan constructors; the
//! lock's own settings are [`LockSettings`].
//!
//! # Caution
//!
//! A solenoid switched off without its freewheel diode kicks the switch node far above the
//! supply; keep the diode fitted when you try this on hardware.

#![cfg_attr(not(test), no_std)]
// What the tick may not do, checked by clippy in CI: no float, no division, no panic, no
// arithmetic that could overflow.
#![deny(
    clippy::float_arithmetic,
    clippy::integer_division,
    clippy::arithmetic_side_effects,
    clippy::panic,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing
)]

use lenz::kernel::{
    EstimatorState, Fault, MonitorConfig, MonitorState, OffStatus, OffTimerState,
    TrackingOffTimerConfig, TripConfig, TripState,
};

/// Duty 1 in Q16.
pub const DUTY_ONE_Q16: u32 = 1 << 16;

/// The lock's own settings, in the kernels' integer units.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LockSettings {
    /// Pull-in ends when the estimate reaches this, µA.
    pub pull_in_ua: i32,
    /// … and not before this many ticks (armature travel).
    pub pull_in_min_ticks: u32,
    /// After this many ticks the lock holds even without reaching the pull-in current.
    pub pull_in_max_ticks: u32,
    /// Hold duty, Q16 (65536 = 1).
    pub hold_duty_q16: u32,
}

/// Everything the lock needs, planned once.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LockConfig {
    /// Off-timer, with the coil's estimator inside (on path and the diode's off path).
    pub off_timer: TrackingOffTimerConfig,
    /// Plausibility monitor (with the current sense scale).
    pub monitor: MonitorConfig,
    /// Trip detector.
    pub trip: TripConfig,
    /// Current reading at zero current, counts.
    pub current_zero_counts: u16,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: u16,
    /// Supply per count, mV, Q16.
    pub supply_mv_per_count_q16: u32,
    /// The lock's settings.
    pub settings: LockSettings,
}

/// What the switch does during the next tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Drive {
    /// Off.
    Off,
    /// Fully on.
    On,
    /// PWM at this duty, Q16.
    Pwm {
        /// Duty, Q16 (65536 = 1).
        duty_q16: u32,
    },
}

/// Where the lock is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Phase {
    /// Off and released: a request starts a pull-in.
    Idle,
    /// Full drive.
    PullIn,
    /// PWM hold.
    Hold,
    /// Off, the current still decaying.
    Releasing,
}

/// Why the lock latched off.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LockFault {
    /// The trip detector tripped.
    Trip(lenz::kernel::Cause),
    /// The plausibility monitor saw a fault.
    Plausibility(Fault),
}

/// One lock channel.
#[derive(Debug, Clone)]
pub struct Lock {
    cfg: LockConfig,
    est: EstimatorState,
    mon: MonitorState,
    trip: TripState,
    off: OffTimerState,
    phase: Phase,
    ticks: u32,
    applied: Drive,
    prev_estimate_ua: i32,
    fault: Option<LockFault>,
}

impl Lock {
    /// A lock in its safe state: off, released, no fault.
    #[must_use]
    pub const fn new(cfg: LockConfig) -> Lock {
        Lock {
            cfg,
            est: EstimatorState::new(),
            mon: MonitorState::new(),
            trip: TripState::new(),
            off: OffTimerState::new(),
            phase: Phase::Idle,
            ticks: 0,
            applied: Drive::Off,
            prev_estimate_ua: 0,
            fault: None,
        }
    }

    /// The estimated coil current, µA.
    #[must_use]
    pub const fn estimate_ua(&self) -> i32 {
        self.est.current_ua()
    }

    /// The latched fault.
    #[must_use]
    pub const fn fault(&self) -> Option<LockFault> {
        self.fault
    }

    /// The phase.
    #[must_use]
    pub const fn phase(&self) -> Phase {
        self.phase
    }

    fn supply_mv(&self, counts: u16) -> i32 {
        let d = counts.saturating_sub(self.cfg.supply_zero_counts) as u32;
        (d.saturating_mul(self.cfg.supply_mv_per_count_q16) >> 16) as i32
    }

    /// One control tick: the unlock request, the current and supply readings taken during the
    /// previous tick; returns the drive for this tick.
    pub fn tick(&mut self, unlock: bool, current_counts: u16, supply_counts: u16) -> Drive {
        let c = &self.cfg;
        let est_cfg = c.off_timer.estimator();
        let supply_mv = self.supply_mv(supply_counts);
        let estimate_ua = match self.applied {
            Drive::Off => est_cfg.update(&mut self.est, false, supply_mv),
            Drive::On => est_cfg.update(&mut self.est, true, supply_mv),
            Drive::Pwm { duty_q16 } => {
                // Average coil voltage of the tick: D·V_s − (1 − D)·V_f, 32-bit products of
                // 16-bit factors (they cannot saturate; the saturating forms say so).
                let d = duty_q16.min(DUTY_ONE_Q16);
                let vs = (supply_mv.clamp(0, 65_535)) as u32;
                let vf = (est_cfg.off_path().clamp_mv.clamp(0, 65_535)) as u32;
                let on = vs.saturating_mul(d.min(65_535)) >> 16;
                let off = vf.saturating_mul(DUTY_ONE_Q16.saturating_sub(d).min(65_535)) >> 16;
                est_cfg.update(&mut self.est, true, (on as i32).saturating_sub(off as i32))
            }
        };
        let reading = current_counts.saturating_sub(c.current_zero_counts);
        let switch_was_on = self.applied != Drive::Off;
        // Without retries the detector latches at its trip: the cause is kept from then on.
        if let lenz::kernel::Verdict::Trip(e) =
            c.trip.update(&mut self.trip, reading, switch_was_on)
        {
            self.fault.get_or_insert(LockFault::Trip(e.cause));
        }
        if let Some(f) = c
            .monitor
            .update(&mut self.mon, self.prev_estimate_ua, current_counts)
        {
            self.fault.get_or_insert(LockFault::Plausibility(f));
        }
        self.prev_estimate_ua = estimate_ua;

        if self.phase == Phase::Releasing
            && c.off_timer.update(&mut self.off, supply_mv) == OffStatus::Released
        {
            self.phase = Phase::Idle;
        }
        let s = c.settings;
        let drive = if self.fault.is_some() || !unlock {
            if matches!(self.phase, Phase::PullIn | Phase::Hold) {
                c.off_timer.start(&mut self.off, estimate_ua);
                self.phase = Phase::Releasing;
            }
            Drive::Off
        } else {
            match self.phase {
                Phase::Releasing => Drive::Off,
                Phase::Idle => {
                    self.phase = Phase::PullIn;
                    self.ticks = 0;
                    Drive::On
                }
                Phase::PullIn => {
                    self.ticks = self.ticks.saturating_add(1);
                    let reached = self.ticks >= s.pull_in_min_ticks && estimate_ua >= s.pull_in_ua;
                    if reached || self.ticks >= s.pull_in_max_ticks {
                        self.phase = Phase::Hold;
                        Drive::Pwm {
                            duty_q16: s.hold_duty_q16,
                        }
                    } else {
                        Drive::On
                    }
                }
                Phase::Hold => Drive::Pwm {
                    duty_q16: s.hold_duty_q16,
                },
            }
        };
        self.applied = drive;
        drive
    }
}
