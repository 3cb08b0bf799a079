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

/// f64 references for the moving armature, written independently of `crate::armature`: the
/// magnetic circuit as reluctances (`L = 1/(ℛ_iron + x/(μ₀A))` with `N = 1`), forces and
/// co-energies by quadrature of the flux linkage, minimum currents by bisection.
pub mod armature64 {
    /// Three-point Gauss–Legendre over `[0, b]` in `panels` panels.
    fn quad<F: Fn(f64) -> f64>(f: F, b: f64, panels: usize) -> f64 {
        let nodes = [
            (-(0.6f64).sqrt(), 5.0 / 9.0),
            (0.0, 8.0 / 9.0),
            ((0.6f64).sqrt(), 5.0 / 9.0),
        ];
        let h = b / panels as f64;
        (0..panels)
            .map(|k| {
                let m = (k as f64 + 0.5) * h;
                nodes
                    .iter()
                    .map(|(x, w)| w * f(m + 0.5 * h * x))
                    .sum::<f64>()
                    * 0.5
                    * h
            })
            .sum()
    }

    /// `(L(x), dL/dx)` of the reluctance form with `L₀`, `x₀`.
    pub fn inductance(l0: f64, x0: f64, gap: f64) -> (f64, f64) {
        let r_iron = 1.0 / l0;
        // x₀ = μ₀A·ℛ_iron: the gap whose reluctance equals the iron's.
        let mu0_a = x0 / r_iron;
        let r = r_iron + gap / mu0_a;
        (1.0 / r, -(1.0 / mu0_a) / (r * r))
    }

    /// `λ(i, x)`.
    pub fn flux(l0: f64, x0: f64, sat: Option<f64>, i: f64, gap: f64) -> f64 {
        let (l, _) = inductance(l0, x0, gap);
        match sat {
            None => l * i,
            Some(ls) => ls * (l * i / ls).tanh(),
        }
    }

    /// Co-energy `∫₀ⁱ λ di′` by quadrature.
    pub fn coenergy(l0: f64, x0: f64, sat: Option<f64>, i: f64, gap: f64) -> f64 {
        quad(|c| flux(l0, x0, sat, c, gap), i.abs(), 400)
    }

    /// Closing force `−∂W′/∂x = −∫₀ⁱ ∂λ/∂x di′` by quadrature.
    pub fn force(l0: f64, x0: f64, sat: Option<f64>, i: f64, gap: f64) -> f64 {
        let (l, dl) = inductance(l0, x0, gap);
        let dlam_dx = |c: f64| match sat {
            None => c * dl,
            Some(ls) => {
                let ch = (l * c / ls).cosh();
                c * dl / (ch * ch)
            }
        };
        -quad(dlam_dx, i.abs(), 400)
    }

    /// Closing force from the closed form of the co-energy's derivative (no quadrature; for
    /// the searches below).
    pub fn force_closed(l0: f64, x0: f64, sat: Option<f64>, i: f64, gap: f64) -> f64 {
        let (l, dl) = inductance(l0, x0, gap);
        match sat {
            None => 0.5 * i * i * -dl,
            Some(ls) => {
                let u = (l * i / ls).abs();
                let g = if u < 1e-3 {
                    0.5 * u * u * (1.0 - 0.5 * u * u)
                } else {
                    u * u.tanh() - u.cosh().ln()
                };
                -dl / (l * l) * ls * ls * g
            }
        }
    }

    /// Smallest current with `force_closed ≥ f`, by bisection.
    pub fn current_for_force(l0: f64, x0: f64, sat: Option<f64>, f: f64, gap: f64) -> f64 {
        let mut hi = 1e-9;
        while force_closed(l0, x0, sat, hi, gap) < f {
            hi *= 2.0;
            if hi > 1e12 {
                return f64::INFINITY;
            }
        }
        let mut lo = 0.0;
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if force_closed(l0, x0, sat, mid, gap) < f {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        hi
    }

    /// Pull-in current: the largest over the travel of the current needed against the spring
    /// and load, by a dense scan refined by golden section. Returns (current, gap).
    #[allow(clippy::too_many_arguments)] // the armature's constants, as in the routine
    pub fn pull_in(
        l0: f64,
        x0: f64,
        sat: Option<f64>,
        open: f64,
        closed: f64,
        preload: f64,
        rate: f64,
        load: f64,
    ) -> (f64, f64) {
        let need = |x: f64| {
            let f = preload + rate * (open - x) + load;
            current_for_force(l0, x0, sat, f, x)
        };
        let n = 400;
        let mut best = (need(open), open);
        for k in 0..=n {
            let x = closed + (open - closed) * k as f64 / n as f64;
            let v = need(x);
            if v > best.0 {
                best = (v, x);
            }
        }
        let cell = (open - closed) / n as f64;
        let (mut a, mut b) = ((best.1 - cell).max(closed), (best.1 + cell).min(open));
        let gr = 0.5 * (5f64.sqrt() - 1.0);
        for _ in 0..100 {
            let c = b - gr * (b - a);
            let d = a + gr * (b - a);
            if need(c) > need(d) {
                b = d;
            } else {
                a = c;
            }
        }
        let x = 0.5 * (a + b);
        let v = need(x);
        if v > best.0 { (v, x) } else { best }
    }
}

/// f64 reference evaluations of the motor model, written from the textbook equations
/// `V = R·i + L·di/dt + k·ω`, `J·dω/dt = k·i − b·ω − T` independently of [`crate::motor`]:
/// steady state by Cramer's rule, transients in the eigenvalue form of the 2×2 system, peaks by
/// a dense scan refined by golden-section search (not from the derivative's zero), returned
/// charge by Gauss–Legendre quadrature, and the bus capacitor case by classical RK4.
pub mod motor64 {
    /// The motor at one temperature.
    #[derive(Debug, Clone, Copy)]
    pub struct M {
        /// Loop resistance, Ω.
        pub r: f64,
        /// Inductance, H.
        pub l: f64,
        /// Torque constant, N·m/A.
        pub k: f64,
        /// Inertia, kg·m².
        pub j: f64,
        /// Viscous friction, N·m·s/rad.
        pub b: f64,
    }

