//! Boost stage: operating mode, duty from the wanted output with diode and resistive losses,
//! currents and ripple, and every duty limit with its reason.
//!
//! # For firmware and hardware engineers
//!
//! Describe the stage with [`BoostStageParams`] (validated into a [`BoostStage`]) and the
//! operating point with [`OperatingPoint`]; [`BoostStage::plan`] returns a [`BoostPlan`]: the
//! mode, the duty, the inductor currents, the output ripple and the [`DutyLimits`], each with
//! its reason. [`BoostSpread`] gives worst-case bounds over input range, load range and part
//! tolerances. [`crate::kernel::DutyLimiterConfig`] turns the limits into the per-tick clamp.
//!
//! # Model
//!
//! ```text
//!  V_g ──L, R_L──┬──diode (V_D)──┬── V (C with ESR, load R)
//!                │               │
//!             switch (R_on)     ─┴─
//!                │
//!               GND
//! ```
//!
//! Units are SI. `T = 1/f_s`, `D` the duty, `D' = 1 − D`, `R = V/I_o` the load as a resistance
//! at the operating point. Sources as in the project's reference sheet: Erickson & Maksimović,
//! *Fundamentals of Power Electronics*, 2nd ed. (Ch. 3 loss model, Ch. 5 DCM); TI SLVA372
//! (ripple and peak current); TI TPS40210 datasheet (minimum on and off times).
//!
//! ## Continuous conduction (CCM): duty from the loss model
//!
//! Volt-second balance on the inductor and charge balance on the capacitor, with the inductor
//! resistance `R_L` in both intervals, the switch resistance `R_on` during `D·T` and the diode
//! drop `V_D` during `D'·T`, give the conversion ratio (Erickson & Maksimović, Ch. 3):
//!
//! ```text
//! M(D) = V/V_g = (1 − D'·V_D/V_g) / (D' · (1 + (R_L + D·R_on)/(D'²·R)))
//! ```
//!
//! The duty for a wanted `V` solves `M(D) = V/V_g`. The losses are kept: with the diode drop
//! alone the heater rail of the reference sheet needs `D = 0.5951`, with all three `0.6007`.
//! `M(D)` rises from `M(0)` to a peak and falls beyond it (the loss terms grow as `1/D'`), so
//! the root is searched by bisection on `0 ..= D_pk`, where the function is monotonic: the
//! solution is always the one *below* the gain peak, the only one a controller can hold.
//! Efficiency is `η = M·D'`.
//!
//! ## The gain peak
//!
//! With `x = D'`, `a = V_D/V_g`, `c = (R_L + R_on)/R` and `r = R_on/R`, `dM/dx = 0` reduces
//! to the quadratic `(1 − a·r)·x² + 2·a·c·x − c = 0`, whose positive root is taken in the
//! cancellation-free form `x = c / (a·c + √(a²c² + (1 − a·r)·c))`. With `R_L` only this is the
//! textbook `D'_pk = √(R_L/R)`, `M_max = 1/(2√(R_L/R))`. Beyond `D_pk` more duty gives *less*
//! output: a voltage loop there has the wrong sign and runs away to full duty. Without any
//! resistive loss there is no peak.
//!
//! ## Currents and ripple (CCM)
//!
//! `I_L = I_o/D'`; ripple `ΔI_L = (V_g − I_L·(R_L + R_on))·D·T/L` (peak to peak; the inductor
//! voltage during the on interval, linearised); `I_pk = I_L + ΔI_L/2`, valley `I_L − ΔI_L/2`.
//!
//! ## Mode: K against K_crit, and the form used with the drops
//!
//! `K = 2L/(R·T)`. The textbook boundary is `K_crit(D) = D·(1 − D)²` (maximum 4/27 at
//! `D = 1/3`); lenz reports it as [`BoostPlan::k_crit`], evaluated at the CCM duty *with*
//! the drops (so it matches the reference values). The mode itself is decided by the exact
//! boundary of the model above, CCM when the valley current is positive:
//!
//! ```text
//! I_L > ΔI_L/2   ⇔   K > K_crit,drops = D·D'·(V_g − I_L·(R_L + R_on))/V
//! ```
//!
//! which reduces to `D(1 − D)²` for an ideal stage (`V_g = D'·V`) and is `D(1−D)²·(1 + V_D/V)`
//! with the diode drop alone. [`BoostPlan::k_crit_drops`] holds it. Between the two (a band of a
//! few per cent of `K`) the stage runs in DCM although `K > K_crit`.
//!
//! ## Discontinuous conduction (DCM)
//!
//! Each cycle starts from zero current. With the output held at `V` over the cycle:
//! on interval `i(t) = (V_g/R₁)(1 − e^(−t R₁/L))`, `R₁ = R_L + R_on`, so `I_pk = i(D·T)`;
//! diode interval `L di/dt = −(V_x + R_L·i)`, `V_x = V + V_D − V_g`, down to zero after
//! `t₂ = (L/R_L)·ln(1 + I_pk R_L/V_x)` and delivering `q = (L V_x/R_L²)·(y − ln(1 + y))`,
//! `y = I_pk R_L/V_x`. The duty solves `q/T = V/R` by bisection (`q` rises with `D`). Without
//! losses this is exactly the textbook DCM conversion ratio (Erickson & Maksimović, Ch. 5):
//!
//! ```text
//! M = (1 + √(1 + 4D²/K))/2,   D = √(K·M·(M − 1)),   D₂ = K·M/D,   I_pk = V_g·D·T/L
//! ```
//!
//! (and with the diode drop alone `D = √(K·M·(M − 1 + V_D/V_g))`). Note: a form
//! `M = D/((1−D)(D + K/2))` circulates in public notes; it does not reduce to `1/(1−D)` at the
//! boundary and gives 1.27 instead of 2.4 for the light-load check; it is not used.
//!
//! ## Output voltage ripple
//!
//! Capacitive part: the charge the capacitor gives up while the diode current is below `I_o`,
//! `ΔV_C = ΔQ/C`. In CCM with the valley at or above `I_o` this is `ΔQ = I_o·D·T`
//! (`ΔV_C = I_o·D/(f_s·C)`, TI SLVA372); otherwise the deficit below `I_o` during the diode
//! interval is added (exact for the piecewise linear current). In DCM the capacitor gains only
//! while the falling diode current exceeds `I_o`: `ΔQ = (I_pk − I_o)²·D₂·T/(2 I_pk)`.
//! ESR part: the capacitor current steps by `I_pk` when the switch opens, `ΔV_ESR = ESR·I_pk`.
//! [`OutputRipple::total_v`] is their sum, an upper bound of the peak-to-peak output ripple
//! (the two extremes do not coincide exactly).
//!
//! ## Duty limits, each with its reason
//!
//! - **Saturation**: the largest duty whose peak inductor current stays at or below the
//!   saturation current, at the operating input voltage and load (first crossing of
//!   `I_pk(D) = I_sat` from zero duty, mode by mode).
//! - **Minimum off time**: `D_max = 1 − t_off,min·f_s` (TI TPS40210 datasheet).
//! - **Gain peak**: `D_pk` above, with the peak gain and output.
//! - **Light-load overvoltage**: the largest duty that keeps the output at or below a stated
//!   maximum at the minimum load (where the stage runs in DCM and the gain at a given duty is
//!   highest), from the forward model at that load.
//! - **Minimum on time** (a lower limit): `D_min = t_on,min·f_s`; below it the switch cannot
//!   make the pulse.
//!
//! [`DutyLimits::duty_max`] is the smallest upper limit and [`DutyLimits::duty_max_reason`]
//! names it. A wanted output whose duty lies above `duty_max` or below `D_min`, or beyond the
//! peak gain, gives [`Error::Unreachable`] with the output reachable at the binding limit.
//!
//! # Numerics
//!
//! The routines take and return `f32`; internally they work in `f64` (`libm`), because the
//! gain is flat near its peak and the DCM forms subtract nearly equal logarithms; the small
//! argument forms `y − ln(1+y)` and `z − (1 − e^(−z))` use series below 10⁻⁴. Every root is
//! bracketed before bisection; no search can diverge or return an unbracketed root.

