//! The types a scenario file deserializes into (see the module docs of [`super`] for the
//! layout of a file and the shipped examples in `host-harness/scenarios/`).
//!
//! Every table rejects unknown keys. Checks that involve one value sit in the value's type
//! (unit, sign); checks across values of one table (min ≤ nominal ≤ max, exactly one action per
//! event) sit in a `TryFrom` of that table, so their error points at the table.

use serde::{Deserialize, Serialize};

use super::quantity::{
    Ampere, Celsius, Farad, Henry, Joule, Kilogram, Metre, Newton, NewtonMetre, NewtonPerMetre,
    NewtonSecondPerMetre, NonNeg, Ohm, Plain, Pos, Q, Second, Volt,
};
pub use super::schema_motor::{
    MotorController, MotorOpenWinding, MotorOverload, MotorStage, PwmDecay,
};

/// A whole scenario file.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct File {
    /// The drive system.
    pub system: System,
    /// The example controller the command line runs, and its settings (absent: the file is
    /// for the user's own controller, run from their tests through
    /// [`System`](crate::system::System)).
    #[serde(default)]
    pub controller: Controller,
    /// Spreads for `lenz sweep`; parameters not listed stay at their nominal value.
    #[serde(default)]
    pub tolerances: Tolerances,
    /// The scenarios (`[[scenario]]` tables).
    #[serde(rename = "scenario", default)]
    pub scenarios: Vec<Scenario>,
}

