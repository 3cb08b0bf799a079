//! Motor description, validation, and the per-temperature linear model in `f64`.

use crate::coil::{COPPER_ALPHA20_PER_K, Coil, CoilParams, SUPPLY_MAX_V};
use crate::error::{Error, in_range, non_negative, positive};

/// Smallest torque constant accepted, N·m/A (= V·s/rad).
pub const TORQUE_CONSTANT_MIN_NM_PER_A: f32 = 1.0e-6;
/// Largest torque constant accepted, N·m/A.
pub const TORQUE_CONSTANT_MAX_NM_PER_A: f32 = 1.0e2;
/// Smallest inertia accepted, kg·m².
pub const INERTIA_MIN_KG_M2: f32 = 1.0e-12;
/// Largest inertia accepted, kg·m².
pub const INERTIA_MAX_KG_M2: f32 = 1.0e3;
/// Largest load torque and viscous friction coefficient accepted, N·m and N·m·s/rad.
pub const TORQUE_MAX_NM: f32 = 1.0e4;

/// Description of a brushed DC motor and the bridge that drives it, before validation.
///
/// Build with [`MotorParams::new`] and the `with_*` setters, then call
/// [`MotorParams::validate`].
///
/// # Examples
///
/// ```
/// use lenz::motor::MotorParams;
/// // Vent motor of the greenhouse demo (invented values): 1.5 Ω, 2 mH, 0.03 N·m/A.
/// let m = MotorParams::new(2e-3, 1.5, 0.03).with_inertia_kg_m2(2e-5).validate()?;
/// assert!((m.stall_current_a(12.0, 20.0)? - 8.0).abs() < 1e-5);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MotorParams {
    /// Winding inductance. Units: H.
    pub inductance_h: f32,
    /// Winding resistance at `reference_temp_c`. Units: Ω.
    pub resistance_ohm: f32,
    /// Temperature at which `resistance_ohm` holds. Units: °C. Default 20.
    pub reference_temp_c: f32,
    /// Temperature coefficient of the winding referred to 20 °C. Units: 1/K. Default
    /// [`COPPER_ALPHA20_PER_K`].
    pub alpha20_per_k: f32,
    /// Resistance of the bridge in every conducting loop (the two conducting switches, shunt and
    /// wiring). Units: Ω. Default 0.
    pub bridge_resistance_ohm: f32,
    /// Torque constant, equal in SI units to the back-EMF constant. Units: N·m/A (= V·s/rad).
    pub torque_constant_nm_per_a: f32,
    /// Inertia of rotor and load; `None` when not stated (the mechanical routines then report
    /// it as missing). Units: kg·m².
    pub inertia_kg_m2: Option<f32>,
    /// Viscous friction coefficient. Units: N·m·s/rad. Default 0.
    pub friction_nm_s_per_rad: f32,
}

impl MotorParams {
    /// A motor with winding `inductance_h`, `resistance_ohm` at 20 °C (copper) and torque
    /// constant `torque_constant_nm_per_a`; ideal bridge, no friction, inertia not stated.
    #[must_use]
    pub const fn new(
        inductance_h: f32,
        resistance_ohm: f32,
        torque_constant_nm_per_a: f32,
    ) -> Self {
        Self {
            inductance_h,
            resistance_ohm,
            reference_temp_c: 20.0,
            alpha20_per_k: COPPER_ALPHA20_PER_K,
            bridge_resistance_ohm: 0.0,
            torque_constant_nm_per_a,
            inertia_kg_m2: None,
            friction_nm_s_per_rad: 0.0,
        }
    }

    /// Sets the inertia of rotor and load, kg·m².
    #[must_use]
    pub const fn with_inertia_kg_m2(mut self, j: f32) -> Self {
        self.inertia_kg_m2 = Some(j);
        self
    }

    /// Sets the viscous friction coefficient, N·m·s/rad.
    #[must_use]
    pub const fn with_friction_nm_s_per_rad(mut self, b: f32) -> Self {
        self.friction_nm_s_per_rad = b;
        self
    }

    /// Sets the temperature at which the winding resistance was given, °C.
    #[must_use]
    pub const fn with_reference_temp_c(mut self, temp_c: f32) -> Self {
        self.reference_temp_c = temp_c;
        self
    }

    /// Sets the winding's temperature coefficient referred to 20 °C, 1/K.
    #[must_use]
    pub const fn with_alpha20_per_k(mut self, alpha: f32) -> Self {
        self.alpha20_per_k = alpha;
        self
    }

    /// Sets the bridge resistance in every conducting loop, Ω.
    #[must_use]
    pub const fn with_bridge_resistance_ohm(mut self, r: f32) -> Self {
        self.bridge_resistance_ohm = r;
        self
    }

    /// The winding as a coil (inductance, copper resistance, bridge resistance in its loop).
    fn winding_params(&self) -> CoilParams {
        CoilParams::new(self.inductance_h, self.resistance_ohm)
            .with_reference_temp_c(self.reference_temp_c)
            .with_alpha20_per_k(self.alpha20_per_k)
            .with_switch_resistance_ohm(self.bridge_resistance_ohm)
    }

