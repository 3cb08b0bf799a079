//! A simulated PWM channel.

use embedded_hal::pwm::{ErrorType, SetDutyCycle};

use super::output::{OutputFault, SimError, SimOutput};
use crate::closed_loop::Drive;

/// A PWM channel with a stated resolution: the duty register takes `0 ..= max_duty_cycle`
/// (a timer with `max_duty_cycle + 1` counts per period). Starts at duty 0.
///
/// The plant's switch follows the register: duty 0 is off for the whole tick,
/// `max_duty_cycle` on for the whole tick, anything between a PWM at
/// `duty / max_duty_cycle` of the closed loop's PWM period, each period starting on (edges
/// rounded to whole nanoseconds, as the closed loop does). A value above `max_duty_cycle` is
/// an error, as the trait asks, and leaves the register unchanged.
#[derive(Debug, Clone)]
pub struct SimPwm {
    max: u16,
    duty: u16,
    fault: OutputFault,
    writes: u64,
}

impl SimPwm {
    /// A working channel with resolution `max_duty_cycle` (a 0 is taken as 1: an on/off
    /// output).
    #[must_use]
    pub fn new(max_duty_cycle: u16) -> Self {
        Self::with_fault(max_duty_cycle, OutputFault::new())
    }

    /// A channel that fails while `fault` is set.
    #[must_use]
    pub fn with_fault(max_duty_cycle: u16, fault: OutputFault) -> Self {
        Self {
            max: max_duty_cycle.max(1),
            duty: 0,
            fault,
            writes: 0,
        }
    }

    /// The duty register, counts.
    #[must_use]
    pub const fn duty(&self) -> u16 {
        self.duty
    }

    /// Writes that reached the register.
    #[must_use]
    pub const fn writes(&self) -> u64 {
        self.writes
    }
}

impl ErrorType for SimPwm {
    type Error = SimError;
}

impl SetDutyCycle for SimPwm {
    fn max_duty_cycle(&self) -> u16 {
        self.max
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), SimError> {
        if self.fault.failing() || duty > self.max {
            return Err(SimError);
        }
        self.duty = duty;
        self.writes += 1;
        Ok(())
    }
}

impl SimOutput for SimPwm {
    fn drive(&self) -> Drive {
        if self.duty == 0 {
            Drive::Off
        } else if self.duty >= self.max {
            Drive::On
        } else {
            Drive::Pwm {
                duty: f64::from(self.duty) / f64::from(self.max),
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn register_to_drive() {
        let mut p = SimPwm::new(1000);
        assert_eq!(p.max_duty_cycle(), 1000);
        assert_eq!(p.drive(), Drive::Off);
        p.set_duty_cycle(450).unwrap();
        assert_eq!(p.drive(), Drive::Pwm { duty: 0.45 });
        p.set_duty_cycle(1000).unwrap();
        assert_eq!(p.drive(), Drive::On);
        assert_eq!(p.set_duty_cycle(1001), Err(SimError));
        assert_eq!(p.duty(), 1000);
        assert_eq!(p.writes(), 2);
    }

    #[test]
    fn a_failing_channel_keeps_its_duty() {
        let f = OutputFault::new();
        let mut p = SimPwm::with_fault(200, f.clone());
        p.set_duty_cycle(100).unwrap();
        f.set(true);
        assert_eq!(p.set_duty_cycle(0), Err(SimError));
        assert_eq!(p.drive(), Drive::Pwm { duty: 0.5 });
        assert_eq!(SimPwm::new(0).max_duty_cycle(), 1);
    }
}
