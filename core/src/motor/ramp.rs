//! Start from standstill with a soft-start ramp of the applied voltage, and the shortest ramp
//! that keeps the start peak below a current limit.
//!
//! # Method
//!
//! The bridge ramps the applied voltage linearly, `v(t) = V·t/t_r` for `t < t_r`, then holds
//! `V`. During the ramp the state is the particular solution of the ramp plus the free
//! response: with `x = [i, ω]`, `ẋ = A·x + B·v + c`, a ramp `v = ρ·t` (`ρ = V/t_r`) has the
//! particular solution `x_p = P + Q·t` with `Q = −A⁻¹B·ρ` (the steady state per volt times
//! `ρ`, load zero) and `P = A⁻¹(Q − c)`; the deviation `x − x_p` is the free second-order
//! response of the module docs of [`super`] with its own initial values. So during the ramp
//! `i(t) = P_i + Q_i·t + e_i(t)` in closed form, and after it the exact step response from the
//! state at `t_r`.
//!
//! The ramp phase's extrema are the zeros of `Q_i + e_i'(t)`, which has no closed-form root:
//! they are bracketed by sampling at most every `1/(4λ)` (`λ = R/L + b/J + k/√(L·J)` bounds
//! the magnitude of the system's eigenvalues, so no oscillation is faster than the sampling;
//! for ramps longer than 4096 such steps the spacing is `t_r/4096`, where the current follows
//! the ramp quasi-statically) and refined by bisection. The peak is the largest magnitude
//! among those extrema, the ends of the ramp and the exact peak of the step response after it.

use super::Motor;
use super::params::{Dynamics, check_load, check_supply};
use super::response::{Mode2, Peak, Transient};
use crate::error::{Error, finite_result, in_range};

/// Most samples of the ramp phase.
const RAMP_SAMPLES: u32 = 4096;
/// Longest ramp accepted, s.
const RAMP_MAX_S: f32 = 1.0e4;

/// The exact response to a ramped start (module docs).
#[derive(Debug, Clone, Copy)]
struct RampStart {
    ramp: f64,
    p: [f64; 2],
    q: [f64; 2],
    current: Mode2,
    speed: Mode2,
    after: Transient,
    lambda: f64,
    /// Slowest decay rate of the free response, 1/s.
    slow: f64,
}

impl RampStart {
    fn new(d: &Dynamics, v: f64, load: f64, ramp: f64) -> Self {
        let (alpha, w0sq) = d.alpha_w0sq();
        let lambda = d.r / d.l + d.b / d.j + d.k / libm::sqrt(d.l * d.j);
        let disc = alpha * alpha - w0sq;
        let slow = if disc > 0.0 {
            w0sq / (alpha + libm::sqrt(disc))
        } else {
            alpha
        };
        if ramp <= 0.0 {
            let after = Transient::new(d, v, load, 0.0, 0.0);
            let zero = Mode2::new(alpha, w0sq, 0.0, 0.0);
            return Self {
                ramp: 0.0,
                p: [0.0; 2],
                q: [0.0; 2],
                current: zero,
                speed: zero,
                after,
                lambda,
                slow,
            };
        }
        let rho = v / ramp;
        let (qi, qw) = d.steady(rho, 0.0);
        // P = A⁻¹(Q − c), A⁻¹ = [[−b/J, k/L], [−k/J, −R/L]]/ω₀², c = [0, −T/J].
        let (ri, rw) = (qi, qw + load / d.j);
        let pi = (-(d.b / d.j) * ri + (d.k / d.l) * rw) / w0sq;
        let pw = (-(d.k / d.j) * ri - (d.r / d.l) * rw) / w0sq;
        // From standstill: e(0) = −P, e'(0) = ẋ(0) − Q with ẋ(0) = [0, −T/J].
        let current = Mode2::new(alpha, w0sq, -pi, -qi);
        let speed = Mode2::new(alpha, w0sq, -pw, -load / d.j - qw);
        let (i_r, w_r) = (
            pi + qi * ramp + current.value(ramp),
            pw + qw * ramp + speed.value(ramp),
        );
        Self {
            ramp,
            p: [pi, pw],
            q: [qi, qw],
            current,
            speed,
            after: Transient::new(d, v, load, i_r, w_r),
            lambda,
            slow,
        }
    }

