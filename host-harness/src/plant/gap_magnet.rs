//! The f64 magnetic model of a coil with a moving armature: inductance versus air gap,
//! current from flux linkage, co-energy and pull force.
//!
//! # Model
//!
//! The same physics as the plan side's `lenz::armature`, written again in f64 for the plant:
//!
//! - `L(x)`: reluctance form `L₀/(1 + x/x₀)`, or a table interpolated with `1/L` linear in the
//!   gap between points;
//! - flux linkage `λ(i, x) = L(x)·i`, or `λ_sat·tanh(L(x)·i/λ_sat)` with saturation, so
//!   `i(λ, x) = λ/L(x)` or `λ_sat·atanh(λ/λ_sat)/L(x)`;
//! - pull (closing) force from the co-energy at constant current, `F = −∂W′/∂x`
//!   (A. E. Fitzgerald, C. Kingsley, S. D. Umans, *Electric Machinery*, ch. 3; from memory):
//!   `½·i²·|dL/dx|`, or `s·λ_sat²·(u·tanh u − ln cosh u)` with `u = L·i/λ_sat` and
//!   `s = d(1/L)/dx`;
//! - magnetic stored energy `W = λ·i − W′` (for the energy balance).

use super::{in_range, positive};
use lenz::Error;
use serde::{Deserialize, Serialize};

/// Inductance versus air gap.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub enum GapCurve {
    /// `L(x) = zero_gap_h / (1 + x/halving_gap_m)`.
    Reluctance {
        /// Inductance at zero gap, H.
        zero_gap_h: f64,
        /// Gap at which the inductance has halved, m.
        halving_gap_m: f64,
    },
    /// Points `(gap_m, inductance_h)`, gaps ascending, inductances strictly decreasing;
    /// `1/L` is linear between points.
    Table(Vec<(f64, f64)>),
}

/// A validated gap curve with optional saturation (module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct GapMagnet {
    /// `(x_k, 1/L_k, s_k)` per segment; one segment for the reluctance form.
    segments: Vec<(f64, f64, f64)>,
    gap_range: (f64, f64),
    saturation_vs: Option<f64>,
}

/// Accepted inductances, H (as the coil model's range).
const L_RANGE_H: (f64, f64) = (1e-9, 1e3);

impl GapCurve {
    /// Checks the curve and the saturation flux linkage.
    ///
    /// # Errors
    ///
    /// `zero_gap_h` or a table inductance outside 1 nH ..= 1 kH, `halving_gap_m` not positive
    /// or above 1 m, a table with fewer than two points, gaps not ascending from zero or more
    /// or inductances not strictly decreasing (`gap_table`), `saturation_flux_vs` not
    /// positive.
    pub fn validate(&self, saturation_flux_vs: Option<f64>) -> Result<GapMagnet, Error> {
        let (segments, gap_range) = match self {
            GapCurve::Reluctance {
                zero_gap_h,
                halving_gap_m,
            } => {
                let l0 = in_range(
                    "zero_gap_h",
                    positive("zero_gap_h", *zero_gap_h)?,
                    L_RANGE_H.0,
                    L_RANGE_H.1,
                )?;
                let x0 = in_range(
                    "halving_gap_m",
                    positive("halving_gap_m", *halving_gap_m)?,
                    1e-7,
                    1.0,
                )?;
                (vec![(0.0, 1.0 / l0, 1.0 / (l0 * x0))], (0.0, 1.0))
            }
            GapCurve::Table(points) => {
                let bad = |value: f64| Error::OutOfRange {
                    param: "gap_table",
                    value: value as f32,
                    min: 0.0,
                    max: 1.0,
                };
                if points.len() < 2 {
                    return Err(bad(points.len() as f64));
                }
                let mut segs = Vec::with_capacity(points.len() - 1);
                for w in points.windows(2) {
                    let [(xa, la), (xb, lb)] = [w[0], w[1]];
                    for l in [la, lb] {
                        in_range(
                            "inductance_h",
                            positive("inductance_h", l)?,
                            L_RANGE_H.0,
                            L_RANGE_H.1,
                        )?;
                    }
                    if !(xa >= 0.0 && xb > xa && xb <= 1.0 && lb < la) {
                        return Err(bad(xb));
                    }
                    segs.push((xa, 1.0 / la, (1.0 / lb - 1.0 / la) / (xb - xa)));
                }
                let range = (points[0].0, points[points.len() - 1].0);
                (segs, range)
            }
        };
        if let Some(ls) = saturation_flux_vs {
            in_range(
                "saturation_flux_vs",
                positive("saturation_flux_vs", ls)?,
                1e-9,
                1e4,
            )?;
        }
        Ok(GapMagnet {
            segments,
            gap_range,
            saturation_vs: saturation_flux_vs,
        })
    }
}

