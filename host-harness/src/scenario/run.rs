//! From a scenario file to closed-loop runs: the plant, the controller, the ADC channels and
//! the limits of one scenario, for one set of part values ([`Params`]).
//!
//! # What the firmware knows
//!
//! The controller is planned from the file's *nominal* values (the datasheet values a firmware
//! engineer would put in the plan) and the nominal sense chain, at the run's coil temperature
//! (as if read from a board sensor). The plant gets the run's *actual* values: the swept part
//! values, the chain's gain and offset errors and its noise. That is the gap the closed loop
//! checks.
//!
//! # Sweep parameters
//!
//! Every run of a sweep draws its parameters from a ChaCha8 generator seeded by a hash of the
//! sweep seed and the run index only ([`Params::draw`]), one draw per parameter in a fixed
//! order whether or not the parameter has a tolerance. So a run's parameters never depend on
//! the number of runs, on sharding or on the number of threads, and `--replay S:I` rebuilds
//! run `I` of seed `S` exactly. Normal spreads are truncated at ±3σ by drawing through the
//! inverse normal CDF over `[Φ(−3), Φ(3)]`.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};

use super::schema::{
    Action, BoostStage, ClampSpec, Command, Dist, FaultSpec, File, Property, RangeTolerance,
    RelTolerance, Scenario,
};
use crate::closed_loop::{
    self, Band, Limits, LoopConfig, MotorCommand, MotorLimits, Release, RunResult, TimeToSpeed,
};
use crate::controllers::{
    BoostPlan, BoostRegulator, BoostRegulatorConfig, BridgeMotorDriver, PULL_IN_GRACE_S,
    PWM_MAX_DUTY, ValveDriver, ValveDriverConfig, ValvePlan,
};
use crate::faults::{Channel, Fault, FaultAt};
use crate::plant::Boost;

/// The part values of one run: multipliers of the nominal values, and the operating point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Params {
    /// Inductance multiplier.
    pub inductance: f64,
    /// Resistance multiplier (winding or DCR).
    pub resistance: f64,
    /// Clamp voltage or resistor multiplier.
    pub clamp: f64,
    /// Sense gain multiplier.
    pub sense_gain: f64,
    /// Load multiplier (boost).
    pub load: f64,
    /// Supply, V (a scenario that sets its own supply keeps it; `None`: nominal).
    pub supply_v: Option<f64>,
    /// Coil temperature, °C (a scenario that sets its own temperature keeps it; `None`:
    /// nominal).
    pub temp_c: Option<f64>,
    /// Seed of the ADC noise (`None`: the scenario's).
    pub noise_seed: Option<u64>,
    /// Armature open-gap multiplier.
    #[serde(default = "one")]
    pub open_gap: f64,
    /// Armature spring (preload and rate) multiplier.
    #[serde(default = "one")]
    pub spring: f64,
    /// Armature load multiplier.
    #[serde(default = "one")]
    pub armature_load: f64,
    /// Torque constant multiplier (a motor).
    #[serde(default = "one")]
    pub torque_constant: f64,
}

fn one() -> f64 {
    1.0
}

impl Params {
    /// Nominal values: the scenario as written.
    pub const NOMINAL: Params = Params {
        inductance: 1.0,
        resistance: 1.0,
        clamp: 1.0,
        sense_gain: 1.0,
        load: 1.0,
        supply_v: None,
        temp_c: None,
        noise_seed: None,
        open_gap: 1.0,
        spring: 1.0,
        armature_load: 1.0,
        torque_constant: 1.0,
    };

    /// The parameters of run `index` of a sweep with `seed` (module docs).
    #[must_use]
    pub fn draw(file: &File, seed: u64, index: u64) -> Params {
        let key = mix(mix(seed) ^ index.wrapping_mul(0x9E37_79B9_7F4A_7C15));
        let mut rng = ChaCha8Rng::seed_from_u64(key);
        let t = &file.tolerances;
        // One draw per parameter, always, in this order.
        let mut u = || rng.random::<f64>();
        let (ul, ur, uc, ug, uld, us, ut) = (u(), u(), u(), u(), u(), u(), u());
        let noise_seed = rng.random::<u64>();
        // Draws added later come after these, so earlier runs keep their parameters.
        let uk = rng.random::<f64>();
        // Appended after the draws above, so earlier sweeps keep their parameters.
        let (ugap, uspring, uaload) = (rng.random(), rng.random(), rng.random());
        let rel = |tol: &Option<RelTolerance>, u: f64| {
            tol.map_or(1.0, |t| 1.0 + t.rel.get() * unit_draw(t.dist, u))
        };
        let range = |tol: &Option<RangeTolerance>, lo: f64, hi: f64, u: f64| {
            tol.map(|t| 0.5 * (lo + hi) + 0.5 * (hi - lo) * unit_draw(t.dist, u) / span(t.dist))
        };
        let s = &file.system;
        Params {
            inductance: rel(&t.inductance, ul),
            resistance: rel(&t.resistance, ur),
            clamp: rel(&t.clamp, uc),
            sense_gain: rel(&t.sense_gain, ug),
            load: rel(&t.load, uld),
            supply_v: range(&t.supply, s.supply.min.get(), s.supply.max.get(), us),
            temp_c: range(
                &t.temperature,
                s.temperature.min.get(),
                s.temperature.max.get(),
                ut,
            ),
            noise_seed: Some(noise_seed),
            open_gap: rel(&t.open_gap, ugap),
            spring: rel(&t.spring, uspring),
            armature_load: rel(&t.armature_load, uaload),
            torque_constant: rel(&t.torque_constant, uk),
        }
    }
}

