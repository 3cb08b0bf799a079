//! Worst-case bounds of motor figures over supply range, winding temperature range and part
//! tolerances, by [`crate::bounds::worst_case`] (corners plus interior extrema).

use super::{Motor, MotorParams, Rail, ReturnPath};
use crate::bounds::{Bound, Range, worst_case};
use crate::error::{Error, in_range, non_negative};

/// One corner of a motor evaluation.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MotorCorner {
    /// Supply voltage, V.
    pub supply_v: f32,
    /// Winding temperature, °C.
    pub temp_c: f32,
    /// Inductance, H.
    pub inductance_h: f32,
    /// Winding resistance at the reference temperature, Ω.
    pub resistance_ohm: f32,
    /// Torque constant, N·m/A.
    pub torque_constant_nm_per_a: f32,
    /// Inertia, kg·m² (0 when the motor states none).
    pub inertia_kg_m2: f32,
}

/// A motor with its spreads: supply range, winding temperature range, and the part tolerances
/// of inductance, resistance (at the reference temperature), torque constant and inertia. The
/// load torque and friction are held at their stated values.
///
/// # Examples
///
/// ```
/// use lenz::{Range, motor::{MotorParams, MotorSpread}};
/// // Vent motor (invented): 10.8..13.2 V, -20..80 °C, L ±20 %, R ±10 %, k ±5 %, J ±10 %.
/// let s = MotorSpread::new(
///     MotorParams::new(2e-3, 1.5, 0.03).with_inertia_kg_m2(2e-5),
///     Range::new("supply_v", 10.8, 13.2)?,
///     Range::new("temp_c", -20.0, 80.0)?,
///     0.02,
///     [0.2, 0.1, 0.05, 0.1],
/// )?;
/// let stall = s.stall_current_a()?;
/// assert_eq!(stall.max_at.supply_v, 13.2); // highest supply, coldest, lowest resistance
/// assert_eq!(stall.max_at.temp_c, -20.0);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MotorSpread {
    /// Nominal motor; inductance, resistance, torque constant and inertia are replaced by the
    /// ranges below.
    pub motor: MotorParams,
    /// Supply voltage range, V.
    pub supply_v: Range,
    /// Winding temperature range, °C.
    pub temp_c: Range,
    /// Load torque, held at every corner, N·m.
    pub load_torque_nm: f32,
    /// Inductance range, H.
    pub inductance_h: Range,
    /// Winding resistance range at the reference temperature, Ω.
    pub resistance_ohm: Range,
    /// Torque constant range, N·m/A.
    pub torque_constant_nm_per_a: Range,
    /// Inertia range, kg·m² (`0 ..= 0` when the motor states none).
    pub inertia_kg_m2: Range,
}

impl MotorSpread {
    /// A spread around `motor` with relative tolerances `[inductance, resistance, torque
    /// constant, inertia]`, each `0 ..= 0.99`.
    ///
    /// # Errors
    ///
    /// Invalid motor, tolerances outside `0 ..= 0.99`, load torque negative or not finite.
    pub fn new(
        motor: MotorParams,
        supply_v: Range,
        temp_c: Range,
        load_torque_nm: f32,
        tolerances: [f32; 4],
    ) -> Result<Self, Error> {
        motor.validate()?;
        in_range(
            "load_torque_nm",
            non_negative("load_torque_nm", load_torque_nm)?,
            0.0,
            super::TORQUE_MAX_NM,
        )?;
        let [tl, tr, tk, tj] = tolerances;
        let tol = Range::tolerance;
        Ok(Self {
            motor,
            supply_v,
            temp_c,
            load_torque_nm,
            inductance_h: tol("inductance_h", motor.inductance_h, tl)?,
            resistance_ohm: tol("resistance_ohm", motor.resistance_ohm, tr)?,
            torque_constant_nm_per_a: tol(
                "torque_constant_nm_per_a",
                motor.torque_constant_nm_per_a,
                tk,
            )?,
            inertia_kg_m2: match motor.inertia_kg_m2 {
                Some(j) => tol("inertia_kg_m2", j, tj)?,
                None => Range::exact("inertia_kg_m2", 0.0)?,
            },
        })
    }

