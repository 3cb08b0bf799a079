//! The demo system: a small greenhouse controller (all values invented for the demo).
//!
//! - a 24 V irrigation solenoid valve, 120 mH ±10 %, 32 Ω ±5 % at 20 °C, freewheel diode
//!   0.7 V, supply 21.6 … 26.4 V, coil −20 … 85 °C, pull-in at 0.45 A (60 % of the nominal
//!   0.75 A);
//! - a 12 V relay that switches the vent motor, 0.3 H ±10 %, 120 Ω ±5 % at 20 °C, diode 0.7 V,
//!   supply 11.4 … 13.2 V, coil −20 … 70 °C, must-operate 75 % of 12 V (75 mA).

use lenz::{CoilParams, Error, Range, bounds::CoilSpread};

/// Valve inductance, H (invented).
pub const VALVE_INDUCTANCE_H: f64 = 0.120;
/// Valve winding resistance at 20 °C, Ω (invented).
pub const VALVE_RESISTANCE_OHM: f64 = 32.0;
/// Relay inductance, H (invented).
pub const RELAY_INDUCTANCE_H: f64 = 0.3;
/// Relay winding resistance at 20 °C, Ω (invented).
pub const RELAY_RESISTANCE_OHM: f64 = 120.0;
/// Freewheel diode drop of both coils, V (invented).
pub const DIODE_DROP_V: f64 = 0.7;

/// One demo coil with its spreads and pull-in current.
#[derive(Debug, Clone, Copy)]
pub struct DemoCoil {
    /// Display name.
    pub name: &'static str,
    /// Coil, supply, temperature and part tolerances.
    pub spread: CoilSpread,
    /// Pull-in current, A.
    pub pull_in_a: f32,
}

fn coil(
    name: &'static str,
    params: CoilParams,
    supply: (f32, f32),
    temp: (f32, f32),
    tols: (f32, f32),
    pull_in_a: f32,
) -> Result<DemoCoil, Error> {
    Ok(DemoCoil {
        name,
        spread: CoilSpread::new(
            params,
            Range::new("supply_v", supply.0, supply.1)?,
            Range::new("temp_c", temp.0, temp.1)?,
            tols.0,
            tols.1,
        )?,
        pull_in_a,
    })
}

/// The irrigation valve (invented values).
///
/// # Errors
///
/// None for the shipped values; the constructor validates like any other.
pub fn valve() -> Result<DemoCoil, Error> {
    coil(
        "irrigation valve (24 V)",
        CoilParams::new(VALVE_INDUCTANCE_H as f32, VALVE_RESISTANCE_OHM as f32)
            .with_diode_drop_v(DIODE_DROP_V as f32),
        (21.6, 26.4),
        (-20.0, 85.0),
        (0.10, 0.05),
        0.45,
    )
}

/// The vent-motor relay (invented values).
///
/// # Errors
///
/// None for the shipped values; the constructor validates like any other.
pub fn relay() -> Result<DemoCoil, Error> {
    coil(
        "vent relay (12 V)",
        CoilParams::new(RELAY_INDUCTANCE_H as f32, RELAY_RESISTANCE_OHM as f32)
            .with_diode_drop_v(DIODE_DROP_V as f32),
        (11.4, 13.2),
        (-20.0, 70.0),
        (0.10, 0.05),
        0.075,
    )
}
