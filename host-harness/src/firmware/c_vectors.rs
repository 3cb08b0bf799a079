//! The on-target vectors as C source for the C firmware example (`ffi/examples/c-vectors`):
//! every case of [`super::vectors`] as a `LenzXxxRaw` constant of the C API with its steps,
//! the inputs and the host's results.
//!
//! Beside each result of the target images' generators, the steps carry what the C example
//! also checks and the generators do not record (the monitor's measured current, the duty
//! limiter's limit and state, the tracking timer's margin, the trip detector's state at the
//! end of each case): computed here by replaying the case with the host build of lenz. The
//! replay must reproduce every generated result, or [`source`] fails.
//!
//! The step structs are declared in `ffi/examples/c-vectors/vectors.h`.

use std::fmt::Write as _;

use lenz::kernel::{
    Cause, DutyLimiterRaw, DutyLimiterState, EstimatorRaw, EstimatorState, Fault, InverseTable,
    MonitorRaw, MonitorState, OffPath, OffStatus, OffTimerState, PlannedOffTimerRaw, SenseScale,
    TrackingOffTimerRaw, TripRaw, TripState, Verdict,
};

use super::vectors;

/// A C `int32_t` literal (`INT32_MIN` has no literal of its own type).
pub(super) fn i32c(v: i32) -> String {
    if v == i32::MIN {
        "INT32_MIN".to_string()
    } else {
        v.to_string()
    }
}

pub(super) fn u32c(v: u32) -> String {
    format!("{v}u")
}

fn list<T: Copy>(v: &[T], f: impl Fn(T) -> String) -> String {
    v.iter().map(|x| f(*x)).collect::<Vec<_>>().join(", ")
}

fn off_path(o: &OffPath) -> String {
    format!(
        "{{ .step_q31 = {}, .conductance_q16 = {}, .clamp_mv = {}, .supply_coupled = {} }}",
        i32c(o.step_q31),
        i32c(o.conductance_q16),
        i32c(o.clamp_mv),
        u8::from(o.supply_coupled)
    )
}

fn estimator_raw(r: &EstimatorRaw) -> String {
    format!(
        "{{ .on_step_q31 = {}, .on_conductance_q16 = {}, .switch_drop_mv = {}, .off = {} }}",
        i32c(r.on_step_q31),
        i32c(r.on_conductance_q16),
        i32c(r.switch_drop_mv),
        off_path(&r.off)
    )
}

fn sense_scale(s: &SenseScale) -> String {
    format!(
        "{{ .offset_counts = {}, .ua_per_count_q16 = {}, .min_valid_counts = {}, .max_valid_counts = {} }}",
        i32c(s.offset_counts),
        i32c(s.ua_per_count_q16),
        s.min_valid_counts,
        s.max_valid_counts
    )
}

fn monitor_raw(r: &MonitorRaw) -> String {
    format!(
        "{{ .scale = {}, .abs_tol_ua = {}, .rel_tol_q16 = {}, .open_min_estimate_ua = {}, .open_max_ua = {}, .persistence = {}, .stuck_samples = {}, .stuck_min_change_ua = {} }}",
        sense_scale(&r.scale),
        i32c(r.abs_tol_ua),
        i32c(r.rel_tol_q16),
        i32c(r.open_min_estimate_ua),
        i32c(r.open_max_ua),
        r.persistence,
        r.stuck_samples,
        i32c(r.stuck_min_change_ua)
    )
}

pub(super) fn duty_raw(r: &DutyLimiterRaw) -> String {
    format!(
        "{{ .vin_lo_counts = {}, .vin_hi_counts = {}, .shift = {}, .saturation_q8 = {{ {} }}, .gain_peak_q8 = {{ {} }}, .light_load_q8 = {{ {} }}, .min_off_q8 = {}, .min_on_counts = {}, .full_scale = {}, .slew_q8 = {}, .vout_lo_counts = {}, .vout_hi_counts = {}, .ov_trip_counts = {}, .ov_resume_counts = {} }}",
        r.vin_lo_counts,
        r.vin_hi_counts,
        r.shift,
        list(&r.saturation_q8, i32c),
        list(&r.gain_peak_q8, i32c),
        list(&r.light_load_q8, i32c),
        i32c(r.min_off_q8),
        r.min_on_counts,
        r.full_scale,
        i32c(r.slew_q8),
        r.vout_lo_counts,
        r.vout_hi_counts,
        r.ov_trip_counts,
        r.ov_resume_counts
    )
}

