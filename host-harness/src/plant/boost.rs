//! A boost stage: saturating inductor with DCR, low-side switch, output diode that blocks
//! reverse current, output capacitor with ESR, resistive load.
//!
//! # Equations
//!
//! States: the inductor's flux linkage `λ` (current `i_L = i(λ)`) and the capacitor's own
//! voltage `v_C` (behind its ESR `R_e`). With the diode current `i_d` (`i_L` while the diode
//! conducts, else 0) and the load `R`, the output node is `v_o = k (v_C + R_e i_d)`,
//! `k = R/(R + R_e)`, and `C dv_C/dt = i_d − v_o/R = k (i_d − v_C/R)`.
//!
//! | topology | `dλ/dt` | `i_d` | ends when |
//! |---|---|---|---|
//! | switch on | `V_in − (R_src + R_L + R_on) i_L` | 0 | switch edge |
//! | diode conducts | `V_in − V_D − (R_src + R_L) i_L − v_o` | `i_L` | `i_L = 0` (DCM) |
//! | idle (DCM) | 0 (`i_L = 0`) | 0 | `V_in − V_D > v_o` (diode forward-biased again) |
//!
//! With a constant inductance every topology is linear, `ẋ = A x + b` for `x = [i_L, v_C]`,
//! propagated exactly by the matrix exponential of the augmented 3×3 matrix (cached per
//! topology and interval length, so a tick of identical PWM periods costs two exponentials).
//! Events are found by sampling at most every 1/16 of the LC period and refining by Newton's
//! method on the exact solution. A saturating inductor uses the adaptive integrator on `[λ, v_C]`.

use super::inductance::{InductanceCurve, Magnetisation};
use super::linalg::{Mat, expm, mul_vec};
use super::rk::{MAX_EVENTS, Rk, StepUnderflow, Stop};
use super::{in_range, non_negative, positive};
use lenz::Error;
use serde::{Deserialize, Serialize};

/// Boost stage parameters.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoostSpec {
    /// Inductor magnetisation curve.
    pub inductor: InductanceCurve,
    /// Inductor winding resistance (DCR), Ω.
    pub dcr_ohm: f64,
    /// Switch on-resistance, Ω.
    pub switch_on_resistance_ohm: f64,
    /// Diode forward drop, V.
    pub diode_drop_v: f64,
    /// Output capacitance, F.
    pub output_c_f: f64,
    /// Output capacitor ESR, Ω.
    pub esr_ohm: f64,
    /// Load resistance, Ω.
    pub load_ohm: f64,
    /// Input (open-circuit) voltage, V.
    pub input_v: f64,
    /// Input source resistance, Ω.
    pub source_resistance_ohm: f64,
}

/// The topology in force.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum BoostMode {
    /// Switch on, inductor charging.
    On,
    /// Switch off, diode conducting.
    Diode,
    /// Switch off, no inductor current (discontinuous conduction).
    Idle,
}

/// The boost plant (module docs).
#[derive(Debug, Clone)]
pub struct Boost {
    spec: BoostSpec,
    mag: Magnetisation,
    t: f64,
    lam: f64,
    v_c: f64,
    mode: BoostMode,
    cmd_on: bool,
    stuck_on: bool,
    rk: Rk<2>,
    failure: Option<StepUnderflow>,
    cache: [(BoostMode, f64, f64, f64, Mat<3>); 4],
    cache_next: usize,
    peak_current_a: f64,
    peak_switch_current_a: f64,
    peak_switch_v: f64,
    dcm_events: u64,
}

