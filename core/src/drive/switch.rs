//! A plain output pin as a switch output: a PWM channel with one step, off or fully on.

use embedded_hal::digital::{self, OutputPin};
use embedded_hal::pwm::{self, SetDutyCycle};

/// Drives a switch from an [`OutputPin`] as a [`SetDutyCycle`] with `max_duty_cycle() == 1`:
/// duty 0 sets the pin to its off level, any other duty to its on level. A driver given an
/// `OnOffSwitch` can pull in and hold at full drive (hold duty 1), never PWM.
///
/// *NOTE*: the level written is the level commanded; whether the switch followed is for the
/// current sense to tell (the plausibility monitor and trip detector of the coil driver).
///
/// # Examples
///
/// ```
/// # use lenz::drive::OnOffSwitch;
/// # use embedded_hal::pwm::SetDutyCycle;
/// # struct Pin(bool);
/// # impl embedded_hal::digital::ErrorType for Pin { type Error = core::convert::Infallible; }
/// # impl embedded_hal::digital::OutputPin for Pin {
/// #     fn set_low(&mut self) -> Result<(), Self::Error> { self.0 = false; Ok(()) }
/// #     fn set_high(&mut self) -> Result<(), Self::Error> { self.0 = true; Ok(()) }
/// # }
/// let mut switch = OnOffSwitch::new(Pin(false));
/// assert_eq!(switch.max_duty_cycle(), 1);
/// switch.set_duty_cycle(1).unwrap();
/// assert!(switch.pin().0);
/// ```
#[derive(Debug)]
pub struct OnOffSwitch<P> {
    pin: P,
    active_low: bool,
}

impl<P: OutputPin> OnOffSwitch<P> {
    /// A switch that is on while the pin is high.
    #[must_use]
    pub const fn new(pin: P) -> Self {
        Self {
            pin,
            active_low: false,
        }
    }

    /// A switch that is on while the pin is low.
    #[must_use]
    pub const fn new_active_low(pin: P) -> Self {
        Self {
            pin,
            active_low: true,
        }
    }

    /// The pin.
    #[must_use]
    pub const fn pin(&self) -> &P {
        &self.pin
    }

    /// Gives the pin back, at the level it has.
    pub fn free(self) -> P {
        self.pin
    }
}

/// The error of an [`OnOffSwitch`]: its pin's error.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PinError<E>(pub E);

impl<E: digital::Error> PinError<E> {
    /// The pin's error kind.
    #[must_use]
    pub fn pin_kind(&self) -> digital::ErrorKind {
        self.0.kind()
    }

    /// The pin's error.
    pub fn into_inner(self) -> E {
        self.0
    }
}

impl<E: digital::Error> pwm::Error for PinError<E> {
    fn kind(&self) -> pwm::ErrorKind {
        pwm::ErrorKind::Other
    }
}

impl<P: OutputPin> pwm::ErrorType for OnOffSwitch<P> {
    type Error = PinError<P::Error>;
}

impl<P: OutputPin> SetDutyCycle for OnOffSwitch<P> {
    fn max_duty_cycle(&self) -> u16 {
        1
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Self::Error> {
        let high = (duty != 0) != self.active_low;
        if high {
            self.pin.set_high()
        } else {
            self.pin.set_low()
        }
        .map_err(PinError)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use embedded_hal_mock::eh1::MockError;
    use embedded_hal_mock::eh1::digital::{Mock, State, Transaction};
    extern crate std;

    #[test]
    fn levels_follow_the_duty_and_polarity() {
        let mut s = OnOffSwitch::new(Mock::new(&[
            Transaction::set(State::High),
            Transaction::set(State::Low),
        ]));
        s.set_duty_cycle(1).unwrap();
        s.set_duty_cycle(0).unwrap();
        s.free().done();
        let mut s = OnOffSwitch::new_active_low(Mock::new(&[
            Transaction::set(State::Low),
            Transaction::set(State::High),
        ]));
        s.set_duty_cycle(7).unwrap();
        s.set_duty_cycle(0).unwrap();
        s.free().done();
    }

    #[test]
    fn pin_errors_keep_their_kind() {
        let err = MockError::Io(std::io::ErrorKind::NotConnected);
        let mut s = OnOffSwitch::new(Mock::new(&[
            Transaction::set(State::High).with_error(err.clone())
        ]));
        let e = s.set_duty_cycle(1).unwrap_err();
        assert_eq!(pwm::Error::kind(&e), pwm::ErrorKind::Other);
        assert_eq!(e.pin_kind(), digital::ErrorKind::Other);
        assert_eq!(e.into_inner(), err);
        s.free().done();
    }
}