mod model;
mod spread;

pub use spread::{BoostCorner, BoostSpread};

use crate::error::{Error, finite_result, in_range, non_negative, positive};
use model::{DUTY_TOP, Point, Stage64, first_crossing, monotone_crossing};

/// Smallest inductance accepted, H.
pub const INDUCTANCE_MIN_H: f32 = 1.0e-9;
/// Largest inductance accepted, H.
pub const INDUCTANCE_MAX_H: f32 = 10.0;
/// Largest series resistance (inductor, switch) or ESR accepted, Ω.
pub const RESISTANCE_MAX_OHM: f32 = 1.0e3;
/// Largest voltage accepted (input, output, diode drop), V.
pub const VOLTAGE_MAX_V: f32 = 1.0e4;
/// Largest current of a boost stage accepted (load, saturation), A.
pub const STAGE_CURRENT_MAX_A: f32 = 1.0e4;
/// Switching frequency range accepted, Hz.
pub const FREQUENCY_MIN_HZ: f32 = 1.0;
/// Largest switching frequency accepted, Hz.
pub const FREQUENCY_MAX_HZ: f32 = 1.0e8;
/// Largest output capacitance accepted, F.
pub const CAPACITANCE_MAX_F: f32 = 10.0;

/// Description of a boost stage, before validation. Build with [`BoostStageParams::new`] and the
/// `with_*` setters, then [`BoostStageParams::validate`].
///
/// # Examples
///
/// ```
/// use lenz::boost::{BoostStageParams, OperatingPoint, Mode};
/// // Heater rail of the greenhouse demo (invented): 5 V -> 12 V at 0.5 A, 500 kHz, 10 µH.
/// let stage = BoostStageParams::new(10e-6, 500e3)
///     .with_inductor_resistance_ohm(0.040)
///     .with_switch_resistance_ohm(0.025)
///     .with_diode_drop_v(0.35)
///     .validate()?;
/// let plan = stage.plan(&OperatingPoint::with_load_current(5.0, 12.0, 0.5))?;
/// assert_eq!(plan.mode, Mode::Ccm);
/// assert!((plan.duty - 0.6007204).abs() < 1e-5);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostStageParams {
    /// Inductance. Units: H.
    pub inductance_h: f32,
    /// DC resistance of the inductor. Units: Ω. Default 0.
    pub inductor_resistance_ohm: f32,
    /// Saturation current of the inductor; `None` for no saturation limit. Units: A.
    pub saturation_current_a: Option<f32>,
    /// Switch on-resistance. Units: Ω. Default 0.
    pub switch_resistance_ohm: f32,
    /// Diode forward drop. Units: V. Default 0.
    pub diode_drop_v: f32,
    /// Switching frequency. Units: Hz.
    pub frequency_hz: f32,
    /// Minimum off time of the switch (controller). Units: s. Default 0.
    pub min_off_time_s: f32,
    /// Minimum on time of the switch (controller). Units: s. Default 0.
    pub min_on_time_s: f32,
    /// Output capacitance; `None` when not stated (no output ripple). Units: F.
    pub output_capacitance_f: Option<f32>,
    /// Equivalent series resistance of the output capacitor. Units: Ω. Default 0.
    pub esr_ohm: f32,
}