impl Boost {
    /// Builds the stage at time 0 with the output discharged and the switch off.
    ///
    /// # Errors
    ///
    /// Names the first bad value.
    pub fn new(spec: BoostSpec) -> Result<Self, Error> {
        let mag = spec.inductor.validate()?;
        non_negative("dcr_ohm", spec.dcr_ohm)?;
        non_negative("switch_on_resistance_ohm", spec.switch_on_resistance_ohm)?;
        non_negative("diode_drop_v", spec.diode_drop_v)?;
        in_range(
            "output_c_f",
            positive("output_c_f", spec.output_c_f)?,
            1e-12,
            10.0,
        )?;
        non_negative("esr_ohm", spec.esr_ohm)?;
        positive("load_ohm", spec.load_ohm)?;
        in_range("input_v", spec.input_v, 0.0, 1e4)?;
        non_negative("source_resistance_ohm", spec.source_resistance_ohm)?;
        let mut b = Self {
            mag,
            t: 0.0,
            lam: 0.0,
            v_c: 0.0,
            mode: BoostMode::Idle,
            cmd_on: false,
            stuck_on: false,
            rk: Rk::new(1e-10, [1e-16, 1e-12], 1e-8),
            failure: None,
            cache: [(BoostMode::Idle, f64::NAN, 0.0, 0.0, [[0.0; 3]; 3]); 4],
            cache_next: 0,
            peak_current_a: 0.0,
            peak_switch_current_a: 0.0,
            peak_switch_v: 0.0,
            dcm_events: 0,
            spec,
        };
        b.mode = b.off_mode();
        Ok(b)
    }

    /// Time, s.
    #[must_use]
    pub fn time_s(&self) -> f64 {
        self.t
    }

    /// Inductor current, A.
    #[must_use]
    pub fn inductor_current_a(&self) -> f64 {
        self.mag.current(self.lam)
    }

    /// Capacitor voltage behind the ESR, V.
    #[must_use]
    pub fn capacitor_v(&self) -> f64 {
        self.v_c
    }

    /// Output (load) voltage, V.
    #[must_use]
    pub fn output_v(&self) -> f64 {
        let s = &self.spec;
        let k = s.load_ohm / (s.load_ohm + s.esr_ohm);
        let i_d = if self.mode == BoostMode::Diode {
            self.inductor_current_a()
        } else {
            0.0
        };
        k * (self.v_c + s.esr_ohm * i_d)
    }

    /// Input terminal voltage after the source resistance, V.
    #[must_use]
    pub fn input_terminal_v(&self) -> f64 {
        self.spec.input_v - self.spec.source_resistance_ohm * self.inductor_current_a()
    }

    /// Switch voltage, V.
    #[must_use]
    pub fn switch_voltage_v(&self) -> f64 {
        let i = self.inductor_current_a();
        match self.mode {
            BoostMode::On => self.spec.switch_on_resistance_ohm * i,
            BoostMode::Diode => self.output_v() + self.spec.diode_drop_v,
            BoostMode::Idle => self.input_terminal_v(),
        }
    }

    /// The topology in force.
    #[must_use]
    pub fn mode(&self) -> BoostMode {
        self.mode
    }

    /// The integrator's step underflow, if one stopped the stage (the state after it is not
    /// a solution; a closed-loop run reports it as an error).
    #[must_use]
    pub fn failure(&self) -> Option<StepUnderflow> {
        self.failure
    }

    /// Highest inductor current so far, A.
    #[must_use]
    pub fn peak_current_a(&self) -> f64 {
        self.peak_current_a
    }

    /// Highest current through the switch so far (inductor current while on), A.
    #[must_use]
    pub fn peak_switch_current_a(&self) -> f64 {
        self.peak_switch_current_a
    }

    /// Puts the stage in its steady state with the switch off: the output precharged through
    /// the inductor and diode, `i_L = (V_in − V_D)/(R_src + R_L + R)`, `v_C = i_L R` (an input
    /// that came up before the converter is enabled).
    pub fn settle_off(&mut self) {
        let s = &self.spec;
        let i = ((s.input_v - s.diode_drop_v) / (s.source_resistance_ohm + s.dcr_ohm + s.load_ohm))
            .max(0.0);
        self.lam = self.mag.flux(i);
        self.v_c = i * s.load_ohm;
        self.cmd_on = false;
        self.mode = self.off_mode();
    }