fn tracking_raw(r: &TrackingOffTimerRaw) -> String {
    format!(
        "{{ .estimator = {}, .threshold_ua = {}, .base_margin_ua = {}, .margin_shift = {} }}",
        estimator_raw(&r.estimator),
        i32c(r.threshold_ua),
        i32c(r.base_margin_ua),
        u32c(r.margin_shift)
    )
}

fn planned_raw(r: &PlannedOffTimerRaw) -> String {
    format!(
        "{{ .breakpoints_ua = {{ {} }}, .ticks = {{ {} }} }}",
        list(&r.breakpoints_ua, i32c),
        list(&r.ticks, u32c)
    )
}

fn inverse_table(t: &InverseTable) -> String {
    format!(
        "{{ .m_scale_q32 = {}, .rate_q32 = {{ {} }}, .reset_q32 = {}, .instant_reset = {} }}",
        u32c(t.m_scale_q32),
        list(&t.rate_q32, u32c),
        u32c(t.reset_q32),
        u8::from(t.instant_reset)
    )
}

fn trip_raw(r: &TripRaw) -> String {
    format!(
        "{{ .instantaneous_counts = {}, .full_scale_counts = {}, .blank_samples = {}, .persistence_n = {}, .persistence_m = {}, .stuck_samples = {}, .retries = {}, .retry_samples = {}, .block_log2 = {}, .inverse_table = {}, .x2_mul = {}, .x2_shift = {}, .thermal_step_q32 = {}, .table_error_ppm = {} }}",
        r.instantaneous_counts,
        r.full_scale_counts,
        r.blank_samples,
        r.persistence_n,
        r.persistence_m,
        r.stuck_samples,
        r.retries,
        r.retry_samples,
        r.block_log2,
        inverse_table(&r.inverse_table),
        u32c(r.x2_mul),
        r.x2_shift,
        u32c(r.thermal_step_q32),
        u32c(r.table_error_ppm)
    )
}

/// `LENZ_FAULT_*` code (the C API's numbering).
fn fault_code(f: Option<Fault>) -> u8 {
    match f {
        None => 0,
        Some(Fault::OpenCoil) => 1,
        Some(Fault::LowResistance) => 2,
        Some(Fault::SensorStuck) => 3,
        Some(Fault::SensorOutOfRange) => 4,
    }
}

fn status_code(s: OffStatus) -> u8 {
    match s {
        OffStatus::NotYet => 0,
        OffStatus::Released => 1,
    }
}

/// `(kind, event tick, event reading, retry, cause)` in the C API's numbering.
fn verdict_codes(v: Verdict) -> (u8, u32, u16, u8, u8) {
    match v {
        Verdict::Allow => (0, 0, 0, 0, 0),
        Verdict::Trip(e) => {
            let cause = match e.cause {
                Cause::Instantaneous => 1,
                Cause::InverseTime => 2,
                Cause::Thermal => 3,
                Cause::SensorFault => 4,
            };
            (1, e.tick, e.reading_counts, e.retry, cause)
        }
        Verdict::Waiting => (2, 0, 0, 0, 0),
        Verdict::Latched => (3, 0, 0, 0, 0),
    }
}

/// Checks a replayed result against the generated one.
pub(super) fn same<T: PartialEq + std::fmt::Debug>(
    kernel: &str,
    case: usize,
    step: usize,
    replayed: T,
    generated: T,
) -> Result<(), String> {
    if replayed == generated {
        Ok(())
    } else {
        Err(format!(
            "{kernel} case {case} step {step}: the replay gives {replayed:?}, the generator {generated:?}"
        ))
    }
}

/// Counts of the generated cases and steps, for the log.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Counts {
    /// Cases (configurations) of every kernel.
    pub cases: usize,
    /// Steps of every case.
    pub steps: usize,
}

