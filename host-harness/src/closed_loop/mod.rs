//! The closed loop: firmware under test against the plant, with the harness owning time.
//!
//! # Timing
//!
//! Time is kept in integer nanoseconds, so tick and PWM edges fall on exact instants. Tick `k`
//! spans `[kT, (k+1)T)`:
//!
//! 1. At `kT` the controller gets the readings the ADC took during tick `k − 1` (the
//!    conversion delay: a result is ready one tick after its sampling instant), the time and the
//!    application's demand, and returns the actuation for tick `k`.
//! 2. During the tick the harness switches the plant at the exact PWM edges of that actuation
//!    (period `pwm_period_ns`, each period starting on; duty rounded to whole nanoseconds, as a
//!    timer would), applies faults at their exact times, and samples all channels at
//!    `kT + sample_offset_ns`.
//!
//! # Properties
//!
//! Every run measures, each as a value against a limit (a property is listed when its limit is
//! given, except the trip properties, which are always listed):
//!
//! - peak switch voltage against the switch rating;
//! - clamp energy and switch energy of the worst single switch-off against their ratings;
//! - peak current against the switch's current limit;
//! - with a fault that requires a trip: trip latency after the fault; without: no trip;
//! - release time after each demand-off (current below the release current) against the
//!   requirement;
//! - boost output within its band after the settling time;
//! - the firmware estimator's largest error against the plant's true current, at every tick
//!   before the first fault;
//! - of a coil: pull-in time, the lowest current while held (a lower limit), the winding's
//!   highest temperature and its mean power while held (`coil_watch`);
//! - of a motor ([`motor`], [`MotorLimits`]): highest bus voltage, time to speed after each
//!   drive command, jam latency, the largest current during a reversal and the winding's
//!   highest temperature (`motor_watch`); the motor plant ([`MotorBridge`]) takes the bridge
//!   direction and brake from the actuation and reads the signed winding current.
//!
//! A trip is reported with its cause ([`TripCause`], from the controller's telemetry) and time,
//! in the run's events and in the `detail` of the trip properties.
//!
//! # Time resolution of each property
//!
//! - **Release time** runs from the tick at which the demand goes off (the firmware learns of
//!   it only at a tick) to the exact instant the coil current falls below the release current:
//!   the plant locates the crossing inside its segment ([`Plant::advance_until_below`]; closed
//!   form on a linear coil, event location of the integrator on a saturating one). Checked
//!   against Dop853 to 0.1 % or 1 µs (`host-harness/tests/closed_loop_release.rs`; measured
//!   agreement about 1 ns). A plant that does not override `advance_until_below` resolves the
//!   crossing only to the next harness edge (PWM edge, sampling instant or tick end).
//! - **Trip latency** runs from the fault's exact time to the start of the tick whose
//!   controller call first reports the trip, the instant the firmware switches off. The
//!   firmware decides only at ticks, so this is exact for it; it includes up to one tick of
//!   waiting for the next tick and the one-tick conversion delay of the readings.
//! - **Output band** is a deviation, not a time: its window opens at the exact time of start,
//!   fault or end of a supply ramp plus the settling time, and the output is evaluated at every
//!   harness edge (PWM edges, sampling instants, tick ends). An extremum between two edges (at
//!   most half a PWM period apart while switching) is not seen; in CCM the capacitor's
//!   extremes fall on the switch edges.
//! - **Estimator error** is evaluated at every tick instant before the first fault, the instant
//!   the estimate belongs to; on a coil with a moving armature only while the armature rests
//!   seated and the controller has reported it (`estimate_scope`).
//! - A supply ramp is applied as a staircase stepped at the harness edges.

pub mod adc;
mod armature_watch;
mod coil_watch;
pub mod demo;
pub mod demo_vent;
mod detection_watch;
mod envelope;
mod estimate_scope;
pub mod motor;
mod motor_plant;
mod motor_watch;

pub use adc::AdcChannel;
pub use motor::{MotorCommand, MotorLimits, MotorProbe, TimeToSpeed};
pub use motor_plant::MotorBridge;

use crate::faults::{Channel, Fault, FaultAt};
use crate::plant::{Boost, CoilDrive, StepUnderflow, Stroke, SwitchOff};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};

/// What the firmware sees at a control tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Sensed {
    /// Tick number.
    pub tick: u64,
    /// Time of the tick, ns.
    pub time_ns: u64,
    /// Coil (inductor) current reading, counts.
    pub current_counts: u16,
    /// Supply (input) voltage reading, counts.
    pub supply_counts: u16,
    /// Output voltage reading, counts.
    pub output_counts: u16,
    /// The application's demand (valve open, rail enabled).
    pub demand: bool,
    /// The application's motor command ([`motor`]; coast in a run without motor commands).
    #[serde(default)]
    pub motor: MotorCommand,
}

/// How the switch is driven during the next tick.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Drive {
    /// Off for the whole tick.
    Off,
    /// On for the whole tick.
    On,
    /// PWM at the harness's PWM period with this duty (0 ..= 1).
    Pwm {
        /// Duty cycle.
        duty: f64,
    },
}

/// Bridge direction: the levels of an H-bridge's two direction pins. The coil and boost plants
/// drive one polarity (a reverse is recorded, not simulated); the motor plant ([`MotorBridge`])
/// applies all three.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Direction {
    /// Normal polarity.
    Forward,
    /// Reversed polarity.
    Reverse,
    /// Both legs at the same level: while the switch is on, both low sides conduct (a motor
    /// brakes); the coil and boost plants treat it as `Forward`.
    Brake,
}

/// The controller's output for the next interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Actuation {
    /// Switch drive.
    pub drive: Drive,
    /// Bridge direction.
    pub direction: Direction,
}

impl Actuation {
    /// Switch off.
    pub const OFF: Actuation = Actuation {
        drive: Drive::Off,
        direction: Direction::Forward,
    };
    /// Switch on.
    pub const ON: Actuation = Actuation {
        drive: Drive::On,
        direction: Direction::Forward,
    };

    /// PWM at `duty`.
    #[must_use]
    pub const fn pwm(duty: f64) -> Actuation {
        Actuation {
            drive: Drive::Pwm { duty },
            direction: Direction::Forward,
        }
    }

