//! Safe switch-off: how fast the coil current decays through each kind of clamp, what voltage
//! the switch sees, and where the stored energy goes.
//!
//! # For design engineers
//!
//! When the switch opens, the coil's current cannot stop at once: it keeps flowing through
//! whatever path the clamp offers. [`SwitchOff`] takes the coil (inductance `L`, the resistance
//! `R` of the winding at its temperature), the supply `V_s`, the current at switch-off `I₀` and
//! a [`Clamp`], and gives in closed form the current at any time, the time to fall to a given
//! current, the time to zero, the peak switch voltage, the energy into the clamp, the coil
//! resistance and from the supply, and the clamp's peak power. [`SwitchOff::verdicts`] checks
//! them against part ratings, [`compare`] puts clamp kinds side by side, and [`TurnOffSpread`]
//! gives worst-case bounds over supply, temperature and part tolerances.
//!
//! # Model: a constant clamp voltage in the coil loop
//!
//! Freewheel diode (`V_c = V_f`), diode plus zener across the coil (`V_c = V_z + V_f`), and a
//! clamp across the switch at `V_cl` (MOSFET avalanche, TVS, active clamp: the coil sees
//! `V_c = V_cl − V_s` because the supply stays in the loop) all put a constant voltage `V_c`
//! against the current:
//!
//! ```text
//! L di/dt = −(R i + V_c)        while i > 0 (then the diode or the switch blocks)
//! i(t) = (I₀ + a)·e^(−t/τ) − a,     τ = L/R,  a = V_c/R
//!      = I₀·e^(−t/τ) + a·expm1(−t/τ)
//! t(I₀ → I_x) = τ·ln((I₀ + a)/(I_x + a)) = τ·ln1p((I₀ − I_x)/(I_x + a))
//! t(I₀ → 0) = τ·ln1p(x),     x = I₀ R/V_c
//! ```
//!
//! (first-order RL with a constant source, every circuits textbook; the energy form below is the
//! exact switch-off energy equation of high-side switch datasheets). With `V_c = 0` (an ideal
//! diode) the decay is exponential only: the current never reaches zero, and
//! [`DecayEnd::Exponential`] gives the time to [`TAIL_FRACTION`] of `I₀` instead.
//!
//! Resistor plus diode (`R_s`, `V_f`) is the same with the loop resistance `R + R_s` and
//! `V_c = V_f`; the switch then sees `V_s + V_f + I₀ R_s` at the first instant.
//!
//! # Energy
//!
//! The charge through the clamp is `Q = ∫ i dt = τ·(I₀ − a·ln(1 + x)) = (L I₀/R)·h(x)`, so
//!
//! ```text
//! E_c = V_c·Q = ½ L I₀²·g(x)         (into the constant voltage)
//! E_R = ½ L I₀²·m(x)                 (into the loop resistance; m = 1 − g)
//! g(x) = 2(x − ln(1 + x))/x²,  h(x) = 1 − ln(1 + x)/x
//! ```
//!
//! For a clamp across the switch the switch takes `E_sw = V_cl·Q` and the supply delivers
//! `V_s·Q` on top of the stored `½ L I₀²`; as `R → 0`, `E_sw → ½ L I₀²·V_cl/(V_cl − V_s)`, the
//! single-pulse avalanche relation of MOSFET application notes (see
//! [`avalanche_energy_lossless_j`]), which overstates the energy of a real coil. Written
//! naively, `V_c τ (I₀ − (V_c/R) ln(1 + I₀R/V_c))` loses every f32 digit at small `x`; the
//! functions in [`stable`] keep them (Taylor series below `x = 0.5`).
//!
//! Energy balance, exact in every case: clamp + resistance = stored + supply.
//!
//! # Unclamped
//!
//! With only the switch node's capacitance `C_p`, the coil rings as a series RLC. With
//! `q = v − V_s` (switch voltage less supply): `L di/dt = −q − R i`, `C_p dq/dt = i`, from
//! `i(0) = I₀`, `q(0) = −V_s` (the switch was on). With `α = R/2L`, `ω₀² = 1/(L C_p)`,
//! `ω_d = √(ω₀² − α²)`, `A = −V_s`, `B = (I₀/C_p − α V_s)/ω_d`, underdamped:
//!
//! ```text
//! v(t) = V_s + e^(−αt)(A cos ω_d t + B sin ω_d t)
//! first peak at θ = ω_d t = atan2(ω_d B − α A, ω_d A + α B)   (where i first reaches zero)
//! lossless peak V_s + √(V_s² + (I₀ Z₀)²),  Z₀ = √(L/C_p)
//! ```
//!
//! Overdamped and critically damped loops are solved with the same closed form in hyperbolic
//! and polynomial terms (stable near critical damping). The "time to a current" is the time
//! after which the loop energy `½ L i² + ½ C_p q²` (which only falls, `dW/dt = −R i²`) can no
//! longer hold a current above it, found by bisection on the closed form; the amplitude dies
//! with `2L/R`, so this decay is exponential only. The clamp energy is what the capacitance
//! keeps, `½ C_p V_s²` (dissipated in the switch when it next closes); the supply delivers
//! `C_p V_s²`; the coil resistance takes `½ L I₀² + ½ C_p V_s²`. Such a peak usually exceeds
//! the switch's rating, which then avalanches: [`SwitchOff::verdicts`] reports that and
//! evaluates the avalanche at the breakdown voltage.
//!
//! # Relay release
//!
//! The current part of a relay's release time is the time from `I₀` to the drop-out current.
//! Without a drop-out current, [`RELEASE_FRACTION_COMMON_PRACTICE`] (10 % of the nominal current)
//! is used: relay datasheets guarantee must-release at no less than 10 % of the nominal voltage
//! (a datasheet convention, common practice, not a standard). The armature's own release
//! motion is not modelled and comes on top.
//!
//! # Units and ranges
//!
//! SI units. Accepted: `L` and `R` as for [`crate::coil`], supply `0 ..= 10 kV`, currents
//! `0 ..= 100 kA`, clamp voltages `0 ..= 100 kV`, `C_p` `1 fF ..= 1 F`. The f32 results agree
//! with an f64 evaluation to 1e-4 relative over the ranges of the property tests: clamped,
//! `L` 10 µH..10 H, `R` 0.1 Ω..10 kΩ, supply 0..100 V, `I₀` 1 mA..100 A, diode drops 0..2 V,
//! zener 1..200 V, a switch clamp 1..300 V above the supply, clamp resistors 0..1 kΩ (a current
//! near the end of its decay to 1e-4 of `I₀` absolute); unclamped and underdamped
//! (`Z₀ ≥ 5 R`), `L` 1 µH..1 H, `C_p` 1 pF..1 µF, `I₀` 1 mA..10 A (currents to 1e-4 of the ring
//! amplitude absolute).

