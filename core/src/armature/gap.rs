//! Inductance of the coil versus the air gap of its armature.

use crate::coil::{INDUCTANCE_MAX_H, INDUCTANCE_MIN_H};
use crate::error::{Error, in_range, non_negative, positive};

/// Largest air gap accepted, m.
pub const GAP_MAX_M: f32 = 1.0;
/// Smallest halving gap `x₀` of the reluctance form accepted, m.
pub const HALVING_GAP_MIN_M: f32 = 1.0e-7;
/// Most points of a [`GapTable`].
pub const GAP_TABLE_MAX_POINTS: usize = 16;

/// The unsaturated inductance `L(x)` of the coil at air gap `x`.
///
/// # Forms
///
/// - [`GapInductance::Reluctance`]: `L(x) = L₀ / (1 + x/x₀)`. The magnetic circuit is the iron
///   path in series with the air gap, whose reluctance grows linearly with the gap:
///   `L = N²/(ℛ_iron + x/(μ₀A))`, so `L₀ = N²/ℛ_iron` is the inductance at zero gap and
///   `x₀ = μ₀·A·ℛ_iron` is the gap at which the inductance has halved. Fringing is neglected
///   (magnetic-circuit form of any electromechanics text, e.g. A. E. Fitzgerald, C. Kingsley,
///   S. D. Umans, *Electric Machinery*, ch. 1 and 3; from memory).
/// - [`GapInductance::Table`]: measured points `(x_k, L_k)`, interpolated so that `1/L` (the
///   reluctance over `N²`) is linear in `x` between points: each segment is a reluctance form
///   of its own, and a table sampled from the reluctance form reproduces it exactly.
///
/// The slope `dL/dx` is negative: the inductance grows as the gap closes. Within a table
/// segment `dL/dx = −s·L²` with `s = d(1/L)/dx` constant; at an interior point the segment to
/// the right (larger gap) is used, at the last point the segment to the left.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum GapInductance {
    /// `L(x) = zero_gap_h / (1 + x/halving_gap_m)`.
    Reluctance {
        /// Inductance at zero air gap, `L₀`. Units: H.
        zero_gap_h: f32,
        /// Gap at which the inductance has fallen to half of `L₀`, `x₀`. Units: m.
        halving_gap_m: f32,
    },
    /// Measured points (see [`GapTable`]).
    Table(GapTable),
}

/// Points `(gap_m, inductance_h)` of a measured `L(x)`: gaps ascending from the smallest gap
/// used, inductances strictly decreasing. At most [`GAP_TABLE_MAX_POINTS`] points.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct GapTable {
    len: u8,
    gap_m: [f32; GAP_TABLE_MAX_POINTS],
    inductance_h: [f32; GAP_TABLE_MAX_POINTS],
}

impl GapTable {
    /// A table from `points` `(gap_m, inductance_h)`.
    ///
    /// # Errors
    ///
    /// `gap_table` out of range when there are fewer than 2 or more than
    /// [`GAP_TABLE_MAX_POINTS`] points (the value is the count); a gap that is not finite,
    /// negative, above [`GAP_MAX_M`] or not above the one before (`gap_m`); an inductance not
    /// finite or outside 1 nH ..= 1 kH, or not below the one before (`inductance_h`).
    pub fn new(points: &[(f32, f32)]) -> Result<Self, Error> {
        let n = points.len();
        if !(2..=GAP_TABLE_MAX_POINTS).contains(&n) {
            return Err(Error::OutOfRange {
                param: "gap_table",
                value: n as f32,
                min: 2.0,
                max: GAP_TABLE_MAX_POINTS as f32,
            });
        }
        let mut t = Self {
            len: n as u8,
            gap_m: [0.0; GAP_TABLE_MAX_POINTS],
            inductance_h: [0.0; GAP_TABLE_MAX_POINTS],
        };
        let mut prev: Option<(f32, f32)> = None;
        for ((&(x, l), gx), gl) in points
            .iter()
            .zip(t.gap_m.iter_mut())
            .zip(t.inductance_h.iter_mut())
        {
            in_range("gap_m", non_negative("gap_m", x)?, 0.0, GAP_MAX_M)?;
            in_range(
                "inductance_h",
                positive("inductance_h", l)?,
                INDUCTANCE_MIN_H,
                INDUCTANCE_MAX_H,
            )?;
            if let Some((px, pl)) = prev {
                if x <= px {
                    return Err(Error::OutOfRange {
                        param: "gap_m",
                        value: x,
                        min: px,
                        max: GAP_MAX_M,
                    });
                }
                if l >= pl {
                    return Err(Error::OutOfRange {
                        param: "inductance_h",
                        value: l,
                        min: INDUCTANCE_MIN_H,
                        max: pl,
                    });
                }
            }
            prev = Some((x, l));
            *gx = x;
            *gl = l;
        }
        Ok(t)
    }