    /// A motor bridge: all switches off (coast).
    pub const COAST: Actuation = Actuation::OFF;
    /// A motor bridge: both low sides on (brake).
    pub const BRAKE: Actuation = Actuation {
        drive: Drive::On,
        direction: Direction::Brake,
    };

    /// A motor bridge driving in `direction` with `drive`.
    #[must_use]
    pub const fn bridge(direction: Direction, drive: Drive) -> Actuation {
        Actuation { drive, direction }
    }
}

/// What the controller reports about itself for the checks.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Telemetry {
    /// Its estimate of the coil current, A.
    pub estimate_a: Option<f64>,
    /// It has tripped (switched off for protection).
    pub tripped: bool,
    /// Why it tripped, when it says.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trip_cause: Option<TripCause>,
    /// Its armature movement detector reports the armature seated (after a pull-in that ended
    /// on the seating, until the switch-off). `false` for a controller without one.
    #[serde(default)]
    pub seated: bool,
    /// Its movement detector reports the armature's drop-out after the last switch-off.
    #[serde(default)]
    pub dropped_out: bool,
}

/// Why a controller tripped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum TripCause {
    /// Instantaneous overcurrent.
    Instantaneous,
    /// The inverse-time (overload) element.
    InverseTime,
    /// The thermal (I²t) element.
    Thermal,
    /// The plausibility monitor, with the fault it saw.
    Plausibility(lenz::kernel::Fault),
    /// A stuck current reading (the trip detector's check).
    StuckSensor,
    /// The switch output reported an error (the driver switched off as far as it could).
    OutputError,
    /// The armature did not move by the movement detector's deadline.
    StuckArmature,
    /// The motor's jam detector: a locked rotor, an overload or an open winding.
    Motor(lenz::kernel::MotorFault),
    /// A reading outside the sense's valid window (a broken or saturated sense).
    InvalidReading,
    /// Another cause of the controller's own.
    Other,
}

impl From<lenz::kernel::Cause> for TripCause {
    fn from(c: lenz::kernel::Cause) -> TripCause {
        match c {
            lenz::kernel::Cause::Instantaneous => TripCause::Instantaneous,
            lenz::kernel::Cause::InverseTime => TripCause::InverseTime,
            lenz::kernel::Cause::Thermal => TripCause::Thermal,
            lenz::kernel::Cause::SensorFault => TripCause::StuckSensor,
        }
    }
}

impl std::fmt::Display for TripCause {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            TripCause::Instantaneous => f.write_str("instantaneous overcurrent"),
            TripCause::InverseTime => f.write_str("inverse-time overcurrent"),
            TripCause::Thermal => f.write_str("thermal (I²t)"),
            TripCause::Plausibility(k) => write!(f, "plausibility fault ({k:?})"),
            TripCause::StuckSensor => f.write_str("stuck current sensor"),
            TripCause::OutputError => f.write_str("output error"),
            TripCause::StuckArmature => f.write_str("stuck armature"),
            TripCause::Motor(lenz::kernel::MotorFault::Jam) => f.write_str("motor jam"),
            TripCause::Motor(lenz::kernel::MotorFault::Overload) => f.write_str("motor overload"),
            TripCause::Motor(lenz::kernel::MotorFault::OpenWinding) => {
                f.write_str("open motor winding")
            }
            TripCause::InvalidReading => f.write_str("current reading outside its valid window"),
            TripCause::Other => f.write_str("controller's own cause"),
        }
    }
}

/// The firmware under test.
pub trait Controller {
    /// One control tick: readings of the previous tick in, actuation for this tick out.
    fn tick(&mut self, sensed: &Sensed) -> Actuation;
    /// State for the checks, read right after [`Controller::tick`].
    fn telemetry(&self) -> Telemetry {
        Telemetry::default()
    }
}

/// The true values of a plant at an instant.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Probe {
    /// Coil (inductor) current, A.
    pub current_a: f64,
    /// Supply (input) terminal voltage, V.
    pub supply_v: f64,
    /// Output voltage: the switch node of a coil drive, the rail of a boost stage, V.
    pub output_v: f64,
    /// Switch voltage, V.
    pub switch_v: f64,
}

/// A plant the harness can run.
pub trait Plant {
    /// Advances to `t_s`.
    fn advance_to(&mut self, t_s: f64);
    /// Sets the switch.
    fn set_switch(&mut self, on: bool);
    /// True values now.
    fn probe(&self) -> Probe;
    /// Applies a plant fault; `false` when the fault does not apply to this plant.
    fn inject(&mut self, fault: &Fault) -> bool;
    /// Open-circuit supply (input) voltage in force, V.
    fn supply_v(&self) -> f64;
    /// Sets the open-circuit supply voltage (one step of a ramp), V; `false` if refused.
    fn set_supply_v(&mut self, v: f64) -> bool;
    /// Highest switch voltage so far, V.
    fn peak_switch_v(&self) -> f64;
    /// Highest current through the switch so far, A.
    fn peak_current_a(&self) -> f64;
    /// Switch-offs so far (empty for a plant that does not record them).
    fn switch_offs(&self) -> &[SwitchOff] {
        &[]
    }
    /// Largest clamp energy and largest switch energy of a single switch-off so far, J.
    fn worst_switch_off_j(&self) -> (f64, f64) {
        self.switch_offs().iter().fold((0.0, 0.0), |(c, s), o| {
            (c.max(o.clamp_j), s.max(o.switch_j))
        })
    }
    /// Lowest and highest switch voltage the plant located inside its own integration steps
    /// since the last call (ring peaks between two stops of the loop), V; `None` when it does
    /// not track them (the loop still sees the values at every edge).
    fn take_switch_v_window(&mut self) -> Option<(f64, f64)> {
        None
    }
    /// The integration failure that stopped the plant, if any (a run reports it as an error).
    fn failure(&self) -> Option<StepUnderflow> {
        None
    }
    /// Advances towards `t_s` but stops at the first instant the coil current is below
    /// `level_a`, and returns that instant (`None`: it stayed at or above the level up to
    /// `t_s`). The release time is measured with it. This default advances to `t_s` and looks
    /// only there, so for a plant that does not override it the release time is resolved to
    /// the interval between the harness's edges; the coil drive locates the crossing exactly.
    fn advance_until_below(&mut self, t_s: f64, level_a: f64) -> Option<f64> {
        self.advance_to(t_s);
        (self.probe().current_a < level_a).then_some(t_s)
    }
    /// Winding temperature now, °C (`None`: the plant has no winding).
    fn winding_temp_c(&self) -> Option<f64> {
        None
    }
    /// Copper loss of the winding so far, J (`None`: the plant has no winding).
    fn winding_loss_j(&self) -> Option<f64> {
        None
    }
    /// The moving armature's strokes so far (`None`: nothing moves).
    fn armature_strokes(&self) -> Option<&[Stroke]> {
        None
    }
    /// The actuation of the tick that starts now, handed over before the tick's switch edges
    /// (a motor bridge reads its direction and whether the tick is PWM). Default: ignored.
    fn set_actuation(&mut self, _act: &Actuation) {}
    /// Motor quantities now (`None`: the plant has no motor).
    fn motor(&self) -> Option<MotorProbe> {
        None
    }
    /// Starts a new window of [`MotorProbe::peak_current_since_mark_a`]. Default: nothing.
    fn motor_mark(&mut self) {}
    /// The moving armature's air gap now, m (`None`: nothing moves).
    fn armature_gap_m(&self) -> Option<f64> {
        None
    }
    /// The moving armature rests at its closed stop now (`None`: nothing moves).
    fn armature_seated(&self) -> Option<bool> {
        None
    }
}