    /// Speed at `t`, rad/s.
    fn speed_at(&self, t: f64) -> f64 {
        if t < self.ramp {
            self.p[1] + self.q[1] * t + self.speed.value(t)
        } else {
            self.after.speed_at(t - self.ramp)
        }
    }

    /// First time the speed reaches `target` (> 0): samples every `1/(4λ)` (growing by 1 % of
    /// the elapsed time once past the ramp and the fast part of the response, where the speed
    /// moves on the slow time constant alone) up to 50 slow time constants after the ramp,
    /// then bisection.
    fn time_to_speed(&self, target: f64) -> Option<f64> {
        let h0 = 0.25 / self.lambda;
        let end = self.ramp + 50.0 / self.slow;
        let (mut t0, mut t1) = (0.0f64, 0.0f64);
        let mut found = false;
        for _ in 0..1_000_000 {
            let grow = if t0 > self.ramp + 4.0 * h0 * 16.0 {
                0.01 * (t0 - self.ramp)
            } else {
                0.0
            };
            t1 = (t0 + h0.max(grow)).min(end);
            if self.speed_at(t1) >= target {
                found = true;
                break;
            }
            if t1 >= end {
                break;
            }
            t0 = t1;
        }
        if !found {
            return None;
        }
        let (mut lo, mut hi) = (t0, t1);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if self.speed_at(mid) >= target {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        Some(hi)
    }

    fn current_in_ramp(&self, t: f64) -> f64 {
        self.p[0] + self.q[0] * t + self.current.value(t)
    }

    fn slope_in_ramp(&self, t: f64) -> f64 {
        self.q[0] + self.current.slope(t)
    }

    /// Largest current magnitude over the whole start, and when (`None`: the final value).
    fn peak(&self) -> (f64, Option<f64>) {
        let (i_after, t_after) = self.after.peak();
        let mut best = (i_after, t_after.map(|t| t + self.ramp));
        if self.ramp <= 0.0 {
            return best;
        }
        let mut consider = |t: f64| {
            let i = self.current_in_ramp(t);
            if libm::fabs(i) > libm::fabs(best.0) {
                best = (i, Some(t));
            }
        };
        consider(0.0);
        let h_max = 0.25 / self.lambda;
        let n = libm::ceil(self.ramp / h_max).clamp(1.0, f64::from(RAMP_SAMPLES));
        let h = self.ramp / n;
        let mut t0 = 0.0;
        let mut s0 = self.slope_in_ramp(0.0);
        for k in 1..=(n as u32) {
            let t1 = if k == n as u32 {
                self.ramp
            } else {
                f64::from(k) * h
            };
            let s1 = self.slope_in_ramp(t1);
            if (s0 > 0.0) != (s1 > 0.0) {
                // Bisection on the slope's sign change.
                let (mut lo, mut hi) = (t0, t1);
                let up = s0 > 0.0;
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if mid <= lo || mid >= hi {
                        break;
                    }
                    if (self.slope_in_ramp(mid) > 0.0) == up {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                }
                consider(lo);
                consider(hi);
            }
            t0 = t1;
            s0 = s1;
        }
        consider(self.ramp);
        best
    }
}

impl Motor {
    /// Peak current of a start from standstill with the applied voltage ramped linearly from 0
    /// to `supply_v` over `ramp_s` (0: a step, as [`Motor::start_peak`]), load torque held
    /// (method in this file's module docs).
    ///
    /// # Errors
    ///
    /// As [`Motor::start_peak`]; `ramp_s` negative, not finite or above 10⁴ s.
    pub fn ramp_start_peak(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
        ramp_s: f32,
    ) -> Result<Peak, Error> {
        let v = check_supply(supply_v)?;
        let load = check_load(load_torque_nm)?;
        let ramp = f64::from(in_range("ramp_s", ramp_s, 0.0, RAMP_MAX_S)?);
        let d = self.dynamics(temp_c, true)?;
        let (i, at) = RampStart::new(&d, v, load, ramp).peak();
        Ok(Peak {
            current_a: finite_result("ramp_s", i as f32)?,
            time_s: match at {
                Some(t) => Some(finite_result("ramp_s", t as f32)?),
                None => None,
            },
        })
    }