impl BoostStageParams {
    /// An ideal stage: inductance `inductance_h`, switching at `frequency_hz`, no losses, no
    /// limits, no output capacitor stated.
    #[must_use]
    pub const fn new(inductance_h: f32, frequency_hz: f32) -> Self {
        Self {
            inductance_h,
            inductor_resistance_ohm: 0.0,
            saturation_current_a: None,
            switch_resistance_ohm: 0.0,
            diode_drop_v: 0.0,
            frequency_hz,
            min_off_time_s: 0.0,
            min_on_time_s: 0.0,
            output_capacitance_f: None,
            esr_ohm: 0.0,
        }
    }

    /// Sets the inductor DC resistance, Ω.
    #[must_use]
    pub const fn with_inductor_resistance_ohm(mut self, r: f32) -> Self {
        self.inductor_resistance_ohm = r;
        self
    }

    /// Sets the inductor saturation current, A.
    #[must_use]
    pub const fn with_saturation_current_a(mut self, i: f32) -> Self {
        self.saturation_current_a = Some(i);
        self
    }

    /// Sets the switch on-resistance, Ω.
    #[must_use]
    pub const fn with_switch_resistance_ohm(mut self, r: f32) -> Self {
        self.switch_resistance_ohm = r;
        self
    }

    /// Sets the diode forward drop, V.
    #[must_use]
    pub const fn with_diode_drop_v(mut self, v: f32) -> Self {
        self.diode_drop_v = v;
        self
    }

    /// Sets the minimum off time, s.
    #[must_use]
    pub const fn with_min_off_time_s(mut self, t: f32) -> Self {
        self.min_off_time_s = t;
        self
    }

    /// Sets the minimum on time, s.
    #[must_use]
    pub const fn with_min_on_time_s(mut self, t: f32) -> Self {
        self.min_on_time_s = t;
        self
    }

    /// Sets the output capacitance, F, and its ESR, Ω.
    #[must_use]
    pub const fn with_output_capacitor(mut self, capacitance_f: f32, esr_ohm: f32) -> Self {
        self.output_capacitance_f = Some(capacitance_f);
        self.esr_ohm = esr_ohm;
        self
    }

    /// Checks every field and returns the validated stage.
    ///
    /// # Errors
    ///
    /// Names the first field that is not finite, not positive where it must be, negative, or
    /// outside its documented range; `min_on_time_s` when the minimum on and off times together
    /// fill the switching period.
    pub fn validate(&self) -> Result<BoostStage, Error> {
        in_range(
            "inductance_h",
            positive("inductance_h", self.inductance_h)?,
            INDUCTANCE_MIN_H,
            INDUCTANCE_MAX_H,
        )?;
        in_range(
            "frequency_hz",
            positive("frequency_hz", self.frequency_hz)?,
            FREQUENCY_MIN_HZ,
            FREQUENCY_MAX_HZ,
        )?;
        for (name, r) in [
            ("inductor_resistance_ohm", self.inductor_resistance_ohm),
            ("switch_resistance_ohm", self.switch_resistance_ohm),
            ("esr_ohm", self.esr_ohm),
        ] {
            in_range(name, non_negative(name, r)?, 0.0, RESISTANCE_MAX_OHM)?;
        }
        in_range(
            "diode_drop_v",
            non_negative("diode_drop_v", self.diode_drop_v)?,
            0.0,
            VOLTAGE_MAX_V,
        )?;
        if let Some(i) = self.saturation_current_a {
            in_range(
                "saturation_current_a",
                positive("saturation_current_a", i)?,
                0.0,
                STAGE_CURRENT_MAX_A,
            )?;
        }
        if let Some(c) = self.output_capacitance_f {
            in_range(
                "output_capacitance_f",
                positive("output_capacitance_f", c)?,
                0.0,
                CAPACITANCE_MAX_F,
            )?;
        }
        let period = 1.0 / self.frequency_hz;
        let toff = non_negative("min_off_time_s", self.min_off_time_s)?;
        in_range("min_off_time_s", toff, 0.0, period)?;
        let ton = non_negative("min_on_time_s", self.min_on_time_s)?;
        in_range("min_on_time_s", ton, 0.0, period - toff)?;
        Ok(BoostStage { p: *self })
    }
}

