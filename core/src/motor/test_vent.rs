//! The demo vent motor of the unit tests (CHECKS C5.1, values invented for the greenhouse
//! vent): 2 mH, 1.5 Ω at 20 °C, 0.03 N·m/A, 2·10⁻⁵ kg·m², 10⁻⁶ N·m·s/rad (compiled for tests
//! only).

use super::{Motor, MotorParams};

/// Its parameters, no bridge resistance.
pub(crate) fn vent_params() -> MotorParams {
    MotorParams::new(2e-3, 1.5, 0.03)
        .with_inertia_kg_m2(2e-5)
        .with_friction_nm_s_per_rad(1e-6)
}

/// The validated motor.
pub(crate) fn vent() -> Motor {
    vent_params().validate().unwrap()
}