    /// Checks every field and returns the validated motor.
    ///
    /// # Errors
    ///
    /// Names the first field that is not finite, not positive where it must be, negative, or
    /// outside its documented range (the winding fields as for [`CoilParams::validate`]).
    pub fn validate(&self) -> Result<Motor, Error> {
        let winding = self.winding_params().validate()?;
        in_range(
            "torque_constant_nm_per_a",
            positive("torque_constant_nm_per_a", self.torque_constant_nm_per_a)?,
            TORQUE_CONSTANT_MIN_NM_PER_A,
            TORQUE_CONSTANT_MAX_NM_PER_A,
        )?;
        if let Some(j) = self.inertia_kg_m2 {
            in_range(
                "inertia_kg_m2",
                positive("inertia_kg_m2", j)?,
                INERTIA_MIN_KG_M2,
                INERTIA_MAX_KG_M2,
            )?;
        }
        in_range(
            "friction_nm_s_per_rad",
            non_negative("friction_nm_s_per_rad", self.friction_nm_s_per_rad)?,
            0.0,
            TORQUE_MAX_NM,
        )?;
        Ok(Motor { p: *self, winding })
    }
}

/// A validated motor; see the [module docs](super) for the model.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Motor {
    p: MotorParams,
    winding: Coil,
}

/// The linear model at one temperature, in `f64`: loop resistance, inductance, torque constant,
/// inertia (`0` when not stated) and friction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Dynamics {
    pub r: f64,
    pub l: f64,
    pub k: f64,
    pub j: f64,
    pub b: f64,
}

impl Dynamics {
    /// `k² + R·b`, the denominator of the steady state (positive: `k > 0`).
    pub fn den(&self) -> f64 {
        self.k * self.k + self.r * self.b
    }

    /// Steady current and speed at applied voltage `v` and load torque `t`.
    pub fn steady(&self, v: f64, t: f64) -> (f64, f64) {
        let den = self.den();
        (
            (self.b * v + self.k * t) / den,
            (self.k * v - self.r * t) / den,
        )
    }

    /// `α` and `ω₀²` of the characteristic polynomial (needs `j > 0`).
    pub fn alpha_w0sq(&self) -> (f64, f64) {
        (
            0.5 * (self.r / self.l + self.b / self.j),
            self.den() / (self.l * self.j),
        )
    }

    /// Current slope `di/dt` at a state under applied voltage `v`.
    pub fn di_dt(&self, v: f64, i: f64, w: f64) -> f64 {
        (v - self.r * i - self.k * w) / self.l
    }

    /// Speed slope `dω/dt` at a state under load torque `t` (needs `j > 0`).
    pub fn dw_dt(&self, t: f64, i: f64, w: f64) -> f64 {
        (self.k * i - self.b * w - t) / self.j
    }
}

impl Motor {
    /// The parameters this motor was validated from.
    #[must_use]
    pub const fn params(&self) -> &MotorParams {
        &self.p
    }

    /// The winding as a validated coil (its copper model is the motor's).
    #[must_use]
    pub const fn winding(&self) -> &Coil {
        &self.winding
    }

    /// Winding inductance, H.
    #[must_use]
    pub const fn inductance_h(&self) -> f32 {
        self.p.inductance_h
    }

    /// Torque constant, N·m/A.
    #[must_use]
    pub const fn torque_constant_nm_per_a(&self) -> f32 {
        self.p.torque_constant_nm_per_a
    }

    /// Winding resistance at `temp_c` (copper model of [`Coil::resistance_ohm`]), Ω.
    ///
    /// # Errors
    ///
    /// `temp_c` not finite or outside the coil's temperature range.
    pub fn resistance_ohm(&self, temp_c: f32) -> Result<f32, Error> {
        self.winding.resistance_ohm(temp_c)
    }

    /// Loop resistance at `temp_c`: winding plus bridge, Ω.
    ///
    /// # Errors
    ///
    /// As [`Motor::resistance_ohm`].
    pub fn loop_resistance_ohm(&self, temp_c: f32) -> Result<f32, Error> {
        self.winding.on_loop_resistance_ohm(temp_c)
    }

    /// The stated inertia, kg·m².
    ///
    /// # Errors
    ///
    /// [`Error::NotPositive`] naming `inertia_kg_m2` when the inertia was not stated.
    pub fn inertia_kg_m2(&self) -> Result<f32, Error> {
        self.p.inertia_kg_m2.ok_or(Error::NotPositive {
            param: "inertia_kg_m2",
        })
    }

    /// The linear model at `temp_c`; `inertia` asks for a stated inertia.
    pub(crate) fn dynamics(&self, temp_c: f32, inertia: bool) -> Result<Dynamics, Error> {
        let j = if inertia {
            f64::from(self.inertia_kg_m2()?)
        } else {
            0.0
        };
        Ok(Dynamics {
            r: f64::from(self.loop_resistance_ohm(temp_c)?),
            l: f64::from(self.p.inductance_h),
            k: f64::from(self.p.torque_constant_nm_per_a),
            j,
            b: f64::from(self.p.friction_nm_s_per_rad),
        })
    }
}

/// Checks a supply voltage: finite, positive, at most [`SUPPLY_MAX_V`].
pub(crate) fn check_supply(supply_v: f32) -> Result<f64, Error> {
    Ok(f64::from(in_range(
        "supply_v",
        positive("supply_v", supply_v)?,
        0.0,
        SUPPLY_MAX_V,
    )?))
}

/// Checks a load torque: finite, zero or positive, at most [`TORQUE_MAX_NM`].
pub(crate) fn check_load(load_torque_nm: f32) -> Result<f64, Error> {
    Ok(f64::from(in_range(
        "load_torque_nm",
        non_negative("load_torque_nm", load_torque_nm)?,
        0.0,
        TORQUE_MAX_NM,
    )?))
}