impl Plant for CoilDrive {
    fn advance_to(&mut self, t_s: f64) {
        CoilDrive::advance_to(self, t_s);
    }
    fn set_switch(&mut self, on: bool) {
        CoilDrive::set_switch(self, on);
    }
    fn probe(&self) -> Probe {
        let v = self.switch_voltage_v();
        Probe {
            current_a: self.current_a(),
            supply_v: self.supply_terminal_v(),
            output_v: v,
            switch_v: v,
        }
    }
    fn inject(&mut self, fault: &Fault) -> bool {
        match *fault {
            Fault::ShortedCoil {
                residual_inductance_h,
                residual_resistance_ohm,
            } => self.short_coil(residual_inductance_h, residual_resistance_ohm),
            Fault::ShortedTurns {
                inductance_factor,
                resistance_factor,
            } => self.set_coil_scale(inductance_factor, resistance_factor),
            Fault::OpenCoil => {
                self.open_coil();
                true
            }
            Fault::SupplySag { supply_v, .. } | Fault::SupplySurge { supply_v, .. } => {
                self.set_supply_v(supply_v)
            }
            Fault::SwitchStuckOn => {
                self.stick_switch_on();
                true
            }
            Fault::LoadStep { .. }
            | Fault::Jam
            | Fault::LoadTorque { .. }
            | Fault::OpenWinding
            | Fault::SupplyCannotSink
            | Fault::ShortedWinding { .. } => false,
            Fault::StuckArmature | Fault::SluggishArmature { .. } | Fault::ExcessLoad { .. } => {
                let Some(mut f) = self.armature().map(|m| m.spec().faults) else {
                    return false;
                };
                match *fault {
                    Fault::StuckArmature => f.stuck = true,
                    Fault::SluggishArmature {
                        extra_damping_n_s_per_m,
                    } => f.extra_damping_n_s_per_m += extra_damping_n_s_per_m,
                    Fault::ExcessLoad { extra_load_n } => f.extra_load_n += extra_load_n,
                    _ => {}
                }
                self.set_armature_faults(f)
            }
            Fault::SensorStuck { .. } | Fault::SensorNoisy { .. } => true,
        }
    }
    fn supply_v(&self) -> f64 {
        CoilDrive::supply_v(self)
    }
    fn set_supply_v(&mut self, v: f64) -> bool {
        CoilDrive::set_supply_v(self, v)
    }
    fn peak_switch_v(&self) -> f64 {
        CoilDrive::peak_switch_v(self)
    }
    fn peak_current_a(&self) -> f64 {
        CoilDrive::peak_current_a(self)
    }
    fn switch_offs(&self) -> &[SwitchOff] {
        CoilDrive::switch_offs(self)
    }
    fn worst_switch_off_j(&self) -> (f64, f64) {
        CoilDrive::worst_switch_off_j(self)
    }
    fn take_switch_v_window(&mut self) -> Option<(f64, f64)> {
        CoilDrive::take_switch_v_window(self)
    }
    fn failure(&self) -> Option<StepUnderflow> {
        CoilDrive::failure(self)
    }
    fn advance_until_below(&mut self, t_s: f64, level_a: f64) -> Option<f64> {
        CoilDrive::advance_until_below(self, t_s, level_a)
    }
    fn winding_temp_c(&self) -> Option<f64> {
        Some(CoilDrive::winding_temp_c(self))
    }
    fn winding_loss_j(&self) -> Option<f64> {
        Some(self.energies().winding_j)
    }
    fn armature_strokes(&self) -> Option<&[Stroke]> {
        self.armature().map(|m| m.strokes())
    }
    fn armature_gap_m(&self) -> Option<f64> {
        self.armature().map(|m| m.gap_m())
    }
    fn armature_seated(&self) -> Option<bool> {
        self.armature()
            .map(|m| m.mode() == crate::plant::ArmatureMode::RestClosed)
    }
}

impl Plant for Boost {
    fn advance_to(&mut self, t_s: f64) {
        Boost::advance_to(self, t_s);
    }
    fn set_switch(&mut self, on: bool) {
        Boost::set_switch(self, on);
    }
    fn probe(&self) -> Probe {
        Probe {
            current_a: self.inductor_current_a(),
            supply_v: self.input_terminal_v(),
            output_v: self.output_v(),
            switch_v: self.switch_voltage_v(),
        }
    }
    fn inject(&mut self, fault: &Fault) -> bool {
        match *fault {
            Fault::SupplySag { supply_v, .. } | Fault::SupplySurge { supply_v, .. } => {
                self.set_input_v(supply_v)
            }
            Fault::LoadStep { load_ohm } => self.set_load_ohm(load_ohm),
            Fault::SwitchStuckOn => {
                self.stick_switch_on();
                true
            }
            Fault::SensorStuck { .. } | Fault::SensorNoisy { .. } => true,
            _ => false,
        }
    }
    fn supply_v(&self) -> f64 {
        self.input_v()
    }
    fn set_supply_v(&mut self, v: f64) -> bool {
        self.set_input_v(v)
    }
    fn peak_switch_v(&self) -> f64 {
        Boost::peak_switch_v(self)
    }
    fn peak_current_a(&self) -> f64 {
        Boost::peak_switch_current_a(self)
    }
    fn failure(&self) -> Option<StepUnderflow> {
        Boost::failure(self)
    }
}

