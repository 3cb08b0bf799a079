//! Each kernel's and driver's raw values as a [`Value`] tree (one function per `Raw` struct;
//! field names as in `core` and in the C header `ffi/include/lenz.h`).

use lenz::drive::{BoostLoopRaw, CoilDriverRaw, HoldEstimatorRaw, HoldMode, PullInSource};
use lenz::kernel::{
    DutyLimiterRaw, EstimatorRaw, InverseTable, MonitorRaw, MovementRaw, OffPath, SenseScale,
    TrackingOffTimerRaw, TripRaw,
};

use super::value::{Struct, Value, i, ints, u, uints};

fn s(x: Struct) -> Value {
    Value::Struct(x)
}

/// [`SenseScale`].
#[must_use]
pub fn sense(r: &SenseScale) -> Value {
    s(Struct::new("lenz::kernel::SenseScale", "LenzSenseScale")
        .f("offset_counts", i(r.offset_counts))
        .f("ua_per_count_q16", i(r.ua_per_count_q16))
        .f("min_valid_counts", u(r.min_valid_counts))
        .f("max_valid_counts", u(r.max_valid_counts)))
}

fn off_path(r: &OffPath) -> Value {
    s(Struct::new("lenz::kernel::OffPath", "LenzOffPath")
        .f("step_q31", i(r.step_q31))
        .f("conductance_q16", i(r.conductance_q16))
        .f("clamp_mv", i(r.clamp_mv))
        .f("supply_coupled", Value::Bool(r.supply_coupled)))
}

/// [`EstimatorRaw`].
#[must_use]
pub fn estimator(r: &EstimatorRaw) -> Value {
    s(
        Struct::new("lenz::kernel::EstimatorRaw", "LenzEstimatorRaw")
            .f("on_step_q31", i(r.on_step_q31))
            .f("on_conductance_q16", i(r.on_conductance_q16))
            .f("switch_drop_mv", i(r.switch_drop_mv))
            .f("off", off_path(&r.off)),
    )
}

/// [`TrackingOffTimerRaw`].
#[must_use]
pub fn off_timer(r: &TrackingOffTimerRaw) -> Value {
    s(Struct::new(
        "lenz::kernel::TrackingOffTimerRaw",
        "LenzTrackingOffTimerRaw",
    )
    .f("estimator", estimator(&r.estimator))
    .f("threshold_ua", i(r.threshold_ua))
    .f("base_margin_ua", i(r.base_margin_ua))
    .f("margin_shift", u(r.margin_shift)))
}

/// [`MonitorRaw`].
#[must_use]
pub fn monitor(r: &MonitorRaw) -> Value {
    s(Struct::new("lenz::kernel::MonitorRaw", "LenzMonitorRaw")
        .f("scale", sense(&r.scale))
        .f("abs_tol_ua", i(r.abs_tol_ua))
        .f("rel_tol_q16", i(r.rel_tol_q16))
        .f("open_min_estimate_ua", i(r.open_min_estimate_ua))
        .f("open_max_ua", i(r.open_max_ua))
        .f("persistence", u(r.persistence))
        .f("stuck_samples", u(r.stuck_samples))
        .f("stuck_min_change_ua", i(r.stuck_min_change_ua)))
}

fn inverse_table(r: &InverseTable) -> Value {
    s(
        Struct::new("lenz::kernel::InverseTable", "LenzInverseTable")
            .f("m_scale_q32", u(r.m_scale_q32))
            .f("rate_q32", uints(&r.rate_q32))
            .f("reset_q32", u(r.reset_q32))
            .f("instant_reset", Value::Bool(r.instant_reset)),
    )
}

/// [`TripRaw`].
#[must_use]
pub fn trip(r: &TripRaw) -> Value {
    s(Struct::new("lenz::kernel::TripRaw", "LenzTripRaw")
        .f("instantaneous_counts", u(r.instantaneous_counts))
        .f("full_scale_counts", u(r.full_scale_counts))
        .f("blank_samples", u(r.blank_samples))
        .f("persistence_n", u(r.persistence_n))
        .f("persistence_m", u(r.persistence_m))
        .f("stuck_samples", u(r.stuck_samples))
        .f("retries", u(r.retries))
        .f("retry_samples", u(r.retry_samples))
        .f("block_log2", u(r.block_log2))
        .f("inverse_table", inverse_table(&r.inverse_table))
        .f("x2_mul", u(r.x2_mul))
        .f("x2_shift", u(r.x2_shift))
        .f("thermal_step_q32", u(r.thermal_step_q32))
        .f("table_error_ppm", u(r.table_error_ppm)))
}

