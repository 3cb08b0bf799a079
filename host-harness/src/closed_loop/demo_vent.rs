//! The demo system's vent motor on a 12 V H-bridge in the closed loop. All values here are
//! invented for the demo.
//!
//! - Motor (CHECKS C5.1): 2 mH, 1.5 Ω at 20 °C (copper), 0.03 N·m/A, 2·10⁻⁵ kg·m², viscous
//!   friction 10⁻⁶ N·m·s/rad; vent load 0.02 N·m; winding thermal path 8 K/W, 40 J/K.
//! - Bridge: 50 mΩ per switch, 0.7 V body diodes, slow decay PWM.
//! - Supply: 12 V (11.4 … 13.2 V) behind 50 mΩ, 470 µF bus capacitor rated 25 V; the supply
//!   sinks current unless a scenario says otherwise.
//! - Sense: 12-bit ADC, 3.3 V reference; the winding current through a 10 mΩ shunt and a
//!   gain-10 bidirectional amplifier biased to mid-scale (zero current at 1.65 V, 2048
//!   counts; 4.028 mA per count, ±8.25 A), 0.7 LSB noise; the bus through an 11:1 divider.
//! - Timing: 10 kHz control tick, 20 kHz PWM, sampling 100 ns before the end of the tick: the
//!   driver reads it at the next tick as the current at the end of the tick that just ended,
//!   as the speed estimator assumes. (Sampled at the start of the tick instead, the reading is
//!   a tick older: the first reading of a one-tick brake probe is then still the coasting zero
//!   current, the estimator reads it as a stopped rotor, and the guard starts a reversal of a
//!   rotor turning at full speed.)
//! - Driver: [`lenz::drive::MotorDriver`] with start and brake peaks held to 4 A (at 13.2 V
//!   and −20 °C, with the vent's load), 200 µs dead time, reversal below 50 rad/s, brake
//!   probes every 5 ms, a restart while coasting resumed at the back-EMF's duty less the
//!   coasting estimate's error ([`vent_resume_margin_rad_s`]), jam at 3 A below 60 rad/s
//!   (above the speed estimate's error at stall over the resistance tolerance) for 20 ms after
//!   150 ms start blanking.
//!
//! The motor, bridge, supply, bus, thermal path and timing are those of the shipped
//! `scenarios/motor.toml` (`tests/demo_vent_file.rs` holds them equal). The sense chain and
//! the driver settings are this fixture's own, for the nominal winding: the file plans its
//! driver over its part spreads as well (`lenz plan`), hence its reversal below 140 rad/s
//! (the estimate's error at the instant a jam locks a winding of low inductance), jam speed
//! 90 rad/s, and its overload and open-winding checks.

use lenz::Error;
use lenz::drive::{MotorDriverConfig, MotorDriverParams};
use lenz::kernel::{
    BridgeGuardParams, CoastingErrorParams, JamParams, SenseScale, coasting_error_bound_rad_s,
};
use lenz::motor::{Motor, MotorParams};

use super::motor::{MotorCommand, MotorLimits, TimeToSpeed};
use super::{AdcChannel, Limits, LoopConfig, MotorBridge, Sensors};
use crate::faults::FaultAt;
use crate::plant::{Decay, MotorPlant, MotorSpec, Thermal};

/// Winding inductance, H.
pub const VENT_INDUCTANCE_H: f64 = 2e-3;
/// Winding resistance at 20 °C, Ω.
pub const VENT_RESISTANCE_OHM: f64 = 1.5;
/// Torque constant, N·m/A.
pub const VENT_TORQUE_CONSTANT: f64 = 0.03;
/// Inertia of rotor and vent, kg·m².
pub const VENT_INERTIA_KG_M2: f64 = 2e-5;
/// Viscous friction, N·m·s/rad.
pub const VENT_FRICTION: f64 = 1e-6;
/// The vent's load torque, N·m.
pub const VENT_LOAD_NM: f64 = 0.02;
/// Bridge switch on-resistance, Ω.
pub const VENT_SWITCH_OHM: f64 = 0.05;
/// Bus capacitor, F.
pub const VENT_BUS_F: f64 = 470e-6;
/// The bus capacitor's voltage rating, V.
pub const VENT_BUS_RATING_V: f64 = 25.0;
/// Supply, V.
pub const VENT_SUPPLY_V: f64 = 12.0;
/// Control tick, ns (10 kHz).
pub const VENT_TICK_NS: u64 = 100_000;
/// PWM period, ns (20 kHz).
pub const VENT_PWM_NS: u64 = 50_000;
/// The driver reverses only at or below this speed, rad/s: above the 42 rad/s at which the
/// vent's load turns the braked rotor backwards with the hottest winding (60 °C),
/// `R·T/(k² + R·b)`, or the guard would brake for ever.
pub const VENT_REVERSE_SPEED_RAD_S: f64 = 50.0;
/// Sampling instant within the tick, ns (module docs).
pub const VENT_SAMPLE_OFFSET_NS: u64 = 99_900;
/// PWM resolution of the example firmware (1000 counts per period).
pub const VENT_PWM_MAX_DUTY: u16 = 1000;

