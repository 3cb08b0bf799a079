//! The description → core mapping of a motor bridge (`[system.motor]`): the motor model the
//! plan and the firmware use, the worst-case plan and its verdicts, the firmware's motor
//! inputs and settings, and the plant of one draw. One place, so the three cannot drift apart.
//!
//! The bridge's loop resistance in the firmware's model is two switches' on-resistance
//! (`[system.switch] on_resistance`): the firmware measures the bus (the supply channel
//! reads the bridge rail), so the supply's source resistance is outside its loop. With the
//! source resistance in the model, the speed estimate of a stalled rotor would be off by
//! `R_s·i/k` (12 rad/s for the demo vent at its 7.3 A stall current, enough to make the jam
//! detector miss a jam). The plan works from the open-circuit supply, so its model adds the
//! source resistance (`[system.supply] source_resistance`). The shunt of the current sense
//! is taken as part of the switch (a low-side shunt of a bridge conducts only in some modes;
//! common practice, no source).

use lenz::Bound;
use lenz::drive::MotorDriverParams;
use lenz::kernel::{BridgeGuardParams, JamParams};
use lenz::motor::{Motor, MotorCorner, MotorParams, MotorSpread};
use serde::Serialize;

use super::plan::{Figure, Report, Verdict};
use super::{SetupError, coil};
use crate::closed_loop::MotorBridge;
use crate::plant::{Decay, MotorPlant, MotorSpec, Thermal};
use crate::scenario::run::{Params, lenz_err, tolerance_half_width};
use crate::scenario::schema::RelTolerance;
use crate::scenario::{Controller, File, MotorStage, PwmDecay};
use crate::si::format as si;

/// The bridge resistance in every driven loop of the firmware's model: two switches.
fn bridge_resistance_ohm(file: &File) -> f64 {
    2.0 * file.system.switch.on_resistance.get()
}

/// The nominal motor of `[system.motor]` as the firmware sees it from the bus (module docs).
#[must_use]
pub fn motor_params(file: &File, m: &MotorStage) -> MotorParams {
    MotorParams::new(
        m.inductance.get() as f32,
        m.resistance.get() as f32,
        m.torque_constant.get() as f32,
    )
    .with_inertia_kg_m2(m.inertia.get() as f32)
    .with_friction_nm_s_per_rad(m.friction.get() as f32)
    .with_bridge_resistance_ohm(bridge_resistance_ohm(file) as f32)
}

/// [`motor_params`], validated.
///
/// # Errors
///
/// The motor model rejects a value (named, under `system.motor`).
pub fn motor_model(file: &File, m: &MotorStage) -> Result<Motor, SetupError> {
    motor_params(file, m)
        .validate()
        .map_err(lenz_err(file, "system.motor", None))
}

/// The firmware's motor: the nominal model and the load it is planned for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MotorInputs {
    /// The nominal motor model (bridge and source resistance in its loop).
    pub motor: Motor,
    /// The description's load torque, N·m.
    pub load_torque_nm: f32,
    /// The driver settings of `[controller.motor]` (`None` without it).
    pub settings: Option<MotorSettings>,
}

/// The bridge motor driver's settings (`[controller.motor]`, or the user's own).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MotorSettings {
    /// Peak current of the soft start and the brake at the highest supply and the coldest
    /// winding, A.
    pub current_limit_a: f32,
    /// Dead time at every mode change, s.
    pub dead_time_s: f32,
    /// Reversal only at or below this speed, rad/s.
    pub reverse_speed_rad_s: f32,
    /// Brake probes while coasting every this long, s (0: none).
    pub probe_interval_s: f32,
    /// Jam: current at or above this …, A.
    pub jam_current_a: f32,
    /// … with the speed at or below this, rad/s …
    pub jam_speed_rad_s: f32,
    /// … for this long, s.
    pub jam_time_s: f32,
    /// Jam detector blanking after each start, s.
    pub start_blanking_s: f32,
    /// Overload: a current at or above this …, A (`None`: no overload check) …
    pub overload_current_a: Option<f32>,
    /// … for this long, s.
    pub overload_time_s: f32,
    /// Open winding: a current at or below this …, A (`None`: no open-winding check) …
    pub open_current_a: Option<f32>,
    /// … while driven at a duty of at least this (0 … 1), for the jam time.
    pub open_min_duty: f32,
}

