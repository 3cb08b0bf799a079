//! Verdicts of a switch-off against part ratings.
//!
//! - **Switch voltage**: the peak switch voltage against the switch's breakdown or V_DS(max).
//! - **Avalanche energy**: when the switch itself clamps (a [`Clamp::Switch`] at or below the
//!   breakdown, meaning MOSFET avalanche or an active clamp inside the switch), or when the
//!   peak of any other clamp would exceed the breakdown so that the switch avalanches first,
//!   the energy into the switch against its single-pulse avalanche rating E_AS. In the second
//!   case the energy is evaluated as a clamp across the switch at the breakdown voltage with
//!   the whole current in the switch: an upper bound, since the other clamp takes a share. The
//!   worst case takes the lowest breakdown voltage (the TVS application-note convention), so
//!   give the minimum rated breakdown.
//! - **Clamp energy** and **clamp peak power**: the clamp part's energy per switch-off and its
//!   peak power against its ratings.
//! - **Unclamped**: always a warning, with the peak voltage the ring would reach.

use super::{CLAMP_MAX_V, Clamp, SwitchOff};
use crate::error::{Error, in_range, positive};

/// Part ratings to check a switch-off against; `None` skips that check.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Ratings {
    /// Switch breakdown voltage or V_DS(max) (take the minimum rated value), V.
    pub switch_breakdown_v: Option<f32>,
    /// Switch single-pulse avalanche energy rating E_AS, J.
    pub avalanche_energy_j: Option<f32>,
    /// Clamp part energy rating per pulse, J.
    pub clamp_energy_j: Option<f32>,
    /// Clamp part peak power rating, W.
    pub clamp_peak_power_w: Option<f32>,
}

/// What a [`Verdict`] checks.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Check {
    /// Peak switch voltage against the breakdown rating, V.
    SwitchVoltage,
    /// Energy into the switch in avalanche against E_AS, J.
    AvalancheEnergy,
    /// Energy into the clamp part against its rating, J.
    ClampEnergy,
    /// Peak clamp power against its rating, W.
    ClampPeakPower,
}

/// One figure against one rating.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Verdict {
    /// What is checked.
    pub check: Check,
    /// The figure.
    pub value: f32,
    /// The rating.
    pub limit: f32,
}

impl Verdict {
    /// `true` when the figure does not exceed the rating.
    #[must_use]
    pub fn passes(&self) -> bool {
        self.value <= self.limit
    }

    /// `limit / value`: above 1 passes, with that much headroom.
    #[must_use]
    pub fn margin(&self) -> f32 {
        if self.value > 0.0 {
            self.limit / self.value
        } else {
            f32::INFINITY
        }
    }
}

/// The verdicts of one switch-off.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Verdicts {
    /// Peak switch voltage against the breakdown, if rated.
    pub switch_voltage: Option<Verdict>,
    /// Avalanche energy against E_AS, if the switch avalanches and E_AS is rated.
    pub avalanche_energy: Option<Verdict>,
    /// Clamp energy against its rating, if rated and there is a clamp part.
    pub clamp_energy: Option<Verdict>,
    /// Clamp peak power against its rating, if rated and there is a clamp part.
    pub clamp_peak_power: Option<Verdict>,
    /// `true` when the switch takes the energy in avalanche (it clamps, or the peak would
    /// exceed its breakdown).
    pub switch_avalanches: bool,
    /// Unclamped switch-off: the warning, with the peak voltage the ring would reach, V.
    pub unclamped_peak_v: Option<f32>,
}

impl Verdicts {
    /// `true` when every rated check passes and the switch-off is not unclamped.
    #[must_use]
    pub fn all_pass(&self) -> bool {
        self.unclamped_peak_v.is_none()
            && [
                self.switch_voltage,
                self.avalanche_energy,
                self.clamp_energy,
                self.clamp_peak_power,
            ]
            .iter()
            .flatten()
            .all(Verdict::passes)
    }
}

fn rating(param: &'static str, v: Option<f32>) -> Result<Option<f32>, Error> {
    v.map(|x| positive(param, x)).transpose()
}

pub(super) fn evaluate(off: &SwitchOff, r: &Ratings) -> Result<Verdicts, Error> {
    let bv = rating("switch_breakdown_v", r.switch_breakdown_v)?;
    let eas = rating("avalanche_energy_j", r.avalanche_energy_j)?;
    let ec_rating = rating("clamp_energy_j", r.clamp_energy_j)?;
    let pc_rating = rating("clamp_peak_power_w", r.clamp_peak_power_w)?;
    if let Some(b) = bv {
        // A switch that cannot block the supply fails before any switch-off.
        let above_supply = f32::from_bits(off.supply_v().to_bits() + 1);
        in_range("switch_breakdown_v", b, above_supply, CLAMP_MAX_V)?;
    }
    let peak = off.peak_switch_voltage_v()?;
    let switch_voltage = bv.map(|b| Verdict {
        check: super::Check::SwitchVoltage,
        value: peak,
        limit: b,
    });
    let clamp_is_switch = matches!(off.clamp(), Clamp::Switch { .. });
    let exceeds = bv.is_some_and(|b| peak > b);
    let switch_avalanches = clamp_is_switch || exceeds;
    let avalanche_j = if exceeds {
        let b = bv.unwrap_or(peak);
        Some(
            off.with_clamp(Clamp::Switch { clamp_v: b })?
                .clamp_energy_j()?,
        )
    } else if clamp_is_switch {
        Some(off.clamp_energy_j()?)
    } else {
        None
    };
    let avalanche_energy = match (avalanche_j, eas) {
        (Some(e), Some(limit)) => Some(Verdict {
            check: super::Check::AvalancheEnergy,
            value: e,
            limit,
        }),
        _ => None,
    };
    let unclamped = matches!(off.clamp(), Clamp::Unclamped { .. });
    let (clamp_energy, clamp_peak_power) = if unclamped {
        (None, None)
    } else {
        let e = off.clamp_energy_j()?;
        let p = off.peak_clamp_power_w()?;
        (
            ec_rating.map(|limit| Verdict {
                check: super::Check::ClampEnergy,
                value: e,
                limit,
            }),
            pc_rating.map(|limit| Verdict {
                check: super::Check::ClampPeakPower,
                value: p,
                limit,
            }),
        )
    };
    Ok(Verdicts {
        switch_voltage,
        avalanche_energy,
        clamp_energy,
        clamp_peak_power,
        switch_avalanches,
        unclamped_peak_v: if unclamped { Some(peak) } else { None },
    })
}
