//! Small dense matrices for the exact propagation of linear segments.
//!
//! # Matrix exponential
//!
//! A linear segment `ẋ = A x + b` with constant `A` and `b` is written as the augmented system
//! `d/dt [x; 1] = [[A, b], [0, 0]] [x; 1]`, so one exponential `exp(M t)` of the augmented
//! `M` gives `x(t) = e^(At) x₀ + ∫₀ᵗ e^(As) ds · b` without inverting `A` (which is singular for
//! a capacitor with no load, for example).
//!
//! `exp(M t)` is computed by scaling and squaring: `M t` is divided by `2^s` until its ∞-norm is
//! at most 1/4, the exponential of the scaled matrix is the Taylor series to degree 14
//! (truncation error below `0.25¹⁵/15! ≈ 7·10⁻²³` relative), and the result is squared `s`
//! times. For the 3×3 systems used here this is accurate to a few ulp of the largest entry
//! (checked against closed forms in the tests below and in the plant tests).

/// An `M`×`M` matrix, rows first.
pub(crate) type Mat<const M: usize> = [[f64; M]; M];

pub(crate) fn identity<const M: usize>() -> Mat<M> {
    let mut m = [[0.0; M]; M];
    for (k, row) in m.iter_mut().enumerate() {
        row[k] = 1.0;
    }
    m
}

pub(crate) fn mul<const M: usize>(a: &Mat<M>, b: &Mat<M>) -> Mat<M> {
    let mut c = [[0.0; M]; M];
    for (i, row) in c.iter_mut().enumerate() {
        for (j, cij) in row.iter_mut().enumerate() {
            let mut s = 0.0;
            for k in 0..M {
                s += a[i][k] * b[k][j];
            }
            *cij = s;
        }
    }
    c
}

pub(crate) fn mul_vec<const M: usize>(a: &Mat<M>, x: &[f64; M]) -> [f64; M] {
    let mut y = [0.0; M];
    for (i, yi) in y.iter_mut().enumerate() {
        let mut s = 0.0;
        for k in 0..M {
            s += a[i][k] * x[k];
        }
        *yi = s;
    }
    y
}

fn norm_inf<const M: usize>(a: &Mat<M>) -> f64 {
    a.iter()
        .map(|row| row.iter().map(|v| v.abs()).sum::<f64>())
        .fold(0.0, f64::max)
}

/// `exp(a·t)` by scaling and squaring with a degree-14 Taylor polynomial (module docs).
pub(crate) fn expm<const M: usize>(a: &Mat<M>, t: f64) -> Mat<M> {
    let mut x = *a;
    for row in x.iter_mut() {
        for v in row.iter_mut() {
            *v *= t;
        }
    }
    let n = norm_inf(&x);
    let mut squarings = 0u32;
    if n > 0.25 && n.is_finite() {
        squarings = (n / 0.25).log2().ceil() as u32;
        let scale = 0.5f64.powi(squarings as i32);
        for row in x.iter_mut() {
            for v in row.iter_mut() {
                *v *= scale;
            }
        }
    }
    // Horner form of the Taylor series: I + X(I + X/2(I + X/3(…))).
    let mut e = identity::<M>();
    for k in (1..=14).rev() {
        let mut xe = mul(&x, &e);
        let inv = 1.0 / k as f64;
        for row in xe.iter_mut() {
            for v in row.iter_mut() {
                *v *= inv;
            }
        }
        for (i, row) in xe.iter_mut().enumerate() {
            row[i] += 1.0;
        }
        e = xe;
    }
    for _ in 0..squarings {
        e = mul(&e, &e);
    }
    e
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponential_of_a_rotation_and_a_decay() {
        // exp([[0, -w], [w, 0]] t) is a rotation by w t (closed form).
        let w = 2.0 * std::f64::consts::PI * 46_000.0;
        let a: Mat<2> = [[0.0, -w], [w, 0.0]];
        let t = 3.3e-5;
        let e = expm(&a, t);
        let (s, c) = (w * t).sin_cos();
        for (got, want) in [(e[0][0], c), (e[0][1], -s), (e[1][0], s), (e[1][1], c)] {
            assert!((got - want).abs() < 1e-13, "{got} vs {want}");
        }
        // Augmented first-order step: x' = -x/tau + u/tau from 0 gives u(1 - e^(-t/tau)).
        let tau = 3.75e-3;
        let aug: Mat<2> = [[-1.0 / tau, 24.0 / tau], [0.0, 0.0]];
        let e = expm(&aug, 2.0e-3);
        let want = 24.0 * -(-2.0e-3f64 / tau).exp_m1();
        assert!((e[0][1] - want).abs() < 1e-13 * want);
    }
}