    /// Number of points.
    #[must_use]
    pub const fn len(&self) -> usize {
        self.len as usize
    }

    /// Always `false`: a table has at least two points.
    #[must_use]
    pub const fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// The points `(gap_m, inductance_h)`.
    pub fn points(&self) -> impl Iterator<Item = (f32, f32)> + '_ {
        self.gap_m
            .iter()
            .zip(self.inductance_h.iter())
            .take(self.len())
            .map(|(&x, &l)| (x, l))
    }

    /// Smallest and largest gap of the table, m.
    #[must_use]
    pub fn gap_range_m(&self) -> (f32, f32) {
        let last = self.len().saturating_sub(1);
        (
            self.gap_m.first().copied().unwrap_or(0.0),
            self.gap_m.get(last).copied().unwrap_or(0.0),
        )
    }

    /// The segment `(x_k, 1/L_k, s_k)` that holds `gap_m` (module rule for points), where
    /// `1/L = 1/L_k + s_k·(x − x_k)`.
    fn segment(&self, gap_m: f32) -> (f32, f32, f32) {
        let n = self.len();
        let mut k = 0;
        while k + 2 < n && self.gap_m.get(k + 1).is_some_and(|&x| gap_m >= x) {
            k += 1;
        }
        let (x0, x1) = (
            self.gap_m.get(k).copied().unwrap_or(0.0),
            self.gap_m.get(k + 1).copied().unwrap_or(1.0),
        );
        let (l0, l1) = (
            self.inductance_h.get(k).copied().unwrap_or(1.0),
            self.inductance_h.get(k + 1).copied().unwrap_or(1.0),
        );
        let (r0, r1) = (1.0 / l0, 1.0 / l1);
        (x0, r0, (r1 - r0) / (x1 - x0))
    }
}

/// `L(x)` and the reluctance slope `s = d(1/L)/dx` at one gap.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct GapPoint {
    /// `L(x)`, H.
    pub inductance_h: f32,
    /// `s = d(1/L)/dx = −(dL/dx)/L²`, 1/(H·m), positive.
    pub reluctance_slope: f32,
}

impl GapInductance {
    /// Checks the form's constants.
    ///
    /// # Errors
    ///
    /// `zero_gap_h` not finite or outside 1 nH ..= 1 kH; `halving_gap_m` not finite or outside
    /// 0.1 µm ..= 1 m; a table as [`GapTable::new`] (checked again, since a table can also be
    /// deserialized).
    pub fn validate(&self) -> Result<Self, Error> {
        match *self {
            GapInductance::Reluctance {
                zero_gap_h,
                halving_gap_m,
            } => {
                in_range(
                    "zero_gap_h",
                    positive("zero_gap_h", zero_gap_h)?,
                    INDUCTANCE_MIN_H,
                    INDUCTANCE_MAX_H,
                )?;
                in_range(
                    "halving_gap_m",
                    positive("halving_gap_m", halving_gap_m)?,
                    HALVING_GAP_MIN_M,
                    GAP_MAX_M,
                )?;
            }
            GapInductance::Table(t) => {
                let mut points = [(0.0f32, 0.0f32); GAP_TABLE_MAX_POINTS];
                for (p, q) in points.iter_mut().zip(t.points()) {
                    *p = q;
                }
                GapTable::new(points.get(..t.len()).unwrap_or(&[]))?;
            }
        }
        Ok(*self)
    }

