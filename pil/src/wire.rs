//! The exchange between the harness and an image: fixed frames of [`FRAME_BYTES`] bytes,
//! little-endian, in two FIFOs (host to image [`IN_FIFO`], image to host [`OUT_FIFO`]).
//!
//! This module is the one definition of the format; the runtime (on the target) and the
//! harness (`lenz_harness::pil`, on the host) both encode and decode through it.
//!
//! # Sequence
//!
//! 1. image → host [`Hello`]: the protocol version, the SysTick calibration and the empty-call
//!    count (see [`crate`] for the counting method), the largest parameter block it takes.
//! 2. host → image [`Init`] followed by `params_len` bytes: the image's parameter block (for
//!    the coil driver images, its configuration; the harness documents what it sends) and the
//!    SysTick reload that bounds one tick (the instruction limit).
//! 3. image → host [`Frame::Ready`], or [`InitFailed`] with the image's code (the run ends).
//! 4. per control tick: host → image [`Frame::Tick`] (the tick's readings), image → host [`Act`]
//!    (the actuation for the tick and the raw SysTick count of the tick function).
//! 5. host → image [`Frame::Stop`]: the image exits with status 0.
//!
//! At any time the image may send instead [`Stopped`]: a fault exception, the instruction
//! limit, or a panic, with the tick and the code address; it then exits with status 1.

/// Bytes of every frame.
pub const FRAME_BYTES: usize = 32;
/// Protocol version, in [`Hello`].
pub const VERSION: u8 = 1;
/// Marks a [`Hello`] frame.
pub const MAGIC: [u8; 4] = *b"LZPL";
/// The host-to-image FIFO, relative to the emulator's working folder.
pub const IN_FIFO: &str = "lenz-pil-in";
/// The image-to-host FIFO, relative to the emulator's working folder.
pub const OUT_FIFO: &str = "lenz-pil-out";
/// Largest parameter block the runtime accepts, bytes.
pub const PARAMS_MAX: usize = 4096;

const K_HELLO: u8 = b'H';
const K_INIT: u8 = b'I';
const K_READY: u8 = b'R';
const K_INIT_FAILED: u8 = b'E';
const K_TICK: u8 = b'T';
const K_ACT: u8 = b'A';
const K_STOP: u8 = b'S';
const K_FAULT: u8 = b'F';
const K_LIMIT: u8 = b'L';
const K_PANIC: u8 = b'P';

const FLAG_TRIPPED: u8 = 1;
const FLAG_REVERSE: u8 = 2;
const FLAG_ESTIMATE: u8 = 4;

/// One frame's bytes.
pub type Bytes = [u8; FRAME_BYTES];

fn put_u16(b: &mut Bytes, at: usize, v: u16) {
    if let Some(d) = b.get_mut(at..at + 2) {
        d.copy_from_slice(&v.to_le_bytes());
    }
}

fn put_u32(b: &mut Bytes, at: usize, v: u32) {
    if let Some(d) = b.get_mut(at..at + 4) {
        d.copy_from_slice(&v.to_le_bytes());
    }
}

fn get_u16(b: &Bytes, at: usize) -> u16 {
    let mut x = [0u8; 2];
    if let Some(s) = b.get(at..at + 2) {
        x.copy_from_slice(s);
    }
    u16::from_le_bytes(x)
}

fn get_u32(b: &Bytes, at: usize) -> u32 {
    let mut x = [0u8; 4];
    if let Some(s) = b.get(at..at + 4) {
        x.copy_from_slice(s);
    }
    u32::from_le_bytes(x)
}

/// What an image reads at each control tick (the harness's `Sensed`, tick number cut to 32
/// bits).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[repr(C)]
pub struct Sensed {
    /// Tick number (wraps after 2³² ticks).
    pub tick: u32,
    /// Coil (inductor) current reading, counts.
    pub current_counts: u16,
    /// Supply (input) reading, counts.
    pub supply_counts: u16,
    /// Output reading, counts.
    pub output_counts: u16,
    /// The application's demand (valve open, rail enabled).
    pub demand: bool,
}

/// What an image returns from a control tick: the switch drive for the next interval and what
/// it reports about itself for the checks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[repr(C)]
pub struct Actuation {
    /// Duty for the next tick, counts of `duty_full_scale` (0: off; `duty_full_scale`: on).
    pub duty: u16,
    /// Full scale of `duty` (the PWM's `max_duty_cycle`); 0 is a protocol error.
    pub duty_full_scale: u16,
    /// Its estimate of the coil current, µA, if it has one.
    pub estimate_ua: Option<i32>,
    /// It has tripped (switched off for protection).
    pub tripped: bool,
    /// Bridge direction reversed.
    pub reverse: bool,
}

