//! The last few linear one-state segments' constants of the coil drive, so a PWM hold needs
//! neither a division nor an exponential per segment (see [`DecayCache`]).

/// The last few linear one-state segments' constants: `I_∞ = a/b`, `τ = L/b` and
/// `1 − e^(−t/τ)`, keyed on the exact `(a, b, L)` and on `t` within 10⁻⁹ relative. A PWM hold
/// repeats the same on and off segments every period, so most segments need neither a
/// division nor an exponential. The segment lengths of a PWM period differ in their last bits
/// from period to period (differences of absolute times), so a hit at `t = t₀ + δ` corrects the
/// stored value exactly to second order: `1 − e^(−(x₀+ε)) = E₀ + (1 − E₀)(1 − e^(−ε))` with
/// `ε = δ/τ` and `1 − e^(−ε) = ε(1 − ε/2)` to a relative `ε²/6 < 10⁻¹⁸`; the result is within
/// 2 ulp of a direct evaluation (asserted in the tests).
#[derive(Debug, Clone, Copy)]
pub(super) struct DecayCache {
    /// `[a, b, L, t, I_∞, τ, 1 − e^(−t/τ), b/L]`; NaN keys (never equal) mark an empty entry.
    entries: [[f64; 8]; DECAY_CACHE],
    /// The entry the next miss replaces (round robin).
    next: usize,
}

/// Entries of [`DecayCache`]: the on and off segments of a PWM period, split by a sampling
/// instant.
const DECAY_CACHE: usize = 4;

/// Largest relative difference of segment lengths that a [`DecayCache`] entry serves.
const DECAY_CACHE_REL: f64 = 1e-9;

impl Default for DecayCache {
    fn default() -> Self {
        Self {
            entries: [[f64::NAN; 8]; DECAY_CACHE],
            next: 0,
        }
    }
}

impl DecayCache {
    #[inline]
    pub(super) fn get(&mut self, a: f64, b: f64, l: f64, t: f64) -> (f64, f64, f64) {
        for e in &self.entries {
            let dt = t - e[3];
            if e[0] == a && e[1] == b && e[2] == l && dt.abs() <= DECAY_CACHE_REL * e[3] {
                let eps = dt * e[7];
                let em1 = e[6] + (1.0 - e[6]) * (eps * (1.0 - 0.5 * eps));
                return (e[4], e[5], em1);
            }
        }
        let i_inf = a / b;
        let tau = l / b;
        let em1 = -(-t / tau).exp_m1();
        let k = self.next % DECAY_CACHE;
        self.entries[k] = [a, b, l, t, i_inf, tau, em1, b / l];
        self.next = (k + 1) % DECAY_CACHE;
        (i_inf, tau, em1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The cached and corrected `1 − e^(−t/τ)` against a direct evaluation, within 2 ulp, for
    /// segment lengths that differ from the cached one in their last bits and up to the
    /// 10⁻⁹ relative window (computed cross-check).
    #[test]
    fn decay_cache_matches_a_direct_evaluation() {
        for (l, b) in [(0.120, 32.31), (0.270, 120.0), (10e-6, 0.065), (1.0, 1e-3)] {
            for t0 in [2.5e-6, 20e-6, 27.5e-6, 1e-3, 0.1] {
                let mut c = DecayCache::default();
                let _ = c.get(24.0, b, l, t0);
                for rel in [0.0, 1e-16, -3e-16, 1e-12, -5e-11, 9e-10, -9.99e-10] {
                    let t = t0 * (1.0 + rel);
                    let (i_inf, tau, em1) = c.get(24.0, b, l, t);
                    assert_eq!((i_inf, tau), (24.0 / b, l / b));
                    let want = -(-t / tau).exp_m1();
                    let ulp = f64::EPSILON * want;
                    assert!(
                        (em1 - want).abs() <= 2.0 * ulp,
                        "L {l}, b {b}, t {t}: {em1} vs {want}"
                    );
                }
            }
        }
    }
}
