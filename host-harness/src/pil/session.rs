//! One image under `qemu-system-arm`, in lock-step: the emulator process, the two FIFOs and
//! the frames of [`lenz_pil::wire`].

use std::fs::{File, OpenOptions};
use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use lenz_pil::wire::{self, Frame, Hello, Init};
use rustix::event::{PollFd, PollFlags, Timespec, poll};

use crate::firmware::Target;

/// `-icount shift` of the runs in the loop: 1024 ns of virtual time per instruction, so a
/// SysTick count is about 12 to 26 counts per instruction on the three machines (exact after
/// rounding) and the 24-bit counter spans more than 600 000 instructions.
pub const ICOUNT_SHIFT: u32 = 10;

/// Why a session could not start (the image is not a working in-the-loop image).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StartError(pub String);

impl std::fmt::Display for StartError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

/// How an image stopped answering during the run.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Misbehaviour {
    /// It reported a fault exception.
    Fault {
        /// Exception number (3 hard fault…).
        exception: u32,
        /// Code address.
        pc: u32,
    },
    /// Its tick function ran past the instruction limit.
    Limit {
        /// The limit, instructions.
        instructions: u64,
        /// Code address where it was stopped.
        pc: u32,
    },
    /// It panicked.
    Panic,
    /// The emulator exited without a report (status given).
    Exited(String),
    /// No answer within the wall-clock guard.
    NoAnswer(Duration),
    /// It answered with a frame that is not an answer to the tick.
    Protocol(String),
}

impl std::fmt::Display for Misbehaviour {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Misbehaviour::Fault { exception, pc } => {
                let name = match exception {
                    2 => "NMI",
                    3 => "hard fault",
                    4 => "memory management fault",
                    5 => "bus fault",
                    6 => "usage fault",
                    11 => "SVCall",
                    14 => "PendSV",
                    _ => "exception",
                };
                write!(f, "{name} (exception {exception}) at {pc:#010x}")
            }
            Misbehaviour::Limit { instructions, pc } => write!(
                f,
                "tick function still running after the instruction limit ({instructions}), \
                 stopped at {pc:#010x}"
            ),
            Misbehaviour::Panic => f.write_str("panicked"),
            Misbehaviour::Exited(s) => write!(f, "exited early ({s})"),
            Misbehaviour::NoAnswer(d) => {
                write!(
                    f,
                    "no answer within {:.1} s of wall-clock time",
                    d.as_secs_f64()
                )
            }
            Misbehaviour::Protocol(s) => write!(f, "broke the exchange: {s}"),
        }
    }
}

/// Guards and limits of a session.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Guards {
    /// Wall-clock time to the image's first frame and to its answer to the parameter block.
    pub start: Duration,
    /// Wall-clock time for each tick's answer.
    pub tick: Duration,
    /// Instruction limit of one tick (`None`: the counter's whole range).
    pub instructions: Option<u64>,
}

impl Default for Guards {
    fn default() -> Self {
        Self {
            start: Duration::from_secs(10),
            tick: Duration::from_secs(2),
            instructions: None,
        }
    }
}

/// The calibration of the count (see [`lenz_pil`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Calibration {
    /// SysTick counts per instruction.
    pub ticks_per_instruction: f64,
    /// Raw count of the one-instruction empty function.
    pub empty: u32,
}

impl Calibration {
    /// From the image's first frame.
    ///
    /// # Errors
    ///
    /// A calibration that did not advance (no timer under `-icount`).
    pub fn of(h: &Hello) -> Result<Self, String> {
        if h.n2 <= h.n1 || h.t2 <= h.t1 {
            return Err(format!(
                "the image's SysTick calibration did not advance (t1={}, t2={})",
                h.t1, h.t2
            ));
        }
        Ok(Self {
            ticks_per_instruction: f64::from(h.t2 - h.t1) / (2.0 * f64::from(h.n2 - h.n1)),
            empty: h.empty,
        })
    }

    /// Instructions of a tick from its raw count.
    #[must_use]
    pub fn instructions(&self, raw: u32) -> u64 {
        let d = f64::from(raw.saturating_sub(self.empty)) / self.ticks_per_instruction;
        d.round() as u64 + 1
    }

    /// The SysTick reload for an instruction limit (within the 24-bit counter).
    #[must_use]
    pub fn reload(&self, instructions: Option<u64>) -> u32 {
        let max = 0x00FF_FFFF_u32;
        instructions.map_or(max, |n| {
            let t = (n.saturating_sub(1) as f64 * self.ticks_per_instruction).ceil()
                + f64::from(self.empty);
            if t >= f64::from(max) {
                max
            } else {
                (t as u32).max(1)
            }
        })
    }