/// The motor inputs of `file`.
///
/// # Errors
///
/// The motor model rejects a value (named).
pub fn inputs(file: &File, m: &MotorStage) -> Result<MotorInputs, SetupError> {
    let settings = match &file.controller {
        Controller::Motor(c) => Some(MotorSettings {
            current_limit_a: c.current_limit.get() as f32,
            dead_time_s: c.dead_time.get() as f32,
            reverse_speed_rad_s: c.reverse_speed.get() as f32,
            probe_interval_s: c.probe_interval.get() as f32,
            jam_current_a: c.jam_current.get() as f32,
            jam_speed_rad_s: c.jam_speed.get() as f32,
            jam_time_s: c.jam_time.get() as f32,
            start_blanking_s: c.start_blanking.get() as f32,
            overload_current_a: c.overload.map(|o| o.current.get() as f32),
            overload_time_s: c.overload.map_or(0.0, |o| o.time.get() as f32),
            open_current_a: c.open_winding.map(|o| o.current.get() as f32),
            open_min_duty: c.open_winding.map_or(1.0, |o| o.min_duty.get() as f32),
        }),
        _ => None,
    };
    Ok(MotorInputs {
        motor: motor_model(file, m)?,
        load_torque_nm: m.load_torque.get() as f32,
        settings,
    })
}

/// The driver plan for `settings`: the bridge guard's limits hold at the highest supply and
/// the coldest winding of the description, with its load torque; the speed estimator is
/// planned at `temp_c` without a filter; the jam detector with the settings' overload and
/// open-winding checks where they are given. A restart while the rotor coasts resumes at the
/// back-EMF's duty less the coasting estimate's error (`system::motor_resume`).
///
/// # Errors
///
/// The resume margin's bound rejects a value (named).
pub fn driver_params(
    file: &File,
    inputs: &super::FirmwareInputs,
    m: &MotorInputs,
    settings: &MotorSettings,
) -> Result<MotorDriverParams, SetupError> {
    let s = &file.system;
    let tick_s = inputs.tick_s;
    let resume_margin_rad_s = super::motor_resume::resume_margin_rad_s(
        file,
        &m.motor,
        inputs.temp_c,
        settings.probe_interval_s,
        settings.current_limit_a,
        m.load_torque_nm,
    )?;
    Ok(MotorDriverParams {
        motor: m.motor,
        temp_c: inputs.temp_c,
        tick_s,
        speed_filter_s: 0.0,
        guard: BridgeGuardParams {
            supply_v: s.supply.max.get() as f32,
            temp_c: s.temperature.min.get() as f32,
            max_temp_c: s.temperature.max.get() as f32,
            load_torque_nm: m.load_torque_nm,
            current_limit_a: settings.current_limit_a,
            tick_s,
            dead_time_s: settings.dead_time_s,
            reverse_speed_rad_s: settings.reverse_speed_rad_s,
            probe_interval_s: settings.probe_interval_s,
            resume_margin_rad_s,
        },
        jam: JamParams {
            jam_current_a: settings.jam_current_a,
            jam_speed_rad_s: settings.jam_speed_rad_s,
            persistence_s: settings.jam_time_s,
            blanking_s: settings.start_blanking_s,
            overload_current_a: settings.overload_current_a,
            overload_s: settings.overload_time_s,
            open_current_a: settings.open_current_a,
            open_min_duty: settings.open_min_duty,
            tick_s,
        },
        current_sense: inputs.sense.current,
        supply_v_per_count: inputs.sense.supply_v_per_count,
        supply_zero_counts: inputs.sense.supply_zero_counts,
    })
}

/// The motor bridge of a run at `supply_v` and winding (and ambient) temperature `temp_c`:
/// the description's values times the draw `p` (inductance, resistance, torque constant),
/// at rest with the load torque in force.
///
/// # Errors
///
/// Thermal keys given alone, or the plant rejects a value (named).
pub fn plant(
    file: &File,
    scenario: Option<usize>,
    m: &MotorStage,
    p: &Params,
    supply_v: f64,
    temp_c: f64,
) -> Result<MotorBridge, SetupError> {
    let s = &file.system;
    let thermal = match (m.thermal_resistance, m.thermal_capacitance) {
        (Some(r), Some(c)) => Some(Thermal {
            r_th_k_per_w: r.get(),
            c_th_j_per_k: c.get(),
            ambient_c: temp_c,
        }),
        (None, None) => None,
        _ => {
            return Err(SetupError::new(
                "system.motor: `thermal_resistance` and `thermal_capacitance` go together",
            ));
        }
    };
    let spec = MotorSpec {
        inductance_h: m.inductance.get() * p.inductance,
        r20_ohm: m.resistance.get() * p.resistance,
        alpha20_per_k: coil::copper_alpha20_per_k(),
        temp_c,
        thermal,
        torque_constant_nm_per_a: m.torque_constant.get() * p.torque_constant,
        inertia_kg_m2: m.inertia.get(),
        friction_nm_s_per_rad: m.friction.get(),
        switch_on_resistance_ohm: s.switch.on_resistance.get(),
        diode_drop_v: m.diode_drop.get(),
        supply_v,
        source_resistance_ohm: s.supply.source_resistance.get(),
        bus_capacitance_f: m.bus_capacitance.get(),
        supply_sinks: m.supply_sinks,
    };
    let mut plant = MotorPlant::new(spec).map_err(lenz_err(file, "system.motor", scenario))?;
    plant.set_load_torque_nm(m.load_torque.get());
    let decay = match m.pwm_decay {
        PwmDecay::Slow => Decay::Slow,
        PwmDecay::Fast => Decay::Fast,
    };
    Ok(MotorBridge::new(plant, decay))
}

