//! The plant of one run: the description's part values times a sweep's draw ([`Params`]), at
//! the run's operating point. The one description → plant mapping.

use super::{SetupError, clamp, coil};
use crate::plant::{
    ArmatureFaults, ArmatureSpec, Boost, BoostSpec, CoilDrive, CoilDriveSpec, CoilSpec, GapCurve,
    InductanceCurve, SwitchSpec, Thermal,
};
use crate::scenario::run::Params;
use crate::scenario::{BoostStage, File};

/// The coil drive of a run at `supply_v` and coil (and ambient) temperature `temp_c`.
///
/// # Errors
///
/// The file has no coil or clamp, keys that go together are given alone, or the plant
/// rejects a value (named).
pub fn coil_plant(
    file: &File,
    p: &Params,
    supply_v: f64,
    temp_c: f64,
) -> Result<CoilDrive, SetupError> {
    coil_plant_in(file, None, p, supply_v, temp_c)
}

/// [`coil_plant`] for scenario `scenario` of the file: a value the plant rejects is named by the
/// scenario's key where it comes from the scenario (its temperature or supply).
///
/// # Errors
///
/// As [`coil_plant`].
pub fn coil_plant_in(
    file: &File,
    scenario: Option<usize>,
    p: &Params,
    supply_v: f64,
    temp_c: f64,
) -> Result<CoilDrive, SetupError> {
    let s = &file.system;
    let (Some(coil), Some(clamp)) = (s.coil, s.clamp) else {
        return Err(SetupError::new(
            "system: missing [system.coil] or [system.clamp]",
        ));
    };
    let l = coil.inductance.get() * p.inductance;
    let curve = match (coil.knee_current, coil.residual_inductance) {
        (Some(knee), Some(res)) => InductanceCurve::Knee {
            l0_h: l,
            knee_a: knee.get(),
            l_res_h: res.get() * p.inductance,
        },
        (None, None) => InductanceCurve::Linear { l_h: l },
        _ => {
            return Err(SetupError::new(
                "system.coil: `knee_current` and `residual_inductance` go together",
            ));
        }
    };
    let thermal = match (coil.thermal_resistance, coil.thermal_capacitance) {
        (Some(r), Some(c)) => Some(Thermal {
            r_th_k_per_w: r.get(),
            c_th_j_per_k: c.get(),
            ambient_c: temp_c,
        }),
        (None, None) => None,
        _ => {
            return Err(SetupError::new(
                "system.coil: `thermal_resistance` and `thermal_capacitance` go together",
            ));
        }
    };
    let spec = CoilDriveSpec {
        coil: CoilSpec {
            curve,
            r20_ohm: coil.resistance.get() * p.resistance,
            alpha20_per_k: coil::copper_alpha20_per_k(),
            temp_c,
            thermal,
        },
        clamp: clamp::plant_clamp(&clamp, p.clamp),
        switch: SwitchSpec {
            on_resistance_ohm: s.switch.on_resistance.get(),
            breakdown_v: s.switch.breakdown.get(),
        },
        supply_v,
        source_resistance_ohm: s.supply.source_resistance.get(),
        shunt_ohm: s.sense.shunt.get(),
    };
    match coil.armature {
        None => CoilDrive::new(spec),
        Some(a) => CoilDrive::with_armature(spec, armature_spec(&a, p)),
    }
    .map_err(crate::scenario::run::lenz_err(file, "system", scenario))
}

/// The plant's armature from `[system.coil.armature]` with a sweep's draw: the inductance
/// tolerance scales the gap curve as it scales the coil.
#[must_use]
pub fn armature_spec(a: &crate::scenario::Armature, p: &Params) -> ArmatureSpec {
    ArmatureSpec {
        gap: GapCurve::Reluctance {
            zero_gap_h: a.zero_gap_inductance.get() * p.inductance,
            halving_gap_m: a.halving_gap.get(),
        },
        saturation_flux_vs: a.saturation_flux.map(|v| v.get()),
        mass_kg: a.mass.get(),
        open_gap_m: a.open_gap.get() * p.open_gap,
        closed_gap_m: a.closed_gap.get(),
        spring_preload_n: a.spring_preload.get() * p.spring,
        spring_rate_n_per_m: a.spring_rate.get() * p.spring,
        damping_n_s_per_m: a.damping.get(),
        load_n: a.load.get() * p.armature_load,
        restitution: a.restitution.get(),
        rest_speed_m_s: a.rest_speed.get(),
        faults: ArmatureFaults::default(),
    }
}

/// The boost plant of a run at `supply_v`.
///
/// # Errors
///
/// The plant rejects a value (named).
pub fn boost_plant(
    file: &File,
    b: &BoostStage,
    p: &Params,
    supply_v: f64,
) -> Result<Boost, SetupError> {
    let s = &file.system;
    Boost::new(BoostSpec {
        inductor: InductanceCurve::Linear {
            l_h: b.inductance.get() * p.inductance,
        },
        dcr_ohm: b.dcr.get() * p.resistance,
        switch_on_resistance_ohm: s.switch.on_resistance.get(),
        diode_drop_v: b.diode_drop.get(),
        output_c_f: b.output_capacitance.get(),
        esr_ohm: b.esr.get(),
        load_ohm: b.load.get() * p.load,
        input_v: supply_v,
        source_resistance_ohm: s.supply.source_resistance.get(),
    })
    .map_err(crate::scenario::run::lenz_err(file, "system.boost", None))
}
