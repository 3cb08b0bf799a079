//! Energy returned to the supply rail while the winding current decays through the bridge,
//! and the bus-capacitor voltage rise it causes when the supply cannot sink current.
//!
//! # Method
//!
//! From the steady state at `V₀` the bridge stops driving. The winding current flows on into
//! the rail against `V_bus + V_path` (`V_path = 2·V_f` through the freewheel diodes of the
//! opposite diagonal, `0` through the swapped switches of a reversal):
//!
//! ```text
//!   L·di/dt = −(V_bus + V_path) − R·i − k·ω,   J·dω/dt = k·i − b·ω − T,   dq/dt = i
//!   V_bus = V₀ (a supply that sinks current)   or   V₀ + q/C (only the bus capacitor)
//! ```
//!
//! a linear system in `[i, ω, q]`, propagated exactly by the matrix exponential of its
//! augmented matrix in scaled states (current in `V_s/R`, speed in `V_s/k`, charge in
//! `V_s·L/R²` or bus rise in `V_s`, `V_s = V₀ + V_path`, so every entry is a rate; the speed
//! and the bus rise are further scaled so that each coupling pair of entries has the same
//! magnitude, `k/√(L·J)` and `1/√(L·C)`, which keeps the norm near the fastest rate). The first
//! zero of the current is bracketed by steps of `1/(4·‖M‖∞)` (no oscillation of the system is
//! faster, and a local minimum inside a step is located from the zero of `di/dt`, which is
//! linear in the state) and then found by bisection to 2⁻⁵² of the bracket. The charge is `q` at
//! that zero; the energy into the rail `∫V_bus·i dt` is `V₀·q` with a sinking supply and
//! `V₀·q + q²/(2C)` with the capacitor alone (`∫u·i dt = C·∫u du`), whose peak is `V₀ + q/C`.

use super::Motor;
use super::expm::{Mat, Orbit, expm, mul_vec, norm_inf};
use super::params::{check_load, check_supply};
use crate::coil::SUPPLY_MAX_V;
use crate::error::{Error, finite_result, in_range, non_negative, positive};

/// Steps of the bracketing search before giving up.
const MAX_STEPS: u32 = 200_000;

/// The path the winding current takes back into the rail.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum ReturnPath {
    /// All switches off (coast): through the freewheel diodes of the opposite diagonal, two
    /// forward drops in the loop.
    Diodes {
        /// Forward drop of one diode. Units: V.
        diode_drop_v: f32,
    },
    /// The bridge's diagonal swapped (a reversal): through the conducting switches, until the
    /// current reverses.
    Switches,
}

/// What the rail does with the returned current.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Rail {
    /// The supply sinks current: the bus stays at the supply voltage.
    Sinks,
    /// The supply cannot sink current (series diode, linear regulator): the bus capacitor alone
    /// takes the charge.
    Capacitor {
        /// Bus capacitance. Units: F.
        capacitance_f: f32,
    },
}

/// The charge and energy the winding returns to the rail until its current reaches zero.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct RailReturn {
    /// Charge into the rail. Units: C.
    pub charge_c: f32,
    /// Energy into the rail, `∫V_bus·i dt`. Units: J.
    pub energy_j: f32,
    /// Time from the stop of the drive to zero current. Units: s.
    pub duration_s: f32,
    /// Highest bus voltage: the supply voltage when it sinks, `V₀ + q/C` otherwise. Units: V.
    pub peak_bus_v: f32,
    /// Rotor speed when the current reaches zero. Units: rad/s.
    pub speed_rad_s: f32,
}