/// A draw in "tolerance units": uniform on [−1, 1], or standard normal truncated at ±3.
fn unit_draw(d: Dist, u: f64) -> f64 {
    match d {
        Dist::Uniform => 2.0 * u - 1.0,
        Dist::Normal => {
            let lo = normal_cdf(-3.0);
            inverse_normal_cdf(lo + (1.0 - 2.0 * lo) * u)
        }
    }
}

/// The largest relative deviation a tolerance draws: `rel` (uniform) or `3·rel` (normal,
/// truncated at ±3σ).
#[must_use]
pub fn tolerance_half_width(t: RelTolerance) -> f64 {
    t.rel.get() * span(t.dist)
}

/// Half-width of [`unit_draw`]'s support: a range is ±1 (uniform) or ±3σ (normal).
fn span(d: Dist) -> f64 {
    match d {
        Dist::Uniform => 1.0,
        Dist::Normal => 3.0,
    }
}

/// SplitMix64 finalizer: a bijective 64-bit hash.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Standard normal CDF, through [`erfc`].
fn normal_cdf(x: f64) -> f64 {
    0.5 * erfc(-x / std::f64::consts::SQRT_2)
}

/// Complementary error function, relative error below 1.2e-7 (Numerical Recipes' Chebyshev
/// fit `erfcc`); enough for the truncation point of a sampling distribution.
fn erfc(x: f64) -> f64 {
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let r = t
        * (-z * z - 1.265_512_23
            + t * (1.000_023_68
                + t * (0.374_091_96
                    + t * (0.096_784_18
                        + t * (-0.186_288_06
                            + t * (0.278_868_07
                                + t * (-1.135_203_98
                                    + t * (1.488_515_87
                                        + t * (-0.822_152_23 + t * 0.170_872_77)))))))))
            .exp();
    if x >= 0.0 { r } else { 2.0 - r }
}

/// Inverse of the standard normal CDF (P. J. Acklam's rational approximation, relative error
/// below 1.15e-9), for `p` in (0, 1).
fn inverse_normal_cdf(p: f64) -> f64 {
    const A: [f64; 6] = [
        -3.969_683_028_665_376e1,
        2.209_460_984_245_205e2,
        -2.759_285_104_469_687e2,
        1.383_577_518_672_69e2,
        -3.066_479_806_614_716e1,
        2.506_628_277_459_239,
    ];
    const B: [f64; 5] = [
        -5.447_609_879_822_406e1,
        1.615_858_368_580_409e2,
        -1.556_989_798_598_866e2,
        6.680_131_188_771_972e1,
        -1.328_068_155_288_572e1,
    ];
    const C: [f64; 6] = [
        -7.784_894_002_430_293e-3,
        -3.223_964_580_411_365e-1,
        -2.400_758_277_161_838,
        -2.549_732_539_343_734,
        4.374_664_141_464_968,
        2.938_163_982_698_783,
    ];
    const D: [f64; 4] = [
        7.784_695_709_041_462e-3,
        3.224_671_290_700_398e-1,
        2.445_134_137_142_996,
        3.754_408_661_907_416,
    ];
    let p = p.clamp(1e-300, 1.0 - 1e-16);
    let tail = |q: f64| {
        (((((C[0] * q + C[1]) * q + C[2]) * q + C[3]) * q + C[4]) * q + C[5])
            / ((((D[0] * q + D[1]) * q + D[2]) * q + D[3]) * q + 1.0)
    };
    if p < 0.02425 {
        tail((-2.0 * p.ln()).sqrt())
    } else if p > 1.0 - 0.02425 {
        -tail((-2.0 * (1.0 - p).ln()).sqrt())
    } else {
        let q = p - 0.5;
        let r = q * q;
        (((((A[0] * r + A[1]) * r + A[2]) * r + A[3]) * r + A[4]) * r + A[5]) * q
            / (((((B[0] * r + B[1]) * r + B[2]) * r + B[3]) * r + B[4]) * r + 1.0)
    }
}

