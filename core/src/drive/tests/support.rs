//! Fixtures: the demo valve (invented values), plans per clamp kind and hold, a recording PWM.

extern crate std;

use std::vec::Vec;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};

use crate::bounds::Range;
use crate::coil::{Coil, CoilParams};
use crate::drive::hold::LoopModel;
use crate::drive::{CoilDriverConfig, CoilDriverParams, Hold, PullInSource};
use crate::kernel::{MonitorParams, SenseScale, TripParams};
use crate::turnoff::Clamp;

/// Current sense: 0.5 mA per count, zero current at 100 counts, 12-bit ADC.
pub const AMPS_PER_COUNT: f32 = 0.5e-3;
pub const OFFSET_COUNTS: u16 = 100;
/// Supply sense: 10 mV per count.
pub const SUPPLY_V_PER_COUNT: f32 = 0.01;
pub const TICK_S: f32 = 100e-6;
pub const TICK_NS: u64 = 100_000;

/// Demo valve of the greenhouse controller (invented): 120 mH, 32 Ω at 20 °C, a 0.5 Ω switch
/// with a 50 mV drop, a 0.1 Ω shunt.
pub fn valve() -> Coil {
    CoilParams::new(0.120, 32.0)
        .with_switch_resistance_ohm(0.5)
        .with_shunt_resistance_ohm(0.1)
        .with_switch_drop_v(0.05)
        .validate()
        .unwrap()
}

/// One of each clamp kind that has an averaged loop.
pub fn clamps() -> [Clamp; 4] {
    [
        Clamp::Diode { forward_v: 0.7 },
        Clamp::Zener {
            zener_v: 24.0,
            forward_v: 0.7,
        },
        Clamp::Switch { clamp_v: 45.0 },
        Clamp::Resistor {
            resistance_ohm: 100.0,
            forward_v: 0.7,
        },
    ]
}

/// The duty that holds `i_a` at 24 V with `clamp` (the averaged loop, plan side).
pub fn duty_for(clamp: &Clamp, i_a: f32) -> f32 {
    LoopModel::new(&valve(), 20.0, clamp)
        .unwrap()
        .duty_for(i_a, 24.0)
}

pub fn monitor() -> MonitorParams {
    MonitorParams {
        abs_tol_a: 0.05,
        rel_tol: 0.2,
        open_min_estimate_a: 0.1,
        open_max_a: 0.01,
        persistence: 5,
        stuck_samples: 2000,
        stuck_min_change_a: 0.05,
    }
}

pub fn trip() -> TripParams {
    TripParams {
        sample_period_s: TICK_S,
        amps_per_count: AMPS_PER_COUNT,
        // 1.5 A.
        instantaneous_counts: 3000,
        full_scale_counts: 4095 - OFFSET_COUNTS,
        blanking_s: 0.0,
        persistence_n: 1,
        persistence_m: 1,
        stuck_samples: 0,
        inverse: None,
        thermal: None,
        retries: 0,
        retry_delay_s: 0.0,
    }
}

/// The valve driver's plan: 20 kHz PWM, 10 kHz tick, pull-in to 0.45 A (at least 2 ms),
/// release below 75 mA.
pub fn params(clamp: Clamp, hold: Hold) -> CoilDriverParams {
    CoilDriverParams {
        coil: valve(),
        temp_c: 20.0,
        tick_s: TICK_S,
        clamp,
        supply_v: Range::new("supply_v", 21.6, 26.4).unwrap(),
        release_a: 0.075,
        pull_in_a: 0.45,
        pull_in_source: PullInSource::Estimate,
        pull_in_min_s: 2e-3,
        pull_in_max_s: 50e-3,
        hold,
        pwm_frequency_hz: 20e3,
        current_sense: SenseScale::new(AMPS_PER_COUNT, f32::from(OFFSET_COUNTS), 10, 4085).unwrap(),
        supply_v_per_count: SUPPLY_V_PER_COUNT,
        supply_zero_counts: 0.0,
        monitor: monitor(),
        trip: trip(),
    }
}

/// A fixed-duty hold at about 0.3 A at 24 V.
pub fn duty_hold(clamp: &Clamp) -> Hold {
    Hold::Duty {
        duty: duty_for(clamp, 0.3),
    }
}

/// A regulated hold at 0.3 A.
pub fn current_hold() -> Hold {
    Hold::Current {
        current_a: 0.3,
        kp_per_a: 0.5,
        ki_per_a_tick: 0.05,
    }
}

pub fn config(clamp: Clamp, hold: Hold) -> CoilDriverConfig {
    CoilDriverConfig::new(&params(clamp, hold)).unwrap()
}

/// The reading of a current, counts (rounded, saturated to the 12-bit range).
pub fn counts_of(i_a: f64) -> u16 {
    (f64::from(OFFSET_COUNTS) + i_a / f64::from(AMPS_PER_COUNT))
        .round()
        .clamp(0.0, 4095.0) as u16
}

/// The reading of a supply voltage, counts.
pub fn supply_counts(v: f64) -> u16 {
    (v / f64::from(SUPPLY_V_PER_COUNT)).round() as u16
}

/// An infallible PWM that records every duty written.
#[derive(Debug, Default)]
pub struct RecordingPwm {
    pub max: u16,
    pub duty: u16,
    pub writes: Vec<u16>,
}

impl RecordingPwm {
    pub fn new(max: u16) -> Self {
        Self {
            max,
            duty: 0,
            writes: Vec::new(),
        }
    }
}

impl ErrorType for RecordingPwm {
    type Error = core::convert::Infallible;
}

impl SetDutyCycle for RecordingPwm {
    fn max_duty_cycle(&self) -> u16 {
        self.max
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Self::Error> {
        self.duty = duty;
        self.writes.push(duty);
        Ok(())
    }
}