/// The vent motor, its bridge and supply at winding temperature `temp_c` and supply
/// `supply_v`, the load torque in force from the start.
#[must_use]
pub fn vent_spec(temp_c: f64, supply_v: f64) -> MotorSpec {
    let mut s = MotorSpec::new(
        VENT_INDUCTANCE_H,
        VENT_RESISTANCE_OHM,
        VENT_TORQUE_CONSTANT,
        VENT_INERTIA_KG_M2,
    );
    s.friction_nm_s_per_rad = VENT_FRICTION;
    s.temp_c = temp_c;
    s.thermal = Some(Thermal {
        r_th_k_per_w: 8.0,
        c_th_j_per_k: 40.0,
        ambient_c: temp_c,
    });
    s.switch_on_resistance_ohm = VENT_SWITCH_OHM;
    s.diode_drop_v = 0.7;
    s.supply_v = supply_v;
    s.source_resistance_ohm = 0.05;
    s.bus_capacitance_f = VENT_BUS_F;
    s
}

/// The vent plant of `spec`, at rest, with the vent's load torque, behind a slow-decay bridge.
///
/// # Errors
///
/// The plant's rejection of a value of `spec`.
pub fn vent_plant_of(spec: MotorSpec) -> Result<MotorBridge, Error> {
    let mut p = MotorPlant::new(spec)?;
    p.set_load_torque_nm(VENT_LOAD_NM);
    Ok(MotorBridge::new(p, Decay::Slow))
}

/// The vent plant at `temp_c` and `supply_v` ([`vent_spec`], [`vent_plant_of`]).
#[must_use]
pub fn vent_plant(temp_c: f64, supply_v: f64) -> MotorBridge {
    // The demo values are valid by construction: a failure is a programming error in this
    // file, caught by every motor loop test.
    vent_plant_of(vent_spec(temp_c, supply_v)).unwrap_or_else(|e| unreachable!("vent: {e}"))
}

/// The vent's sense channels (module docs); the output channel reads the bus as the supply's.
#[must_use]
pub fn vent_sensors() -> Sensors {
    let adc = AdcChannel {
        bits: 12,
        vref_v: 3.3,
        volts_per_unit: 0.010 * 10.0,
        bias_v: 1.65,
        gain_error: 0.0,
        offset_error_v: 0.0,
        noise_rms_lsb: 0.7,
    };
    let bus = AdcChannel {
        volts_per_unit: 1.0 / 11.0,
        bias_v: 0.0,
        ..adc
    };
    Sensors {
        current: adc,
        supply: bus,
        output: bus,
    }
}

/// The vent motor as the plan knows it (nominal values).
///
/// # Errors
///
/// Never for the demo values; the plan's rejection otherwise.
pub fn vent_motor() -> Result<Motor, Error> {
    MotorParams::new(
        VENT_INDUCTANCE_H as f32,
        VENT_RESISTANCE_OHM as f32,
        VENT_TORQUE_CONSTANT as f32,
    )
    .with_inertia_kg_m2(VENT_INERTIA_KG_M2 as f32)
    .with_friction_nm_s_per_rad(VENT_FRICTION as f32)
    .with_bridge_resistance_ohm((2.0 * VENT_SWITCH_OHM) as f32)
    .validate()
}

/// The guard's brake probes while coasting, every this long, s.
pub const VENT_PROBE_INTERVAL_S: f64 = 5e-3;

