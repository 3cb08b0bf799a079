//! The demo system of the closed-loop checks: the greenhouse controller's 24 V irrigation
//! valve and 12 V vent relay. All values here are invented for the demo.
//!
//! - Valve: 120 mH, 32 Ω at 20 °C (copper), first-order thermal path 25 K/W, 15 J/K; freewheel
//!   diode 0.7 V; switch 0.1 Ω, breakdown 66 V, rated 60 V; supply 24 V (21.6 … 26.4 V) with
//!   0.2 Ω source resistance; 10 mΩ shunt.
//! - Relay: 0.3 H, 120 Ω at 20 °C, same switch and diode, 12 V supply.
//! - Sense chain: 12-bit ADC, 3.3 V reference; current through the shunt and a gain-20
//!   amplifier with a 100-count bias (4.028 mA per count, 16.5 A full scale), +0.5 % gain and
//!   1 mV offset error, 0.7 LSB noise; supply through an 11:1 divider, output (switch node)
//!   through a 40:1 divider.
//! - Timing: 10 kHz control tick, 20 kHz PWM, sampling 20 µs into the tick.
//! - Heater rail: the boost stage of CHECKS section 3 at 500 kHz with its PI regulator.

use super::{AdcChannel, Limits, LoopConfig, Release, Sensors};
use crate::controllers::{
    BoostPlan, BoostRegulatorConfig, PULL_IN_GRACE_S, PWM_MAX_DUTY, ValveDriverConfig, ValvePlan,
};
use crate::demo::{
    DIODE_DROP_V, RELAY_INDUCTANCE_H, RELAY_RESISTANCE_OHM, VALVE_INDUCTANCE_H,
    VALVE_RESISTANCE_OHM,
};
use crate::faults::FaultAt;
use crate::plant::{
    Boost, BoostSpec, Clamp, CoilDrive, CoilDriveSpec, CoilSpec, InductanceCurve, SwitchSpec,
    Thermal,
};
use lenz::Error;
use lenz::kernel::{DutyLimiterParams, MonitorParams};

/// Valve supply, V.
pub const VALVE_SUPPLY_V: f64 = 24.0;
/// Relay supply, V.
pub const RELAY_SUPPLY_V: f64 = 12.0;
/// Valve supply range, V (24 V ± 10 %).
pub const VALVE_SUPPLY_RANGE_V: (f32, f32) = (21.6, 26.4);
/// Relay supply range, V (12 V −5 % … +10 %).
pub const RELAY_SUPPLY_RANGE_V: (f32, f32) = (11.4, 13.2);
/// Minimum pull-in time of the demo drivers (armature travel), s.
pub const PULL_IN_MIN_S: f32 = 0.030;
/// Control tick, ns (10 kHz).
pub const TICK_NS: u64 = 100_000;
/// PWM period, ns (20 kHz).
pub const PWM_NS: u64 = 50_000;

fn coil_drive(l_h: f64, r20: f64, temp_c: f64, supply_v: f64, clamp: Clamp) -> CoilDrive {
    let spec = CoilDriveSpec {
        coil: CoilSpec {
            curve: InductanceCurve::Linear { l_h },
            r20_ohm: r20,
            alpha20_per_k: f64::from(lenz::coil::COPPER_ALPHA20_PER_K),
            temp_c,
            thermal: Some(Thermal {
                r_th_k_per_w: 25.0,
                c_th_j_per_k: 15.0,
                ambient_c: temp_c,
            }),
        },
        clamp,
        switch: SwitchSpec {
            on_resistance_ohm: 0.1,
            breakdown_v: 66.0,
        },
        supply_v,
        source_resistance_ohm: 0.2,
        shunt_ohm: 0.010,
    };
    // The demo values are valid by construction; a failure here is a programming error in
    // this file, caught by every closed-loop test.
    CoilDrive::new(spec).unwrap_or_else(|e| unreachable!("demo plant: {e}"))
}

/// The valve at coil temperature `temp_c` and supply `supply_v`, with clamp `clamp`.
#[must_use]
pub fn valve_plant(temp_c: f64, supply_v: f64, clamp: Clamp) -> CoilDrive {
    coil_drive(
        VALVE_INDUCTANCE_H,
        VALVE_RESISTANCE_OHM,
        temp_c,
        supply_v,
        clamp,
    )
}

