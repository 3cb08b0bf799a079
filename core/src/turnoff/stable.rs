//! Numerically stable pieces of the clamp-energy expressions.
//!
//! With `x = I₀·R/V_c` the charge, clamp energy and resistive energy of a decay against a
//! constant clamp voltage are (see the [module docs](super)):
//!
//! ```text
//! h(x) = 1 − ln(1 + x)/x           Q   = (L·I₀/R)·h(x)
//! g(x) = 2·(x − ln(1 + x))/x²      E_c = ½ L I₀²·g(x)
//! m(x) = 1 − g(x)                  E_R = ½ L I₀²·m(x)
//! ```
//!
//! Written naively each of them cancels catastrophically for small `x` (a low-resistance coil
//! or a high clamp voltage): `x − ln(1 + x)` at `x = 10⁻³` keeps about one f32 digit. Below
//! [`SERIES_LIMIT`] they are summed from their Taylor series instead,
//!
//! ```text
//! h(x) = Σ_{k≥2} (−1)^k x^(k−1)/k        = x/2 − x²/3 + x³/4 − …
//! g(x) = Σ_{k≥2} 2(−1)^k x^(k−2)/k       = 1 − 2x/3 + x²/2 − …
//! m(x) = Σ_{k≥3} 2(−1)^(k+1) x^(k−2)/k   = 2x/3 − x²/2 + 2x³/5 − …
//! ```
//!
//! (from `ln(1 + x) = Σ_{k≥1} (−1)^(k+1) x^k/k`), with [`SERIES_TERMS`] terms: the first
//! omitted term is below `0.5³⁰/30 ≈ 3·10⁻¹¹` relative. At and above the limit the direct
//! forms lose at most a factor of about 4 of f32 precision (`m(0.5) = 0.244`).

/// Below this `x` the series are used.
pub const SERIES_LIMIT: f32 = 0.5;
/// Number of series terms summed.
pub const SERIES_TERMS: u32 = 30;

/// Horner sum of `Σ_{j=0}^{n−1} (−1)^j · x^j · scale/(j + first)`.
fn alternating_series(x: f32, first: u32, scale: f32) -> f32 {
    let mut acc = 0.0f32;
    let mut j = SERIES_TERMS;
    while j > 0 {
        j -= 1;
        let term = scale / (j + first) as f32;
        let signed = if j.is_multiple_of(2) { term } else { -term };
        acc = signed + x * acc;
    }
    acc
}

/// `h(x) = 1 − ln(1 + x)/x` for `x ≥ 0`, stable for small `x`; `h(0) = 0`, `h(∞) = 1`.
/// Negative or NaN `x` gives NaN (callers validate first).
#[must_use]
pub fn one_minus_ln1p_over_x(x: f32) -> f32 {
    if x.is_nan() || x < 0.0 {
        f32::NAN
    } else if x == f32::INFINITY {
        1.0
    } else if x < SERIES_LIMIT {
        x * alternating_series(x, 2, 1.0)
    } else {
        1.0 - libm::log1pf(x) / x
    }
}

/// `x − ln(1 + x)` for `x ≥ 0`, stable for small `x` (series `x²/2 − x³/3 + …`).
#[must_use]
pub fn x_minus_ln1p(x: f32) -> f32 {
    if x < SERIES_LIMIT {
        x * one_minus_ln1p_over_x(x)
    } else {
        x - libm::log1pf(x)
    }
}

/// `g(x) = 2·(x − ln(1 + x))/x²` for `x ≥ 0`: the share of the stored energy that goes into a
/// constant clamp voltage. `g(0) = 1`, `g(∞) = 0`.
#[must_use]
pub fn clamp_share(x: f32) -> f32 {
    if x.is_nan() || x < 0.0 {
        f32::NAN
    } else if x == f32::INFINITY {
        0.0
    } else if x < SERIES_LIMIT {
        alternating_series(x, 2, 2.0)
    } else {
        2.0 * one_minus_ln1p_over_x(x) / x
    }
}

/// `m(x) = 1 − g(x)` for `x ≥ 0`: the share of the stored energy that goes into the loop
/// resistance. `m(0) = 0`, `m(∞) = 1`.
#[must_use]
pub fn resistive_share(x: f32) -> f32 {
    if x.is_nan() || x < 0.0 {
        f32::NAN
    } else if x == f32::INFINITY {
        1.0
    } else if x < SERIES_LIMIT {
        x * alternating_series(x, 3, 2.0)
    } else {
        1.0 - clamp_share(x)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;
    use proptest::prelude::*;

    /// f64 references summed from the series to convergence below 0.5 and directly above.
    fn h64(x: f64) -> f64 {
        if x < 0.5 {
            (2..200)
                .map(|k| {
                    let s = if k % 2 == 0 { 1.0 } else { -1.0 };
                    s * x.powi(k - 1) / k as f64
                })
                .sum()
        } else {
            1.0 - x.ln_1p() / x
        }
    }

    #[test]
    fn limits_and_known_values() {
        assert_eq!(one_minus_ln1p_over_x(0.0), 0.0);
        assert_eq!(clamp_share(0.0), 1.0);
        assert_eq!(resistive_share(0.0), 0.0);
        assert_eq!(clamp_share(f32::INFINITY), 0.0);
        assert!(one_minus_ln1p_over_x(-1.0).is_nan());
        // x = 1: 1 − ln 2.
        assert!(isclose(
            x_minus_ln1p(1.0) as f64,
            1.0 - 2f64.ln(),
            1e-6,
            0.0
        ));
        // Continuity across the series limit.
        let below = resistive_share(SERIES_LIMIT * (1.0 - 1e-6)) as f64;
        let above = resistive_share(SERIES_LIMIT) as f64;
        assert!(isclose(below, above, 1e-5, 0.0), "{below} vs {above}");
    }

    #[test]
    fn naive_form_loses_digits_where_this_does_not() {
        // At x = 1e-4 the naive f32 x − ln1p(x) keeps only about three digits; the series
        // keeps them all.
        let x = 1e-4f32;
        let want = x as f64 - (x as f64).ln_1p();
        let naive = (x - libm::log1pf(x)) as f64;
        assert!(!isclose(naive, want, 1e-4, 0.0), "naive {naive} vs {want}");
        assert!(isclose(x_minus_ln1p(x) as f64, want, 1e-6, 0.0));
    }

    proptest! {
        #[test]
        fn match_f64_everywhere(e in -8.0f32..8.0) {
            let x = 10f32.powf(e);
            let xd = x as f64;
            let h = h64(xd);
            let g = 2.0 * h / xd;
            prop_assert!(isclose(one_minus_ln1p_over_x(x) as f64, h, 2e-6, 0.0));
            prop_assert!(isclose(x_minus_ln1p(x) as f64, xd * h, 2e-6, 0.0));
            prop_assert!(isclose(clamp_share(x) as f64, g, 2e-6, 0.0));
            prop_assert!(isclose(resistive_share(x) as f64, 1.0 - g, 2e-6, 0.0));
        }
    }
}