mod ring;
pub mod stable;
mod verdict;

pub use verdict::{Check, Ratings, Verdict, Verdicts};

use crate::bounds::{Bound, CoilCorner, CoilSpread};
use crate::coil::{CURRENT_MAX_A, Coil, INDUCTANCE_MAX_H, INDUCTANCE_MIN_H, TIME_MAX_S};
use crate::coil::{RESISTANCE_MAX_OHM, RESISTANCE_MIN_OHM, SUPPLY_MAX_V};
use crate::error::{Error, finite_result, in_range, non_negative, positive};
use ring::Ring;
use stable::{clamp_share, one_minus_ln1p_over_x, resistive_share};

/// Largest clamp voltage accepted, V.
pub const CLAMP_MAX_V: f32 = 1.0e5;
/// Smallest parasitic capacitance accepted, F.
pub const CAPACITANCE_MIN_F: f32 = 1.0e-15;
/// Largest parasitic capacitance accepted, F.
pub const CAPACITANCE_MAX_F: f32 = 1.0;

/// Fraction of the initial current at which an exponential-only decay is said to have ended
/// (reported by [`DecayEnd::Exponential`]): 1 %.
pub const TAIL_FRACTION: f32 = 0.01;

/// Drop-out current as a fraction of the nominal current when none is given: 0.10.
///
/// Common practice: relay datasheets guarantee must-release (drop-out) at no less than 10 % of
/// the nominal coil voltage. This is a datasheet convention, not a standard, and a guaranteed
/// minimum: a real relay releases at a higher current, so this fraction gives the longest
/// (safe-side) release time.
pub const RELEASE_FRACTION_COMMON_PRACTICE: f32 = 0.10;

/// Dielectric strength of dry air at 1 atm in a uniform field, V/m (AMS Glossary of
/// Meteorology, "dielectric strength": about 3 MV/m).
pub const AIR_BREAKDOWN_V_PER_M: f32 = 3.0e6;

/// Below about this voltage no spark forms in air at 1 atm for any gap (minimum of the
/// Paschen curve, ≈ 327 V at ≈ 7.5 µm), V.
pub const PASCHEN_MIN_V: f32 = 327.0;

/// What the coil current flows through after the switch opens.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Clamp {
    /// Freewheel diode across the coil with forward drop `forward_v` (0 for an ideal diode).
    Diode {
        /// Forward drop, V.
        forward_v: f32,
    },
    /// Diode plus zener in series across the coil: clamp voltage `zener_v + forward_v`.
    Zener {
        /// Zener (or TVS) voltage, V.
        zener_v: f32,
        /// Forward drop of the blocking diode, V.
        forward_v: f32,
    },
    /// Clamp across the switch at `clamp_v` (MOSFET avalanche, TVS or active clamp): the coil
    /// sees `clamp_v − V_s` and the supply keeps delivering energy during the decay.
    Switch {
        /// Clamp (breakdown) voltage across the switch, V; must exceed the supply.
        clamp_v: f32,
    },
    /// Resistor `resistance_ohm` in series with a diode (`forward_v`) across the coil.
    Resistor {
        /// Series resistance, Ω.
        resistance_ohm: f32,
        /// Forward drop of the diode, V.
        forward_v: f32,
    },
    /// No clamp: only the switch node's parasitic capacitance (series RLC ring).
    Unclamped {
        /// Capacitance across the switch, F.
        capacitance_f: f32,
    },
}