/// The relay at coil temperature `temp_c` and supply `supply_v`.
#[must_use]
pub fn relay_plant(temp_c: f64, supply_v: f64) -> CoilDrive {
    coil_drive(
        RELAY_INDUCTANCE_H,
        RELAY_RESISTANCE_OHM,
        temp_c,
        supply_v,
        DIODE,
    )
}

/// The freewheel diode of the demo.
pub const DIODE: Clamp = Clamp::Freewheel { vf_v: DIODE_DROP_V };

/// The sense channels (true converter, with its errors).
#[must_use]
pub fn sensors() -> Sensors {
    let adc = |volts_per_unit, bias_v, gain_error, noise| AdcChannel {
        bits: 12,
        vref_v: 3.3,
        volts_per_unit,
        bias_v,
        gain_error,
        offset_error_v: 0.001,
        noise_rms_lsb: noise,
    };
    Sensors {
        current: adc(0.010 * 20.0, 100.0 * 3.3 / 4096.0, 0.005, 0.7),
        supply: adc(1.0 / 11.0, 0.0, 0.003, 0.5),
        output: adc(1.0 / 40.0, 0.0, 0.003, 0.5),
    }
}

/// What the firmware assumes about a channel: the nominal chain, no errors.
#[must_use]
pub fn nominal(ch: &AdcChannel) -> AdcChannel {
    AdcChannel {
        gain_error: 0.0,
        offset_error_v: 0.0,
        noise_rms_lsb: 0.0,
        ..*ch
    }
}

/// The driver plan for a coil of `l_h`, `r20_ohm` (the firmware's model: winding plus switch
/// and shunt; it measures the supply at the terminal, after the source resistance), with the
/// demo's freewheel diode, releasing below `release_a`.
///
/// # Errors
///
/// The plan errors of [`ValveDriverConfig::new`].
pub fn driver_plan(
    l_h: f32,
    r20_ohm: f32,
    temp_c: f32,
    pull_in_a: f32,
    hold_duty: f32,
    trip_threshold_a: f32,
    release_a: f32,
) -> Result<ValveDriverConfig, Error> {
    driver_plan_with_clamp(
        l_h,
        r20_ohm,
        temp_c,
        pull_in_a,
        hold_duty,
        trip_threshold_a,
        release_a,
        VALVE_SUPPLY_RANGE_V,
        lenz::turnoff::Clamp::Diode {
            forward_v: DIODE_DROP_V as f32,
        },
    )
}

/// [`driver_plan`] over another supply range (min, max, V) and with another clamp (the
/// firmware's view of the plant's clamp).
///
/// # Errors
///
/// The plan errors of [`ValveDriverConfig::new`].
#[allow(clippy::too_many_arguments)] // the demo's plan knobs, each named at the call site
pub fn driver_plan_with_clamp(
    l_h: f32,
    r20_ohm: f32,
    temp_c: f32,
    pull_in_a: f32,
    hold_duty: f32,
    trip_threshold_a: f32,
    release_a: f32,
    supply_v: (f32, f32),
    clamp: lenz::turnoff::Clamp,
) -> Result<ValveDriverConfig, Error> {
    let coil = lenz::CoilParams::new(l_h, r20_ohm)
        .with_switch_resistance_ohm(0.1)
        .with_shunt_resistance_ohm(0.010)
        .with_diode_drop_v(DIODE_DROP_V as f32)
        .validate()?;
    let s = sensors();
    let supply = lenz::Range::new("supply_v", supply_v.0, supply_v.1)?;
    ValveDriverConfig::new(&ValvePlan {
        coil,
        temp_c,
        tick_s: TICK_NS as f32 * 1e-9,
        clamp,
        supply_v: supply,
        release_a,
        pull_in_a,
        pull_in_min_s: PULL_IN_MIN_S,
        pull_in_max_s: PULL_IN_MIN_S + PULL_IN_GRACE_S,
        hold_duty,
        pwm_frequency_hz: 1e9 / PWM_NS as f32,
        pwm_max_duty: PWM_MAX_DUTY,
        current_adc: nominal(&s.current),
        supply_adc: nominal(&s.supply),
        monitor: MonitorParams {
            abs_tol_a: 0.05,
            rel_tol: 0.2,
            open_min_estimate_a: 0.1,
            open_max_a: 0.02,
            persistence: 3,
            stuck_samples: 50,
            stuck_min_change_a: 0.1,
        },
        trip_threshold_a,
        movement: None,
    })
}

