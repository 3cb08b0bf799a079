//! The bridge motor driver's overload and open-winding thresholds (`[controller.motor.overload]`,
//! `[controller.motor.open_winding]`) against the running current the firmware reads, bounded
//! over the description's ranges and spreads.
//!
//! In steady state the torques balance, `k·i = T + b·ω`, and the mean winding voltage is
//! `d·V = R·i + k·ω` (PWM averaged over a period; the same linear model as `lenz::motor`), so
//! the running current at duty `d` is `i = (T + b·d·V/k)/(k + b·R/k)`
//! (`lenz::motor::Motor::steady_state` at the supply `d·V`). The firmware reads it with the
//! sense chains' error `δi = (|g_e| + Δg_s)·i + o_i` (gain error `[system.sense] gain_error`,
//! gain spread `[tolerances] sense_gain`, the ADC offset through the current scale), the
//! PWM ripple `Δi = V·d·(1 − d)/(L·f)` peak to peak (slow decay: the winding sees `V` and `0`;
//! the sample may fall anywhere in a period) and [`NOISE_SIGMAS`] standard deviations of the
//! ADC noise of one reading.
//!
//! - **Overload**: the highest reading at the rated torque (`[system.motor] rated_torque`, else
//!   `load_torque`) at full drive, over the supply and temperature ranges and the `inductance`,
//!   `resistance` and `torque_constant` spreads, must stay below the overload current (else a
//!   motor within its rating trips).
//! - **Open winding, running**: the lowest reading while driven at a duty of at least
//!   `min_duty`, in either direction, over the same ranges, must stay above the open-winding
//!   current (else a sound winding trips). The load torque keeps its sign (it opposes the
//!   forward rotation), so in reverse it aids the drive: there the running current is
//!   `i = (T − b·d·V/k)/(k + b·R/k)` (the motor holds the load back), smaller than forward. A
//!   motor without load torque runs on its friction alone, a few milliamperes: the check then
//!   fails, as it should.
//! - **Open winding, crossing**: in the aided direction a start or a reversal drives the
//!   current negative first, and it then crosses zero to its positive running value while the
//!   rotor gathers speed. In the slow (mechanical) mode of the linear second-order model,
//!   `i(t) = i_r − A·e^{−t/τ}`, the time within `±a` is `τ·ln((i_r + a)/(i_r − a))`
//!   whatever `A`, with `τ` the slow eigenvalue's time constant of
//!   `s² + (R/L + b/J)·s + (R·b + k²)/(L·J) = 0` (textbook state-space form of the DC motor;
//!   Franklin, Powell and Emami-Naeini, *Feedback Control of Dynamic Systems*, ch. 2, cited
//!   from memory) and `a` the open-winding current widened by the reading's error. It must be
//!   shorter than the jam time, the open-winding check's persistence. The bound needs the
//!   electrical mode gone by the crossing: an underdamped motor, or a fast mode less than ten
//!   times faster than the slow one, fails the verdict (not bounded).
//!
//! The open-winding figures are evaluated at the corners of supply (times `min_duty` … 1),
//! inductance and resistance and at nine points each of the temperature range and the torque
//! constant's spread.

use lenz::motor::MotorCorner;

use super::SetupError;
use super::motor_stall::NOISE_SIGMAS;
use super::plan::Verdict;
use crate::scenario::run::tolerance_half_width;
use crate::scenario::schema::RelTolerance;
use crate::scenario::{File, MotorController, MotorStage};

/// The reading's margins at a current: sense error, ripple and noise, A.
struct ReadingError {
    /// Gain error plus gain spread (relative).
    gain: f64,
    /// Offset through the current scale, A.
    offset_a: f64,
    /// [`NOISE_SIGMAS`] standard deviations of one reading, A.
    noise_a: f64,
}

impl ReadingError {
    fn of(f: &File) -> Self {
        let rb = super::sense::reading_bounds(f);
        let nominal = super::sense::nominal(f);
        Self {
            gain: rb.gain_error + rb.current_gain_spread,
            offset_a: rb.current_offset_a,
            noise_a: NOISE_SIGMAS * f.system.sense.noise.get() * nominal.current.units_per_count(),
        }
    }

    fn at(&self, i_a: f64, ripple_a: f64) -> f64 {
        self.gain * i_a + self.offset_a + ripple_a + self.noise_a
    }
}