/// Release requirement: after a demand-off the current must fall below `current_a` within
/// `max_s`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Release {
    /// Release current, A.
    pub current_a: f64,
    /// Longest allowed release time, s.
    pub max_s: f64,
}

/// Output band of a regulated rail.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Band {
    /// Target, V.
    pub target_v: f64,
    /// Allowed deviation, V.
    pub tol_v: f64,
    /// Time after which the band applies (after start and after each plant fault: a load step,
    /// an input sag or surge), s.
    pub settle_s: f64,
}

/// The limits the properties are checked against; `None` leaves a property out.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Limits {
    /// Switch voltage rating, V.
    pub switch_voltage_rating_v: Option<f64>,
    /// Clamp energy rating per switch-off, J.
    pub clamp_energy_rating_j: Option<f64>,
    /// Switch energy rating per switch-off (clamping or avalanche), J.
    pub switch_energy_rating_j: Option<f64>,
    /// Switch current limit, A.
    pub switch_current_limit_a: Option<f64>,
    /// Longest allowed time from a fault that requires a trip to the trip, s.
    pub trip_latency_max_s: Option<f64>,
    /// Release requirement.
    pub release: Option<Release>,
    /// Output band.
    pub output_band: Option<Band>,
    /// Largest allowed estimator error, A.
    pub estimator_error_max_a: Option<f64>,
    /// The coil's pull-in current (the coil properties start from it); `None`: no coil
    /// properties.
    pub pull_in: Option<PullIn>,
    /// Lowest allowed coil current while held (must-hold), A.
    pub hold_current_min_a: Option<f64>,
    /// Highest allowed winding temperature, °C.
    pub coil_temperature_max_c: Option<f64>,
    /// Highest allowed mean winding power while held, W.
    pub coil_power_max_w: Option<f64>,
    /// Longest allowed time from an on command to the armature's seating, s.
    pub seat_time_max_s: Option<f64>,
    /// Highest allowed impact velocity at the closed stop, m/s.
    pub impact_velocity_max_m_s: Option<f64>,
    /// Longest allowed time from an off command to the armature's opening, s.
    pub armature_release_time_max_s: Option<f64>,
    /// Highest allowed supply energy per actuation, J.
    pub actuation_energy_max_j: Option<f64>,
    /// The motor properties' limits (`None`: no motor properties).
    #[serde(default)]
    pub motor: Option<MotorLimits>,
    /// Largest allowed time from the armature's seating to the controller's seated report, s.
    #[serde(default)]
    pub seat_detection_latency_max_s: Option<f64>,
    /// Largest allowed time from the armature's release to the controller's drop-out report, s.
    #[serde(default)]
    pub dropout_detection_latency_max_s: Option<f64>,
    /// Most allowed false armature reports.
    #[serde(default)]
    pub false_detections_max: Option<f64>,
}

/// Pull-in: the current that pulls the armature in, and the longest allowed time to reach it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct PullIn {
    /// Pull-in current, A.
    pub current_a: f64,
    /// Longest allowed pull-in time, s (`None`: not checked).
    pub max_s: Option<f64>,
}

/// The three sense channels.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Sensors {
    /// Current channel.
    pub current: AdcChannel,
    /// Supply channel.
    pub supply: AdcChannel,
    /// Output channel.
    pub output: AdcChannel,
}

/// A closed-loop run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LoopConfig {
    /// Control tick, ns.
    pub tick_ns: u64,
    /// PWM period, ns.
    pub pwm_period_ns: u64,
    /// Run length, ns.
    pub duration_ns: u64,
    /// Sampling instant within the tick, ns.
    pub sample_offset_ns: u64,
    /// Sense channels.
    pub sensors: Sensors,
    /// Seed of the noise generator.
    pub seed: u64,
    /// Demand schedule: `(time_s, demand)`, ascending; demand is off before the first entry.
    pub demand: Vec<(f64, bool)>,
    /// Motor command schedule: `(time_s, command)`, ascending; coast before the first entry.
    #[serde(default)]
    pub motor_commands: Vec<(f64, MotorCommand)>,
    /// Faults.
    pub faults: Vec<FaultAt>,
    /// Limits of the properties.
    pub limits: Limits,
    /// Record the waveform every this many ticks (0: not at all).
    pub record_every: u32,
}

/// Why a run could not be made.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum RunError {
    /// A timing value is zero or inconsistent (named).
    Timing(&'static str),
    /// The fault does not apply to this plant.
    UnsupportedFault(Fault),
    /// The plant's integrator could not make progress.
    Plant(StepUnderflow),
}

impl std::fmt::Display for RunError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            RunError::Timing(p) => write!(f, "{p}: must be positive and consistent"),
            RunError::UnsupportedFault(x) => write!(f, "fault {x:?} does not apply to this plant"),
            RunError::Plant(e) => e.fmt(f),
        }
    }
}

impl std::error::Error for RunError {}

/// Which side of its limit a property must stay.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Bound {
    /// `value ≤ limit`.
    Max,
    /// `value ≥ limit`.
    Min,
}

/// One property: measured value against its limit (`value ≤ limit` passes, or `value ≥
/// limit` for a [`Bound::Min`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Property {
    /// Name (stable, for reports and JUnit test names).
    pub name: &'static str,
    /// Measured value.
    pub value: f64,
    /// Limit.
    pub limit: f64,
    /// Unit of value and limit.
    pub unit: &'static str,
    /// `value ≤ limit`.
    pub pass: bool,
    /// The limit's side.
    pub bound: Bound,
    /// What else a reader needs (the trips with their causes and times).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub detail: Option<String>,
}

impl Property {
    /// The comparison in words: `exceeds the limit` or `is below the limit`.
    #[must_use]
    pub fn failure_text(&self) -> &'static str {
        match self.bound {
            Bound::Max => "exceeds the limit",
            Bound::Min => "is below the limit",
        }
    }
}