fn hold(r: &HoldEstimatorRaw) -> Value {
    s(
        Struct::new("lenz::drive::HoldEstimatorRaw", "LenzHoldEstimatorRaw")
            .f("step_q31", i(r.step_q31))
            .f("conductance_q16", i(r.conductance_q16))
            .f("reference_duty_q16", u(r.reference_duty_q16))
            .f("delta_r_q24", i(r.delta_r_q24))
            .f("error_bound_ua", i(r.error_bound_ua)),
    )
}

fn movement(r: &MovementRaw) -> Value {
    // The C API plans no movement detector: Rust only.
    s(Struct::new("lenz::kernel::MovementRaw", "")
        .f("hysteresis_ua", i(r.hysteresis_ua))
        .f("persistence", u(r.persistence))
        .f("min_peak_ua", i(r.min_peak_ua))
        .f("min_release_ua", i(r.min_release_ua))
        .f("deadline_ticks", u(r.deadline_ticks))
        .f("release_deadline_ticks", u(r.release_deadline_ticks)))
}

/// [`CoilDriverRaw`].
#[must_use]
pub fn coil_driver(r: &CoilDriverRaw) -> Value {
    let source = match r.pull_in_source {
        PullInSource::Estimate => Value::Variant {
            rust: "lenz::drive::PullInSource::Estimate",
            c: 0,
        },
        PullInSource::Measured => Value::Variant {
            rust: "lenz::drive::PullInSource::Measured",
            c: 1,
        },
    };
    let mode = match r.hold_mode {
        HoldMode::Duty => Value::Variant {
            rust: "lenz::drive::HoldMode::Duty",
            c: 0,
        },
        HoldMode::Current => Value::Variant {
            rust: "lenz::drive::HoldMode::Current",
            c: 1,
        },
    };
    s(
        Struct::new("lenz::drive::CoilDriverRaw", "LenzCoilDriverRaw")
            .f("off_timer", off_timer(&r.off_timer))
            .f("hold", hold(&r.hold))
            .f("monitor", monitor(&r.monitor))
            .f("trip", trip(&r.trip))
            .f("supply_zero_counts", u(r.supply_zero_counts))
            .f("supply_mv_per_count_q16", i(r.supply_mv_per_count_q16))
            .f("pull_in_ua", i(r.pull_in_ua))
            .f2(Some("pull_in_source"), Some("pull_in_measured"), source)
            .f("pull_in_min_ticks", u(r.pull_in_min_ticks))
            .f("pull_in_max_ticks", u(r.pull_in_max_ticks))
            .f2(Some("hold_mode"), Some("hold_regulated"), mode)
            .f("hold_current_ua", i(r.hold_current_ua))
            .f("hold_kp_q32", i(r.hold_kp_q32))
            .f("hold_ki_q32", i(r.hold_ki_q32))
            .f2(
                Some("movement"),
                None,
                Value::Optional(r.movement.as_ref().map(|m| Box::new(movement(m)))),
            ),
    )
}

/// [`DutyLimiterRaw`].
#[must_use]
pub fn duty_limiter(r: &DutyLimiterRaw) -> Value {
    s(
        Struct::new("lenz::kernel::DutyLimiterRaw", "LenzDutyLimiterRaw")
            .f("vin_lo_counts", u(r.vin_lo_counts))
            .f("vin_hi_counts", u(r.vin_hi_counts))
            .f("shift", u(r.shift))
            .f("saturation_q8", ints(&r.saturation_q8))
            .f("gain_peak_q8", ints(&r.gain_peak_q8))
            .f("light_load_q8", ints(&r.light_load_q8))
            .f("min_off_q8", i(r.min_off_q8))
            .f("min_on_counts", u(r.min_on_counts))
            .f("full_scale", u(r.full_scale))
            .f("slew_q8", i(r.slew_q8))
            .f("vout_lo_counts", u(r.vout_lo_counts))
            .f("vout_hi_counts", u(r.vout_hi_counts))
            .f("ov_trip_counts", u(r.ov_trip_counts))
            .f("ov_resume_counts", u(r.ov_resume_counts)),
    )
}

/// [`BoostLoopRaw`].
#[must_use]
pub fn boost_loop(r: &BoostLoopRaw) -> Value {
    s(Struct::new("lenz::drive::BoostLoopRaw", "LenzBoostLoopRaw")
        .f("limiter", duty_limiter(&r.limiter))
        .f("target_counts", u(r.target_counts))
        .f("kp_q16", i(r.kp_q16))
        .f("ki_q16", i(r.ki_q16)))
}