/// The C source of every kernel's vectors (`vectors.c` of the example), and the counts.
///
/// # Errors
///
/// Replaying a case with the host build of lenz did not reproduce a generated result.
pub fn source() -> Result<(String, Counts), String> {
    let mut c = String::from(
        "/* Generated by lenz-harness (firmware::c_vectors) from the on-target vectors of\n   \
         benches/target/gen: do not edit. Configurations of the demo coils are invented values. */\n\
         #include \"vectors.h\"\n\n",
    );
    let mut n = Counts::default();

    // Estimator.
    for (i, case) in vectors::estimator::CASES.iter().enumerate() {
        let mut s = EstimatorState::with_current_ua(case.start_ua);
        let _ = write!(c, "static const EstimatorStep ESTIMATOR_{i}[] = {{");
        for (k, &(on, supply_mv, want)) in case.steps.iter().enumerate() {
            same(
                "estimator",
                i,
                k,
                case.config.update(&mut s, on, supply_mv),
                want,
            )?;
            let _ = write!(
                c,
                "{{{}, {}, {}}}, ",
                i32c(supply_mv),
                i32c(want),
                u8::from(on)
            );
        }
        c.push_str("};\n");
        n.steps += case.steps.len();
    }
    c.push_str("const EstimatorCase ESTIMATOR_CASES[] = {\n");
    for (i, case) in vectors::estimator::CASES.iter().enumerate() {
        let _ = writeln!(
            c,
            "  {{ {}, {}, {}u, ESTIMATOR_{i} }},",
            estimator_raw(&case.config.raw()),
            i32c(case.start_ua),
            case.steps.len()
        );
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t ESTIMATOR_CASE_COUNT = {}u;\n",
        vectors::estimator::CASES.len()
    );
    n.cases += vectors::estimator::CASES.len();

    // Monitor.
    for (i, case) in vectors::monitor::CASES.iter().enumerate() {
        let mut s = MonitorState::new();
        let _ = write!(c, "static const MonitorStep MONITOR_{i}[] = {{");
        for (k, &(est, counts, want)) in case.steps.iter().enumerate() {
            same(
                "monitor",
                i,
                k,
                case.config.update(&mut s, est, counts),
                want,
            )?;
            let measured = case.config.scale().to_ua(counts);
            let _ = write!(
                c,
                "{{{}, {}, {counts}, {}}}, ",
                i32c(est),
                i32c(measured),
                fault_code(want)
            );
        }
        c.push_str("};\n");
        n.steps += case.steps.len();
    }
    c.push_str("const MonitorCase MONITOR_CASES[] = {\n");
    for (i, case) in vectors::monitor::CASES.iter().enumerate() {
        let _ = writeln!(
            c,
            "  {{ {}, {}u, MONITOR_{i} }},",
            monitor_raw(&case.config.raw()),
            case.steps.len()
        );
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t MONITOR_CASE_COUNT = {}u;\n",
        vectors::monitor::CASES.len()
    );
    n.cases += vectors::monitor::CASES.len();

    // Duty limiter.
    for (i, case) in vectors::duty::CASES.iter().enumerate() {
        let mut s = DutyLimiterState::new();
        let _ = write!(c, "static const DutyStep DUTY_{i}[] = {{");
        for (k, &(req, vin, vout, want)) in case.steps.iter().enumerate() {
            same(
                "duty",
                i,
                k,
                case.config.update(&mut s, req, vin, vout),
                want,
            )?;
            let _ = write!(
                c,
                "{{{}, {vin}, {vout}, {}, {}, {want}, {}}}, ",
                i32c(req),
                i32c(s.last_q8()),
                i32c(case.config.limit_q8(vin)),
                u8::from(s.overvoltage())
            );
        }
        c.push_str("};\n");
        n.steps += case.steps.len();
    }
    c.push_str("const DutyCase DUTY_CASES[] = {\n");
    for (i, case) in vectors::duty::CASES.iter().enumerate() {
        let _ = writeln!(
            c,
            "  {{ {}, {}u, DUTY_{i} }},",
            duty_raw(&case.config.raw()),
            case.steps.len()
        );
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t DUTY_CASE_COUNT = {}u;\n",
        vectors::duty::CASES.len()
    );
    n.cases += vectors::duty::CASES.len();

    // Tracking off-timer.
    for (i, case) in vectors::offtimer::TRACKING_CASES.iter().enumerate() {
        let mut s = OffTimerState::new();
        let _ = write!(c, "static const TrackingStep TRACKING_{i}[] = {{");
        for (k, &(start, supply_mv, want, est)) in case.steps.iter().enumerate() {
            let margin = match start {
                Some(i0) => {
                    case.timer.start(&mut s, i0);
                    case.timer.margin_ua(i0)
                }
                None => 0,
            };
            let got = case.timer.update(&mut s, supply_mv);
            same("offtimer", i, k, (got, s.estimate_ua()), (want, est))?;
            let _ = write!(
                c,
                "{{{}, {}, {}, {}, {}, {}}}, ",
                i32c(start.unwrap_or(0)),
                i32c(supply_mv),
                i32c(est),
                i32c(margin),
                u8::from(start.is_some()),
                status_code(want)
            );
        }
        c.push_str("};\n");
        n.steps += case.steps.len();
    }
    c.push_str("const TrackingCase TRACKING_CASES[] = {\n");
    for (i, case) in vectors::offtimer::TRACKING_CASES.iter().enumerate() {
        let _ = writeln!(
            c,
            "  {{ {}, {}u, TRACKING_{i} }},",
            tracking_raw(&case.timer.raw()),
            case.steps.len()
        );
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t TRACKING_CASE_COUNT = {}u;\n",
        vectors::offtimer::TRACKING_CASES.len()
    );
    n.cases += vectors::offtimer::TRACKING_CASES.len();

    // Planned off-timer.
    for (i, case) in vectors::offtimer_planned::PLANNED_CASES.iter().enumerate() {
        let mut s = OffTimerState::new();
        let _ = write!(c, "static const PlannedStep PLANNED_{i}[] = {{");
        for (k, &(start, want, left)) in case.steps.iter().enumerate() {
            if let Some(i0) = start {
                case.timer.start(&mut s, i0);
            }
            let got = case.timer.update(&mut s);
            same(
                "offtimer_planned",
                i,
                k,
                (got, s.remaining_ticks()),
                (want, left),
            )?;
            let _ = write!(
                c,
                "{{{}, {}, {}, {}}}, ",
                i32c(start.unwrap_or(0)),
                u32c(left),
                u8::from(start.is_some()),
                status_code(want)
            );
        }
        c.push_str("};\n");
        n.steps += case.steps.len();
    }
    c.push_str("const PlannedCase PLANNED_CASES[] = {\n");
    for (i, case) in vectors::offtimer_planned::PLANNED_CASES.iter().enumerate() {
        let _ = writeln!(
            c,
            "  {{ {}, {}u, PLANNED_{i} }},",
            planned_raw(&case.timer.raw()),
            case.steps.len()
        );
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t PLANNED_CASE_COUNT = {}u;\n",
        vectors::offtimer_planned::PLANNED_CASES.len()
    );
    n.cases += vectors::offtimer_planned::PLANNED_CASES.len();

    // Trip detector.
    let mut ends = Vec::new();
    for (i, case) in vectors::trip::CASES.iter().enumerate() {
        let mut s = TripState::new();
        let _ = write!(c, "static const TripStep TRIP_{i}[] = {{");
        for (k, &(r, on, want)) in case.steps.iter().enumerate() {
            same("trip", i, k, case.config.update(&mut s, r, on), want)?;
            let (kind, tick, reading, retry, cause) = verdict_codes(want);
            let _ = write!(
                c,
                "{{{}, {r}, {reading}, {}, {kind}, {retry}, {cause}}}, ",
                u32c(tick),
                u8::from(on)
            );
        }
        c.push_str("};\n");
        ends.push(s);
        n.steps += case.steps.len();
    }
    c.push_str("const TripCase TRIP_CASES[] = {\n");
    for (i, (case, s)) in vectors::trip::CASES.iter().zip(&ends).enumerate() {
        let _ = writeln!(
            c,
            "  {{ {}, {}u, TRIP_{i}, {{ .tick = {}, .theta_q24 = {}, .inverse_q32 = {}, .retries = {}, .latched = {}, .waiting = {} }} }},",
            trip_raw(&case.config.raw()),
            case.steps.len(),
            u32c(s.tick()),
            u32c(s.theta_q24()),
            u32c(s.inverse_q32()),
            s.retries(),
            s.is_latched(),
            s.is_waiting()
        );
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t TRIP_CASE_COUNT = {}u;\n",
        vectors::trip::CASES.len()
    );
    n.cases += vectors::trip::CASES.len();

    super::c_vectors_motion::append(&mut c, &mut n)?;
    Ok((c, n))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replay_reproduces_every_generated_result_and_writes_every_kernel() {
        let (src, n) = source().unwrap();
        for table in [
            "ESTIMATOR_CASES",
            "MONITOR_CASES",
            "DUTY_CASES",
            "TRACKING_CASES",
            "PLANNED_CASES",
            "TRIP_CASES",
            "MOVEMENT_CASES",
            "SPEED_CASES",
            "JAM_CASES",
            "BRIDGE_CASES",
            "BOOST_CASES",
        ] {
            let prefix = table.strip_suffix("_CASES").unwrap();
            assert!(src.contains(&format!("Case {table}[] = {{")), "{table}");
            assert!(src.contains(&format!("{prefix}_CASE_COUNT = ")), "{table}");
        }
        assert!(n.cases > 30 && n.steps > 10_000, "{n:?}");
        assert_eq!(i32c(i32::MIN), "INT32_MIN");
        assert_eq!(i32c(-5), "-5");
        assert_eq!(u32c(u32::MAX), "4294967295u");
    }
}
