//! Unclamped switch-off: the coil rings with the switch node's parasitic capacitance.
//!
//! # Circuit and solution
//!
//! With the switch open and nothing across the coil, the supply, the coil (L, R) and the
//! capacitance `C` across the switch form a series RLC loop. With `q = v − V_s` (switch voltage
//! less the supply) and the coil current `i`:
//!
//! ```text
//! L di/dt = −q − R i,    C dq/dt = i,    i(0) = I₀,  q(0) = −V_s   (the switch was on: v = 0)
//! ```
//!
//! so `q'' + 2α q' + ω₀² q = 0` with `α = R/(2L)`, `ω₀² = 1/(LC)`. For every damping the
//! solution is
//!
//! ```text
//! q(t) = q₀·Ec(t) + (q₀' + α q₀)·Es(t)
//! q'(t) = q₀'·Ec(t) − (α q₀' + ω₀² q₀)·Es(t),        q₀' = I₀/C
//! ```
//!
//! with `Ec = e^(−αt)·c(t)`, `Es = e^(−αt)·s(t)` and, by `D = ω₀² − α²`,
//! `c = cos ω_d t`, `s = sin(ω_d t)/ω_d` (`D > 0`, `ω_d = √D`), `c = cosh γt`,
//! `s = sinh(γt)/γ` (`D < 0`, `γ = √−D`), `c = 1`, `s = t` (`D = 0`). `D` is formed as
//! `(ω₀ − α)(ω₀ + α)` so that it keeps its digits near critical damping, and in the overdamped
//! case `e^(−αt)cosh γt` is written with the slow rate `α − γ = ω₀²/(α + γ)` so that nothing
//! overflows or cancels.
//!
//! Current `i = C q'` gives `i(t) = I₀·Ec − (α I₀ − V_s/L)·Es`; switch voltage `v = V_s + q`.
//!
//! # Peak switch voltage
//!
//! The first maximum of `v` is where the current first reaches zero:
//! `I₀·c(t) = (α I₀ − V_s/L)·s(t)`. Underdamped this is
//! `t_pk = atan2(ω_d I₀, α I₀ − V_s/L)/ω_d`, the same point as the form
//! `θ = atan2(ω_d B − α A, ω_d A + α B)` with `A = −V_s`, `B = (I₀/C − α V_s)/ω_d`.
//! Overdamped, `t_pk = artanh(γ I₀/(α I₀ − V_s/L))/γ` if that argument lies in `(0, 1)`; else
//! the current never reverses, `v` rises monotonically towards `V_s` and the peak is `V_s`
//! (approached, not reached).
//!
//! The lossless first peak is `V_s + √(V_s² + (I₀ Z₀)²)` with `Z₀ = √(L/C)`; the common shortcut
//! `V_s + I₀ Z₀` forgets that the ring swings about `V_s` from a start at 0 V.
//!
//! # Ring-down
//!
//! The loop energy `W = ½ L i² + ½ C q²` only falls (`dW/dt = −R i² ≤ 0`), and `|i| ≤ √(2W/L)`,
//! so the time at which `W` has fallen to `½ L I_x²` is a time after which the current can never
//! again exceed `I_x`. This module finds it by bisection on the closed form. Underdamped, `W`
//! decays on average as `e^(−R t/L)`, that is the current amplitude with the time constant
//! `2L/R`, twice the RL time constant.
//!
//! # Energy
//!
//! The supply delivers `V_s ∫ i dt = V_s·C·(V_s − 0) = C V_s²`; the capacitance ends at `½ C V_s²`
//! (dissipated in the switch when it next closes); the coil resistance takes the rest,
//! `½ L I₀² + ½ C V_s²`.

/// The damped series RLC ring of an unclamped switch-off.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Ring {
    l: f32,
    c: f32,
    vs: f32,
    i0: f32,
    alpha: f32,
    w0sq: f32,
    /// `ω₀² − α²`.
    d: f32,
}

