//! Worst-case bounds of boost figures over input range, load range and part tolerances, by
//! [`crate::bounds::worst_case`] (corners plus interior extrema).

use super::{BoostPlan, BoostStageParams, OperatingPoint};
use crate::bounds::{Bound, Range, worst_case};
use crate::error::{Error, in_range};

/// One corner of a boost evaluation.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostCorner {
    /// Input voltage, V.
    pub input_v: f32,
    /// Load current, A.
    pub load_current_a: f32,
    /// Inductance, H.
    pub inductance_h: f32,
    /// Inductor DC resistance, Ω.
    pub inductor_resistance_ohm: f32,
    /// Switch on-resistance, Ω.
    pub switch_resistance_ohm: f32,
}

/// A boost stage with its spreads: input range, load range, and relative tolerances of the
/// inductance and of the resistances (inductor and switch together).
///
/// # Examples
///
/// ```
/// use lenz::{Range, boost::{BoostStageParams, BoostSpread}};
/// // Heater rail (invented demo values), 4.5..5.5 V in, 0.1..0.5 A, L ±20 %, R ±30 %.
/// let stage = BoostStageParams::new(10e-6, 500e3)
///     .with_inductor_resistance_ohm(0.040)
///     .with_switch_resistance_ohm(0.025)
///     .with_diode_drop_v(0.35)
///     .with_saturation_current_a(2.0);
/// let spread = BoostSpread::new(
///     stage,
///     12.0,
///     Range::new("input_v", 4.5, 5.5)?,
///     Range::new("load_current_a", 0.1, 0.5)?,
///     0.2,
///     0.3,
/// )?;
/// let ipk = spread.peak_inductor_current_a()?;
/// assert_eq!(ipk.max_at.input_v, 4.5); // lowest input, heaviest load
/// assert_eq!(ipk.max_at.load_current_a, 0.5);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostSpread {
    /// Nominal stage; inductance and resistances are replaced by the ranges below.
    pub stage: BoostStageParams,
    /// Wanted output voltage, V.
    pub output_v: f32,
    /// Input voltage range, V.
    pub input_v: Range,
    /// Load current range, A.
    pub load_current_a: Range,
    /// Inductance range, H.
    pub inductance_h: Range,
    /// Inductor resistance range, Ω.
    pub inductor_resistance_ohm: Range,
    /// Switch resistance range, Ω.
    pub switch_resistance_ohm: Range,
}

impl BoostSpread {
    /// A spread around `stage` with relative tolerances on the inductance and the resistances.
    ///
    /// # Errors
    ///
    /// Invalid stage, tolerances outside `0 ..= 0.99`, non-finite output voltage.
    pub fn new(
        stage: BoostStageParams,
        output_v: f32,
        input_v: Range,
        load_current_a: Range,
        inductance_tol: f32,
        resistance_tol: f32,
    ) -> Result<Self, Error> {
        stage.validate()?;
        in_range("output_v", output_v, 0.0, super::VOLTAGE_MAX_V)?;
        Ok(Self {
            stage,
            output_v,
            input_v,
            load_current_a,
            inductance_h: Range::tolerance("inductance_h", stage.inductance_h, inductance_tol)?,
            inductor_resistance_ohm: Range::tolerance(
                "inductor_resistance_ohm",
                stage.inductor_resistance_ohm,
                resistance_tol,
            )?,
            switch_resistance_ohm: Range::tolerance(
                "switch_resistance_ohm",
                stage.switch_resistance_ohm,
                resistance_tol,
            )?,
        })
    }

    /// Bounds of any plan figure over the spread.
    ///
    /// # Errors
    ///
    /// The first error of the plan at any evaluated corner (for example an output that some
    /// corner cannot reach: a worst case that does not exist is an error, not a bound).
    pub fn figure<F>(&self, f: F) -> Result<Bound<BoostCorner>, Error>
    where
        F: Fn(&BoostPlan) -> f32,
    {
        let ranges = [
            self.input_v,
            self.load_current_a,
            self.inductance_h,
            self.inductor_resistance_ohm,
            self.switch_resistance_ohm,
        ];
        let b = worst_case(&ranges, |p| {
            let stage = BoostStageParams {
                inductance_h: p[2],
                inductor_resistance_ohm: p[3],
                switch_resistance_ohm: p[4],
                ..self.stage
            }
            .validate()?;
            let op = OperatingPoint::with_load_current(p[0], self.output_v, p[1]);
            Ok(f(&stage.plan(&op)?))
        })?;
        Ok(b.map_corner(|p| BoostCorner {
            input_v: p[0],
            load_current_a: p[1],
            inductance_h: p[2],
            inductor_resistance_ohm: p[3],
            switch_resistance_ohm: p[4],
        }))
    }

    /// Duty bounds.
    ///
    /// # Errors
    ///
    /// As [`BoostSpread::figure`].
    pub fn duty(&self) -> Result<Bound<BoostCorner>, Error> {
        self.figure(|p| p.duty)
    }

    /// Peak inductor current bounds, A.
    ///
    /// # Errors
    ///
    /// As [`BoostSpread::figure`].
    pub fn peak_inductor_current_a(&self) -> Result<Bound<BoostCorner>, Error> {
        self.figure(|p| p.peak_inductor_current_a)
    }

    /// Bounds of `duty_max`; its minimum is the limit that holds at every corner.
    ///
    /// # Errors
    ///
    /// As [`BoostSpread::figure`].
    pub fn duty_max(&self) -> Result<Bound<BoostCorner>, Error> {
        self.figure(|p| p.limits.duty_max)
    }

    /// Bounds of the margin `duty_max − duty` (the plan of a corner whose duty lies beyond its
    /// limit fails, so the evaluation then returns that corner's error).
    ///
    /// # Errors
    ///
    /// As [`BoostSpread::figure`].
    pub fn duty_headroom(&self) -> Result<Bound<BoostCorner>, Error> {
        self.figure(|p| p.limits.duty_max - p.duty)
    }
}