/// The load of an operating point.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Load {
    /// Load current at the wanted output voltage, A (modelled as the resistance `V/I`).
    CurrentA(f32),
    /// Load resistance, Ω.
    ResistanceOhm(f32),
}

/// The light-load condition for the overvoltage limit.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct LightLoad {
    /// The smallest load current, at the wanted output voltage (modelled as the resistance
    /// `V/I_min`). Units: A.
    pub min_load_current_a: f32,
    /// The output must stay at or below this voltage. Units: V.
    pub max_output_v: f32,
}

/// An operating point: input voltage, wanted output voltage, load, and optionally the
/// light-load condition for the overvoltage limit.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct OperatingPoint {
    /// Input voltage. Units: V.
    pub input_v: f32,
    /// Wanted output voltage. Units: V.
    pub output_v: f32,
    /// The load.
    pub load: Load,
    /// Minimum load and maximum output for the light-load overvoltage limit; `None` for no
    /// such limit.
    pub light_load: Option<LightLoad>,
}

impl OperatingPoint {
    /// `input_v` to `output_v` delivering `load_current_a`.
    #[must_use]
    pub const fn with_load_current(input_v: f32, output_v: f32, load_current_a: f32) -> Self {
        Self {
            input_v,
            output_v,
            load: Load::CurrentA(load_current_a),
            light_load: None,
        }
    }

    /// `input_v` to `output_v` into a load resistance `load_ohm`.
    #[must_use]
    pub const fn with_load_resistance(input_v: f32, output_v: f32, load_ohm: f32) -> Self {
        Self {
            input_v,
            output_v,
            load: Load::ResistanceOhm(load_ohm),
            light_load: None,
        }
    }

    /// Adds the light-load condition: at `min_load_current_a` the output must stay at or below
    /// `max_output_v`.
    #[must_use]
    pub const fn with_light_load(mut self, min_load_current_a: f32, max_output_v: f32) -> Self {
        self.light_load = Some(LightLoad {
            min_load_current_a,
            max_output_v,
        });
        self
    }
}

/// Conduction mode.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Mode {
    /// Continuous conduction: the inductor current never falls to zero.
    Ccm,
    /// Discontinuous conduction: the current falls to zero in every cycle.
    Dcm,
}

impl Mode {
    /// `"ccm"` or `"dcm"`.
    #[must_use]
    pub const fn as_str(self) -> &'static str {
        match self {
            Mode::Ccm => "ccm",
            Mode::Dcm => "dcm",
        }
    }
}

/// Why the duty is limited.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum LimitReason {
    /// The peak inductor current would exceed the saturation current.
    Saturation,
    /// The switch needs its minimum off time in every period.
    MinOffTime,
    /// Beyond the gain peak more duty gives less output (the control reverses).
    GainPeak,
    /// At the minimum load the output would exceed its maximum.
    LightLoadOvervoltage,
}

impl LimitReason {
    /// `"saturation"`, `"min_off_time"`, `"gain_peak"` or `"light_load_overvoltage"`.
    #[must_use]
    pub const fn as_str(self) -> &'static str {
        match self {
            LimitReason::Saturation => "saturation",
            LimitReason::MinOffTime => "min_off_time",
            LimitReason::GainPeak => "gain_peak",
            LimitReason::LightLoadOvervoltage => "light_load_overvoltage",
        }
    }
}

/// The gain peak of the loss model at the operating load.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct GainPeak {
    /// Duty at the peak.
    pub duty: f32,
    /// Peak conversion ratio `M_max = V_max/V_g`.
    pub gain: f32,
    /// Peak output voltage `M_max·V_g`. Units: V.
    pub output_v: f32,
}

/// Every duty limit with its reason (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyLimits {
    /// Largest duty with the peak current at or below the saturation current; `None` without a
    /// saturation current or when the peak never reaches it.
    pub saturation: Option<f32>,
    /// `1 − t_off,min·f_s` (1 without a minimum off time).
    pub min_off_time: f32,
    /// The gain peak; `None` for a stage without resistive losses.
    pub gain_peak: Option<GainPeak>,
    /// Largest duty keeping the output at or below its maximum at the minimum load; `None`
    /// without a light-load condition or when the output never exceeds the maximum.
    pub light_load: Option<f32>,
    /// Lower limit `t_on,min·f_s`.
    pub min_on_time: f32,
    /// The smallest of the upper limits.
    pub duty_max: f32,
    /// Which limit `duty_max` is.
    pub duty_max_reason: LimitReason,
}

