//! Kernel configurations as source constants, for chips without an FPU: `lenz emit`.
//!
//! [`constants`] plans, from one system through [`super::FirmwareInputs`] (what firmware
//! computes at init from the nominal description), every configuration the firmware needs:
//! the current estimator, the tracking off-timer, the plausibility monitor and the trip
//! detector, and the coil driver (the example valve driver's plan, the one `lenz sim` runs)
//! for a coil drive; the duty limiter and the boost loop for a boost stage. Each becomes a
//! [`Constant`]: the raw values as a [`Value`] tree and the description values it came from.
//! [`rust::render`] prints Rust `const` items built with the kernels' `const fn from_raw`;
//! [`c::render`] a C header of `static const` initialisers of the C API's `Lenz*Raw` structs.
//! Both print the same values: firmware built from either starts exactly as one that plans at
//! init, without the floating-point code of the plans.

pub mod c;
pub mod raw;
pub mod rust;
pub mod value;

pub use value::{Field, Struct, Value};

use super::{SetupError, System};
use crate::si::format as si;

/// One emitted configuration.
#[derive(Debug, Clone, PartialEq)]
pub struct Constant {
    /// The constant's name, upper case (`EMITTED_` + the kernel).
    pub name: String,
    /// The Rust configuration type the raw values are loaded into with `from_raw`.
    pub rust_config: &'static str,
    /// The raw values.
    pub value: Value,
    /// The description values it came from, one line each.
    pub from: Vec<String>,
}

/// What the emitted file says at its top.
#[derive(Debug, Clone, PartialEq)]
pub struct Emitted {
    /// The scenario file as the user named it.
    pub file: String,
    /// The system's name.
    pub system: String,
    /// The planning temperature, °C.
    pub temp_c: f32,
    /// The description is demo data (its text says its values are invented).
    pub invented: bool,
    /// The constants, in the order firmware needs them.
    pub constants: Vec<Constant>,
}

/// Whether a description's text marks it as invented demo data (the shipped demo files do).
#[must_use]
pub fn says_invented(text: &str) -> bool {
    text.to_ascii_lowercase().contains("invented")
}