impl Clamp {
    /// A short name of the kind: `diode`, `zener`, `switch`, `resistor`, `none`.
    #[must_use]
    pub const fn kind(&self) -> &'static str {
        match self {
            Clamp::Diode { .. } => "diode",
            Clamp::Zener { .. } => "zener",
            Clamp::Switch { .. } => "switch",
            Clamp::Resistor { .. } => "resistor",
            Clamp::Unclamped { .. } => "none",
        }
    }

    /// `true` when the supply stays in the decaying loop (clamp across the switch, unclamped).
    #[must_use]
    pub const fn needs_supply(&self) -> bool {
        matches!(self, Clamp::Switch { .. } | Clamp::Unclamped { .. })
    }
}

/// How the decay ends.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum DecayEnd {
    /// The current reaches zero after `time_s` and stays there (the clamp blocks).
    Finite {
        /// Time to zero, s.
        time_s: f32,
    },
    /// The decay is exponential only (no zero crossing in finite time, or a ring that only
    /// dies away): `time_s` is the time to `fraction` of the initial current.
    Exponential {
        /// Fraction of the initial current, [`TAIL_FRACTION`].
        fraction: f32,
        /// Time to that fraction, s.
        time_s: f32,
    },
}

impl DecayEnd {
    /// The time to zero when finite.
    #[must_use]
    pub const fn time_to_zero_s(&self) -> Option<f32> {
        match self {
            DecayEnd::Finite { time_s } => Some(*time_s),
            DecayEnd::Exponential { .. } => None,
        }
    }
}

/// Where the release threshold of [`SwitchOff::release_time_s`] came from.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum DropoutSource {
    /// The drop-out current was given.
    Given,
    /// [`RELEASE_FRACTION_COMMON_PRACTICE`] of the nominal current (common practice, no
    /// standard).
    CommonPractice {
        /// The fraction used.
        fraction: f32,
    },
}

/// The current part of a relay's release time.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Release {
    /// Time from switch-off to the drop-out current, s (armature motion not included).
    pub time_s: f32,
    /// The drop-out current used, A.
    pub dropout_a: f32,
    /// Whether it was given or assumed.
    pub source: DropoutSource,
}

/// All figures of one switch-off, side by side.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Summary {
    /// The clamp.
    pub clamp: Clamp,
    /// Current at switch-off, A.
    pub initial_current_a: f32,
    /// Time to the target current of [`SwitchOff::summary`], s.
    pub time_to_target_s: f32,
    /// How the decay ends.
    pub decay_end: DecayEnd,
    /// Peak voltage across the switch, V.
    pub peak_switch_voltage_v: f32,
    /// Energy into the clamp part, J.
    pub clamp_energy_j: f32,
    /// Energy into the coil (winding) resistance, J.
    pub resistance_energy_j: f32,
    /// Energy delivered by the supply during the decay, J.
    pub supply_energy_j: f32,
    /// Magnetic energy at switch-off, `½ L I₀²`, J.
    pub stored_energy_j: f32,
    /// Peak power in the clamp part, W.
    pub peak_clamp_power_w: f32,
}

/// A validated switch-off: coil, supply, current at switch-off and clamp.
///
/// # Examples
///
/// ```
/// use lenz::turnoff::{Clamp, SwitchOff};
/// // Demo valve (invented): 120 mH, 32 Ω, 24 V, 0.75 A, freewheel diode 0.7 V.
/// let off = SwitchOff::new(0.120, 32.0, 24.0, 0.75, Clamp::Diode { forward_v: 0.7 })?;
/// assert!((off.peak_switch_voltage_v()? - 24.7).abs() < 1e-5);
/// let t = off.time_to_current_s(0.075)?;
/// assert!((t - 7.782754e-3).abs() < 1e-7);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SwitchOff {
    inductance_h: f32,
    resistance_ohm: f32,
    supply_v: f32,
    initial_current_a: f32,
    clamp: Clamp,
}

/// The constant-voltage description of a clamp: loop resistance, opposing voltage, and the
/// part of the loop resistance that belongs to the clamp.
#[derive(Debug, Clone, Copy)]
struct ConstantLoop {
    /// Coil plus clamp resistance, Ω.
    loop_r: f32,
    /// Resistance of the clamp part (resistor clamp), Ω.
    clamp_r: f32,
    /// Voltage opposing the current in the loop, V.
    vc: f32,
}

fn check_current(param: &'static str, i: f32) -> Result<f32, Error> {
    in_range(param, non_negative(param, i)?, 0.0, CURRENT_MAX_A)
}

fn check_voltage(param: &'static str, v: f32) -> Result<f32, Error> {
    in_range(param, non_negative(param, v)?, 0.0, CLAMP_MAX_V)
}

