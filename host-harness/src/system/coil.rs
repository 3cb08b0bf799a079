//! The description → core mapping of a coil drive: the coil model the plan and the firmware
//! use, and the supply and temperature ranges. One place, so the plan, the firmware inputs and
//! the plant cannot drift apart.

use lenz::{Coil, CoilParams, Range};

use super::SetupError;
use crate::scenario::{self, File};

/// The nominal coil model of `[system.coil]` with everything in its loop that the
/// description names: the winding, the switch's on-resistance, the shunt and the supply's
/// source resistance (the plant has all four in the loop, so the firmware's model must too),
/// and a freewheel clamp's diode drop (the off path of the PWM steady state). Copper's
/// temperature coefficient is the core's [`lenz::coil::COPPER_ALPHA20_PER_K`].
#[must_use]
pub fn coil_params(file: &File, coil: &scenario::Coil) -> CoilParams {
    let s = &file.system;
    let params = CoilParams::new(coil.inductance.get() as f32, coil.resistance.get() as f32)
        .with_switch_resistance_ohm(s.switch.on_resistance.get() as f32)
        .with_source_resistance_ohm(s.supply.source_resistance.get() as f32)
        .with_shunt_resistance_ohm(s.sense.shunt.get() as f32);
    match s.clamp {
        Some(scenario::ClampSpec::Freewheel { diode_drop }) => {
            params.with_diode_drop_v(diode_drop.get() as f32)
        }
        _ => params,
    }
}

/// [`coil_params`], validated.
///
/// # Errors
///
/// The coil model rejects a value (named, under `system.coil`).
pub fn coil_model(file: &File, coil: &scenario::Coil) -> Result<Coil, SetupError> {
    coil_params(file, coil)
        .validate()
        .map_err(crate::scenario::run::lenz_err(file, "system.coil", None))
}

/// `[system.supply]` min … max.
///
/// # Errors
///
/// Not a valid range (named, under `system.supply`).
pub fn supply_range(file: &File) -> Result<Range, SetupError> {
    let s = &file.system.supply;
    Range::new("supply_v", s.min.get() as f32, s.max.get() as f32)
        .map_err(crate::scenario::run::lenz_err(file, "system.supply", None))
}

/// `[system.temperature]` min … max.
///
/// # Errors
///
/// Not a valid range (named, under `system.temperature`).
pub fn temperature_range(file: &File) -> Result<Range, SetupError> {
    let t = &file.system.temperature;
    Range::new("temp_c", t.min.get() as f32, t.max.get() as f32).map_err(
        crate::scenario::run::lenz_err(file, "system.temperature", None),
    )
}

/// The copper temperature coefficient the plant uses, from the core's constant.
#[must_use]
pub fn copper_alpha20_per_k() -> f64 {
    f64::from(lenz::coil::COPPER_ALPHA20_PER_K)
}
