//! Matrix exponential of a small dense matrix in `f64`, for the exact propagation of the
//! linear systems of the returned-energy routines.
//!
//! `exp(M·t)` by scaling and squaring: `M·t` is divided by `2^s` until its ∞-norm is at most
//! 1/4, the exponential of the scaled matrix is the Taylor series to degree 14 (truncation
//! below `0.25¹⁵/15! ≈ 7·10⁻²³` relative), and the result is squared `s` times. The callers
//! scale their states so that every entry is a rate (1/s), which keeps the norm meaningful.

/// An `N`×`N` matrix, rows first.
pub(crate) type Mat<const N: usize> = [[f64; N]; N];

fn mul<const N: usize>(a: &Mat<N>, b: &Mat<N>) -> Mat<N> {
    let mut c = [[0.0; N]; N];
    for (ci, ai) in c.iter_mut().zip(a) {
        for (j, cij) in ci.iter_mut().enumerate() {
            let mut s = 0.0;
            for (aik, bk) in ai.iter().zip(b) {
                s += aik * bk[j];
            }
            *cij = s;
        }
    }
    c
}

/// `a·x`.
pub(crate) fn mul_vec<const N: usize>(a: &Mat<N>, x: &[f64; N]) -> [f64; N] {
    let mut y = [0.0; N];
    for (yi, ai) in y.iter_mut().zip(a) {
        *yi = ai.iter().zip(x).map(|(p, q)| p * q).sum();
    }
    y
}

/// ∞-norm (largest absolute row sum).
pub(crate) fn norm_inf<const N: usize>(a: &Mat<N>) -> f64 {
    a.iter()
        .map(|row| row.iter().map(|v| libm::fabs(*v)).sum::<f64>())
        .fold(0.0, f64::max)
}

/// `exp(a·t)` (module docs). A non-finite product gives a non-finite result, never a panic.
pub(crate) fn expm<const N: usize>(a: &Mat<N>, t: f64) -> Mat<N> {
    let mut x = *a;
    for v in x.iter_mut().flatten() {
        *v *= t;
    }
    let n = norm_inf(&x);
    let mut squarings = 0u32;
    if n > 0.25 && n.is_finite() {
        // At most ~1100 for any finite norm.
        squarings = libm::ceil(libm::log2(n / 0.25)) as u32;
        let scale = libm::exp2(-f64::from(squarings));
        for v in x.iter_mut().flatten() {
            *v *= scale;
        }
    }
    let mut e = [[0.0; N]; N];
    for (k, row) in e.iter_mut().enumerate() {
        row[k] = 1.0;
    }
    // Horner form: I + X(I + X/2(I + X/3(…))).
    for k in (1..=14u32).rev() {
        let mut xe = mul(&x, &e);
        let inv = 1.0 / f64::from(k);
        for (i, row) in xe.iter_mut().enumerate() {
            for v in row.iter_mut() {
                *v *= inv;
            }
            row[i] += 1.0;
        }
        e = xe;
    }
    for _ in 0..squarings {
        e = mul(&e, &e);
    }
    e
}

/// The orbit `τ ↦ exp(m·τ)·x` of one state for `‖m·τ‖∞ ≤ 1/4`: the same degree-14 Taylor
/// series as [`expm`] applied to the vector, `Σ τᵏ/k!·mᵏx`, with the vectors `mᵏx` computed
/// once, so each point costs 15 vector updates instead of 14 matrix products.
pub(crate) struct Orbit<const N: usize> {
    /// `mᵏ·x` for `k = 0 ..= 14`.
    v: [[f64; N]; 15],
}

impl<const N: usize> Orbit<N> {
    /// The orbit of `x` under `m`.
    pub(crate) fn new(m: &Mat<N>, x: &[f64; N]) -> Self {
        let mut v = [[0.0; N]; 15];
        v[0] = *x;
        for k in 1..15 {
            v[k] = mul_vec(m, &v[k - 1]);
        }
        Self { v }
    }

    /// `exp(m·τ)·x`; the caller keeps `‖m·τ‖∞ ≤ 1/4` (truncation as [`expm`]'s).
    pub(crate) fn at(&self, tau: f64) -> [f64; N] {
        let mut y = self.v[14];
        for k in (1..=14u32).rev() {
            let c = tau / f64::from(k);
            for (yi, lower) in y.iter_mut().zip(&self.v[k as usize - 1]) {
                *yi = lower + c * *yi;
            }
        }
        y
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn orbit_equals_the_exponential_within_a_quarter() {
        // A damped oscillator with an input, scaled so that ‖m‖∞ = 1.
        let m: Mat<3> = [[-0.3, -0.5, 0.2], [0.5, -0.1, 0.0], [0.0, 0.0, 0.0]];
        let x = [0.7, -0.2, 1.0];
        let orbit = Orbit::new(&m, &x);
        for tau in [0.0, 0.01, 0.1, 0.2, 0.25] {
            let want = mul_vec(&expm(&m, tau), &x);
            for (g, w) in orbit.at(tau).iter().zip(&want) {
                assert!(libm::fabs(g - w) < 1e-15, "{tau}: {g} vs {w}");
            }
        }
    }

    #[test]
    fn rotation_and_augmented_step() {
        // exp([[0, -w], [w, 0]] t) is a rotation by w t (closed form).
        let w = 2.0 * core::f64::consts::PI * 1234.0;
        let e = expm(&[[0.0, -w], [w, 0.0]], 3.3e-4);
        let (s, c) = libm::sincos(w * 3.3e-4);
        for (got, want) in [(e[0][0], c), (e[0][1], -s), (e[1][0], s), (e[1][1], c)] {
            assert!(libm::fabs(got - want) < 1e-12, "{got} vs {want}");
        }
        // Augmented first-order step x' = (u - x)/tau from 0: u (1 - e^(-t/tau)).
        let tau = 1.5e-3;
        let e = expm(&[[-1.0 / tau, 12.0 / tau], [0.0, 0.0]], 2.0e-3);
        let want = 12.0 * -libm::expm1(-2.0e-3 / tau);
        assert!(libm::fabs(e[0][1] - want) < 1e-13 * want);
    }
}
