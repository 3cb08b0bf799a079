//! Example image: the coil driver of `lenz::drive` ([`CoilDriver`]) in the loop.
//!
//! - **Parameter block**: the driver's configuration as [`CoilDriverRaw`] in postcard's
//!   encoding (what `lenz sim --firmware` sends for a file with a `[controller.coil]`; see
//!   `lenz_harness::pil::params`). Init fails with code 1 for a block that does not decode,
//!   2 when the driver refuses the PWM resolution.
//! - **PWM**: a channel of [`MAX_DUTY`] counts (a 20 kHz PWM from a 20 MHz timer clock,
//!   invented for the demo); the duty it holds after the tick is the actuation.
//! - **Tick**: [`CoilDriver::update`] with the demand and the current and supply readings;
//!   reports the estimate and, as "tripped", a latched fault.

#![no_std]
#![no_main]

use core::convert::Infallible;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::{CoilDriver, CoilDriverConfig, CoilDriverRaw, CoilSense};
use lenz_pil::{Actuation, Image, Sensed};

/// The PWM channel's `max_duty_cycle`.
const MAX_DUTY: u16 = 1000;

/// A PWM channel that keeps the duty written last.
struct Pwm(u16);

impl ErrorType for Pwm {
    type Error = Infallible;
}

impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        MAX_DUTY
    }

    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0 = duty;
        Ok(())
    }
}

struct Firmware {
    driver: CoilDriver<CoilDriverConfig, Pwm>,
}

impl Image for Firmware {
    fn init(params: &[u8]) -> Result<Self, u16> {
        let raw: CoilDriverRaw = postcard::from_bytes(params).map_err(|_| 1u16)?;
        let driver = CoilDriver::new(CoilDriverConfig::from_raw(raw), Pwm(0)).map_err(|_| 2u16)?;
        Ok(Self { driver })
    }

    fn tick(&mut self, s: &Sensed) -> Actuation {
        // An output error cannot happen on this channel; the driver latches off on one.
        let _ = self.driver.update(
            s.demand,
            CoilSense {
                current_counts: s.current_counts,
                supply_counts: s.supply_counts,
            },
        );
        Actuation {
            duty: self.driver.output().0,
            duty_full_scale: MAX_DUTY,
            estimate_ua: Some(self.driver.estimate_ua()),
            tripped: self.driver.fault().is_some(),
            reverse: false,
        }
    }
}

lenz_pil::image!(Firmware);