/// The open-winding figures of the module docs.
struct OpenWinding {
    /// Lowest running current (magnitude), A, its direction and corner.
    running_a: f64,
    direction: &'static str,
    running_at: String,
    /// PWM ripple peak to peak at the worst judged duty, A.
    ripple_a: f64,
    /// The lowest running current less every reading error, A.
    reading_a: f64,
    /// Longest crossing of the widened band in the aided direction, s (infinite: unbounded).
    dwell_s: f64,
    dwell_note: String,
}

/// Points of a range: its ends, or `n` evenly spaced.
fn points(lo: f64, hi: f64, n: usize) -> impl Iterator<Item = f64> {
    (0..n).map(move |j| lo + (hi - lo) * j as f64 / (n - 1) as f64)
}

/// One evaluation point of the open-winding figures: mean winding voltage, temperature,
/// inductance, winding resistance at 20 °C and in the loop at the temperature (plus bridge
/// and source), torque constant.
struct Point {
    u: f64,
    temp: f64,
    l: f64,
    r20: f64,
    r: f64,
    k: f64,
}

impl Point {
    fn text(&self) -> String {
        format!(
            "{:.2} V mean, {:.0} °C, L {:.3} mH, R at 20 °C {:.3} Ω, k {:.4} N·m/A",
            self.u,
            self.temp,
            self.l * 1e3,
            self.r20,
            self.k
        )
    }
}

/// The evaluation points of the module docs.
fn open_winding_points(f: &File, m: &MotorStage, min_duty: f64) -> Vec<Point> {
    let s = &f.system;
    let t = &f.tolerances;
    let half = |x: Option<RelTolerance>| x.map_or(0.0, tolerance_half_width);
    let (dl, dr, dk) = (
        half(t.inductance),
        half(t.resistance),
        half(t.torque_constant),
    );
    let alpha = super::coil::copper_alpha20_per_k();
    let bridge = 2.0 * s.switch.on_resistance.get() + s.supply.source_resistance.get();
    let (l0, r0, k0) = (
        m.inductance.get(),
        m.resistance.get(),
        m.torque_constant.get(),
    );
    let mut out = Vec::new();
    for u in [min_duty * s.supply.min.get(), s.supply.max.get()] {
        for temp in points(s.temperature.min.get(), s.temperature.max.get(), 9) {
            for (l, r20) in [
                (l0 * (1.0 - dl), r0 * (1.0 - dr)),
                (l0 * (1.0 - dl), r0 * (1.0 + dr)),
                (l0 * (1.0 + dl), r0 * (1.0 - dr)),
                (l0 * (1.0 + dl), r0 * (1.0 + dr)),
            ] {
                let r = r20 * (1.0 + alpha * (temp - 20.0)) + bridge;
                out.extend(points(k0 * (1.0 - dk), k0 * (1.0 + dk), 9).map(|k| Point {
                    u,
                    temp,
                    l,
                    r20,
                    r,
                    k,
                }));
            }
        }
    }
    out
}

/// The time the aided direction's current takes to cross `±a` at `p` (module docs), s, and
/// why it is not bounded where it is infinite.
fn crossing(p: &Point, b: f64, j: f64, i_r: f64, a: f64) -> (f64, &'static str) {
    let sum = p.r / p.l + b / j;
    let prod = (p.k * p.k + p.r * b) / (p.l * j);
    let disc = sum * sum - 4.0 * prod;
    if disc <= 0.0 {
        return (f64::INFINITY, "underdamped: the crossing is not bounded");
    }
    let slow = (sum - disc.sqrt()) / 2.0;
    let fast = (sum + disc.sqrt()) / 2.0;
    if fast < 10.0 * slow {
        (
            f64::INFINITY,
            "the electrical mode is not ten times faster than the mechanical one: not bounded",
        )
    } else if i_r <= a {
        (
            f64::INFINITY,
            "the aided running current lies inside the band",
        )
    } else {
        (((i_r + a) / (i_r - a)).ln() / slow, "")
    }
}