/// Regime-specific `(Ec, Es)`: `e^(−αt)·c(t)` and `e^(−αt)·s(t)`.
fn damped_pair(alpha: f32, w0sq: f32, d: f32, t: f32) -> (f32, f32) {
    if d > 0.0 {
        let wd = libm::sqrtf(d);
        let e = libm::expf(-alpha * t);
        let (s, c) = libm::sincosf(wd * t);
        (e * c, e * s / wd)
    } else if d < 0.0 {
        let g = libm::sqrtf(-d);
        // Slow and fast decay rates: α − γ = ω₀²/(α + γ) keeps its digits.
        let slow = w0sq / (alpha + g);
        let e_slow = libm::expf(-slow * t);
        let e_fast_rel = libm::expf(-2.0 * g * t);
        let ec = 0.5 * e_slow * (1.0 + e_fast_rel);
        let es = e_slow * -libm::expm1f(-2.0 * g * t) / (2.0 * g);
        (ec, es)
    } else {
        let e = libm::expf(-alpha * t);
        (e, t * e)
    }
}

impl Ring {
    pub(crate) fn new(l: f32, r: f32, c: f32, vs: f32, i0: f32) -> Self {
        let alpha = r / (2.0 * l);
        let w0 = 1.0 / libm::sqrtf(l * c);
        let w0sq = w0 * w0;
        let d = (w0 - alpha) * (w0 + alpha);
        Self {
            l,
            c,
            vs,
            i0,
            alpha,
            w0sq,
            d,
        }
    }

    /// `α I₀ − V_s/L`, the coefficient of `Es` in the current.
    fn k(&self) -> f32 {
        self.alpha * self.i0 - self.vs / self.l
    }

    /// Coil current at `t`, A.
    pub(crate) fn current_a(&self, t: f32) -> f32 {
        let (ec, es) = damped_pair(self.alpha, self.w0sq, self.d, t);
        self.i0 * ec - self.k() * es
    }

    /// Switch voltage at `t`, V.
    pub(crate) fn switch_voltage_v(&self, t: f32) -> f32 {
        let (ec, es) = damped_pair(self.alpha, self.w0sq, self.d, t);
        // q = q0 Ec + (q0' + α q0) Es with q0 = −Vs, q0' = I0/C.
        self.vs * (1.0 - ec) + (self.i0 / self.c - self.alpha * self.vs) * es
    }

    /// Loop energy `½ L i² + ½ C (v − V_s)²` at `t`, J.
    pub(crate) fn energy_j(&self, t: f32) -> f32 {
        let (ec, es) = damped_pair(self.alpha, self.w0sq, self.d, t);
        let i = self.i0 * ec - self.k() * es;
        let q = -self.vs * ec + (self.i0 / self.c - self.alpha * self.vs) * es;
        0.5 * self.l * i * i + 0.5 * self.c * q * q
    }

    /// Time of the first maximum of the switch voltage, s; `None` when the current never
    /// reverses (the voltage then only approaches `V_s`).
    pub(crate) fn peak_time_s(&self) -> Option<f32> {
        if self.i0 <= 0.0 {
            return None;
        }
        let k = self.k();
        if self.d > 0.0 {
            let wd = libm::sqrtf(self.d);
            Some(libm::atan2f(wd * self.i0, k) / wd)
        } else if self.d < 0.0 {
            let g = libm::sqrtf(-self.d);
            if k > 0.0 {
                let arg = g * self.i0 / k;
                if arg < 1.0 {
                    return Some(libm::atanhf(arg) / g);
                }
            }
            None
        } else if k > 0.0 {
            Some(self.i0 / k)
        } else {
            None
        }
    }

    /// Peak switch voltage, V.
    pub(crate) fn peak_v(&self) -> f32 {
        match self.peak_time_s() {
            Some(t) => {
                let v = self.switch_voltage_v(t);
                if v > self.vs { v } else { self.vs }
            }
            None => self.vs,
        }
    }

    /// Characteristic impedance `√(L/C)`, Ω.
    pub(crate) fn z0_ohm(&self) -> f32 {
        libm::sqrtf(self.l / self.c)
    }