    /// Sets the state: inductor current `i_l_a` (A, negative values count as 0: the diode
    /// blocks reverse current) and capacitor voltage `v_c_v` (V). Non-finite values are
    /// refused (`false`).
    pub fn set_initial(&mut self, i_l_a: f64, v_c_v: f64) -> bool {
        if !(i_l_a.is_finite() && v_c_v.is_finite()) {
            return false;
        }
        self.lam = self.mag.flux(i_l_a.max(0.0));
        self.v_c = v_c_v;
        self.mode = if self.cmd_on {
            BoostMode::On
        } else {
            self.off_mode()
        };
        true
    }

    /// Highest switch voltage so far, V.
    #[must_use]
    pub fn peak_switch_v(&self) -> f64 {
        self.peak_switch_v
    }

    /// Times the inductor current fell to zero (discontinuous conduction).
    #[must_use]
    pub fn dcm_events(&self) -> u64 {
        self.dcm_events
    }

    /// Sets the load, Ω (load step). Non-positive or non-finite values are refused (`false`).
    pub fn set_load_ohm(&mut self, r: f64) -> bool {
        if r > 0.0 && r.is_finite() {
            self.spec.load_ohm = r;
            true
        } else {
            false
        }
    }

    /// Input (open-circuit) voltage in force, V.
    #[must_use]
    pub fn input_v(&self) -> f64 {
        self.spec.input_v
    }

    /// Sets the input voltage (sag, surge), V. Negative or non-finite values are refused.
    pub fn set_input_v(&mut self, v: f64) -> bool {
        if v >= 0.0 && v.is_finite() {
            self.spec.input_v = v;
            true
        } else {
            false
        }
    }

    /// Sticks the switch on.
    pub fn stick_switch_on(&mut self) {
        self.stuck_on = true;
        self.set_switch(true);
    }

    fn off_mode(&self) -> BoostMode {
        let s = &self.spec;
        let k = s.load_ohm / (s.load_ohm + s.esr_ohm);
        if self.inductor_current_a() > 0.0 || s.input_v - s.diode_drop_v > k * self.v_c {
            BoostMode::Diode
        } else {
            BoostMode::Idle
        }
    }

    /// Sets the switch at the present time. A stuck switch ignores `false`.
    pub fn set_switch(&mut self, on: bool) {
        let on = on || self.stuck_on;
        if on == self.cmd_on {
            return;
        }
        self.cmd_on = on;
        self.mode = if on { BoostMode::On } else { self.off_mode() };
    }

    /// Augmented state matrix of `mode` for `x = [i_L, v_C, 1]` with inductance `l`.
    fn matrix(&self, mode: BoostMode, l: f64) -> Mat<3> {
        let s = &self.spec;
        let (r, re, c) = (s.load_ohm, s.esr_ohm, s.output_c_f);
        let k = r / (r + re);
        match mode {
            BoostMode::On => [
                [
                    -(s.source_resistance_ohm + s.dcr_ohm + s.switch_on_resistance_ohm) / l,
                    0.0,
                    s.input_v / l,
                ],
                [0.0, -k / (r * c), 0.0],
                [0.0; 3],
            ],
            BoostMode::Diode => [
                [
                    -(s.source_resistance_ohm + s.dcr_ohm + k * re) / l,
                    -k / l,
                    (s.input_v - s.diode_drop_v) / l,
                ],
                [k / c, -k / (r * c), 0.0],
                [0.0; 3],
            ],
            BoostMode::Idle => [[0.0; 3], [0.0, -k / (r * c), 0.0], [0.0; 3]],
        }
    }

    fn expm_cached(&mut self, mode: BoostMode, a: &Mat<3>, t: f64) -> Mat<3> {
        for e in &self.cache {
            if e.0 == mode && e.1 == t && e.2 == a[0][2] && e.3 == a[1][1] {
                return e.4;
            }
        }
        let m = expm(a, t);
        self.cache[self.cache_next] = (mode, t, a[0][2], a[1][1], m);
        self.cache_next = (self.cache_next + 1) % self.cache.len();
        m
    }

