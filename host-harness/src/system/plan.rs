//! The worst-case plan of a system: every design number as a bound over the supply,
//! temperature and part tolerances (each with the corner that produced it), and the verdicts
//! against the ratings, the requirements and the controller's settings.
//!
//! Coil drives: the coil figures of [`lenz::bounds::CoilSpread`] and the switch-off figures of
//! [`lenz::turnoff::TurnOffSpread`] over supply, coil temperature and the inductance and
//! resistance tolerances of `[system.coil]`. Boost stages: the figures of
//! [`lenz::boost::BoostSpread`] over the supply, the load and the part tolerances of
//! `[system.boost]`.

use lenz::boost::{BoostCorner, BoostSpread, BoostStageParams};
use lenz::bounds::{CoilCorner, CoilSpread};
use lenz::trip::{SenseChain, SenseParams};
use lenz::turnoff::TurnOffSpread;
use lenz::{Bound, Range};
use serde::Serialize;

use super::{SetupError, clamp, coil};
use crate::scenario::run::file_key;
use crate::scenario::{BoostStage, ClampSpec, Coil, File};
use crate::si::format as si;

/// A worst-case figure.
#[derive(Debug, Serialize)]
pub struct Figure {
    /// Name.
    pub figure: &'static str,
    /// Unit ("" for a ratio).
    pub unit: &'static str,
    /// Smallest value.
    pub min: f32,
    /// Largest value.
    pub max: f32,
    /// Corner of the smallest value.
    pub min_at: serde_json::Value,
    /// Corner of the largest value.
    pub max_at: serde_json::Value,
    /// The same, for people.
    #[serde(skip)]
    pub min_text: String,
    /// The same, for people.
    #[serde(skip)]
    pub max_text: String,
}