    /// Bounds of any motor figure `f(motor, supply_v, temp_c, load_torque_nm)` over the spread.
    ///
    /// # Errors
    ///
    /// The first error of `f` or of the motor validation at any evaluated corner (a corner
    /// where the motor stalls, for example: a worst case that does not exist is an error, not
    /// a bound).
    pub fn figure<F>(&self, f: F) -> Result<Bound<MotorCorner>, Error>
    where
        F: Fn(&Motor, f32, f32, f32) -> Result<f32, Error>,
    {
        let ranges = [
            self.supply_v,
            self.temp_c,
            self.inductance_h,
            self.resistance_ohm,
            self.torque_constant_nm_per_a,
            self.inertia_kg_m2,
        ];
        let b = worst_case(&ranges, |p| {
            let motor = MotorParams {
                inductance_h: p[2],
                resistance_ohm: p[3],
                torque_constant_nm_per_a: p[4],
                inertia_kg_m2: self.motor.inertia_kg_m2.map(|_| p[5]),
                ..self.motor
            }
            .validate()?;
            f(&motor, p[0], p[1], self.load_torque_nm)
        })?;
        Ok(b.map_corner(|p| MotorCorner {
            supply_v: p[0],
            temp_c: p[1],
            inductance_h: p[2],
            resistance_ohm: p[3],
            torque_constant_nm_per_a: p[4],
            inertia_kg_m2: p[5],
        }))
    }

    /// Stall current, A.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::figure`].
    pub fn stall_current_a(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, _| m.stall_current_a(v, t))
    }

    /// Stall torque, N·m.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::figure`].
    pub fn stall_torque_nm(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, _| m.stall_torque_nm(v, t))
    }

    /// Steady speed at the load torque, rad/s.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::figure`]; a corner where the load stalls the motor.
    pub fn steady_speed_rad_s(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| Ok(m.steady_state(v, t, load)?.speed_rad_s))
    }

    /// Steady current at the load torque, A.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::steady_speed_rad_s`].
    pub fn steady_current_a(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| Ok(m.steady_state(v, t, load)?.current_a))
    }

    /// Electrical time constant, s.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::figure`].
    pub fn electrical_time_constant_s(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, _, t, _| m.electrical_time_constant_s(t))
    }

    /// Mechanical time constant, s.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::figure`]; inertia not stated.
    pub fn mechanical_time_constant_s(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, _, t, _| m.mechanical_time_constant_s(t))
    }

    /// Start peak current magnitude, A.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::mechanical_time_constant_s`].
    pub fn start_peak_current_a(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| Ok(m.start_peak(v, t, load)?.magnitude_a()))
    }

    /// Reversal peak current magnitude, A.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::mechanical_time_constant_s`] and [`MotorSpread::steady_speed_rad_s`].
    pub fn reversal_peak_current_a(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| Ok(m.reversal_peak(v, t, load)?.magnitude_a()))
    }

    /// Short-circuit brake peak current magnitude, A.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::reversal_peak_current_a`].
    pub fn brake_peak_current_a(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| Ok(m.brake_peak(v, t, load)?.magnitude_a()))
    }

    /// Kinetic energy at the steady speed, J.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::reversal_peak_current_a`].
    pub fn kinetic_energy_j(&self) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| m.kinetic_energy_j(m.steady_state(v, t, load)?.speed_rad_s))
    }

    /// Peak bus voltage when the motor coasts from its steady state through diodes of forward
    /// drop `diode_drop_v` into a bus capacitor of `capacitance_f` with a supply that cannot
    /// sink, V.
    ///
    /// # Errors
    ///
    /// As [`MotorSpread::reversal_peak_current_a`] and [`Motor::rail_return`].
    pub fn coast_peak_bus_v(
        &self,
        diode_drop_v: f32,
        capacitance_f: f32,
    ) -> Result<Bound<MotorCorner>, Error> {
        self.figure(|m, v, t, load| {
            Ok(m.rail_return(
                v,
                t,
                load,
                ReturnPath::Diodes { diode_drop_v },
                Rail::Capacitor { capacitance_f },
            )?
            .peak_bus_v)
        })
    }
}