/// How much of the waveform a run records.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Record {
    /// Nothing (sweeps).
    None,
    /// Every tick (sim, plots, CSV).
    Every,
}

/// Why a scenario could not be run: a value the plans or the plant reject.
#[derive(Debug, Clone, PartialEq)]
pub struct RunSetupError(pub String);

impl std::fmt::Display for RunSetupError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for RunSetupError {}

/// A plan or plant error as a problem of the file: `key `K`: problem`, where `K` is the file
/// key the rejected parameter comes from (the scenario's own `supply` or `temperature` when
/// `scenario` sets them), and the problem no longer names the internal parameter. A parameter
/// with no key of its own (derived from several) is reported at `table`.
pub(crate) fn lenz_err<'a>(
    file: &'a File,
    table: &'a str,
    scenario: Option<usize>,
) -> impl Fn(lenz::Error) -> RunSetupError + 'a {
    move |e| {
        let param = e.param();
        let text = e.to_string();
        match file_key(file, scenario, param) {
            Some(key) => {
                let problem = text
                    .strip_prefix(param)
                    .and_then(|t| t.strip_prefix(": "))
                    .unwrap_or(&text);
                RunSetupError(format!("key `{key}`: {problem}"))
            }
            None => {
                // Derived from several values of the table (a loop resistance, a ratio).
                let problem = text
                    .strip_prefix(param)
                    .and_then(|t| t.strip_prefix(": "))
                    .unwrap_or(&text);
                RunSetupError(format!(
                    "key `{table}`: a value derived from this table: {problem}"
                ))
            }
        }
    }
}

/// The file key a plan or plant parameter comes from (see [`lenz_err`]).
pub(crate) fn file_key(file: &File, scenario: Option<usize>, param: &str) -> Option<String> {
    let s = &file.system;
    let sc = scenario.and_then(|k| file.scenarios.get(k).map(|sc| (k, sc)));
    let boost = s.boost.is_some();
    let stage = if boost { "system.boost" } else { "system.coil" };
    let clamp = |field: &str| {
        let kind = match s.clamp? {
            ClampSpec::Freewheel { .. } => "freewheel",
            ClampSpec::DiodeZener { .. } => "diode-zener",
            ClampSpec::AcrossSwitch { .. } => "across-switch",
            ClampSpec::ResistorDiode { .. } => "resistor-diode",
            ClampSpec::Unclamped { .. } => "unclamped",
        };
        Some(format!("system.clamp.{kind}.{field}"))
    };
    if s.motor.is_some()
        && let Some(k) = motor_key(param)
    {
        return Some(k.to_string());
    }
    let key = match param {
        "temp_c" | "ambient_c" => {
            return Some(match sc {
                Some((k, sc)) if sc.temperature.is_some() => format!("scenario[{k}].temperature"),
                _ => "system.temperature".into(),
            });
        }
        "supply_v" | "input_v" => {
            return Some(match sc {
                Some((k, sc)) if sc.supply.is_some() => format!("scenario[{k}].supply"),
                _ => "system.supply".into(),
            });
        }
        "inductance_h" | "l_h" | "l0_h" => return Some(format!("{stage}.inductance")),
        "vf_v" | "forward_v" if !boost => return clamp("diode_drop"),
        "vz_v" | "zener_v" => return clamp("zener"),
        "vcl_v" | "clamp_v" => return clamp("voltage"),
        "r_ohm" | "clamp_resistance_ohm" => return clamp("resistor"),
        "c_f" | "capacitance_f" => return clamp("capacitance"),
        "r20_ohm" | "resistance_ohm" => "system.coil.resistance",
        "knee_a" => "system.coil.knee_current",
        "zero_gap_h" => "system.coil.armature.zero_gap_inductance",
        "halving_gap_m" => "system.coil.armature.halving_gap",
        "saturation_flux_vs" => "system.coil.armature.saturation_flux",
        "mass_kg" => "system.coil.armature.mass",
        "open_gap_m" => "system.coil.armature.open_gap",
        "closed_gap_m" => "system.coil.armature.closed_gap",
        "spring_preload_n" => "system.coil.armature.spring_preload",
        "spring_rate_n_per_m" => "system.coil.armature.spring_rate",
        "damping_n_s_per_m" => "system.coil.armature.damping",
        "load_n" => "system.coil.armature.load",
        "restitution" => "system.coil.armature.restitution",
        "rest_speed_m_s" => "system.coil.armature.rest_speed",
        "l_res_h" => "system.coil.residual_inductance",
        "r_th_k_per_w" => "system.coil.thermal_resistance",
        "c_th_j_per_k" => "system.coil.thermal_capacitance",
        "release_a" => "system.coil.release_current",
        "on_resistance_ohm" | "switch_resistance_ohm" | "switch_on_resistance_ohm" => {
            "system.switch.on_resistance"
        }
        "breakdown_v" => "system.switch.breakdown",
        "source_resistance_ohm" => "system.supply.source_resistance",
        "shunt_ohm" | "shunt_resistance_ohm" => "system.sense.shunt",
        "gain" => "system.sense.gain",
        "gain_tol" => "system.sense.gain_error",
        "offset_v" => "system.sense.offset",
        "vref_v" => "system.sense.adc_reference",
        "bits" => "system.sense.adc_bits",
        "dcr_ohm" | "inductor_resistance_ohm" => "system.boost.dcr",
        "diode_drop_v" | "vf_v" | "forward_v" => "system.boost.diode_drop",
        "esr_ohm" => "system.boost.esr",
        "load_ohm" => "system.boost.load",
        "output_c_f" => "system.boost.output_capacitance",
        "saturation_current_a" => "system.boost.saturation_current",
        "tick_s" | "tick_ns" => "system.tick",
        "pwm_period_ns" | "frequency_hz" => "system.pwm_frequency",
        "sample_offset_ns" => "system.sample_offset",
        "pull_in_a" => "controller.coil.pull_in_current",
        "pull_in_min_s" => "controller.coil.pull_in_min_time",
        "hold_duty" => "controller.coil.hold_duty",
        "trip_threshold_a" => "controller.coil.trip_current",
        "abs_tol_a" => "controller.coil.monitor.abs_tol",
        "rel_tol" => "controller.coil.monitor.rel_tol",
        "open_min_estimate_a" => "controller.coil.monitor.open_min_estimate",
        "open_max_a" => "controller.coil.monitor.open_max",
        "stuck_min_change_a" => "controller.coil.monitor.stuck_min_change",
        "duration_ns" => {
            return sc.map(|(k, _)| format!("scenario[{k}].duration"));
        }
        _ => return None,
    };
    Some(key.to_string())
}