    /// Event functions of `mode` on `[i_L, v_C]`: positive while the topology holds.
    fn events(spec: &BoostSpec, mode: BoostMode, i: f64, v_c: f64) -> [f64; MAX_EVENTS] {
        let k = spec.load_ohm / (spec.load_ohm + spec.esr_ohm);
        match mode {
            BoostMode::On => [1.0; MAX_EVENTS],
            BoostMode::Diode => [i, 1.0, 1.0],
            BoostMode::Idle => [k * v_c - (spec.input_v - spec.diode_drop_v), 1.0, 1.0],
        }
    }

    /// Advances to `t_s` with the switch as commanded. A time not after the present one, or
    /// not finite, leaves the stage unchanged. After a [`StepUnderflow`] the stage stops (its
    /// time moves on, its state does not): see [`Boost::failure`].
    pub fn advance_to(&mut self, t_s: f64) {
        if !t_s.is_finite() {
            return;
        }
        let mut guard = 0u32;
        while self.t < t_s && guard < 1_000_000 && self.failure.is_none() {
            guard += 1;
            let span = t_s - self.t;
            let mode = self.mode;
            let (dt, fired) = match self.mag.linear_h() {
                Some(l) => self.advance_linear(mode, l, span),
                None => self.advance_nonlinear(mode, span),
            };
            self.t += dt;
            let i = self.inductor_current_a();
            self.peak_current_a = self.peak_current_a.max(i.abs());
            if mode == BoostMode::On {
                self.peak_switch_current_a = self.peak_switch_current_a.max(i.abs());
            }
            self.peak_switch_v = self.peak_switch_v.max(self.switch_voltage_v());
            if fired {
                match mode {
                    BoostMode::Diode => {
                        self.lam = 0.0;
                        self.mode = BoostMode::Idle;
                        self.dcm_events += 1;
                    }
                    BoostMode::Idle => self.mode = BoostMode::Diode,
                    BoostMode::On => {}
                }
            }
        }
        self.t = self.t.max(t_s);
    }

    fn advance_linear(&mut self, mode: BoostMode, l: f64, span: f64) -> (f64, bool) {
        let a = self.matrix(mode, l);
        let s = &self.spec;
        let period = 2.0 * std::f64::consts::PI * (l * s.output_c_f).sqrt();
        let h_max = period / 16.0;
        let x0 = [self.inductor_current_a(), self.v_c, 1.0];
        let g0 = Self::events(s, mode, x0[0], x0[1])[0];
        if mode == BoostMode::On || span <= h_max {
            let e = self.expm_cached(mode, &a, span);
            let x1 = mul_vec(&e, &x0);
            let g1 = Self::events(&self.spec, mode, x1[0], x1[1])[0];
            if g0 >= 0.0 && g1 < 0.0 {
                let tr = self.root(mode, &a, &x0, span);
                self.set_state(mode, &mul_vec(&expm(&a, tr), &x0));
                return (tr, true);
            }
            self.set_state(mode, &x1);
            return (span, false);
        }
        // Long span: step by h_max and look for the event in each step.
        let e = self.expm_cached(mode, &a, h_max);
        let x1 = mul_vec(&e, &x0);
        let g1 = Self::events(&self.spec, mode, x1[0], x1[1])[0];
        if g0 >= 0.0 && g1 < 0.0 {
            let tr = self.root(mode, &a, &x0, h_max);
            self.set_state(mode, &mul_vec(&expm(&a, tr), &x0));
            return (tr, true);
        }
        self.set_state(mode, &x1);
        (h_max, false)
    }

    fn set_state(&mut self, mode: BoostMode, x: &[f64; 3]) {
        self.lam = if mode == BoostMode::Idle {
            0.0
        } else {
            self.mag.flux(x[0])
        };
        self.v_c = x[1];
    }

