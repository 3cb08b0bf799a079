//! The adapter of the bridge motor driver: [`lenz::drive::MotorDriver`] as a closed-loop
//! controller.

use std::borrow::Borrow;

use lenz::drive::{MotorDriveError, MotorDriver, MotorDriverConfig, MotorDriverFault, MotorSense};

use super::output::SimOutput;
use super::{SimBridge, SimPin, SimPwm};
use crate::closed_loop::{Actuation, Controller, Direction, Sensed, Telemetry, TripCause};

/// A [`MotorDriver`] on a simulated PWM (the bridge's enable) and the two direction pins, as a
/// closed-loop controller.
///
/// Per tick: the tick's current and supply readings go into [`MotorDriver::update`] with the
/// application's command as the signed request ([`crate::closed_loop::MotorCommand::request_q16`]:
/// brake and coast are both a stop, 0, and the driver's bridge guard brakes or coasts by the
/// speed estimate); the outputs after the tick are the actuation: the PWM register the drive,
/// the pins the direction (A high: forward; B high: reverse; both at the same level: brake
/// while the enable is on). Nothing here decides anything.
///
/// Telemetry: `tripped` while the driver has a latched fault, with its cause.
#[derive(Debug)]
pub struct MotorDriverLoop<C> {
    driver: MotorDriver<C, SimPwm, SimPin, SimPin>,
    output_errors: u64,
}

impl<C: Borrow<MotorDriverConfig>> MotorDriverLoop<C> {
    /// Builds the driver on `pwm` and `bridge`'s pins ([`MotorDriver::new`]).
    ///
    /// # Errors
    ///
    /// The driver's: an output failed on its first write, or the PWM has no resolution.
    pub fn new(
        cfg: C,
        pwm: SimPwm,
        bridge: SimBridge,
    ) -> Result<Self, MotorDriveError<SimPwm, SimPin, SimPin>> {
        let (a, b) = bridge.into_pins();
        let driver = MotorDriver::new(cfg, pwm, a, b).map_err(|(e, _)| e)?;
        Ok(Self {
            driver,
            output_errors: 0,
        })
    }

    /// The driver.
    pub const fn driver(&self) -> &MotorDriver<C, SimPwm, SimPin, SimPin> {
        &self.driver
    }

    /// Ticks whose `update` returned an output error.
    pub const fn output_errors(&self) -> u64 {
        self.output_errors
    }
}

impl<C: Borrow<MotorDriverConfig>> Controller for MotorDriverLoop<C> {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let sense = MotorSense {
            current_counts: s.current_counts,
            supply_counts: s.supply_counts,
        };
        if self.driver.update(s.motor.request_q16(), sense).is_err() {
            self.output_errors += 1;
        }
        let (pwm, a, b) = self.driver.outputs();
        let direction = match (a.is_high(), b.is_high()) {
            (true, false) => Direction::Forward,
            (false, true) => Direction::Reverse,
            _ => Direction::Brake,
        };
        Actuation {
            drive: pwm.drive(),
            direction,
        }
    }

    fn telemetry(&self) -> Telemetry {
        let cause = self.driver.fault().map(|f| match f {
            MotorDriverFault::Motor(m) => TripCause::Motor(m),
            MotorDriverFault::Sense => TripCause::InvalidReading,
            MotorDriverFault::Output => TripCause::OutputError,
        });
        Telemetry {
            estimate_a: None,
            tripped: cause.is_some(),
            trip_cause: cause,
            ..Telemetry::default()
        }
    }
}