/// The file key of a motor bridge's plan, plant or driver parameter.
fn motor_key(param: &str) -> Option<&'static str> {
    Some(match param {
        "inductance_h" | "l_h" => "system.motor.inductance",
        "r20_ohm" | "resistance_ohm" => "system.motor.resistance",
        "torque_constant_nm_per_a" => "system.motor.torque_constant",
        "inertia_kg_m2" => "system.motor.inertia",
        "friction_nm_s_per_rad" => "system.motor.friction",
        "load_torque_nm" => "system.motor.load_torque",
        "diode_drop_v" => "system.motor.diode_drop",
        "bus_capacitance_f" | "capacitance_f" => "system.motor.bus_capacitance",
        "r_th_k_per_w" => "system.motor.thermal_resistance",
        "c_th_j_per_k" => "system.motor.thermal_capacitance",
        "bridge_resistance_ohm" => "system.switch.on_resistance",
        "current_limit_a" => "controller.motor.current_limit",
        "dead_time_s" => "controller.motor.dead_time",
        "reverse_speed_rad_s" => "controller.motor.reverse_speed",
        "probe_interval_s" => "controller.motor.probe_interval",
        "jam_current_a" => "controller.motor.jam_current",
        "jam_speed_rad_s" => "controller.motor.jam_speed",
        "persistence_s" => "controller.motor.jam_time",
        "blanking_s" => "controller.motor.start_blanking",
        "overload_current_a" => "controller.motor.overload.current",
        "overload_s" => "controller.motor.overload.time",
        "open_current_a" => "controller.motor.open_winding.current",
        "open_min_duty" => "controller.motor.open_winding.min_duty",
        _ => return None,
    })
}

/// The operating point of a run.
pub(crate) struct Point {
    /// Supply, V.
    pub(crate) supply_v: f64,
    /// Coil temperature, °C.
    pub(crate) temp_c: f64,
}

/// The operating point of scenario `sc` with part values `p`.
pub(crate) fn point(file: &File, sc: &Scenario, p: &Params) -> Point {
    let s = &file.system;
    Point {
        supply_v: sc
            .supply
            .map(|v| v.get())
            .or(p.supply_v)
            .unwrap_or(s.supply.nominal.get()),
        temp_c: sc
            .temperature
            .map(|v| v.get())
            .or(p.temp_c)
            .unwrap_or(s.temperature.nominal.get()),
    }
}

pub(crate) fn ns(t_s: f64) -> u64 {
    (t_s * 1e9).round() as u64
}

