//! Bridge guard for a motor on an H-bridge: turns the application's signed duty request into a
//! safe bridge command every tick — soft start, brake before reversal, dead time between the
//! switches of a leg, and brake versus coast.
//!
//! # Bridge modes
//!
//! | [`BridgeMode`] | leg A | leg B | winding sees |
//! |---|---|---|---|
//! | `Coast` | both off | both off | the freewheel diodes: its current returns to the rail |
//! | `Forward` | PWM: high side for the duty, low side for the rest | low side on | `+V` for the duty, shorted for the rest (slow decay) |
//! | `Reverse` | low side on | PWM as leg A forward | `−V` for the duty, shorted for the rest |
//! | `Brake` | low side on | low side on | shorted: the back-EMF drives the brake current |
//!
//! The PWM timer inserts its own dead time between the two switches of the switching leg
//! within each period; this kernel guards the *mode* changes, where a switch that was held on
//! hands over to the other switch of its leg.
//!
//! # Decisions, per tick
//!
//! 1. **Target mode.** A request of zero is a stop: `Brake` when the speed estimate's
//!    magnitude is at or below `brake_speed`, else `Coast` (the short-circuit brake current of a
//!    fast rotor would exceed the limit; coasting lets it slow down first). A non-zero request
//!    drives in its direction, unless the rotor turns the other way faster than
//!    `reverse_speed`: then it stops first (brake or coast as above) and reverses only below
//!    that speed. A load that drives the braked rotor (a constant load torque `T` turns it
//!    at `R·T/(k² + R·b)` against a shorted winding) must leave it below `reverse_speed`, or
//!    the guard keeps braking; the plan checks this for the stated load.
//! 2. **Dead time.** A change between two of `Forward`, `Reverse`, `Brake` passes through
//!    `Coast` for `dead_ticks` ticks; leaving `Coast` waits until it has lasted that long. With
//!    `dead_ticks = 0` modes change directly.
//! 3. **Soft start.** Entering a drive mode starts the ramp at the *resume duty* `d₀`; the duty
//!    rises by at most `slew_q16` per tick from there towards the request and falls at once.
//!    The plan picks the slew so that the start's peak current from standstill stays at or
//!    below the limit ([`crate::motor::Motor::soft_start_ramp_s`]). From standstill, or when the
//!    rotor turns the other way, `d₀ = 0`. When the rotor still turns in the direction of the
//!    drive (a restart while coasting), `d₀` is the duty whose mean voltage at the plan's
//!    highest supply matches the estimated back-EMF less a margin:
//!    `d₀ = k_p·max(0, ω̂ − m)/V_p` (`ω̂` the speed estimate in the drive's direction, `m` the
//!    margin, `k_p` the plan's torque constant, `V_p` its highest supply). Starting from duty
//!    zero instead shorts the spinning winding through the low sides for most of each period
//!    (slow decay): a brake, whose current `−k·ω/R` can exceed the limit the soft start keeps.
//!    **Bound.** With the back-EMF estimate within `k_p·m` of the true back-EMF `e` (the margin
//!    is the estimator's error bound while coasting, from the plan) and a supply `V ≤ V_p`,
//!    `0 ≤ d₀·V ≤ e`: the first tick's voltage excess over the back-EMF is at most the slew's,
//!    as from standstill, and the braking voltage `e − d₀·V` lies between 0 and `e` (the start
//!    from duty zero) — at most `e·(1 − V/V_p) + 2·k_p·m`. So an estimate within its bound
//!    never makes the start worse than a start from duty zero; an estimate wrong by more than
//!    `m` upwards drives forward by at most `k_p·(ω̂ − ω − m)·V/V_p` at the first tick.
//!    `d₀` rounds down (the coefficient and the product are floored). A plan without a margin
//!    (`resume_margin_rad_s: None`) always starts from zero.
//! 4. **Speed probes while coasting.** A coasting rotor leaves no trace in the current once
//!    the diodes block, so the speed estimate ([`super::SpeedEstimatorConfig::hold`]) cannot
//!    fall and the guard would coast forever. Every `probe_ticks` ticks of coasting (and not
//!    before the dead time has passed) it brakes for one tick: the back-EMF then drives a
//!    small current through the shorted winding, which the estimator reads. The plan checks
//!    that one such tick from the no-load speed stays within the current limit. With
//!    `probe_ticks = 0` there are no probes (the firmware then needs another speed source).
//!
//! No float, no division: compares, a saturating add, and at a mode change one 32×32→64
//! multiply for `d₀`. State: 8 bytes.

use crate::error::{Error, in_range, non_negative, positive};
use crate::kernel::DUTY_ONE_Q16;
use crate::motor::Motor;

/// The bridge's switch pattern (module docs of this file).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum BridgeMode {
    /// All switches off.
    Coast,
    /// Leg A switching at the duty, leg B low side on.
    Forward,
    /// Leg B switching at the duty, leg A low side on.
    Reverse,
    /// Both low sides on.
    Brake,
}

impl BridgeMode {
    const fn code(self) -> u8 {
        match self {
            BridgeMode::Coast => 0,
            BridgeMode::Forward => 1,
            BridgeMode::Reverse => 2,
            BridgeMode::Brake => 3,
        }
    }

