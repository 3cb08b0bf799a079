//! Saturating inductance in flux-linkage form.
//!
//! # Model
//!
//! The coil's state is its flux linkage `λ` (V·s); Faraday's law `dλ/dt = v_L` holds whatever
//! the core does, so integrating `λ` keeps energy and volt-seconds exact through saturation.
//! The current follows from the magnetisation curve `λ(i)`, built from the incremental
//! inductance `L_d(i) = dλ/di`, which is even in `i` (the curve is odd):
//!
//! - [`InductanceCurve::Linear`]: `L_d = L`, `λ = L i`.
//! - [`InductanceCurve::Knee`]: `L_d(i) = L_res + (L₀ − L_res)/(1 + (i/I_k)²)`, unsaturated
//!   `L₀` well below the knee current `I_k`, residual `L_res` far above it; integrated,
//!   `λ(i) = L_res i + (L₀ − L_res) I_k atan(i/I_k)`.
//! - [`InductanceCurve::Table`]: `L_d` linear between given points `(i_k, L_k)` starting at
//!   `i = 0`, constant beyond the last point; `λ` is then piecewise quadratic.
//!
//! Since `L_d ≥ L_min > 0`, `λ(i)` is strictly increasing and its inverse `i(λ)` is unique:
//! for the knee curve by Newton's method safeguarded with the bracket
//! `[λ/L_max, λ/L_min]`; for the table by finding the segment and solving its quadratic.
//! The co-energy bookkeeping is not needed: the plant counts energy through `∫ v i dt`.

use lenz::Error;

/// The magnetisation curve of a coil (module docs).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum InductanceCurve {
    /// Constant inductance, H.
    Linear {
        /// Inductance, H.
        l_h: f64,
    },
    /// Smooth knee: unsaturated `l0_h`, knee current `knee_a`, residual `l_res_h`.
    Knee {
        /// Unsaturated incremental inductance, H.
        l0_h: f64,
        /// Knee current, A: the incremental inductance is halfway between `l0_h` and
        /// `l_res_h` there.
        knee_a: f64,
        /// Residual (fully saturated) incremental inductance, H.
        l_res_h: f64,
    },
    /// Piecewise-linear incremental inductance: points `(current_a, inductance_h)` with
    /// currents ascending from 0.
    Table(Vec<(f64, f64)>),
}

/// Accepted inductances, H, and knee currents, A (as the `lenz` coil model's ranges).
const L_RANGE_H: (f64, f64) = (1e-9, 1e3);
const KNEE_RANGE_A: (f64, f64) = (1e-6, 1e5);

fn pos(param: &'static str, v: f64) -> Result<f64, Error> {
    let (lo, hi) = if param == "knee_a" {
        KNEE_RANGE_A
    } else {
        L_RANGE_H
    };
    super::in_range(param, super::positive(param, v)?, lo, hi)
}

/// A validated magnetisation curve with precomputed flux at the table points.
#[derive(Debug, Clone, PartialEq)]
pub struct Magnetisation {
    curve: InductanceCurve,
    /// Table: flux linkage at each point, V·s.
    table_flux: Vec<f64>,
    l_min: f64,
    l_max: f64,
}