    /// The instruction limit a reload stands for.
    #[must_use]
    pub fn limit(&self, reload: u32) -> u64 {
        self.instructions(reload)
    }
}

/// A running image.
#[derive(Debug)]
pub struct Session {
    child: Child,
    to_fw: File,
    from_fw: File,
    _dir: tempfile::TempDir,
    guards: Guards,
    calibration: Calibration,
    reload: u32,
}

/// The emulator on `PATH`.
///
/// # Errors
///
/// Not installed (the message names the Debian package).
pub fn qemu() -> Result<PathBuf, String> {
    let path = std::env::var_os("PATH").unwrap_or_default();
    std::env::split_paths(&path)
        .map(|d| d.join("qemu-system-arm"))
        .find(|p| p.is_file())
        .ok_or_else(|| {
            "--firmware needs qemu-system-arm (Debian: apt-get install qemu-system-arm)".into()
        })
}

impl Session {
    /// Starts `image` on `target`'s machine, waits for its first frame, sends `params` and
    /// waits for its answer.
    ///
    /// # Errors
    ///
    /// The emulator could not start, the image sent no first frame in time (not an image
    /// built on the runtime, or it crashed first), or its init refused the parameter block.
    pub fn start(
        qemu: &Path,
        target: Target,
        image: &Path,
        params: &[u8],
        guards: Guards,
    ) -> Result<Session, StartError> {
        let err = |s: String| StartError(format!("--firmware {}: {s}", image.display()));
        let image_abs = image
            .canonicalize()
            .map_err(|e| err(format!("cannot open: {e}")))?;
        let dir = tempfile::Builder::new()
            .prefix("lenz-pil")
            .tempdir()
            .map_err(|e| err(format!("cannot create a temporary folder: {e}")))?;
        let mode = rustix::fs::Mode::from_raw_mode(0o600);
        for name in [wire::IN_FIFO, wire::OUT_FIFO] {
            rustix::fs::mkfifoat(rustix::fs::CWD, dir.path().join(name), mode)
                .map_err(|e| err(format!("cannot create the FIFO {name}: {e}")))?;
        }
        // Read and write: opening does not wait for the emulator, and neither FIFO sees an
        // end of file while the session lives.
        let open = |name: &str| {
            OpenOptions::new()
                .read(true)
                .write(true)
                .open(dir.path().join(name))
                .map_err(|e| err(format!("cannot open the FIFO {name}: {e}")))
        };
        let to_fw = open(wire::IN_FIFO)?;
        let from_fw = open(wire::OUT_FIFO)?;
        let child = Command::new(qemu)
            .args(["-machine", target.machine()])
            .args(["-nographic", "-monitor", "none", "-serial", "none"])
            .args(["-semihosting-config", "enable=on,target=native"])
            .args(["-icount", &format!("shift={ICOUNT_SHIFT}")])
            .arg("-kernel")
            .arg(&image_abs)
            .current_dir(dir.path())
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .map_err(|e| err(format!("cannot start {}: {e}", qemu.display())))?;
        let mut s = Session {
            child,
            to_fw,
            from_fw,
            _dir: dir,
            guards,
            calibration: Calibration {
                ticks_per_instruction: 1.0,
                empty: 0,
            },
            reload: 0x00FF_FFFF,
        };
        let hello = match s.receive(guards.start) {
            Ok(Frame::Hello(h)) if h.version == wire::VERSION => h,
            Ok(Frame::Hello(h)) => {
                return Err(err(format!(
                    "speaks version {} of the exchange, this harness {}",
                    h.version,
                    wire::VERSION
                )));
            }
            Ok(other) => return Err(err(format!("sent {other:?} before its first frame"))),
            Err(m) => {
                return Err(err(format!(
                    "no first frame from the image: {m} (an image built on the lenz-pil runtime \
                     sends one at reset){}",
                    s.console()
                )));
            }
        };
        s.calibration = Calibration::of(&hello).map_err(err)?;
        if params.len() > hello.params_max as usize {
            return Err(err(format!(
                "the parameter block has {} bytes, the image takes at most {}",
                params.len(),
                hello.params_max
            )));
        }
        s.reload = s.calibration.reload(guards.instructions);
        let init = Frame::Init(Init {
            params_len: params.len() as u32,
            limit_ticks: s.reload,
        });
        s.send(&init)
            .and_then(|()| s.to_fw.write_all(params).map_err(|e| e.to_string()))
            .map_err(|e| err(format!("cannot send the parameter block: {e}")))?;
        match s.receive(guards.start) {
            Ok(Frame::Ready) => Ok(s),
            Ok(Frame::InitFailed(f)) => Err(err(format!(
                "its init refused the parameter block ({} bytes) with code {}",
                params.len(),
                f.code
            ))),
            Ok(other) => Err(err(format!("answered the parameter block with {other:?}"))),
            Err(m) => Err(err(format!("no answer to the parameter block: {m}"))),
        }
    }