/// A verdict: the worst value of a figure against a rating or requirement.
#[derive(Debug, Serialize)]
pub struct Verdict {
    /// What is checked.
    pub check: String,
    /// The worst value (`None`: it could not be computed at some corner).
    pub value: Option<f32>,
    /// The rating or requirement.
    pub limit: f32,
    /// Unit.
    pub unit: &'static str,
    /// It holds.
    pub pass: bool,
    /// Where the worst value is, or why there is none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// The plan of a system.
#[derive(Debug, Serialize)]
pub struct Report {
    /// The file.
    pub file: String,
    /// The system's name.
    pub system: String,
    /// Every verdict passes.
    pub passed: bool,
    /// The figures.
    pub figures: Vec<Figure>,
    /// The verdicts.
    pub verdicts: Vec<Verdict>,
}

fn coil_corner(c: &CoilCorner) -> String {
    format!(
        "{}, {:.0} °C, {}, {}",
        si(c.supply_v.into(), "V"),
        c.temp_c,
        si(c.inductance_h.into(), "H"),
        si(c.resistance_ohm.into(), "Ω")
    )
}

fn boost_corner(c: &BoostCorner) -> String {
    format!(
        "{} in, {} load, {}, DCR {}, Ron {}",
        si(c.input_v.into(), "V"),
        si(c.load_current_a.into(), "A"),
        si(c.inductance_h.into(), "H"),
        si(c.inductor_resistance_ohm.into(), "Ω"),
        si(c.switch_resistance_ohm.into(), "Ω")
    )
}

pub(super) fn figure<C: Serialize>(
    figure: &'static str,
    unit: &'static str,
    b: &Bound<C>,
    text: impl Fn(&C) -> String,
) -> Figure {
    Figure {
        figure,
        unit,
        min: b.min,
        max: b.max,
        min_at: serde_json::to_value(&b.min_at).unwrap_or(serde_json::Value::Null),
        max_at: serde_json::to_value(&b.max_at).unwrap_or(serde_json::Value::Null),
        min_text: text(&b.min_at),
        max_text: text(&b.max_at),
    }
}

/// A plan error as a problem of the file (`key `K`: problem`, placed in the file by
/// [`crate::scenario::locate_problem`]): `K` is the key the rejected parameter comes from, else
/// `key`; the plan's internal parameter name is left out.
fn err<'a>(f: &'a File, key: &'a str) -> impl Fn(lenz::Error) -> SetupError + 'a {
    move |e| {
        let k = file_key(f, None, e.param()).unwrap_or_else(|| key.to_string());
        SetupError(format!("key `{k}`: {}", without_param(&e)))
    }
}

/// A figure that cannot be evaluated over the ranges (at one corner): `figure` names it.
fn fig_err<'a>(f: &'a File, figure: &'a str) -> impl Fn(lenz::Error) -> SetupError + 'a {
    move |e| {
        let k = file_key(f, None, e.param()).unwrap_or_else(|| "system.coil".to_string());
        SetupError(format!("key `{k}`: {figure}: {}", without_param(&e)))
    }
}

/// The message of `e` without its leading `param: `.
fn without_param(e: &lenz::Error) -> String {
    let text = e.to_string();
    text.strip_prefix(e.param())
        .and_then(|t| t.strip_prefix(": "))
        .map_or(text.clone(), str::to_string)
}

fn max_verdict(check: &str, fig: Option<&Figure>, limit: f64, unit: &'static str) -> Verdict {
    let value = fig.map(|f| f.max);
    Verdict {
        check: check.to_string(),
        value,
        limit: limit as f32,
        unit,
        pass: value.is_some_and(|v| v <= limit as f32),
        note: fig.map(|f| format!("worst at {}", f.max_text)),
    }
}

fn coil_plan(f: &File, coil: &Coil, clamp: &ClampSpec) -> Result<Report, SetupError> {
    let s = &f.system;
    let params = coil::coil_params(f, coil);
    let supply = coil::supply_range(f)?;
    let temp = coil::temperature_range(f)?;
    let spread = CoilSpread::new(
        params,
        supply,
        temp,
        coil.inductance_tolerance.get() as f32,
        coil.resistance_tolerance.get() as f32,
    )
    .map_err(err(f, "system.coil"))?;
    // A coil with a moving armature is held and switched off seated: its stored energy, its
    // hold and every switch-off figure (release time included) use the seated inductance
    // `L(closed_gap)` over the same tolerances; the pull-in figures keep the coil's
    // `inductance` (the open gap, where the pull-in starts).
    let seated = match &coil.armature {
        None => spread,
        Some(a) => CoilSpread::new(
            lenz::CoilParams {
                inductance_h: super::plan_armature::seated_inductance_h(a)
                    .map_err(err(f, "system.coil.armature"))?,
                ..params
            },
            supply,
            temp,
            coil.inductance_tolerance.get() as f32,
            coil.resistance_tolerance.get() as f32,
        )
        .map_err(err(f, "system.coil.armature"))?,
    };
    let off = TurnOffSpread {
        spread: seated,
        clamp: clamp::core_clamp(clamp),
    };
    let mut figures = Vec::new();
    let mut verdicts = Vec::new();
    let mut add = |name, unit, b: Result<Bound<CoilCorner>, lenz::Error>| match b {
        Ok(b) => {
            figures.push(figure(name, unit, &b, coil_corner));
            Ok(())
        }
        Err(e) => Err(e),
    };
    add("steady current", "A", spread.steady_current_a()).map_err(fig_err(f, "steady current"))?;
    add("time constant", "s", spread.time_constant_s()).map_err(fig_err(f, "time constant"))?;
    add("stored energy", "J", seated.stored_energy_j()).map_err(fig_err(f, "stored energy"))?;
    let pull_in = add(
        "pull-in time",
        "s",
        spread.pull_in_time_s(coil.pull_in_current.get() as f32),
    );
    add("peak switch voltage", "V", off.peak_switch_voltage_v())
        .map_err(fig_err(f, "peak switch voltage"))?;
    add("clamp energy per switch-off", "J", off.clamp_energy_j())
        .map_err(fig_err(f, "clamp energy"))?;
    add("peak clamp power", "W", off.peak_clamp_power_w())
        .map_err(fig_err(f, "peak clamp power"))?;
    add("decay time", "s", off.decay_time_s()).map_err(fig_err(f, "decay time"))?;
    add(
        "release time (current part)",
        "s",
        off.release_time_s(Some(coil.release_current.get() as f32)),
    )
    .map_err(fig_err(f, "release time"))?;
    // The controller's instantaneous trip: the code it compares against, and the band of true
    // currents that trip at that code over the sense chain's gain and offset errors (the
    // chain's own worst-case corner search, lenz::trip::SenseChain).
    if let crate::scenario::Controller::Coil(c) = &f.controller {
        let sense = &s.sense;
        let chain = SenseChain::new(&SenseParams {
            shunt_ohm: sense.shunt.get() as f32,
            shunt_tol: 0.0,
            gain: sense.gain.get() as f32,
            gain_tol: sense.gain_error.get().abs() as f32,
            offset_v: (sense.offset.get().abs() / sense.gain.get()) as f32,
            vref_v: sense.adc_reference.get() as f32,
            vref_tol: 0.0,
            bits: sense.adc_bits as u8,
        })
        .map_err(err(f, "system.sense"))?;
        let code = chain
            .code_for_a(c.trip_current.get() as f32)
            .map_err(err(f, "controller.coil.trip_current"))?;
        let band = chain
            .band(code)
            .map_err(err(f, "controller.coil.trip_current"))?;
        figures.push(figure(
            "trip current (sense tolerance band)",
            "A",
            &band,
            |k| {
                format!(
                    "code {code}, gain {:.3}, offset {}",
                    k[1],
                    si(k[2].into(), "V")
                )
            },
        ));
    }
    if let crate::scenario::Controller::Coil(c) = &f.controller {
        let spreads = Spreads {
            unmoved: &spread,
            seated: &seated,
        };
        settings_verdicts(f, coil, clamp, c, &spreads, &mut figures, &mut verdicts)?;
    }
    let find = |name: &str| figures.iter().find(|f| f.figure == name);
    let r = &s.ratings;
    if let Some(v) = r.switch_voltage {
        verdicts.push(max_verdict(
            "peak switch voltage ≤ switch rating",
            find("peak switch voltage"),
            v.get(),
            "V",
        ));
    }
    verdicts.push(max_verdict(
        "peak switch voltage ≤ switch breakdown (no avalanche)",
        find("peak switch voltage"),
        s.switch.breakdown.get(),
        "V",
    ));
    if let Some(v) = r.switch_current {
        verdicts.push(max_verdict(
            "steady current ≤ switch current rating",
            find("steady current"),
            v.get(),
            "A",
        ));
    }
    if let (Some(trip), Some(steady)) = (
        find("trip current (sense tolerance band)"),
        find("steady current"),
    ) {
        verdicts.push(Verdict {
            check: "lowest trip current > highest steady current (no nuisance trip)".into(),
            value: Some(trip.min),
            limit: steady.max,
            unit: "A",
            pass: trip.min > steady.max,
            note: Some(format!("steady current worst at {}", steady.max_text)),
        });
        if let Some(v) = r.switch_current {
            verdicts.push(max_verdict(
                "highest trip current ≤ switch current rating",
                Some(trip),
                v.get(),
                "A",
            ));
        }
    }
    let across_switch = matches!(clamp, ClampSpec::AcrossSwitch { .. });
    let energy_rating = if across_switch {
        r.switch_energy
            .map(|v| ("clamp energy ≤ switch energy rating", v.get()))
    } else {
        r.clamp_energy
            .map(|v| ("clamp energy ≤ clamp rating", v.get()))
    };
    if let Some((name, v)) = energy_rating {
        verdicts.push(max_verdict(
            name,
            find("clamp energy per switch-off"),
            v,
            "J",
        ));
    }
    let q = &s.requirements;
    if let Some(v) = q.release_time {
        verdicts.push(max_verdict(
            "release time ≤ requirement",
            find("release time (current part)"),
            v.get(),
            "s",
        ));
    }
    match (q.pull_in_time, pull_in) {
        (Some(v), Ok(())) => verdicts.push(max_verdict(
            "pull-in time ≤ requirement",
            find("pull-in time"),
            v.get(),
            "s",
        )),
        (limit, Err(e)) => verdicts.push(Verdict {
            check: "the coil pulls in at every corner".into(),
            value: None,
            limit: limit.map_or(f32::INFINITY, |v| v.get() as f32),
            unit: "s",
            pass: false,
            note: Some(e.to_string()),
        }),
        (None, Ok(())) => {}
    }
    Ok(Report {
        file: String::new(),
        system: s.name.clone(),
        passed: verdicts.iter().all(|v| v.pass),
        figures,
        verdicts,
    })
}

fn boost_plan(f: &File, b: &BoostStage) -> Result<Report, SetupError> {
    let s = &f.system;
    let stage = BoostStageParams {
        inductance_h: b.inductance.get() as f32,
        inductor_resistance_ohm: b.dcr.get() as f32,
        saturation_current_a: Some(b.saturation_current.get() as f32),
        switch_resistance_ohm: s.switch.on_resistance.get() as f32,
        diode_drop_v: b.diode_drop.get() as f32,
        frequency_hz: s.pwm_frequency.get() as f32,
        min_off_time_s: b.min_off_time.get() as f32,
        min_on_time_s: b.min_on_time.get() as f32,
        output_capacitance_f: Some(b.output_capacitance.get() as f32),
        esr_ohm: b.esr.get() as f32,
    };
    let io = b.output.get() / b.load.get();
    let lt = b.load_tolerance.get();
    let spread = BoostSpread::new(
        stage,
        b.output.get() as f32,
        Range::new(
            "supply_v",
            s.supply.min.get() as f32,
            s.supply.max.get() as f32,
        )
        .map_err(err(f, "system.supply"))?,
        Range::new(
            "load_current_a",
            (io * (1.0 - lt)) as f32,
            (io * (1.0 + lt)) as f32,
        )
        .map_err(err(f, "system.boost.load_tolerance"))?,
        b.inductance_tolerance.get() as f32,
        b.resistance_tolerance.get() as f32,
    )
    .map_err(err(f, "system.boost"))?;
    let mut figures = Vec::new();
    let mut add =
        |name, unit, r: Result<Bound<BoostCorner>, lenz::Error>| -> Result<(), SetupError> {
            let b = r.map_err(|e| {
                let k = file_key(f, None, e.param()).unwrap_or_else(|| "system.boost".into());
                SetupError(format!("key `{k}`: {name}: {}", without_param(&e)))
            })?;
            figures.push(figure(name, unit, &b, boost_corner));
            Ok(())
        };
    add("duty", "", spread.duty())?;
    add("duty limit", "", spread.duty_max())?;
    add("duty headroom (limit − duty)", "", spread.duty_headroom())?;
    add(
        "peak inductor current",
        "A",
        spread.peak_inductor_current_a(),
    )?;
    add("ripple current", "A", spread.figure(|p| p.ripple_current_a))?;
    add("efficiency", "", spread.figure(|p| p.efficiency))?;
    add(
        "output ripple",
        "V",
        spread.figure(|p| p.output_ripple.map_or(f32::NAN, |r| r.total_v)),
    )?;
    add(
        "saturation margin",
        "",
        spread.figure(|p| p.saturation_margin.unwrap_or(f32::NAN)),
    )?;
    let find = |name: &str| figures.iter().find(|f| f.figure == name);
    let mut verdicts = vec![Verdict {
        check: "duty stays below its limit at every corner".into(),
        value: find("duty headroom (limit − duty)").map(|f| f.min),
        limit: 0.0,
        unit: "",
        pass: find("duty headroom (limit − duty)").is_some_and(|f| f.min > 0.0),
        note: find("duty headroom (limit − duty)").map(|f| format!("least at {}", f.min_text)),
    }];
    verdicts.push(max_verdict(
        "peak inductor current ≤ saturation current",
        find("peak inductor current"),
        b.saturation_current.get(),
        "A",
    ));
    if let Some(v) = s.ratings.switch_current {
        verdicts.push(max_verdict(
            "peak inductor current ≤ switch current rating",
            find("peak inductor current"),
            v.get(),
            "A",
        ));
    }
    if let Some(v) = s.requirements.output_ripple {
        verdicts.push(max_verdict(
            "output ripple ≤ requirement",
            find("output ripple"),
            v.get(),
            "V",
        ));
    }
    if let Some(m) = s.requirements.saturation_margin {
        let fig = find("saturation margin");
        verdicts.push(Verdict {
            check: "saturation margin ≥ requirement".into(),
            value: fig.map(|f| f.min),
            limit: m.get() as f32,
            unit: "",
            pass: fig.is_some_and(|f| f.min >= m.get() as f32),
            note: fig.map(|f| format!("least at {}", f.min_text)),
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

/// The plan of `f`'s system.
///
/// # Errors
///
/// A plan routine rejects a value of the file.
pub fn plan(f: &File) -> Result<Report, SetupError> {
    if let Some(m) = &f.system.motor {
        return super::motor::plan(f, m);
    }
    match (&f.system.coil, &f.system.clamp, &f.system.boost) {
        (Some(c), Some(k), _) => coil_plan(f, c, k),
        (_, _, Some(b)) => boost_plan(f, b),
        _ => Err(SetupError::new(
            "system: needs [system.coil] and a clamp, or [system.boost]",
        )),
    }
}

/// The plan-side boost stage of the file (nominal values).
///
/// # Errors
///
/// The plan rejects a value (named).
pub fn boost_stage(file: &File, b: &BoostStage) -> Result<lenz::boost::BoostStage, SetupError> {
    let s = &file.system;
    lenz::boost::BoostStageParams::new(b.inductance.get() as f32, s.pwm_frequency.get() as f32)
        .with_inductor_resistance_ohm(b.dcr.get() as f32)
        .with_switch_resistance_ohm(s.switch.on_resistance.get() as f32)
        .with_diode_drop_v(b.diode_drop.get() as f32)
        .with_saturation_current_a(b.saturation_current.get() as f32)
        .with_min_off_time_s(b.min_off_time.get() as f32)
        .with_min_on_time_s(b.min_on_time.get() as f32)
        .validate()
        .map_err(err(file, "system.boost"))
}

/// The duty limiter's plan from `[controller.boost]` and the nominal sense chain.
///
/// # Errors
///
/// The input window is not a range (named).
pub fn duty_limiter_params(
    file: &File,
    b: &BoostStage,
    c: &crate::scenario::BoostController,
    sense: &super::SenseInputs,
) -> Result<lenz::kernel::DutyLimiterParams, SetupError> {
    let s = &file.system;
    Ok(lenz::kernel::DutyLimiterParams {
        input_v: Range::new(
            "input_v",
            c.input_min.get() as f32,
            c.input_max.get() as f32,
        )
        .map_err(err(file, "controller.boost"))?,
        output_v: b.output.get() as f32,
        max_load_current_a: c.max_load_current.get() as f32,
        light_load: match (c.light_load_current, c.light_load_max_output) {
            (Some(i), Some(v)) => Some(lenz::boost::LightLoad {
                min_load_current_a: i.get() as f32,
                max_output_v: v.get() as f32,
            }),
            _ => None,
        },
        input_v_per_count: sense.supply_v_per_count,
        output_v_per_count: sense.output_v_per_count,
        adc_max_counts: sense.adc_max_counts,
        duty_full_scale: c.duty_full_scale,
        soft_start_s: c.soft_start.get() as f32,
        tick_s: s.tick.get() as f32,
        overvoltage_v: c.overvoltage.get() as f32,
        resume_v: c.resume.get() as f32,
        inductance_tol: b.inductance_tolerance.get() as f32,
        resistance_tol: b.resistance_tolerance.get() as f32,
    })
}

/// The coil's spreads: as described (`inductance`) and seated (the armature at its closed
/// stop; the same spread when nothing moves).
struct Spreads<'a> {
    unmoved: &'a CoilSpread,
    seated: &'a CoilSpread,
}

/// The coil controller's settings against the worst-case coil:
///
/// - the pull-in current setting must lie below the lowest steady current (the hot,
///   low-supply corner), or the driver never sees it and never leaves full drive;
/// - with a must-hold current (`hold_current` in `[system.coil]`), the lowest current of the
///   PWM hold (the valley of the periodic steady state, [`lenz::Coil::pwm_steady_state`]) at
///   the worst corner must stay at or above it. The steady state is the closed form for a
///   freewheel diode; a hold through another clamp kind is a failed verdict that says so.
///   The hold is planned on the seated coil (an armature is held at its closed stop).
fn settings_verdicts(
    f: &File,
    coil: &Coil,
    clamp: &ClampSpec,
    c: &crate::scenario::CoilController,
    spreads: &Spreads<'_>,
    figures: &mut Vec<Figure>,
    verdicts: &mut Vec<Verdict>,
) -> Result<(), SetupError> {
    let steady = spreads
        .unmoved
        .steady_current_a()
        .map_err(fig_err(f, "steady current"))?;
    let setting = c.pull_in_current.get() as f32;
    verdicts.push(Verdict {
        check: "pull-in current setting < lowest steady current (the driver reaches it)".into(),
        value: Some(setting),
        limit: steady.min,
        unit: "A",
        pass: setting < steady.min,
        note: Some(format!(
            "lowest steady current at {}",
            coil_corner(&steady.min_at)
        )),
    });
    let duty = c.hold_duty.get() as f32;
    if let Some(a) = &coil.armature {
        // The hold's valley, planned for a freewheel diode only (see below).
        let freq = f.system.pwm_frequency.get() as f32;
        let valley = (clamp::ClampKind::of_spec(clamp) == clamp::ClampKind::Freewheel)
            .then(|| {
                spreads
                    .seated
                    .figure(|k, v, t| k.pwm_steady_state(v, t, duty, freq).map(|s| s.min_a))
            })
            .transpose()
            .map_err(err(f, "controller.coil.hold_duty"))?
            .map(|b| b.min);
        super::plan_armature::verdicts(
            f,
            a,
            coil.inductance_tolerance.get() as f32,
            Some(setting),
            valley,
            figures,
            verdicts,
        )?;
    }
    let Some(must_hold) = coil.hold_current else {
        return Ok(());
    };
    let check = "lowest hold current ≥ must-hold current".to_string();
    if clamp::ClampKind::of_spec(clamp) != clamp::ClampKind::Freewheel {
        verdicts.push(Verdict {
            check,
            value: None,
            limit: must_hold.get() as f32,
            unit: "A",
            pass: false,
            note: Some(format!(
                "a PWM hold through a {} is not planned here; hold with a freewheel diode",
                clamp::ClampKind::of_spec(clamp)
            )),
        });
        return Ok(());
    }
    let freq = f.system.pwm_frequency.get() as f32;
    let hold = spreads
        .seated
        .figure(|k, v, t| k.pwm_steady_state(v, t, duty, freq).map(|s| s.min_a))
        .map_err(err(f, "controller.coil.hold_duty"))?;
    let fig = figure("hold current (PWM valley)", "A", &hold, coil_corner);
    verdicts.push(Verdict {
        check,
        value: Some(hold.min),
        limit: must_hold.get() as f32,
        unit: "A",
        pass: hold.min >= must_hold.get() as f32,
        note: Some(format!("lowest at {}", fig.min_text)),
    });
    figures.push(fig);
    Ok(())
}