impl InductanceCurve {
    /// Checks the curve.
    ///
    /// # Errors
    ///
    /// An inductance or knee current not finite, not positive or outside 1 nH ..= 1 kH
    /// (1 µA ..= 100 kA) (`inductance_h`, `knee_a`, `l_res_h`), a residual above the unsaturated inductance, or a table that is empty, does
    /// not start at 0 A or whose currents do not ascend (`inductance_table`).
    pub fn validate(&self) -> Result<Magnetisation, Error> {
        let (l_min, l_max, table_flux) = match self {
            InductanceCurve::Linear { l_h } => {
                let l = pos("inductance_h", *l_h)?;
                (l, l, Vec::new())
            }
            InductanceCurve::Knee {
                l0_h,
                knee_a,
                l_res_h,
            } => {
                let l0 = pos("inductance_h", *l0_h)?;
                pos("knee_a", *knee_a)?;
                let lr = pos("l_res_h", *l_res_h)?;
                if lr > l0 {
                    return Err(Error::OutOfRange {
                        param: "l_res_h",
                        value: lr as f32,
                        min: 0.0,
                        max: l0 as f32,
                    });
                }
                (lr, l0, Vec::new())
            }
            InductanceCurve::Table(pts) => {
                let bad = Error::OutOfRange {
                    param: "inductance_table",
                    value: pts.len() as f32,
                    min: 1.0,
                    max: f32::MAX,
                };
                let first = pts.first().ok_or(bad)?;
                if first.0 != 0.0 {
                    return Err(bad);
                }
                let mut flux = Vec::with_capacity(pts.len());
                let mut lam = 0.0;
                let (mut lo, mut hi) = (f64::INFINITY, 0.0f64);
                for (k, &(i, l)) in pts.iter().enumerate() {
                    pos("inductance_h", l)?;
                    if !i.is_finite() {
                        return Err(Error::NotFinite {
                            param: "inductance_table",
                        });
                    }
                    if k > 0 {
                        let (ip, lp) = pts[k - 1];
                        if i <= ip {
                            return Err(bad);
                        }
                        lam += 0.5 * (l + lp) * (i - ip);
                    }
                    flux.push(lam);
                    lo = lo.min(l);
                    hi = hi.max(l);
                }
                (lo, hi, flux)
            }
        };
        Ok(Magnetisation {
            curve: self.clone(),
            table_flux,
            l_min,
            l_max,
        })
    }
}

impl Magnetisation {
    /// The curve this was built from.
    #[must_use]
    pub fn curve(&self) -> &InductanceCurve {
        &self.curve
    }

    /// `Some(L)` for a constant inductance (linear segments are then propagated exactly).
    #[must_use]
    pub fn linear_h(&self) -> Option<f64> {
        match self.curve {
            InductanceCurve::Linear { l_h } => Some(l_h),
            _ => None,
        }
    }

    /// Incremental inductance `dλ/di` at `i`, H.
    #[must_use]
    pub fn incremental_h(&self, i: f64) -> f64 {
        let a = i.abs();
        match &self.curve {
            InductanceCurve::Linear { l_h } => *l_h,
            InductanceCurve::Knee {
                l0_h,
                knee_a,
                l_res_h,
            } => {
                let x = a / knee_a;
                l_res_h + (l0_h - l_res_h) / (1.0 + x * x)
            }
            InductanceCurve::Table(pts) => {
                let k = pts.partition_point(|p| p.0 <= a);
                match (pts.get(k.wrapping_sub(1)), pts.get(k)) {
                    (Some(&(i0, l0)), Some(&(i1, l1))) => l0 + (l1 - l0) * (a - i0) / (i1 - i0),
                    (Some(&(_, l)), None) => l,
                    _ => self.l_max,
                }
            }
        }
    }

    /// Flux linkage at current `i`, V·s.
    #[must_use]
    pub fn flux(&self, i: f64) -> f64 {
        let a = i.abs();
        let lam = match &self.curve {
            InductanceCurve::Linear { l_h } => l_h * a,
            InductanceCurve::Knee {
                l0_h,
                knee_a,
                l_res_h,
            } => l_res_h * a + (l0_h - l_res_h) * knee_a * (a / knee_a).atan(),
            InductanceCurve::Table(pts) => {
                let k = pts.partition_point(|p| p.0 <= a).max(1) - 1;
                let (i0, l0) = pts[k];
                let lam0 = self.table_flux[k];
                let slope = match pts.get(k + 1) {
                    Some(&(i1, l1)) => (l1 - l0) / (i1 - i0),
                    None => 0.0,
                };
                let d = a - i0;
                lam0 + l0 * d + 0.5 * slope * d * d
            }
        };
        lam.copysign(i)
    }

    /// Current at flux linkage `lam` (inverse of [`Magnetisation::flux`]), A.
    #[must_use]
    #[inline]
    pub fn current(&self, lam: f64) -> f64 {
        // The linear case is on every probe of the plant: kept inline, the rest out of line.
        if let InductanceCurve::Linear { l_h } = self.curve {
            return (lam.abs() / l_h).copysign(lam);
        }
        self.current_nonlinear(lam)
    }

