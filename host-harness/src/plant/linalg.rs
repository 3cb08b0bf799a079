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

pub(crate) fn norm_inf<const M: usize>(a: &Mat<M>) -> f64 {
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

/// Degree of the series of [`Orbit`].
const ORBIT_DEGREE: usize = 20;
/// The largest `‖Ã·τ‖∞` (balanced matrix) [`Orbit`] evaluates; beyond it the caller uses
/// [`expm`]. The series' truncation is then below `1/21!·e ≈ 5·10⁻²⁰` of `‖x̃₀‖∞`.
const ORBIT_REACH: f64 = 1.0;

/// The orbit `τ ↦ exp(A·τ)·x₀` of one state under one matrix, for every `τ` of a step, without
/// a matrix exponential per point.
///
/// # Method
///
/// The exponential series is applied to the vector: `exp(Aτ)·x₀ = Σ τᵏ/k!·Aᵏx₀`, with the
/// Krylov vectors `Aᵏx₀` computed once (20 matrix–vector products) and each point evaluated
/// by Horner's rule in `τ` (21 vector updates), where [`expm`] needs some 18 matrix products
/// per point. The series is summed in a diagonally balanced basis, `Ã = D⁻¹AD`, `x̃ = D⁻¹x`,
/// with `D` a diagonal of powers of two (exact, no rounding): the states' rows and columns are
/// balanced by the Parlett–Reinsch iteration (Parlett and Reinsch, "Balancing a matrix for
/// calculation of eigenvalues and eigenvectors", Numer. Math. 13, 1969; the same iteration as
/// LAPACK's `gebal`), and the augmented column of constant inputs (its row is zero) is scaled
/// to the size of the state block. The orbit refuses (`None`) a span `h` with `‖Ã‖∞·h` above
/// [`ORBIT_REACH`]; then the truncation is below `1/21!` of `‖x̃₀‖` and Horner's rule sums
/// decreasing terms.
pub(crate) struct Orbit<const M: usize> {
    /// `D`, the balancing diagonal.
    d: [f64; M],
    /// `Ãᵏ·x̃₀` for `k = 0 ..= ORBIT_DEGREE`.
    v: [[f64; M]; ORBIT_DEGREE + 1],
}

impl<const M: usize> Orbit<M> {
    /// The orbit of `x0` under `a` for `τ` in `0 ..= h`, or `None` when `h` is too long for
    /// the series (module docs) or the numbers are not finite.
    pub(crate) fn new(a: &Mat<M>, x0: &[f64; M], h: f64) -> Option<Self> {
        let (b, d) = balance(a);
        let n = norm_inf(&b);
        if !(n.is_finite() && h.is_finite() && n * h <= ORBIT_REACH) {
            return None;
        }
        let mut v = [[0.0; M]; ORBIT_DEGREE + 1];
        for i in 0..M {
            v[0][i] = x0[i] / d[i];
        }
        for k in 1..=ORBIT_DEGREE {
            v[k] = mul_vec(&b, &v[k - 1]);
        }
        if !v.iter().flatten().all(|x| x.is_finite()) {
            return None;
        }
        Some(Self { d, v })
    }

    /// `exp(A·τ)·x₀` for `τ` in `0 ..= h`.
    pub(crate) fn at(&self, tau: f64) -> [f64; M] {
        let mut y = self.v[ORBIT_DEGREE];
        let mut k = ORBIT_DEGREE;
        while k > 0 {
            let c = tau / k as f64;
            let lower = &self.v[k - 1];
            let mut i = 0;
            while i < M {
                y[i] = lower[i] + c * y[i];
                i += 1;
            }
            k -= 1;
        }
        let mut i = 0;
        while i < M {
            y[i] *= self.d[i];
            i += 1;
        }
        y
    }
}

/// `(D⁻¹AD, D)`: Parlett–Reinsch balancing by powers of two of the rows and columns that
/// couple (see [`Orbit`]), then the columns whose row is zero (constant inputs of an augmented
/// system) scaled so that no entry of theirs exceeds the ∞-norm of the rest.
fn balance<const M: usize>(a: &Mat<M>) -> (Mat<M>, [f64; M]) {
    let mut b = *a;
    let mut d = [1.0; M];
    // A zero row is a constant state (an input): scaling keeps it zero.
    let inputs: [bool; M] = std::array::from_fn(|j| a[j].iter().all(|v| *v == 0.0));
    for _ in 0..64 {
        let mut done = true;
        for i in 0..M {
            if inputs[i] {
                continue;
            }
            let (mut c, mut r) = (0.0, 0.0);
            for j in (0..M).filter(|&j| j != i && !inputs[j]) {
                c += b[j][i].abs();
                r += b[i][j].abs();
            }
            if c == 0.0 || r == 0.0 || !(c + r).is_finite() {
                continue;
            }
            let s = c + r;
            let mut f = 1.0;
            let mut cc = c;
            while cc < r / 2.0 {
                f *= 2.0;
                cc *= 4.0;
            }
            while cc > r * 2.0 {
                f /= 2.0;
                cc /= 4.0;
            }
            if (cc + r) / f < 0.95 * s {
                done = false;
                d[i] *= f;
                for v in b[i].iter_mut() {
                    *v /= f;
                }
                for row in b.iter_mut() {
                    row[i] *= f;
                }
            }
        }
        if done {
            break;
        }
    }
    // Input columns: scale to the size of the state block.
    let mut state = [[0.0; M]; M];
    for i in 0..M {
        for j in (0..M).filter(|&j| !inputs[j]) {
            state[i][j] = b[i][j];
        }
    }
    let target = norm_inf(&state);
    for j in (0..M).filter(|&j| inputs[j]) {
        let biggest = (0..M).map(|i| b[i][j].abs()).fold(0.0, f64::max);
        if biggest == 0.0 || target == 0.0 || !biggest.is_finite() {
            continue;
        }
        let mut f = 1.0;
        while biggest * f > target {
            f /= 2.0;
        }
        while biggest * f * 2.0 <= target {
            f *= 2.0;
        }
        d[j] *= f;
        for row in b.iter_mut() {
            row[j] *= f;
        }
    }
    (b, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The orbit of an augmented system with a stiff input column, against the matrix
    /// exponential of the same system at every point of a step.
    #[test]
    fn orbit_matches_the_exponential_and_refuses_long_spans() {
        // The vent motor's bridge, driven, with the supply's source resistance (invented
        // values): [i, ω, v_b, q, 1].
        let (l, r, k, j, b, c, rs, v) = (2e-3, 1.6, 0.03, 20e-6, 1e-6, 470e-6, 0.05, 12.0);
        let a: Mat<5> = [
            [-r / l, -k / l, 1.0 / l, 0.0, 0.0],
            [k / j, -b / j, 0.0, 0.0, -0.02 / j],
            [-1.0 / c, 0.0, -1.0 / (rs * c), 0.0, v / (rs * c)],
            [1.0, 0.0, 0.0, 0.0, 0.0],
            [0.0; 5],
        ];
        let x0 = [2.5, 120.0, 11.8, 0.0, 1.0];
        let h = 5.6e-6;
        let orbit = Orbit::new(&a, &x0, h).expect("a quarter-rate step is within reach");
        for frac in [0.0, 0.047, 0.25, 0.5, 0.77, 1.0] {
            let want = mul_vec(&expm(&a, frac * h), &x0);
            let got = orbit.at(frac * h);
            for (g, w) in got.iter().zip(&want) {
                assert!(
                    (g - w).abs() <= 1e-13 * (1.0 + w.abs()),
                    "{frac}: {g} vs {w}"
                );
            }
        }
        // Far beyond the fastest rate the series is refused.
        assert!(Orbit::new(&a, &x0, 1e-3).is_none());
    }

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