/// The valve driver planned at `temp_c`: pull-in ends at 0.54 A (the 0.45 A pull-in current
/// with 20 % margin) after at least 30 ms, hold at 45 % duty (about 0.33 A), instantaneous
/// trip at 2 A, re-energize only after the off-timer confirms 75 mA.
///
/// # Errors
///
/// The plan errors of [`ValveDriverConfig::new`].
pub fn valve_driver(temp_c: f32) -> Result<ValveDriverConfig, Error> {
    driver_plan(
        VALVE_INDUCTANCE_H as f32,
        VALVE_RESISTANCE_OHM as f32,
        temp_c,
        0.54,
        0.45,
        2.0,
        0.075,
    )
}

/// The relay driver planned at `temp_c`: pull-in to 90 mA (75 mA must-operate plus 20 %),
/// hold at 55 % duty, instantaneous trip at 0.5 A, release below 10 mA.
///
/// # Errors
///
/// The plan errors of [`ValveDriverConfig::new`].
pub fn relay_driver(temp_c: f32) -> Result<ValveDriverConfig, Error> {
    driver_plan_with_clamp(
        RELAY_INDUCTANCE_H as f32,
        RELAY_RESISTANCE_OHM as f32,
        temp_c,
        0.090,
        0.55,
        0.5,
        0.010,
        RELAY_SUPPLY_RANGE_V,
        lenz::turnoff::Clamp::Diode {
            forward_v: DIODE_DROP_V as f32,
        },
    )
}

/// The valve's limits: switch rated 60 V and 10 mJ per switch-off, clamp diode 100 mJ, 10 A
/// pulse current, trip within 10 ms, release to 75 mA (10 % of 0.75 A) within 12 ms,
/// estimator within 30 mA.
#[must_use]
pub fn valve_limits() -> Limits {
    Limits {
        switch_voltage_rating_v: Some(60.0),
        clamp_energy_rating_j: Some(0.100),
        switch_energy_rating_j: Some(0.010),
        switch_current_limit_a: Some(10.0),
        trip_latency_max_s: Some(0.010),
        release: Some(Release {
            current_a: 0.075,
            max_s: 0.012,
        }),
        output_band: None,
        estimator_error_max_a: Some(0.030),
        ..Limits::default()
    }
}

/// A valve run: `duration_s` long, demand schedule `demand`, faults `faults`.
#[must_use]
pub fn valve_loop(duration_s: f64, demand: Vec<(f64, bool)>, faults: Vec<FaultAt>) -> LoopConfig {
    LoopConfig {
        tick_ns: TICK_NS,
        pwm_period_ns: PWM_NS,
        duration_ns: (duration_s * 1e9).round() as u64,
        sample_offset_ns: 20_000,
        sensors: sensors(),
        seed: 0x5eed,
        demand,
        motor_commands: Vec::new(),
        faults,
        limits: valve_limits(),
        record_every: 1,
    }
}

/// Boost switching period, ns (500 kHz).
pub const BOOST_PWM_NS: u64 = 2_000;

/// The heater rail of CHECKS section 3 (invented demo values): 5 V → 12 V, 10 µH with
/// 40 mΩ DCR, switch 25 mΩ, diode 0.35 V, 22 µF with 5 mΩ ESR, 24 Ω heater; input 5 V behind
/// 20 mΩ. Output precharged through the diode (the input was up before the rail is enabled).
#[must_use]
pub fn heater_rail(input_v: f64, load_ohm: f64) -> Boost {
    let mut b = Boost::new(BoostSpec {
        inductor: InductanceCurve::Linear { l_h: 10e-6 },
        dcr_ohm: 0.040,
        switch_on_resistance_ohm: 0.025,
        diode_drop_v: 0.35,
        output_c_f: 22e-6,
        esr_ohm: 0.005,
        load_ohm,
        input_v,
        source_resistance_ohm: 0.020,
    })
    .unwrap_or_else(|e| unreachable!("demo boost: {e}"));
    b.settle_off();
    b
}

