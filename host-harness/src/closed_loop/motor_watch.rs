//! The motor properties of a run: time to speed, reversal peak current, winding temperature,
//! bus voltage and jam latency.
//!
//! - **Time to speed**: from each drive command (forward or reverse at a non-zero duty) to the
//!   rotor first turning at the limit's speed in the commanded direction; the longest over the
//!   run. The speed is observed at every plant advance (every PWM edge, sampling instant and
//!   tick end) and the crossing interpolated linearly between two observations (the speed is
//!   smooth: its error is of the order of `(Δt)²·|dω²/dt²|`, with `Δt` at most half a PWM
//!   period). A command that ends (or a run that ends) before the rotor got there counts as
//!   infinite; a run without a drive command as well.
//! - **Reversal peak current**: a reversal runs from a drive command against the previous
//!   drive command's direction (brake and coast commands between them do not end it: the
//!   command reverses the motor whatever the firmware does in between) to the next command or
//!   the end of the run; its value is the plant's exact largest current magnitude in that
//!   window, the largest over the run. A run without a reversal: infinite.
//! - **Winding temperature**: the winding's highest temperature (the plant's thermal model).
//! - **Bus voltage**: the plant's exact highest bus voltage.
//! - **Jam latency**: from the first jam fault's exact time to the start of the tick whose
//!   controller call first reports a trip at or after it (as the trip latency); infinite if the
//!   firmware never trips, or if the run has no jam.

use super::Plant;
use super::motor::{MotorCommand, MotorLimits};

/// Running state of the motor properties.
#[derive(Debug, Clone, Default)]
pub(super) struct MotorWatch {
    limits: MotorLimits,
    /// Sign of the last drive command (0 before the first).
    last_sign: i32,
    /// A drive command whose speed is not reached yet: its time and sign.
    pending: Option<(f64, i32)>,
    /// Previous observation: time and speed.
    prev: Option<(f64, f64)>,
    /// Longest time to speed so far, s (`None`: no drive command yet).
    tts_worst: Option<f64>,
    /// A reversal is open.
    reversing: bool,
    /// Largest reversal peak so far, A (`None`: no reversal yet).
    reversal_peak: Option<f64>,
    /// Highest winding temperature, °C.
    temp_max: Option<f64>,
}

/// The motor properties' values at the end of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct MotorValues {
    pub time_to_speed_s: f64,
    pub reversal_peak_a: f64,
    pub temp_max_c: f64,
    pub bus_max_v: f64,
    pub reversals: bool,
}

impl MotorWatch {
    pub(super) fn new(limits: MotorLimits) -> MotorWatch {
        MotorWatch {
            limits,
            ..MotorWatch::default()
        }
    }

    /// The application's command changed at `t_s`.
    pub(super) fn command<P: Plant>(&mut self, plant: &mut P, t_s: f64, cmd: MotorCommand) {
        self.close(plant);
        let s = cmd.sign();
        if s != 0 {
            self.pending = Some((t_s, s));
            if self.last_sign == -s {
                plant.motor_mark();
                self.reversing = true;
            }
            self.last_sign = s;
        }
    }

    /// Ends the open command: an unreached speed counts as infinite, an open reversal ends.
    fn close<P: Plant>(&mut self, plant: &P) {
        if self.pending.take().is_some() {
            self.tts_worst = Some(f64::INFINITY);
        }
        if self.reversing {
            self.reversing = false;
            let peak = plant
                .motor()
                .map_or(f64::INFINITY, |m| m.peak_current_since_mark_a);
            self.reversal_peak = Some(self.reversal_peak.unwrap_or(0.0).max(peak));
        }
    }

    /// The plant at `t_s`.
    pub(super) fn observe<P: Plant>(&mut self, plant: &P, t_s: f64) {
        let Some(m) = plant.motor() else {
            return;
        };
        self.temp_max = Some(
            self.temp_max
                .map_or(m.winding_temp_c, |t| t.max(m.winding_temp_c)),
        );
        if let (Some((t_cmd, s)), Some(level)) = (self.pending, self.limits.time_to_speed) {
            let w = f64::from(s) * m.speed_rad_s;
            if w >= level.speed_rad_s {
                // Linear interpolation from the previous observation (module docs).
                let t_cross = match self.prev {
                    Some((tp, wp)) if tp >= t_cmd && f64::from(s) * wp < level.speed_rad_s => {
                        let wp = f64::from(s) * wp;
                        tp + (t_s - tp) * (level.speed_rad_s - wp) / (w - wp)
                    }
                    _ => t_s,
                };
                let dt = (t_cross - t_cmd).max(0.0);
                self.tts_worst = Some(self.tts_worst.unwrap_or(0.0).max(dt));
                self.pending = None;
            }
        }
        self.prev = Some((t_s, m.speed_rad_s));
    }

    pub(super) fn finish<P: Plant>(&mut self, plant: &P) -> MotorValues {
        self.close(plant);
        let m = plant.motor();
        MotorValues {
            time_to_speed_s: self.tts_worst.unwrap_or(f64::INFINITY),
            reversal_peak_a: self.reversal_peak.unwrap_or(f64::INFINITY),
            temp_max_c: self.temp_max.unwrap_or(f64::INFINITY),
            bus_max_v: m.map_or(f64::INFINITY, |m| m.peak_bus_v),
            reversals: self.reversal_peak.is_some(),
        }
    }
}