impl SwitchOff {
    /// A switch-off of a coil with inductance `inductance_h` and loop resistance
    /// `resistance_ohm` (the winding at its temperature) from a supply `supply_v`, at the
    /// current `initial_current_a`, through `clamp`.
    ///
    /// # Errors
    ///
    /// Any value not finite, negative, or outside its documented range (module docs); a clamp
    /// across the switch at or below the supply (`clamp_v` out of range, the minimum given as
    /// the next value above the supply).
    pub fn new(
        inductance_h: f32,
        resistance_ohm: f32,
        supply_v: f32,
        initial_current_a: f32,
        clamp: Clamp,
    ) -> Result<Self, Error> {
        in_range(
            "inductance_h",
            positive("inductance_h", inductance_h)?,
            INDUCTANCE_MIN_H,
            INDUCTANCE_MAX_H,
        )?;
        in_range(
            "resistance_ohm",
            positive("resistance_ohm", resistance_ohm)?,
            RESISTANCE_MIN_OHM,
            RESISTANCE_MAX_OHM,
        )?;
        in_range(
            "supply_v",
            non_negative("supply_v", supply_v)?,
            0.0,
            SUPPLY_MAX_V,
        )?;
        check_current("initial_current_a", initial_current_a)?;
        match clamp {
            Clamp::Diode { forward_v } => {
                check_voltage("forward_v", forward_v)?;
            }
            Clamp::Zener { zener_v, forward_v } => {
                in_range("zener_v", positive("zener_v", zener_v)?, 0.0, CLAMP_MAX_V)?;
                check_voltage("forward_v", forward_v)?;
            }
            Clamp::Switch { clamp_v } => {
                let v = positive("clamp_v", clamp_v)?;
                let above_supply = f32::from_bits(supply_v.to_bits() + 1);
                in_range("clamp_v", v, above_supply, CLAMP_MAX_V)?;
            }
            Clamp::Resistor {
                resistance_ohm: rs,
                forward_v,
            } => {
                in_range(
                    "clamp_resistance_ohm",
                    non_negative("clamp_resistance_ohm", rs)?,
                    0.0,
                    RESISTANCE_MAX_OHM,
                )?;
                check_voltage("forward_v", forward_v)?;
            }
            Clamp::Unclamped { capacitance_f } => {
                in_range(
                    "capacitance_f",
                    positive("capacitance_f", capacitance_f)?,
                    CAPACITANCE_MIN_F,
                    CAPACITANCE_MAX_F,
                )?;
            }
        }
        Ok(Self {
            inductance_h,
            resistance_ohm,
            supply_v,
            initial_current_a,
            clamp,
        })
    }

    /// Switch-off of `coil` at `temp_c` from the steady current it draws at `supply_v`.
    ///
    /// # Errors
    ///
    /// The errors of [`Coil::steady_current_a`] and [`SwitchOff::new`].
    pub fn from_coil(coil: &Coil, supply_v: f32, temp_c: f32, clamp: Clamp) -> Result<Self, Error> {
        let i0 = coil.steady_current_a(supply_v, temp_c)?;
        Self::from_coil_at(coil, supply_v, temp_c, i0, clamp)
    }

    /// Switch-off of `coil` at `temp_c` from a given current `initial_current_a`.
    ///
    /// # Errors
    ///
    /// The errors of [`Coil::off_loop_resistance_ohm`] and [`SwitchOff::new`].
    pub fn from_coil_at(
        coil: &Coil,
        supply_v: f32,
        temp_c: f32,
        initial_current_a: f32,
        clamp: Clamp,
    ) -> Result<Self, Error> {
        let r = coil.off_loop_resistance_ohm(temp_c)?;
        Self::new(coil.inductance_h(), r, supply_v, initial_current_a, clamp)
    }

    /// The same switch-off from another initial current.
    ///
    /// # Errors
    ///
    /// `initial_current_a` not finite, negative or above the documented maximum.
    pub fn with_initial_current_a(&self, initial_current_a: f32) -> Result<Self, Error> {
        check_current("initial_current_a", initial_current_a)?;
        Ok(Self {
            initial_current_a,
            ..*self
        })
    }

    /// The same switch-off through another clamp.
    ///
    /// # Errors
    ///
    /// As [`SwitchOff::new`] for the clamp.
    pub fn with_clamp(&self, clamp: Clamp) -> Result<Self, Error> {
        Self::new(
            self.inductance_h,
            self.resistance_ohm,
            self.supply_v,
            self.initial_current_a,
            clamp,
        )
    }

    /// Inductance, H.
    #[must_use]
    pub const fn inductance_h(&self) -> f32 {
        self.inductance_h
    }

    /// Coil loop resistance during the decay (the winding), Ω.
    #[must_use]
    pub const fn resistance_ohm(&self) -> f32 {
        self.resistance_ohm
    }

    /// Supply voltage, V.
    #[must_use]
    pub const fn supply_v(&self) -> f32 {
        self.supply_v
    }

    /// Current at switch-off, A.
    #[must_use]
    pub const fn initial_current_a(&self) -> f32 {
        self.initial_current_a
    }

    /// The clamp.
    #[must_use]
    pub const fn clamp(&self) -> &Clamp {
        &self.clamp
    }