/// The closed-loop configuration of scenario `sc`.
pub(crate) fn loop_config(
    file: &File,
    sc: &Scenario,
    p: &Params,
    pt: &Point,
    record: Record,
) -> LoopConfig {
    let s = &file.system;
    let mut demand = Vec::new();
    let mut motor_commands = Vec::new();
    let mut faults = Vec::new();
    let mut supply_now = pt.supply_v;
    let mut events: Vec<_> = sc.events.iter().collect();
    events.sort_by(|a, b| a.at.get().total_cmp(&b.at.get()));
    for e in events {
        let t_s = e.at.get();
        let fault = match e.action {
            Action::Command(c) if c.is_motor() => {
                let duty_q16 = (e.duty.clamp(0.0, 1.0) * 65_536.0).round() as i32;
                motor_commands.push((
                    t_s,
                    match c {
                        Command::Forward => MotorCommand::Forward { duty_q16 },
                        Command::Reverse => MotorCommand::Reverse { duty_q16 },
                        Command::Brake => MotorCommand::Brake,
                        _ => MotorCommand::Coast,
                    },
                ));
                continue;
            }
            Action::Command(c) => {
                demand.push((t_s, c == Command::On));
                continue;
            }
            Action::LoadTorque(t) => Fault::LoadTorque { torque_nm: t },
            Action::Supply(v, ramp_s) => {
                let f = if v < supply_now {
                    Fault::SupplySag {
                        supply_v: v,
                        ramp_s,
                    }
                } else {
                    Fault::SupplySurge {
                        supply_v: v,
                        ramp_s,
                    }
                };
                supply_now = v;
                f
            }
            Action::Load(r) => Fault::LoadStep {
                load_ohm: r * p.load,
            },
            Action::Fault(f) => match f {
                FaultSpec::ShortedCoil {
                    residual_inductance_h,
                    residual_resistance_ohm,
                } => Fault::ShortedCoil {
                    residual_inductance_h,
                    residual_resistance_ohm,
                },
                FaultSpec::ShortedTurns { factor } => Fault::ShortedTurns {
                    inductance_factor: factor,
                    resistance_factor: factor,
                },
                FaultSpec::OpenCoil => Fault::OpenCoil,
                FaultSpec::StuckArmature => Fault::StuckArmature,
                FaultSpec::SluggishArmature(d) => Fault::SluggishArmature {
                    extra_damping_n_s_per_m: d,
                },
                FaultSpec::ExcessLoad(f) => Fault::ExcessLoad { extra_load_n: f },
                FaultSpec::SwitchStuckOn => Fault::SwitchStuckOn,
                FaultSpec::SensorStuck(c) => Fault::SensorStuck {
                    channel: channel(c),
                },
                FaultSpec::SensorNoisy(c, n) => Fault::SensorNoisy {
                    channel: channel(c),
                    noise_rms_lsb: n,
                },
                FaultSpec::Jam => Fault::Jam,
                FaultSpec::Overload(t) => Fault::LoadTorque { torque_nm: t },
                FaultSpec::OpenWinding => Fault::OpenWinding,
                FaultSpec::SupplyCannotSink => Fault::SupplyCannotSink,
                FaultSpec::ShortedWinding { factor } => Fault::ShortedWinding {
                    inductance_factor: factor,
                    resistance_factor: factor,
                },
            },
        };
        faults.push(FaultAt {
            t_s,
            fault,
            expect_trip: e.expect_trip,
        });
    }
    let mut limits = Limits::default();
    let mut pull_in_max = None;
    let mut motor = s.motor.map(|_| MotorLimits::default());
    for c in &sc.checks {
        let m = Some(c.max);
        if let Some(ml) = &mut motor {
            match c.property {
                Property::BusVoltage => ml.bus_voltage_max_v = m,
                Property::TimeToSpeed => {
                    ml.time_to_speed = c.speed.map(|speed_rad_s| TimeToSpeed {
                        speed_rad_s,
                        max_s: c.max,
                    });
                }
                Property::JamLatency => ml.jam_latency_max_s = m,
                Property::ReversalPeakCurrent => ml.reversal_peak_current_max_a = m,
                Property::WindingTemperature => ml.winding_temperature_max_c = m,
                _ => {}
            }
        }
        match c.property {
            Property::BusVoltage
            | Property::TimeToSpeed
            | Property::JamLatency
            | Property::ReversalPeakCurrent
            | Property::WindingTemperature => {}
            Property::PeakSwitchVoltage => limits.switch_voltage_rating_v = m,
            Property::ClampEnergy => limits.clamp_energy_rating_j = m,
            Property::SwitchEnergy => limits.switch_energy_rating_j = m,
            Property::PeakCurrent => limits.switch_current_limit_a = m,
            Property::TripLatency => limits.trip_latency_max_s = m,
            Property::NoTrip => {}
            Property::ReleaseTime => {
                let current_a = c
                    .current
                    .or(s.coil.map(|k| k.release_current.get()))
                    .unwrap_or(0.0);
                limits.release = Some(Release {
                    current_a,
                    max_s: c.max,
                });
            }
            Property::OutputBand => {
                limits.output_band = s.boost.map(|b| Band {
                    target_v: b.output.get(),
                    tol_v: c.max,
                    settle_s: c.after,
                });
            }
            Property::EstimatorError => limits.estimator_error_max_a = m,
            Property::PullInTime => pull_in_max = m,
            Property::HoldCurrent => {
                limits.hold_current_min_a = c
                    .min
                    .or(s.coil.and_then(|k| k.hold_current.map(|h| h.get())));
            }
            Property::CoilTemperature => limits.coil_temperature_max_c = m,
            Property::CoilPower => limits.coil_power_max_w = m,
            Property::SeatTime => limits.seat_time_max_s = m,
            Property::ImpactVelocity => limits.impact_velocity_max_m_s = m,
            Property::ArmatureReleaseTime => limits.armature_release_time_max_s = m,
            Property::ActuationEnergy => limits.actuation_energy_max_j = m,
            Property::SeatDetectionLatency => limits.seat_detection_latency_max_s = m,
            Property::DropoutDetectionLatency => limits.dropout_detection_latency_max_s = m,
            Property::FalseDetections => limits.false_detections_max = m,
        }
    }
    limits.motor = motor;
    limits.pull_in = s.coil.map(|k| closed_loop::PullIn {
        current_a: k.pull_in_current.get(),
        max_s: pull_in_max,
    });
    LoopConfig {
        tick_ns: ns(s.tick.get()),
        pwm_period_ns: ns(1.0 / s.pwm_frequency.get()),
        duration_ns: ns(sc.duration.get()),
        sample_offset_ns: ns(s.sample_offset.get()),
        sensors: crate::system::sense::actual(file, p),
        seed: p.noise_seed.unwrap_or(sc.noise_seed),
        demand,
        motor_commands,
        faults,
        limits,
        record_every: match record {
            Record::None => 0,
            Record::Every => 1,
        },
    }
}

