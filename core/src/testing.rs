//! Test support: tolerances and f64 reference evaluations (compiled for tests only).

extern crate std;

/// `true` when `|a − b| ≤ atol + rtol·|b|`.
pub fn isclose(a: f64, b: f64, rtol: f64, atol: f64) -> bool {
    (a - b).abs() <= atol + rtol * b.abs()
}

/// f64 reference evaluations written independently of the f32 routines.
pub mod ref64 {
    /// Copper winding resistance at `t` from `r_ref` at `t_ref` (IEC 60028, α₂₀ = 0.00393).
    pub fn copper(r_ref: f64, t_ref: f64, t: f64) -> f64 {
        let a = 0.00393;
        r_ref * (1.0 + a * (t - 20.0)) / (1.0 + a * (t_ref - 20.0))
    }

    /// PWM periodic steady state by iterating exact per-period updates from zero until the
    /// period-to-period change vanishes. Returns (min, max, mean).
    pub fn pwm(v: f64, r_on: f64, r_off: f64, vf: f64, l: f64, d: f64, f: f64) -> (f64, f64, f64) {
        let t = 1.0 / f;
        let (t_on, t_off) = (d * t, (1.0 - d) * t);
        let (tau_on, tau_off) = (l / r_on, l / r_off);
        let (i_on, i_off) = (v / r_on, -vf / r_off);
        let mut i = 0.0f64;
        let mut out = (0.0, 0.0, 0.0);
        for _ in 0..2_000_000 {
            let start = i;
            let max = i_on + (start - i_on) * (-t_on / tau_on).exp();
            let q_on = i_on * t_on + (start - i_on) * tau_on * (1.0 - (-t_on / tau_on).exp());
            let t_zero = if vf > 0.0 {
                tau_off * (1.0 + max / -i_off).ln()
            } else {
                f64::INFINITY
            };
            let (end, q_off) = if t_zero < t_off {
                (
                    0.0,
                    i_off * t_zero + (max - i_off) * tau_off * (1.0 - (-t_zero / tau_off).exp()),
                )
            } else {
                (
                    i_off + (max - i_off) * (-t_off / tau_off).exp(),
                    i_off * t_off + (max - i_off) * tau_off * (1.0 - (-t_off / tau_off).exp()),
                )
            };
            i = end;
            out = (end, max, (q_on + q_off) / t);
            if (end - start).abs() <= 1e-15 * max.abs() {
                break;
            }
        }
        out
    }
}

/// An f64 simulation of a coil switched by a PWM, for checking the drivers: exact exponential
/// segments of the two linear loops (on: `u_on`, `R_on`; off: the clamp's `u_off`, `R_off`),
/// the diode (or switch) blocking at zero current, time in whole nanoseconds so that PWM edges
/// and control ticks fall on exact instants.
///
/// The PWM runs free with period `period_ns`, its periods starting at `phase_ns` modulo the
/// period and each starting on; a duty written takes effect at the next period start (the
/// timer's shadow register).
pub struct PwmCoil {
    /// Inductance, H.
    pub l: f64,
    /// On-loop resistance, Ω.
    pub r_on: f64,
    /// Off-loop resistance, Ω.
    pub r_off: f64,
    /// Switch drop, V.
    pub switch_drop_v: f64,
    /// Clamp voltage in the off loop, V (a clamp across the switch: the switch's clamp voltage).
    pub clamp_v: f64,
    /// The clamp lies across the switch (the supply stays in the off loop).
    pub coupled: bool,
    /// Supply, V.
    pub supply_v: f64,
    /// Current, A.
    pub i: f64,
    t_ns: u64,
    period_ns: u64,
    phase_ns: u64,
    on_ns: u64,
    pending_on_ns: u64,
}

impl PwmCoil {
    /// A coil at zero current with the PWM off.
    #[allow(clippy::too_many_arguments)]
    pub fn new(
        l: f64,
        r_on: f64,
        r_off: f64,
        switch_drop_v: f64,
        clamp_v: f64,
        coupled: bool,
        supply_v: f64,
        period_ns: u64,
        phase_ns: u64,
    ) -> Self {
        Self {
            l,
            r_on,
            r_off,
            switch_drop_v,
            clamp_v,
            coupled,
            supply_v,
            i: 0.0,
            t_ns: 0,
            period_ns,
            phase_ns: phase_ns % period_ns,
            on_ns: 0,
            pending_on_ns: 0,
        }
    }

    /// Writes the duty `counts/max` (applied from the next period start).
    pub fn set_duty(&mut self, counts: u16, max: u16) {
        let on = (f64::from(counts) * self.period_ns as f64 / f64::from(max)).round() as u64;
        self.pending_on_ns = on.min(self.period_ns);
    }

    /// One loop for `dt` seconds from `i`: `i∞ + (i − i∞)·e^(−dt·R/L)`, never below zero (the
    /// diode or the switch blocks, and a blocked loop stays at zero while `i∞ ≤ 0`).
    pub fn segment(i: f64, dt: f64, r: f64, u: f64, l: f64) -> f64 {
        let inf = u / r;
        (inf + (i - inf) * (-dt * r / l).exp()).max(0.0)
    }

    /// Advances to `t_ns`.
    pub fn advance_to(&mut self, t_ns: u64) {
        while self.t_ns < t_ns {
            let pos = (self.t_ns + self.period_ns - self.phase_ns) % self.period_ns;
            if pos == 0 {
                self.on_ns = self.pending_on_ns;
            }
            let (end, on) = if pos < self.on_ns {
                (self.t_ns + self.on_ns - pos, true)
            } else {
                (self.t_ns + self.period_ns - pos, false)
            };
            let end = end.min(t_ns);
            let dt = (end - self.t_ns) as f64 * 1e-9;
            let (r, u) = if on {
                (self.r_on, (self.supply_v - self.switch_drop_v).max(0.0))
            } else {
                let coupled = if self.coupled { self.supply_v } else { 0.0 };
                (self.r_off, coupled - self.clamp_v)
            };
            self.i = Self::segment(self.i, dt, r, u, self.l);
            self.t_ns = end;
        }
    }
}