/// Sampled waveforms (one entry per recorded tick, at the sampling instant).
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Waveform {
    /// Time, s.
    pub t_s: Vec<f64>,
    /// True current, A.
    pub current_a: Vec<f64>,
    /// Firmware estimate, A (NaN where the controller has none).
    pub estimate_a: Vec<f64>,
    /// Switch voltage, V.
    pub switch_v: Vec<f64>,
    /// Output voltage, V.
    pub output_v: Vec<f64>,
    /// Supply terminal voltage, V.
    pub supply_v: Vec<f64>,
    /// Commanded drive: 0 off, 1 on, the duty for PWM.
    pub drive: Vec<f64>,
    /// Lowest switch voltage since the previous recorded point (the envelope between samples:
    /// every edge the loop stopped the plant at, and the extremes the plant located), V.
    #[serde(default)]
    pub switch_v_min: Vec<f64>,
    /// Highest switch voltage since the previous recorded point, V.
    #[serde(default)]
    pub switch_v_max: Vec<f64>,
    /// Lowest coil (inductor) current since the previous recorded point, A.
    #[serde(default)]
    pub current_min_a: Vec<f64>,
    /// Highest coil (inductor) current since the previous recorded point, A.
    #[serde(default)]
    pub current_max_a: Vec<f64>,
    /// Rotor speed, rad/s (a motor run; empty otherwise).
    #[serde(default)]
    pub speed_rad_s: Vec<f64>,
    /// Bus voltage, V (a motor run; empty otherwise).
    #[serde(default)]
    pub bus_v: Vec<f64>,
    /// The moving armature's air gap, m (empty when nothing moves).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub armature_gap_m: Vec<f64>,
}

/// Something that happened during a run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunEvent {
    /// Time, s.
    pub t_s: f64,
    /// What.
    pub what: String,
}

/// Everything a run produced.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RunResult {
    /// The properties.
    pub properties: Vec<Property>,
    /// Sampled waveforms.
    pub waveform: Waveform,
    /// Demand changes, faults, trips.
    pub events: Vec<RunEvent>,
    /// The switch-offs the plant kept (every one by default; a scenario run keeps the latest).
    pub switch_offs: Vec<SwitchOff>,
    /// Ticks run.
    pub ticks: u64,
    /// Simulated time, s.
    pub simulated_s: f64,
}

impl RunResult {
    /// Every property holds.
    #[must_use]
    pub fn passed(&self) -> bool {
        self.properties.iter().all(|p| p.pass)
    }

    /// The properties that failed.
    #[must_use]
    pub fn violations(&self) -> Vec<&Property> {
        self.properties.iter().filter(|p| !p.pass).collect()
    }

    /// The property named `name`.
    #[must_use]
    pub fn property(&self, name: &str) -> Option<&Property> {
        self.properties.iter().find(|p| p.name == name)
    }
}

#[derive(Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Edge {
    Fault(usize),
    Switch(bool),
    Sample,
}

const NS: f64 = 1e-9;

/// Seconds to whole nanoseconds, as the loop rounds every time it is given.
pub(crate) fn ns(t_s: f64) -> u64 {
    (t_s / NS).round().max(0.0) as u64
}

struct Sense {
    stuck: [Option<u16>; 3],
    extra_noise: [f64; 3],
}