/// The drive system.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawSystem")]
pub struct System {
    /// Display name.
    pub name: String,
    /// Control tick, s.
    pub tick: Pos<Second>,
    /// PWM (switching) frequency, Hz.
    pub pwm_frequency: Pos<super::quantity::Hertz>,
    /// Sampling instant of the ADC within the tick, s (default: a fifth of the tick).
    pub sample_offset: NonNeg<Second>,
    /// Supply range.
    pub supply: Supply,
    /// Coil (winding) temperature range, °C.
    pub temperature: Temperature,
    /// The switched coil (valve, relay); absent for a boost stage.
    pub coil: Option<Coil>,
    /// The clamp network of the coil.
    pub clamp: Option<ClampSpec>,
    /// The boost stage; absent for a coil drive.
    pub boost: Option<BoostStage>,
    /// The motor on an H-bridge; absent for a coil drive or a boost stage.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub motor: Option<MotorStage>,
    /// The switch (of a bridge: each of its four switches).
    pub switch: Switch,
    /// The current sense chain and ADC.
    pub sense: Sense,
    /// Ratings of the parts, for the verdicts.
    #[serde(default)]
    pub ratings: Ratings,
    /// Requirements of the application.
    #[serde(default)]
    pub requirements: Requirements,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSystem {
    name: String,
    tick: Pos<Second>,
    pwm_frequency: Pos<super::quantity::Hertz>,
    sample_offset: Option<NonNeg<Second>>,
    supply: Supply,
    temperature: Temperature,
    coil: Option<Coil>,
    clamp: Option<ClampSpec>,
    boost: Option<BoostStage>,
    motor: Option<MotorStage>,
    switch: Switch,
    sense: Sense,
    #[serde(default)]
    ratings: Ratings,
    #[serde(default)]
    requirements: Requirements,
}

impl TryFrom<RawSystem> for System {
    type Error = String;
    fn try_from(r: RawSystem) -> Result<Self, String> {
        let kinds = usize::from(r.coil.is_some())
            + usize::from(r.boost.is_some())
            + usize::from(r.motor.is_some());
        if r.motor.is_some() && kinds > 1 {
            return Err(
                "give one of [system.coil], [system.boost] or [system.motor], not several".into(),
            );
        }
        if r.motor.is_some() && r.clamp.is_some() {
            return Err("key `clamp` applies to a coil drive, not to a motor bridge".into());
        }
        match (&r.coil, &r.boost) {
            (Some(_), Some(_)) => {
                return Err("give either [system.coil] or [system.boost], not both".into());
            }
            (None, None) if r.motor.is_none() => {
                return Err("missing key `coil` or `boost`: the system needs one".into());
            }
            (Some(_), None) if r.clamp.is_none() => {
                return Err("missing key `clamp`: a coil drive needs [system.clamp.KIND]".into());
            }
            (None, Some(_)) if r.clamp.is_some() => {
                return Err("key `clamp` applies to a coil drive, not to a boost stage".into());
            }
            _ => {}
        }
        if r.tick.get() * r.pwm_frequency.get() < 1.0 - 1e-9 {
            return Err(format!(
                "key `tick`: the control tick ({} s) is shorter than one PWM period ({} s)",
                r.tick.get(),
                1.0 / r.pwm_frequency.get()
            ));
        }
        let sample_offset = r.sample_offset.unwrap_or(NonNeg::new(0.2 * r.tick.get()));
        if sample_offset.get() >= r.tick.get() {
            return Err("key `sample_offset`: must lie within the tick".into());
        }
        Ok(System {
            name: r.name,
            tick: r.tick,
            pwm_frequency: r.pwm_frequency,
            sample_offset,
            supply: r.supply,
            temperature: r.temperature,
            coil: r.coil,
            clamp: r.clamp,
            boost: r.boost,
            motor: r.motor,
            switch: r.switch,
            sense: r.sense,
            ratings: r.ratings,
            requirements: r.requirements,
        })
    }
}

/// Supply range, V.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawSupply")]
pub struct Supply {
    /// Lowest supply, V.
    pub min: Pos<Volt>,
    /// Nominal supply, V.
    pub nominal: Pos<Volt>,
    /// Highest supply, V.
    pub max: Pos<Volt>,
    /// Source resistance, Ω.
    pub source_resistance: NonNeg<Ohm>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSupply {
    min: Pos<Volt>,
    nominal: Pos<Volt>,
    max: Pos<Volt>,
    #[serde(default = "zero")]
    source_resistance: NonNeg<Ohm>,
}

fn zero<U>() -> NonNeg<U> {
    NonNeg::new(0.0)
}

fn ordered(what: &str, min: f64, nominal: f64, max: f64) -> Result<(), String> {
    if min <= nominal && nominal <= max {
        Ok(())
    } else {
        Err(format!(
            "{what}: needs min ≤ nominal ≤ max (got {min} … {nominal} … {max})"
        ))
    }
}

impl TryFrom<RawSupply> for Supply {
    type Error = String;
    fn try_from(r: RawSupply) -> Result<Self, String> {
        ordered("supply", r.min.get(), r.nominal.get(), r.max.get())?;
        Ok(Supply {
            min: r.min,
            nominal: r.nominal,
            max: r.max,
            source_resistance: r.source_resistance,
        })
    }
}

/// Coil temperature range, °C.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawTemperature")]
pub struct Temperature {
    /// Coldest, °C.
    pub min: Q<Celsius>,
    /// Nominal, °C.
    pub nominal: Q<Celsius>,
    /// Hottest, °C.
    pub max: Q<Celsius>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTemperature {
    min: Q<Celsius>,
    nominal: Q<Celsius>,
    max: Q<Celsius>,
}

impl TryFrom<RawTemperature> for Temperature {
    type Error = String;
    fn try_from(r: RawTemperature) -> Result<Self, String> {
        ordered("temperature", r.min.get(), r.nominal.get(), r.max.get())?;
        if r.min.get() < -273.15 || r.max.get() > 400.0 {
            return Err("temperature: outside −273.15 … 400 °C".into());
        }
        Ok(Temperature {
            min: r.min,
            nominal: r.nominal,
            max: r.max,
        })
    }
}

/// The coil of a valve or relay.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Coil {
    /// Unsaturated inductance, H.
    pub inductance: Pos<Henry>,
    /// Winding resistance at 20 °C, Ω.
    pub resistance: Pos<Ohm>,
    /// Relative tolerance of the inductance (0.1 = ±10 %), for the plan.
    #[serde(default = "zero")]
    pub inductance_tolerance: NonNeg<Plain>,
    /// Relative tolerance of the resistance, for the plan.
    #[serde(default = "zero")]
    pub resistance_tolerance: NonNeg<Plain>,
    /// Knee current of a saturating core, A (absent: linear coil).
    pub knee_current: Option<Pos<Ampere>>,
    /// Residual (saturated) inductance, H; needed with `knee_current`.
    pub residual_inductance: Option<Pos<Henry>>,
    /// Thermal resistance winding to ambient, K/W (absent: the winding stays at its
    /// starting temperature).
    pub thermal_resistance: Option<Pos<Plain>>,
    /// Thermal capacitance of the winding, J/K; needed with `thermal_resistance`.
    pub thermal_capacitance: Option<Pos<Plain>>,
    /// Current at which the armature pulls in, A.
    pub pull_in_current: Pos<Ampere>,
    /// Current below which the armature is taken as released, A.
    pub release_current: Pos<Ampere>,
    /// Must-hold current: below it a pulled-in armature drops out, A (optional; the lower
    /// limit of `hold-current` and of the plan's hold verdict).
    pub hold_current: Option<Pos<Ampere>>,
    /// The moving armature (`[system.coil.armature]`; absent: nothing moves, the coil is its
    /// `inductance`).
    pub armature: Option<Armature>,
}

/// The moving armature of a coil: the gap inductance `L(x) = zero_gap_inductance /
/// (1 + x/halving_gap)` (the plan's `lenz::armature::GapInductance::Reluctance`), which
/// replaces the coil's `inductance` in the simulation, and the mechanics. Keys follow
/// `lenz::armature`'s parameter names without their unit suffixes.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Armature {
    /// Inductance at zero air gap, H.
    pub zero_gap_inductance: Pos<Henry>,
    /// Gap at which the inductance has halved, m.
    pub halving_gap: Pos<Metre>,
    /// Saturation flux linkage, V·s (absent: unsaturated).
    pub saturation_flux: Option<Pos<Plain>>,
    /// Moving mass, kg.
    pub mass: Pos<Kilogram>,
    /// Gap at the open stop (the travel plus the closed gap), m.
    pub open_gap: Pos<Metre>,
    /// Residual gap at the closed stop, m.
    pub closed_gap: NonNeg<Metre>,
    /// Spring force at the open stop, pushing open, N.
    pub spring_preload: NonNeg<Newton>,
    /// Spring rate, N/m.
    pub spring_rate: NonNeg<NewtonPerMetre>,
    /// Viscous damping, N·s/m.
    #[serde(default = "zero")]
    pub damping: NonNeg<NewtonSecondPerMetre>,
    /// Constant load against closing (pressure on a valve seat, contact springs), N.
    #[serde(default = "zero")]
    pub load: NonNeg<Newton>,
    /// Coefficient of restitution at the stops, 0 ..= 1.
    pub restitution: NonNeg<Plain>,
    /// A rebound slower than this ends the bounce, m/s (default 1 mm/s).
    #[serde(default = "rest_speed")]
    pub rest_speed: Pos<Plain>,
}

fn rest_speed<U>() -> Pos<U> {
    Pos::new(1e-3)
}

/// The clamp network across the coil or the switch (one kind per file).
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ClampSpec {
    /// Freewheel diode across the coil.
    Freewheel {
        /// Diode forward drop, V.
        diode_drop: NonNeg<Volt>,
    },
    /// Diode in series with a zener across the coil.
    DiodeZener {
        /// Diode forward drop, V.
        diode_drop: NonNeg<Volt>,
        /// Zener voltage, V.
        zener: Pos<Volt>,
    },
    /// Active clamp across the switch.
    AcrossSwitch {
        /// Clamp voltage, V.
        voltage: Pos<Volt>,
    },
    /// Diode in series with a resistor across the coil.
    ResistorDiode {
        /// Resistor, Ω.
        resistor: Pos<Ohm>,
        /// Diode forward drop, V.
        diode_drop: NonNeg<Volt>,
    },
    /// No clamp: only the switch's own capacitance.
    Unclamped {
        /// Capacitance across the switch, F.
        capacitance: Pos<Farad>,
    },
}

/// The boost stage (heater rail).
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct BoostStage {
    /// Inductance, H.
    pub inductance: Pos<Henry>,
    /// Inductor DCR, Ω.
    pub dcr: NonNeg<Ohm>,
    /// Inductor saturation current, A.
    pub saturation_current: Pos<Ampere>,
    /// Output diode forward drop, V.
    pub diode_drop: NonNeg<Volt>,
    /// Output capacitance, F.
    pub output_capacitance: Pos<Farad>,
    /// Output capacitor ESR, Ω.
    pub esr: NonNeg<Ohm>,
    /// Load resistance, Ω.
    pub load: Pos<Ohm>,
    /// Wanted output voltage, V.
    pub output: Pos<Volt>,
    /// Relative tolerance of the inductance, for the plan.
    #[serde(default = "zero")]
    pub inductance_tolerance: NonNeg<Plain>,
    /// Relative tolerance of the DCR and the switch on-resistance, for the plan.
    #[serde(default = "zero")]
    pub resistance_tolerance: NonNeg<Plain>,
    /// Relative tolerance of the load current, for the plan.
    #[serde(default = "zero")]
    pub load_tolerance: NonNeg<Plain>,
    /// Minimum off-time of the PWM, s.
    #[serde(default = "zero")]
    pub min_off_time: NonNeg<Second>,
    /// Minimum on-time of the PWM, s.
    #[serde(default = "zero")]
    pub min_on_time: NonNeg<Second>,
}

/// The switch.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Switch {
    /// On-resistance, Ω.
    pub on_resistance: NonNeg<Ohm>,
    /// Breakdown voltage (the switch avalanches above it), V.
    pub breakdown: Pos<Volt>,
}

