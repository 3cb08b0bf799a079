//! Fixtures of the bridge motor driver: the demo vent motor (invented values), its plan, and
//! outputs that log every write in one sequence across the PWM and the two pins.

extern crate std;

use std::cell::RefCell;
use std::rc::Rc;
use std::vec::Vec;

use embedded_hal::digital::{self, OutputPin};
use embedded_hal::pwm::{self, SetDutyCycle};

use crate::drive::{MotorDriverConfig, MotorDriverParams};
use crate::kernel::{BridgeGuardParams, JamParams, SenseScale};
use crate::motor::Motor;

pub const TICK_S: f32 = 100e-6;
/// Current sense: 4 mA per count, zero at 2048 counts (±8 A), 12-bit ADC.
pub const AMPS_PER_COUNT: f64 = 4e-3;
pub const ZERO_COUNTS: u16 = 2048;
/// Supply sense: 10 mV per count.
pub const SUPPLY_V_PER_COUNT: f64 = 0.01;

/// The demo vent motor (invented): 2 mH, 1.5 Ω, 0.03 N·m/A, 2·10⁻⁵ kg·m², 10⁻⁶ N·m·s/rad.
pub fn vent() -> Motor {
    crate::motor::test_vent::vent()
}

/// Its driver on a 12 V bridge at a 10 kHz tick: peaks within 4 A at 12 V and 20 °C, two
/// ticks of dead time, reversal below 20 rad/s, brake probes every 5 ms; a jam is 3 A below
/// 20 rad/s for 2 ms after 60 ms of start blanking.
pub fn vent_params() -> MotorDriverParams {
    MotorDriverParams {
        motor: vent(),
        temp_c: 20.0,
        tick_s: TICK_S,
        speed_filter_s: 0.0,
        guard: BridgeGuardParams {
            supply_v: 12.0,
            temp_c: 20.0,
            max_temp_c: 20.0,
            load_torque_nm: 0.0,
            current_limit_a: 4.0,
            tick_s: TICK_S,
            dead_time_s: 200e-6,
            reverse_speed_rad_s: 20.0,
            probe_interval_s: 5e-3,
            resume_margin_rad_s: None,
        },
        jam: JamParams {
            jam_current_a: 3.0,
            jam_speed_rad_s: 20.0,
            persistence_s: 2e-3,
            blanking_s: 60e-3,
            overload_current_a: None,
            overload_s: 0.0,
            open_current_a: None,
            open_min_duty: 1.0,
            tick_s: TICK_S,
        },
        current_sense: SenseScale::new(AMPS_PER_COUNT as f32, f32::from(ZERO_COUNTS), 10, 4085)
            .unwrap(),
        supply_v_per_count: SUPPLY_V_PER_COUNT as f32,
        supply_zero_counts: 0.0,
    }
}

pub fn vent_config() -> MotorDriverConfig {
    MotorDriverConfig::new(&vent_params()).unwrap()
}

/// The reading of a winding current, counts (rounded, saturated to 12 bits).
pub fn current_counts(i_a: f64) -> u16 {
    (f64::from(ZERO_COUNTS) + i_a / AMPS_PER_COUNT)
        .round()
        .clamp(0.0, 4095.0) as u16
}

/// The reading of a supply voltage, counts.
pub fn supply_counts(v: f64) -> u16 {
    (v / SUPPLY_V_PER_COUNT).round() as u16
}

/// One write to the bridge's outputs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ev {
    Pwm(u16),
    A(bool),
    B(bool),
}

pub type Log = Rc<RefCell<Vec<Ev>>>;

/// An output that logs each write attempt (failed ones too) and passes it to `inner`.
pub struct Logged<M> {
    pub inner: M,
    log: Log,
    leg: u8,
}

impl<M> Logged<M> {
    pub fn new(inner: M, log: &Log, leg: u8) -> Self {
        Self {
            inner,
            log: log.clone(),
            leg,
        }
    }
}

impl<M: pwm::ErrorType> pwm::ErrorType for Logged<M> {
    type Error = M::Error;
}

impl<M: SetDutyCycle> SetDutyCycle for Logged<M> {
    fn max_duty_cycle(&self) -> u16 {
        self.inner.max_duty_cycle()
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Self::Error> {
        self.log.borrow_mut().push(Ev::Pwm(duty));
        self.inner.set_duty_cycle(duty)
    }
}

impl<M: digital::ErrorType> digital::ErrorType for Logged<M> {
    type Error = M::Error;
}

impl<M: OutputPin> OutputPin for Logged<M> {
    fn set_low(&mut self) -> Result<(), Self::Error> {
        self.log.borrow_mut().push(self.ev(false));
        self.inner.set_low()
    }

    fn set_high(&mut self) -> Result<(), Self::Error> {
        self.log.borrow_mut().push(self.ev(true));
        self.inner.set_high()
    }
}

impl<M> Logged<M> {
    fn ev(&self, high: bool) -> Ev {
        if self.leg == 0 {
            Ev::A(high)
        } else {
            Ev::B(high)
        }
    }
}
