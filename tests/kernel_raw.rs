//! The raw-constant convention of the motor and armature kernels and of the drivers: a
//! configuration built in a `const` item with `from_raw` (what `lenz emit` writes and firmware
//! keeps in flash), `raw()` giving back exactly what went in, and one getter per raw field
//! reading that field.

use lenz::drive::{BoostLoopConfig, BoostLoopRaw, HoldEstimatorConfig, HoldEstimatorRaw};
use lenz::kernel::{
    BridgeGuardConfig, BridgeGuardRaw, DutyLimiterRaw, JamConfig, JamRaw, MovementConfig,
    MovementRaw, SpeedEstimatorConfig, SpeedEstimatorRaw,
};

/// Distinct values in every field, so a getter reading the wrong field fails.
const MOVEMENT_RAW: MovementRaw = MovementRaw {
    hysteresis_ua: 25_000,
    persistence: 3,
    min_peak_ua: 200_000,
    min_release_ua: 50_000,
    deadline_ticks: 200,
    release_deadline_ticks: 150,
};
const MOVEMENT: MovementConfig = MovementConfig::from_raw(MOVEMENT_RAW);

const SPEED_RAW: SpeedEstimatorRaw = SpeedEstimatorRaw {
    gain_end_q24: 352_000_000,
    gain_start_q24: 327_000_000,
    inv_k_q16: 2_184_533,
    filter_q31: 105_000_000,
};
const SPEED: SpeedEstimatorConfig = SpeedEstimatorConfig::from_raw(SPEED_RAW);

const JAM_RAW: JamRaw = JamRaw {
    jam_current_ua: 5_000_000,
    jam_speed_mrad_s: 20_000,
    persist_ticks: 10,
    blank_ticks: 30,
    overload_current_ua: 2_000_000,
    overload_ticks: 40,
    open_current_ua: 50_000,
    open_duty_q16: 32_768,
};
const JAM: JamConfig = JamConfig::from_raw(JAM_RAW);

const BRIDGE_RAW: BridgeGuardRaw = BridgeGuardRaw {
    slew_q16: 412,
    brake_speed_mrad_s: 61_000,
    reverse_speed_mrad_s: 20_000,
    dead_ticks: 2,
    probe_ticks: 50,
    resume_duty_q24: 2_497_000,
    resume_margin_mrad_s: 40_000,
};
const BRIDGE: BridgeGuardConfig = BridgeGuardConfig::from_raw(BRIDGE_RAW);

const HOLD_RAW: HoldEstimatorRaw = HoldEstimatorRaw {
    step_q31: 5_000_000,
    conductance_q16: 2_048,
    reference_duty_q16: 49_152,
    delta_r_q24: -1_234,
    error_bound_ua: 12_000,
};
const HOLD: HoldEstimatorConfig = HoldEstimatorConfig::from_raw(HOLD_RAW);

#[test]
fn movement_raw_round_trip_and_getters() {
    assert_eq!(MOVEMENT.raw(), MOVEMENT_RAW);
    assert_eq!(MOVEMENT.hysteresis_ua(), MOVEMENT_RAW.hysteresis_ua);
    assert_eq!(MOVEMENT.persistence(), MOVEMENT_RAW.persistence);
    assert_eq!(MOVEMENT.min_peak_ua(), MOVEMENT_RAW.min_peak_ua);
    assert_eq!(MOVEMENT.min_release_ua(), MOVEMENT_RAW.min_release_ua);
    assert_eq!(MOVEMENT.deadline_ticks(), MOVEMENT_RAW.deadline_ticks);
    assert_eq!(
        MOVEMENT.release_deadline_ticks(),
        MOVEMENT_RAW.release_deadline_ticks
    );
}