    /// [`Magnetisation::current`] of a saturating curve.
    #[inline(never)]
    fn current_nonlinear(&self, lam: f64) -> f64 {
        let a = lam.abs();
        let i = match &self.curve {
            InductanceCurve::Linear { l_h } => a / l_h,
            InductanceCurve::Knee { .. } => {
                // Safeguarded Newton: λ(i) is increasing with slope in [L_min, L_max].
                let (mut lo, mut hi) = (a / self.l_max, a / self.l_min);
                let mut i = lo;
                for _ in 0..60 {
                    let r = self.flux(i) - a;
                    if r > 0.0 {
                        hi = i;
                    } else {
                        lo = i;
                    }
                    let mut next = i - r / self.incremental_h(i);
                    if !(next > lo && next < hi) {
                        next = 0.5 * (lo + hi);
                    }
                    if (next - i).abs() <= 1e-15 * next.abs() {
                        i = next;
                        break;
                    }
                    i = next;
                }
                i
            }
            InductanceCurve::Table(pts) => {
                let k = self.table_flux.partition_point(|&f| f <= a).max(1) - 1;
                let (i0, l0) = pts[k];
                let d_lam = a - self.table_flux[k];
                let slope = match pts.get(k + 1) {
                    Some(&(i1, l1)) => (l1 - l0) / (i1 - i0),
                    None => 0.0,
                };
                // 0.5 s d² + l0 d − Δλ = 0, stable root form.
                let disc = (l0 * l0 + 2.0 * slope * d_lam).max(0.0);
                i0 + 2.0 * d_lam / (l0 + disc.sqrt())
            }
        };
        i.copysign(lam)
    }

    /// Scales the curve's inductances by `k` (shorted turns, a shorted coil).
    #[must_use]
    pub fn scaled(&self, k: f64) -> Magnetisation {
        let curve = match &self.curve {
            InductanceCurve::Linear { l_h } => InductanceCurve::Linear { l_h: l_h * k },
            InductanceCurve::Knee {
                l0_h,
                knee_a,
                l_res_h,
            } => InductanceCurve::Knee {
                l0_h: l0_h * k,
                knee_a: *knee_a,
                l_res_h: l_res_h * k,
            },
            InductanceCurve::Table(pts) => {
                InductanceCurve::Table(pts.iter().map(|&(i, l)| (i, l * k)).collect())
            }
        };
        Magnetisation {
            table_flux: self.table_flux.iter().map(|f| f * k).collect(),
            l_min: self.l_min * k,
            l_max: self.l_max * k,
            curve,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_and_derivative_agree() {
        let curves = [
            InductanceCurve::Knee {
                l0_h: 0.12,
                knee_a: 0.6,
                l_res_h: 0.02,
            },
            InductanceCurve::Table(vec![(0.0, 0.12), (0.5, 0.11), (1.0, 0.05), (2.0, 0.02)]),
        ];
        for c in curves {
            let m = c.validate().unwrap();
            for k in -40..=40 {
                let i = k as f64 * 0.07;
                let lam = m.flux(i);
                assert!((m.current(lam) - i).abs() <= 1e-12, "{c:?} at {i}");
                // Central difference of the flux against the incremental inductance.
                let h = 1e-6;
                let d = (m.flux(i + h) - m.flux(i - h)) / (2.0 * h);
                assert!((d - m.incremental_h(i)).abs() < 1e-6, "{c:?} at {i}");
            }
        }
    }

    #[test]
    fn rejects_bad_curves() {
        let bad = InductanceCurve::Knee {
            l0_h: 0.1,
            knee_a: 1.0,
            l_res_h: 0.2,
        };
        assert_eq!(bad.validate().unwrap_err().param(), "l_res_h");
        let bad = InductanceCurve::Table(vec![(0.1, 0.1)]);
        assert_eq!(bad.validate().unwrap_err().param(), "inductance_table");
        let bad = InductanceCurve::Linear { l_h: f64::NAN };
        assert_eq!(bad.validate().unwrap_err().param(), "inductance_h");
    }
}
