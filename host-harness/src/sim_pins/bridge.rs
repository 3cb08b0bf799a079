//! The direction pins of a simulated H-bridge.

use embedded_hal::digital::OutputPin;

use super::pin::SimPin;
use crate::closed_loop::Direction;

/// The two direction inputs of an H-bridge, one per leg (`a` high and `b` low: forward; `b`
/// high and `a` low: reverse; both equal: no direction, the legs brake or coast). The switch
/// drive (PWM on the enable) is a separate output.
///
/// The firmware owns the pins (`a_mut`, `b_mut`, or the pins themselves after
/// [`SimBridge::into_pins`]); the closed loop reads the direction back.
#[derive(Debug, Clone, Default)]
pub struct SimBridge {
    a: SimPin,
    b: SimPin,
}

impl SimBridge {
    /// Both legs low.
    #[must_use]
    pub fn new(a: SimPin, b: SimPin) -> Self {
        Self { a, b }
    }

    /// Leg A's direction pin.
    pub fn a_mut(&mut self) -> &mut impl OutputPin<Error = super::SimError> {
        &mut self.a
    }

    /// Leg B's direction pin.
    pub fn b_mut(&mut self) -> &mut impl OutputPin<Error = super::SimError> {
        &mut self.b
    }

    /// The pins.
    #[must_use]
    pub fn into_pins(self) -> (SimPin, SimPin) {
        (self.a, self.b)
    }

    /// The direction the legs set, `None` when both are at the same level.
    #[must_use]
    pub const fn direction(&self) -> Option<Direction> {
        match (self.a.is_high(), self.b.is_high()) {
            (true, false) => Some(Direction::Forward),
            (false, true) => Some(Direction::Reverse),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn legs_to_direction() {
        let mut b = SimBridge::default();
        assert_eq!(b.direction(), None);
        b.a_mut().set_high().unwrap();
        assert_eq!(b.direction(), Some(Direction::Forward));
        b.b_mut().set_high().unwrap();
        assert_eq!(b.direction(), None);
        b.a_mut().set_low().unwrap();
        assert_eq!(b.direction(), Some(Direction::Reverse));
    }
}