/// The plan's spread of the motor at load `load_nm`: from the open-circuit supply (the
/// source resistance in the loop, module docs), over the supply and temperature ranges and the
/// `inductance`, `resistance` and `torque_constant` spreads of `[tolerances]` (each ± its
/// half-width: a uniform `rel`, or 3σ of a normal one).
///
/// # Errors
///
/// The motor model or a spread rejects a value (named).
pub(super) fn plan_spread(
    f: &File,
    m: &MotorStage,
    load_nm: f64,
) -> Result<MotorSpread, SetupError> {
    let s = &f.system;
    let t = &f.tolerances;
    let half = |x: Option<RelTolerance>| x.map_or(0.0, tolerance_half_width) as f32;
    MotorSpread::new(
        motor_params(f, m).with_bridge_resistance_ohm(
            (bridge_resistance_ohm(f) + s.supply.source_resistance.get()) as f32,
        ),
        coil::supply_range(f)?,
        coil::temperature_range(f)?,
        load_nm as f32,
        [
            half(t.inductance),
            half(t.resistance),
            half(t.torque_constant),
            0.0,
        ],
    )
    .map_err(lenz_err(f, "system.motor", None))
}

fn corner(c: &MotorCorner) -> String {
    format!(
        "{}, {:.0} °C, {}, {}, {}",
        si(c.supply_v.into(), "V"),
        c.temp_c,
        si(c.inductance_h.into(), "H"),
        si(c.resistance_ohm.into(), "Ω"),
        si(c.torque_constant_nm_per_a.into(), "N·m/A")
    )
}