    /// Undamped natural frequency `1/(2π√(LC))`, Hz.
    pub(crate) fn natural_frequency_hz(&self) -> f32 {
        libm::sqrtf(self.w0sq) / (2.0 * core::f32::consts::PI)
    }

    /// Lossless first peak `V_s + √(V_s² + (I₀ Z₀)²)`, V.
    pub(crate) fn lossless_peak_v(&self) -> f32 {
        self.vs + libm::hypotf(self.vs, self.i0 * self.z0_ohm())
    }

    /// Current amplitude equivalent of the initial loop energy, `√(I₀² + C V_s²/L)`, A.
    pub(crate) fn initial_amplitude_a(&self) -> f32 {
        libm::hypotf(self.i0, self.vs * libm::sqrtf(self.c / self.l))
    }

    /// Time after which the current never again exceeds `ix` (energy criterion, module docs),
    /// s. `None` if it cannot be bracketed within `t_max` (a loop too slow to ring down).
    pub(crate) fn time_to_current_s(&self, ix: f32, t_max: f32) -> Option<f32> {
        let w_target = 0.5 * self.l * ix * ix;
        if self.energy_j(0.0) <= w_target {
            return Some(0.0);
        }
        // Start from the underdamped envelope estimate and widen until bracketed.
        let tau_env = 1.0 / self.alpha;
        let a0 = self.initial_amplitude_a();
        let mut hi = tau_env * libm::logf(a0 / ix).max(1e-3);
        if !(hi.is_finite() && hi > 0.0) {
            hi = t_max;
        }
        let mut lo = 0.0f32;
        let mut bracketed = false;
        for _ in 0..200 {
            if hi > t_max {
                hi = t_max;
            }
            if self.energy_j(hi) <= w_target {
                bracketed = true;
                break;
            }
            if hi >= t_max {
                break;
            }
            lo = hi;
            hi *= 2.0;
        }
        if !bracketed {
            return None;
        }
        for _ in 0..64 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if self.energy_j(mid) <= w_target {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        // `hi` always satisfies the criterion: report it (the safe side).
        Some(hi)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;

    #[test]
    fn valve_ring_matches_checks() {
        // CHECKS C2.6 (computed: closed form cross-checked numerically, ODE 1e-10): valve
        // 120 mH, 32 Ω, 24 V, 0.75 A, C = 100 pF.
        let r = Ring::new(0.120, 32.0, 100e-12, 24.0, 0.75);
        assert!(isclose(r.z0_ohm() as f64, 34641.01615, 1e-6, 0.0));
        assert!(isclose(
            r.natural_frequency_hz() as f64,
            45944.07,
            1e-6,
            0.0
        ));
        assert!(isclose(r.lossless_peak_v() as f64, 26004.77, 1e-6, 0.0));
        assert!(isclose(r.peak_v() as f64, 25985.91385, 1e-5, 0.0));
        assert!(isclose(
            r.peak_time_s().unwrap() as f64,
            5.442998673e-6,
            1e-5,
            0.0
        ));
        // Current starts at I0 and the voltage at 0.
        assert!(isclose(r.current_a(0.0) as f64, 0.75, 1e-7, 0.0));
        assert!(r.switch_voltage_v(0.0).abs() < 1e-4);
    }

    #[test]
    fn overdamped_and_critical_do_not_ring() {
        // 1 mH, C = 1 nF: Z0 = 1 kΩ, critical at R = 2 kΩ.
        for r_ohm in [5_000.0f32, 2_000.0, 1_999.0, 2_001.0] {
            let r = Ring::new(1e-3, r_ohm, 1e-9, 12.0, 0.01);
            let v = r.peak_v();
            assert!(v.is_finite() && v >= 12.0, "{r_ohm}: {v}");
            let t = r.time_to_current_s(1e-4, 1.0).unwrap();
            assert!(t > 0.0 && t.is_finite());
            assert!(r.current_a(t).abs() <= 1e-4 * (1.0 + 1e-4));
        }
    }
}