/// Ratings of the parts; a verdict is given for each one present.
#[derive(Debug, Clone, Copy, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Ratings {
    /// Highest allowed switch voltage, V.
    pub switch_voltage: Option<Pos<Volt>>,
    /// Highest allowed switch current, A.
    pub switch_current: Option<Pos<Ampere>>,
    /// Highest single-pulse energy the switch may absorb while clamping, J.
    pub switch_energy: Option<Pos<Joule>>,
    /// Highest energy per switch-off the clamp network may absorb, J.
    pub clamp_energy: Option<Pos<Joule>>,
    /// Highest allowed bus voltage (the bus capacitor's rating, a motor bridge), V.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bus_voltage: Option<Pos<Volt>>,
}

/// Requirements of the application; a verdict is given for each one present.
#[derive(Debug, Clone, Copy, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Requirements {
    /// Longest allowed release time (current part), s.
    pub release_time: Option<Pos<Second>>,
    /// Longest allowed pull-in time, s.
    pub pull_in_time: Option<Pos<Second>>,
    /// Highest allowed output ripple (boost), V peak to peak.
    pub output_ripple: Option<Pos<Volt>>,
    /// Smallest allowed margin below the inductor saturation current (boost), 0 … 1.
    pub saturation_margin: Option<NonNeg<Plain>>,
}

/// The sense chains and the ADC: coil current through a shunt and an amplifier, supply and
/// output voltage through dividers.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawSense")]
pub struct Sense {
    /// ADC resolution, bits (8 … 16).
    pub adc_bits: u32,
    /// ADC reference voltage, V.
    pub adc_reference: Pos<Volt>,
    /// Shunt, Ω.
    pub shunt: Pos<Ohm>,
    /// Current amplifier gain.
    pub gain: Pos<Plain>,
    /// Amplifier output bias at zero current, V.
    pub bias: NonNeg<Volt>,
    /// Relative gain error of each chain (0.01 = +1 %).
    pub gain_error: Q<Plain>,
    /// Offset error at the ADC input, V.
    pub offset: Q<Volt>,
    /// RMS noise, LSB.
    pub noise: NonNeg<Plain>,
    /// Supply divider ratio (V at the ADC per V of supply, ≤ 1).
    pub supply_divider: Pos<Plain>,
    /// Output (switch node or rail) divider ratio, ≤ 1.
    pub output_divider: Pos<Plain>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSense {
    adc_bits: u32,
    adc_reference: Pos<Volt>,
    shunt: Pos<Ohm>,
    gain: Pos<Plain>,
    #[serde(default = "zero")]
    bias: NonNeg<Volt>,
    #[serde(default = "q0")]
    gain_error: Q<Plain>,
    #[serde(default = "q0")]
    offset: Q<Volt>,
    #[serde(default = "zero")]
    noise: NonNeg<Plain>,
    supply_divider: Pos<Plain>,
    output_divider: Pos<Plain>,
}

fn q0<U>() -> Q<U> {
    Q::new(0.0)
}

impl TryFrom<RawSense> for Sense {
    type Error = String;
    fn try_from(r: RawSense) -> Result<Self, String> {
        if !(8..=16).contains(&r.adc_bits) {
            return Err(format!("key `adc_bits`: {} is outside 8 … 16", r.adc_bits));
        }
        for (k, v) in [
            ("supply_divider", r.supply_divider.get()),
            ("output_divider", r.output_divider.get()),
        ] {
            if v > 1.0 {
                return Err(format!("key `{k}`: a divider ratio is at most 1 (got {v})"));
            }
        }
        if r.gain_error.get().abs() >= 0.5 {
            return Err("key `gain_error`: must lie within ±0.5".into());
        }
        if r.bias.get() >= r.adc_reference.get() {
            return Err("key `bias`: must lie below the ADC reference".into());
        }
        Ok(Sense {
            adc_bits: r.adc_bits,
            adc_reference: r.adc_reference,
            shunt: r.shunt,
            gain: r.gain,
            bias: r.bias,
            gain_error: r.gain_error,
            offset: r.offset,
            noise: r.noise,
            supply_divider: r.supply_divider,
            output_divider: r.output_divider,
        })
    }
}

/// The controller under test: one of the example controllers with its parameters, or the
/// user's own (no `[controller]` table).
#[derive(Debug, Clone, Copy, Default, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Controller {
    /// No `[controller]`: the user's own controller, given in code.
    #[default]
    #[serde(skip_deserializing)]
    Own,
    /// Valve or relay driver: pull-in at full voltage, PWM hold, estimator, monitor, trip
    /// detector, off-timer.
    Coil(CoilController),
    /// Boost regulator: PI loop behind the duty limiter.
    Boost(BoostController),
    /// Bridge motor driver: soft start, brake before reversal, speed from back-EMF, jam
    /// detector.
    Motor(MotorController),
}

