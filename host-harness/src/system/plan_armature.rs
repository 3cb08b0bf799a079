//! The plan of a coil's moving armature (`[system.coil.armature]`): the minimum pull-in
//! current and the must-hold current as worst-case bounds over the tolerances
//! (`lenz::armature::ArmatureSpread`), and the controller's settings against them.
//!
//! Tolerances: the coil's `inductance_tolerance` scales the gap curve; the sweep's relative
//! spreads of the open gap, the spring and the armature load (`[tolerances]`, their full reach:
//! `rel` uniform, `3·rel` normal) give the other ranges.
//!
//! Verdicts:
//! - the pull-in current setting must be at or above the highest minimum pull-in current, or
//!   the driver may switch to hold before the weakest-pulling armature has moved;
//! - the lowest hold current (the PWM valley the coil plan computes) must be at or above the
//!   highest must-hold current, or the hold drops the armature.

use super::SetupError;
use super::plan::{Figure, Verdict};
use crate::scenario::schema::RelTolerance;
use crate::scenario::{Armature as ArmatureKeys, Dist, File};
use lenz::armature::{
    Armature, ArmatureCorner, ArmatureSpread, GapInductance, MagneticCircuit, Mechanics,
};
use lenz::bounds::{Bound, Range};

fn corner(c: &ArmatureCorner) -> String {
    format!(
        "L ×{:.3}, open gap {}, preload {}, spring {}, load {}",
        c.inductance_factor,
        crate::si::format(f64::from(c.open_gap_m), "m"),
        crate::si::format(f64::from(c.spring_preload_n), "N"),
        crate::si::format(f64::from(c.spring_rate_n_per_m), "N/m"),
        crate::si::format(f64::from(c.load_n), "N"),
    )
}

fn reach(t: Option<RelTolerance>) -> f32 {
    t.map_or(0.0, |t| {
        let k = match t.dist {
            Dist::Uniform => 1.0,
            Dist::Normal => 3.0,
        };
        (k * t.rel.get()) as f32
    })
}

/// The gap curve of `[system.coil.armature]` (the plan's form of it).
#[must_use]
pub(super) fn gap_inductance(a: &ArmatureKeys) -> GapInductance {
    GapInductance::Reluctance {
        zero_gap_h: a.zero_gap_inductance.get() as f32,
        halving_gap_m: a.halving_gap.get() as f32,
    }
}

/// The nominal inductance of the seated armature, `L(closed_gap)` (unsaturated), H: the coil
/// the hold and every switch-off see.
///
/// # Errors
///
/// The gap curve rejects the closed gap.
pub(super) fn seated_inductance_h(a: &ArmatureKeys) -> Result<f32, lenz::Error> {
    gap_inductance(a).inductance_h(a.closed_gap.get() as f32)
}

pub(super) fn spread(
    f: &File,
    a: &ArmatureKeys,
    l_tol: f32,
) -> Result<ArmatureSpread, lenz::Error> {
    let nominal = Armature::new(
        MagneticCircuit::new(gap_inductance(a), a.saturation_flux.map(|v| v.get() as f32))?,
        Mechanics {
            open_gap_m: a.open_gap.get() as f32,
            closed_gap_m: a.closed_gap.get() as f32,
            spring_preload_n: a.spring_preload.get() as f32,
            spring_rate_n_per_m: a.spring_rate.get() as f32,
            load_n: a.load.get() as f32,
        },
    )?;
    let t = &f.tolerances;
    let range = |name, v: f64, rel: f32| Range::tolerance(name, v as f32, rel);
    ArmatureSpread::new(
        nominal,
        l_tol,
        range("open_gap_m", a.open_gap.get(), reach(t.open_gap))?,
        range("spring_preload_n", a.spring_preload.get(), reach(t.spring))?,
        range("spring_rate_n_per_m", a.spring_rate.get(), reach(t.spring))?,
        range("load_n", a.load.get(), reach(t.armature_load))?,
    )
}

/// The armature's figures and verdicts; `hold_valley_a`: the lowest current of the planned
/// PWM hold, if the coil plan computed one.
///
/// # Errors
///
/// An armature the plan rejects, named by its key.
pub(super) fn verdicts(
    f: &File,
    a: &ArmatureKeys,
    l_tol: f32,
    pull_in_setting_a: Option<f32>,
    hold_valley_a: Option<f32>,
    figures: &mut Vec<Figure>,
    verdicts: &mut Vec<Verdict>,
) -> Result<(), SetupError> {
    let bad = |e: lenz::Error| SetupError::new(format!("key `system.coil.armature`: {e}"));
    let s = spread(f, a, l_tol).map_err(bad)?;
    let pull: Bound<ArmatureCorner> = s.pull_in_current_a().map_err(bad)?;
    let hold: Bound<ArmatureCorner> = s.hold_current_a().map_err(bad)?;
    let pull_fig = super::plan::figure("armature minimum pull-in current", "A", &pull, corner);
    let hold_fig = super::plan::figure("armature must-hold current", "A", &hold, corner);
    if let Some(setting) = pull_in_setting_a {
        verdicts.push(Verdict {
            check: "pull-in current setting ≥ highest minimum pull-in current (the armature \
                    moves before the hold)"
                .into(),
            value: Some(setting),
            limit: pull.max,
            unit: "A",
            pass: setting >= pull.max,
            note: Some(format!("highest at {}", pull_fig.max_text)),
        });
    }
    if let Some(valley) = hold_valley_a {
        verdicts.push(Verdict {
            check: "lowest hold current ≥ highest armature must-hold current".into(),
            value: Some(valley),
            limit: hold.max,
            unit: "A",
            pass: valley >= hold.max,
            note: Some(format!("highest at {}", hold_fig.max_text)),
        });
    }
    figures.push(pull_fig);
    figures.push(hold_fig);
    Ok(())
}
