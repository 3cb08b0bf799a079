//! The motor tables of a scenario file: `[system.motor]` (a brushed DC motor on an H-bridge)
//! and `[controller.motor]` (the example bridge motor driver).
//!
//! The bridge's switches are `[system.switch]` (`on_resistance` of each of the four; two
//! conduct in every driven loop), the supply's source resistance is
//! `[system.supply] source_resistance`, the bus capacitor's rating is
//! `[system.ratings] bus_voltage`. The names follow `lenz motor`'s flags (`resistance` at
//! 20 °C, `inductance`, `torque_constant`, `inertia`, `friction`, `load_torque`).

use serde::{Deserialize, Serialize};

use super::quantity::{
    Ampere, Farad, Henry, KilogramSquareMetre, NewtonMetre, NewtonMetrePerAmpere,
    NewtonMetreSecondPerRadian, NonNeg, Ohm, Plain, Pos, Second, Volt,
};

fn zero<U>() -> NonNeg<U> {
    NonNeg::new(0.0)
}

fn yes() -> bool {
    true
}

/// The decay of the bridge's PWM off intervals.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum PwmDecay {
    /// The winding shorted through the low sides (the bridge of `lenz::drive::MotorDriver`).
    #[default]
    Slow,
    /// All switches off: the current returns to the bus through the diodes.
    Fast,
}

/// A brushed DC motor on an H-bridge, with its bus capacitor.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct MotorStage {
    /// Winding inductance, H.
    pub inductance: Pos<Henry>,
    /// Winding resistance at 20 °C (copper), Ω.
    pub resistance: Pos<Ohm>,
    /// Torque constant (= back-EMF constant), N·m/A.
    pub torque_constant: Pos<NewtonMetrePerAmpere>,
    /// Inertia of rotor and load, kg·m².
    pub inertia: Pos<KilogramSquareMetre>,
    /// Viscous friction, N·m·s/rad (default 0).
    #[serde(default = "zero")]
    pub friction: NonNeg<NewtonMetreSecondPerRadian>,
    /// Load torque opposing the rotation from the start, N·m (default 0).
    #[serde(default = "zero")]
    pub load_torque: NonNeg<NewtonMetre>,
    /// The highest load torque the motor is rated for, N·m: an `overload` event must step the
    /// load above it (default: `load_torque`).
    pub rated_torque: Option<Pos<NewtonMetre>>,
    /// Forward drop of each bridge diode, V.
    pub diode_drop: NonNeg<Volt>,
    /// Bus capacitance, F.
    pub bus_capacitance: Pos<Farad>,
    /// Whether the supply can sink current (default true; `false`: a series diode or a linear
    /// regulator, and the returned energy pumps the bus).
    #[serde(default = "yes")]
    pub supply_sinks: bool,
    /// Decay of the PWM off intervals (default slow).
    #[serde(default)]
    pub pwm_decay: PwmDecay,
    /// Thermal resistance winding to ambient, K/W (absent: the winding stays at its starting
    /// temperature).
    pub thermal_resistance: Option<Pos<Plain>>,
    /// Thermal capacitance of the winding, J/K; needed with `thermal_resistance`.
    pub thermal_capacitance: Option<Pos<Plain>>,
}

/// Parameters of the example bridge motor driver (`lenz::drive::MotorDriver`).
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct MotorController {
    /// Peak current the soft start and the brake may reach (at the highest supply and the
    /// coldest winding), A.
    pub current_limit: Pos<Ampere>,
    /// Dead time at every bridge mode change, s.
    pub dead_time: NonNeg<Second>,
    /// Reversal only at or below this speed, rad/s.
    pub reverse_speed: Pos<Plain>,
    /// Interval of the one-tick brake probes while coasting, s (0: none).
    #[serde(default = "zero")]
    pub probe_interval: NonNeg<Second>,
    /// A current at or above this with the speed at or below `jam_speed` is a jam, A.
    pub jam_current: Pos<Ampere>,
    /// Speed at or below which a high current is a jam, rad/s.
    pub jam_speed: Pos<Plain>,
    /// How long the jam condition must last, s.
    pub jam_time: Pos<Second>,
    /// Blanking of the jam detector after each start, s.
    #[serde(default = "zero")]
    pub start_blanking: NonNeg<Second>,
    /// The overload check (`[controller.motor.overload]`; absent: none).
    pub overload: Option<MotorOverload>,
    /// The open-winding check (`[controller.motor.open_winding]`; absent: none).
    pub open_winding: Option<MotorOpenWinding>,
}

/// The driver's overload check: a current at or above `current` for `time` latches the
/// bridge off (`lenz::kernel::JamParams::overload_current_a`), after each start's blanking.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct MotorOverload {
    /// Overload current, A.
    pub current: Pos<Ampere>,
    /// How long it may last, s.
    pub time: Pos<Second>,
}

/// The driver's open-winding check: a current at or below `current` while the bridge drives
/// at a duty of at least `min_duty`, for the jam time, latches the bridge off
/// (`lenz::kernel::JamParams::open_current_a`), after each start's blanking.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawMotorOpenWinding")]
pub struct MotorOpenWinding {
    /// Open-winding current, A.
    pub current: Pos<Ampere>,
    /// Smallest duty judged, 0 … 1 (default 1: full drive only).
    pub min_duty: Pos<Plain>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMotorOpenWinding {
    current: Pos<Ampere>,
    min_duty: Option<Pos<Plain>>,
}

impl TryFrom<RawMotorOpenWinding> for MotorOpenWinding {
    type Error = String;
    fn try_from(r: RawMotorOpenWinding) -> Result<Self, String> {
        let min_duty = r.min_duty.unwrap_or(Pos::new(1.0));
        if min_duty.get() > 1.0 {
            return Err(format!("key `min_duty`: {} is above 1", min_duty.get()));
        }
        Ok(MotorOpenWinding {
            current: r.current,
            min_duty,
        })
    }
}