#[test]
fn speed_raw_round_trip_and_getters() {
    assert_eq!(SPEED.raw(), SPEED_RAW);
    assert_eq!(SPEED.gain_end_q24(), SPEED_RAW.gain_end_q24);
    assert_eq!(SPEED.gain_start_q24(), SPEED_RAW.gain_start_q24);
    assert_eq!(SPEED.inv_k_q16(), SPEED_RAW.inv_k_q16);
    assert_eq!(SPEED.filter_q31(), SPEED_RAW.filter_q31);
}

#[test]
fn jam_raw_round_trip_and_getters() {
    assert_eq!(JAM.raw(), JAM_RAW);
    assert_eq!(JAM.jam_current_ua(), JAM_RAW.jam_current_ua);
    assert_eq!(JAM.jam_speed_mrad_s(), JAM_RAW.jam_speed_mrad_s);
    assert_eq!(JAM.persist_ticks(), JAM_RAW.persist_ticks);
    assert_eq!(JAM.blank_ticks(), JAM_RAW.blank_ticks);
    assert_eq!(JAM.overload_current_ua(), JAM_RAW.overload_current_ua);
    assert_eq!(JAM.overload_ticks(), JAM_RAW.overload_ticks);
    assert_eq!(JAM.open_current_ua(), JAM_RAW.open_current_ua);
    assert_eq!(JAM.open_duty_q16(), JAM_RAW.open_duty_q16);
}

#[test]
fn bridge_raw_round_trip_and_getters() {
    assert_eq!(BRIDGE.raw(), BRIDGE_RAW);
    assert_eq!(BRIDGE.slew_q16(), BRIDGE_RAW.slew_q16);
    assert_eq!(BRIDGE.brake_speed_mrad_s(), BRIDGE_RAW.brake_speed_mrad_s);
    assert_eq!(
        BRIDGE.reverse_speed_mrad_s(),
        BRIDGE_RAW.reverse_speed_mrad_s
    );
    assert_eq!(BRIDGE.dead_ticks(), BRIDGE_RAW.dead_ticks);
    assert_eq!(BRIDGE.probe_ticks(), BRIDGE_RAW.probe_ticks);
}

#[test]
fn hold_estimator_raw_round_trip_and_getters() {
    assert_eq!(HOLD.raw(), HOLD_RAW);
    assert_eq!(HOLD.step_q31(), HOLD_RAW.step_q31);
    assert_eq!(HOLD.conductance_q16(), HOLD_RAW.conductance_q16);
    assert_eq!(HOLD.reference_duty_q16(), HOLD_RAW.reference_duty_q16);
    assert_eq!(HOLD.delta_r_q24(), HOLD_RAW.delta_r_q24);
    assert_eq!(HOLD.error_bound_ua(), HOLD_RAW.error_bound_ua);
}

#[test]
fn boost_loop_raw_round_trip_and_getters() {
    let raw = BoostLoopRaw {
        limiter: DutyLimiterRaw {
            vin_lo_counts: 2_792,
            vin_hi_counts: 3_413,
            shift: 5,
            saturation_q8: [700 << 8; lenz::kernel::DUTY_TABLE_LEN],
            gain_peak_q8: [900 << 8; lenz::kernel::DUTY_TABLE_LEN],
            light_load_q8: [1_000 << 8; lenz::kernel::DUTY_TABLE_LEN],
            min_off_q8: 950 << 8,
            min_on_counts: 3,
            full_scale: 1_000,
            slew_q8: 10 << 8,
            vout_lo_counts: 1,
            vout_hi_counts: 4_094,
            ov_trip_counts: 3_475,
            ov_resume_counts: 3_227,
        },
        target_counts: 2_979,
        kp_q16: 5_243,
        ki_q16: 524,
    };
    let cfg = BoostLoopConfig::from_raw(raw);
    assert_eq!(cfg.raw(), raw);
    assert_eq!(cfg.limiter().raw(), raw.limiter);
    assert_eq!(cfg.target_counts(), raw.target_counts);
    assert_eq!(cfg.kp_q16(), raw.kp_q16);
    assert_eq!(cfg.ki_q16(), raw.ki_q16);
}
