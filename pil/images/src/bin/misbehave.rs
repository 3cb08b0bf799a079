//! Test image: keeps the switch off, then misbehaves at a given tick, so the harness's handling
//! of a firmware that stops answering is checked (`cargo xtask pil`).
//!
//! Parameter block: 5 bytes, the way (`0` loop forever, `1` undefined instruction: a hard
//! fault, `2` exit through semihosting, `3` panic, `4` loop forever with interrupts off, `5`
//! answer with a duty above its full scale) and the tick (`u32`, little-endian). Init fails
//! with code 1 for a block of another length.

#![no_std]
#![no_main]

use lenz_pil::{Actuation, Image, Sensed};

struct Misbehave {
    how: u8,
    at: u32,
}

impl Image for Misbehave {
    fn init(params: &[u8]) -> Result<Self, u16> {
        match *params {
            [how, a, b, c, d] => Ok(Self {
                how,
                at: u32::from_le_bytes([a, b, c, d]),
            }),
            _ => Err(1),
        }
    }

    fn tick(&mut self, s: &Sensed) -> Actuation {
        let off = Actuation {
            duty: 0,
            duty_full_scale: 1,
            ..Actuation::default()
        };
        if s.tick != self.at {
            return off;
        }
        match self.how {
            0 => loop {
                core::hint::spin_loop();
            },
            // SAFETY: a permanently undefined instruction: the hard fault under test.
            1 => unsafe { core::arch::asm!("udf #0", options(noreturn)) },
            2 => {
                // SAFETY: semihosting SYS_EXIT (0x18) with ADP_Stopped_ApplicationExit.
                unsafe {
                    core::arch::asm!("bkpt #0xab", in("r0") 0x18u32, in("r1") 0x2_0026u32,
                        options(nostack));
                }
                off
            }
            3 => panic!("misbehave at tick {}", s.tick),
            4 => {
                // SAFETY: masks interrupts (the SysTick limit too): only the harness's
                // wall-clock guard can end this.
                unsafe { core::arch::asm!("cpsid i", options(nomem, nostack)) };
                loop {
                    core::hint::spin_loop();
                }
            }
            _ => Actuation {
                duty: 2,
                duty_full_scale: 1,
                ..Actuation::default()
            },
        }
    }
}

lenz_pil::image!(Misbehave);
