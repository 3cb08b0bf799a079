//! The adapters: the `lenz::drive` drivers as closed-loop controllers.

use std::borrow::Borrow;

use embedded_hal::pwm::SetDutyCycle;
use lenz::drive::{
    BoostLoop, BoostLoopConfig, CoilDriver, CoilDriverConfig, CoilSense, DriveError,
};
use lenz::kernel::TripEvent;

use super::output::SimOutput;
use crate::closed_loop::{Actuation, Controller, Direction, Sensed, Telemetry, TripCause};

/// Micro-amperes per ampere, for the estimate in the telemetry.
const A_PER_UA: f64 = 1e-6;

/// A [`CoilDriver`] on a simulated output, as a closed-loop controller.
///
/// Per tick: the tick's current and supply readings go into [`CoilDriver::update`] with the
/// demand, unchanged; the output's state after the tick (duty register or pin level) is the
/// actuation. The driver is the one firmware links; nothing here decides anything.
///
/// Telemetry: the driver's estimate; `tripped` while a fault is latched
/// ([`CoilDriver::fault`]) and on the tick of every new trip the detector reports (a trip with
/// a retry left switches off without latching).
#[derive(Debug)]
pub struct CoilDriverLoop<C, S> {
    driver: CoilDriver<C, S>,
    last_trip: Option<TripEvent>,
    new_trip: bool,
    output_errors: u64,
}

impl<C, S> CoilDriverLoop<C, S>
where
    C: Borrow<CoilDriverConfig>,
    S: SetDutyCycle + SimOutput,
{
    /// Builds the driver on `out` ([`CoilDriver::new`]).
    ///
    /// # Errors
    ///
    /// The driver's: the output failed on its first write, or its resolution cannot set the
    /// hold duty.
    pub fn new(cfg: C, out: S) -> Result<Self, DriveError<S::Error>> {
        let driver = CoilDriver::new(cfg, out).map_err(|(e, _)| e)?;
        Ok(Self {
            driver,
            last_trip: None,
            new_trip: false,
            output_errors: 0,
        })
    }

    /// The driver.
    pub const fn driver(&self) -> &CoilDriver<C, S> {
        &self.driver
    }

    /// Ticks whose `update` returned an output error.
    pub const fn output_errors(&self) -> u64 {
        self.output_errors
    }
}

impl<C, S> Controller for CoilDriverLoop<C, S>
where
    C: Borrow<CoilDriverConfig>,
    S: SetDutyCycle + SimOutput,
{
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let sense = CoilSense {
            current_counts: s.current_counts,
            supply_counts: s.supply_counts,
        };
        if self.driver.update(s.demand, sense).is_err() {
            self.output_errors += 1;
        }
        let trip = self.driver.last_trip();
        self.new_trip = trip.is_some() && trip != self.last_trip;
        self.last_trip = trip;
        Actuation {
            drive: self.driver.output().drive(),
            direction: Direction::Forward,
        }
    }

    fn telemetry(&self) -> Telemetry {
        Telemetry {
            estimate_a: Some(f64::from(self.driver.estimate_ua()) * A_PER_UA),
            tripped: self.driver.fault().is_some() || self.new_trip,
            trip_cause: match self.driver.fault() {
                Some(lenz::drive::CoilFault::Trip(c)) => Some(TripCause::from(c)),
                Some(lenz::drive::CoilFault::Plausibility(k)) => Some(TripCause::Plausibility(k)),
                Some(lenz::drive::CoilFault::Output) => Some(TripCause::OutputError),
                Some(lenz::drive::CoilFault::Stuck) => Some(TripCause::StuckArmature),
                None => self.last_trip.map(|e| TripCause::from(e.cause)),
            },
            seated: matches!(self.driver.motion(), lenz::kernel::Motion::Seated { .. }),
            dropped_out: matches!(
                self.driver.motion(),
                lenz::kernel::Motion::DroppedOut { .. }
            ),
        }
    }
}

/// A [`BoostLoop`] on a simulated PWM, as a closed-loop controller.
///
/// Per tick: [`BoostLoop::update`] with the demand as `enable` and the tick's input and output
/// readings; the duty register after the tick is the actuation. Telemetry: no estimate;
/// `tripped` while the loop is latched off after an output error (an overvoltage cut is the
/// limiter's normal work, not a trip).
#[derive(Debug)]
pub struct BoostLoopDriver<C, S> {
    driver: BoostLoop<C, S>,
    output_errors: u64,
}

impl<C, S> BoostLoopDriver<C, S>
where
    C: Borrow<BoostLoopConfig>,
    S: SetDutyCycle + SimOutput,
{
    /// Builds the loop on `out` ([`BoostLoop::new`]).
    ///
    /// # Errors
    ///
    /// The loop's: the output failed on its first write, or its `max_duty_cycle` is not the
    /// limiter's full scale.
    pub fn new(cfg: C, out: S) -> Result<Self, DriveError<S::Error>> {
        let driver = BoostLoop::new(cfg, out).map_err(|(e, _)| e)?;
        Ok(Self {
            driver,
            output_errors: 0,
        })
    }

    /// The loop.
    pub const fn driver(&self) -> &BoostLoop<C, S> {
        &self.driver
    }

    /// Ticks whose `update` returned an output error.
    pub const fn output_errors(&self) -> u64 {
        self.output_errors
    }
}

impl<C, S> Controller for BoostLoopDriver<C, S>
where
    C: Borrow<BoostLoopConfig>,
    S: SetDutyCycle + SimOutput,
{
    fn tick(&mut self, s: &Sensed) -> Actuation {
        if self
            .driver
            .update(s.demand, s.supply_counts, s.output_counts)
            .is_err()
        {
            self.output_errors += 1;
        }
        Actuation {
            drive: self.driver.output().drive(),
            direction: Direction::Forward,
        }
    }

    fn telemetry(&self) -> Telemetry {
        Telemetry {
            estimate_a: None,
            tripped: self.driver.faulted(),
            trip_cause: self.driver.faulted().then_some(TripCause::Other),
            ..Telemetry::default()
        }
    }
}
