//! The project's own adaptive integrator for the nonlinear segments: the embedded
//! Dormand–Prince 5(4) pair with error control and precise event location.
//!
//! # Method
//!
//! One step of the explicit seven-stage Dormand–Prince pair (J. R. Dormand, P. J. Prince,
//! "A family of embedded Runge-Kutta formulae", J. Comp. Appl. Math. 6, 1980) gives a fifth-order
//! solution and, from the same stages, a fourth-order one; their difference estimates the local
//! error. The step is accepted when the weighted RMS norm
//! `sqrt(mean((e_k / (atol_k + rtol·max(|y_k|, |y1_k|)))²))` is at most 1, and the next step is
//! `h·min(5, max(0.2, 0.9·err^(−1/5)))`.
//!
//! # Events
//!
//! Every segment carries `M` event functions `g_j(y)` (the plants use [`MAX_EVENTS`], the coil
//! drive one more while it watches for a current level), positive while the
//! segment's topology holds. When an accepted step starts with `g_j ≥ 0` and ends with `g_j < 0`, the step length is
//! refined (for every event that did, the earliest one then stopping the integration) by the Illinois variant of regula falsi on `h ↦ g_j(step(y, h))`, each trial being a
//! fresh fifth-order step from the start of the step (so the located state is as accurate as any
//! accepted step), until the bracket is below `1e-14` of the step or `|g_j|` is below the
//! event's absolute tolerance. The integrator stops exactly there and reports which event fired.
//!
//! # Step underflow
//!
//! A right-hand side that turns NaN or grows without bound makes every trial step fail, and
//! the step shrinks by 0.2 each time; once it is no longer than [`MIN_STEP_REL`] of the span
//! (below the span's time resolution, or exactly zero) no further step can make progress. The
//! integration then stops with [`Stop::Stalled`] instead of retrying forever, and the plant
//! reports a [`StepUnderflow`].
//!
//! No allocation: states are fixed-size arrays.

/// Most event functions per segment.
pub(crate) const MAX_EVENTS: usize = 3;

// Stage nodes 1/5, 3/10, 4/5, 8/9, 1, 1 are implied by the rows below (the system is
// autonomous within a segment, so they are not needed explicitly).
const A21: f64 = 1.0 / 5.0;
const A31: f64 = 3.0 / 40.0;
const A32: f64 = 9.0 / 40.0;
const A41: f64 = 44.0 / 45.0;
const A42: f64 = -56.0 / 15.0;
const A43: f64 = 32.0 / 9.0;
const A51: f64 = 19372.0 / 6561.0;
const A52: f64 = -25360.0 / 2187.0;
const A53: f64 = 64448.0 / 6561.0;
const A54: f64 = -212.0 / 729.0;
const A61: f64 = 9017.0 / 3168.0;
const A62: f64 = -355.0 / 33.0;
const A63: f64 = 46732.0 / 5247.0;
const A64: f64 = 49.0 / 176.0;
const A65: f64 = -5103.0 / 18656.0;
const B1: f64 = 35.0 / 384.0;
const B3: f64 = 500.0 / 1113.0;
const B4: f64 = 125.0 / 192.0;
const B5: f64 = -2187.0 / 6784.0;
const B6: f64 = 11.0 / 84.0;
// Error weights: fifth-order minus fourth-order weights.
const E1: f64 = 71.0 / 57600.0;
const E3: f64 = -71.0 / 16695.0;
const E4: f64 = 71.0 / 1920.0;
const E5: f64 = -17253.0 / 339200.0;
const E6: f64 = 22.0 / 525.0;
const E7: f64 = -1.0 / 40.0;

/// Shortest useful step, relative to the span: 16 ulp of the span. A step this short adds
/// nothing that the span's own rounding keeps.
pub(crate) const MIN_STEP_REL: f64 = 16.0 * f64::EPSILON;

/// The adaptive integrator could not make progress (module docs, "Step underflow"): the
/// plant's equations gave no usable step at `t_s`.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct StepUnderflow {
    /// Plant time at which the step underflowed, s.
    pub t_s: f64,
    /// The last step tried, s.
    pub step_s: f64,
}

impl std::fmt::Display for StepUnderflow {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "the plant's integrator stopped at t = {:.6e} s: step {:.3e} s is too short to \
             make progress (the state or its derivative is not finite)",
            self.t_s, self.step_s
        )
    }
}

impl std::error::Error for StepUnderflow {}

/// Tolerances and the step-size memory of one integration.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Rk<const N: usize> {
    pub rtol: f64,
    pub atol: [f64; N],
    /// Last accepted step, reused as the first trial of the next segment.
    pub h: f64,
    /// Accepted steps so far (statistics).
    pub steps: u64,
}

/// How an integration over a time span ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Stop {
    /// Reached the end of the span.
    End,
    /// Event `index` fired after `dt` seconds.
    Event { index: usize, dt: f64 },
    /// No step could make progress after `dt` seconds (module docs, "Step underflow"); `h` is
    /// the last step tried.
    Stalled { dt: f64, h: f64 },
}