/// Output voltage ripple, peak to peak.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct OutputRipple {
    /// Capacitive part `ΔQ/C`. Units: V.
    pub capacitive_v: f32,
    /// ESR part `ESR·I_pk`. Units: V.
    pub esr_v: f32,
    /// Sum of both, an upper bound of the output ripple. Units: V.
    pub total_v: f32,
}

/// The plan of one operating point (see the module docs for every formula).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BoostPlan {
    /// Conduction mode.
    pub mode: Mode,
    /// Duty that gives the wanted output.
    pub duty: f32,
    /// `K = 2L/(R·T)`.
    pub k: f32,
    /// Textbook `K_crit = D(1 − D)²` at the CCM duty with the drops.
    pub k_crit: f32,
    /// Exact CCM boundary of the model with the drops, `D·D'·(V_g − I_L(R_L + R_on))/V`; the
    /// mode is CCM when `k > k_crit_drops`.
    pub k_crit_drops: f32,
    /// Load resistance `R`. Units: Ω.
    pub load_resistance_ohm: f32,
    /// Load current `V/R`. Units: A.
    pub output_current_a: f32,
    /// Load current below which the stage enters DCM at this output, `V·K_crit,drops·T/(2L)`.
    /// Units: A.
    pub boundary_load_current_a: f32,
    /// Efficiency `V·I_o/(V_g·I_in)`.
    pub efficiency: f32,
    /// Average inductor (input) current. Units: A.
    pub average_inductor_current_a: f32,
    /// Inductor ripple current, peak to peak. Units: A.
    pub ripple_current_a: f32,
    /// Peak inductor current. Units: A.
    pub peak_inductor_current_a: f32,
    /// Lowest inductor current in the period (0 in DCM). Units: A.
    pub valley_inductor_current_a: f32,
    /// Fraction of the period the diode conducts (`D'` in CCM, `D₂` in DCM).
    pub diode_conduction_fraction: f32,
    /// `1 − I_pk/I_sat`; `None` without a saturation current.
    pub saturation_margin: Option<f32>,
    /// Output ripple; `None` without an output capacitance.
    pub output_ripple: Option<OutputRipple>,
    /// The duty limits at this operating point.
    pub limits: DutyLimits,
}

/// The mode and figures of the stage at a given duty (forward model).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyPoint {
    /// Conduction mode.
    pub mode: Mode,
    /// Output voltage. Units: V.
    pub output_v: f32,
    /// Average inductor current. Units: A.
    pub average_inductor_current_a: f32,
    /// Peak inductor current. Units: A.
    pub peak_inductor_current_a: f32,
}

/// A validated boost stage; see the [module docs](self).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct BoostStage {
    p: BoostStageParams,
}

/// Validated operating point in f64.
#[derive(Debug, Clone, Copy)]
struct Op64 {
    vg: f64,
    v: f64,
    r: f64,
    light: Option<(f64, f64)>,
}

/// Textbook CCM/DCM boundary `K_crit(D) = D·(1 − D)²` (Erickson & Maksimović, Ch. 5).
///
/// # Errors
///
/// `duty` not finite or outside `0 ..= 1`.
pub fn k_crit(duty: f32) -> Result<f32, Error> {
    let d = in_range("duty", duty, 0.0, 1.0)?;
    Ok(d * (1.0 - d) * (1.0 - d))
}

/// Ideal CCM conversion ratio `M = 1/(1 − D)` (Erickson & Maksimović).
///
/// # Errors
///
/// `duty` not finite or outside `0 ..= 0.999` (the gain grows without bound towards 1).
pub fn ideal_ccm_gain(duty: f32) -> Result<f32, Error> {
    let d = in_range("duty", duty, 0.0, 0.999)?;
    Ok(1.0 / (1.0 - d))
}

/// Ideal DCM conversion ratio `M = (1 + √(1 + 4D²/K))/2` (Erickson & Maksimović, Ch. 5).
///
/// # Errors
///
/// `duty` outside `0 ..= 1`, `k` not positive or not finite.
pub fn ideal_dcm_gain(duty: f32, k: f32) -> Result<f32, Error> {
    let d = in_range("duty", duty, 0.0, 1.0)? as f64;
    let k = positive("k", k)? as f64;
    finite_result(
        "k",
        (0.5 * (1.0 + libm::sqrt(1.0 + 4.0 * d * d / k))) as f32,
    )
}

impl BoostStage {
    /// The parameters this stage was validated from.
    #[must_use]
    pub const fn params(&self) -> &BoostStageParams {
        &self.p
    }

    fn s64(&self) -> Stage64 {
        Stage64 {
            l: self.p.inductance_h as f64,
            rl: self.p.inductor_resistance_ohm as f64,
            ron: self.p.switch_resistance_ohm as f64,
            vd: self.p.diode_drop_v as f64,
            t: 1.0 / self.p.frequency_hz as f64,
        }
    }

