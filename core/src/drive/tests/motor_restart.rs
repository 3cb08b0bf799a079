//! The bridge motor driver's jam detector across a restart by the guard: a jammed rotor whose
//! speed estimate strays past the reversal speed now and then (the guard stops and restarts
//! the bridge each time) must still trip; the start blanking follows the application's
//! command, not the guard's restarts.

use super::motor_support::*;
use crate::drive::{MotorDriver, MotorDriverConfig, MotorDriverFault, MotorSense};
use crate::kernel::{BridgeMode, MotorFault, SpeedEstimatorRaw};

struct Pwm;
impl embedded_hal::pwm::ErrorType for Pwm {
    type Error = core::convert::Infallible;
}
impl embedded_hal::pwm::SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }
    fn set_duty_cycle(&mut self, _: u16) -> Result<(), Self::Error> {
        Ok(())
    }
}

struct Pin;
impl embedded_hal::digital::ErrorType for Pin {
    type Error = core::convert::Infallible;
}
impl embedded_hal::digital::OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Self::Error> {
        Ok(())
    }
}

const SUPPLY_V: f64 = 12.0;
/// The plan's loop resistance (the vent at 20 °C, no bridge resistance), Ω.
const R: f64 = 1.5;
const K: f64 = 0.03;

/// The vent's driver with a static speed estimator (`ê = u − R·i`: no inductive term), so a
/// test can choose the estimate through the current it reports.
fn config() -> MotorDriverConfig {
    let mut raw = vent_config().raw();
    raw.speed = SpeedEstimatorRaw {
        gain_end_q24: (R * 1e-3 * 16_777_216.0).round() as i32,
        gain_start_q24: 0,
        ..raw.speed
    };
    MotorDriverConfig::from_raw(raw)
}

/// A stalled rotor under a forward request: the current is what the bridge's mean voltage
/// drives through the winding, except every `spike_every` ticks a reading that puts the
/// estimate at −30 rad/s (past the 20 rad/s reversal speed: the guard stops and restarts).
/// Returns the tick of the jam trip, if any, within `ticks`.
fn jammed(ticks: u32, spike_every: u32) -> Option<u32> {
    let cfg = config();
    let mut drv = MotorDriver::new(&cfg, Pwm, Pin, Pin)
        .map_err(|(e, _)| e)
        .unwrap();
    let mut restarts = 0;
    let mut was_driven = false;
    for n in 0..ticks {
        let c = drv.command();
        let u = match c.mode {
            BridgeMode::Forward => f64::from(c.duty_q16) / 65_536.0 * SUPPLY_V,
            _ => 0.0,
        };
        let driven = c.mode == BridgeMode::Forward;
        if driven && !was_driven && n > 0 {
            restarts += 1;
        }
        was_driven = driven;
        let w = if driven && n % spike_every == 0 {
            -30.0
        } else {
            0.0
        };
        let i = if driven { (u - K * w) / R } else { 0.0 };
        drv.update(
            65_536,
            MotorSense {
                current_counts: current_counts(i),
                supply_counts: supply_counts(SUPPLY_V),
            },
        )
        .unwrap();
        if let Some(f) = drv.fault() {
            assert_eq!(f, MotorDriverFault::Motor(MotorFault::Jam));
            assert!(restarts >= 1, "the guard never restarted the bridge");
            return Some(n);
        }
    }
    None
}

#[test]
fn a_guard_restart_does_not_blank_a_building_jam_again() {
    let cfg = config();
    let blank = cfg.jam().blank_ticks();
    let persist = cfg.jam().persist_ticks();
    // Spikes more often than the blanking lasts (but less often than the soft start takes
    // to reach the jam current, 3 A at 12 V: duty 0.375, about 200 ticks): each restart used
    // to blank the detector again, so it never tripped. Now the first blanking is the only
    // one, counted over driven ticks.
    let spike_every = 2 * blank / 3;
    let trip = jammed(6 * blank, spike_every);
    let trip = trip.expect("a jammed rotor restarted by the guard must still trip");
    // Bound: the blanking, the ticks held off by one restart, and the persistence.
    assert!(trip < blank + spike_every + persist, "{trip}");
    // Without spikes (no restarts) the trip comes after the blanking and the persistence.
    let plain = jammed(6 * blank, u32::MAX).expect("a plain jam trips");
    assert!(
        plain >= blank + persist && plain < blank + persist + 100,
        "{plain}"
    );
}