/// The image's first frame.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Hello {
    /// Protocol version ([`VERSION`]).
    pub version: u8,
    /// Calibration: iterations of the two-instruction loop, first and second run.
    pub n1: u32,
    /// Raw count of the first run.
    pub t1: u32,
    /// Second run's iterations.
    pub n2: u32,
    /// Raw count of the second run.
    pub t2: u32,
    /// Raw count of the empty function (one instruction, `bx lr`) through the same window.
    pub empty: u32,
    /// Largest parameter block the image takes, bytes.
    pub params_max: u32,
}

/// The host's answer to [`Hello`]; the parameter block follows it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Init {
    /// Bytes of the parameter block that follow this frame.
    pub params_len: u32,
    /// SysTick reload for each tick (1 ..= `0xFF_FFFF`): a tick function still running when the
    /// counter reaches zero is stopped ([`StopCause::Limit`]).
    pub limit_ticks: u32,
}

/// The image's answer to [`Init`] when its init function failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct InitFailed {
    /// The image's code.
    pub code: u16,
}

/// The image's answer to a [`Frame::Tick`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Act {
    /// The tick it answers.
    pub tick: u32,
    /// The actuation.
    pub actuation: Actuation,
    /// Raw SysTick count of the tick function: `reload − value after the call`.
    pub raw_ticks: u32,
}

/// Why an image stopped on its own.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StopCause {
    /// A fault exception (hard fault, or another exception the image did not expect), with
    /// its exception number.
    Fault {
        /// IPSR: 3 hard fault, 4 memory management, 5 bus fault, 6 usage fault…
        exception: u32,
    },
    /// The tick function was still running when the SysTick limit ran out.
    Limit,
    /// The image panicked.
    Panic,
}

/// An image's report that it stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Stopped {
    /// Why.
    pub cause: StopCause,
    /// The tick it was in (the last [`Frame::Tick`] it read).
    pub tick: u32,
    /// Code address where it stopped (the stacked return address of the exception; 0 for a
    /// panic).
    pub pc: u32,
}

/// Every frame.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Frame {
    /// Image → host, first.
    Hello(Hello),
    /// Host → image.
    Init(Init),
    /// Image → host: init succeeded.
    Ready,
    /// Image → host: init failed.
    InitFailed(InitFailed),
    /// Host → image: one control tick.
    Tick(Sensed),
    /// Image → host: the tick's result.
    Act(Act),
    /// Host → image: end of run.
    Stop,
    /// Image → host: it stopped on its own.
    Stopped(Stopped),
}

impl Frame {
    /// The frame's bytes.
    #[must_use]
    pub fn encode(&self) -> Bytes {
        let mut b = [0u8; FRAME_BYTES];
        match *self {
            Frame::Hello(h) => {
                b[0] = K_HELLO;
                b[1] = h.version;
                b[4..8].copy_from_slice(&MAGIC);
                put_u32(&mut b, 8, h.n1);
                put_u32(&mut b, 12, h.t1);
                put_u32(&mut b, 16, h.n2);
                put_u32(&mut b, 20, h.t2);
                put_u32(&mut b, 24, h.empty);
                put_u32(&mut b, 28, h.params_max);
            }
            Frame::Init(i) => {
                b[0] = K_INIT;
                put_u32(&mut b, 4, i.params_len);
                put_u32(&mut b, 8, i.limit_ticks);
            }
            Frame::Ready => b[0] = K_READY,
            Frame::InitFailed(e) => {
                b[0] = K_INIT_FAILED;
                put_u16(&mut b, 4, e.code);
            }
            Frame::Tick(s) => {
                b[0] = K_TICK;
                b[1] = u8::from(s.demand);
                put_u32(&mut b, 4, s.tick);
                put_u16(&mut b, 8, s.current_counts);
                put_u16(&mut b, 10, s.supply_counts);
                put_u16(&mut b, 12, s.output_counts);
            }
            Frame::Act(a) => {
                let x = a.actuation;
                b[0] = K_ACT;
                b[1] = if x.tripped { FLAG_TRIPPED } else { 0 }
                    | if x.reverse { FLAG_REVERSE } else { 0 }
                    | if x.estimate_ua.is_some() {
                        FLAG_ESTIMATE
                    } else {
                        0
                    };
                put_u32(&mut b, 4, a.tick);
                put_u16(&mut b, 8, x.duty);
                put_u16(&mut b, 10, x.duty_full_scale);
                put_u32(&mut b, 12, x.estimate_ua.unwrap_or(0) as u32);
                put_u32(&mut b, 16, a.raw_ticks);
            }
            Frame::Stop => b[0] = K_STOP,
            Frame::Stopped(s) => {
                let (kind, exception) = match s.cause {
                    StopCause::Fault { exception } => (K_FAULT, exception),
                    StopCause::Limit => (K_LIMIT, 0),
                    StopCause::Panic => (K_PANIC, 0),
                };
                b[0] = kind;
                put_u32(&mut b, 4, s.tick);
                put_u32(&mut b, 8, exception);
                put_u32(&mut b, 12, s.pc);
            }
        }
        b
    }