/// Parameters of the valve/relay driver.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawCoilController")]
pub struct CoilController {
    /// Pull-in ends when the estimate reaches this current, A.
    pub pull_in_current: Pos<Ampere>,
    /// … and not before this time (armature travel), s.
    pub pull_in_min_time: NonNeg<Second>,
    /// PWM hold duty, 0 … 1.
    pub hold_duty: Pos<Plain>,
    /// Instantaneous overcurrent trip threshold, A (one sample at or above it trips and
    /// latches).
    pub trip_current: Pos<Ampere>,
    /// Plausibility monitor thresholds.
    pub monitor: Monitor,
}

/// Plausibility monitor thresholds of the coil controller.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Monitor {
    /// Absolute tolerance of estimate against measurement, A.
    pub abs_tol: NonNeg<Ampere>,
    /// Relative tolerance, 0 … 1.
    pub rel_tol: NonNeg<Plain>,
    /// Open coil: the estimate is above this …, A.
    pub open_min_estimate: Pos<Ampere>,
    /// … and the measurement below this, A.
    pub open_max: Pos<Ampere>,
    /// Checks in a row before a fault latches (0 … 65 535).
    #[serde(deserialize_with = "super::quantity::count_u16")]
    pub persistence: u16,
    /// Samples without change before the sensor counts as stuck (0 … 65 535).
    #[serde(deserialize_with = "super::quantity::count_u16")]
    pub stuck_samples: u16,
    /// … while the estimate moved by at least this, A.
    pub stuck_min_change: Pos<Ampere>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCoilController {
    pull_in_current: Pos<Ampere>,
    pull_in_min_time: NonNeg<Second>,
    hold_duty: Pos<Plain>,
    trip_current: Pos<Ampere>,
    monitor: Monitor,
}

impl TryFrom<RawCoilController> for CoilController {
    type Error = String;
    fn try_from(r: RawCoilController) -> Result<Self, String> {
        if r.hold_duty.get() > 1.0 {
            return Err(format!("key `hold_duty`: {} is above 1", r.hold_duty.get()));
        }
        Ok(CoilController {
            pull_in_current: r.pull_in_current,
            pull_in_min_time: r.pull_in_min_time,
            hold_duty: r.hold_duty,
            trip_current: r.trip_current,
            monitor: r.monitor,
        })
    }
}

/// Parameters of the boost regulator (PI loop behind the duty limiter kernel).
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawBoostController")]
pub struct BoostController {
    /// Proportional gain, duty per volt of error.
    pub kp: NonNeg<Plain>,
    /// Integral gain, duty per volt of error per tick.
    pub ki: NonNeg<Plain>,
    /// Input window of the limiter: readings outside it give duty 0, V.
    pub input_min: Pos<Volt>,
    /// Upper end of the input window, V.
    pub input_max: Pos<Volt>,
    /// Heaviest load current the limiter's tables are planned for, A.
    pub max_load_current: Pos<Ampere>,
    /// Lightest load current (the light-load overvoltage limit), A; with
    /// `light_load_max_output`.
    pub light_load_current: Option<Pos<Ampere>>,
    /// Highest output allowed at the lightest load, V.
    pub light_load_max_output: Option<Pos<Volt>>,
    /// Soft-start ramp of the duty from 0 to full scale, s.
    pub soft_start: NonNeg<Second>,
    /// Output voltage at which the limiter cuts switching, V.
    pub overvoltage: Pos<Volt>,
    /// Output voltage at or below which switching resumes, V.
    pub resume: Pos<Volt>,
    /// Duty register value for duty 1 (the PWM timer period), counts.
    pub duty_full_scale: u16,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBoostController {
    kp: NonNeg<Plain>,
    ki: NonNeg<Plain>,
    input_min: Pos<Volt>,
    input_max: Pos<Volt>,
    max_load_current: Pos<Ampere>,
    light_load_current: Option<Pos<Ampere>>,
    light_load_max_output: Option<Pos<Volt>>,
    soft_start: NonNeg<Second>,
    overvoltage: Pos<Volt>,
    resume: Pos<Volt>,
    #[serde(default = "thousand")]
    duty_full_scale: u16,
}

fn thousand() -> u16 {
    1000
}

impl TryFrom<RawBoostController> for BoostController {
    type Error = String;
    fn try_from(r: RawBoostController) -> Result<Self, String> {
        if r.input_min.get() >= r.input_max.get() {
            return Err("key `input_min`: must lie below `input_max`".into());
        }
        if r.resume.get() > r.overvoltage.get() {
            return Err("key `resume`: must not lie above `overvoltage`".into());
        }
        if r.light_load_current.is_some() != r.light_load_max_output.is_some() {
            return Err("keys `light_load_current` and `light_load_max_output` go together".into());
        }
        if r.duty_full_scale < 2 {
            return Err("key `duty_full_scale`: at least 2 counts".into());
        }
        Ok(BoostController {
            kp: r.kp,
            ki: r.ki,
            input_min: r.input_min,
            input_max: r.input_max,
            max_load_current: r.max_load_current,
            light_load_current: r.light_load_current,
            light_load_max_output: r.light_load_max_output,
            soft_start: r.soft_start,
            overvoltage: r.overvoltage,
            resume: r.resume,
            duty_full_scale: r.duty_full_scale,
        })
    }
}

/// Distribution of a parameter in a sweep.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Dist {
    /// Uniform over the range.
    Uniform,
    /// Normal: mean at nominal, `rel` is one standard deviation (relative parameters), or the
    /// range is ±3 standard deviations (supply, temperature); truncated at ±3σ.
    Normal,
}

/// A tolerance of a relative parameter: nominal × (1 ± `rel`).
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawRelTolerance")]
pub struct RelTolerance {
    /// Distribution.
    pub dist: Dist,
    /// Half-width (uniform) or standard deviation (normal), relative.
    pub rel: NonNeg<Plain>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRelTolerance {
    dist: Dist,
    rel: NonNeg<Plain>,
}

impl TryFrom<RawRelTolerance> for RelTolerance {
    type Error = String;
    fn try_from(r: RawRelTolerance) -> Result<Self, String> {
        // The extreme draw must keep the value positive: 1 − rel (uniform), 1 − 3·rel (normal).
        let reach = match r.dist {
            Dist::Uniform => r.rel.get(),
            Dist::Normal => 3.0 * r.rel.get(),
        };
        if reach >= 0.9 {
            return Err(format!(
                "key `rel`: {} reaches {:.0} % below nominal; the spread must stay under 90 %",
                r.rel.get(),
                reach * 100.0
            ));
        }
        Ok(RelTolerance {
            dist: r.dist,
            rel: r.rel,
        })
    }
}

/// A tolerance of a ranged parameter: sampled within the system's own range.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct RangeTolerance {
    /// Distribution over the system's min … max.
    pub dist: Dist,
}