    impl M {
        /// Steady (current, speed) at voltage `v` and load `t`: solves
        /// `[[R, k], [k, −b]]·[i, ω] = [v, t]` by Cramer's rule.
        pub fn steady(&self, v: f64, t: f64) -> (f64, f64) {
            let det = -self.r * self.b - self.k * self.k;
            (
                (-self.b * v - self.k * t) / det,
                (self.r * t - self.k * v) / det,
            )
        }

        /// Current at `t` after stepping to `v` from `(i0, w0)`, eigenvalue form.
        pub fn current(&self, v: f64, load: f64, i0: f64, w0: f64, t: f64) -> f64 {
            let (i_f, _) = self.steady(v, load);
            let e0 = i0 - i_f;
            let d0 = (v - self.r * i0 - self.k * w0) / self.l;
            let tr = -self.r / self.l - self.b / self.j;
            let det = (self.r * self.b + self.k * self.k) / (self.l * self.j);
            let disc = tr * tr / 4.0 - det;
            let sigma = tr / 2.0;
            if disc.abs() <= 1e-14 * sigma * sigma {
                return i_f + (sigma * t).exp() * (e0 + (d0 - sigma * e0) * t);
            }
            if disc > 0.0 {
                let s = disc.sqrt();
                let (l1, l2) = (sigma + s, sigma - s);
                let c1 = (d0 - l2 * e0) / (l1 - l2);
                let c2 = e0 - c1;
                i_f + c1 * (l1 * t).exp() + c2 * (l2 * t).exp()
            } else {
                let w = (-disc).sqrt();
                i_f + (sigma * t).exp()
                    * (e0 * (w * t).cos() + (d0 - sigma * e0) / w * (w * t).sin())
            }
        }

        /// Speed at `t` after stepping to `v` from `(i0, w0)`: the same eigenvalue form with
        /// the speed's final value and initial slope `(k·i0 − b·w0 − T)/J`.
        pub fn speed(&self, v: f64, load: f64, i0: f64, w0: f64, t: f64) -> f64 {
            let (_, w_f) = self.steady(v, load);
            let e0 = w0 - w_f;
            let d0 = (self.k * i0 - self.b * w0 - load) / self.j;
            let tr = -self.r / self.l - self.b / self.j;
            let det = (self.r * self.b + self.k * self.k) / (self.l * self.j);
            let disc = tr * tr / 4.0 - det;
            let sigma = tr / 2.0;
            if disc.abs() <= 1e-14 * sigma * sigma {
                return w_f + (sigma * t).exp() * (e0 + (d0 - sigma * e0) * t);
            }
            if disc > 0.0 {
                let s = disc.sqrt();
                let (l1, l2) = (sigma + s, sigma - s);
                let c1 = (d0 - l2 * e0) / (l1 - l2);
                w_f + c1 * (l1 * t).exp() + (e0 - c1) * (l2 * t).exp()
            } else {
                let w = (-disc).sqrt();
                w_f + (sigma * t).exp()
                    * (e0 * (w * t).cos() + (d0 - sigma * e0) / w * (w * t).sin())
            }
        }

        /// Slowest and fastest decay rates (1/s) of the system.
        pub fn rates(&self) -> (f64, f64) {
            let tr = self.r / self.l + self.b / self.j;
            let det = (self.r * self.b + self.k * self.k) / (self.l * self.j);
            let disc = tr * tr / 4.0 - det;
            if disc > 0.0 {
                (det / (tr / 2.0 + disc.sqrt()), tr / 2.0 + disc.sqrt())
            } else {
                (tr / 2.0, det.sqrt())
            }
        }