fn channel(c: super::schema::Channel) -> Channel {
    match c {
        super::schema::Channel::Current => Channel::Current,
        super::schema::Channel::Supply => Channel::Supply,
        super::schema::Channel::Output => Channel::Output,
    }
}

/// The plan-side form of a clamp (the firmware's off path and the plan's switch-off
/// figures).
#[must_use]
pub fn turnoff_clamp(c: &ClampSpec) -> lenz::turnoff::Clamp {
    crate::system::clamp::core_clamp(c)
}

/// The example valve driver's plan from the firmware inputs of `file` at coil temperature
/// `temp_c` (needs `[controller.coil]`).
///
/// # Errors
///
/// The plan rejects a value (named).
pub fn coil_driver(file: &File, temp_c: f64) -> Result<ValveDriverConfig, RunSetupError> {
    let inputs = crate::system::firmware::inputs(file, temp_c)?;
    valve_driver(file, &inputs)
}

/// The coil driver's plan errors that name a derived quantity, in the file's keys; the others
/// as the plan words them.
fn coil_plan_err(file: &File, c: &super::CoilController, e: lenz::Error) -> RunSetupError {
    use crate::si::format as si;
    match e {
        // The hold estimator's continuous-conduction check: `value` is the smallest mean
        // current over the supply range, `min` the PWM ripple it must exceed.
        lenz::Error::OutOfRange {
            param: "hold_duty",
            value,
            min,
            max,
        } if max > 1.0 => RunSetupError(format!(
            "key `controller.coil.hold_duty`: {} does not keep the current flowing through every PWM \
             period with this clamp over the supply range (mean current {}, the PWM ripple \
             needs more than {}): raise the duty",
            c.hold_duty.get(),
            si(f64::from(value), "A"),
            si(f64::from(min), "A")
        )),
        lenz::Error::OutOfRange {
            param: "abs_tol_a",
            value,
            min,
            ..
        } => RunSetupError(format!(
            "key `controller.coil.monitor.abs_tol`: {} is below what the PWM hold estimate's error \
             bound needs with rel_tol {}: at least {}",
            si(f64::from(value), "A"),
            c.monitor.rel_tol.get(),
            si(f64::from(min), "A")
        )),
        other => lenz_err(file, "controller.coil", None)(other),
    }
}