    /// The frame in `b`, or `None` for an unknown kind or a [`Hello`] without [`MAGIC`].
    #[must_use]
    pub fn decode(b: &Bytes) -> Option<Frame> {
        Some(match b[0] {
            K_HELLO => {
                if b[4..8] != MAGIC {
                    return None;
                }
                Frame::Hello(Hello {
                    version: b[1],
                    n1: get_u32(b, 8),
                    t1: get_u32(b, 12),
                    n2: get_u32(b, 16),
                    t2: get_u32(b, 20),
                    empty: get_u32(b, 24),
                    params_max: get_u32(b, 28),
                })
            }
            K_INIT => Frame::Init(Init {
                params_len: get_u32(b, 4),
                limit_ticks: get_u32(b, 8),
            }),
            K_READY => Frame::Ready,
            K_INIT_FAILED => Frame::InitFailed(InitFailed {
                code: get_u16(b, 4),
            }),
            K_TICK => Frame::Tick(Sensed {
                tick: get_u32(b, 4),
                current_counts: get_u16(b, 8),
                supply_counts: get_u16(b, 10),
                output_counts: get_u16(b, 12),
                demand: b[1] != 0,
            }),
            K_ACT => Frame::Act(Act {
                tick: get_u32(b, 4),
                actuation: Actuation {
                    duty: get_u16(b, 8),
                    duty_full_scale: get_u16(b, 10),
                    estimate_ua: (b[1] & FLAG_ESTIMATE != 0).then_some(get_u32(b, 12) as i32),
                    tripped: b[1] & FLAG_TRIPPED != 0,
                    reverse: b[1] & FLAG_REVERSE != 0,
                },
                raw_ticks: get_u32(b, 16),
            }),
            K_STOP => Frame::Stop,
            K_FAULT | K_LIMIT | K_PANIC => Frame::Stopped(Stopped {
                cause: match b[0] {
                    K_FAULT => StopCause::Fault {
                        exception: get_u32(b, 8),
                    },
                    K_LIMIT => StopCause::Limit,
                    _ => StopCause::Panic,
                },
                tick: get_u32(b, 4),
                pc: get_u32(b, 12),
            }),
            _ => return None,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_frame_round_trips() {
        let frames = [
            Frame::Hello(Hello {
                version: VERSION,
                n1: 1000,
                t1: 32_800,
                n2: 3000,
                t2: 98_340,
                empty: 70,
                params_max: PARAMS_MAX as u32,
            }),
            Frame::Init(Init {
                params_len: 812,
                limit_ticks: 0xFF_FFFF,
            }),
            Frame::Ready,
            Frame::InitFailed(InitFailed { code: 0xBEEF }),
            Frame::Tick(Sensed {
                tick: u32::MAX,
                current_counts: 4095,
                supply_counts: 1,
                output_counts: 0x8001,
                demand: true,
            }),
            Frame::Act(Act {
                tick: 7,
                actuation: Actuation {
                    duty: 450,
                    duty_full_scale: 1000,
                    estimate_ua: Some(-12_345),
                    tripped: true,
                    reverse: false,
                },
                raw_ticks: 0xFF_FFFE,
            }),
            Frame::Act(Act {
                tick: 8,
                actuation: Actuation {
                    duty: 0,
                    duty_full_scale: 1,
                    estimate_ua: None,
                    tripped: false,
                    reverse: true,
                },
                raw_ticks: 0,
            }),
            Frame::Stop,
            Frame::Stopped(Stopped {
                cause: StopCause::Fault { exception: 3 },
                tick: 41,
                pc: 0x0000_1234,
            }),
            Frame::Stopped(Stopped {
                cause: StopCause::Limit,
                tick: 2,
                pc: 0x0000_0ff0,
            }),
            Frame::Stopped(Stopped {
                cause: StopCause::Panic,
                tick: 0,
                pc: 0,
            }),
        ];
        for f in frames {
            assert_eq!(Frame::decode(&f.encode()), Some(f), "{f:?}");
        }
    }

    #[test]
    fn unknown_kinds_and_a_hello_without_magic_are_refused() {
        let mut b = [0u8; FRAME_BYTES];
        assert_eq!(Frame::decode(&b), None);
        b[0] = b'H';
        assert_eq!(Frame::decode(&b), None);
        b[0] = b'z';
        assert_eq!(Frame::decode(&b), None);
    }
}
