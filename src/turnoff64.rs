//! f64 references for switch-off, written from the formulas of the reference sheet
//! (docs/references.md F2.1–F2.5) independently of the f32 plan routines in `lenz::turnoff`.
//!
//! A constant voltage `vc` opposes the current in a loop of resistance `r` and inductance `l`
//! (freewheel diode, diode plus zener, clamp across the switch with `vc = Vcl − Vs`, resistor
//! plus diode with `r` the sum of both resistances).

/// `x − ln(1 + x)` in f64: the direct form above 0.1, the series `Σ (−1)^k x^k/k` (k ≥ 2)
/// summed to convergence below.
#[must_use]
pub fn x_minus_ln1p(x: f64) -> f64 {
    if x >= 0.1 {
        return x - x.ln_1p();
    }
    let mut sum = 0.0;
    let mut p = x;
    for k in 2..60 {
        p *= x;
        let term = p / k as f64;
        sum += if k % 2 == 0 { term } else { -term };
        if term < 1e-18 * sum.abs() {
            break;
        }
    }
    sum
}

/// Current `t` after switch-off, clamped at zero (F2.1).
#[must_use]
pub fn current(l: f64, r: f64, vc: f64, i0: f64, t: f64) -> f64 {
    let a = vc / r;
    ((i0 + a) * (-t * r / l).exp() - a).max(0.0)
}

/// Time from `i0` to `ix` (F2.1): `tau ln((i0 + a)/(ix + a))`.
#[must_use]
pub fn time_to(l: f64, r: f64, vc: f64, i0: f64, ix: f64) -> f64 {
    let a = vc / r;
    (l / r) * ((i0 + a) / (ix + a)).ln()
}

/// Time to zero (F2.1): `tau ln(1 + i0 r/vc)`; infinite for `vc = 0`.
#[must_use]
pub fn time_to_zero(l: f64, r: f64, vc: f64, i0: f64) -> f64 {
    if vc <= 0.0 {
        return f64::INFINITY;
    }
    (l / r) * (i0 * r / vc).ln_1p()
}

/// Charge `∫ i dt` until zero (F2.2): `tau (i0 − a ln(1 + i0/a))`, or `tau i0` for `vc = 0`.
#[must_use]
pub fn charge(l: f64, r: f64, vc: f64, i0: f64) -> f64 {
    if vc <= 0.0 {
        return l / r * i0;
    }
    let a = vc / r;
    (l / r) * a * x_minus_ln1p(i0 / a)
}

/// `∫ i² dt` until zero (F2.4): `tau((I0+a)²/2 (1−u²) − 2a(I0+a)(1−u) + a² t0/tau)`,
/// `u = exp(−t0/tau)`; `tau i0²/2` for `vc = 0`.
#[must_use]
pub fn square_integral(l: f64, r: f64, vc: f64, i0: f64) -> f64 {
    let tau = l / r;
    if vc <= 0.0 {
        return tau * i0 * i0 / 2.0;
    }
    let a = vc / r;
    let t0 = time_to_zero(l, r, vc, i0);
    let u = (-t0 / tau).exp();
    tau * ((i0 + a).powi(2) / 2.0 * (1.0 - u * u) - 2.0 * a * (i0 + a) * (1.0 - u)
        + a * a * t0 / tau)
}

/// Single-pulse avalanche energy with the coil resistance neglected (F2.3, TOSH):
/// `½ L I² BV/(BV − VDD)`.
#[must_use]
pub fn avalanche_lossless(l: f64, i0: f64, bv: f64, vdd: f64) -> f64 {
    0.5 * l * i0 * i0 * bv / (bv - vdd)
}

/// The approximate switch-off energy of older high-side switch datasheets (IFX key):
/// `Vcl (I L/(2R)) ln(1 + I R/Vc)`, `Vc = Vcl − Vs`.
#[must_use]
pub fn clamp_energy_approx(l: f64, r: f64, vcl: f64, vs: f64, i0: f64) -> f64 {
    vcl * (i0 * l / (2.0 * r)) * (1.0 + i0 * r / (vcl - vs)).ln()
}

/// Underdamped unclamped ring (F2.5): `(peak switch voltage, time of the peak)`.
#[must_use]
pub fn ring_peak(l: f64, r: f64, c: f64, vs: f64, i0: f64) -> (f64, f64) {
    let al = r / (2.0 * l);
    let wd = (1.0 / (l * c) - al * al).sqrt();
    let a = -vs;
    let b = (i0 / c - al * vs) / wd;
    let th = (wd * b - al * a).atan2(wd * a + al * b);
    (
        vs + (-al * th / wd).exp() * (a * th.cos() + b * th.sin()),
        th / wd,
    )
}

/// Underdamped unclamped ring (F2.5): `(current, switch voltage)` at `t`.
#[must_use]
pub fn ring_state(l: f64, r: f64, c: f64, vs: f64, i0: f64, t: f64) -> (f64, f64) {
    let al = r / (2.0 * l);
    let wd = (1.0 / (l * c) - al * al).sqrt();
    let a = -vs;
    let b = (i0 / c - al * vs) / wd;
    let e = (-al * t).exp();
    let (s, co) = (wd * t).sin_cos();
    let q = e * (a * co + b * s);
    // i = C dq/dt.
    let dq = e * ((-al * a + wd * b) * co + (-al * b - wd * a) * s);
    (c * dq, vs + q)
}