    const fn from_code(c: u8) -> BridgeMode {
        match c {
            1 => BridgeMode::Forward,
            2 => BridgeMode::Reverse,
            3 => BridgeMode::Brake,
            _ => BridgeMode::Coast,
        }
    }
}

/// What the bridge does during the next tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BridgeCommand {
    /// Switch pattern.
    pub mode: BridgeMode,
    /// Duty of the switching leg in `Forward` and `Reverse`, `0 ..= DUTY_ONE_Q16`; 0 otherwise.
    pub duty_q16: i32,
}

impl BridgeCommand {
    /// The duty signed by direction (positive forward), as the speed estimator and the jam
    /// detector take it; 0 in `Coast` and `Brake`.
    #[must_use]
    pub const fn signed_duty_q16(&self) -> i32 {
        match self.mode {
            BridgeMode::Forward => self.duty_q16,
            BridgeMode::Reverse => -self.duty_q16,
            _ => 0,
        }
    }
}

/// What the plan-side constructor needs.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BridgeGuardParams {
    /// Supply at which the limits must hold (the highest). Units: V.
    pub supply_v: f32,
    /// Winding temperature at which they must hold (the coldest: lowest resistance). Units: °C.
    pub temp_c: f32,
    /// The hottest winding temperature: the creep speed at which the load turns the braked
    /// rotor backwards, `R·T/(k² + R·b)`, grows with the resistance, and the reversal speed
    /// must clear it at its largest (checked at the higher of the two temperatures). Units: °C.
    pub max_temp_c: f32,
    /// Load torque during start and brake. Units: N·m.
    pub load_torque_nm: f32,
    /// Peak current the start and the brake may reach. Units: A.
    pub current_limit_a: f32,
    /// Tick period. Units: s.
    pub tick_s: f32,
    /// Dead time at a mode change; rounded up to whole ticks. Units: s.
    pub dead_time_s: f32,
    /// Reversal only at or below this speed magnitude. Units: rad/s.
    pub reverse_speed_rad_s: f32,
    /// Interval of the one-tick brake probes while coasting; 0 for none. Units: s.
    pub probe_interval_s: f32,
    /// Restart while the rotor turns the drive's way: the error bound of the back-EMF speed
    /// estimate while coasting (the back-EMF estimate's error over the plan's torque constant,
    /// plus the slow-down between two brake probes); the ramp starts at the duty matching the
    /// estimate less this margin (module docs, "Soft start"). `None`: always from duty zero.
    /// Units: rad/s.
    #[cfg_attr(feature = "serde", serde(default))]
    pub resume_margin_rad_s: Option<f32>,
}

/// Raw coefficients of a [`BridgeGuardConfig`] (emitted constants can live in flash).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BridgeGuardRaw {
    /// Largest duty rise per tick, Q16 (`DUTY_ONE_Q16` or more: no soft start).
    pub slew_q16: i32,
    /// Brake allowed at or below this speed magnitude. Units: mrad/s.
    pub brake_speed_mrad_s: i32,
    /// Reversal allowed at or below this speed magnitude. Units: mrad/s.
    pub reverse_speed_mrad_s: i32,
    /// Ticks in `Coast` between two driven modes.
    pub dead_ticks: u16,
    /// Coasting ticks between one-tick brake probes; 0 for none.
    pub probe_ticks: u16,
    /// Resume duty per speed, `k_p/V_p`: duty Q16 per mrad/s, Q24 (0 or negative: the ramp
    /// always starts from zero).
    pub resume_duty_q24: i32,
    /// Speed margin taken off the estimate before the resume duty. Units: mrad/s.
    pub resume_margin_mrad_s: i32,
}

/// Bridge guard coefficients (shared by channels); decisions in the module docs of this file.
///
/// # Examples
///
/// ```
/// # use lenz::{motor::MotorParams, kernel::{BridgeGuardConfig, BridgeGuardParams, BridgeGuardState, BridgeMode, DUTY_ONE_Q16}};
/// // Vent motor (invented): start and brake peaks held to 4 A at 13.2 V and -20 °C.
/// let m = MotorParams::new(2e-3, 1.5, 0.03).with_inertia_kg_m2(2e-5).validate()?;
/// let cfg = BridgeGuardConfig::new(&m, &BridgeGuardParams {
///     supply_v: 13.2,
///     temp_c: -20.0,
///     max_temp_c: 60.0,
///     load_torque_nm: 0.0,
///     current_limit_a: 4.0,
///     tick_s: 100e-6,
///     dead_time_s: 200e-6,
///     reverse_speed_rad_s: 20.0,
///     probe_interval_s: 5e-3,
///     resume_margin_rad_s: Some(40.0),
/// })?;
/// let mut s = BridgeGuardState::new();
/// let first = cfg.update(&mut s, DUTY_ONE_Q16, 0);
/// assert_eq!(first.mode, BridgeMode::Forward);
/// assert!(first.duty_q16 < DUTY_ONE_Q16); // soft start
/// // A restart while the rotor coasts forward at 300 rad/s: the ramp starts near the duty
/// // of the back-EMF less the margin, 0.03·(300 − 40)/13.2 = 0.59.
/// let mut s = BridgeGuardState::new();
/// let resumed = cfg.update(&mut s, DUTY_ONE_Q16, 300_000);
/// assert!((resumed.duty_q16 - cfg.slew_q16() - 38_725).abs() <= 2);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BridgeGuardConfig {
    r: BridgeGuardRaw,
}