fn open_winding(
    f: &File,
    m: &MotorStage,
    min_duty: f64,
    open_a: f64,
    err: &ReadingError,
) -> OpenWinding {
    let s = &f.system;
    let dl = f.tolerances.inductance.map_or(0.0, tolerance_half_width);
    let (b, j, load) = (m.friction.get(), m.inertia.get(), m.load_torque.get());
    // d·(1 − d) is largest at d = 1/2 over the judged duties d ≥ min_duty.
    let dd = if min_duty <= 0.5 {
        0.25
    } else {
        min_duty * (1.0 - min_duty)
    };
    let ripple_a =
        s.supply.max.get() * dd / (m.inductance.get() * (1.0 - dl) * s.pwm_frequency.get());
    let a = open_a + err.at(open_a, ripple_a);
    let mut ow = OpenWinding {
        running_a: f64::INFINITY,
        direction: "forward",
        running_at: String::new(),
        ripple_a,
        reading_a: 0.0,
        dwell_s: f64::NEG_INFINITY,
        dwell_note: String::new(),
    };
    for p in open_winding_points(f, m, min_duty) {
        let den = p.k * p.k + p.r * b;
        let forward = (b * p.u + p.k * load) / den;
        // The aided direction: the load torque drives, the motor holds it back.
        let aided = (p.k * load - b * p.u) / den;
        for (dir, i) in [("forward", forward), ("reverse (aided)", aided)] {
            if i.abs() < ow.running_a {
                ow.running_a = i.abs();
                ow.direction = dir;
                ow.running_at = p.text();
            }
        }
        let (dwell, why) = crossing(&p, b, j, aided, a);
        if dwell > ow.dwell_s {
            ow.dwell_s = dwell;
            ow.dwell_note = format!(
                "band ±{:.0} mA (threshold with sense error, ripple, {NOISE_SIGMAS}σ noise), \
                 aided running current {aided:.3} A at {}{}{why}",
                a * 1e3,
                p.text(),
                if why.is_empty() { "" } else { ": " },
            );
        }
    }
    ow.reading_a = ow.running_a - err.at(ow.running_a, ripple_a);
    ow
}

fn corner(c: &MotorCorner) -> String {
    format!(
        "{:.2} V mean, {:.0} °C, R at 20 °C {:.3} Ω, k {:.4} N·m/A",
        c.supply_v, c.temp_c, c.resistance_ohm, c.torque_constant_nm_per_a
    )
}

/// The verdicts of the module docs for the checks `c` configures (none without them).
///
/// # Errors
///
/// A plan routine rejects a value, or the motor stalls at a corner (named).
pub fn verdicts(f: &File, m: &MotorStage, c: &MotorController) -> Result<Vec<Verdict>, SetupError> {
    let err = ReadingError::of(f);
    let key_err = |k: &'static str| {
        move |e: lenz::Error| SetupError(format!("key `controller.motor.{k}`: {e}"))
    };
    let mut out = Vec::new();
    if let Some(o) = c.overload {
        let rated = m.rated_torque.map_or(m.load_torque.get(), |r| r.get());
        let b = super::motor::plan_spread(f, m, rated)?
            .steady_current_a()
            .map_err(key_err("overload.current"))?;
        let reading = f64::from(b.max) + err.at(f64::from(b.max), 0.0);
        out.push(Verdict {
            check: "highest running current read at the rated torque < overload current \
                    (else a motor within its rating trips)"
                .into(),
            value: Some(reading as f32),
            limit: o.current.get() as f32,
            unit: "A",
            pass: reading < o.current.get(),
            note: Some(format!(
                "{:.3} A at {} with sense error, {NOISE_SIGMAS}σ noise",
                b.max,
                corner(&b.max_at)
            )),
        });
    }
    if let Some(o) = c.open_winding {
        let ow = open_winding(f, m, o.min_duty.get(), o.current.get(), &err);
        out.push(Verdict {
            check: "lowest running current read at the smallest judged duty, either direction \
                    > open-winding current (else a sound winding trips)"
                .into(),
            value: Some(ow.reading_a as f32),
            limit: o.current.get() as f32,
            unit: "A",
            pass: ow.reading_a > o.current.get(),
            note: Some(format!(
                "{:.3} A {} at {} less sense error, {:.0} mA ripple, {NOISE_SIGMAS}σ noise",
                ow.running_a,
                ow.direction,
                ow.running_at,
                ow.ripple_a * 1e3
            )),
        });
        out.push(Verdict {
            check: "time a sound winding's current takes to cross the open-winding band in the \
                    aided direction < jam time (else a start or reversal trips)"
                .into(),
            value: Some(ow.dwell_s as f32),
            limit: c.jam_time.get() as f32,
            unit: "s",
            pass: ow.dwell_s < c.jam_time.get(),
            note: Some(ow.dwell_note),
        });
    }
    Ok(out)
}