    fn constant_loop(&self) -> Option<ConstantLoop> {
        let r = self.resistance_ohm;
        Some(match self.clamp {
            Clamp::Diode { forward_v } => ConstantLoop {
                loop_r: r,
                clamp_r: 0.0,
                vc: forward_v,
            },
            Clamp::Zener { zener_v, forward_v } => ConstantLoop {
                loop_r: r,
                clamp_r: 0.0,
                vc: zener_v + forward_v,
            },
            Clamp::Switch { clamp_v } => ConstantLoop {
                loop_r: r,
                clamp_r: 0.0,
                vc: clamp_v - self.supply_v,
            },
            Clamp::Resistor {
                resistance_ohm,
                forward_v,
            } => ConstantLoop {
                loop_r: r + resistance_ohm,
                clamp_r: resistance_ohm,
                vc: forward_v,
            },
            Clamp::Unclamped { .. } => return None,
        })
    }

    fn ring(&self) -> Option<Ring> {
        match self.clamp {
            Clamp::Unclamped { capacitance_f } => Some(Ring::new(
                self.inductance_h,
                self.resistance_ohm,
                capacitance_f,
                self.supply_v,
                self.initial_current_a,
            )),
            _ => None,
        }
    }

    /// Decay time constant of the loop, `L/(R + R_s)`, s. For the unclamped ring, the current
    /// amplitude's time constant `2L/R`.
    #[must_use]
    pub fn time_constant_s(&self) -> f32 {
        match self.constant_loop() {
            Some(c) => self.inductance_h / c.loop_r,
            None => 2.0 * self.inductance_h / self.resistance_ohm,
        }
    }

    /// Magnetic energy at switch-off, `½ L I₀²`, J.
    #[must_use]
    pub fn stored_energy_j(&self) -> f32 {
        0.5 * self.inductance_h * self.initial_current_a * self.initial_current_a
    }

    /// Coil current `t_s` after the switch opened, A (zero once a clamped decay has ended; the
    /// signed ring current for the unclamped case).
    ///
    /// # Errors
    ///
    /// `t_s` not finite, negative, or above [`TIME_MAX_S`].
    pub fn current_a(&self, t_s: f32) -> Result<f32, Error> {
        let t = in_range("t_s", non_negative("t_s", t_s)?, 0.0, TIME_MAX_S)?;
        let i0 = self.initial_current_a;
        let i = match self.constant_loop() {
            Some(c) => {
                let x = t * c.loop_r / self.inductance_h;
                let a = c.vc / c.loop_r;
                let i = i0 * libm::expf(-x) + a * libm::expm1f(-x);
                if i > 0.0 { i } else { 0.0 }
            }
            None => self.ring().map_or(0.0, |r| r.current_a(t)),
        };
        finite_result("t_s", i)
    }

    /// Time for the current to fall from `I₀` to `target_a`, s; zero if it starts at or below.
    /// For the unclamped ring: the time after which the current can no longer exceed
    /// `target_a` (module docs).
    ///
    /// # Errors
    ///
    /// `target_a` not positive (use [`SwitchOff::decay_end`] for the time to zero) or above the
    /// documented maximum; [`Error::Unreachable`] if the time exceeds [`TIME_MAX_S`].
    pub fn time_to_current_s(&self, target_a: f32) -> Result<f32, Error> {
        let ix = positive(
            "target_current_a",
            check_current("target_current_a", target_a)?,
        )?;
        let i0 = self.initial_current_a;
        let t = match self.constant_loop() {
            Some(c) => {
                if ix >= i0 {
                    return Ok(0.0);
                }
                let a = c.vc / c.loop_r;
                (self.inductance_h / c.loop_r) * libm::log1pf((i0 - ix) / (ix + a))
            }
            None => self
                .ring()
                .and_then(|r| r.time_to_current_s(ix, TIME_MAX_S))
                .unwrap_or(f32::INFINITY),
        };
        if t.is_finite() && t <= TIME_MAX_S {
            Ok(t)
        } else {
            Err(Error::Unreachable {
                param: "target_current_a",
                target: ix,
                limit: TIME_MAX_S,
            })
        }
    }

    /// How the decay ends: the time to zero where it is finite, otherwise the time to
    /// [`TAIL_FRACTION`] of the initial current.
    ///
    /// # Errors
    ///
    /// [`Error::Unreachable`] if even the tail time exceeds [`TIME_MAX_S`].
    pub fn decay_end(&self) -> Result<DecayEnd, Error> {
        let i0 = self.initial_current_a;
        if i0 == 0.0 {
            return Ok(DecayEnd::Finite { time_s: 0.0 });
        }
        if let Some(c) = self.constant_loop()
            && c.vc > 0.0
        {
            let x = i0 * c.loop_r / c.vc;
            let t = (self.inductance_h / c.loop_r) * libm::log1pf(x);
            return Ok(DecayEnd::Finite {
                time_s: finite_result("initial_current_a", t)?,
            });
        }
        let t = self.time_to_current_s(TAIL_FRACTION * i0)?;
        Ok(DecayEnd::Exponential {
            fraction: TAIL_FRACTION,
            time_s: t,
        })
    }