/// Spreads for sweeps.
#[derive(Debug, Clone, Copy, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Tolerances {
    /// Coil or inductor inductance.
    pub inductance: Option<RelTolerance>,
    /// Coil winding resistance or inductor DCR.
    pub resistance: Option<RelTolerance>,
    /// Clamp voltage (diode, zener, clamp) or resistor.
    pub clamp: Option<RelTolerance>,
    /// Sense chain gain.
    pub sense_gain: Option<RelTolerance>,
    /// Boost load resistance.
    pub load: Option<RelTolerance>,
    /// Supply within `[system.supply]` min … max.
    pub supply: Option<RangeTolerance>,
    /// Coil temperature within `[system.temperature]` min … max.
    pub temperature: Option<RangeTolerance>,
    /// Armature open gap (travel).
    pub open_gap: Option<RelTolerance>,
    /// Armature spring preload and rate (one draw for both).
    pub spring: Option<RelTolerance>,
    /// Armature load force.
    pub armature_load: Option<RelTolerance>,
    /// A motor's torque constant.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub torque_constant: Option<RelTolerance>,
}

/// One scenario: a timeline of events and the properties that must hold.
#[derive(Debug, Clone, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Name (unique within the file).
    pub name: String,
    /// Simulated time, s.
    pub duration: Pos<Second>,
    /// Supply for this scenario (default: nominal), V.
    pub supply: Option<Pos<Volt>>,
    /// Coil temperature for this scenario (default: nominal), °C.
    pub temperature: Option<Q<Celsius>>,
    /// Seed of the ADC noise (default 1).
    #[serde(default = "one_u64")]
    pub noise_seed: u64,
    /// The events (`[[scenario.event]]`).
    #[serde(rename = "event", default)]
    pub events: Vec<Event>,
    /// The properties that must hold (`[[scenario.check]]`).
    #[serde(rename = "check", default)]
    pub checks: Vec<Check>,
}

fn one_u64() -> u64 {
    1
}

/// A firmware command.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Command {
    /// Energize the coil / enable the regulator.
    On,
    /// De-energize / disable.
    Off,
    /// Run the motor forward (at `duty`, default 1).
    Forward,
    /// Run the motor in reverse (at `duty`, default 1).
    Reverse,
    /// Brake the motor.
    Brake,
    /// Let the motor coast.
    Coast,
}

impl Command {
    /// A motor command (forward, reverse, brake, coast).
    #[must_use]
    pub const fn is_motor(self) -> bool {
        matches!(
            self,
            Command::Forward | Command::Reverse | Command::Brake | Command::Coast
        )
    }

    /// Name as written in files.
    #[must_use]
    pub const fn name(self) -> &'static str {
        match self {
            Command::On => "on",
            Command::Off => "off",
            Command::Forward => "forward",
            Command::Reverse => "reverse",
            Command::Brake => "brake",
            Command::Coast => "coast",
        }
    }
}

/// A fault injected into the plant or the sensor.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Fault {
    /// The coil is shorted: `residual_inductance` and `residual_resistance` remain.
    ShortedCoil,
    /// Shorted turns: inductance and resistance drop to `factor` of their value.
    ShortedTurns,
    /// The coil (or its wiring) is open.
    OpenCoil,
    /// The switch is stuck on.
    SwitchStuckOn,
    /// The sensor `channel` keeps its last reading.
    SensorStuck,
    /// The sensor `channel` gets `noise` LSB RMS of extra noise.
    SensorNoisy,
    /// The coil's armature sticks where it is.
    StuckArmature,
    /// The armature gets `damping` N·s/m of extra viscous friction.
    SluggishArmature,
    /// An extra `force` N acts against closing.
    ExcessLoad,
    /// The motor's rotor locks.
    Jam,
    /// The motor's load torque steps to `load_torque`, above its rating.
    Overload,
    /// The motor's winding (a lead, a brush) opens.
    OpenWinding,
    /// Part of the motor's winding is shorted: inductance and resistance drop to `factor`.
    ShortedWinding,
    /// The supply stops taking current back (a motor's returned energy charges the bus).
    SupplyCannotSink,
}

/// An ADC channel.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Channel {
    /// Coil (inductor) current.
    Current,
    /// Supply voltage.
    Supply,
    /// Output voltage.
    Output,
}

/// One event of a scenario: exactly one of `command`, `fault`, `supply`, `load`,
/// `load_torque`.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawEvent")]
pub struct Event {
    /// Time, s.
    pub at: NonNeg<Second>,
    /// What happens.
    pub action: Action,
    /// The firmware must trip after this event (checked by `trip-latency`).
    pub expect_trip: bool,
    /// Duty of a `forward` or `reverse` command, 0 … 1 (1 for every other event).
    pub duty: f64,
}

/// What an event does.
#[derive(Debug, Clone, Copy, Serialize)]
pub enum Action {
    /// A firmware command.
    Command(Command),
    /// A fault.
    Fault(FaultSpec),
    /// A supply change to `.0` volts, linear over `.1` seconds (0: a step).
    Supply(f64, f64),
    /// A load step to this resistance, Ω (boost).
    Load(f64),
    /// A motor's load torque steps to this value, N·m.
    LoadTorque(f64),
}