    /// Newton's method with bisection safeguard for the event time in `(0, step]`.
    fn root(&self, mode: BoostMode, a: &Mat<3>, x0: &[f64; 3], step: f64) -> f64 {
        let (mut lo, mut hi) = (0.0, step);
        let mut t = 0.5 * step;
        for _ in 0..100 {
            let x = mul_vec(&expm(a, t), x0);
            let g = Self::events(&self.spec, mode, x[0], x[1])[0];
            if g >= 0.0 {
                lo = t;
            } else {
                hi = t;
            }
            // dg/dt from ẋ = A x (the event functions are linear in the state).
            let xd = mul_vec(a, &x);
            let k = self.spec.load_ohm / (self.spec.load_ohm + self.spec.esr_ohm);
            let slope = match mode {
                BoostMode::Diode => xd[0],
                _ => k * xd[1],
            };
            let mut next = if slope != 0.0 {
                t - g / slope
            } else {
                f64::NAN
            };
            if !(next > lo && next < hi) {
                next = 0.5 * (lo + hi);
            }
            if (hi - lo) <= 1e-15 * step || (next - t).abs() <= 1e-16 * step {
                return next.clamp(lo, hi);
            }
            t = next;
        }
        hi
    }

    fn advance_nonlinear(&mut self, mode: BoostMode, span: f64) -> (f64, bool) {
        let s = self.spec.clone();
        let mag = &self.mag;
        let k = s.load_ohm / (s.load_ohm + s.esr_ohm);
        let f = |y: &[f64; 2]| -> [f64; 2] {
            let i = mag.current(y[0]);
            match mode {
                BoostMode::On => [
                    s.input_v
                        - (s.source_resistance_ohm + s.dcr_ohm + s.switch_on_resistance_ohm) * i,
                    -k * y[1] / (s.load_ohm * s.output_c_f),
                ],
                BoostMode::Diode => {
                    let vo = k * (y[1] + s.esr_ohm * i);
                    [
                        s.input_v - s.diode_drop_v - (s.source_resistance_ohm + s.dcr_ohm) * i - vo,
                        k * (i - y[1] / s.load_ohm) / s.output_c_f,
                    ]
                }
                BoostMode::Idle => [0.0, -k * y[1] / (s.load_ohm * s.output_c_f)],
            }
        };
        let g = |y: &[f64; 2]| Self::events(&s, mode, mag.current(y[0]), y[1]);
        let mut y = [self.lam, self.v_c];
        let tol = [1e-12, 1e-12, 1e-12];
        match self.rk.integrate(&f, &g, &tol, &mut y, span) {
            Stop::End => {
                self.lam = y[0];
                self.v_c = y[1];
                (span, false)
            }
            Stop::Event { dt, .. } => {
                self.lam = if mode == BoostMode::Diode { 0.0 } else { y[0] };
                self.v_c = y[1];
                (dt, true)
            }
            Stop::Stalled { dt, h } => {
                self.lam = y[0];
                self.v_c = y[1];
                self.failure.get_or_insert(StepUnderflow {
                    t_s: self.t + dt,
                    step_s: h,
                });
                (span, false)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rail(l: InductanceCurve) -> Boost {
        // CHECKS section 3 heater rail (invented demo values).
        Boost::new(BoostSpec {
            inductor: l,
            dcr_ohm: 0.040,
            switch_on_resistance_ohm: 0.025,
            diode_drop_v: 0.35,
            output_c_f: 22e-6,
            esr_ohm: 0.005,
            load_ohm: 24.0,
            input_v: 5.0,
            source_resistance_ohm: 0.0,
        })
        .unwrap()
    }

    #[test]
    fn settled_off_state_is_steady() {
        let mut b = rail(InductanceCurve::Linear { l_h: 10e-6 });
        b.settle_off();
        let (i0, v0) = (b.inductor_current_a(), b.capacitor_v());
        b.advance_to(1e-3);
        assert!((b.inductor_current_a() - i0).abs() < 1e-12);
        assert!((b.capacitor_v() - v0).abs() < 1e-12);
    }

    #[test]
    fn precharges_through_the_diode() {
        let mut b = rail(InductanceCurve::Linear { l_h: 10e-6 });
        b.advance_to(20e-3);
        // With the switch off the output settles at V_in − V_D less the DCR drop.
        let want = (5.0 - 0.35) * 24.0 / (24.0 + 0.040);
        assert!((b.output_v() - want).abs() < 2e-3, "{}", b.output_v());
    }
}
