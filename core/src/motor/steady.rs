//! Stall, steady state, time constants and kinetic energy.

use super::Motor;
use super::params::{check_load, check_supply};
use crate::error::{Error, finite_result, in_range};

/// Largest speed magnitude accepted as an argument, rad/s.
const SPEED_MAX_RAD_S: f32 = 1.0e6;

/// The steady state at a load torque.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SteadyState {
    /// Rotor speed, positive (forward). Units: rad/s.
    pub speed_rad_s: f32,
    /// Winding current. Units: A.
    pub current_a: f32,
}

impl Motor {
    /// Stall current `V/R` (rotor held, back-EMF zero), A.
    ///
    /// # Errors
    ///
    /// Supply not positive or above [`crate::coil::SUPPLY_MAX_V`]; temperature out of range.
    pub fn stall_current_a(&self, supply_v: f32, temp_c: f32) -> Result<f32, Error> {
        let v = check_supply(supply_v)?;
        let r = f64::from(self.loop_resistance_ohm(temp_c)?);
        finite_result("supply_v", (v / r) as f32)
    }

    /// Stall torque `k·V/R`, N·m.
    ///
    /// # Errors
    ///
    /// As [`Motor::stall_current_a`].
    pub fn stall_torque_nm(&self, supply_v: f32, temp_c: f32) -> Result<f32, Error> {
        let v = check_supply(supply_v)?;
        let r = f64::from(self.loop_resistance_ohm(temp_c)?);
        let k = f64::from(self.torque_constant_nm_per_a());
        finite_result("supply_v", (k * v / r) as f32)
    }

    /// Steady speed and current at `load_torque_nm`:
    /// `ω = (k·V − R·T)/(k² + R·b)`, `i = (b·V + k·T)/(k² + R·b)`. Needs no inertia.
    ///
    /// # Errors
    ///
    /// [`Error::Unreachable`] (param `load_torque_nm`, limit the stall torque) when the load
    /// torque is at or above the stall torque: the motor stalls. Supply and temperature as
    /// [`Motor::stall_current_a`]; load torque negative or not finite.
    ///
    /// # Examples
    ///
    /// ```
    /// # use lenz::motor::MotorParams;
    /// // Vent motor (invented): 366.057 rad/s and 0.678869 A at 0.02 N·m.
    /// let m = MotorParams::new(2e-3, 1.5, 0.03).with_friction_nm_s_per_rad(1e-6).validate()?;
    /// let s = m.steady_state(12.0, 20.0, 0.02)?;
    /// assert!((s.speed_rad_s - 366.057).abs() < 1e-3);
    /// assert!(m.steady_state(12.0, 20.0, 0.3).is_err()); // beyond the 0.24 N·m stall torque
    /// # Ok::<(), lenz::Error>(())
    /// ```
    pub fn steady_state(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
    ) -> Result<SteadyState, Error> {
        let v = check_supply(supply_v)?;
        let t = check_load(load_torque_nm)?;
        let d = self.dynamics(temp_c, false)?;
        let stall = d.k * v / d.r;
        if t >= stall {
            return Err(Error::Unreachable {
                param: "load_torque_nm",
                target: load_torque_nm,
                limit: stall as f32,
            });
        }
        let (i, w) = d.steady(v, t);
        Ok(SteadyState {
            speed_rad_s: finite_result("supply_v", w as f32)?,
            current_a: finite_result("supply_v", i as f32)?,
        })
    }

    /// Electrical time constant `L/R` at `temp_c`, s.
    ///
    /// # Errors
    ///
    /// Temperature out of range.
    pub fn electrical_time_constant_s(&self, temp_c: f32) -> Result<f32, Error> {
        let d = self.dynamics(temp_c, false)?;
        finite_result("inductance_h", (d.l / d.r) as f32)
    }

    /// Mechanical time constant `J·R/(k² + R·b)` at `temp_c`, s.
    ///
    /// # Errors
    ///
    /// Temperature out of range, inertia not stated.
    pub fn mechanical_time_constant_s(&self, temp_c: f32) -> Result<f32, Error> {
        let d = self.dynamics(temp_c, true)?;
        finite_result("inertia_kg_m2", (d.j * d.r / d.den()) as f32)
    }

    /// Kinetic energy of rotor and load at `speed_rad_s`, `½·J·ω²`, J.
    ///
    /// # Errors
    ///
    /// Speed not finite or its magnitude above 10⁶ rad/s; inertia not stated.
    pub fn kinetic_energy_j(&self, speed_rad_s: f32) -> Result<f32, Error> {
        let w = f64::from(in_range(
            "speed_rad_s",
            speed_rad_s,
            -SPEED_MAX_RAD_S,
            SPEED_MAX_RAD_S,
        )?);
        let j = f64::from(self.inertia_kg_m2()?);
        finite_result("speed_rad_s", (0.5 * j * w * w) as f32)
    }
}
