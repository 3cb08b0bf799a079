//! The C example's vectors of the armature and motor kernels and of the boost loop: the cases
//! of [`super::vectors`] as `LenzXxxRaw` constants with their steps, replayed with the host
//! build of lenz (every generated result must come out again). Part of
//! [`super::c_vectors::source`]; the step structs are declared in
//! `ffi/examples/c-vectors/vectors.h`.
//!
//! The boost loop's cases whose output fails are left to the Rust images: in the C API the
//! firmware owns the PWM, and the loop's output cannot fail.
//!
//! The example's image for the micro:bit must fit its 256 KiB of flash beside the older
//! kernels' full tables, so each case here keeps its first [`STEPS`] steps (the boost loop's
//! first [`BOOST_STEPS`]): every kernel, configuration and output kind is still run through
//! the C API on each core. The C API is compared with the Rust originals on every step of
//! arbitrary sequences on the host (`ffi/tests/api_motion.rs`), and the kernels themselves run
//! every step on target in the Rust image `check2`.

use std::convert::Infallible;
use std::fmt::Write as _;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::BoostLoop;
use lenz::kernel::{
    BridgeGuardState, BridgeMode, JamState, JamStatus, Motion, MotorFault, MovementState,
    SpeedEstimatorState,
};

use super::c_vectors::{Counts, duty_raw, i32c, same, u32c};
use super::vectors;

/// Steps kept per case (what fits the micro:bit's 256 KiB beside the other kernels' vectors and
/// the library with every driver; every step is checked on the host and in the Rust images).
const STEPS: usize = 24;
/// Steps kept of the boost loop's case (its soft start).
const BOOST_STEPS: usize = 96;

/// `LENZ_MOTION_KIND_*` and the tick of a verdict.
fn motion_codes(m: Motion) -> (u8, u32) {
    match m {
        Motion::Idle => (0, 0),
        Motion::Waiting => (1, 0),
        Motion::Moving => (2, 0),
        Motion::Seated { tick } => (3, tick),
        Motion::NoMotion => (4, 0),
        Motion::Decaying => (5, 0),
        Motion::DroppedOut { tick } => (6, tick),
        Motion::NoDropOut => (7, 0),
    }
}

/// `LENZ_JAM_STATUS_*`.
fn jam_code(s: JamStatus) -> u8 {
    match s {
        JamStatus::Idle => 0,
        JamStatus::Blanking => 1,
        JamStatus::Running => 2,
        JamStatus::Fault(MotorFault::Jam) => 3,
        JamStatus::Fault(MotorFault::Overload) => 4,
        JamStatus::Fault(MotorFault::OpenWinding) => 5,
    }
}

/// `LENZ_BRIDGE_MODE_*`.
fn mode_code(m: BridgeMode) -> u8 {
    match m {
        BridgeMode::Coast => 0,
        BridgeMode::Forward => 1,
        BridgeMode::Reverse => 2,
        BridgeMode::Brake => 3,
    }
}

/// The table of `name`'s cases: `CASE_TYPE NAME_CASES[]` and its count, from one line per case.
fn table(c: &mut String, ty: &str, name: &str, lines: &[String]) {
    let _ = writeln!(c, "const {ty} {name}_CASES[] = {{");
    for l in lines {
        let _ = writeln!(c, "  {l},");
    }
    let _ = writeln!(
        c,
        "}};\nconst uint32_t {name}_CASE_COUNT = {}u;\n",
        lines.len()
    );
}

/// A PWM taking every write, of the loop's resolution (the C API's stand-in).
struct Pwm(u16);

impl ErrorType for Pwm {
    type Error = Infallible;
}

impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        self.0
    }

    fn set_duty_cycle(&mut self, _: u16) -> Result<(), Infallible> {
        Ok(())
    }
}

