//! The armature's travel, return spring and load.

use super::circuit::FORCE_MAX_N;
use super::gap::GAP_MAX_M;
use crate::error::{Error, in_range, non_negative, positive};

/// Largest spring rate accepted, N/m.
pub const SPRING_RATE_MAX_N_PER_M: f32 = 1.0e8;

/// The mechanics that oppose the magnet: the travel between the stops, a return spring and a
/// constant load.
///
/// Sign convention: the gap `x` is the air gap of the magnetic circuit, largest at the open
/// stop (`open_gap_m`) and smallest, possibly zero, at the closed stop (`closed_gap_m`, the
/// residual gap of a seated armature). The spring and the load push the armature open; the
/// magnet pulls it closed. The spring force at gap `x` is
/// `spring_preload_n + spring_rate_n_per_m·(open_gap_m − x)` (it is compressed further as the
/// armature closes); the load is the same at every gap (a fluid pressure on a valve seat, the
/// contact springs of a relay lumped as a constant, the weight of a plunger that lifts).
///
/// # Examples
///
/// ```
/// use lenz::armature::Mechanics;
/// // Demo valve plunger (invented): 1.2 mm stroke to a 0.05 mm residual gap, 5 N preload,
/// // 1 kN/m, 1.5 N of water pressure on the seat.
/// let m = Mechanics {
///     open_gap_m: 1.2e-3, closed_gap_m: 0.05e-3,
///     spring_preload_n: 5.0, spring_rate_n_per_m: 1000.0, load_n: 1.5,
/// }.validate()?;
/// assert!((m.opening_force_n(0.05e-3)? - 7.65).abs() < 1e-5);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Mechanics {
    /// Air gap with the armature at the open stop. Units: m.
    pub open_gap_m: f32,
    /// Air gap with the armature seated at the closed stop (residual gap). Units: m.
    pub closed_gap_m: f32,
    /// Spring force at the open stop, pushing open. Units: N.
    pub spring_preload_n: f32,
    /// Spring rate: the spring force grows by this much per metre of closing. Units: N/m.
    pub spring_rate_n_per_m: f32,
    /// Constant load force pushing open (opposing closing). Units: N.
    pub load_n: f32,
}

impl Mechanics {
    /// Checks every field.
    ///
    /// # Errors
    ///
    /// `open_gap_m` not finite, not positive or above [`GAP_MAX_M`]; `closed_gap_m` not
    /// finite, negative or not below `open_gap_m`; `spring_preload_n` or `load_n` not finite,
    /// negative or above [`FORCE_MAX_N`]; both zero (`spring_preload_n` not positive: nothing
    /// holds the armature open); `spring_rate_n_per_m` not finite, negative, above
    /// [`SPRING_RATE_MAX_N_PER_M`] or so large that the force at the closed stop exceeds
    /// [`FORCE_MAX_N`].
    pub fn validate(&self) -> Result<Self, Error> {
        let open = in_range(
            "open_gap_m",
            positive("open_gap_m", self.open_gap_m)?,
            0.0,
            GAP_MAX_M,
        )?;
        let closed = non_negative("closed_gap_m", self.closed_gap_m)?;
        if closed >= open {
            return Err(Error::OutOfRange {
                param: "closed_gap_m",
                value: closed,
                min: 0.0,
                max: open,
            });
        }
        let preload = in_range(
            "spring_preload_n",
            non_negative("spring_preload_n", self.spring_preload_n)?,
            0.0,
            FORCE_MAX_N,
        )?;
        let load = in_range(
            "load_n",
            non_negative("load_n", self.load_n)?,
            0.0,
            FORCE_MAX_N,
        )?;
        if preload + load <= 0.0 {
            return Err(Error::NotPositive {
                param: "spring_preload_n",
            });
        }
        let rate = in_range(
            "spring_rate_n_per_m",
            non_negative("spring_rate_n_per_m", self.spring_rate_n_per_m)?,
            0.0,
            SPRING_RATE_MAX_N_PER_M,
        )?;
        let at_closed = preload + rate * (open - closed) + load;
        if at_closed > FORCE_MAX_N {
            return Err(Error::OutOfRange {
                param: "spring_rate_n_per_m",
                value: rate,
                min: 0.0,
                max: (FORCE_MAX_N - preload - load) / (open - closed),
            });
        }
        Ok(*self)
    }

    /// Travel between the stops, `open_gap_m − closed_gap_m`, m.
    #[must_use]
    pub fn travel_m(&self) -> f32 {
        self.open_gap_m - self.closed_gap_m
    }

    /// Spring plus load force pushing open at `gap_m`, N.
    ///
    /// # Errors
    ///
    /// The errors of [`Mechanics::validate`]; `gap_m` not finite or outside
    /// `closed_gap_m ..= open_gap_m`.
    pub fn opening_force_n(&self, gap_m: f32) -> Result<f32, Error> {
        self.validate()?;
        let x = in_range("gap_m", gap_m, self.closed_gap_m, self.open_gap_m)?;
        Ok(self.force_at(x))
    }

    /// [`Mechanics::opening_force_n`] at a gap already checked.
    pub(crate) fn force_at(&self, gap_m: f32) -> f32 {
        self.spring_preload_n + self.spring_rate_n_per_m * (self.open_gap_m - gap_m) + self.load_n
    }
}
