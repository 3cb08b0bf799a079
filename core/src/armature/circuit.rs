//! The coil's magnetic circuit with its armature: flux linkage, co-energy and force versus
//! current and gap, with optional saturation.

use super::gap::GapInductance;
use crate::coil::CURRENT_MAX_A;
use crate::error::{Error, finite_result, in_range, non_negative, positive};

/// Largest force accepted as a target, N.
pub const FORCE_MAX_N: f32 = 1.0e6;
/// Smallest saturation flux linkage accepted, V·s.
pub const SATURATION_MIN_VS: f32 = 1.0e-9;
/// Largest saturation flux linkage accepted, V·s.
pub const SATURATION_MAX_VS: f32 = 1.0e4;

/// Largest `u = L·i/λ_sat` the force inversion works up to: a force above `g(U_MAX)` (99.99995 %
/// of the saturated limit) is reported as unreachable.
const U_MAX: f32 = 8.0;
/// Below this `u` the series forms are used (cancellation of the closed forms).
const U_SERIES: f32 = 0.3;

/// `ln cosh u` for `u ≥ 0`, without cancellation or overflow.
fn ln_cosh(u: f32) -> f32 {
    if u < U_SERIES {
        let u2 = u * u;
        // u²/2 − u⁴/12 + u⁶/45 − 17u⁸/2520 + 31u¹⁰/14175 (Taylor series).
        u2 * (0.5
            + u2 * (-1.0 / 12.0 + u2 * (1.0 / 45.0 + u2 * (-17.0 / 2520.0 + u2 * 31.0 / 14175.0))))
    } else {
        u - core::f32::consts::LN_2 + libm::log1pf(libm::expf(-2.0 * u))
    }
}

/// `g(u) = u·tanh u − ln cosh u` for `u ≥ 0`: the co-energy's gap derivative in units of
/// `s·λ_sat²` (see [`MagneticCircuit`]). Rises from `u²/2` to `ln 2`.
fn force_shape(u: f32) -> f32 {
    if u < U_SERIES {
        let u2 = u * u;
        // ∫₀ᵘ t·sech²t dt = u²/2 − u⁴/4 + u⁶/9 − 17u⁸/360 + 62u¹⁰/3150 (Taylor series).
        u2 * (0.5 + u2 * (-0.25 + u2 * (1.0 / 9.0 + u2 * (-17.0 / 360.0 + u2 * 62.0 / 3150.0))))
    } else {
        let e = libm::expf(-2.0 * u);
        core::f32::consts::LN_2 - libm::log1pf(e) - 2.0 * u * e / (1.0 + e)
    }
}

/// `g′(u) = u·sech²u`.
fn force_shape_slope(u: f32) -> f32 {
    let c = libm::coshf(u);
    u / (c * c)
}

/// The coil's magnetic circuit with a movable armature: the gap inductance `L(x)` and an
/// optional saturation of the flux linkage.
///
/// # Model
///
/// Flux linkage versus current `i` and gap `x`:
///
/// - unsaturated: `λ(i, x) = L(x)·i`;
/// - saturating: `λ(i, x) = λ_sat·tanh(L(x)·i/λ_sat)`, so the flux linkage cannot exceed
///   `λ_sat` (the iron's saturation flux times the turns) and is `L(x)·i` at small current.
///   This smooth form is our own modelling choice, picked because its co-energy has a closed
///   form.
///
/// Co-energy `W′(i, x) = ∫₀ⁱ λ(i′, x) di′`: `½·L(x)·i²` unsaturated, `(λ_sat²/L)·ln cosh u` with
/// `u = L(x)·i/λ_sat` saturating.
///
/// Force from the co-energy at constant current, `f = ∂W′/∂x` (A. E. Fitzgerald, C. Kingsley,
/// S. D. Umans, *Electric Machinery*, ch. 3, "Electromechanical energy conversion principles";
/// from memory). With `x` the gap, `f` along `+x` is negative: the armature is pulled closed.
/// This type reports the closing (pull) force `F = −∂W′/∂x ≥ 0`:
///
/// - unsaturated: `F = ½·i²·|dL/dx|`;
/// - saturating: with `s = d(1/L)/dx = |dL/dx|/L²`, `F = s·λ_sat²·g(u)`, `g(u) = u·tanh u −
///   ln cosh u`. `g(u) → u²/2` at small `u` gives back `½·i²·|dL/dx|`; `g(u) → ln 2` bounds
///   the force at `ln 2·s·λ_sat²` however large the current. For the reluctance form `s` is
///   the same at every gap, so a saturated armature pulls with a force independent of the gap,
///   as a saturated flux through a fixed pole area does.
///
/// # Numerics
///
/// `ln cosh u` and `g(u)` are evaluated by their Taylor series below `u = 0.3` and as
/// `u − ln 2 + ln1p(e^(−2u))` and `ln 2 − ln1p(e^(−2u)) − 2u·e^(−2u)/(1 + e^(−2u))` above, so no
/// digits cancel. The inversion [`MagneticCircuit::current_for_force_a`] uses Newton's method
/// safeguarded by the bracket `[√(2q), 8]` on `g(u) = q`. Agreement with an f64 evaluation
/// (property tests in this module): 1e-4 relative for gaps within range, currents up to
/// [`CURRENT_MAX_A`] and forces up to 99 % of the saturated limit.
///
/// # Examples
///
/// ```
/// use lenz::armature::{GapInductance, MagneticCircuit};
/// // CHECKS C5.2: at 2 mm, dL/dx = −16 H/m, so 0.5 A pulls with ½·0.25·16 = 2 N.
/// let m = MagneticCircuit::new(
///     GapInductance::Reluctance { zero_gap_h: 0.2, halving_gap_m: 0.5e-3 },
///     None,
/// )?;
/// assert!((m.pull_force_n(0.5, 2.0e-3)? - 2.0).abs() < 1e-5);
/// assert!((m.current_for_force_a(1.5, 2.0e-3)? - 0.433_013).abs() < 1e-5);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MagneticCircuit {
    gap: GapInductance,
    saturation_vs: Option<f32>,
}