/// A fault with its parameters.
#[derive(Debug, Clone, Copy, Serialize)]
pub enum FaultSpec {
    /// Shorted coil.
    ShortedCoil {
        /// Residual inductance, H.
        residual_inductance_h: f64,
        /// Residual resistance, Ω.
        residual_resistance_ohm: f64,
    },
    /// Shorted turns.
    ShortedTurns {
        /// Remaining fraction of L and R.
        factor: f64,
    },
    /// Open coil.
    OpenCoil,
    /// Switch stuck on.
    SwitchStuckOn,
    /// Stuck sensor.
    SensorStuck(Channel),
    /// Noisy sensor.
    SensorNoisy(Channel, f64),
    /// Stuck armature.
    StuckArmature,
    /// Sluggish armature: extra damping, N·s/m.
    SluggishArmature(f64),
    /// Excess load: extra force against closing, N.
    ExcessLoad(f64),
    /// The motor's rotor locks.
    Jam,
    /// The motor's load torque steps above its rating, to this value, N·m.
    Overload(f64),
    /// The motor's winding opens.
    OpenWinding,
    /// Part of the motor's winding is shorted: L and R drop to this fraction.
    ShortedWinding {
        /// Remaining fraction of L and R.
        factor: f64,
    },
    /// The supply stops taking current back.
    SupplyCannotSink,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEvent {
    at: NonNeg<Second>,
    command: Option<Command>,
    fault: Option<Fault>,
    supply: Option<Pos<Volt>>,
    load: Option<Pos<Ohm>>,
    load_torque: Option<NonNeg<NewtonMetre>>,
    duty: Option<Pos<Plain>>,
    #[serde(default)]
    expect_trip: bool,
    factor: Option<Pos<Plain>>,
    residual_inductance: Option<Pos<Henry>>,
    residual_resistance: Option<NonNeg<Ohm>>,
    channel: Option<Channel>,
    noise: Option<NonNeg<Plain>>,
    ramp: Option<NonNeg<Second>>,
    damping: Option<Pos<NewtonSecondPerMetre>>,
    force: Option<Pos<Newton>>,
}

impl TryFrom<RawEvent> for Event {
    type Error = String;
    fn try_from(r: RawEvent) -> Result<Self, String> {
        let overload = r.fault == Some(Fault::Overload);
        let n = usize::from(r.command.is_some())
            + usize::from(r.fault.is_some())
            + usize::from(r.supply.is_some())
            + usize::from(r.load.is_some())
            + usize::from(r.load_torque.is_some() && !overload);
        if n != 1 {
            return Err(
                "an event needs exactly one of the keys `command`, `fault`, `supply`, `load`, \
                 `load_torque`"
                    .into(),
            );
        }
        if let Some(d) = r.duty {
            if !matches!(r.command, Some(Command::Forward | Command::Reverse)) {
                return Err("key `duty` belongs to a `forward` or `reverse` command".into());
            }
            if d.get() > 1.0 {
                return Err(format!("key `duty`: {} is above 1", d.get()));
            }
        }
        // Which parameter keys each kind of event takes.
        let given = [
            ("factor", r.factor.is_some()),
            ("residual_inductance", r.residual_inductance.is_some()),
            ("residual_resistance", r.residual_resistance.is_some()),
            ("channel", r.channel.is_some()),
            ("noise", r.noise.is_some()),
            ("ramp", r.ramp.is_some()),
            ("damping", r.damping.is_some()),
            ("force", r.force.is_some()),
        ];
        let allowed: &[&str] = match r.fault {
            Some(Fault::ShortedCoil) => &["residual_inductance", "residual_resistance"],
            Some(Fault::ShortedTurns) => &["factor"],
            Some(Fault::SensorStuck) => &["channel"],
            Some(Fault::SensorNoisy) => &["channel", "noise"],
            Some(Fault::SluggishArmature) => &["damping"],
            Some(Fault::ExcessLoad) => &["force"],
            Some(Fault::ShortedWinding) => &["factor"],
            None if r.supply.is_some() => &["ramp"],
            _ => &[],
        };
        if let Some((k, _)) = given.iter().find(|(k, g)| *g && !allowed.contains(k)) {
            return Err(format!("key `{k}` does not belong to this kind of event"));
        }
        let need = |k: &str| format!("missing key `{k}`: this fault needs it");
        let action = match (r.command, r.fault, r.supply, r.load) {
            (Some(c), ..) => Action::Command(c),
            (_, Some(fault), ..) => Action::Fault(match fault {
                Fault::ShortedCoil => FaultSpec::ShortedCoil {
                    residual_inductance_h: r
                        .residual_inductance
                        .ok_or_else(|| need("residual_inductance"))?
                        .get(),
                    residual_resistance_ohm: r
                        .residual_resistance
                        .ok_or_else(|| need("residual_resistance"))?
                        .get(),
                },
                Fault::ShortedTurns => {
                    let factor = r.factor.ok_or_else(|| need("factor"))?.get();
                    if factor >= 1.0 {
                        return Err(format!("key `factor`: {factor} is not below 1"));
                    }
                    FaultSpec::ShortedTurns { factor }
                }
                Fault::OpenCoil => FaultSpec::OpenCoil,
                Fault::SwitchStuckOn => FaultSpec::SwitchStuckOn,
                Fault::SensorStuck => {
                    FaultSpec::SensorStuck(r.channel.ok_or_else(|| need("channel"))?)
                }
                Fault::SensorNoisy => FaultSpec::SensorNoisy(
                    r.channel.ok_or_else(|| need("channel"))?,
                    r.noise.ok_or_else(|| need("noise"))?.get(),
                ),
                Fault::StuckArmature => FaultSpec::StuckArmature,
                Fault::SluggishArmature => {
                    FaultSpec::SluggishArmature(r.damping.ok_or_else(|| need("damping"))?.get())
                }
                Fault::ExcessLoad => {
                    FaultSpec::ExcessLoad(r.force.ok_or_else(|| need("force"))?.get())
                }
                Fault::Jam => FaultSpec::Jam,
                Fault::Overload => {
                    FaultSpec::Overload(r.load_torque.ok_or_else(|| need("load_torque"))?.get())
                }
                Fault::OpenWinding => FaultSpec::OpenWinding,
                Fault::SupplyCannotSink => FaultSpec::SupplyCannotSink,
                Fault::ShortedWinding => {
                    let factor = r.factor.ok_or_else(|| need("factor"))?.get();
                    if factor >= 1.0 {
                        return Err(format!("key `factor`: {factor} is not below 1"));
                    }
                    FaultSpec::ShortedWinding { factor }
                }
            }),
            (_, _, Some(v), _) => Action::Supply(v.get(), r.ramp.map_or(0.0, NonNeg::get)),
            (_, _, _, Some(l)) => Action::Load(l.get()),
            (None, None, None, None) => match r.load_torque {
                Some(t) => Action::LoadTorque(t.get()),
                None => {
                    return Err(
                        "an event needs one of `command`, `fault`, `supply`, `load`, \
                         `load_torque`"
                            .into(),
                    );
                }
            },
        };
        if r.expect_trip && matches!(action, Action::Command(_)) {
            return Err("key `expect_trip` belongs to a fault, supply or load event".into());
        }
        Ok(Event {
            at: r.at,
            action,
            expect_trip: r.expect_trip,
            duty: r.duty.map_or(1.0, Pos::get),
        })
    }
}

/// A property measured on every run.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Deserialize, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Property {
    /// Highest switch voltage, V (limit: `max`).
    PeakSwitchVoltage,
    /// Highest clamp-network energy of one switch-off, J (`max`).
    ClampEnergy,
    /// Highest switch energy (clamping or avalanche) of one switch-off, J (`max`).
    SwitchEnergy,
    /// Highest coil or inductor current, A (`max`).
    PeakCurrent,
    /// Time from the first fault to the trip, s (`max`).
    TripLatency,
    /// Trips seen (`max`, default 0): no trip in normal operation.
    NoTrip,
    /// Longest time from an off command until the current fell below the release current, s
    /// (`max`).
    ReleaseTime,
    /// Largest deviation of the output from the wanted voltage, `after` seconds after the start
    /// and after each load step, V (`max`).
    OutputBand,
    /// Largest difference between the firmware's current estimate and the plant current
    /// while the coil is on, A (`max`). With `[system.coil.armature]`, measured only while
    /// the armature rests seated and the controller has reported it seated (the estimate
    /// models one inductance; the motion is checked by the armature properties); infinite
    /// when no tick was measured.
    EstimatorError,
    /// Longest time from an on command to the coil current first reaching the coil's
    /// `pull_in_current`, s (`max`; infinite when it never gets there).
    PullInTime,
    /// Lowest coil current after the pull-in while commanded on, A (`min`, default: the
    /// coil's `hold_current`): below it the armature drops out.
    HoldCurrent,
    /// Highest winding temperature (the plant's thermal model), °C (`max`).
    CoilTemperature,
    /// Mean power the winding turns into heat while held, W (`max`).
    CoilPower,
    /// Longest time from an on command to the armature's final seating, s (`max`).
    SeatTime,
    /// Highest speed of the armature's first impact at the closed stop, m/s (`max`).
    ImpactVelocity,
    /// Longest time from an off command to the armature's return to the open stop, s (`max`).
    ArmatureReleaseTime,
    /// Highest supply energy from a stroke's switch-on to its seating, J (`max`).
    ActuationEnergy,
    /// Highest bus voltage of a motor bridge, V (`max`).
    BusVoltage,
    /// Longest time from a `forward` or `reverse` command to the rotor turning at `speed`
    /// rad/s in that direction, s (`max`; infinite when it never gets there).
    TimeToSpeed,
    /// Time from the first `jam` fault to the firmware's trip, s (`max`; infinite without a
    /// trip).
    JamLatency,
    /// Largest current magnitude from a command that reverses the motor to the next command,
    /// A (`max`).
    ReversalPeakCurrent,
    /// Highest motor winding temperature (the plant's thermal model), °C (`max`).
    WindingTemperature,
    /// Largest time from the armature's final seating to the controller's seated report, s
    /// (`max`; negative when it reports before the last bounce; infinite when the armature
    /// seated and no report came).
    SeatDetectionLatency,
    /// Largest time from the armature's release (it leaves the closed stop) to the
    /// controller's drop-out report, s (`max`; infinite when a release was not reported).
    DropoutDetectionLatency,
    /// Armature reports made while the armature had not reached the closed stop (seated) or
    /// not left it (drop-out) (`max`, default 0).
    FalseDetections,
}