/// Per-channel bridge guard state: 8 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BridgeGuardState {
    duty_q16: i32,
    off_ticks: u16,
    mode: u8,
}

impl Default for BridgeGuardState {
    fn default() -> Self {
        Self::new()
    }
}

impl BridgeGuardState {
    /// Coasting for long enough: the next driven mode may start at once.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            duty_q16: 0,
            off_ticks: u16::MAX,
            mode: 0,
        }
    }

    /// Back to [`BridgeGuardState::new`]. Only call it when the bridge has really been off for
    /// at least the dead time (a reset skips the dead time).
    pub fn reset(&mut self) {
        *self = Self::new();
    }

    /// The mode of the last command.
    #[must_use]
    pub const fn mode(&self) -> BridgeMode {
        BridgeMode::from_code(self.mode)
    }

    /// A tick in which the bridge coasts whatever the guard would command (a driver latched
    /// off by a fault): the state records the coast, so the dead time counts from its start
    /// and the next driven mode starts from duty zero.
    pub fn coast_tick(&mut self) {
        if self.mode != BridgeMode::Coast.code() {
            self.mode = BridgeMode::Coast.code();
            self.off_ticks = 0;
        }
        self.duty_q16 = 0;
        self.off_ticks = self.off_ticks.saturating_add(1);
    }
}