/// The margin of the guard's resumed start (a forward command while the rotor still coasts
/// forward starts the ramp at the back-EMF's duty less this): the speed estimate's error
/// while coasting ([`lenz::kernel::coasting_error_bound_rad_s`]) for the vent's plan, no part
/// spread (the demo runs the nominal motor), the ADC noise of `sensors` at
/// [`crate::system::motor_stall::NOISE_SIGMAS`], rad/s (`None`: no probes, no bound).
///
/// # Errors
///
/// The plan's rejection of a value.
pub fn vent_resume_margin_rad_s(sensors: &Sensors) -> Result<Option<f32>, Error> {
    let bound = coasting_error_bound_rad_s(
        &vent_motor()?,
        &CoastingErrorParams {
            supply_v: 13.2,
            temp_c: 20.0,
            tick_s: (VENT_TICK_NS as f64 * 1e-9) as f32,
            probe_interval_s: VENT_PROBE_INTERVAL_S as f32,
            load_torque_nm: VENT_LOAD_NM as f32,
            current_limit_a: 4.0,
            inductance_rel: 0.0,
            resistance_rel: 0.0,
            voltage_error_v: 0.0,
            current_noise_a: (sensors.current.noise_rms_lsb * sensors.current.units_per_count())
                as f32,
            supply_noise_v: (sensors.supply.noise_rms_lsb * sensors.supply.units_per_count())
                as f32,
            noise_sigmas: crate::system::motor_stall::NOISE_SIGMAS as f32,
        },
    )?;
    // None without probes: no resumed start.
    Ok(bound)
}

/// The example firmware's driver plan for the vent (module docs), with the sense scaling of
/// `sensors`.
///
/// # Errors
///
/// The plan's rejection of a value.
pub fn vent_driver_params(sensors: &Sensors) -> Result<MotorDriverParams, Error> {
    let tick_s = (VENT_TICK_NS as f64 * 1e-9) as f32;
    let c = &sensors.current;
    let max = c.max_code();
    Ok(MotorDriverParams {
        motor: vent_motor()?,
        temp_c: 20.0,
        tick_s,
        speed_filter_s: 0.0,
        guard: BridgeGuardParams {
            supply_v: 13.2,
            temp_c: -20.0,
            max_temp_c: 60.0,
            load_torque_nm: VENT_LOAD_NM as f32,
            current_limit_a: 4.0,
            tick_s,
            dead_time_s: 200e-6,
            reverse_speed_rad_s: VENT_REVERSE_SPEED_RAD_S as f32,
            probe_interval_s: VENT_PROBE_INTERVAL_S as f32,
            resume_margin_rad_s: vent_resume_margin_rad_s(sensors)?,
        },
        jam: JamParams {
            jam_current_a: 3.0,
            jam_speed_rad_s: 60.0,
            persistence_s: 20e-3,
            blanking_s: 150e-3,
            overload_current_a: None,
            overload_s: 0.0,
            open_current_a: None,
            open_min_duty: 1.0,
            tick_s,
        },
        current_sense: SenseScale::new(
            c.units_per_count() as f32,
            c.zero_counts() as f32,
            10,
            max.saturating_sub(10),
        )?,
        supply_v_per_count: sensors.supply.units_per_count() as f32,
        supply_zero_counts: sensors.supply.zero_counts() as f32,
    })
}

/// The example firmware's driver configuration for the vent.
///
/// # Errors
///
/// The plan's rejection of a value.
pub fn vent_driver_config() -> Result<MotorDriverConfig, Error> {
    MotorDriverConfig::new(&vent_driver_params(&vent_sensors())?)
}

/// The vent's limits: 10 A switch current, bus capacitor rated 25 V, 300 rad/s (82 % of the
/// loaded speed) within 400 ms of a drive command, jam trip within 30 ms, 6 A during a
/// reversal, winding at most 120 °C.
#[must_use]
pub fn vent_limits() -> Limits {
    Limits {
        switch_current_limit_a: Some(10.0),
        motor: Some(MotorLimits {
            bus_voltage_max_v: Some(VENT_BUS_RATING_V),
            time_to_speed: Some(TimeToSpeed {
                speed_rad_s: 300.0,
                max_s: 0.400,
            }),
            jam_latency_max_s: None,
            reversal_peak_current_max_a: None,
            winding_temperature_max_c: Some(120.0),
        }),
        ..Limits::default()
    }
}

/// A vent run: `duration_s` long, command schedule `commands`, faults `faults`, the vent's
/// limits (add the jam and reversal limits for runs that have them).
#[must_use]
pub fn vent_loop(
    duration_s: f64,
    commands: Vec<(f64, MotorCommand)>,
    faults: Vec<FaultAt>,
) -> LoopConfig {
    LoopConfig {
        tick_ns: VENT_TICK_NS,
        pwm_period_ns: VENT_PWM_NS,
        duration_ns: (duration_s * 1e9).round() as u64,
        sample_offset_ns: VENT_SAMPLE_OFFSET_NS,
        sensors: vent_sensors(),
        seed: 0x7e47,
        demand: Vec::new(),
        motor_commands: commands,
        faults,
        limits: vent_limits(),
        record_every: 1,
    }
}