impl Property {
    /// Name as written in files.
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Property::PeakSwitchVoltage => "peak-switch-voltage",
            Property::ClampEnergy => "clamp-energy",
            Property::SwitchEnergy => "switch-energy",
            Property::PeakCurrent => "peak-current",
            Property::TripLatency => "trip-latency",
            Property::NoTrip => "no-trip",
            Property::ReleaseTime => "release-time",
            Property::OutputBand => "output-band",
            Property::EstimatorError => "estimator-error",
            Property::PullInTime => "pull-in-time",
            Property::HoldCurrent => "hold-current",
            Property::CoilTemperature => "coil-temperature",
            Property::CoilPower => "coil-power",
            Property::SeatTime => "seat-time",
            Property::ImpactVelocity => "impact-velocity",
            Property::ArmatureReleaseTime => "armature-release-time",
            Property::ActuationEnergy => "actuation-energy",
            Property::BusVoltage => "bus-voltage",
            Property::TimeToSpeed => "time-to-speed",
            Property::JamLatency => "jam-latency",
            Property::ReversalPeakCurrent => "reversal-peak-current",
            Property::WindingTemperature => "winding-temperature",
            Property::SeatDetectionLatency => "seat-detection-latency",
            Property::DropoutDetectionLatency => "dropout-detection-latency",
            Property::FalseDetections => "false-detections",
        }
    }

    /// A property of a motor bridge.
    #[must_use]
    pub const fn is_motor(self) -> bool {
        matches!(
            self,
            Property::BusVoltage
                | Property::TimeToSpeed
                | Property::JamLatency
                | Property::ReversalPeakCurrent
                | Property::WindingTemperature
        )
    }

    /// Name of the property in the closed loop's results.
    #[must_use]
    pub fn loop_name(self) -> &'static str {
        match self {
            Property::PeakSwitchVoltage => "peak_switch_voltage",
            Property::ClampEnergy => "clamp_energy_per_switch_off",
            Property::SwitchEnergy => "switch_energy_per_switch_off",
            Property::PeakCurrent => "peak_current",
            Property::TripLatency => "trip_latency",
            Property::NoTrip => "no_trip_in_normal_operation",
            Property::ReleaseTime => "release_time",
            Property::OutputBand => "output_within_band",
            Property::EstimatorError => "estimator_error",
            Property::PullInTime => "pull_in_time",
            Property::HoldCurrent => "hold_current",
            Property::CoilTemperature => "coil_temperature",
            Property::CoilPower => "coil_power",
            Property::SeatTime => "seat_time",
            Property::ImpactVelocity => "impact_velocity",
            Property::ArmatureReleaseTime => "armature_release_time",
            Property::ActuationEnergy => "actuation_energy",
            Property::BusVoltage => "bus_voltage",
            Property::TimeToSpeed => "time_to_speed",
            Property::JamLatency => "jam_latency",
            Property::ReversalPeakCurrent => "reversal_peak_current",
            Property::WindingTemperature => "winding_temperature",
            Property::SeatDetectionLatency => "seat_detection_latency",
            Property::DropoutDetectionLatency => "dropout_detection_latency",
            Property::FalseDetections => "false_detections",
        }
    }

    /// The property is measured on a moving armature (`[system.coil.armature]`).
    #[must_use]
    pub const fn needs_armature(self) -> bool {
        matches!(
            self,
            Property::SeatTime
                | Property::ImpactVelocity
                | Property::ArmatureReleaseTime
                | Property::ActuationEnergy
                | Property::SeatDetectionLatency
                | Property::DropoutDetectionLatency
                | Property::FalseDetections
        )
    }

    /// Unit of the value and the limits.
    #[must_use]
    pub fn unit(self) -> crate::si::Unit {
        use crate::si::Unit;
        match self {
            Property::PeakSwitchVoltage | Property::OutputBand | Property::BusVoltage => Unit::Volt,
            Property::ClampEnergy | Property::SwitchEnergy | Property::ActuationEnergy => {
                Unit::Joule
            }
            Property::ImpactVelocity => Unit::MetrePerSecond,
            Property::PeakCurrent
            | Property::EstimatorError
            | Property::HoldCurrent
            | Property::ReversalPeakCurrent => Unit::Ampere,
            Property::TripLatency
            | Property::ReleaseTime
            | Property::PullInTime
            | Property::SeatTime
            | Property::ArmatureReleaseTime
            | Property::TimeToSpeed
            | Property::JamLatency
            | Property::SeatDetectionLatency
            | Property::DropoutDetectionLatency => Unit::Second,
            Property::CoilTemperature | Property::WindingTemperature => Unit::Celsius,
            Property::CoilPower => Unit::Watt,
            Property::NoTrip | Property::FalseDetections => Unit::None,
        }
    }

    /// Unit symbol for display.
    #[must_use]
    pub fn symbol(self) -> &'static str {
        match self.unit() {
            crate::si::Unit::Volt => "V",
            crate::si::Unit::Joule => "J",
            crate::si::Unit::Ampere => "A",
            crate::si::Unit::Second => "s",
            crate::si::Unit::Celsius => "°C",
            crate::si::Unit::Watt => "W",
            crate::si::Unit::MetrePerSecond => "m/s",
            _ => "",
        }
    }
}

