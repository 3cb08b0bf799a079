//! Bridge motor driver: the [`lenz::drive::MotorDriver`] on a simulated PWM (the bridge's
//! enable) and the bridge's two direction pins.
//!
//! What the example firmware executes is the driver firmware links, unchanged: the back-EMF
//! speed estimator, the jam detector and the bridge guard (soft start, stop by coasting and
//! braking below the brake speed, reversal only after braking below the reversal speed, dead
//! time at every mode change). A jam, an overload, an open winding, a reading outside the
//! sense's window or an output error latches the bridge off (coast). See
//! [`lenz::drive::MotorDriver`] for the order of the steps in a tick.
//!
//! The plan is a [`lenz::drive::MotorDriverParams`] (the demo vent's is
//! [`crate::closed_loop::demo_vent::vent_driver_params`]); the harness side is
//! [`crate::sim_pins::MotorDriverLoop`].

use lenz::drive::{MotorDriveError, MotorDriverConfig};

use crate::closed_loop::{Actuation, Controller, Sensed, Telemetry};
use crate::sim_pins::{MotorDriverLoop, SimBridge, SimPin, SimPwm};

/// The example bridge motor firmware (module docs).
#[derive(Debug)]
pub struct BridgeMotorDriver(MotorDriverLoop<MotorDriverConfig>);

impl BridgeMotorDriver {
    /// The driver of `cfg` on a working PWM of `pwm_max_duty` counts and two working pins.
    ///
    /// # Errors
    ///
    /// The driver's: the PWM has no resolution (`pwm_max_duty` 0 is taken as 1 by the
    /// simulated PWM, so in practice none).
    pub fn new(
        cfg: MotorDriverConfig,
        pwm_max_duty: u16,
    ) -> Result<Self, MotorDriveError<SimPwm, SimPin, SimPin>> {
        MotorDriverLoop::new(cfg, SimPwm::new(pwm_max_duty), SimBridge::default()).map(Self)
    }

    /// The adapter (and through it the driver).
    pub const fn inner(&self) -> &MotorDriverLoop<MotorDriverConfig> {
        &self.0
    }
}

impl Controller for BridgeMotorDriver {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        self.0.tick(s)
    }

    fn telemetry(&self) -> Telemetry {
        self.0.telemetry()
    }
}