    fn op64(&self, op: &OperatingPoint) -> Result<Op64, Error> {
        let vg = in_range(
            "input_v",
            positive("input_v", op.input_v)?,
            0.0,
            VOLTAGE_MAX_V,
        )?;
        if vg <= self.p.diode_drop_v {
            return Err(Error::OutOfRange {
                param: "input_v",
                value: vg,
                min: self.p.diode_drop_v,
                max: VOLTAGE_MAX_V,
            });
        }
        let v = in_range(
            "output_v",
            positive("output_v", op.output_v)?,
            0.0,
            VOLTAGE_MAX_V,
        )?;
        let r = match op.load {
            Load::CurrentA(i) => {
                let i = in_range(
                    "load_current_a",
                    positive("load_current_a", i)?,
                    0.0,
                    STAGE_CURRENT_MAX_A,
                )?;
                v as f64 / i as f64
            }
            Load::ResistanceOhm(r) => positive("load_ohm", r)? as f64,
        };
        let light = match op.light_load {
            None => None,
            Some(ll) => {
                let i = in_range(
                    "min_load_current_a",
                    positive("min_load_current_a", ll.min_load_current_a)?,
                    0.0,
                    STAGE_CURRENT_MAX_A,
                )?;
                let vmax = in_range("max_output_v", ll.max_output_v, v, VOLTAGE_MAX_V)?;
                Some((v as f64 / i as f64, vmax as f64))
            }
        };
        Ok(Op64 {
            vg: vg as f64,
            v: v as f64,
            r,
            light,
        })
    }

    /// The duty limits at the operating point (the wanted output sets the load resistance; it
    /// need not be reachable).
    ///
    /// # Errors
    ///
    /// Bad operating point values, named; `input_v` at or below the diode drop.
    pub fn duty_limits(&self, op: &OperatingPoint) -> Result<DutyLimits, Error> {
        let o = self.op64(op)?;
        self.limits64(&o)
    }

    fn limits64(&self, o: &Op64) -> Result<DutyLimits, Error> {
        let s = self.s64();
        let fs = self.p.frequency_hz as f64;
        let peak = s.gain_peak(o.vg, o.r);
        let saturation = self.p.saturation_current_a.and_then(|isat| {
            let isat = isat as f64;
            first_crossing(DUTY_TOP, |d| s.peak_at(d, o.vg, o.r) <= isat)
        });
        let light_load = o.light.and_then(|(r_ll, vmax)| {
            let top = s.gain_peak(o.vg, r_ll).map_or(DUTY_TOP, |(d, _)| d);
            // The output rises with the duty up to the gain peak at that load, in DCM and CCM.
            monotone_crossing(top, |d| s.at_duty(d, o.vg, r_ll).v <= vmax)
        });
        let min_off = 1.0 - self.p.min_off_time_s as f64 * fs;
        let min_on = self.p.min_on_time_s as f64 * fs;
        let mut duty_max = min_off;
        let mut reason = LimitReason::MinOffTime;
        for (lim, why) in [
            (peak.map(|p| p.0), LimitReason::GainPeak),
            (saturation, LimitReason::Saturation),
            (light_load, LimitReason::LightLoadOvervoltage),
        ] {
            if let Some(d) = lim
                && d < duty_max
            {
                duty_max = d;
                reason = why;
            }
        }
        let f = |x: f64| finite_result("duty_limits", x as f32);
        let gain_peak = match peak {
            None => None,
            Some((d, m)) => Some(GainPeak {
                duty: f(d)?,
                gain: f(m)?,
                output_v: f(m * o.vg)?,
            }),
        };
        Ok(DutyLimits {
            saturation: saturation.map(f).transpose()?,
            min_off_time: f(min_off)?,
            gain_peak,
            light_load: light_load.map(f).transpose()?,
            min_on_time: f(min_on)?,
            duty_max: f(duty_max)?,
            duty_max_reason: reason,
        })
    }

    /// Mode, output and currents at `duty` from `input_v` into a load resistance `load_ohm`.
    ///
    /// # Errors
    ///
    /// Bad values, named; `duty` outside `0 ..= 0.999999`.
    pub fn at_duty(&self, input_v: f32, duty: f32, load_ohm: f32) -> Result<DutyPoint, Error> {
        let op = OperatingPoint::with_load_resistance(input_v, 1.0, load_ohm);
        let o = self.op64(&op)?;
        let d = in_range("duty", duty, 0.0, 0.999_999)? as f64;
        let p = self.s64().at_duty(d, o.vg, o.r);
        Ok(DutyPoint {
            mode: if p.ccm { Mode::Ccm } else { Mode::Dcm },
            output_v: finite_result("duty", p.v as f32)?,
            average_inductor_current_a: finite_result("duty", p.il_avg as f32)?,
            peak_inductor_current_a: finite_result("duty", p.ipk as f32)?,
        })
    }

