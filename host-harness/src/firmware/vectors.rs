//! The on-target vectors as data: the case tables the target images' generators
//! (`benches/target/gen`) write, built into the harness by its build script, for checks
//! outside those images (the C firmware example, [`super::c_vectors`]).
//!
//! Each case is a configuration (from a plan constructor of the demo coils, invented values,
//! or raw edge values) and its steps: inputs and the host build's results.

/// Estimator cases: `(switch on, supply mV, current µA)` per tick from `start_ua`.
pub mod estimator {
    use lenz::kernel::{EstimatorConfig, EstimatorRaw, OffPath};

    /// One sequence.
    pub struct Case {
        /// Coefficients.
        pub config: EstimatorConfig,
        /// Start current, µA.
        pub start_ua: i32,
        /// Per tick: switch on, supply in mV, and the host's result in µA.
        pub steps: &'static [(bool, i32, i32)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_estimator.rs"));
}

/// Plausibility monitor cases: `(estimate µA, reading counts, fault)` per sample.
pub mod monitor {
    use lenz::kernel::{Fault, MonitorConfig, MonitorRaw, SenseScale};

    /// One sequence from a fresh state.
    pub struct Case {
        /// Thresholds.
        pub config: MonitorConfig,
        /// Per sample: estimate in µA, reading in counts, and the host's result.
        pub steps: &'static [(i32, u16, Option<Fault>)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_monitor.rs"));
}

/// Duty limiter cases: `(request, vin counts, vout counts, duty)` per tick.
pub mod duty {
    use lenz::kernel::{DutyLimiterConfig, DutyLimiterRaw};

    /// One sequence from a fresh state.
    pub struct Case {
        /// Coefficients.
        pub config: DutyLimiterConfig,
        /// Per tick: request, input and output readings, and the host's duty.
        pub steps: &'static [(i32, u16, u16, u16)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_duty.rs"));
}

/// Tracking off-timer cases: `(start µA, supply mV, status, estimate µA)` per tick.
pub mod offtimer {
    use lenz::kernel::{
        EstimatorRaw, OffPath, OffStatus, TrackingOffTimerConfig, TrackingOffTimerRaw,
    };

    /// One sequence from an idle state.
    pub struct TrackingCase {
        /// The timer.
        pub timer: TrackingOffTimerConfig,
        /// Per tick: a switch-off current to start from (before the tick), the supply in mV,
        /// and the host's status and estimate after the tick.
        pub steps: &'static [(Option<i32>, i32, OffStatus, i32)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_offtimer.rs"));
}

/// Planned off-timer cases: `(start µA, status, remaining ticks)` per tick.
pub mod offtimer_planned {
    use lenz::kernel::{OffStatus, PlannedOffTimerConfig, PlannedOffTimerRaw};

    /// One sequence from an idle state.
    pub struct PlannedCase {
        /// The table.
        pub timer: PlannedOffTimerConfig,
        /// Per tick: a switch-off current to start from (before the tick), and the host's
        /// status and remaining ticks after the tick.
        pub steps: &'static [(Option<i32>, OffStatus, u32)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_offtimer_planned.rs"));
}

/// Trip detector cases: `(reading counts, switch on, verdict)` per sample.
pub mod trip {
    use lenz::kernel::{Cause, InverseTable, TripConfig, TripEvent, TripRaw, Verdict};

    /// One sequence from a fresh state.
    pub struct Case {
        /// Settings.
        pub config: TripConfig,
        /// Per sample: reading in counts, switch on, and the host's verdict.
        pub steps: &'static [(u16, bool, Verdict)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_trip.rs"));
}

/// Movement detector cases: `(start or release, current µA, verdict)` per tick.
pub mod movement {
    use lenz::kernel::{Motion, MovementConfig, MovementRaw};

    /// What happens before an update.
    #[derive(Debug, Clone, Copy, PartialEq, Eq)]
    pub enum Cmd {
        /// Nothing.
        None,
        /// `start` (switch-on).
        Start,
        /// `release` (switch-off).
        Release,
    }

    /// One sequence from an idle state.
    pub struct Case {
        /// Thresholds.
        pub config: MovementConfig,
        /// Per tick: the command before the update, the current in µA, the host's verdict.
        pub steps: &'static [(Cmd, i32, Motion)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_movement.rs"));
}

/// Speed estimator cases: `(duty or coast, supply mV, current µA, speed mrad/s)` per tick.
pub mod speed {
    use lenz::kernel::{SpeedEstimatorConfig, SpeedEstimatorRaw};

    /// One sequence.
    pub struct Case {
        /// Coefficients.
        pub config: SpeedEstimatorConfig,
        /// Start current µA and speed mrad/s.
        pub start: (i32, i32),
        /// Per tick: duty Q16 (`None`: coasting, `hold`), supply mV, current µA, and the
        /// host's estimate in mrad/s.
        pub steps: &'static [(Option<i32>, i32, i32, i32)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_speed.rs"));
}

/// Jam detector cases: `(duty Q16, current µA, speed mrad/s, verdict)` per tick.
pub mod jam {
    use lenz::kernel::{JamConfig, JamRaw, JamStatus, MotorFault};

    /// One sequence from a fresh state.
    pub struct Case {
        /// Thresholds.
        pub config: JamConfig,
        /// Per tick: duty, current, speed, and the host's verdict.
        pub steps: &'static [(i32, i32, i32, JamStatus)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_jam.rs"));
}

/// Bridge guard cases: `(request Q16, speed mrad/s, command)` per tick.
pub mod bridge {
    use lenz::kernel::{BridgeCommand, BridgeGuardConfig, BridgeGuardRaw, BridgeMode};

    /// One sequence from a fresh state.
    pub struct Case {
        /// Limits.
        pub config: BridgeGuardConfig,
        /// Per tick: request, speed, and the host's command.
        pub steps: &'static [(i32, i32, BridgeCommand)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_bridge.rs"));
}

/// Boost loop cases: `((enable, output failing, vin counts, vout counts), returned duty,
/// written duty)` per tick.
pub mod boost_driver {
    use lenz::drive::{BoostLoopConfig, BoostLoopRaw};
    use lenz::kernel::DutyLimiterRaw;

    /// One tick's inputs: enable, output failing, input and output readings (counts).
    pub type Inputs = (bool, bool, u16, u16);

    /// One sequence from a new loop.
    pub struct Case {
        /// Settings.
        pub config: BoostLoopConfig,
        /// Per tick: inputs, the host's returned duty (`None`: an output error) and the duty
        /// written.
        pub steps: &'static [(Inputs, Option<u16>, u16)],
    }

    include!(concat!(env!("OUT_DIR"), "/cases_boost_driver.rs"));
}