    /// The gaps the form is defined for, m: `0 ..= GAP_MAX_M` for the reluctance form, the
    /// table's first to last gap for a table.
    #[must_use]
    pub fn gap_range_m(&self) -> (f32, f32) {
        match self {
            GapInductance::Reluctance { .. } => (0.0, GAP_MAX_M),
            GapInductance::Table(t) => t.gap_range_m(),
        }
    }

    /// Checks the form and that `gap_m` lies in [`GapInductance::gap_range_m`].
    ///
    /// # Errors
    ///
    /// The form's own errors ([`GapInductance::validate`]: the variants are public, so a form
    /// may reach a routine unchecked), then `gap_m` not finite or out of range.
    pub(crate) fn check_gap(&self, gap_m: f32) -> Result<f32, Error> {
        self.validate()?;
        let (lo, hi) = self.gap_range_m();
        in_range("gap_m", gap_m, lo, hi)
    }

    /// `L(x)` and `s` at a gap already checked.
    pub(crate) fn at(&self, gap_m: f32) -> GapPoint {
        match *self {
            GapInductance::Reluctance {
                zero_gap_h,
                halving_gap_m,
            } => GapPoint {
                inductance_h: zero_gap_h / (1.0 + gap_m / halving_gap_m),
                reluctance_slope: 1.0 / (zero_gap_h * halving_gap_m),
            },
            GapInductance::Table(t) => {
                let (x0, r0, s) = t.segment(gap_m);
                GapPoint {
                    inductance_h: 1.0 / (r0 + s * (gap_m - x0)),
                    reluctance_slope: s,
                }
            }
        }
    }

    /// The unsaturated inductance `L(x)` at `gap_m`, H.
    ///
    /// # Errors
    ///
    /// The errors of [`GapInductance::validate`]; `gap_m` not finite or outside
    /// [`GapInductance::gap_range_m`].
    ///
    /// # Examples
    ///
    /// ```
    /// use lenz::armature::GapInductance;
    /// // CHECKS C5.2: L₀ = 0.2 H, x₀ = 0.5 mm; at 2 mm, L = 40 mH and dL/dx = −16 H/m.
    /// let g = GapInductance::Reluctance { zero_gap_h: 0.2, halving_gap_m: 0.5e-3 };
    /// assert!((g.inductance_h(2.0e-3)? - 0.040).abs() < 1e-7);
    /// assert!((g.slope_h_per_m(2.0e-3)? + 16.0).abs() < 1e-4);
    /// # Ok::<(), lenz::Error>(())
    /// ```
    pub fn inductance_h(&self, gap_m: f32) -> Result<f32, Error> {
        let x = self.check_gap(gap_m)?;
        Ok(self.at(x).inductance_h)
    }

    /// The slope `dL/dx` at `gap_m`, H/m (negative: the inductance falls as the gap opens).
    ///
    /// # Errors
    ///
    /// As [`GapInductance::inductance_h`].
    pub fn slope_h_per_m(&self, gap_m: f32) -> Result<f32, Error> {
        let x = self.check_gap(gap_m)?;
        let p = self.at(x);
        Ok(-p.reluctance_slope * p.inductance_h * p.inductance_h)
    }

    /// The same form with every inductance multiplied by `factor` (a part tolerance); the
    /// gap shape is kept.
    ///
    /// # Errors
    ///
    /// A scaled inductance outside 1 nH ..= 1 kH (`zero_gap_h` or `inductance_h`), or `factor`
    /// not finite and positive (`inductance_factor`).
    pub fn scaled(&self, factor: f32) -> Result<Self, Error> {
        positive("inductance_factor", factor)?;
        match *self {
            GapInductance::Reluctance {
                zero_gap_h,
                halving_gap_m,
            } => GapInductance::Reluctance {
                zero_gap_h: zero_gap_h * factor,
                halving_gap_m,
            }
            .validate(),
            GapInductance::Table(t) => {
                let mut points = [(0.0f32, 0.0f32); GAP_TABLE_MAX_POINTS];
                for (p, (x, l)) in points.iter_mut().zip(t.points()) {
                    *p = (x, l * factor);
                }
                let used = points.get(..t.len()).unwrap_or(&[]);
                Ok(GapInductance::Table(GapTable::new(used)?))
            }
        }
    }
}