impl BridgeGuardConfig {
    /// Coefficients for `motor` (its inertia must be stated): the slew from the shortest ramp
    /// that keeps the start peak within the limit, the brake speed from the fastest steady run
    /// whose short-circuit brake peak stays within it (found by bisection to 10⁻⁴ relative,
    /// rounded down to mrad/s), both at the stated supply, temperature and load.
    ///
    /// The probes: `probe_interval_s` rounded up to whole ticks; one brake tick from the
    /// no-load speed, `(k·ω₀/R)·(1 − e^(−T·R/L))` with `ω₀ = V/k`, must stay within the limit.
    ///
    /// # Errors
    ///
    /// Bad parameters, named; the plan's errors ([`Motor::soft_start_ramp_s`]: a limit at or
    /// below the running current cannot be met); a probe tick whose brake current would exceed
    /// the limit (`tick_s`); a reversal speed below the speed at which the stated load turns the
    /// braked rotor, `R·T/(k² + R·b)` at the stated temperature (`reverse_speed_rad_s`: the
    /// guard would brake for ever).
    pub fn new(motor: &Motor, p: &BridgeGuardParams) -> Result<Self, Error> {
        let tick = f64::from(in_range("tick_s", positive("tick_s", p.tick_s)?, 0.0, 1.0)?);
        let dead = f64::from(in_range(
            "dead_time_s",
            non_negative("dead_time_s", p.dead_time_s)?,
            0.0,
            1.0e3,
        )?);
        let dead_ticks = libm::ceil(dead / tick);
        if dead_ticks > f64::from(u16::MAX - 1) {
            return Err(Error::OutOfRange {
                param: "dead_time_s",
                value: p.dead_time_s,
                min: 0.0,
                max: (f64::from(u16::MAX - 1) * tick) as f32,
            });
        }
        let reverse = in_range("reverse_speed_rad_s", p.reverse_speed_rad_s, 0.0, 2.0e6)?;
        let creep = {
            // Largest at the largest resistance: the hotter of the two temperatures.
            let r = f64::from(
                motor
                    .loop_resistance_ohm(p.temp_c)?
                    .max(motor.loop_resistance_ohm(p.max_temp_c)?),
            );
            let k = f64::from(motor.torque_constant_nm_per_a());
            let b = f64::from(motor.params().friction_nm_s_per_rad);
            let load = f64::from(crate::error::non_negative(
                "load_torque_nm",
                p.load_torque_nm,
            )?);
            r * load / (k * k + r * b)
        };
        if f64::from(reverse) < creep {
            return Err(Error::OutOfRange {
                param: "reverse_speed_rad_s",
                value: reverse,
                min: creep as f32,
                max: 2.0e6,
            });
        }
        let probe = f64::from(in_range(
            "probe_interval_s",
            non_negative("probe_interval_s", p.probe_interval_s)?,
            0.0,
            1.0e3,
        )?);
        let probe_ticks = libm::ceil(probe / tick);
        if probe_ticks > f64::from(u16::MAX) {
            return Err(Error::OutOfRange {
                param: "probe_interval_s",
                value: p.probe_interval_s,
                min: 0.0,
                max: (f64::from(u16::MAX) * tick) as f32,
            });
        }
        if probe_ticks > 0.0 {
            let r = f64::from(motor.loop_resistance_ohm(p.temp_c)?);
            let x = tick * r / f64::from(motor.inductance_h());
            let i_probe = f64::from(p.supply_v) / r * -libm::expm1(-x);
            if !i_probe.is_finite() || i_probe > f64::from(p.current_limit_a) {
                return Err(Error::OutOfRange {
                    param: "tick_s",
                    value: p.tick_s,
                    min: 0.0,
                    max: (-libm::log1p(-f64::from(p.current_limit_a) * r / f64::from(p.supply_v))
                        * f64::from(motor.inductance_h())
                        / r) as f32,
                });
            }
        }
        let ramp = f64::from(motor.soft_start_ramp_s(
            p.supply_v,
            p.temp_c,
            p.load_torque_nm,
            p.current_limit_a,
        )?);
        let one = f64::from(DUTY_ONE_Q16);
        let slew = if ramp > 0.0 {
            libm::floor(one * tick / ramp).clamp(1.0, one) as i32
        } else {
            DUTY_ONE_Q16
        };
        let limit = p.current_limit_a;
        // The brake may start from a steady run (current (b·ω + T)/k) or from coasting (no
        // current); the peak is largest at one of the two.
        let k = motor.torque_constant_nm_per_a();
        let b = motor.params().friction_nm_s_per_rad;
        let brake_ok = |w: f32| -> Result<bool, Error> {
            let running = (b * w + p.load_torque_nm) / k;
            let mut ok = true;
            for i0 in [0.0, running] {
                ok &= motor
                    .brake_peak_from_state(p.temp_c, p.load_torque_nm, i0, w)?
                    .magnitude_a()
                    <= limit;
            }
            Ok(ok)
        };
        // The fastest speed of interest: no-load speed at the stated supply.
        let w_top = (p.supply_v / motor.torque_constant_nm_per_a()).min(1.0e6);
        let brake_speed = if brake_ok(w_top)? {
            f64::from(w_top)
        } else if !brake_ok(0.0)? {
            0.0
        } else {
            let (mut lo, mut hi) = (0.0f32, w_top);
            while hi - lo > 1e-4 * w_top {
                let mid = 0.5 * (lo + hi);
                if brake_ok(mid)? {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            f64::from(lo)
        };
        let (resume_duty_q24, resume_margin_mrad_s) = match p.resume_margin_rad_s {
            None => (0, i32::MAX),
            Some(m) => {
                let m = in_range(
                    "resume_margin_rad_s",
                    non_negative("resume_margin_rad_s", m)?,
                    0.0,
                    2.0e6,
                )?;
                // Duty Q16 per mrad/s, Q24: 2^16·k/(1000·V)·2^24, floored (d₀ rounds down).
                let v = f64::from(positive("supply_v", p.supply_v)?);
                let c = libm::floor(
                    f64::from(DUTY_ONE_Q16) * f64::from(k) / (1.0e3 * v) * 16_777_216.0,
                );
                if c >= f64::from(i32::MAX) {
                    // A no-load speed below 0.5 rad/s.
                    return Err(Error::OutOfRange {
                        param: "supply_v",
                        value: p.supply_v,
                        min: (f64::from(k) * 65.536 * 16_777_216.0 / f64::from(i32::MAX)) as f32,
                        max: crate::coil::SUPPLY_MAX_V,
                    });
                }
                (c as i32, libm::ceil(f64::from(m) * 1e3) as i32)
            }
        };
        Ok(Self::from_raw(BridgeGuardRaw {
            slew_q16: slew,
            brake_speed_mrad_s: libm::floor(brake_speed * 1e3) as i32,
            reverse_speed_mrad_s: libm::floor(f64::from(reverse) * 1e3) as i32,
            dead_ticks: dead_ticks as u16,
            probe_ticks: probe_ticks as u16,
            resume_duty_q24,
            resume_margin_mrad_s,
        }))
    }

    /// Coefficients from raw values (for emitted constants). Any values are safe.
    #[must_use]
    pub const fn from_raw(raw: BridgeGuardRaw) -> Self {
        Self { r: raw }
    }

    /// The raw coefficients.
    #[must_use]
    pub const fn raw(&self) -> BridgeGuardRaw {
        self.r
    }

    /// Largest duty rise per tick, Q16.
    #[must_use]
    pub const fn slew_q16(&self) -> i32 {
        self.r.slew_q16
    }

    /// Brake speed threshold, mrad/s.
    #[must_use]
    pub const fn brake_speed_mrad_s(&self) -> i32 {
        self.r.brake_speed_mrad_s
    }

    /// Reversal speed threshold, mrad/s.
    #[must_use]
    pub const fn reverse_speed_mrad_s(&self) -> i32 {
        self.r.reverse_speed_mrad_s
    }

    /// Dead time, ticks.
    #[must_use]
    pub const fn dead_ticks(&self) -> u16 {
        self.r.dead_ticks
    }

    /// Coasting ticks between brake probes (0: none).
    #[must_use]
    pub const fn probe_ticks(&self) -> u16 {
        self.r.probe_ticks
    }

    /// The resume duty `d₀` (module docs, "Soft start") for a rotor turning the drive's way at
    /// `speed_mrad_s` (negative: the other way, `d₀ = 0`), Q16, at most `DUTY_ONE_Q16`.
    #[inline]
    #[must_use]
    pub const fn resume_duty_q16(&self, speed_mrad_s: i32) -> i32 {
        let excess = speed_mrad_s as i64 - self.r.resume_margin_mrad_s as i64;
        let c = if self.r.resume_duty_q24 > 0 {
            self.r.resume_duty_q24
        } else {
            0
        };
        if excess <= 0 || c == 0 {
            return 0;
        }
        // excess < 2^33, c < 2^31: the product fits i64.
        let d = (excess * c as i64) >> 24;
        if d > DUTY_ONE_Q16 as i64 {
            DUTY_ONE_Q16
        } else {
            d as i32
        }
    }

    /// One tick: the application's request in, the bridge command out.
    ///
    /// # Arguments
    ///
    /// - `request_q16`: wanted duty, signed by direction (positive forward), saturated to
    ///   `±DUTY_ONE_Q16`; 0 is a stop.
    /// - `speed_mrad_s`: the speed estimate (positive forward), mrad/s.
    ///
    /// # Returns
    ///
    /// The command for the next tick (module docs).
    #[inline]
    pub fn update(
        &self,
        state: &mut BridgeGuardState,
        request_q16: i32,
        speed_mrad_s: i32,
    ) -> BridgeCommand {
        let r = &self.r;
        let req = request_q16.clamp(-DUTY_ONE_Q16, DUTY_ONE_Q16);
        let w_abs = if speed_mrad_s == i32::MIN {
            i32::MAX
        } else {
            speed_mrad_s.abs()
        };
        let stop = if w_abs <= r.brake_speed_mrad_s {
            BridgeMode::Brake
        } else {
            BridgeMode::Coast
        };
        let target = if req == 0 {
            stop
        } else {
            let against = (req > 0 && speed_mrad_s < 0) || (req < 0 && speed_mrad_s > 0);
            if against && w_abs > r.reverse_speed_mrad_s {
                stop
            } else if req > 0 {
                BridgeMode::Forward
            } else {
                BridgeMode::Reverse
            }
        };
        let cur = BridgeMode::from_code(state.mode);
        let probe = r.probe_ticks > 0
            && state.off_ticks >= r.probe_ticks
            && state.off_ticks >= r.dead_ticks;
        let next = if target == cur {
            if cur == BridgeMode::Coast && probe {
                BridgeMode::Brake
            } else {
                cur
            }
        } else if cur == BridgeMode::Coast {
            if state.off_ticks >= r.dead_ticks {
                target
            } else {
                BridgeMode::Coast
            }
        } else if target == BridgeMode::Coast || r.dead_ticks == 0 {
            target
        } else {
            BridgeMode::Coast
        };
        if next != cur {
            state.duty_q16 = match next {
                BridgeMode::Forward => self.resume_duty_q16(speed_mrad_s),
                BridgeMode::Reverse => self.resume_duty_q16(speed_mrad_s.saturating_neg()),
                _ => 0,
            };
            if next == BridgeMode::Coast {
                state.off_ticks = 0;
            }
        }
        let duty = match next {
            BridgeMode::Forward | BridgeMode::Reverse => {
                let want = if req < 0 { -req } else { req };
                let up = state.duty_q16.saturating_add(r.slew_q16.max(0));
                if want < up { want } else { up }
            }
            _ => 0,
        };
        if next == BridgeMode::Coast {
            state.off_ticks = state.off_ticks.saturating_add(1);
        }
        state.duty_q16 = duty;
        state.mode = next.code();
        BridgeCommand {
            mode: next,
            duty_q16: duty,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use proptest::test_runner::RngSeed;

    use crate::motor::test_vent::vent;

    fn guard(limit: f32, dead: f32) -> BridgeGuardConfig {
        BridgeGuardConfig::new(
            &vent(),
            &BridgeGuardParams {
                supply_v: 12.0,
                temp_c: 20.0,
                max_temp_c: 20.0,
                load_torque_nm: 0.02,
                current_limit_a: limit,
                tick_s: 100e-6,
                dead_time_s: dead,
                reverse_speed_rad_s: 40.0,
                probe_interval_s: 0.0,
                resume_margin_rad_s: None,
            },
        )
        .unwrap()
    }

    #[test]
    fn state_size_is_as_documented() {
        // The kernel rule: at most 32 bytes of state per channel.
        assert_eq!(core::mem::size_of::<BridgeGuardState>(), 8);
    }

    #[test]
    fn creep_speed_is_checked_at_the_hottest_winding() {
        // The braked rotor creeps backwards under the load at R·T/(k² + R·b) (the steady state
        // of the motor equations with the winding shorted), largest at the largest R.
        let m = vent();
        let creep = |temp: f32| {
            let r = f64::from(m.loop_resistance_ohm(temp).unwrap());
            r * 0.02 / (0.03 * 0.03 + r * 1e-6)
        };
        let (cold, hot) = (creep(-20.0), creep(60.0));
        assert!(cold < 30.0 && hot > 38.0, "{cold} {hot}");
        let params = |max_temp_c: f32, reverse: f32| BridgeGuardParams {
            supply_v: 13.2,
            temp_c: -20.0,
            max_temp_c,
            load_torque_nm: 0.02,
            current_limit_a: 4.0,
            tick_s: 100e-6,
            dead_time_s: 200e-6,
            reverse_speed_rad_s: reverse,
            probe_interval_s: 0.0,
            resume_margin_rad_s: None,
        };
        // Between the two: enough at -20 °C, not at 60 °C.
        let between = 0.5 * (cold + hot) as f32;
        assert!(BridgeGuardConfig::new(&m, &params(-20.0, between)).is_ok());
        match BridgeGuardConfig::new(&m, &params(60.0, between)) {
            Err(Error::OutOfRange { param, min, .. }) => {
                assert_eq!(param, "reverse_speed_rad_s");
                assert!((f64::from(min) - hot).abs() < 1e-3 * hot, "{min} vs {hot}");
            }
            other => panic!("{other:?}"),
        }
        assert!(BridgeGuardConfig::new(&m, &params(60.0, hot as f32 + 0.1)).is_ok());
    }

    #[test]
    fn plan_limits_hold() {
        let g = guard(4.0, 200e-6);
        assert_eq!(g.dead_ticks(), 2);
        // The slew's ramp is at least the planned one, whose peak is within 4 A.
        let m = vent();
        let ramp = m.soft_start_ramp_s(12.0, 20.0, 0.02, 4.0).unwrap();
        let slew_ramp = 100e-6 * 65_536.0 / g.slew_q16() as f32;
        assert!(slew_ramp >= ramp);
        assert!(
            m.ramp_start_peak(12.0, 20.0, 0.02, slew_ramp)
                .unwrap()
                .magnitude_a()
                <= 4.0
        );
        // Brake speed: the brake from there peaks at the limit (within the bisection), from
        // the coasting state (no current), which is the worse start here.
        let wb = g.brake_speed_mrad_s() as f32 * 1e-3;
        let peak = |i0: f32, w: f32| {
            m.brake_peak_from_state(20.0, 0.02, i0, w)
                .unwrap()
                .magnitude_a()
        };
        let running = (1e-6 * wb + 0.02) / 0.03;
        assert!(peak(0.0, wb) <= 4.0 && peak(running, wb) <= 4.0);
        assert!(peak(0.0, wb * 1.01) > 4.0, "{wb} {}", peak(0.0, wb * 1.01));
        // A generous limit: no soft start, brake at any speed up to no-load.
        let g = guard(20.0, 0.0);
        assert_eq!(g.slew_q16(), DUTY_ONE_Q16);
        assert_eq!(g.brake_speed_mrad_s(), 400_000);
        assert_eq!(g.dead_ticks(), 0);
    }

    #[test]
    fn soft_start_then_stop_then_reverse() {
        let g = guard(4.0, 200e-6);
        let mut s = BridgeGuardState::new();
        // Soft start: the duty rises by the slew each tick up to the request.
        let mut last = 0;
        for n in 1..=3 {
            let c = g.update(&mut s, DUTY_ONE_Q16, 0);
            assert_eq!(c.mode, BridgeMode::Forward);
            assert_eq!(c.duty_q16, (n * g.slew_q16()).min(DUTY_ONE_Q16));
            last = c.duty_q16;
        }
        assert!(last < DUTY_ONE_Q16);
        // A lower request takes effect at once.
        let below = last / 2;
        assert_eq!(g.update(&mut s, below, 100_000).duty_q16, below);
        // Stop at 300 rad/s (above the brake speed): coast.
        let c = g.update(&mut s, 0, 300_000);
        assert_eq!((c.mode, c.duty_q16), (BridgeMode::Coast, 0));
        // Reverse requested while still fast forward: keeps coasting until slow enough to
        // brake, brakes down to the reversal speed, then reverses after the dead time.
        assert_eq!(
            g.update(&mut s, -DUTY_ONE_Q16, 300_000).mode,
            BridgeMode::Coast
        );
        let wb = g.brake_speed_mrad_s();
        assert_eq!(g.update(&mut s, -DUTY_ONE_Q16, wb).mode, BridgeMode::Brake);
        assert_eq!(
            g.update(&mut s, -DUTY_ONE_Q16, 45_000).mode,
            BridgeMode::Brake
        );
        // The stated load turns the braked rotor at 33.3 rad/s: a reversal speed below that
        // would keep the guard braking, the plan refuses it.
        let err = BridgeGuardConfig::new(
            &vent(),
            &BridgeGuardParams {
                supply_v: 12.0,
                temp_c: 20.0,
                max_temp_c: 20.0,
                load_torque_nm: 0.02,
                current_limit_a: 4.0,
                tick_s: 100e-6,
                dead_time_s: 0.0,
                reverse_speed_rad_s: 20.0,
                probe_interval_s: 0.0,
                resume_margin_rad_s: None,
            },
        )
        .unwrap_err();
        assert_eq!(err.param(), "reverse_speed_rad_s");
        // Below 40 rad/s: two ticks of dead time, then reverse from duty zero up.
        assert_eq!(
            g.update(&mut s, -DUTY_ONE_Q16, 35_000).mode,
            BridgeMode::Coast
        );
        assert_eq!(
            g.update(&mut s, -DUTY_ONE_Q16, 34_000).mode,
            BridgeMode::Coast
        );
        let c = g.update(&mut s, -DUTY_ONE_Q16, 33_000);
        assert_eq!(c.mode, BridgeMode::Reverse);
        assert_eq!(c.duty_q16, g.slew_q16());
        assert_eq!(c.signed_duty_q16(), -g.slew_q16());
    }

    /// The vent's guard at 13.2 V and −20 °C with the resume margin `margin`.
    fn resuming_params(margin: Option<f32>) -> BridgeGuardParams {
        BridgeGuardParams {
            supply_v: 13.2,
            temp_c: -20.0,
            max_temp_c: 60.0,
            load_torque_nm: 0.02,
            current_limit_a: 4.0,
            tick_s: 100e-6,
            dead_time_s: 200e-6,
            reverse_speed_rad_s: 50.0,
            probe_interval_s: 5e-3,
            resume_margin_rad_s: margin,
        }
    }

    fn resuming_guard(margin: Option<f32>) -> BridgeGuardConfig {
        BridgeGuardConfig::new(&vent(), &resuming_params(margin)).unwrap()
    }

    #[test]
    fn restart_while_coasting_starts_at_the_back_emf_duty() {
        let g = resuming_guard(Some(40.0));
        // d₀ = k·(ω̂ − m)/V_p = 0.03·(300 − 40)/13.2 of 65 536, floored.
        let expect = (0.03 * 260.0 / 13.2 * 65_536.0f64).floor() as i32;
        let d0 = g.resume_duty_q16(300_000);
        assert!((expect - d0).abs() <= 1, "{d0} vs {expect}");
        // Running forward at 300 rad/s, stopped (coasting: too fast to brake) for the dead
        // time, then a forward request: the first drive tick is d₀ plus one slew step, then
        // the ramp goes on from there.
        let mut s = BridgeGuardState::new();
        assert_eq!(
            g.update(&mut s, DUTY_ONE_Q16, 300_000).mode,
            BridgeMode::Forward
        );
        assert_eq!(g.update(&mut s, 0, 300_000).mode, BridgeMode::Coast);
        assert_eq!(g.update(&mut s, 0, 300_000).mode, BridgeMode::Coast);
        let c = g.update(&mut s, DUTY_ONE_Q16, 300_000);
        assert_eq!(
            (c.mode, c.duty_q16),
            (BridgeMode::Forward, d0 + g.slew_q16())
        );
        let c = g.update(&mut s, DUTY_ONE_Q16, 300_000);
        assert_eq!(c.duty_q16, d0 + 2 * g.slew_q16());
        // The same for reverse with the rotor turning backwards.
        let mut s = BridgeGuardState::new();
        let c = g.update(&mut s, -DUTY_ONE_Q16, -300_000);
        assert_eq!(
            (c.mode, c.duty_q16),
            (BridgeMode::Reverse, d0 + g.slew_q16())
        );
        // Below the margin, turning the other way, or without a margin: from zero.
        for (g, w) in [
            (g, 40_000),
            (g, 0),
            (resuming_guard(None), 300_000),
            (resuming_guard(Some(40.0)), -30_000),
        ] {
            let mut s = BridgeGuardState::new();
            assert_eq!(
                g.update(&mut s, DUTY_ONE_Q16, w).duty_q16,
                g.slew_q16(),
                "{w}"
            );
        }
        // A lower request than d₀ is taken as it is (the application asks for it).
        let mut s = BridgeGuardState::new();
        assert_eq!(g.update(&mut s, 1_000, 300_000).duty_q16, 1_000);
        // Saturation: any speed gives at most full duty, never a panic.
        assert_eq!(g.resume_duty_q16(i32::MAX), DUTY_ONE_Q16);
        assert_eq!(g.resume_duty_q16(i32::MIN), 0);
        // A margin that is negative or not finite is refused, by name.
        for bad in [-1.0, f32::NAN, f32::INFINITY] {
            let p = resuming_params(Some(bad));
            assert_eq!(
                BridgeGuardConfig::new(&vent(), &p).unwrap_err().param(),
                "resume_margin_rad_s"
            );
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig {
            cases: 2000,
            rng_seed: RngSeed::Fixed(0x0052_4553),
            ..ProptestConfig::default()
        })]

        /// The bound of the module docs: an estimate within the margin of the true speed and
        /// a supply at or below the plan's give `0 ≤ d₀·V ≤ k·ω` (never more voltage than the
        /// back-EMF), and the braking voltage `k·ω − d₀·V` at most `k·ω·(1 − V/V_p) + 2·k·m`
        /// plus one LSB of d₀.
        #[test]
        fn resume_duty_stays_within_the_back_emf(
            w in 0.0f64..450.0, err in -1.0f64..=1.0, v in 9.0f64..=13.2, m in 0.0f32..100.0,
        ) {
            let g = resuming_guard(Some(m));
            let m = f64::from(m);
            let est = ((w + err * m) * 1e3).round() as i32;
            // The estimate rounds to mrad/s; the margin is rounded up to it.
            let d0 = f64::from(g.resume_duty_q16(est)) / 65_536.0;
            let e = 0.03 * w;
            let emf = f64::from(0.03f32);
            prop_assert!(d0 >= 0.0);
            // Plus the estimate's own rounding to 1 mrad/s.
            prop_assert!(d0 * v <= emf * (w + 1e-3), "{d0} {v} {w}");
            let braking = e - d0 * v;
            prop_assert!(
                braking <= e * (1.0 - v / 13.2) + 2.0 * 0.03 * m + 13.2 / 65_536.0 + 1e-6,
                "{braking}"
            );
        }
    }

    /// Plain model of the rules (module docs), written with i64 and explicit mode history.
    fn model(
        r: &BridgeGuardRaw,
        hist: &mut (BridgeMode, i64, i64),
        req: i32,
        w: i32,
    ) -> BridgeCommand {
        let req = i64::from(req).clamp(-65_536, 65_536);
        let w = i64::from(w);
        let stop = if w.abs() <= i64::from(r.brake_speed_mrad_s) {
            BridgeMode::Brake
        } else {
            BridgeMode::Coast
        };
        let slow_down_first = req * w < 0 && w.abs() > i64::from(r.reverse_speed_mrad_s);
        let target = if req == 0 || slow_down_first {
            stop
        } else if req > 0 {
            BridgeMode::Forward
        } else {
            BridgeMode::Reverse
        };
        let (cur, duty, off) = *hist;
        let dead = i64::from(r.dead_ticks);
        let probe_due = r.probe_ticks > 0 && off >= i64::from(r.probe_ticks) && off >= dead;
        let next = if target == cur {
            if cur == BridgeMode::Coast && probe_due {
                BridgeMode::Brake
            } else {
                cur
            }
        } else if cur == BridgeMode::Coast {
            if off >= dead {
                target
            } else {
                BridgeMode::Coast
            }
        } else if target == BridgeMode::Coast || dead == 0 {
            target
        } else {
            BridgeMode::Coast
        };
        let resume = |w: i64| -> i64 {
            let c = i64::from(r.resume_duty_q24.max(0));
            let excess = w - i64::from(r.resume_margin_mrad_s);
            if excess <= 0 {
                0
            } else {
                ((excess * c) >> 24).min(65_536)
            }
        };
        let mut duty = if next == cur {
            duty
        } else {
            match next {
                BridgeMode::Forward => resume(w),
                BridgeMode::Reverse => resume((-w).min(i64::from(i32::MAX))),
                _ => 0,
            }
        };
        let mut off = if next != cur && next == BridgeMode::Coast {
            0
        } else {
            off
        };
        duty = match next {
            BridgeMode::Forward | BridgeMode::Reverse => req
                .abs()
                .min(duty + i64::from(r.slew_q16.max(0)))
                .min(i64::from(i32::MAX)),
            _ => 0,
        };
        if next == BridgeMode::Coast {
            off = (off + 1).min(i64::from(u16::MAX));
        }
        *hist = (next, duty, off);
        BridgeCommand {
            mode: next,
            duty_q16: duty as i32,
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig {
            cases: 2000,
            rng_seed: RngSeed::Fixed(0x0042_5247),
            ..ProptestConfig::default()
        })]

        /// Arbitrary raw coefficients and inputs: never panics, equals the plain model, and
        /// never switches between two driven modes without the dead time in Coast.
        #[test]
        fn matches_model_and_keeps_dead_time(
            slew in any::<i32>(), bs in any::<i32>(), rs in any::<i32>(), dead in 0u16..5,
            probe in 0u16..8, resume_c in any::<i32>(), resume_m in any::<i32>(),
            seq in proptest::collection::vec((
                prop_oneof![Just(0i32), Just(DUTY_ONE_Q16), Just(-DUTY_ONE_Q16), any::<i32>()],
                any::<i32>()), 1..150),
        ) {
            let raw = BridgeGuardRaw {
                slew_q16: slew, brake_speed_mrad_s: bs, reverse_speed_mrad_s: rs, dead_ticks: dead,
                probe_ticks: probe, resume_duty_q24: resume_c, resume_margin_mrad_s: resume_m,
            };
            let g = BridgeGuardConfig::from_raw(raw);
            let mut s = BridgeGuardState::new();
            let mut hist = (BridgeMode::Coast, 0i64, i64::from(u16::MAX));
            let mut prev_driven = None;
            let mut coast_run = u32::MAX;
            for (req, w) in seq {
                let c = g.update(&mut s, req, w);
                prop_assert_eq!(c, model(&raw, &mut hist, req, w));
                prop_assert!((0..=DUTY_ONE_Q16).contains(&c.duty_q16));
                if c.mode == BridgeMode::Coast {
                    coast_run = coast_run.saturating_add(1);
                } else {
                    if let Some(p) = prev_driven
                        && p != c.mode
                    {
                        prop_assert!(coast_run >= u32::from(dead), "{p:?} -> {:?} after {coast_run}", c.mode);
                    }
                    prev_driven = Some(c.mode);
                    coast_run = 0;
                }
            }
        }
    }
}
