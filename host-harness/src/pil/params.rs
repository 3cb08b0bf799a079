//! The parameter block `lenz sim --firmware` sends to an image: for a file with a
//! `[controller.coil]`, the configuration of [`lenz::drive::CoilDriver`] planned from the
//! file's nominal values at the scenario's coil temperature, as [`CoilDriverRaw`] in
//! postcard's encoding (what the example image `pil/images/src/bin/coil_driver.rs` decodes);
//! for a boost file, an empty block.
//!
//! The plan follows the example valve driver's: pull-in until the estimate reaches the
//! pull-in current after the minimum pull-in time (holding anyway [`PULL_IN_GRACE_S`] later),
//! fixed-duty hold, instantaneous latching trip, readings within [`SENSE_MARGIN_COUNTS`] of
//! either end of the ADC untrusted.

use lenz::drive::{CoilDriverConfig, CoilDriverParams, CoilDriverRaw, Hold, PullInSource};
use lenz::kernel::{MonitorParams, SenseScale, TripParams};

use crate::scenario::run::{RunSetupError, nominal_sensors, turnoff_clamp};
use crate::scenario::{Controller, File};

/// The example images' PWM resolution: 1000 counts (a 20 kHz PWM from a 20 MHz timer clock;
/// invented for the demo).
pub const PWM_MAX_DUTY: u16 = 1000;
/// How long after the minimum pull-in time the driver waits for the pull-in current before
/// it holds anyway, s.
pub const PULL_IN_GRACE_S: f32 = 0.030;
/// Readings this close to either end of the ADC range are not trusted, counts.
pub const SENSE_MARGIN_COUNTS: u16 = 10;

fn err(what: &str) -> impl Fn(lenz::Error) -> RunSetupError + '_ {
    move |e| RunSetupError(format!("{what}: {e}"))
}

/// The coil driver's configuration for `file` at coil temperature `temp_c`.
///
/// # Errors
///
/// The file has no coil controller, or the plan rejects a value (named).
pub fn coil_driver_config(file: &File, temp_c: f64) -> Result<CoilDriverConfig, RunSetupError> {
    let s = &file.system;
    let (Some(coil), Some(clamp), Controller::Coil(c)) = (s.coil, s.clamp, &file.controller) else {
        return Err(RunSetupError(
            "system: a coil controller needs [system.coil] and a clamp".into(),
        ));
    };
    // The system layer's one coil model (the whole loop: winding, switch, source, shunt and a
    // freewheel diode), as the plan, the firmware inputs and the built-in driver use it.
    let model = crate::system::coil::coil_model(file, &coil)?;
    let nominal = nominal_sensors(file);
    let amps_per_count = nominal.current.units_per_count() as f32;
    let max_code = nominal.current.max_code();
    let zero = nominal.current.zero_counts() as f32;
    let current_sense = SenseScale::new(
        amps_per_count,
        zero,
        SENSE_MARGIN_COUNTS,
        max_code.saturating_sub(SENSE_MARGIN_COUNTS),
    )
    .map_err(err("system.sense"))?;
    let full_scale = max_code.saturating_sub(zero.round() as u16);
    let trip_a = c.trip_current.get() as f32;
    let threshold = (trip_a / amps_per_count).ceil();
    if !(threshold >= 1.0 && threshold < f32::from(full_scale)) {
        return Err(RunSetupError(format!(
            "controller.coil.trip_current: {trip_a} A lies outside the current channel's range \
             ({amps_per_count} .. {} A)",
            amps_per_count * f32::from(full_scale)
        )));
    }
    let m = &c.monitor;
    let tick_s = s.tick.get() as f32;
    CoilDriverConfig::new(&CoilDriverParams {
        coil: model,
        temp_c: temp_c as f32,
        tick_s,
        clamp: turnoff_clamp(&clamp),
        supply_v: lenz::Range::new(
            "supply_v",
            s.supply.min.get() as f32,
            s.supply.max.get() as f32,
        )
        .map_err(err("system.supply"))?,
        release_a: coil.release_current.get() as f32,
        pull_in_a: c.pull_in_current.get() as f32,
        pull_in_source: PullInSource::Estimate,
        pull_in_min_s: c.pull_in_min_time.get() as f32,
        pull_in_max_s: c.pull_in_min_time.get() as f32 + PULL_IN_GRACE_S,
        hold: Hold::Duty {
            duty: c.hold_duty.get() as f32,
        },
        pwm_frequency_hz: s.pwm_frequency.get() as f32,
        current_sense,
        supply_v_per_count: nominal.supply.units_per_count() as f32,
        supply_zero_counts: nominal.supply.zero_counts() as f32,
        monitor: MonitorParams {
            abs_tol_a: m.abs_tol.get() as f32,
            rel_tol: m.rel_tol.get() as f32,
            open_min_estimate_a: m.open_min_estimate.get() as f32,
            open_max_a: m.open_max.get() as f32,
            persistence: m.persistence,
            stuck_samples: m.stuck_samples,
            stuck_min_change_a: m.stuck_min_change.get() as f32,
        },
        trip: TripParams {
            sample_period_s: tick_s,
            amps_per_count,
            instantaneous_counts: threshold as u16,
            full_scale_counts: full_scale,
            blanking_s: 0.0,
            persistence_n: 1,
            persistence_m: 1,
            stuck_samples: 0,
            inverse: None,
            thermal: None,
            retries: 0,
            retry_delay_s: 0.0,
        },
    })
    .map_err(err("controller.coil"))
}

/// The parameter block of `file` at coil temperature `temp_c` (module docs).
///
/// # Errors
///
/// The plan rejects a value.
pub fn block(file: &File, temp_c: f64) -> Result<Vec<u8>, RunSetupError> {
    match file.controller {
        Controller::Coil(_) => {
            let raw: CoilDriverRaw = coil_driver_config(file, temp_c)?.raw();
            postcard::to_stdvec(&raw)
                .map_err(|e| RunSetupError(format!("encoding the parameter block: {e}")))
        }
        Controller::Boost(_) | Controller::Motor(_) => Ok(Vec::new()),
        Controller::Own => Err(RunSetupError(
            "key `controller`: a firmware image's parameter block is planned from \
             [controller.coil]; the file has no [controller]"
                .into(),
        )),
    }
}