impl Motor {
    /// Charge, energy and bus voltage the motor returns to the rail when the bridge stops
    /// driving from the steady state at `supply_v` and `load_torque_nm` (method in the module
    /// docs of this routine's file: exact linear solution, first zero of the current).
    ///
    /// # Errors
    ///
    /// As [`Motor::steady_state`] (a stalled motor returns nothing and is reported as
    /// stalled); inertia not stated; a negative or non-finite diode drop; a capacitance not
    /// positive or above 10 F; [`Error::Unreachable`] (param `load_torque_nm`) in the linear
    /// model's corner where the load drives the rotor backwards hard enough to keep the current
    /// flowing into the rail.
    ///
    /// # Examples
    ///
    /// ```
    /// # use lenz::motor::{MotorParams, Rail, ReturnPath};
    /// // Vent motor (invented) coasting from 12 V through 0.7 V diodes into a supply that
    /// // cannot sink, with 100 µF on the bus.
    /// let m = MotorParams::new(2e-3, 1.5, 0.03)
    ///     .with_inertia_kg_m2(2e-5)
    ///     .with_friction_nm_s_per_rad(1e-6)
    ///     .validate()?;
    /// let path = ReturnPath::Diodes { diode_drop_v: 0.7 };
    /// let sink = m.rail_return(12.0, 20.0, 0.02, path, Rail::Sinks)?;
    /// let cap = m.rail_return(12.0, 20.0, 0.02, path, Rail::Capacitor { capacitance_f: 100e-6 })?;
    /// assert!(sink.charge_c > 0.0 && cap.peak_bus_v > 12.0);
    /// # Ok::<(), lenz::Error>(())
    /// ```
    pub fn rail_return(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
        path: ReturnPath,
        rail: Rail,
    ) -> Result<RailReturn, Error> {
        let v0 = check_supply(supply_v)?;
        let load = check_load(load_torque_nm)?;
        let drop = match path {
            ReturnPath::Diodes { diode_drop_v } => {
                2.0 * f64::from(in_range(
                    "diode_drop_v",
                    non_negative("diode_drop_v", diode_drop_v)?,
                    0.0,
                    SUPPLY_MAX_V,
                )?)
            }
            ReturnPath::Switches => 0.0,
        };
        let cap = match rail {
            Rail::Sinks => None,
            Rail::Capacitor { capacitance_f } => Some(f64::from(in_range(
                "bus_capacitance_f",
                positive("bus_capacitance_f", capacitance_f)?,
                0.0,
                10.0,
            )?)),
        };
        let s = self.steady_state(supply_v, temp_c, load_torque_nm)?;
        let d = self.dynamics(temp_c, true)?;
        let (i0, w0) = (f64::from(s.current_a), f64::from(s.speed_rad_s));
        let none = RailReturn {
            charge_c: 0.0,
            energy_j: 0.0,
            duration_s: 0.0,
            peak_bus_v: supply_v,
            speed_rad_s: s.speed_rad_s,
        };
        if i0 <= 0.0 {
            return Ok(none);
        }
        // Scaled states (module docs): ĩ = i/I_s, w̃ = ω/(W_s·s_w), x̃ = q/Q_s or u/(V_s·s_u),
        // with the balancing factors s_w, s_u making each coupling pair equal in magnitude
        // (k/√(L·J) and 1/√(L·C)), so the ∞-norm is close to the fastest rate.
        let vs = v0 + drop;
        let (is, ws) = (vs / d.r, vs / d.k);
        let rl = d.r / d.l;
        let sw = (d.k / d.r) * libm::sqrt(d.l / d.j);
        let (su, third) = match cap {
            Some(c) => {
                let su = libm::sqrt(d.l / c) / d.r;
                (su, 1.0 / (d.r * c * su))
            }
            None => (1.0, rl),
        };
        let m: Mat<4> = [
            [
                -rl,
                -rl * sw,
                if cap.is_some() { -rl * su } else { 0.0 },
                -rl,
            ],
            [
                d.k * d.k / (d.r * d.j * sw),
                -d.b / d.j,
                0.0,
                -load / (d.j * ws * sw),
            ],
            [third, 0.0, 0.0, 0.0],
            [0.0; 4],
        ];
        let x0 = [i0 / is, w0 / (ws * sw), 0.0, 1.0];
        let (t, x) = first_zero(&m, &x0).ok_or(Error::Unreachable {
            param: "load_torque_nm",
            target: load_torque_nm,
            limit: (d.b * vs / d.k) as f32,
        })?;
        let (charge, rise) = match cap {
            Some(c) => (x[2] * su * vs * c, x[2] * su * vs),
            None => (x[2] * vs * d.l / (d.r * d.r), 0.0),
        };
        let energy = v0 * charge + 0.5 * charge * rise;
        Ok(RailReturn {
            charge_c: finite_result("supply_v", charge as f32)?,
            energy_j: finite_result("supply_v", energy as f32)?,
            duration_s: finite_result("supply_v", t as f32)?,
            peak_bus_v: finite_result("supply_v", (v0 + rise) as f32)?,
            speed_rad_s: finite_result("supply_v", (x[1] * ws * sw) as f32)?,
        })
    }
}

/// `di/dt` of the scaled system (row 0 of `m`, linear in the state).
fn slope(m: &Mat<4>, x: &[f64; 4]) -> f64 {
    m[0].iter().zip(x).map(|(a, b)| a * b).sum()
}

/// Bisection on `g(τ)` over `(lo, hi]` with `g(lo) > 0 ≥ g(hi)`, evaluating the state as
/// `exp(m·τ)·x` on its [`Orbit`] (`hi` is at most the bracketing step, so `‖m·τ‖∞ ≤ 1/4`);
/// returns `(τ, state)` at the upper end of the final bracket.
fn bisect(
    m: &Mat<4>,
    x: &[f64; 4],
    mut lo: f64,
    mut hi: f64,
    g: impl Fn(&[f64; 4]) -> f64,
) -> (f64, [f64; 4]) {
    let orbit = Orbit::new(m, x);
    let mut x_hi = orbit.at(hi);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        let xm = orbit.at(mid);
        if g(&xm) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
            x_hi = xm;
        }
    }
    (hi, x_hi)
}

/// The first time the current (state 0) reaches zero from a positive start, and the state then.
fn first_zero(m: &Mat<4>, x0: &[f64; 4]) -> Option<(f64, [f64; 4])> {
    let n = norm_inf(m);
    if !(n.is_finite() && n > 0.0) {
        return None;
    }
    let h = 0.25 / n;
    let step = expm(m, h);
    let mut x = *x0;
    let mut t = 0.0f64;
    for _ in 0..MAX_STEPS {
        let next = mul_vec(&step, &x);
        if next[0] <= 0.0 {
            let (dt, xz) = bisect(m, &x, 0.0, h, |y| y[0]);
            return Some((t + dt, xz));
        }
        let (s0, s1) = (slope(m, &x), slope(m, &next));
        if s0 < 0.0 && s1 > 0.0 {
            // A local minimum inside the step: locate it and look at its value.
            let (tm, xm) = bisect(m, &x, 0.0, h, |y| -slope(m, y));
            if xm[0] <= 0.0 {
                let (dt, xz) = bisect(m, &x, 0.0, tm, |y| y[0]);
                return Some((t + dt, xz));
            }
        }
        x = next;
        t += h;
    }
    None
}