/// Appends the tables of the movement detector, speed estimator, jam detector, bridge guard
/// and boost loop to `c`.
///
/// # Errors
///
/// A replay did not reproduce a generated result.
pub(super) fn append(c: &mut String, n: &mut Counts) -> Result<(), String> {
    // Movement detector.
    let mut lines = Vec::new();
    for (i, case) in vectors::movement::CASES.iter().enumerate() {
        use vectors::movement::Cmd;
        let mut s = MovementState::new();
        let _ = write!(c, "static const MovementStep MOVEMENT_{i}[] = {{");
        for (k, &(cmd, current, want)) in case.steps.iter().take(STEPS).enumerate() {
            match cmd {
                Cmd::Start => case.config.start(&mut s),
                Cmd::Release => case.config.release(&mut s),
                Cmd::None => {}
            }
            same("movement", i, k, case.config.update(&mut s, current), want)?;
            let (kind, tick) = motion_codes(want);
            let code = match cmd {
                Cmd::None => 0,
                Cmd::Start => 1,
                Cmd::Release => 2,
            };
            let _ = write!(c, "{{{}, {}, {code}, {kind}}}, ", i32c(current), u32c(tick));
        }
        c.push_str("};\n");
        let r = case.config.raw();
        lines.push(format!(
            "{{ {{ .hysteresis_ua = {}, .persistence = {}, .min_peak_ua = {}, .min_release_ua = {}, .deadline_ticks = {}, .release_deadline_ticks = {} }}, {}u, MOVEMENT_{i} }}",
            i32c(r.hysteresis_ua),
            r.persistence,
            i32c(r.min_peak_ua),
            i32c(r.min_release_ua),
            u32c(r.deadline_ticks),
            u32c(r.release_deadline_ticks),
            case.steps.len().min(STEPS)
        ));
        n.steps += case.steps.len().min(STEPS);
    }
    n.cases += lines.len();
    table(c, "MovementCase", "MOVEMENT", &lines);

    // Speed estimator.
    let mut lines = Vec::new();
    for (i, case) in vectors::speed::CASES.iter().enumerate() {
        let mut s = SpeedEstimatorState::with_current_ua(case.start.0, case.start.1);
        let _ = write!(c, "static const SpeedStep SPEED_{i}[] = {{");
        for (k, &(duty, supply, current, want)) in case.steps.iter().take(STEPS).enumerate() {
            let got = match duty {
                Some(d) => case.config.update(&mut s, d, supply, current),
                None => case.config.hold(&mut s, current),
            };
            same("speed", i, k, got, want)?;
            let _ = write!(
                c,
                "{{{}, {}, {}, {}, {}}}, ",
                i32c(duty.unwrap_or(0)),
                i32c(supply),
                i32c(current),
                i32c(want),
                u8::from(duty.is_none())
            );
        }
        c.push_str("};\n");
        let r = case.config.raw();
        lines.push(format!(
            "{{ {{ .gain_end_q24 = {}, .gain_start_q24 = {}, .inv_k_q16 = {}, .filter_q31 = {} }}, {}, {}, {}u, SPEED_{i} }}",
            i32c(r.gain_end_q24),
            i32c(r.gain_start_q24),
            i32c(r.inv_k_q16),
            i32c(r.filter_q31),
            i32c(case.start.0),
            i32c(case.start.1),
            case.steps.len().min(STEPS)
        ));
        n.steps += case.steps.len().min(STEPS);
    }
    n.cases += lines.len();
    table(c, "SpeedCase", "SPEED", &lines);

    // Jam detector.
    let mut lines = Vec::new();
    for (i, case) in vectors::jam::CASES.iter().enumerate() {
        let mut s = JamState::new();
        let _ = write!(c, "static const JamStep JAM_{i}[] = {{");
        for (k, &(duty, current, speed, want)) in case.steps.iter().take(STEPS).enumerate() {
            same(
                "jam",
                i,
                k,
                case.config.update(&mut s, duty, current, speed),
                want,
            )?;
            let _ = write!(
                c,
                "{{{}, {}, {}, {}}}, ",
                i32c(duty),
                i32c(current),
                i32c(speed),
                jam_code(want)
            );
        }
        c.push_str("};\n");
        let r = case.config.raw();
        lines.push(format!(
            "{{ {{ .jam_current_ua = {}, .jam_speed_mrad_s = {}, .persist_ticks = {}, .blank_ticks = {}, .overload_current_ua = {}, .overload_ticks = {}, .open_current_ua = {}, .open_duty_q16 = {} }}, {}u, JAM_{i} }}",
            i32c(r.jam_current_ua),
            i32c(r.jam_speed_mrad_s),
            u32c(r.persist_ticks),
            u32c(r.blank_ticks),
            i32c(r.overload_current_ua),
            u32c(r.overload_ticks),
            i32c(r.open_current_ua),
            i32c(r.open_duty_q16),
            case.steps.len().min(STEPS)
        ));
        n.steps += case.steps.len().min(STEPS);
    }
    n.cases += lines.len();
    table(c, "JamCase", "JAM", &lines);

    // Bridge guard.
    let mut lines = Vec::new();
    for (i, case) in vectors::bridge::CASES.iter().enumerate() {
        let mut s = BridgeGuardState::new();
        let _ = write!(c, "static const BridgeStep BRIDGE_{i}[] = {{");
        for (k, &(req, speed, want)) in case.steps.iter().take(STEPS).enumerate() {
            same("bridge", i, k, case.config.update(&mut s, req, speed), want)?;
            let _ = write!(
                c,
                "{{{}, {}, {}, {}}}, ",
                i32c(req),
                i32c(speed),
                i32c(want.duty_q16),
                mode_code(want.mode)
            );
        }
        c.push_str("};\n");
        let r = case.config.raw();
        lines.push(format!(
            "{{ {{ .slew_q16 = {}, .brake_speed_mrad_s = {}, .reverse_speed_mrad_s = {}, .dead_ticks = {}, .probe_ticks = {}, .resume_duty_q24 = {}, .resume_margin_mrad_s = {} }}, {}u, BRIDGE_{i} }}",
            i32c(r.slew_q16),
            i32c(r.brake_speed_mrad_s),
            i32c(r.reverse_speed_mrad_s),
            r.dead_ticks,
            r.probe_ticks,
            i32c(r.resume_duty_q24),
            i32c(r.resume_margin_mrad_s),
            case.steps.len().min(STEPS)
        ));
        n.steps += case.steps.len().min(STEPS);
    }
    n.cases += lines.len();
    table(c, "BridgeCase", "BRIDGE", &lines);

    // Boost loop: the cases whose output never fails.
    let mut lines = Vec::new();
    for (i, case) in vectors::boost_driver::CASES.iter().enumerate() {
        if case.steps.iter().any(|s| s.0.1) {
            continue;
        }
        let pwm = Pwm(case.config.limiter().full_scale());
        let mut lp = BoostLoop::new(&case.config, pwm)
            .map_err(|_| format!("boost_driver case {i}: the loop did not start"))?;
        let _ = write!(c, "static const BoostStep BOOST_{i}[] = {{");
        for (k, &((enable, _, vin, vout), want, written)) in
            case.steps.iter().take(BOOST_STEPS).enumerate()
        {
            let got = lp.update(enable, vin, vout).ok();
            same("boost_driver", i, k, (got, got), (want, Some(written)))?;
            let _ = write!(
                c,
                "{{{vin}, {vout}, {written}, {}, {}}}, ",
                u8::from(enable),
                u8::from(lp.overvoltage())
            );
        }
        c.push_str("};\n");
        lines.push(format!(
            "{{ {}, {}u, BOOST_{i} }}",
            boost_raw(&case.config.raw()),
            case.steps.len().min(BOOST_STEPS)
        ));
        n.steps += case.steps.len().min(BOOST_STEPS);
    }
    if lines.is_empty() {
        return Err("boost_driver: no case without an output failure".to_string());
    }
    n.cases += lines.len();
    table(c, "BoostCase", "BOOST", &lines);
    Ok(())
}

fn boost_raw(r: &lenz::drive::BoostLoopRaw) -> String {
    format!(
        "{{ .limiter = {}, .target_counts = {}, .kp_q16 = {}, .ki_q16 = {} }}",
        duty_raw(&r.limiter),
        r.target_counts,
        i32c(r.kp_q16),
        i32c(r.ki_q16)
    )
}
