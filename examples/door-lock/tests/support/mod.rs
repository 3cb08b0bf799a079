//! The lock in the closed loop: its configuration from the firmware inputs, and the adapter
//! from the harness's tick to the firmware's.

use door_lock::{Drive, Lock, LockConfig, LockFault, LockSettings};
use lenz_harness::FirmwareInputs;
use lenz_harness::closed_loop::{Actuation, Controller, Sensed, Telemetry, TripCause};

/// The scenario file, beside the crate's manifest.
pub const FILE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/door-lock.toml");

/// The lock's hold duty: about 0.3 A at the hot, low-supply corner, above the 0.25 A
/// must-hold current.
pub const HOLD_DUTY: f32 = 0.45;

/// A hold duty that is too low: about 0.14 A at the same corner, below the must-hold.
pub const HOLD_DUTY_TOO_LOW: f32 = 0.22;

/// The lock's configuration, as its init code computes it from the firmware inputs (on the
/// chip: the same constructors at init, or constants emitted on the host).
pub fn config(fw: &FirmwareInputs, hold_duty: f32) -> LockConfig {
    let coil = fw.coil().expect("the door lock is a coil drive");
    let ticks = |s: f32| (s / fw.tick_s).ceil() as u32;
    LockConfig {
        off_timer: coil.off_timer.expect("a freewheel diode is tracked"),
        monitor: coil.monitor,
        trip: coil.trip,
        current_zero_counts: fw.sense.current_zero_counts.round() as u16,
        supply_zero_counts: fw.sense.supply_zero_counts.round() as u16,
        supply_mv_per_count_q16: fw.sense.supply_mv_per_count_q16 as u32,
        settings: LockSettings {
            // 5 % above the coil's pull-in current; the armature travels in 8 ms.
            pull_in_ua: (coil.pull_in_a * 1.05 * 1e6).round() as i32,
            pull_in_min_ticks: ticks(8e-3),
            pull_in_max_ticks: ticks(50e-3),
            hold_duty_q16: (hold_duty * 65536.0).round() as u32,
        },
    }
}

/// The firmware under test, as the harness calls it.
pub struct InTheLoop(pub Lock);

impl InTheLoop {
    /// The lock with the given hold duty, from the firmware inputs.
    pub fn new(fw: &FirmwareInputs, hold_duty: f32) -> InTheLoop {
        InTheLoop(Lock::new(config(fw, hold_duty)))
    }
}

impl Controller for InTheLoop {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        match self.0.tick(s.demand, s.current_counts, s.supply_counts) {
            Drive::Off => Actuation::OFF,
            Drive::On => Actuation::ON,
            Drive::Pwm { duty_q16 } => Actuation::pwm(f64::from(duty_q16) / 65536.0),
        }
    }

    fn telemetry(&self) -> Telemetry {
        Telemetry {
            estimate_a: Some(f64::from(self.0.estimate_ua()) * 1e-6),
            tripped: self.0.fault().is_some(),
            trip_cause: self.0.fault().map(|f| match f {
                LockFault::Trip(c) => TripCause::from(c),
                LockFault::Plausibility(k) => TripCause::Plausibility(k),
            }),
            ..Telemetry::default()
        }
    }
}
