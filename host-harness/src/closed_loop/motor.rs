//! A brushed DC motor on an H-bridge in the closed loop: the application's motor command, the
//! motor quantities a plant reports, and the motor limits.
//!
//! # The interface, as the coil's
//!
//! A motor runs through the same [`Controller`](super::Controller) and
//! [`Actuation`](super::Actuation) as a coil. The additions are additive:
//!
//! - [`Sensed::motor`](super::Sensed::motor): the application's [`MotorCommand`] in force
//!   (forward or reverse at a duty, brake, coast; coast for a coil run);
//! - [`Direction::Brake`](super::Direction::Brake): both direction pins at the same level;
//! - the bridge the plant applies for an actuation ([`super::MotorBridge`] documents it):
//!   `Drive::Off` is coast (all switches off), the switch on is the direction's drive
//!   (`Forward`, `Reverse`) or both low sides (`Brake`), the off intervals of a PWM tick decay
//!   as the bridge is built (slow decay: the winding shorted through the low sides, as
//!   [`lenz::drive::MotorDriver`]'s bridge; or fast decay: through the diodes);
//! - **signed current**: the current channel reads the winding current, positive forward (leg
//!   A to leg B). A bidirectional sense puts zero current at mid-scale with the channel's
//!   `bias_v` (the [`lenz::kernel::SenseScale`] offset that [`lenz::drive::MotorSense`]
//!   expects); the supply channel reads the bridge rail (the bus capacitor's voltage).

use serde::{Deserialize, Serialize};

/// Full duty, Q16.
pub const DUTY_ONE_Q16: i32 = 65_536;

/// What the application asks of the motor.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum MotorCommand {
    /// Let it coast (all switches off).
    #[default]
    Coast,
    /// Brake it (winding shorted).
    Brake,
    /// Run forward at this duty, Q16 (`0 ..= 65 536`).
    Forward {
        /// Duty, Q16.
        duty_q16: i32,
    },
    /// Run in reverse at this duty, Q16 (`0 ..= 65 536`).
    Reverse {
        /// Duty, Q16.
        duty_q16: i32,
    },
}

impl MotorCommand {
    /// The signed duty request (Q16, positive forward, saturated to `±65 536`; 0 for coast
    /// and brake), as [`lenz::drive::MotorDriver::update`] takes it.
    #[must_use]
    pub const fn request_q16(self) -> i32 {
        match self {
            MotorCommand::Forward { duty_q16 } => clamp_duty(duty_q16),
            MotorCommand::Reverse { duty_q16 } => -clamp_duty(duty_q16),
            MotorCommand::Coast | MotorCommand::Brake => 0,
        }
    }

    /// `+1` forward, `−1` reverse, 0 for coast, brake or a zero duty.
    #[must_use]
    pub const fn sign(self) -> i32 {
        self.request_q16().signum()
    }
}

const fn clamp_duty(d: i32) -> i32 {
    if d < 0 {
        0
    } else if d > DUTY_ONE_Q16 {
        DUTY_ONE_Q16
    } else {
        d
    }
}

/// The motor quantities of a plant now ([`super::Plant::motor`]).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct MotorProbe {
    /// Rotor speed, rad/s (positive forward).
    pub speed_rad_s: f64,
    /// Bus (bridge rail) voltage, V.
    pub bus_v: f64,
    /// Highest bus voltage so far (located exactly by the plant), V.
    pub peak_bus_v: f64,
    /// Highest current magnitude since [`super::Plant::motor_mark`] (exact), A.
    pub peak_current_since_mark_a: f64,
    /// Winding temperature, °C.
    pub winding_temp_c: f64,
}

/// Time to speed: after each drive command the rotor must reach `speed_rad_s` in the
/// commanded direction within `max_s`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct TimeToSpeed {
    /// Speed magnitude to reach, rad/s.
    pub speed_rad_s: f64,
    /// Longest allowed time from the command, s.
    pub max_s: f64,
}

/// The motor properties' limits; `None` leaves a property out (the loop's `no_trip` and
/// `peak_current` stay in [`super::Limits`]).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct MotorLimits {
    /// Highest allowed bus voltage (the bus capacitor's rating), V: property `bus_voltage`.
    pub bus_voltage_max_v: Option<f64>,
    /// Property `time_to_speed`.
    pub time_to_speed: Option<TimeToSpeed>,
    /// Longest allowed time from a jam to the firmware's trip, s: property `jam_latency`
    /// (a run without a jam fault measures nothing: infinite, so it fails).
    pub jam_latency_max_s: Option<f64>,
    /// Largest allowed current magnitude during a reversal, A: property
    /// `reversal_peak_current` (a run without a reversal measures nothing: infinite, so it
    /// fails).
    pub reversal_peak_current_max_a: Option<f64>,
    /// Highest allowed winding temperature, °C: property `winding_temperature`.
    pub winding_temperature_max_c: Option<f64>,
}