fn axpy<const N: usize>(y: &[f64; N], h: f64, terms: &[(f64, &[f64; N])]) -> [f64; N] {
    let mut out = *y;
    for (k, o) in out.iter_mut().enumerate() {
        let mut s = 0.0;
        for (c, v) in terms {
            s += c * v[k];
        }
        *o += h * s;
    }
    out
}

impl<const N: usize> Rk<N> {
    pub(crate) fn new(rtol: f64, atol: [f64; N], h0: f64) -> Self {
        Self {
            rtol,
            atol,
            h: h0,
            steps: 0,
        }
    }

    /// One Dormand–Prince step: the fifth-order solution and the error estimate.
    fn step<F: Fn(&[f64; N]) -> [f64; N]>(f: &F, y: &[f64; N], h: f64) -> ([f64; N], [f64; N]) {
        let k1 = f(y);
        let k2 = f(&axpy(y, h, &[(A21, &k1)]));
        let k3 = f(&axpy(y, h, &[(A31, &k1), (A32, &k2)]));
        let k4 = f(&axpy(y, h, &[(A41, &k1), (A42, &k2), (A43, &k3)]));
        let k5 = f(&axpy(
            y,
            h,
            &[(A51, &k1), (A52, &k2), (A53, &k3), (A54, &k4)],
        ));
        let k6 = f(&axpy(
            y,
            h,
            &[(A61, &k1), (A62, &k2), (A63, &k3), (A64, &k4), (A65, &k5)],
        ));
        let y1 = axpy(
            y,
            h,
            &[(B1, &k1), (B3, &k3), (B4, &k4), (B5, &k5), (B6, &k6)],
        );
        let k7 = f(&y1);
        let mut err = [0.0; N];
        for (k, e) in err.iter_mut().enumerate() {
            *e = h * (E1 * k1[k] + E3 * k3[k] + E4 * k4[k] + E5 * k5[k] + E6 * k6[k] + E7 * k7[k]);
        }
        (y1, err)
    }

    fn error_norm(&self, y: &[f64; N], y1: &[f64; N], err: &[f64; N]) -> f64 {
        let mut s = 0.0;
        for k in 0..N {
            let sc = self.atol[k] + self.rtol * y[k].abs().max(y1[k].abs());
            let r = err[k] / sc;
            s += r * r;
        }
        (s / N as f64).sqrt()
    }

    /// Integrates the autonomous system `ẏ = f(y)` for at most `span` seconds, stopping at the
    /// first event `g_j(y) ≤ 0` (module docs). `y` holds the final state.
    pub(crate) fn integrate<const M: usize, F, G>(
        &mut self,
        f: &F,
        g: &G,
        g_tol: &[f64; M],
        y: &mut [f64; N],
        span: f64,
    ) -> Stop
    where
        F: Fn(&[f64; N]) -> [f64; N],
        G: Fn(&[f64; N]) -> [f64; M],
    {
        let mut done = 0.0;
        let mut h = self.h.min(span).max(span * 1e-12);
        let mut g0 = g(y);
        loop {
            let remaining = span - done;
            if remaining <= span * 1e-15 {
                return Stop::End;
            }
            let last = h >= remaining;
            let h_try = if last { remaining } else { h };
            // Also catches a NaN step (no comparison holds).
            if h_try.partial_cmp(&(MIN_STEP_REL * span)) != Some(std::cmp::Ordering::Greater) {
                return Stop::Stalled { dt: done, h: h_try };
            }
            let (y1, err) = Self::step(f, y, h_try);
            let en = self.error_norm(y, &y1, &err);
            if en.is_nan() || en > 1.0 {
                let fac = if en.is_finite() {
                    (0.9 * en.powf(-0.2)).max(0.2)
                } else {
                    0.2
                };
                h = h_try * fac;
                continue;
            }
            // Accepted: check the events at the end of the step.
            let g1 = g(&y1);
            // Each event that fired in the step is located, and the earliest one stops the
            // integration (event functions of different quantities cannot be compared by
            // their values).
            let fired = (0..M)
                .filter(|&j| g0[j] >= 0.0 && g1[j] < 0.0)
                .map(|j| {
                    let (hj, yj) = self.locate(f, g, j, g_tol[j], y, h_try, g0[j], g1[j], &y1);
                    (j, hj, yj)
                })
                .min_by(|a, b| a.1.total_cmp(&b.1));
            if let Some((j, hj, yj)) = fired {
                *y = yj;
                self.steps += 1;
                // Another event may fire earlier inside the located step; check them too.
                let gj = g(y);
                let earliest = (0..M)
                    .filter(|&k| g0[k] >= 0.0 && gj[k] <= 0.0)
                    .min_by(|&a, &b| gj[a].total_cmp(&gj[b]))
                    .unwrap_or(j);
                return Stop::Event {
                    index: earliest,
                    dt: done + hj,
                };
            }
            *y = y1;
            done += h_try;
            self.steps += 1;
            g0 = g1;
            let fac = if en > 0.0 {
                (0.9 * en.powf(-0.2)).clamp(0.2, 5.0)
            } else {
                5.0
            };
            if !last {
                self.h = h_try * fac;
            }
            h = h_try * fac;
            if last {
                return Stop::End;
            }
        }
    }

