//! Worst-case pull-in and hold currents over the armature's tolerances.

use super::currents::Armature;
use super::mechanics::Mechanics;
use crate::bounds::{Bound, Range, worst_case};
use crate::error::{Error, in_range};

/// One corner of an armature evaluation.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct ArmatureCorner {
    /// Factor on every inductance of the magnet (1 = nominal).
    pub inductance_factor: f32,
    /// Gap at the open stop, m.
    pub open_gap_m: f32,
    /// Spring force at the open stop, N.
    pub spring_preload_n: f32,
    /// Spring rate, N/m.
    pub spring_rate_n_per_m: f32,
    /// Load force, N.
    pub load_n: f32,
}

/// An armature with its tolerances: the magnet's inductance (a relative tolerance on every
/// inductance, the gap shape kept), the open gap (stroke tolerance), the spring preload and
/// rate, and the load. The closed (residual) gap is the nominal one.
///
/// The bounds come from [`crate::bounds::worst_case`] (corners plus interior extrema). The
/// pull-in current is largest at the low inductance, the large open gap, the strong spring
/// and the heavy load; the firmware's pull-in current must exceed its `max`.
///
/// # Examples
///
/// ```
/// use lenz::Range;
/// use lenz::armature::{Armature, ArmatureSpread, GapInductance, MagneticCircuit, Mechanics};
/// // Demo valve plunger (invented): L₀ 0.36 H, x₀ 0.6 mm, stroke 1.2 mm ±0.05 mm.
/// let magnet = MagneticCircuit::new(
///     GapInductance::Reluctance { zero_gap_h: 0.36, halving_gap_m: 0.6e-3 },
///     None,
/// )?;
/// let mech = Mechanics {
///     open_gap_m: 1.2e-3, closed_gap_m: 0.05e-3,
///     spring_preload_n: 5.0, spring_rate_n_per_m: 1000.0, load_n: 1.5,
/// };
/// let spread = ArmatureSpread::new(
///     Armature::new(magnet, mech)?,
///     0.10,
///     Range::new("open_gap_m", 1.15e-3, 1.25e-3)?,
///     Range::tolerance("spring_preload_n", 5.0, 0.1)?,
///     Range::tolerance("spring_rate_n_per_m", 1000.0, 0.1)?,
///     Range::new("load_n", 0.0, 1.5)?,
/// )?;
/// let pull = spread.pull_in_current_a()?;
/// assert_eq!(pull.max_at.open_gap_m, 1.25e-3);
/// assert_eq!(pull.max_at.load_n, 1.5);
/// assert!(pull.max > 0.44 && pull.max < 0.5);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct ArmatureSpread {
    /// The nominal armature.
    pub armature: Armature,
    /// Factor on every inductance, `1 − tol ..= 1 + tol`.
    pub inductance_factor: Range,
    /// Gap at the open stop, m.
    pub open_gap_m: Range,
    /// Spring force at the open stop, N.
    pub spring_preload_n: Range,
    /// Spring rate, N/m.
    pub spring_rate_n_per_m: Range,
    /// Load force, N.
    pub load_n: Range,
}

impl ArmatureSpread {
    /// A spread around `armature`.
    ///
    /// # Errors
    ///
    /// `inductance_tol` outside `0 ..= 0.99` (`rel_tol`); any corner that is not a valid
    /// armature (its first error, for example an open gap at or below the closed gap).
    pub fn new(
        armature: Armature,
        inductance_tol: f32,
        open_gap_m: Range,
        spring_preload_n: Range,
        spring_rate_n_per_m: Range,
        load_n: Range,
    ) -> Result<Self, Error> {
        in_range("rel_tol", inductance_tol, 0.0, 0.99)?;
        let s = Self {
            armature,
            inductance_factor: Range::tolerance("inductance_factor", 1.0, inductance_tol)?,
            open_gap_m,
            spring_preload_n,
            spring_rate_n_per_m,
            load_n,
        };
        // Every corner must be an armature; the figures then only meet interior points.
        for lo_hi in 0..32u32 {
            let pick = |bit: u32, r: &Range| {
                if lo_hi & (1 << bit) == 0 {
                    r.min()
                } else {
                    r.max()
                }
            };
            s.at(&[
                pick(0, &s.inductance_factor),
                pick(1, &s.open_gap_m),
                pick(2, &s.spring_preload_n),
                pick(3, &s.spring_rate_n_per_m),
                pick(4, &s.load_n),
            ])?;
        }
        Ok(s)
    }

    fn ranges(&self) -> [Range; 5] {
        [
            self.inductance_factor,
            self.open_gap_m,
            self.spring_preload_n,
            self.spring_rate_n_per_m,
            self.load_n,
        ]
    }

    fn at(&self, p: &[f32; 5]) -> Result<Armature, Error> {
        let [factor, open, preload, rate, load] = *p;
        self.armature.variant(
            factor,
            Mechanics {
                open_gap_m: open,
                spring_preload_n: preload,
                spring_rate_n_per_m: rate,
                load_n: load,
                ..*self.armature.mechanics()
            },
        )
    }

    /// Bounds of any armature figure over the spread.
    ///
    /// # Errors
    ///
    /// The first error of `f` or of building the armature at any evaluated point.
    pub fn figure<F>(&self, f: F) -> Result<Bound<ArmatureCorner>, Error>
    where
        F: Fn(&Armature) -> Result<f32, Error>,
    {
        let b = worst_case(&self.ranges(), |p| f(&self.at(p)?))?;
        Ok(b.map_corner(|p| ArmatureCorner {
            inductance_factor: p[0],
            open_gap_m: p[1],
            spring_preload_n: p[2],
            spring_rate_n_per_m: p[3],
            load_n: p[4],
        }))
    }

    /// Minimum pull-in current over the spread, A: the firmware's pull-in current must
    /// exceed `max`.
    ///
    /// # Errors
    ///
    /// As [`Armature::pull_in_current`] at any evaluated point.
    pub fn pull_in_current_a(&self) -> Result<Bound<ArmatureCorner>, Error> {
        self.figure(Armature::pull_in_current_a)
    }

    /// Must-hold current over the spread, A: the firmware's hold current must exceed `max`;
    /// the armature drops out below `min` at the latest.
    ///
    /// # Errors
    ///
    /// As [`Armature::hold_current_a`] at any evaluated point.
    pub fn hold_current_a(&self) -> Result<Bound<ArmatureCorner>, Error> {
        self.figure(Armature::hold_current_a)
    }
}