    /// Peak voltage across the switch, V: `V_s + V_f` (diode), `V_s + V_z + V_f` (zener),
    /// `V_cl` (clamp across the switch), `V_s + V_f + I₀ R_s` (resistor), the first ring peak
    /// (unclamped).
    ///
    /// # Errors
    ///
    /// A result not representable in f32 (reported against `initial_current_a`).
    pub fn peak_switch_voltage_v(&self) -> Result<f32, Error> {
        let vs = self.supply_v;
        let i0 = self.initial_current_a;
        let v = match self.clamp {
            Clamp::Diode { forward_v } => vs + forward_v,
            Clamp::Zener { zener_v, forward_v } => vs + zener_v + forward_v,
            Clamp::Switch { clamp_v } => clamp_v,
            Clamp::Resistor {
                resistance_ohm,
                forward_v,
            } => vs + forward_v + i0 * resistance_ohm,
            Clamp::Unclamped { .. } => self.ring().map_or(vs, |r| r.peak_v()),
        };
        finite_result("initial_current_a", v)
    }

    /// Time of the peak switch voltage, s: 0 for the clamps, the first ring maximum unclamped
    /// (`None` if an overdamped ring only approaches the supply).
    #[must_use]
    pub fn peak_switch_voltage_time_s(&self) -> Option<f32> {
        match self.ring() {
            Some(r) => r.peak_time_s(),
            None => Some(0.0),
        }
    }

    /// Charge through the loop until the current ends, `∫ i dt`, C.
    fn charge_c(&self, c: &ConstantLoop) -> f32 {
        let i0 = self.initial_current_a;
        let x = if c.vc > 0.0 {
            i0 * c.loop_r / c.vc
        } else {
            f32::INFINITY
        };
        (self.inductance_h * i0 / c.loop_r) * one_minus_ln1p_over_x(x)
    }

    /// `(x, clamp share g, resistive share m)` of a constant-voltage loop.
    fn shares(&self, c: &ConstantLoop) -> (f32, f32) {
        let x = if c.vc > 0.0 {
            self.initial_current_a * c.loop_r / c.vc
        } else {
            f32::INFINITY
        };
        (clamp_share(x), resistive_share(x))
    }

    /// Energy into the clamp part, J: the diode, the diode and zener, the switch clamp, the
    /// resistor and its diode; for the unclamped case what the capacitance keeps, `½ C_p V_s²`
    /// (it is dissipated in the switch when it next closes).
    ///
    /// # Errors
    ///
    /// A result not representable in f32.
    pub fn clamp_energy_j(&self) -> Result<f32, Error> {
        let stored = self.stored_energy_j();
        let e = match (self.constant_loop(), self.clamp) {
            (_, Clamp::Unclamped { capacitance_f }) => {
                0.5 * capacitance_f * self.supply_v * self.supply_v
            }
            (Some(c), Clamp::Switch { clamp_v }) => clamp_v * self.charge_c(&c),
            (Some(c), _) => {
                let (g, m) = self.shares(&c);
                stored * g + stored * m * (c.clamp_r / c.loop_r)
            }
            (None, _) => 0.0,
        };
        finite_result("initial_current_a", e)
    }

    /// Energy into the coil (winding) resistance, J.
    ///
    /// # Errors
    ///
    /// A result not representable in f32.
    pub fn resistance_energy_j(&self) -> Result<f32, Error> {
        let stored = self.stored_energy_j();
        let e = match (self.constant_loop(), self.clamp) {
            (_, Clamp::Unclamped { capacitance_f }) => {
                stored + 0.5 * capacitance_f * self.supply_v * self.supply_v
            }
            (Some(c), _) => {
                let (_, m) = self.shares(&c);
                stored * m * (self.resistance_ohm / c.loop_r)
            }
            (None, _) => 0.0,
        };
        finite_result("initial_current_a", e)
    }

    /// Energy delivered by the supply during the decay, J: `V_s ∫ i dt` for the clamp across
    /// the switch, `C_p V_s²` unclamped, zero for clamps across the coil.
    ///
    /// # Errors
    ///
    /// A result not representable in f32.
    pub fn supply_energy_j(&self) -> Result<f32, Error> {
        let e = match (self.constant_loop(), self.clamp) {
            (_, Clamp::Unclamped { capacitance_f }) => {
                capacitance_f * self.supply_v * self.supply_v
            }
            (Some(c), Clamp::Switch { .. }) => self.supply_v * self.charge_c(&c),
            _ => 0.0,
        };
        finite_result("initial_current_a", e)
    }

    /// Peak power in the clamp part, W, at the first instant: `V_c I₀`, `(V_f + I₀ R_s) I₀`
    /// for the resistor clamp, `V_cl I₀` for the clamp across the switch; zero unclamped (the
    /// capacitance dissipates nothing; see the verdicts for the avalanche case).
    ///
    /// # Errors
    ///
    /// A result not representable in f32.
    pub fn peak_clamp_power_w(&self) -> Result<f32, Error> {
        let i0 = self.initial_current_a;
        let p = match self.clamp {
            Clamp::Diode { forward_v } => forward_v * i0,
            Clamp::Zener { zener_v, forward_v } => (zener_v + forward_v) * i0,
            Clamp::Switch { clamp_v } => clamp_v * i0,
            Clamp::Resistor {
                resistance_ohm,
                forward_v,
            } => (forward_v + i0 * resistance_ohm) * i0,
            Clamp::Unclamped { .. } => 0.0,
        };
        finite_result("initial_current_a", p)
    }

