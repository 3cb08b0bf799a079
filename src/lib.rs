#![doc = include_str!("../README.md")]
//!
//! ## This package
//!
//! `lenz-checks` holds the cross-crate checks in `tests/` and the benches in `benches/`. Its
//! library is test support: tolerances and f64 reference formulas, each written independently
//! of the f32 plan routines from the formulas in the cited sources, so the tests compare two
//! implementations. (The README above is compiled as this package's doctest.)

pub mod turnoff64;

/// `true` when `|a − b| ≤ atol + rtol·|b|`.
#[must_use]
pub fn isclose(a: f64, b: f64, rtol: f64, atol: f64) -> bool {
    (a - b).abs() <= atol + rtol * b.abs()
}

/// Asserts [`isclose`] with a message naming the quantity.
///
/// # Panics
///
/// When the values differ by more than the tolerance.
pub fn assert_close(what: &str, got: f64, want: f64, rtol: f64) {
    assert!(
        isclose(got, want, rtol, 0.0),
        "{what}: got {got}, want {want} (rel tol {rtol}, rel err {:.3e})",
        (got - want).abs() / want.abs().max(f64::MIN_POSITIVE)
    );
}

/// First-order RL step response in f64: `i(t) = I∞ + (i0 − I∞) e^(−t R/L)`.
#[must_use]
pub fn rl_step(v: f64, r: f64, l: f64, i0: f64, t: f64) -> f64 {
    let i_inf = v / r;
    i_inf + (i0 - i_inf) * (-t * r / l).exp()
}

/// Copper resistance at `t` from `r_ref` at `t_ref` (IEC 60028, α₂₀ = 0.00393 /K).
#[must_use]
pub fn copper_resistance(r_ref: f64, t_ref: f64, t: f64) -> f64 {
    const A20: f64 = 0.00393;
    r_ref * (1.0 + A20 * (t - 20.0)) / (1.0 + A20 * (t_ref - 20.0))
}