    /// Illinois regula falsi on the step length for event `j` (module docs).
    #[allow(clippy::too_many_arguments)] // the bracket's two ends and their values belong together
    fn locate<const M: usize, F, G>(
        &self,
        f: &F,
        g: &G,
        j: usize,
        tol: f64,
        y: &[f64; N],
        h: f64,
        g_lo: f64,
        g_hi: f64,
        y_hi: &[f64; N],
    ) -> (f64, [f64; N])
    where
        F: Fn(&[f64; N]) -> [f64; N],
        G: Fn(&[f64; N]) -> [f64; M],
    {
        let (mut a, mut fa) = (0.0, g_lo);
        let (mut b, mut fb) = (h, g_hi);
        let mut yb = *y_hi;
        let mut side = 0i8;
        for _ in 0..200 {
            if fb.abs() <= tol || (b - a) <= 1e-14 * h {
                break;
            }
            let c = if fa != fb {
                (a * fb - b * fa) / (fb - fa)
            } else {
                0.5 * (a + b)
            };
            let c = c.clamp(a + 1e-3 * (b - a), b - 1e-3 * (b - a));
            let (yc, _) = Self::step(f, y, c);
            let fc = g(&yc)[j];
            if fc > 0.0 {
                a = c;
                fa = fc;
                if side == -1 {
                    fb *= 0.5;
                }
                side = -1;
            } else {
                b = c;
                fb = fc;
                yb = yc;
                if side == 1 {
                    fa *= 0.5;
                }
                side = 1;
            }
        }
        (b, yb)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponential_decay_and_its_zero_crossing() {
        // y' = -(y + 1)/tau from 1: y = 2 e^(-t/tau) - 1 reaches zero at tau ln 2 (closed form).
        let tau = 3.75e-3;
        let f = |y: &[f64; 1]| [-(y[0] + 1.0) / tau];
        let g = |y: &[f64; 1]| [y[0], 1.0, 1.0];
        let mut rk = Rk::new(1e-11, [1e-13], 1e-6);
        let mut y = [1.0];
        let stop = rk.integrate(&f, &g, &[1e-15; MAX_EVENTS], &mut y, 0.1);
        match stop {
            Stop::Event { index: 0, dt } => {
                assert!((dt / (tau * 2f64.ln()) - 1.0).abs() < 1e-10, "{dt}");
            }
            other => panic!("no event: {other:?}"),
        }
        let mut y = [1.0];
        let g_none = |_: &[f64; 1]| [1.0; MAX_EVENTS];
        assert_eq!(
            rk.integrate(&f, &g_none, &[0.0; MAX_EVENTS], &mut y, 2e-3),
            Stop::End
        );
        let want = 2.0 * (-2e-3f64 / tau).exp() - 1.0;
        assert!((y[0] - want).abs() < 1e-10);
    }

    /// A right-hand side that is NaN from some state on: every trial step is rejected and the
    /// step shrinks to zero. Without the underflow guard the integrator retried a zero step
    /// forever; the evaluation counter turns that into a failure instead of a hang.
    #[test]
    fn a_step_that_underflows_stops_the_integration() {
        let calls = std::cell::Cell::new(0u64);
        let f = |y: &[f64; 1]| {
            calls.set(calls.get() + 1);
            assert!(calls.get() < 1_000_000, "the integrator did not stop");
            // Finite up to y = 0.5, NaN beyond: the solution y = t reaches it at t = 0.5.
            [if y[0] < 0.5 { 1.0 } else { f64::NAN }]
        };
        let g = |_: &[f64; 1]| [1.0; MAX_EVENTS];
        let mut rk = Rk::new(1e-10, [1e-12], 1e-3);
        let mut y = [0.0];
        match rk.integrate(&f, &g, &[0.0; MAX_EVENTS], &mut y, 1.0) {
            Stop::Stalled { dt, h } => {
                assert!((0.4..=0.5).contains(&dt), "stalled at {dt}");
                assert!(h <= MIN_STEP_REL, "last step {h}");
                assert!(
                    y[0].is_finite() && y[0] <= 0.5,
                    "state kept finite: {}",
                    y[0]
                );
            }
            other => panic!("expected a stall, got {other:?}"),
        }
        // A NaN from the start stalls at once, before any step is accepted.
        let nan = |_: &[f64; 1]| [f64::NAN];
        let mut y = [0.0];
        assert!(matches!(
            rk.integrate(&nan, &g, &[0.0; MAX_EVENTS], &mut y, 1e-3),
            Stop::Stalled { dt: 0.0, .. }
        ));
    }
}