/// The example valve driver planned from `inputs` (the firmware inputs of `file`): the
/// controller `run` uses for a `[controller.coil]`.
///
/// # Errors
///
/// No `[controller.coil]`, or a plan rejects a value (named).
pub fn valve_driver(
    file: &File,
    inputs: &crate::system::FirmwareInputs,
) -> Result<ValveDriverConfig, RunSetupError> {
    let super::Controller::Coil(k) = &file.controller else {
        return Err(RunSetupError(
            "controller: the example valve driver needs [controller.coil]".into(),
        ));
    };
    let c = inputs.coil()?;
    let nominal = crate::system::sense::nominal(file);
    // With the movement detector the estimator follows the seated coil (the monitor is blanked
    // while the armature moves): its model has the seated inductance.
    let coil = match &c.movement {
        Some(m) => {
            let mut params = *c.coil.params();
            params.inductance_h = m.seated_inductance_h;
            params
                .validate()
                .map_err(lenz_err(file, "system.coil.armature", None))?
        }
        None => c.coil,
    };
    ValveDriverConfig::new(&ValvePlan {
        coil,
        temp_c: inputs.temp_c,
        tick_s: inputs.tick_s,
        clamp: c.clamp,
        supply_v: inputs.supply_v,
        release_a: c.release_a,
        pull_in_a: c.settings.pull_in_a,
        pull_in_min_s: c.settings.pull_in_min_s,
        pull_in_max_s: c.settings.pull_in_min_s + PULL_IN_GRACE_S,
        hold_duty: c.settings.hold_duty,
        pwm_frequency_hz: inputs.pwm_frequency_hz,
        pwm_max_duty: PWM_MAX_DUTY,
        current_adc: nominal.current,
        supply_adc: nominal.supply,
        monitor: c.settings.monitor,
        trip_threshold_a: c.settings.trip_a,
        movement: c.movement.map(|m| m.config),
    })
    .map_err(|e| coil_plan_err(file, k, e))
}

/// The plan-side boost stage of the file (nominal values).
///
/// # Errors
///
/// The plan rejects a value (named).
pub fn boost_stage(file: &File, b: &BoostStage) -> Result<lenz::boost::BoostStage, RunSetupError> {
    crate::system::plan::boost_stage(file, b)
}

/// The boost regulator's plan from the file's nominal values and the nominal sense chain.
///
/// # Errors
///
/// The plan rejects a value (named).
pub fn boost_regulator(
    file: &File,
    b: &BoostStage,
    c: &super::BoostController,
) -> Result<BoostRegulatorConfig, RunSetupError> {
    let inputs = crate::system::firmware::inputs(file, file.system.temperature.nominal.get())?;
    BoostRegulatorConfig::new(&BoostPlan {
        stage: crate::system::plan::boost_stage(file, b)?,
        limiter: crate::system::plan::duty_limiter_params(file, b, c, &inputs.sense)?,
        kp_per_v: c.kp.get() as f32,
        ki_per_v_tick: c.ki.get() as f32,
        bypass_limiter: false,
    })
    .map_err(lenz_err(file, "controller.boost", None))
}

/// The boost plant of a run.
///
/// # Errors
///
/// The plant rejects a value (named).
pub fn boost_plant(
    file: &File,
    b: &BoostStage,
    p: &Params,
    supply_v: f64,
) -> Result<Boost, RunSetupError> {
    crate::system::plant::boost_plant(file, b, p, supply_v)
}

/// Runs scenario `index` of `file` with part values `p` and the file's example controller
/// (`[controller]`).
///
/// # Errors
///
/// The file has no `[controller]`, a value the plans or the plant reject, or a timing the
/// closed loop rejects.
pub fn run(
    file: &File,
    index: usize,
    p: &Params,
    record: Record,
) -> Result<RunResult, RunSetupError> {
    match &file.controller {
        super::Controller::Coil(_) => crate::system::run_fallible(file, index, p, record, |fw| {
            valve_driver(file, fw).and_then(|c| {
                ValveDriver::new(c).map_err(|e| RunSetupError(format!("controller.coil: {e}")))
            })
        }),
        super::Controller::Boost(c) => {
            let Some(b) = &file.system.boost else {
                return Err(RunSetupError(
                    "key `system`: a boost controller needs [system.boost]".into(),
                ));
            };
            let reg = boost_regulator(file, b, c)?;
            crate::system::run_fallible(file, index, p, record, |_| {
                BoostRegulator::new(reg)
                    .map_err(|e| RunSetupError(format!("controller.boost: {e}")))
            })
        }
        super::Controller::Motor(_) => crate::system::run_fallible(file, index, p, record, |fw| {
            let m = fw.motor()?;
            let settings = m.settings.ok_or_else(|| {
                RunSetupError(
                    "controller: the example motor driver needs [controller.motor]".into(),
                )
            })?;
            let params = fw.motor_driver_params(file, &settings)?;
            let cfg = lenz::drive::MotorDriverConfig::new(&params).map_err(lenz_err(
                file,
                "controller.motor",
                None,
            ))?;
            BridgeMotorDriver::new(cfg, PWM_MAX_DUTY)
                .map_err(|e| RunSetupError(format!("controller.motor: {e:?}")))
        }),
        super::Controller::Own => Err(RunSetupError(
            "controller: the file has no [controller]; the command line runs only the built-in \
             example controllers ([controller.coil], [controller.boost] or [controller.motor]); \
             run your own \
             controller from your tests with lenz_harness::System"
                .into(),
        )),
    }
}

