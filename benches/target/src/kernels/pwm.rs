//! The PWM output the drivers' ticks run on in the images: `max_duty_cycle` 1000, the last
//! written duty kept, writes failing while `fail` is set (the same as the generators' host
//! stand-in in `gen/coil_driver.rs`).

use core::cell::Cell;

/// A PWM channel of 1000 steps.
pub struct Pwm {
    /// The last duty written successfully.
    pub duty: u16,
    /// Writes fail while set.
    pub fail: Cell<bool>,
}

impl Pwm {
    /// Duty 0, writes succeed.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            duty: 0,
            fail: Cell::new(false),
        }
    }
}

impl Default for Pwm {
    fn default() -> Self {
        Self::new()
    }
}

/// The write failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PwmError;

impl embedded_hal::pwm::Error for PwmError {
    fn kind(&self) -> embedded_hal::pwm::ErrorKind {
        embedded_hal::pwm::ErrorKind::Other
    }
}

impl embedded_hal::pwm::ErrorType for Pwm {
    type Error = PwmError;
}

impl embedded_hal::pwm::SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), PwmError> {
        if self.fail.get() {
            return Err(PwmError);
        }
        self.duty = duty;
        Ok(())
    }
}