/// The firmware's kernel configurations of `system`, planned at its nominal temperature;
/// `invented` as [`says_invented`] of its text.
///
/// # Errors
///
/// A plan rejects a value of the description (named with its key), or the system has
/// neither a coil drive nor a boost stage.
pub fn constants(system: &System, invented: bool) -> Result<Emitted, SetupError> {
    let fw = system.firmware_inputs()?;
    let file = system.description();
    let s = &file.system;
    let mut out = Vec::new();
    let tick = format!("tick {}", si(f64::from(fw.tick_s), "s"));
    if let (Some(c), Some(sc), Some(k)) = (&fw.coil, &s.coil, &s.clamp) {
        let coil = format!(
            "coil {}, {} at {} °C (winding; switch, shunt and source resistance added)",
            si(sc.inductance.get(), "H"),
            si(sc.resistance.get(), "Ω"),
            fw.temp_c
        );
        let clamp = format!(
            "clamp: {}",
            super::ClampKind::of_spec(k).spelling().file_key
        );
        out.push(Constant {
            name: "EMITTED_ESTIMATOR".into(),
            rust_config: "lenz::kernel::EstimatorConfig",
            value: raw::estimator(&c.estimator.raw()),
            from: vec![coil.clone(), clamp.clone(), tick.clone()],
        });
        if let Some(t) = &c.off_timer {
            out.push(Constant {
                name: "EMITTED_OFF_TIMER".into(),
                rust_config: "lenz::kernel::TrackingOffTimerConfig",
                value: raw::off_timer(&t.raw()),
                from: vec![
                    coil.clone(),
                    clamp.clone(),
                    tick.clone(),
                    format!("released below {}", si(f64::from(c.release_a), "A")),
                ],
            });
        }
        let m = &c.settings.monitor;
        out.push(Constant {
            name: "EMITTED_MONITOR".into(),
            rust_config: "lenz::kernel::MonitorConfig",
            value: raw::monitor(&c.monitor.raw()),
            from: vec![
                sense_line(&fw),
                format!(
                    "tolerance {} + {} % of the estimate; open coil: estimate above {}, reading at \
                     or below {} for {} samples",
                    si(f64::from(m.abs_tol_a), "A"),
                    100.0 * m.rel_tol,
                    si(f64::from(m.open_min_estimate_a), "A"),
                    si(f64::from(m.open_max_a), "A"),
                    m.persistence
                ),
                format!(
                    "stuck sensor: {} unchanged samples while the estimate moves by {}",
                    m.stuck_samples,
                    si(f64::from(m.stuck_min_change_a), "A")
                ),
            ],
        });
        out.push(Constant {
            name: "EMITTED_TRIP".into(),
            rust_config: "lenz::kernel::TripConfig",
            value: raw::trip(&c.trip.raw()),
            from: vec![
                sense_line(&fw),
                format!(
                    "instantaneous trip at {} ({} counts), one sample, latching",
                    si(f64::from(c.settings.trip_a), "A"),
                    c.trip_params.instantaneous_counts
                ),
            ],
        });
        if matches!(file.controller, crate::scenario::Controller::Coil(_)) {
            let d = crate::scenario::run::coil_driver(file, f64::from(fw.temp_c))?;
            out.push(Constant {
                name: "EMITTED_COIL_DRIVER".into(),
                rust_config: "lenz::drive::CoilDriverConfig",
                value: raw::coil_driver(&d.driver().raw()),
                from: vec![
                    coil,
                    clamp,
                    format!(
                        "pull-in to {} for at least {}, then hold at duty {}",
                        si(f64::from(c.settings.pull_in_a), "A"),
                        si(f64::from(c.settings.pull_in_min_s), "s"),
                        c.settings.hold_duty
                    ),
                    format!(
                        "supply {} … {} V, PWM {}, {tick}",
                        fw.supply_v.min(),
                        fw.supply_v.max(),
                        si(f64::from(fw.pwm_frequency_hz), "Hz")
                    ),
                    "monitor and trip detector as above".into(),
                ],
            });
        }
    }
    if let (Some(b), Some(sb)) = (&fw.boost, &s.boost) {
        let stage = format!(
            "boost stage {} (DCR {}), saturation {}, diode {}, output {}, PWM {}",
            si(sb.inductance.get(), "H"),
            si(sb.dcr.get(), "Ω"),
            si(sb.saturation_current.get(), "A"),
            si(sb.diode_drop.get(), "V"),
            si(sb.output.get(), "V"),
            si(f64::from(fw.pwm_frequency_hz), "Hz")
        );
        if let (Some(dl), crate::scenario::Controller::Boost(k)) =
            (&b.duty_limiter, &file.controller)
        {
            let limits = format!(
                "input {} … {}, load up to {}, soft start {}, overvoltage cut {} (resume {}), \
                 duty full scale {}",
                si(k.input_min.get(), "V"),
                si(k.input_max.get(), "V"),
                si(k.max_load_current.get(), "A"),
                si(k.soft_start.get(), "s"),
                si(k.overvoltage.get(), "V"),
                si(k.resume.get(), "V"),
                k.duty_full_scale
            );
            out.push(Constant {
                name: "EMITTED_DUTY_LIMITER".into(),
                rust_config: "lenz::kernel::DutyLimiterConfig",
                value: raw::duty_limiter(&dl.raw()),
                from: vec![stage.clone(), limits.clone()],
            });
            let reg = crate::scenario::run::boost_regulator(file, sb, k)?;
            out.push(Constant {
                name: "EMITTED_BOOST_LOOP".into(),
                rust_config: "lenz::drive::BoostLoopConfig",
                value: raw::boost_loop(&reg.driver().raw()),
                from: vec![
                    stage,
                    limits,
                    format!(
                        "kp {} duty per V, ki {} duty per V per tick, {tick}",
                        k.kp.get(),
                        k.ki.get()
                    ),
                ],
            });
        }
    }
    if out.is_empty() {
        return Err(SetupError::new(
            "system: nothing to emit: the firmware kernels need [system.coil] with \
             [system.clamp], or [system.boost] with [controller.boost]",
        ));
    }
    Ok(Emitted {
        file: system.name().to_string(),
        system: s.name.clone(),
        temp_c: fw.temp_c,
        invented,
        constants: out,
    })
}

fn sense_line(fw: &super::FirmwareInputs) -> String {
    format!(
        "current sense {} per count, zero at {} counts, ADC full scale {} counts",
        si(f64::from(fw.sense.amps_per_count), "A"),
        fw.sense.current_zero_counts,
        fw.sense.adc_max_counts
    )
}

/// The lines every emitted file starts with (without comment markers).
pub(crate) fn preamble(e: &Emitted) -> Vec<String> {
    let mut v = vec![
        format!(
            "Kernel configurations of \"{}\" ({}), planned at {} °C by `lenz emit`.",
            e.system, e.file, e.temp_c
        ),
        "Generated: edit the description and emit again rather than editing these values."
            .to_string(),
    ];
    if e.invented {
        v.push(
            "The description is demo data: ALL ITS VALUES ARE INVENTED (no product, no \
             datasheet)."
                .to_string(),
        );
    }
    v.push(
        "CAUTION: switching an inductive load off can produce hundreds of volts; these \
         constants do not replace checking the clamp and the switch on the bench."
            .to_string(),
    );
    v
}