/// The sense channels as the firmware assumes them (nominal chain, no errors).
#[must_use]
pub fn nominal_sensors(file: &File) -> crate::closed_loop::Sensors {
    crate::system::sense::nominal(file)
}

/// Runs scenario `index` of `file` with part values `p` against the controller `make` builds
/// for the run's coil temperature (°C), on the plant of the file's controller kind; returns the
/// result and the controller.
///
/// # Errors
///
/// A value the plans or the plant reject, `make`'s error, or a timing the closed loop
/// rejects.
pub fn run_with<C: closed_loop::Controller>(
    file: &File,
    index: usize,
    p: &Params,
    record: Record,
    make: impl FnOnce(f64) -> Result<C, RunSetupError>,
) -> Result<(RunResult, C), RunSetupError> {
    let sc = file
        .scenarios
        .get(index)
        .ok_or_else(|| RunSetupError(format!("no scenario number {index}")))?;
    let pt = point(file, sc, p);
    let cfg = loop_config(file, sc, p, &pt, record);
    let loop_err = |e: closed_loop::RunError| match e {
        closed_loop::RunError::Timing(param) => RunSetupError(format!(
            "key `{}`: the timing of scenario '{}' is not consistent (a zero tick, PWM period \
             or duration, or a sampling instant outside the tick)",
            file_key(file, Some(index), param).unwrap_or_else(|| format!("scenario[{index}]")),
            sc.name
        )),
        other => RunSetupError(format!("key `scenario[{index}]`: {other}")),
    };
    if let Some(m) = &file.system.motor {
        let mut plant =
            crate::system::motor::plant(file, Some(index), m, p, pt.supply_v, pt.temp_c)?;
        let mut ctrl = make(pt.temp_c)?;
        let r = closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)?;
        return Ok((r, ctrl));
    }
    if let Some(b) = &file.system.boost {
        let mut plant = boost_plant(file, b, p, pt.supply_v)?;
        plant.settle_off();
        let mut ctrl = make(pt.temp_c)?;
        let r = closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)?;
        Ok((r, ctrl))
    } else {
        let mut plant =
            crate::system::plant::coil_plant_in(file, Some(index), p, pt.supply_v, pt.temp_c)?;
        plant.set_record_events(false);
        // Memory must not grow with the PWM periods of a long run.
        plant.set_keep_switch_offs(false);
        let mut ctrl = make(pt.temp_c)?;
        let r = closed_loop::run(&mut plant, &mut ctrl, &cfg).map_err(loop_err)?;
        Ok((r, ctrl))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_scenario_run_keeps_one_switch_off_and_the_same_worst_energies() {
        let f = crate::scenario::parse("valve.toml", include_str!("../../scenarios/valve.toml"))
            .expect("shipped file");
        let p = Params::NOMINAL;
        let bounded = run(&f, 0, &p, Record::None).expect("runs");
        assert!(
            bounded.switch_offs.len() <= 1,
            "{}",
            bounded.switch_offs.len()
        );
        // The same run, keeping every switch-off of the PWM hold.
        let sc = &f.scenarios[0];
        let pt = point(&f, sc, &p);
        let cfg = loop_config(&f, sc, &p, &pt, Record::None);
        let mut plant =
            crate::system::plant::coil_plant(&f, &p, pt.supply_v, pt.temp_c).expect("plant");
        let mut ctrl =
            ValveDriver::new(coil_driver(&f, pt.temp_c).expect("driver")).expect("driver builds");
        let all = closed_loop::run(&mut plant, &mut ctrl, &cfg).expect("runs");
        assert!(all.switch_offs.len() > 100, "{}", all.switch_offs.len());
        for name in ["clamp_energy_per_switch_off", "peak_switch_voltage"] {
            let (a, b) = (all.property(name), bounded.property(name));
            assert!(a.is_some(), "{name} is checked in the shipped scenario");
            assert_eq!(a, b, "{name}");
        }
    }

    #[test]
    fn normal_cdf_and_inverse() {
        // Φ(1) = 0.841344746 (standard normal table; common practice, no source needed).
        assert!((normal_cdf(1.0) - 0.841_344_746).abs() < 2e-7);
        assert!((normal_cdf(-3.0) - 0.001_349_898).abs() < 2e-8);
        for p in [0.001, 0.02, 0.3, 0.5, 0.77, 0.99] {
            let x = inverse_normal_cdf(p);
            assert!((normal_cdf(x) - p).abs() < 3e-7 * p.max(0.01), "{p}");
        }
        assert!(unit_draw(Dist::Normal, 0.0) >= -3.0 - 1e-6);
        assert!(unit_draw(Dist::Normal, 1.0 - 1e-16) <= 3.0 + 1e-6);
        assert_eq!(unit_draw(Dist::Uniform, 0.0), -1.0);
    }
}