    /// Time for a start from standstill with the applied voltage ramped over `ramp_s` (0: a
    /// step) to bring the rotor to `speed_rad_s`, load torque held, s. Use it to blank a jam
    /// detector for the start ([`crate::kernel::JamConfig`]): at the slowest corner (lowest
    /// supply, hottest winding, heaviest load) it is the longest a healthy start takes.
    ///
    /// # Errors
    ///
    /// As [`Motor::ramp_start_peak`]; `speed_rad_s` not positive or not finite;
    /// [`Error::Unreachable`] (param `speed_rad_s`, limit the final speed) when the rotor
    /// never reaches that speed.
    pub fn ramp_time_to_speed_s(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
        ramp_s: f32,
        speed_rad_s: f32,
    ) -> Result<f32, Error> {
        let v = check_supply(supply_v)?;
        let load = check_load(load_torque_nm)?;
        let ramp = f64::from(in_range("ramp_s", ramp_s, 0.0, RAMP_MAX_S)?);
        let target = f64::from(crate::error::positive("speed_rad_s", speed_rad_s)?);
        let d = self.dynamics(temp_c, true)?;
        let start = RampStart::new(&d, v, load, ramp);
        match start.time_to_speed(target) {
            Some(t) => finite_result("speed_rad_s", t as f32),
            None => Err(Error::Unreachable {
                param: "speed_rad_s",
                target: speed_rad_s,
                limit: start.after.w_final as f32,
            }),
        }
    }

    /// The shortest soft-start ramp (found by bisection to 10⁻⁶ relative, with the peak at the
    /// returned ramp at or below the limit) whose start peak ([`Motor::ramp_start_peak`]) stays
    /// at or below `limit_a`; 0 when a plain step already does, s.
    ///
    /// # Errors
    ///
    /// As [`Motor::ramp_start_peak`]; `limit_a` not positive; [`Error::Unreachable`] (param
    /// `current_limit_a`, limit the final running current) when the limit lies at or below the
    /// current the motor settles at, which no ramp avoids.
    pub fn soft_start_ramp_s(
        &self,
        supply_v: f32,
        temp_c: f32,
        load_torque_nm: f32,
        limit_a: f32,
    ) -> Result<f32, Error> {
        let limit = crate::error::positive("current_limit_a", limit_a)?;
        let peak = |r: f32| -> Result<f32, Error> {
            Ok(self
                .ramp_start_peak(supply_v, temp_c, load_torque_nm, r)?
                .magnitude_a())
        };
        if peak(0.0)? <= limit {
            return Ok(0.0);
        }
        let running = self
            .steady_state(supply_v, temp_c, load_torque_nm)?
            .current_a;
        if running >= limit {
            return Err(Error::Unreachable {
                param: "current_limit_a",
                target: limit,
                limit: running,
            });
        }
        // Grow the ramp from the mechanical time constant until the peak fits.
        let mut hi = self.mechanical_time_constant_s(temp_c)?.max(1e-9);
        let mut lo = 0.0f32;
        loop {
            if peak(hi)? <= limit {
                break;
            }
            lo = hi;
            hi *= 2.0;
            if hi > RAMP_MAX_S {
                return Err(Error::Unreachable {
                    param: "current_limit_a",
                    target: limit,
                    limit: running,
                });
            }
        }
        while hi - lo > 1e-6 * hi {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if peak(mid)? <= limit {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        Ok(hi)
    }
}