impl GapMagnet {
    /// The gaps the curve covers, m.
    #[must_use]
    pub fn gap_range_m(&self) -> (f64, f64) {
        self.gap_range
    }

    /// `(L(x), s = d(1/L)/dx)` at gap `x` (the segment to the right of an interior point).
    #[must_use]
    pub fn at(&self, x: f64) -> (f64, f64) {
        let k = self
            .segments
            .iter()
            .rposition(|s| x >= s.0)
            .unwrap_or(0)
            .min(self.segments.len() - 1);
        let (xk, rk, s) = self.segments[k];
        (1.0 / (rk + s * (x - xk)), s)
    }

    /// The same curve with every inductance multiplied by `factor` (shorted turns); the
    /// saturation flux linkage is kept.
    #[must_use]
    pub fn scaled(&self, factor: f64) -> GapMagnet {
        GapMagnet {
            segments: self
                .segments
                .iter()
                .map(|&(x, r, s)| (x, r / factor, s / factor))
                .collect(),
            gap_range: self.gap_range,
            saturation_vs: self.saturation_vs,
        }
    }

    /// `L(x)`, H.
    #[must_use]
    pub fn inductance_h(&self, x: f64) -> f64 {
        self.at(x).0
    }

    /// Current from flux linkage at gap `x`, A (NaN when `|λ| ≥ λ_sat`: no current carries
    /// that flux).
    #[must_use]
    pub fn current(&self, lam: f64, x: f64) -> f64 {
        let l = self.inductance_h(x);
        match self.saturation_vs {
            None => lam / l,
            Some(ls) => ls * (lam / ls).atanh() / l,
        }
    }

    /// Flux linkage at current `i` and gap `x`, V·s.
    #[must_use]
    pub fn flux(&self, i: f64, x: f64) -> f64 {
        let l = self.inductance_h(x);
        match self.saturation_vs {
            None => l * i,
            Some(ls) => ls * (l * i / ls).tanh(),
        }
    }

    /// Pull (closing) force at current `i` and gap `x`, N.
    #[must_use]
    pub fn pull_n(&self, i: f64, x: f64) -> f64 {
        let (l, s) = self.at(x);
        match self.saturation_vs {
            None => 0.5 * s * (l * i) * (l * i),
            Some(ls) => {
                let u = (l * i / ls).abs();
                let g = if u < 0.05 {
                    let u2 = u * u;
                    u2 * (0.5 + u2 * (-0.25 + u2 * (1.0 / 9.0 - u2 * 17.0 / 360.0)))
                } else {
                    let e = (-2.0 * u).exp();
                    std::f64::consts::LN_2 - e.ln_1p() - 2.0 * u * e / (1.0 + e)
                };
                s * ls * ls * g
            }
        }
    }

    /// Co-energy `W′(i, x)`, J.
    #[must_use]
    pub fn coenergy_j(&self, i: f64, x: f64) -> f64 {
        let l = self.inductance_h(x);
        match self.saturation_vs {
            None => 0.5 * l * i * i,
            Some(ls) => {
                let u = (l * i / ls).abs();
                let lc = u - std::f64::consts::LN_2 + (-2.0 * u).exp().ln_1p();
                ls * ls / l * lc
            }
        }
    }

    /// Magnetic energy stored at flux linkage `λ` and gap `x`, `λ·i − W′`, J.
    #[must_use]
    pub fn stored_j(&self, lam: f64, x: f64) -> f64 {
        let i = self.current(lam, x);
        lam * i - self.coenergy_j(i, x)
    }
}
