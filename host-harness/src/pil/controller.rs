//! The image as a [`Controller`]: each tick's readings go to the image, its actuation comes
//! back.

use lenz_pil::wire;

use super::costs::TickCosts;
use super::session::{Calibration, Misbehaviour, Session};
use crate::closed_loop::{Actuation, Controller, Direction, Drive, Sensed, Telemetry};

/// The image's last exchange before it stopped answering.
#[derive(Debug, Clone, PartialEq)]
pub struct Failure {
    /// The tick it did not answer.
    pub tick: u64,
    /// How.
    pub what: Misbehaviour,
    /// What it was sent in that tick.
    pub sensed: Sensed,
    /// Its last answer (to the tick before), if any.
    pub last_actuation: Option<wire::Actuation>,
}

impl std::fmt::Display for Failure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let s = &self.sensed;
        write!(
            f,
            "firmware {} in tick {}; sent: current {} supply {} output {} counts, demand {}",
            self.what,
            self.tick,
            s.current_counts,
            s.supply_counts,
            s.output_counts,
            if s.demand { "on" } else { "off" }
        )?;
        match self.last_actuation {
            Some(a) => write!(
                f,
                "; its last answer: duty {}/{}{}",
                a.duty,
                a.duty_full_scale,
                if a.tripped { ", tripped" } else { "" }
            ),
            None => write!(f, "; no answer before"),
        }
    }
}

/// A firmware image running in the loop.
///
/// After a failure the image is stopped and the switch stays off for the rest of the run (the
/// state a watchdog reset leaves it in); [`FirmwareController::failure`] says what happened.
#[derive(Debug)]
pub struct FirmwareController {
    session: Option<Session>,
    telemetry: Telemetry,
    costs: TickCosts,
    failure: Option<Failure>,
    last: Option<wire::Actuation>,
    recorded: Option<Vec<wire::Actuation>>,
    calibration: Calibration,
    instruction_limit: u64,
}

impl FirmwareController {
    /// Runs `session`'s image; `record` keeps every actuation ([`FirmwareController::actuations`]).
    #[must_use]
    pub fn new(session: Session, record: bool) -> Self {
        Self {
            calibration: session.calibration(),
            instruction_limit: session.instruction_limit(),
            session: Some(session),
            telemetry: Telemetry::default(),
            costs: TickCosts::default(),
            failure: None,
            last: None,
            recorded: record.then(Vec::new),
        }
    }

    /// The count's calibration.
    #[must_use]
    pub const fn calibration(&self) -> Calibration {
        self.calibration
    }

    /// The instruction limit of one tick.
    #[must_use]
    pub const fn instruction_limit(&self) -> u64 {
        self.instruction_limit
    }

    /// Instructions per tick so far.
    #[must_use]
    pub const fn costs(&self) -> &TickCosts {
        &self.costs
    }

    /// Why the image stopped answering, if it did.
    #[must_use]
    pub const fn failure(&self) -> Option<&Failure> {
        self.failure.as_ref()
    }

    /// Every actuation, in tick order (when recorded).
    #[must_use]
    pub fn actuations(&self) -> &[wire::Actuation] {
        self.recorded.as_deref().unwrap_or_default()
    }

    /// Ends the run (the image exits).
    pub fn finish(&mut self) {
        if let Some(s) = self.session.take() {
            s.finish();
        }
    }

    fn fail(&mut self, s: &Sensed, what: Misbehaviour) -> Actuation {
        self.failure = Some(Failure {
            tick: s.tick,
            what,
            sensed: *s,
            last_actuation: self.last,
        });
        self.session = None;
        self.telemetry = Telemetry::default();
        Actuation::OFF
    }
}

/// The harness's actuation for an image's answer.
///
/// # Errors
///
/// A full scale of 0 or a duty above it.
pub fn actuation(a: &wire::Actuation) -> Result<Actuation, String> {
    if a.duty_full_scale == 0 || a.duty > a.duty_full_scale {
        return Err(format!(
            "duty {} of full scale {} (the duty must lie in 0 ..= full scale, full scale > 0)",
            a.duty, a.duty_full_scale
        ));
    }
    let drive = if a.duty == 0 {
        Drive::Off
    } else if a.duty == a.duty_full_scale {
        Drive::On
    } else {
        Drive::Pwm {
            duty: f64::from(a.duty) / f64::from(a.duty_full_scale),
        }
    };
    Ok(Actuation {
        drive,
        direction: if a.reverse {
            Direction::Reverse
        } else {
            Direction::Forward
        },
    })
}

impl Controller for FirmwareController {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let Some(session) = self.session.as_mut() else {
            return Actuation::OFF;
        };
        let w = wire::Sensed {
            tick: s.tick as u32,
            current_counts: s.current_counts,
            supply_counts: s.supply_counts,
            output_counts: s.output_counts,
            demand: s.demand,
        };
        match session.tick(&w) {
            Ok((a, n)) => match actuation(&a) {
                Ok(act) => {
                    self.costs.add(s.tick, n);
                    self.telemetry = Telemetry {
                        estimate_a: a.estimate_ua.map(|ua| f64::from(ua) * 1e-6),
                        tripped: a.tripped,
                        // The exchange frame carries the trip, not its cause.
                        trip_cause: None,
                        ..Telemetry::default()
                    };
                    self.last = Some(a);
                    if let Some(r) = &mut self.recorded {
                        r.push(a);
                    }
                    act
                }
                Err(e) => self.fail(s, Misbehaviour::Protocol(e)),
            },
            Err(m) => self.fail(s, m),
        }
    }

    fn telemetry(&self) -> Telemetry {
        self.telemetry
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn duty_maps_to_the_drive() {
        let a = |duty, full| wire::Actuation {
            duty,
            duty_full_scale: full,
            ..Default::default()
        };
        assert_eq!(actuation(&a(0, 1000)).unwrap(), Actuation::OFF);
        assert_eq!(actuation(&a(1000, 1000)).unwrap(), Actuation::ON);
        assert_eq!(actuation(&a(450, 1000)).unwrap(), Actuation::pwm(0.45));
        assert!(actuation(&a(1001, 1000)).unwrap_err().contains("1001"));
        assert!(actuation(&a(0, 0)).is_err());
    }
}