    /// Energy into the clamp's resistor and its diode separately (resistor clamp only), J.
    #[must_use]
    pub fn resistor_clamp_split_j(&self) -> Option<(f32, f32)> {
        match (self.constant_loop(), self.clamp) {
            (Some(c), Clamp::Resistor { .. }) => {
                let (g, m) = self.shares(&c);
                let stored = self.stored_energy_j();
                Some((stored * m * (c.clamp_r / c.loop_r), stored * g))
            }
            _ => None,
        }
    }

    /// Characteristic impedance `√(L/C_p)`, natural frequency `1/(2π√(L C_p))` and lossless
    /// first peak `V_s + √(V_s² + (I₀ Z₀)²)` of the unclamped ring: `(Z₀ Ω, f₀ Hz, V)`.
    #[must_use]
    pub fn ring_figures(&self) -> Option<(f32, f32, f32)> {
        self.ring()
            .map(|r| (r.z0_ohm(), r.natural_frequency_hz(), r.lossless_peak_v()))
    }

    /// Minimum off time before re-energizing or reversing: the time until the current is at or
    /// below `threshold_a`, s (the same as [`SwitchOff::time_to_current_s`]).
    ///
    /// # Errors
    ///
    /// As [`SwitchOff::time_to_current_s`].
    pub fn min_off_time_s(&self, threshold_a: f32) -> Result<f32, Error> {
        self.time_to_current_s(threshold_a)
    }

    /// Current part of a relay's release time: the time to the drop-out current `dropout_a`,
    /// or, when `None`, to [`RELEASE_FRACTION_COMMON_PRACTICE`] of `nominal_a` (common
    /// practice, reported in [`Release::source`]).
    ///
    /// # Errors
    ///
    /// `nominal_a` or `dropout_a` not positive, and the errors of
    /// [`SwitchOff::time_to_current_s`].
    pub fn release_time_s(&self, nominal_a: f32, dropout_a: Option<f32>) -> Result<Release, Error> {
        let nominal = positive("nominal_current_a", nominal_a)?;
        let (dropout, source) = match dropout_a {
            Some(d) => (positive("dropout_current_a", d)?, DropoutSource::Given),
            None => (
                RELEASE_FRACTION_COMMON_PRACTICE * nominal,
                DropoutSource::CommonPractice {
                    fraction: RELEASE_FRACTION_COMMON_PRACTICE,
                },
            ),
        };
        Ok(Release {
            time_s: self.time_to_current_s(dropout)?,
            dropout_a: dropout,
            source,
        })
    }

    /// Every figure at once, with the time to `target_a`.
    ///
    /// # Errors
    ///
    /// The first error of the individual routines.
    pub fn summary(&self, target_a: f32) -> Result<Summary, Error> {
        Ok(Summary {
            clamp: self.clamp,
            initial_current_a: self.initial_current_a,
            time_to_target_s: self.time_to_current_s(target_a)?,
            decay_end: self.decay_end()?,
            peak_switch_voltage_v: self.peak_switch_voltage_v()?,
            clamp_energy_j: self.clamp_energy_j()?,
            resistance_energy_j: self.resistance_energy_j()?,
            supply_energy_j: self.supply_energy_j()?,
            stored_energy_j: self.stored_energy_j(),
            peak_clamp_power_w: self.peak_clamp_power_w()?,
        })
    }

    /// Checks the switch-off against part ratings; see [`Verdicts`].
    ///
    /// # Errors
    ///
    /// A rating not finite or not positive; a switch breakdown at or below the supply.
    pub fn verdicts(&self, ratings: &Ratings) -> Result<Verdicts, Error> {
        verdict::evaluate(self, ratings)
    }
}

/// Single-pulse avalanche energy of a switch that clamps at `breakdown_v` from a supply
/// `supply_v`, with the coil resistance neglected: `½ L I₀²·V_BR/(V_BR − V_DD)`, J. This is the
/// published relation of MOSFET avalanche-rating notes; with a real coil resistance the exact
/// energy ([`SwitchOff::clamp_energy_j`] with [`Clamp::Switch`]) is lower, so this is an upper
/// bound.
///
/// # Errors
///
/// Bad inductance, current or supply; `breakdown_v` not above `supply_v`.
pub fn avalanche_energy_lossless_j(
    inductance_h: f32,
    current_a: f32,
    breakdown_v: f32,
    supply_v: f32,
) -> Result<f32, Error> {
    let l = positive("inductance_h", inductance_h)?;
    let i = check_current("initial_current_a", current_a)?;
    let vdd = in_range(
        "supply_v",
        non_negative("supply_v", supply_v)?,
        0.0,
        SUPPLY_MAX_V,
    )?;
    let bv = positive("breakdown_v", breakdown_v)?;
    in_range(
        "breakdown_v",
        bv,
        f32::from_bits(vdd.to_bits() + 1),
        CLAMP_MAX_V,
    )?;
    finite_result("initial_current_a", 0.5 * l * i * i * bv / (bv - vdd))
}

