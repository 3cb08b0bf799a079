//! Brushed DC motor on an H-bridge: stall, steady state, time constants, the exact peak
//! currents of start, reversal and short-circuit brake, kinetic energy, and the energy the
//! motor returns to the supply rail when its current decays through the bridge.
//!
//! # For firmware and hardware engineers
//!
//! Describe the motor with [`MotorParams`] (validated into a [`Motor`]); every routine takes the
//! supply voltage, the winding temperature and the load torque explicitly, so one `Motor`
//! serves every corner of a worst-case evaluation ([`MotorSpread`]). The integer kernels that
//! run on the chip are [`crate::kernel::SpeedEstimatorConfig`] (speed from back-EMF),
//! [`crate::kernel::JamConfig`] (jam, overload and open-winding detection) and
//! [`crate::kernel::BridgeGuardConfig`] (soft start, brake before reversal, dead time, brake
//! versus coast).
//!
//! # Model
//!
//! ```text
//!   V = R·i + L·di/dt + k·ω                 (armature circuit)
//!   J·dω/dt = k·i − b·ω − T_load            (rotor)
//! ```
//!
//! with `V` the voltage the bridge applies to the motor terminals, `i` the winding current, `ω`
//! the rotor speed, `R` the loop resistance (winding at its temperature plus the bridge's
//! conducting switches), `L` the winding inductance, `k` the torque constant, which in SI units
//! is also the back-EMF constant (N·m/A = V·s/rad), `J` the inertia of rotor and load, `b` the
//! viscous friction and `T_load` a constant load torque opposing forward rotation. These are the
//! standard separately-excited (permanent-magnet) DC machine equations: A. E. Fitzgerald,
//! C. Kingsley, S. D. Umans, *Electric Machinery*, 6th ed., ch. 7 (DC machines); S. J. Chapman,
//! *Electric Machinery Fundamentals*, ch. on DC motors (both from memory; the equations are
//! the textbook ones).
//!
//! `T_load` keeps its value during every transient, also when the rotor slows or turns
//! backwards, so the model stays linear: a load that holds a stopped rotor by static friction
//! is not modelled. The winding resistance follows copper temperature exactly as the coil's
//! does ([`crate::coil::Coil::resistance_ohm`], IEC 60028 coefficient
//! [`crate::coil::COPPER_ALPHA20_PER_K`]).
//!
//! # Steady state and time constants
//!
//! Setting the derivatives to zero, `R·i + k·ω = V` and `k·i − b·ω = T`:
//!
//! ```text
//!   ω_ss = (k·V − R·T)/(k² + R·b)        i_ss = (b·V + k·T)/(k² + R·b)
//!   I_stall = V/R,  T_stall = k·V/R       τ_e = L/R,  τ_m = J·R/(k² + R·b)
//! ```
//!
//! The rotor turns forward (`ω_ss > 0`) exactly when `T < T_stall`; a load torque at or above
//! the stall torque stalls the motor ([`crate::Error::Unreachable`] with the stall torque as the
//! limit). `τ_m` with `b = 0` is the textbook mechanical time constant `J·R/k²` (R. Krishnan,
//! *Electric Motor Drives*, 2001, ch. 3, from memory).
//!
//! # Transients: the exact second-order solution
//!
//! After a step of the applied voltage to `V` (with `T` held), the deviation of the current
//! from its new steady value, `e(t) = i(t) − i_ss`, obeys
//!
//! ```text
//!   e'' + 2α·e' + ω₀²·e = 0,   α = (R/L + b/J)/2,   ω₀² = (R·b + k²)/(L·J)
//!   e(0) = i₀ − i_ss,          e'(0) = (V − R·i₀ − k·ω₀)/L
//! ```
//!
//! (eliminate `ω` between the two equations). With `β² = α² − ω₀²` its solution is, in one form
//! for all three cases,
//!
//! ```text
//!   e(t) = e^(−αt)·[ e(0)·C(t) + (e'(0) + α·e(0))·S(t) ]
//!   overdamped (β² > 0):   C = cosh βt,   S = sinh(βt)/β
//!   critically damped:     C = 1,         S = t
//!   underdamped (β² < 0):  C = cos ω_d t, S = sin(ω_d t)/ω_d,   ω_d = √(ω₀² − α²)
//! ```
//!
//! and `e'(t) = e^(−αt)·[e'(0)·C(t) − p·S(t)]` with `p = α·e'(0) + ω₀²·e(0)`. The current's
//! extrema are the zeros of `e'`: `tanh(βt)/β = e'(0)/p` (overdamped, at most one),
//! `t = e'(0)/p` (critical), `tan(ω_d t)/ω_d = e'(0)/p` (underdamped, every `π/ω_d`, with
//! amplitudes falling by `e^(−απ/ω_d)` each time, so the first two decide). The peak current
//! is the largest magnitude among `i(0)`, those extrema and the final value `i_ss` (the
//! supremum when the current approaches its final value without overshoot). Near the critical
//! case the forms `atanh(x)/x`, `atan(x)/x`, `sinh(y)/y` and `sin(y)/y` keep full precision, so
//! the three cases join continuously. The speed follows from the same solution with its own
//! initial values.
//!
//! - **Start**: from standstill (`i₀ = 0`, `ω₀ = 0`) to the supply `V`.
//! - **Reversal**: from the steady state at `+V` to `−V` (the bridge's diagonal swapped).
//!   Right after the swap the inductance sees `−2V` (the back-EMF and the resistive drop
//!   together equalled `V`, and now `−V` is applied), so the current runs towards
//!   `(V + k·ω)/R` in the new direction; the simple bound `(V + k·ω_ss)/R` is reached only for
//!   `L → 0`, and the rotor slows while the current rises.
//! - **Brake**: from the steady state at `+V` to `0 V` (both low-side switches on, winding
//!   shorted through the bridge).
//!
//! # Energy returned to the rail
//!
//! When the bridge stops driving (coast: all switches off) the winding current keeps flowing
//! through the freewheel diodes of the opposite diagonal, *into* the supply rail, against
//! `V_bus + 2·V_f`; in a reversal it flows back through the swapped switches against `V_bus`.
//! The charge `q = ∫ i dt` and energy `∫ V_bus·i dt` it returns until the current reaches zero
//! (where the diodes block, or the current reverses) are computed on the exact solution of the
//! linear system `[i, ω, q]` (matrix exponential, [`Motor::rail_return`]). When the supply
//! cannot sink current (a series diode, a linear regulator) the returned charge lifts the bus
//! capacitor: `V_bus = V₀ + q/C`, which the same linear system carries exactly, and the peak
//! bus voltage is `V₀ + q/C` at the current's zero. Kinetic energy at speed is `½·J·ω²`.
//!
//! # Numerics
//!
//! Inputs and results are `f32`; the routines work internally in `f64` (`libm`), so the
//! near-stall difference `k·V − R·T` and the near-critical forms above keep their digits. Over
//! the documented range — `L` 100 µH ..= 100 mH, `R` 0.1 ..= 50 Ω, `k` 10⁻³ ..= 0.5 N·m/A,
//! `J` 10⁻⁶ ..= 10⁻³ kg·m², `b` 0 ..= 10⁻⁴ N·m·s/rad, supply 1 ..= 100 V, winding
//! −40 ..= 150 °C, load up to 0.9 of the stall torque; for the returned energy supply
//! 5 ..= 60 V and bus capacitor 10 µF ..= 10 mF — every routine agrees with an independent f64
//! formulation (`crate::testing::motor64`: eigenvalue form, peaks by scan and golden-section
//! search, quadrature, RK4) to 1e-4 relative, in the property tests of this module with fixed
//! seeds. The same routines against `ode_solvers` Dop853 on the same equations:
//! `tests/motor_reference.rs`.

mod expm;
mod params;
mod ramp;
mod regen;
mod response;
mod spread;
mod steady;
#[cfg(test)]
pub(crate) mod test_vent;
#[cfg(test)]
mod tests;

pub use params::{
    INERTIA_MAX_KG_M2, INERTIA_MIN_KG_M2, Motor, MotorParams, TORQUE_CONSTANT_MAX_NM_PER_A,
    TORQUE_CONSTANT_MIN_NM_PER_A, TORQUE_MAX_NM,
};
pub use regen::{Rail, RailReturn, ReturnPath};
pub use response::Peak;
pub use spread::{MotorCorner, MotorSpread};
pub use steady::SteadyState;