impl MagneticCircuit {
    /// A circuit with the gap inductance `gap` and, if given, saturation flux linkage
    /// `saturation_flux_vs` (V·s).
    ///
    /// # Errors
    ///
    /// The errors of [`GapInductance::validate`]; `saturation_flux_vs` not finite or outside
    /// [`SATURATION_MIN_VS`] ..= [`SATURATION_MAX_VS`].
    pub fn new(gap: GapInductance, saturation_flux_vs: Option<f32>) -> Result<Self, Error> {
        let gap = gap.validate()?;
        if let Some(l) = saturation_flux_vs {
            in_range(
                "saturation_flux_vs",
                positive("saturation_flux_vs", l)?,
                SATURATION_MIN_VS,
                SATURATION_MAX_VS,
            )?;
        }
        Ok(Self {
            gap,
            saturation_vs: saturation_flux_vs,
        })
    }

    /// The gap inductance.
    #[must_use]
    pub const fn gap(&self) -> &GapInductance {
        &self.gap
    }

    /// The saturation flux linkage, V·s (`None`: unsaturated).
    #[must_use]
    pub const fn saturation_flux_vs(&self) -> Option<f32> {
        self.saturation_vs
    }

    /// The same circuit with its inductances scaled by `factor`.
    pub(crate) fn scaled(&self, factor: f32) -> Result<Self, Error> {
        Ok(Self {
            gap: self.gap.scaled(factor)?,
            saturation_vs: self.saturation_vs,
        })
    }

    fn check_current(current_a: f32) -> Result<f32, Error> {
        in_range("current_a", current_a, -CURRENT_MAX_A, CURRENT_MAX_A)
    }

    /// Flux linkage `λ(i, x)`, V·s.
    ///
    /// # Errors
    ///
    /// `current_a` not finite or beyond ±[`CURRENT_MAX_A`]; `gap_m` as
    /// [`GapInductance::inductance_h`].
    pub fn flux_linkage_vs(&self, current_a: f32, gap_m: f32) -> Result<f32, Error> {
        let i = Self::check_current(current_a)?;
        let p = self.gap.at(self.gap.check_gap(gap_m)?);
        let lam = match self.saturation_vs {
            None => p.inductance_h * i,
            Some(ls) => ls * libm::tanhf(p.inductance_h * i / ls),
        };
        finite_result("current_a", lam)
    }

    /// Co-energy `W′(i, x) = ∫₀ⁱ λ di′`, J.
    ///
    /// # Errors
    ///
    /// As [`MagneticCircuit::flux_linkage_vs`].
    pub fn coenergy_j(&self, current_a: f32, gap_m: f32) -> Result<f32, Error> {
        let i = Self::check_current(current_a)?.abs();
        let p = self.gap.at(self.gap.check_gap(gap_m)?);
        let w = match self.saturation_vs {
            None => 0.5 * p.inductance_h * i * i,
            Some(ls) => ls * (ls / p.inductance_h) * ln_cosh(p.inductance_h * i / ls),
        };
        finite_result("current_a", w)
    }