/// The worst-case plan of a motor bridge over the supply and temperature ranges and the part
/// spreads of `[tolerances]` (`plan_spread`), with
/// verdicts against the ratings: the stall current against the switch current rating, and
/// the unguarded start, reversal and brake peaks too without `[controller.motor]` (with it,
/// the driver's current limit); the bus voltage when the motor coasts from its steady speed
/// into a supply that cannot sink against the bus rating; the load torque against the stall
/// torque; with `[controller.motor]`, its reversal and jam speeds against the speed
/// estimator's error at stall ([`super::motor_stall`]), and its overload and open-winding
/// currents against the running current read (`system::motor_currents`).
///
/// # Errors
///
/// A plan routine rejects a value of the file (named), or the motor stalls at a corner.
pub fn plan(f: &File, m: &MotorStage) -> Result<Report, SetupError> {
    let s = &f.system;
    let spread = plan_spread(f, m, m.load_torque.get())?;
    let mut figures = Vec::new();
    let mut add = |name: &'static str,
                   unit: &'static str,
                   r: Result<Bound<MotorCorner>, lenz::Error>|
     -> Result<(), SetupError> {
        let b = r.map_err(|e| {
            let k = crate::scenario::run::file_key(f, None, e.param())
                .unwrap_or_else(|| "system.motor".into());
            let text = e.to_string();
            let problem = text
                .strip_prefix(e.param())
                .and_then(|t| t.strip_prefix(": "))
                .map_or(text.clone(), str::to_string);
            SetupError(format!("key `{k}`: {name}: {problem}"))
        })?;
        figures.push(Figure {
            figure: name,
            unit,
            min: b.min,
            max: b.max,
            min_at: serde_json::to_value(b.min_at).unwrap_or(serde_json::Value::Null),
            max_at: serde_json::to_value(b.max_at).unwrap_or(serde_json::Value::Null),
            min_text: corner(&b.min_at),
            max_text: corner(&b.max_at),
        });
        Ok(())
    };
    add("stall current", "A", spread.stall_current_a())?;
    add("stall torque", "N·m", spread.stall_torque_nm())?;
    add("steady speed", "rad/s", spread.steady_speed_rad_s())?;
    add("steady current", "A", spread.steady_current_a())?;
    add("start peak current", "A", spread.start_peak_current_a())?;
    add(
        "reversal peak current",
        "A",
        spread.reversal_peak_current_a(),
    )?;
    add("brake peak current", "A", spread.brake_peak_current_a())?;
    add("kinetic energy", "J", spread.kinetic_energy_j())?;
    add(
        "bus voltage, coasting into a supply that cannot sink",
        "V",
        spread.coast_peak_bus_v(m.diode_drop.get() as f32, m.bus_capacitance.get() as f32),
    )?;
    let find = |name: &str| figures.iter().find(|x| x.figure == name);
    let max_verdict = |check: &str, fig: Option<&Figure>, limit: f64, unit: &'static str| {
        let value = fig.map(|x| x.max);
        Verdict {
            check: check.to_string(),
            value,
            limit: limit as f32,
            unit,
            pass: value.is_some_and(|v| v <= limit as f32),
            note: fig.map(|x| format!("worst at {}", x.max_text)),
        }
    };
    let mut verdicts = Vec::new();
    let stall = find("stall torque");
    verdicts.push(Verdict {
        check: "load torque below the stall torque at every corner".into(),
        value: Some(m.load_torque.get() as f32),
        limit: stall.map_or(0.0, |x| x.min),
        unit: "N·m",
        pass: stall.is_some_and(|x| (m.load_torque.get() as f32) < x.min),
        note: stall.map(|x| format!("least stall torque at {}", x.min_text)),
    });
    let guarded = matches!(f.controller, Controller::Motor(_));
    if let Some(v) = s.ratings.switch_current {
        // A jam holds the stall current until the firmware trips.
        verdicts.push(max_verdict(
            "stall current ≤ switch current rating",
            find("stall current"),
            v.get(),
            "A",
        ));
        // Without the example driver's guard, the full start, reversal and brake transients
        // reach the switches; with it, its current limit stands for them (verdict below).
        if !guarded {
            for (check, fig) in [
                (
                    "start peak current (unguarded) ≤ switch current rating",
                    "start peak current",
                ),
                (
                    "reversal peak current (unguarded) ≤ switch current rating",
                    "reversal peak current",
                ),
                (
                    "brake peak current (unguarded) ≤ switch current rating",
                    "brake peak current",
                ),
            ] {
                verdicts.push(max_verdict(check, find(fig), v.get(), "A"));
            }
        }
    }
    if let Some(v) = s.ratings.bus_voltage {
        let fig = "bus voltage, coasting into a supply that cannot sink";
        if m.supply_sinks {
            verdicts.push(max_verdict(
                "highest supply ≤ bus voltage rating (the supply sinks the returned energy)",
                Some(&Figure {
                    figure: "highest supply",
                    unit: "V",
                    min: s.supply.max.get() as f32,
                    max: s.supply.max.get() as f32,
                    min_at: serde_json::Value::Null,
                    max_at: serde_json::Value::Null,
                    min_text: String::new(),
                    max_text: "the highest supply".into(),
                }),
                v.get(),
                "V",
            ));
        } else {
            verdicts.push(max_verdict(
                "bus voltage when coasting ≤ bus voltage rating",
                find(fig),
                v.get(),
                "V",
            ));
        }
    }
    if let Controller::Motor(c) = &f.controller {
        let e = super::motor_stall::stall_error(f, &motor_model(f, m)?)?;
        verdicts.extend(super::motor_stall::verdicts(
            &e,
            c.reverse_speed.get(),
            c.jam_speed.get(),
        ));
        verdicts.extend(super::motor_currents::verdicts(f, m, c)?);
    }
    if let Some(c) = match &f.controller {
        Controller::Motor(c) => Some(c),
        _ => None,
    } && let Some(v) = s.ratings.switch_current
    {
        verdicts.push(Verdict {
            check: "driver's current limit ≤ switch current rating".into(),
            value: Some(c.current_limit.get() as f32),
            limit: v.get() as f32,
            unit: "A",
            pass: c.current_limit.get() <= v.get(),
            note: None,
        });
    }
    Ok(Report {
        file: String::new(),
        system: s.name.clone(),
        passed: verdicts.iter().all(|v| v.pass),
        figures,
        verdicts,
    })
}