/// Runs `ctrl` against `plant` (module docs).
///
/// # Errors
///
/// [`RunError::Timing`] for a zero tick, PWM period or duration, or a sampling instant outside
/// the tick; [`RunError::UnsupportedFault`] for a plant fault the plant does not model;
/// [`RunError::Plant`] when the plant's integrator stopped.
pub fn run<P: Plant, C: Controller>(
    plant: &mut P,
    ctrl: &mut C,
    cfg: &LoopConfig,
) -> Result<RunResult, RunError> {
    if cfg.tick_ns == 0 {
        return Err(RunError::Timing("tick_ns"));
    }
    if cfg.pwm_period_ns == 0 {
        return Err(RunError::Timing("pwm_period_ns"));
    }
    if cfg.duration_ns == 0 {
        return Err(RunError::Timing("duration_ns"));
    }
    if cfg.sample_offset_ns >= cfg.tick_ns {
        return Err(RunError::Timing("sample_offset_ns"));
    }
    let mut rng = ChaCha8Rng::seed_from_u64(cfg.seed);
    let mut sense = Sense {
        stuck: [None; 3],
        extra_noise: [0.0; 3],
    };
    let mut faults: Vec<(u64, usize)> = cfg
        .faults
        .iter()
        .enumerate()
        .map(|(k, f)| (ns(f.t_s), k))
        .collect();
    faults.sort();
    let mut next_fault = 0usize;
    let first_fault_ns = faults.first().map(|f| f.0);
    let trip_fault = cfg
        .faults
        .iter()
        .filter(|f| f.expect_trip)
        .map(|f| ns(f.t_s))
        .min();

    let mut wave = Waveform::default();
    let mut events = Vec::new();
    let mut readings = sample(plant, &cfg.sensors, &mut sense, &mut rng);
    let mut trip_ns: Option<u64> = None;
    let mut trips = 0u32;
    let mut trip_list: Vec<(f64, Option<TripCause>)> = Vec::new();
    let mut watch = coil_watch::CoilWatch::new(cfg.limits.pull_in);
    let mut was_tripped = false;
    let mut est_err = 0.0f64;
    // The controller has reported the armature seated since the last on command.
    let mut reported_seated = false;
    // Ticks at which the estimator error was measured.
    let mut est_ticks = 0u64;
    let mut demand = false;
    let mut release_from: Option<f64> = None;
    let mut release_worst = 0.0f64;
    let mut releases_open_max = 0.0f64;
    let mut band_from = cfg.output_band_start();
    let mut band_worst = 0.0f64;
    let mut edges: Vec<(u64, Edge)> = Vec::with_capacity(128);
    let mut env = envelope::Envelope::new();
    let mut detect = detection_watch::DetectionWatch::default();
    let mut direction = Direction::Forward;
    // A supply ramp in progress: (start s, end s, from V, to V).
    let mut ramp: Option<(f64, f64, f64, f64)> = None;
    let n_ticks = cfg.duration_ns.div_ceil(cfg.tick_ns);
    let mut next_demand = 0usize;
    let mut want = false;
    let mut next_cmd = 0usize;
    let mut motor_cmd = MotorCommand::default();
    let mut motor_watch = cfg.limits.motor.map(motor_watch::MotorWatch::new);
    let motor_plant = plant.motor().is_some();

    for k in 0..n_ticks {
        let t0 = k * cfg.tick_ns;
        let t0_s = t0 as f64 * NS;
        // The demand in force: the last entry of the prefix of the schedule due by now (one
        // pass over the schedule for the whole run, not a rescan per tick).
        while let Some(&(t_d, d)) = cfg.demand.get(next_demand) {
            if ns(t_d) > t0 {
                break;
            }
            want = d;
            next_demand += 1;
        }
        if want != demand {
            events.push(RunEvent {
                t_s: t0_s,
                what: format!("demand {}", if want { "on" } else { "off" }),
            });
            if !want {
                release_from = Some(t0_s);
            } else {
                reported_seated = false;
            }
            watch.demand(plant, t0_s, want);
            demand = want;
        }
        let mut cmd_now = motor_cmd;
        while let Some(&(t_c, c)) = cfg.motor_commands.get(next_cmd) {
            if ns(t_c) > t0 {
                break;
            }
            cmd_now = c;
            next_cmd += 1;
        }
        if cmd_now != motor_cmd || (k == 0 && next_cmd > 0) {
            events.push(RunEvent {
                t_s: t0_s,
                what: format!("motor command {cmd_now:?}"),
            });
            if let Some(w) = &mut motor_watch {
                w.command(plant, t0_s, cmd_now);
            }
            motor_cmd = cmd_now;
        }
        let sensed = Sensed {
            tick: k,
            time_ns: t0,
            current_counts: readings[0],
            supply_counts: readings[1],
            output_counts: readings[2],
            demand,
            motor: motor_cmd,
        };
        let act = ctrl.tick(&sensed);
        let telemetry = ctrl.telemetry();
        for what in detect.note(t0_s, telemetry.seated, telemetry.dropped_out) {
            events.push(RunEvent {
                t_s: t0_s,
                what: what.into(),
            });
        }
        let full_on = match act.drive {
            Drive::On => true,
            Drive::Off => false,
            Drive::Pwm { duty } => duty >= 1.0,
        };
        watch.actuation(plant, t0_s, full_on);
        if act.direction != direction {
            direction = act.direction;
            events.push(RunEvent {
                t_s: t0_s,
                what: if motor_plant {
                    format!("direction {direction:?}")
                } else {
                    format!("direction {direction:?} (polarity not simulated)")
                },
            });
        }
        plant.set_actuation(&act);
        if telemetry.tripped && !was_tripped {
            trips += 1;
            trip_ns.get_or_insert(t0);
            trip_list.push((t0_s, telemetry.trip_cause));
            events.push(RunEvent {
                t_s: t0_s,
                what: telemetry
                    .trip_cause
                    .map_or_else(|| "trip".into(), |c| format!("trip: {c}")),
            });
        }
        was_tripped = telemetry.tripped;
        if telemetry.seated {
            reported_seated = true;
        }
        if let Some(e) = telemetry.estimate_a
            && first_fault_ns.is_none_or(|f| t0 < f)
            && estimate_scope::in_scope(plant.armature_seated(), reported_seated)
        {
            est_err = est_err.max((e - plant.probe().current_a).abs());
            est_ticks += 1;
        }

        // The edges of this tick, in time order.
        edges.clear();
        let t1 = t0 + cfg.tick_ns;
        match act.drive {
            Drive::Off => edges.push((t0, Edge::Switch(false))),
            Drive::On => edges.push((t0, Edge::Switch(true))),
            Drive::Pwm { duty } => {
                let d = if duty.is_finite() {
                    duty.clamp(0.0, 1.0)
                } else {
                    0.0
                };
                let on_ns = (d * cfg.pwm_period_ns as f64).round() as u64;
                let mut p = t0;
                while p < t1 {
                    edges.push((p, Edge::Switch(on_ns > 0)));
                    if on_ns > 0 && on_ns < cfg.pwm_period_ns && p + on_ns < t1 {
                        edges.push((p + on_ns, Edge::Switch(false)));
                    }
                    p += cfg.pwm_period_ns;
                }
            }
        }
        let drive_now = match act.drive {
            Drive::Off => 0.0,
            Drive::On => 1.0,
            Drive::Pwm { duty } => duty,
        };
        edges.push((t0 + cfg.sample_offset_ns, Edge::Sample));
        while let Some(&(tf, idx)) = faults.get(next_fault) {
            if tf >= t1 {
                break;
            }
            edges.push((tf, Edge::Fault(idx)));
            next_fault += 1;
        }
        edges.sort_unstable();

        for &(te, edge) in &edges {
            let te_s = te as f64 * NS;
            advance(
                plant,
                te_s,
                &cfg.limits,
                &mut release_from,
                &mut release_worst,
            );
            env.note(plant);
            if let Some((a, b, v0, v1)) = ramp {
                let x = ((te_s - a) / (b - a)).clamp(0.0, 1.0);
                plant.set_supply_v(v0 + (v1 - v0) * x);
                if x >= 1.0 {
                    ramp = None;
                }
            }
            observe(plant, te_s, &band_from, &mut band_worst);
            watch.observe(plant, te_s);
            if let Some(w) = &mut motor_watch {
                w.observe(plant, te_s);
            }
            match edge {
                Edge::Switch(on) => {
                    plant.set_switch(on);
                    env.note(plant);
                }
                Edge::Sample => {
                    readings = sample(plant, &cfg.sensors, &mut sense, &mut rng);
                    if cfg.record_every > 0 && k % cfg.record_every as u64 == 0 {
                        let pr = plant.probe();
                        wave.t_s.push(te_s);
                        wave.current_a.push(pr.current_a);
                        wave.estimate_a
                            .push(telemetry.estimate_a.unwrap_or(f64::NAN));
                        wave.switch_v.push(pr.switch_v);
                        wave.output_v.push(pr.output_v);
                        wave.supply_v.push(pr.supply_v);
                        wave.drive.push(drive_now);
                        let (v0, v1, i0, i1) = env.take();
                        wave.switch_v_min.push(v0);
                        wave.switch_v_max.push(v1);
                        wave.current_min_a.push(i0);
                        wave.current_max_a.push(i1);
                        if let Some(m) = plant.motor() {
                            wave.speed_rad_s.push(m.speed_rad_s);
                            wave.bus_v.push(m.bus_v);
                        }
                        if let Some(x) = plant.armature_gap_m() {
                            wave.armature_gap_m.push(x);
                        }
                    }
                }
                Edge::Fault(idx) => {
                    let f = &cfg.faults[idx];
                    match f.fault {
                        Fault::SensorStuck { channel } => {
                            let c = ch(channel);
                            sense.stuck[c] = Some(readings[c]);
                        }
                        Fault::SensorNoisy {
                            channel,
                            noise_rms_lsb,
                        } => sense.extra_noise[ch(channel)] = noise_rms_lsb,
                        Fault::SupplySag { supply_v, ramp_s }
                        | Fault::SupplySurge { supply_v, ramp_s }
                            if ramp_s > 0.0 && ramp_s.is_finite() =>
                        {
                            // Stepped at every edge of the ramp (at most half a PWM period
                            // apart): a staircase within that resolution.
                            ramp = Some((te_s, te_s + ramp_s, plant.supply_v(), supply_v));
                            if let Some(b) = &mut band_from {
                                b.1 = te_s + ramp_s + b.0.settle_s;
                            }
                        }
                        other => {
                            if !plant.inject(&other) {
                                return Err(RunError::UnsupportedFault(other));
                            }
                            // A disturbance of the plant restarts the settling window.
                            if let Some(b) = &mut band_from {
                                b.1 = te_s + b.0.settle_s;
                            }
                        }
                    }
                    events.push(RunEvent {
                        t_s: te_s,
                        what: format!("fault {:?}", f.fault),
                    });
                }
            }
        }
        let t1_s = t1 as f64 * NS;
        advance(
            plant,
            t1_s,
            &cfg.limits,
            &mut release_from,
            &mut release_worst,
        );
        env.note(plant);
        observe(plant, t1_s, &band_from, &mut band_worst);
        watch.observe(plant, t1_s);
        if let Some(w) = &mut motor_watch {
            w.observe(plant, t1_s);
        }
    }
    let end_s = (n_ticks * cfg.tick_ns) as f64 * NS;
    let coil = watch.finish(plant, end_s);
    let motor = motor_watch.as_mut().map(|w| w.finish(plant));
    if let Some(from) = release_from {
        // A release still open at the end counts with the time it has taken so far.
        releases_open_max = (n_ticks * cfg.tick_ns) as f64 * NS - from;
    }

    if let Some(e) = plant.failure() {
        return Err(RunError::Plant(e));
    }
    let offs = plant.switch_offs().to_vec();
    let l = &cfg.limits;
    let mut props = Vec::new();
    let trips_text = trip_text(&trip_list);
    let mk = |name, value: f64, limit: f64, unit, bound: Bound| {
        let detail = matches!(
            name,
            "trip_latency" | "no_trip_in_normal_operation" | "jam_latency"
        )
        .then(|| trips_text.clone())
        .flatten();
        Property {
            name,
            value,
            limit,
            unit,
            pass: match bound {
                Bound::Max => value <= limit,
                Bound::Min => value >= limit,
            },
            bound,
            detail,
        }
    };
    let mut add = |name, value: f64, limit: f64, unit| {
        props.push(mk(name, value, limit, unit, Bound::Max));
    };
    if let Some(r) = l.switch_voltage_rating_v {
        add("peak_switch_voltage", plant.peak_switch_v(), r, "V");
    }
    let (worst_clamp_j, worst_switch_j) = plant.worst_switch_off_j();
    if let Some(r) = l.clamp_energy_rating_j {
        add("clamp_energy_per_switch_off", worst_clamp_j, r, "J");
    }
    if let Some(r) = l.switch_energy_rating_j {
        add("switch_energy_per_switch_off", worst_switch_j, r, "J");
    }
    if let Some(r) = l.switch_current_limit_a {
        add("peak_current", plant.peak_current_a(), r, "A");
    }
    match trip_fault {
        Some(tf) => {
            let lat = trip_ns
                .filter(|&t| t >= tf)
                .map_or(f64::INFINITY, |t| (t - tf) as f64 * NS);
            add(
                "trip_latency",
                lat,
                l.trip_latency_max_s.unwrap_or(f64::INFINITY),
                "s",
            );
        }
        None => add("no_trip_in_normal_operation", trips as f64, 0.0, "trips"),
    }
    if let Some(r) = l.release {
        add(
            "release_time",
            release_worst.max(releases_open_max),
            r.max_s,
            "s",
        );
    }
    if l.output_band.is_some() {
        let b = l.output_band.map_or(0.0, |b| b.tol_v);
        add("output_within_band", band_worst, b, "V");
    }
    if let Some(r) = l.estimator_error_max_a {
        // Nothing measured must not pass: infinite (estimate_scope).
        let value = if est_ticks == 0 {
            f64::INFINITY
        } else {
            est_err
        };
        add("estimator_error", value, r, "A");
    }
    if let Some(r) = l.pull_in.and_then(|p| p.max_s) {
        add("pull_in_time", coil.pull_in_s, r, "s");
    }
    if let Some(r) = l.coil_temperature_max_c {
        // A plant without a winding has no temperature to check: infinite, so it fails.
        add(
            "coil_temperature",
            coil.temp_max_c.unwrap_or(f64::INFINITY),
            r,
            "°C",
        );
    }
    if let Some(r) = l.coil_power_max_w {
        // Never held: no power to check, which fails rather than passing silently.
        add("coil_power", coil.power_w.unwrap_or(f64::INFINITY), r, "W");
    }
    if let Some(r) = l.hold_current_min_a {
        props.push(mk("hold_current", coil.hold_min_a, r, "A", Bound::Min));
    }
    let armature_limits = [
        l.seat_time_max_s,
        l.impact_velocity_max_m_s,
        l.armature_release_time_max_s,
        l.actuation_energy_max_j,
    ];
    if armature_limits.iter().any(Option::is_some) {
        // A plant without an armature has nothing that moves: every value infinite, so the
        // checks fail rather than pass silently.
        let a = armature_watch::values(plant.armature_strokes().unwrap_or(&[]), &cfg.demand, end_s);
        for (limit, name, value, unit) in [
            (l.seat_time_max_s, "seat_time", a.seat_s, "s"),
            (
                l.impact_velocity_max_m_s,
                "impact_velocity",
                a.impact_m_s,
                "m/s",
            ),
            (
                l.armature_release_time_max_s,
                "armature_release_time",
                a.release_s,
                "s",
            ),
            (
                l.actuation_energy_max_j,
                "actuation_energy",
                a.energy_j,
                "J",
            ),
        ] {
            if let Some(r) = limit {
                props.push(mk(name, value, r, unit, Bound::Max));
            }
        }
    }
    if let (Some(m), Some(v)) = (l.motor, motor) {
        let jam_ns = cfg
            .faults
            .iter()
            .filter(|f| matches!(f.fault, Fault::Jam))
            .map(|f| ns(f.t_s))
            .min();
        let jam_latency = jam_ns.map_or(f64::INFINITY, |tj| {
            trip_list
                .iter()
                .map(|&(t, _)| ns(t))
                .find(|&t| t >= tj)
                .map_or(f64::INFINITY, |t| (t - tj) as f64 * NS)
        });
        let mut add_m = |name, value: f64, limit: f64, unit, note: Option<&str>| {
            let mut p = mk(name, value, limit, unit, Bound::Max);
            if let Some(n) = note {
                p.detail = Some(n.to_string());
            }
            props.push(p);
        };
        if let Some(r) = m.bus_voltage_max_v {
            add_m("bus_voltage", v.bus_max_v, r, "V", None);
        }
        if let Some(r) = m.time_to_speed {
            add_m("time_to_speed", v.time_to_speed_s, r.max_s, "s", None);
        }
        if let Some(r) = m.jam_latency_max_s {
            let note = jam_ns
                .is_none()
                .then_some("no jam in the run: nothing measured");
            add_m("jam_latency", jam_latency, r, "s", note);
        }
        if let Some(r) = m.reversal_peak_current_max_a {
            let note = (!v.reversals).then_some("no reversal in the run: nothing measured");
            add_m("reversal_peak_current", v.reversal_peak_a, r, "A", note);
        }
        if let Some(r) = m.winding_temperature_max_c {
            add_m("winding_temperature", v.temp_max_c, r, "°C", None);
        }
    }
    let detection_limits = [
        l.seat_detection_latency_max_s,
        l.dropout_detection_latency_max_s,
        l.false_detections_max,
    ];
    if detection_limits.iter().any(Option::is_some) {
        let d = detect.values(plant.armature_strokes().unwrap_or(&[]), &cfg.demand, end_s);
        for (limit, name, value, unit) in [
            (
                l.seat_detection_latency_max_s,
                "seat_detection_latency",
                d.seat_latency_s,
                "s",
            ),
            (
                l.dropout_detection_latency_max_s,
                "dropout_detection_latency",
                d.dropout_latency_s,
                "s",
            ),
            (
                l.false_detections_max,
                "false_detections",
                d.false_detections as f64,
                "reports",
            ),
        ] {
            if let Some(r) = limit {
                props.push(mk(name, value, r, unit, Bound::Max));
            }
        }
    }
    if let Some(p) = props.iter_mut().find(|p| p.name == "estimator_error") {
        p.detail = estimate_scope::detail(plant.armature_seated().is_some(), est_ticks);
    }
    Ok(RunResult {
        properties: props,
        waveform: wave,
        events,
        switch_offs: offs,
        ticks: n_ticks,
        simulated_s: (n_ticks * cfg.tick_ns) as f64 * NS,
    })
}