/// A property with its limit.
#[derive(Debug, Clone, Copy, Deserialize, Serialize)]
#[serde(deny_unknown_fields, try_from = "RawCheck")]
pub struct Check {
    /// Which property.
    pub property: Property,
    /// Highest allowed value (for output-band: the allowed deviation from the wanted output;
    /// for no-trip: 0; unused by hold-current, whose limit is `min`).
    pub max: f64,
    /// Lowest allowed value (hold-current only; `None`: the coil's `hold_current`).
    pub min: Option<f64>,
    /// Output band: settling time after the start and after each load step, s.
    pub after: f64,
    /// Release time: the release current, A (default: the coil's `release_current`).
    pub current: Option<f64>,
    /// Time to speed: the speed to reach, rad/s.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub speed: Option<f64>,
}

/// A limit as written: a number or a string with an SI prefix.
#[derive(Deserialize)]
#[serde(untagged)]
enum RawLimit {
    Number(f64),
    Text(String),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCheck {
    property: Property,
    max: Option<RawLimit>,
    min: Option<RawLimit>,
    after: Option<NonNeg<Second>>,
    current: Option<Pos<Ampere>>,
    speed: Option<Pos<Plain>>,
}

impl TryFrom<RawCheck> for Check {
    type Error = String;
    fn try_from(r: RawCheck) -> Result<Self, String> {
        let p = r.property;
        let limit = |key: &str, raw: RawLimit| -> Result<f64, String> {
            let v = match raw {
                RawLimit::Number(v) => v,
                RawLimit::Text(s) => crate::si::parse(&s, p.unit()).map_err(|e| {
                    if p.symbol().is_empty() {
                        format!("key `{key}`: {e} (expected a plain number)")
                    } else {
                        format!("key `{key}`: {e} (expected a value in {})", p.symbol())
                    }
                })?,
            };
            // A temperature may be below 0 °C; every other limit is a magnitude.
            let lowest = if matches!(p, Property::CoilTemperature | Property::WindingTemperature) {
                -273.15
            } else {
                0.0
            };
            if !v.is_finite() || v < lowest {
                return Err(format!("key `{key}`: {v} is not a finite value ≥ {lowest}"));
            }
            Ok(v)
        };
        let min = match (p, r.min) {
            (Property::HoldCurrent, m) => m.map(|m| limit("min", m)).transpose()?,
            (_, Some(_)) => return Err("key `min` belongs to hold-current".into()),
            (_, None) => None,
        };
        let max = match r.max {
            Some(_) if p == Property::HoldCurrent => {
                return Err(
                    "key `max`: hold-current has a lower limit: write `min` (must-hold current)"
                        .into(),
                );
            }
            None if matches!(
                p,
                Property::NoTrip | Property::HoldCurrent | Property::FalseDetections
            ) =>
            {
                0.0
            }
            None => return Err(format!("missing key `max`: the limit of {}", p.name())),
            Some(raw) => limit("max", raw)?,
        };
        if p == Property::NoTrip && max != 0.0 {
            return Err("key `max`: no-trip allows no trip (0)".into());
        }
        if r.after.is_some() && p != Property::OutputBand {
            return Err("key `after` belongs to output-band".into());
        }
        if r.current.is_some() && p != Property::ReleaseTime {
            return Err("key `current` belongs to release-time".into());
        }
        match (p, r.speed) {
            (Property::TimeToSpeed, None) => {
                return Err("missing key `speed`: the speed time-to-speed waits for, rad/s".into());
            }
            (Property::TimeToSpeed, Some(_)) | (_, None) => {}
            (_, Some(_)) => return Err("key `speed` belongs to time-to-speed".into()),
        }
        Ok(Check {
            property: p,
            max,
            min,
            after: r.after.map_or(0.0, NonNeg::get),
            current: r.current.map(Pos::get),
            speed: r.speed.map(Pos::get),
        })
    }
}
