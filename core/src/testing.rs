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