    /// The plan of an operating point: mode, duty, currents, ripple and duty limits.
    ///
    /// # Errors
    ///
    /// Bad values, named. [`Error::Unreachable`] (param `output_v`) with the reachable output
    /// as the limit when the wanted output lies above the peak gain, needs a duty above
    /// `duty_max` or below the minimum on time, or lies below the output at zero duty.
    pub fn plan(&self, op: &OperatingPoint) -> Result<BoostPlan, Error> {
        let o = self.op64(op)?;
        let s = self.s64();
        let limits = self.limits64(&o)?;
        let (vg, v, r) = (o.vg, o.v, o.r);
        let io = v / r;
        let unreachable = |limit: f64| Error::Unreachable {
            param: "output_v",
            target: v as f32,
            limit: limit as f32,
        };
        let m = v / vg;
        let peak = s.gain_peak(vg, r);
        let d_hi = peak.map_or(DUTY_TOP, |p| p.0);
        let m_lo = s.ccm_gain(0.0, vg, r);
        let ccm_duty: Result<f64, Error> = if m < m_lo {
            Err(unreachable(m_lo * vg))
        } else if s.ccm_gain(d_hi, vg, r) < m {
            Err(unreachable(s.ccm_gain(d_hi, vg, r) * vg))
        } else {
            Ok(model::bisect(0.0, d_hi, |d| s.ccm_gain(d, vg, r) < m))
        };
        let point: Point = match ccm_duty {
            Ok(d) => {
                let c = s.ccm_point(d, vg, r);
                match (c.valley <= 0.0).then(|| s.dcm_duty(v, vg, io)).flatten() {
                    Some(dd) => s.dcm_point(dd, vg, v),
                    None => Point {
                        ccm: true,
                        v,
                        il_avg: c.il,
                        ripple: c.ripple,
                        ipk: c.ipk,
                        valley: c.valley,
                        d2: 1.0 - d,
                    },
                }
            }
            Err(e) => match s.dcm_duty(v, vg, io) {
                Some(dd) => s.dcm_point(dd, vg, v),
                None => return Err(e),
            },
        };
        let duty = if point.ccm {
            // The CCM branch is only taken with a CCM duty.
            ccm_duty.unwrap_or(0.0)
        } else {
            s.dcm_duty(v, vg, io).unwrap_or(0.0)
        };
        let d_max = limits.duty_max as f64;
        if duty > d_max {
            return Err(unreachable(s.at_duty(d_max, vg, r).v));
        }
        let d_min = limits.min_on_time as f64;
        if duty < d_min {
            return Err(unreachable(s.at_duty(d_min, vg, r).v));
        }
        // K_crit figures at the CCM duty with the drops (the DCM duty when CCM has none).
        let d_ref = ccm_duty.unwrap_or(duty);
        let c_ref = s.ccm_point(d_ref, vg, r);
        let k = 2.0 * s.l / (r * s.t);
        let kc = d_ref * (1.0 - d_ref) * (1.0 - d_ref);
        let kc_drops = d_ref * (1.0 - d_ref) * c_ref.v_on / v;
        let ripple = self.p.output_capacitance_f.map(|c| {
            let c = c as f64;
            let dq = if point.ccm {
                let base = io * duty * s.t;
                if point.valley >= io || point.ripple <= 0.0 {
                    base
                } else {
                    // Diode current below I_o for part of the off interval: add that deficit.
                    let slope = point.ripple / ((1.0 - duty) * s.t);
                    let deficit = (io - point.valley).min(point.ripple);
                    base + deficit * deficit / (2.0 * slope)
                }
            } else if point.ipk > io {
                (point.ipk - io) * (point.ipk - io) * point.d2 * s.t / (2.0 * point.ipk)
            } else {
                0.0
            };
            let cap = dq / c;
            let esr = self.p.esr_ohm as f64 * point.ipk;
            (cap, esr)
        });
        let f = |x: f64| finite_result("output_v", x as f32);
        let output_ripple = match ripple {
            None => None,
            Some((cap, esr)) => Some(OutputRipple {
                capacitive_v: f(cap)?,
                esr_v: f(esr)?,
                total_v: f(cap + esr)?,
            }),
        };
        let saturation_margin = match self.p.saturation_current_a {
            None => None,
            Some(isat) => Some(f(1.0 - point.ipk / isat as f64)?),
        };
        Ok(BoostPlan {
            mode: if point.ccm { Mode::Ccm } else { Mode::Dcm },
            duty: f(duty)?,
            k: f(k)?,
            k_crit: f(kc)?,
            k_crit_drops: f(kc_drops)?,
            load_resistance_ohm: f(r)?,
            output_current_a: f(io)?,
            boundary_load_current_a: f(v * kc_drops * s.t / (2.0 * s.l))?,
            efficiency: f(v * io / (vg * point.il_avg))?,
            average_inductor_current_a: f(point.il_avg)?,
            ripple_current_a: f(point.ripple)?,
            peak_inductor_current_a: f(point.ipk)?,
            valley_inductor_current_a: f(point.valley.max(0.0))?,
            diode_conduction_fraction: f(point.d2)?,
            saturation_margin,
            output_ripple,
            limits,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;
    use proptest::prelude::*;

    fn heater() -> BoostStageParams {
        // CHECKS section 3 heater rail (invented demo values).
        BoostStageParams::new(10e-6, 500e3)
            .with_inductor_resistance_ohm(0.040)
            .with_switch_resistance_ohm(0.025)
            .with_diode_drop_v(0.35)
            .with_output_capacitor(22e-6, 0.005)
    }

    #[test]
    fn heater_rail_ccm() {
        // CHECKS C3.2 (computed: closed form cross-checked numerically).
        let p = heater()
            .validate()
            .unwrap()
            .plan(&OperatingPoint::with_load_current(5.0, 12.0, 0.5))
            .unwrap();
        std::println!("{p:?}");
        assert_eq!(p.mode, Mode::Ccm);
        assert!(isclose(p.duty as f64, 0.6007203716, 1e-5, 0.0));
        assert!(isclose(
            p.peak_inductor_current_a as f64,
            1.54772575,
            1e-5,
            0.0
        ));
    }

    #[test]
    fn light_load_dcm() {
        // CHECKS C3.5 (computed): ideal stage, R = 600 Ω, M = 2.4.
        let p = BoostStageParams::new(10e-6, 500e3)
            .validate()
            .unwrap()
            .plan(&OperatingPoint::with_load_resistance(5.0, 12.0, 600.0))
            .unwrap();
        std::println!("{p:?}");
        assert_eq!(p.mode, Mode::Dcm);
        assert!(isclose(p.duty as f64, 0.2366431913, 1e-6, 0.0));
    }

    /// A draw in `0..1` (scaled into a parameter's range), or an arbitrary f32, or a special
    /// value (NaN, ±inf, subnormal, zero, negative, huge), kept as it is.
    #[derive(Debug, Clone, Copy)]
    enum Draw {
        Unit(f32),
        Raw(f32),
    }

    fn draw() -> impl Strategy<Value = Draw> {
        prop_oneof![
            28 => (0.0f32..1.0).prop_map(Draw::Unit),
            1 => any::<f32>().prop_map(Draw::Raw),
            1 => proptest::sample::select(std::vec![
                0.0f32, -0.0, f32::NAN, f32::INFINITY, f32::NEG_INFINITY,
                f32::MIN_POSITIVE / 4.0, -1.0, f32::MAX,
            ]).prop_map(Draw::Raw),
        ]
    }

    fn val(d: Draw, lo: f32, hi: f32) -> f32 {
        match d {
            Draw::Unit(u) => lo + (hi - lo) * u,
            Draw::Raw(x) => x,
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(400))]
        #[test]
        fn plan_never_panics(d in proptest::collection::vec(draw(), 15)) {
            let [l, f, rl, ron, vd, vg, v, i, isat, toff, ton, cap, esr, ll, vmax] = [
                val(d[0], 1e-6, 1e-4), val(d[1], 1e4, 1e6), val(d[2], 0.0, 0.2),
                val(d[3], 0.0, 0.2), val(d[4], 0.0, 1.0), val(d[5], 1.0, 30.0),
                val(d[6], 1.1, 5.0), val(d[7], 1e-3, 2.0), val(d[8], 1.0, 20.0),
                val(d[9], 0.0, 1e-7), val(d[10], 0.0, 1e-7), val(d[11], 1e-6, 1e-3),
                val(d[12], 0.0, 0.1), val(d[13], 0.01, 1.0), val(d[14], 1.0, 2.0),
            ];
            let stage = BoostStageParams::new(l, f)
                .with_inductor_resistance_ohm(rl)
                .with_switch_resistance_ohm(ron)
                .with_diode_drop_v(vd)
                .with_saturation_current_a(isat)
                .with_min_off_time_s(toff)
                .with_min_on_time_s(ton)
                .with_output_capacitor(cap, esr);
            if let Ok(s) = stage.validate() {
                // Output as a multiple of the input; the light-load condition in a third of cases.
                let v = v * vg;
                let mut op = OperatingPoint::with_load_current(vg, v, i);
                if matches!(d[13], Draw::Raw(_)) || ll < 0.3 {
                    op = op.with_light_load(i * ll, v * vmax);
                }
                match s.plan(&op) {
                    Ok(p) => {
                        let lim = p.limits;
                        prop_assert!(p.duty >= lim.min_on_time && p.duty <= lim.duty_max);
                        for x in [p.k, p.k_crit, p.average_inductor_current_a,
                                  p.ripple_current_a, p.peak_inductor_current_a, p.efficiency] {
                            prop_assert!(x.is_finite() && x >= 0.0);
                        }
                        prop_assert!(p.peak_inductor_current_a >= p.average_inductor_current_a * 0.999);
                        prop_assert!(p.efficiency <= 1.0 + 1e-5);
                    }
                    Err(Error::Unreachable { limit, .. }) => prop_assert!(limit.is_finite()),
                    Err(e) => prop_assert!(!e.param().is_empty()),
                }
                if let Ok(l) = s.duty_limits(&op) {
                    prop_assert!(l.duty_max >= 0.0 && l.duty_max <= 1.0);
                }
                let _ = s.at_duty(vg, 0.5, v);
            }
        }
    }
}
