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
