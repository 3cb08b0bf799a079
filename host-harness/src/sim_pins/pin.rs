//! A simulated switch pin.

use embedded_hal::digital::{ErrorType, OutputPin, StatefulOutputPin};

use super::output::{OutputFault, SimError, SimOutput};
use crate::closed_loop::Drive;

/// A push-pull output pin driving the switch (high: on). Starts low.
#[derive(Debug, Clone, Default)]
pub struct SimPin {
    high: bool,
    fault: OutputFault,
    writes: u64,
}

impl SimPin {
    /// A working pin, low.
    #[must_use]
    pub fn new() -> Self {
        Self::default()
    }

    /// A pin that fails while `fault` is set.
    #[must_use]
    pub fn with_fault(fault: OutputFault) -> Self {
        Self {
            fault,
            ..Self::default()
        }
    }

    /// The level now.
    #[must_use]
    pub const fn is_high(&self) -> bool {
        self.high
    }

    /// Writes that reached the pin.
    #[must_use]
    pub const fn writes(&self) -> u64 {
        self.writes
    }

    fn set(&mut self, high: bool) -> Result<(), SimError> {
        if self.fault.failing() {
            return Err(SimError);
        }
        self.high = high;
        self.writes += 1;
        Ok(())
    }
}

impl ErrorType for SimPin {
    type Error = SimError;
}

impl OutputPin for SimPin {
    fn set_low(&mut self) -> Result<(), SimError> {
        self.set(false)
    }

    fn set_high(&mut self) -> Result<(), SimError> {
        self.set(true)
    }
}

impl StatefulOutputPin for SimPin {
    fn is_set_high(&mut self) -> Result<bool, SimError> {
        Ok(self.high)
    }

    fn is_set_low(&mut self) -> Result<bool, SimError> {
        Ok(!self.high)
    }
}

impl SimOutput for SimPin {
    fn drive(&self) -> Drive {
        if self.high { Drive::On } else { Drive::Off }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levels_and_failures() {
        let fault = OutputFault::new();
        let mut p = SimPin::with_fault(fault.clone());
        assert_eq!(p.drive(), Drive::Off);
        p.set_high().unwrap();
        assert_eq!(p.drive(), Drive::On);
        fault.set(true);
        assert_eq!(p.set_low(), Err(SimError));
        // A failed write leaves the pin as it was.
        assert_eq!(p.drive(), Drive::On);
        assert_eq!(p.writes(), 1);
        fault.set(false);
        p.set_low().unwrap();
        assert!(!p.is_high());
    }
}