/// Avalanche duration with the coil resistance neglected, `L I₀/(V_BR − V_DD)`, s.
///
/// # Errors
///
/// As [`avalanche_energy_lossless_j`].
pub fn avalanche_duration_lossless_s(
    inductance_h: f32,
    current_a: f32,
    breakdown_v: f32,
    supply_v: f32,
) -> Result<f32, Error> {
    avalanche_energy_lossless_j(inductance_h, current_a, breakdown_v, supply_v)?;
    finite_result(
        "initial_current_a",
        inductance_h * current_a / (breakdown_v - supply_v),
    )
}

/// Air gap that holds off `voltage_v` at [`AIR_BREAKDOWN_V_PER_M`] (uniform field, 1 atm), m.
///
/// # Errors
///
/// `voltage_v` not finite or negative.
pub fn air_gap_m(voltage_v: f32) -> Result<f32, Error> {
    Ok(non_negative("voltage_v", voltage_v)? / AIR_BREAKDOWN_V_PER_M)
}

/// The figures of `base` for each clamp in `clamps`, side by side: release (time to
/// `target_a`), time to zero, peak switch voltage, clamp energy.
///
/// # Errors
///
/// The first error for any clamp (for example a switch clamp at or below the supply).
pub fn compare<const N: usize>(
    base: &SwitchOff,
    clamps: &[Clamp; N],
    target_a: f32,
) -> Result<[Summary; N], Error> {
    let first = base.summary(target_a)?;
    let mut out = [first; N];
    for (slot, clamp) in out.iter_mut().zip(clamps) {
        *slot = base.with_clamp(*clamp)?.summary(target_a)?;
    }
    Ok(out)
}

/// Worst-case switch-off figures over a [`CoilSpread`] for one clamp.
///
/// The current at switch-off is the steady current at each corner, so its maximum comes at the
/// highest supply and the coldest coil; the longest decay comes at whichever temperature end
/// makes it longest (a cold coil carries more current, a hot one decays more slowly towards a
/// clamp), which the corner search finds.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TurnOffSpread {
    /// Coil, supply and temperature spreads.
    pub spread: CoilSpread,
    /// The clamp.
    pub clamp: Clamp,
}

impl TurnOffSpread {
    /// Bounds of any switch-off figure over the spread.
    ///
    /// # Errors
    ///
    /// The first error at any evaluated corner.
    pub fn figure<F>(&self, f: F) -> Result<Bound<CoilCorner>, Error>
    where
        F: Fn(&SwitchOff) -> Result<f32, Error>,
    {
        self.spread
            .figure(|coil, v, t| f(&SwitchOff::from_coil(coil, v, t, self.clamp)?))
    }

    /// Current at switch-off (the steady current), A.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn initial_current_a(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|s| Ok(s.initial_current_a()))
    }

    /// Time to `target_a`, s.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn time_to_current_s(&self, target_a: f32) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|s| s.time_to_current_s(target_a))
    }

    /// Relay release (current part) to `dropout_a`, or to
    /// [`RELEASE_FRACTION_COMMON_PRACTICE`] of the nominal current: the steady current of the
    /// nominal coil at the middle of the supply range and its reference temperature.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn release_time_s(&self, dropout_a: Option<f32>) -> Result<Bound<CoilCorner>, Error> {
        let nominal = self.nominal_current_a()?;
        self.figure(|s| Ok(s.release_time_s(nominal, dropout_a)?.time_s))
    }

    /// Nominal current: the nominal coil at the middle of the supply range and its reference
    /// temperature, A.
    ///
    /// # Errors
    ///
    /// Invalid nominal coil or supply.
    pub fn nominal_current_a(&self) -> Result<f32, Error> {
        let coil = self.spread.coil.validate()?;
        coil.steady_current_a(
            self.spread.supply_v.mid(),
            self.spread.coil.reference_temp_c,
        )
    }

    /// Time to zero where finite, else to [`TAIL_FRACTION`] of the initial current, s.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn decay_time_s(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(|s| {
            Ok(match s.decay_end()? {
                DecayEnd::Finite { time_s } | DecayEnd::Exponential { time_s, .. } => time_s,
            })
        })
    }

    /// Peak switch voltage, V.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn peak_switch_voltage_v(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(SwitchOff::peak_switch_voltage_v)
    }

    /// Energy into the clamp part, J.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn clamp_energy_j(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(SwitchOff::clamp_energy_j)
    }

    /// Peak clamp power, W.
    ///
    /// # Errors
    ///
    /// As [`TurnOffSpread::figure`].
    pub fn peak_clamp_power_w(&self) -> Result<Bound<CoilCorner>, Error> {
        self.figure(SwitchOff::peak_clamp_power_w)
    }
}

#[cfg(test)]
mod tests;