/// Boost sense channels: inductor current through the same shunt chain as the valve; input
/// through a 2:1 divider (6.6 V full scale), output through 7.5:1 (24.75 V full scale).
#[must_use]
pub fn boost_sensors() -> Sensors {
    let s = sensors();
    Sensors {
        current: s.current,
        supply: AdcChannel {
            volts_per_unit: 0.5,
            ..s.supply
        },
        output: AdcChannel {
            volts_per_unit: 1.0 / 7.5,
            ..s.output
        },
    }
}

/// The regulator plan: the heater rail stage with its 2 A inductor and 100 ns / 80 ns switch
/// times, input window 4 … 6 V, 0.5 A heaviest load, light load 50 mA with the output kept
/// below 20 V, 10 ms soft start, overvoltage cut at 14 V (resume at 13 V); PI gains
/// 0.005 duty/V and 0.001 duty/V per tick (a crossover near 50 Hz, far below the 10.7 kHz LC
/// resonance).
///
/// # Errors
///
/// The plan errors of [`BoostRegulatorConfig::new`].
pub fn boost_regulator(bypass_limiter: bool) -> Result<BoostRegulatorConfig, Error> {
    let stage = lenz::boost::BoostStageParams::new(10e-6, 500e3)
        .with_inductor_resistance_ohm(0.040)
        .with_switch_resistance_ohm(0.025)
        .with_diode_drop_v(0.35)
        .with_saturation_current_a(2.0)
        .with_min_off_time_s(100e-9)
        .with_min_on_time_s(80e-9)
        .validate()?;
    let s = boost_sensors();
    BoostRegulatorConfig::new(&BoostPlan {
        stage,
        limiter: DutyLimiterParams {
            input_v: lenz::Range::new("input_v", 4.0, 6.0)?,
            output_v: 12.0,
            max_load_current_a: 0.5,
            light_load: Some(lenz::boost::LightLoad {
                min_load_current_a: 0.05,
                max_output_v: 20.0,
            }),
            input_v_per_count: s.supply.units_per_count() as f32,
            output_v_per_count: s.output.units_per_count() as f32,
            adc_max_counts: 4095,
            duty_full_scale: 1000,
            soft_start_s: 10e-3,
            tick_s: TICK_NS as f32 * 1e-9,
            overvoltage_v: 14.0,
            resume_v: 13.0,
            inductance_tol: 0.0,
            resistance_tol: 0.0,
        },
        kp_per_v: 0.005,
        ki_per_v_tick: 0.001,
        bypass_limiter,
    })
}

/// The rail's limits: switch current 2 A (the inductor's saturation current), switch rated
/// 16 V, output 12 V ± 0.3 V from 70 ms on (and 70 ms after each plant fault: the recovery
/// from a step to the idle load, through overvoltage cuts, takes about 60 ms).
#[must_use]
pub fn boost_limits() -> Limits {
    Limits {
        switch_voltage_rating_v: Some(16.0),
        switch_current_limit_a: Some(2.0),
        output_band: Some(super::Band {
            target_v: 12.0,
            tol_v: 0.3,
            settle_s: 0.070,
        }),
        ..Limits::default()
    }
}

/// A rail run: enabled at 1 ms for `duration_s`.
#[must_use]
pub fn boost_loop(duration_s: f64, faults: Vec<FaultAt>) -> LoopConfig {
    LoopConfig {
        tick_ns: TICK_NS,
        pwm_period_ns: BOOST_PWM_NS,
        duration_ns: (duration_s * 1e9).round() as u64,
        sample_offset_ns: 20_000,
        sensors: boost_sensors(),
        seed: 0xb005,
        demand: vec![(0.001, true)],
        motor_commands: Vec::new(),
        faults,
        limits: boost_limits(),
        record_every: 1,
    }
}