    /// Closing force `F = −∂W′/∂x` at `current_a` and `gap_m`, N (type docs). Even in the
    /// current.
    ///
    /// # Errors
    ///
    /// As [`MagneticCircuit::flux_linkage_vs`]; a force beyond f32 (`current_a`).
    pub fn pull_force_n(&self, current_a: f32, gap_m: f32) -> Result<f32, Error> {
        let i = Self::check_current(current_a)?.abs();
        let p = self.gap.at(self.gap.check_gap(gap_m)?);
        let f = match self.saturation_vs {
            None => 0.5 * p.reluctance_slope * (p.inductance_h * i) * (p.inductance_h * i),
            Some(ls) => p.reluctance_slope * ls * ls * force_shape(p.inductance_h * i / ls),
        };
        finite_result("current_a", f)
    }

    /// The saturated force limit `ln 2·s·λ_sat²` at `gap_m`, N (`None`: unsaturated, no
    /// limit).
    ///
    /// # Errors
    ///
    /// `gap_m` as [`GapInductance::inductance_h`].
    pub fn force_limit_n(&self, gap_m: f32) -> Result<Option<f32>, Error> {
        let p = self.gap.at(self.gap.check_gap(gap_m)?);
        match self.saturation_vs {
            None => Ok(None),
            Some(ls) => Ok(Some(finite_result(
                "saturation_flux_vs",
                core::f32::consts::LN_2 * p.reluctance_slope * ls * ls,
            )?)),
        }
    }

    /// The smallest current that pulls with `force_n` at `gap_m`, A.
    ///
    /// # Errors
    ///
    /// `force_n` not finite, negative or above [`FORCE_MAX_N`]; `gap_m` as
    /// [`GapInductance::inductance_h`]; [`Error::Unreachable`] (`force_n`, with the saturated
    /// force limit) when a saturating circuit cannot pull that hard at this gap; a current
    /// beyond [`CURRENT_MAX_A`] (`force_n` out of range, with the largest force reachable
    /// with that current).
    pub fn current_for_force_a(&self, force_n: f32, gap_m: f32) -> Result<f32, Error> {
        let f = in_range(
            "force_n",
            non_negative("force_n", force_n)?,
            0.0,
            FORCE_MAX_N,
        )?;
        let p = self.gap.at(self.gap.check_gap(gap_m)?);
        let i = match self.saturation_vs {
            None => libm::sqrtf(2.0 * f / p.reluctance_slope) / p.inductance_h,
            Some(ls) => {
                let scale = p.reluctance_slope * ls * ls;
                let q = f / scale;
                if q.is_nan() || q >= force_shape(U_MAX) {
                    return Err(Error::Unreachable {
                        param: "force_n",
                        target: f,
                        limit: finite_result(
                            "saturation_flux_vs",
                            core::f32::consts::LN_2 * scale,
                        )?,
                    });
                }
                solve_force_shape(q) * ls / p.inductance_h
            }
        };
        let i = finite_result("force_n", i)?;
        if i > CURRENT_MAX_A {
            let reachable = self.pull_force_n(CURRENT_MAX_A, gap_m)?;
            return Err(Error::OutOfRange {
                param: "force_n",
                value: f,
                min: 0.0,
                max: reachable,
            });
        }
        Ok(i)
    }
}

