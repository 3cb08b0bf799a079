//! Faults injected into a closed-loop run at a given time.
//!
//! Plant faults change the simulated circuit at their exact time (the harness splits the
//! segment there); sensor faults change what the ADC reports from then on.

use serde::{Deserialize, Serialize};

/// An ADC channel of the closed loop.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Channel {
    /// Coil (or inductor) current.
    Current,
    /// Supply (input) voltage.
    Supply,
    /// Output voltage (switch node of a coil drive, rail of a boost stage).
    Output,
}

/// What goes wrong.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Fault {
    /// The coil is shorted: only the wiring's inductance and resistance remain.
    ShortedCoil {
        /// Residual inductance, H.
        residual_inductance_h: f64,
        /// Residual resistance, Ω.
        residual_resistance_ohm: f64,
    },
    /// Some turns are shorted: inductance and resistance drop.
    ShortedTurns {
        /// Remaining fraction of the inductance (0..1).
        inductance_factor: f64,
        /// Remaining fraction of the resistance (0..1).
        resistance_factor: f64,
    },
    /// The coil is open.
    OpenCoil,
    /// The supply sags to a lower voltage, linearly over `ramp_s` (0: a step).
    SupplySag {
        /// New open-circuit supply voltage, V.
        supply_v: f64,
        /// Ramp time, s.
        ramp_s: f64,
    },
    /// The supply surges to a higher voltage, linearly over `ramp_s` (0: a step).
    SupplySurge {
        /// New open-circuit supply voltage, V.
        supply_v: f64,
        /// Ramp time, s.
        ramp_s: f64,
    },
    /// The switch is stuck on.
    SwitchStuckOn,
    /// The ADC channel keeps returning its last reading.
    SensorStuck {
        /// Which channel.
        channel: Channel,
    },
    /// The ADC channel gets extra noise.
    SensorNoisy {
        /// Which channel.
        channel: Channel,
        /// Added noise, RMS, in LSB.
        noise_rms_lsb: f64,
    },
    /// The load of a boost stage steps.
    LoadStep {
        /// New load resistance, Ω.
        load_ohm: f64,
    },
    /// The coil's armature sticks where it is.
    StuckArmature,
    /// The armature gets extra viscous friction.
    SluggishArmature {
        /// Extra damping, N·s/m.
        extra_damping_n_s_per_m: f64,
    },
    /// An extra force acts against the armature's closing.
    ExcessLoad {
        /// Extra force, N.
        extra_load_n: f64,
    },
    /// A motor's rotor locks (speed zero from then on).
    Jam,
    /// A motor's load torque steps to a new value (an overload when above the rating).
    LoadTorque {
        /// New load torque, N·m.
        torque_nm: f64,
    },
    /// A motor's winding (a lead, a brush) opens.
    OpenWinding,
    /// The supply stops taking current back (a series diode, a regulator): the energy a motor
    /// returns charges the bus capacitor.
    SupplyCannotSink,
    /// Part of a motor's winding is shorted: inductance and resistance drop.
    ShortedWinding {
        /// Remaining fraction of the inductance (0..1].
        inductance_factor: f64,
        /// Remaining fraction of the resistance (0..1].
        resistance_factor: f64,
    },
}

/// A fault at a time, and whether the firmware is required to trip on it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FaultAt {
    /// Time of injection, s.
    pub t_s: f64,
    /// The fault.
    pub fault: Fault,
    /// The firmware must trip within the trip-latency limit after this fault.
    pub expect_trip: bool,
}