    /// The count's calibration.
    #[must_use]
    pub const fn calibration(&self) -> Calibration {
        self.calibration
    }

    /// The instruction limit in force.
    #[must_use]
    pub fn instruction_limit(&self) -> u64 {
        self.calibration.limit(self.reload)
    }

    fn send(&mut self, f: &Frame) -> Result<(), String> {
        self.to_fw.write_all(&f.encode()).map_err(|e| e.to_string())
    }

    /// The next frame, within `guard`.
    fn receive(&mut self, guard: Duration) -> Result<Frame, Misbehaviour> {
        let start = Instant::now();
        let mut buf = [0u8; wire::FRAME_BYTES];
        let mut got = 0;
        while got < buf.len() {
            let left = guard.saturating_sub(start.elapsed());
            if left.is_zero() {
                return Err(Misbehaviour::NoAnswer(guard));
            }
            // Wait in slices, to see the emulator exit.
            let slice = left.min(Duration::from_millis(50));
            let ts = Timespec {
                tv_sec: slice.as_secs() as _,
                tv_nsec: slice.subsec_nanos() as _,
            };
            let ready = {
                let mut fds = [PollFd::new(&self.from_fw, PollFlags::IN)];
                poll(&mut fds, Some(&ts)).map_err(|e| Misbehaviour::Protocol(e.to_string()))?
            };
            if ready == 0 {
                if let Ok(Some(status)) = self.child.try_wait() {
                    return Err(Misbehaviour::Exited(status.to_string()));
                }
                continue;
            }
            let n = self
                .from_fw
                .read(buf.get_mut(got..).unwrap_or_default())
                .map_err(|e| Misbehaviour::Protocol(e.to_string()))?;
            got += n;
        }
        Frame::decode(&buf)
            .ok_or_else(|| Misbehaviour::Protocol(format!("unknown frame kind {:#04x}", buf[0])))
    }

    /// One control tick: sends `sensed`, returns the image's answer and the instructions of
    /// its tick function.
    ///
    /// # Errors
    ///
    /// The image stopped, broke the exchange or did not answer in time.
    pub fn tick(&mut self, sensed: &wire::Sensed) -> Result<(wire::Actuation, u64), Misbehaviour> {
        self.send(&Frame::Tick(*sensed))
            .map_err(|e| Misbehaviour::Protocol(format!("cannot send the tick: {e}")))?;
        match self.receive(self.guards.tick)? {
            Frame::Act(a) if a.tick == sensed.tick => {
                Ok((a.actuation, self.calibration.instructions(a.raw_ticks)))
            }
            Frame::Act(a) => Err(Misbehaviour::Protocol(format!(
                "answered tick {} to tick {}",
                a.tick, sensed.tick
            ))),
            Frame::Stopped(s) => Err(match s.cause {
                wire::StopCause::Fault { exception } => Misbehaviour::Fault {
                    exception,
                    pc: s.pc,
                },
                wire::StopCause::Limit => Misbehaviour::Limit {
                    instructions: self.instruction_limit(),
                    pc: s.pc,
                },
                wire::StopCause::Panic => Misbehaviour::Panic,
            }),
            other => Err(Misbehaviour::Protocol(format!(
                "answered a tick with {other:?}"
            ))),
        }
    }

    /// What the emulator printed, for a message (empty if nothing).
    fn console(&mut self) -> String {
        let _ = self.child.kill();
        let _ = self.child.wait();
        let mut s = String::new();
        if let Some(e) = self.child.stderr.as_mut() {
            let _ = e.read_to_string(&mut s);
        }
        let s = s.trim();
        if s.is_empty() {
            String::new()
        } else {
            format!("; the emulator printed: {s}")
        }
    }

    /// Ends the run: asks the image to exit, then stops the emulator.
    pub fn finish(mut self) {
        let _ = self.send(&Frame::Stop);
        let t = Instant::now();
        while t.elapsed() < Duration::from_millis(500) {
            if let Ok(Some(_)) = self.child.try_wait() {
                return;
            }
            std::thread::sleep(Duration::from_millis(2));
        }
    }
}

impl Drop for Session {
    fn drop(&mut self) {
        if let Ok(None) = self.child.try_wait() {
            let _ = self.child.kill();
        }
        let _ = self.child.wait();
    }
}
