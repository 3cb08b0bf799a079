//! What the simulated outputs have in common: their error, the failure switch, and how their
//! state reads back as the drive of the plant's switch.

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};

use embedded_hal::{digital, pwm};
use lenz::drive::OnOffSwitch;

use crate::closed_loop::Drive;

/// The error of a simulated output: the write did not reach the output, which kept its state.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SimError;

impl std::fmt::Display for SimError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("simulated output failure: the write did not reach the output")
    }
}

impl std::error::Error for SimError {}

impl digital::Error for SimError {
    fn kind(&self) -> digital::ErrorKind {
        digital::ErrorKind::Other
    }
}

impl pwm::Error for SimError {
    fn kind(&self) -> pwm::ErrorKind {
        pwm::ErrorKind::Other
    }
}

/// A switch that makes an output fail, shared between the output (owned by the driver) and the
/// test or harness that injects the failure.
#[derive(Debug, Clone, Default)]
pub struct OutputFault(Arc<AtomicBool>);

impl OutputFault {
    /// Working.
    #[must_use]
    pub fn new() -> Self {
        Self::default()
    }

    /// From now on every write fails (`true`) or works again (`false`).
    pub fn set(&self, failing: bool) {
        self.0.store(failing, Ordering::Relaxed);
    }

    /// `true` while writes fail.
    #[must_use]
    pub fn failing(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }
}

/// An output whose state the plant's switch follows.
pub trait SimOutput {
    /// How the switch is driven until the next write.
    fn drive(&self) -> Drive;
}

/// A switch on a pin: the pin's level is the switch. Build it with [`OnOffSwitch::new`]
/// (active high); the simulated switch is on while the pin is high.
impl<P: SimOutput + embedded_hal::digital::OutputPin> SimOutput for OnOffSwitch<P> {
    fn drive(&self) -> Drive {
        self.pin().drive()
    }
}