        /// Largest |current| over t ≥ 0 by a log-spaced scan to 40 slow time constants and a
        /// golden-section refinement of the best sample; the final value when the scan's
        /// largest sample is its last.
        pub fn peak(&self, v: f64, load: f64, i0: f64, w0: f64) -> f64 {
            let (slow, fast) = self.rates();
            let f = |t: f64| self.current(v, load, i0, w0, t).abs();
            let (t_lo, t_hi) = (1e-4 / fast, 40.0 / slow);
            let n = 20_000;
            let grid = |k: usize| t_lo * (t_hi / t_lo).powf(k as f64 / n as f64);
            let mut best = (0usize, f(grid(0)));
            for k in 1..=n {
                let y = f(grid(k));
                if y > best.1 {
                    best = (k, y);
                }
            }
            let start = f(0.0);
            if best.0 == n {
                return start.max(self.steady(v, load).0.abs());
            }
            let (mut a, mut b) = (grid(best.0.saturating_sub(1)), grid(best.0 + 1));
            let g = 0.618_033_988_749_894_9;
            for _ in 0..200 {
                let (x1, x2) = (b - g * (b - a), a + g * (b - a));
                if f(x1) > f(x2) {
                    b = x2;
                } else {
                    a = x1;
                }
            }
            f(0.5 * (a + b)).max(start)
        }

        /// Coast or reversal from the steady state at `v0` into a sinking rail against
        /// `v0 + drop`: (charge, time to zero current).
        pub fn returned_sink(&self, v0: f64, load: f64, drop: f64) -> (f64, f64) {
            let (i0, w0) = self.steady(v0, load);
            let v = -(v0 + drop);
            let (_, fast) = self.rates();
            let i = |t: f64| self.current(v, load, i0, w0, t);
            // Steps of 1/50 of the fast time constant, growing with t (0.2 %) once the fast
            // part has died out.
            let mut t = 0.0;
            let mut h = 0.02 / fast;
            while i(t + h) > 0.0 {
                t += h;
                h = (0.02 / fast).max(0.002 * t);
                assert!(t < 1e9 / fast, "no zero crossing");
            }
            let (mut a, mut b) = (t, t + h);
            for _ in 0..200 {
                let m = 0.5 * (a + b);
                if i(m) > 0.0 {
                    a = m;
                } else {
                    b = m;
                }
            }
            let t0 = 0.5 * (a + b);
            // Gauss–Legendre, 5 points on each of 400 panels.
            let nodes = [
                (0.0, 128.0 / 225.0),
                (-0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
                (0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
                (-0.906_179_845_938_664, 0.236_926_885_056_189_1),
                (0.906_179_845_938_664, 0.236_926_885_056_189_1),
            ];
            let panels = 400;
            let w = t0 / panels as f64;
            let mut q = 0.0;
            for p in 0..panels {
                let mid = (p as f64 + 0.5) * w;
                for (x, wt) in nodes {
                    q += wt * 0.5 * w * i(mid + 0.5 * w * x);
                }
            }
            (q, t0)
        }

        /// Coast into the bus capacitor `c` alone (supply cannot sink): (charge, time to zero
        /// current) by RK4 on `[i, ω, q]`, the crossing by linear interpolation.
        pub fn returned_cap(&self, v0: f64, load: f64, drop: f64, c: f64) -> (f64, f64) {
            let (i0, w0) = self.steady(v0, load);
            let f = |y: [f64; 3]| -> [f64; 3] {
                let vbus = v0 + y[2] / c;
                [
                    (-(vbus + drop) - self.r * y[0] - self.k * y[1]) / self.l,
                    (self.k * y[0] - self.b * y[1] - load) / self.j,
                    y[0],
                ]
            };
            let (_, fast) = self.rates();
            let lc = 1.0 / (self.l * c).sqrt();
            // Steps well inside every rate, and inside the time the current takes to fall at its
            // initial slope (a short coast of a small current).
            let t_fall = self.l * i0 / (v0 + drop + self.r * i0 + self.k * w0);
            let h =
                (0.002 / (fast + lc + self.r / self.l + 1.0 / (self.r * c))).min(t_fall / 2000.0);
            let mut y = [i0, w0, 0.0];
            let mut t = 0.0;
            loop {
                let k1 = f(y);
                let add = |a: [f64; 3], b: [f64; 3], s: f64| {
                    [a[0] + s * b[0], a[1] + s * b[1], a[2] + s * b[2]]
                };
                let k2 = f(add(y, k1, h / 2.0));
                let k3 = f(add(y, k2, h / 2.0));
                let k4 = f(add(y, k3, h));
                let mut n = y;
                for m in 0..3 {
                    n[m] += h / 6.0 * (k1[m] + 2.0 * k2[m] + 2.0 * k3[m] + k4[m]);
                }
                if n[0] <= 0.0 {
                    let frac = y[0] / (y[0] - n[0]);
                    return (y[2] + frac * (n[2] - y[2]), t + frac * h);
                }
                y = n;
                t += h;
                assert!(t < 1e7 * h, "no zero crossing");
            }
        }
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