/// The `u ≥ 0` with `g(u) = q`, for `0 ≤ q < g(U_MAX)`.
fn solve_force_shape(q: f32) -> f32 {
    if q <= 0.0 {
        return 0.0;
    }
    // g(u) ≤ u²/2, so g(√(2q)) ≤ q: a lower end of the bracket.
    let mut lo = libm::sqrtf(2.0 * q).min(U_MAX);
    let mut hi = U_MAX;
    let mut u = lo;
    for _ in 0..100 {
        let r = force_shape(u) - q;
        if r < 0.0 {
            lo = u;
        } else {
            hi = u;
        }
        let d = force_shape_slope(u);
        let mut next = if d > 0.0 { u - r / d } else { f32::NAN };
        if !(next >= lo && next <= hi) {
            next = 0.5 * (lo + hi);
        }
        if (next - u).abs() <= 2.0 * f32::EPSILON * u || hi - lo <= 2.0 * f32::EPSILON * hi {
            return next;
        }
        u = next;
    }
    u
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::{armature64, isclose};
    use proptest::prelude::*;

    fn reluctance(l0: f32, x0: f32) -> GapInductance {
        GapInductance::Reluctance {
            zero_gap_h: l0,
            halving_gap_m: x0,
        }
    }

    #[test]
    fn series_and_closed_forms_meet() {
        // Both branches against the direct f64 forms just above and below the switch point,
        // where f64 has digits to spare (computed).
        for u in [0.299_999f32, 0.3, 0.300_001, 0.01, 1.0, 3.0] {
            let ud = u as f64;
            let lc = ud.cosh().ln();
            let g = ud * ud.tanh() - lc;
            assert!(isclose(ln_cosh(u) as f64, lc, 2e-6, 0.0), "{u}");
            assert!(isclose(force_shape(u) as f64, g, 2e-6, 0.0), "{u}");
        }
        assert_eq!(force_shape(100.0), core::f32::consts::LN_2);
        assert_eq!(solve_force_shape(0.0), 0.0);
    }

    #[test]
    fn errors_name_the_input() {
        let m = MagneticCircuit::new(reluctance(0.2, 0.5e-3), Some(0.05)).unwrap();
        assert_eq!(
            m.pull_force_n(f32::NAN, 1e-3).unwrap_err().param(),
            "current_a"
        );
        assert_eq!(m.pull_force_n(0.1, -1e-3).unwrap_err().param(), "gap_m");
        assert_eq!(
            m.current_for_force_a(-1.0, 1e-3).unwrap_err().param(),
            "force_n"
        );
        // ln 2 · s · λ² = 0.693 · 1e4 · 0.0025 = 17.3 N is the most it can pull.
        match m.current_for_force_a(20.0, 1e-3) {
            Err(Error::Unreachable { param, limit, .. }) => {
                assert_eq!(param, "force_n");
                assert!(isclose(limit as f64, 2f64.ln() * 1e4 * 0.0025, 1e-5, 0.0));
            }
            other => panic!("{other:?}"),
        }
        assert_eq!(
            MagneticCircuit::new(reluctance(0.2, 0.5e-3), Some(0.0))
                .unwrap_err()
                .param(),
            "saturation_flux_vs"
        );
    }

    proptest! {
        // Documented range: L₀ 1 mH ..= 10 H, x₀ 10 µm ..= 10 mm, gap 0 ..= 20·x₀, λ_sat
        // 1 mV·s ..= 10 V·s (or none), currents up to a few times the saturation current.
        #[test]
        fn force_and_coenergy_match_f64(
            l0 in 1e-3f32..10.0, x0 in 1e-5f32..1e-2, gap_frac in 0.0f32..20.0,
            sat in prop_oneof![Just(None), (1e-3f32..10.0).prop_map(Some)],
            u_target in 1e-3f32..6.0,
        ) {
            let m = MagneticCircuit::new(reluctance(l0, x0), sat).unwrap();
            let gap = gap_frac * x0;
            let l = l0 as f64 / (1.0 + gap as f64 / x0 as f64);
            // A current where L·i/λ_sat = u_target (or a like scale unsaturated).
            let i = (u_target as f64 * sat.unwrap_or(1.0) as f64 / l) as f32;
            prop_assume!(i.abs() <= CURRENT_MAX_A);
            let want_f = armature64::force(l0 as f64, x0 as f64, sat.map(f64::from), i as f64, gap as f64);
            let want_w = armature64::coenergy(l0 as f64, x0 as f64, sat.map(f64::from), i as f64, gap as f64);
            let got_f = m.pull_force_n(i, gap).unwrap() as f64;
            let got_w = m.coenergy_j(i, gap).unwrap() as f64;
            prop_assert!(isclose(got_f, want_f, 1e-4, 0.0), "F {got_f} vs {want_f}");
            prop_assert!(isclose(got_w, want_w, 1e-4, 0.0), "W {got_w} vs {want_w}");
        }

        #[test]
        fn current_for_force_inverts_f64_force(
            l0 in 1e-3f32..10.0, x0 in 1e-5f32..1e-2, gap_frac in 0.0f32..20.0,
            sat in prop_oneof![Just(None), (1e-3f32..10.0).prop_map(Some)],
            frac in 1e-4f32..0.99,
        ) {
            let m = MagneticCircuit::new(reluctance(l0, x0), sat).unwrap();
            let gap = gap_frac * x0;
            // A force at `frac` of the saturated limit (or of an arbitrary scale).
            let s = 1.0 / (l0 as f64 * x0 as f64);
            let scale = s * (sat.unwrap_or(0.1) as f64).powi(2) * 2f64.ln();
            let force = (frac as f64 * scale) as f32;
            prop_assume!(force <= FORCE_MAX_N);
            let want = armature64::current_for_force(l0 as f64, x0 as f64, sat.map(f64::from), force as f64, gap as f64);
            prop_assume!(want <= CURRENT_MAX_A as f64);
            let got = m.current_for_force_a(force, gap).unwrap() as f64;
            prop_assert!(isclose(got, want, 1e-4, 0.0), "{got} vs {want}");
        }
    }
}