/// The trips of a run with cause and time, for the trip properties' detail.
fn trip_text(trips: &[(f64, Option<TripCause>)]) -> Option<String> {
    if trips.is_empty() {
        return None;
    }
    let parts: Vec<String> = trips
        .iter()
        .map(|(t, c)| {
            let cause = c.map_or_else(|| "cause not reported".to_string(), |c| c.to_string());
            format!("trip at {:.3} ms: {cause}", t * 1e3)
        })
        .collect();
    Some(parts.join("; "))
}

impl LoopConfig {
    fn output_band_start(&self) -> Option<(Band, f64)> {
        self.limits.output_band.map(|b| (b, b.settle_s))
    }
}

fn ch(c: Channel) -> usize {
    match c {
        Channel::Current => 0,
        Channel::Supply => 1,
        Channel::Output => 2,
    }
}

fn sample<P: Plant>(plant: &P, s: &Sensors, sense: &mut Sense, rng: &mut ChaCha8Rng) -> [u16; 3] {
    let pr = plant.probe();
    let vals = [pr.current_a, pr.supply_v, pr.output_v];
    let chans = [&s.current, &s.supply, &s.output];
    let mut out = [0u16; 3];
    for k in 0..3 {
        // Convert even when stuck, so the noise sequence does not depend on the fault.
        let code = chans[k].convert(vals[k], sense.extra_noise[k], rng);
        out[k] = sense.stuck[k].unwrap_or(code);
    }
    out
}

/// Advances the plant to `t_s`; while a release is open, the plant locates the instant the
/// current falls below the release current, which closes the release.
fn advance<P: Plant>(
    plant: &mut P,
    t_s: f64,
    limits: &Limits,
    release_from: &mut Option<f64>,
    release_worst: &mut f64,
) {
    if let (Some(from), Some(r)) = (*release_from, limits.release)
        && let Some(t_cross) = plant.advance_until_below(t_s, r.current_a)
    {
        *release_worst = release_worst.max(t_cross - from);
        *release_from = None;
    }
    plant.advance_to(t_s);
}

/// Evaluates the output band at `t_s`.
fn observe<P: Plant>(plant: &P, t_s: f64, band: &Option<(Band, f64)>, band_worst: &mut f64) {
    // No band to watch: no probe (the probe costs a plant evaluation).
    if let Some((b, from)) = band
        && t_s >= *from
    {
        let pr = plant.probe();
        *band_worst = band_worst.max((pr.output_v - b.target_v).abs());
    }
}
