//! Plan side of the duty limiter: conservative limit tables from the boost plan.

use super::config::{DUTY_TABLE_LEN, DutyLimiterConfig, DutyLimiterRaw};
use crate::boost::{BoostStage, LightLoad, OperatingPoint};
use crate::bounds::Range;
use crate::error::{Error, in_range, positive};

/// Interior points per table segment at which the constructor checks the chord.
const CHECKS_PER_SEGMENT: usize = 5;

/// Factor on the largest chord excess found at the checks (the checks include the segment
/// middle, where a locally quadratic excess peaks; the factor covers the rest).
const EXCESS_FACTOR: f64 = 1.25;

/// Absolute margin on every node, duty (covers the f32 rounding of the plan's limits).
const NODE_MARGIN: f64 = 1.0e-6;

/// The limit tables: saturation, gain peak, light-load overvoltage.
const LIMIT_TABLES: usize = 3;

/// What the plan-side constructor needs besides the stage.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DutyLimiterParams {
    /// Input voltage window; readings outside it give duty 0. Units: V.
    pub input_v: Range,
    /// Wanted output voltage. Units: V.
    pub output_v: f32,
    /// Heaviest load current (the saturation and gain-peak limits are lowest there). Units: A.
    pub max_load_current_a: f32,
    /// Light-load condition for the overvoltage limit; `None` for none.
    pub light_load: Option<LightLoad>,
    /// Input voltage per ADC count (divider and reference folded in). Units: V.
    pub input_v_per_count: f32,
    /// Output voltage per ADC count. Units: V.
    pub output_v_per_count: f32,
    /// Largest ADC reading; a reading there is taken as saturated (out of range).
    pub adc_max_counts: u16,
    /// Duty register value for duty 1 (the PWM timer period).
    pub duty_full_scale: u16,
    /// Time for the soft start to ramp from 0 to full scale; 0 for no slew limit. Units: s.
    pub soft_start_s: f32,
    /// Tick period of the limiter. Units: s.
    pub tick_s: f32,
    /// Output voltage at which switching is cut. Units: V.
    pub overvoltage_v: f32,
    /// Output voltage at or below which switching resumes after a cut. Units: V.
    pub resume_v: f32,
    /// Relative tolerance of the inductance, `0 ..= 0.99`: each table holds the lowest limit over
    /// the corners `L·(1 ± tol)`.
    pub inductance_tol: f32,
    /// Relative tolerance of the inductor and switch resistances together, `0 ..= 0.99`.
    pub resistance_tol: f32,
}

fn counts(param: &'static str, v: f32, v_per_count: f32, max: u16) -> Result<f32, Error> {
    let c = v / v_per_count;
    in_range(param, c, 0.0, max as f32)
}

impl DutyLimiterConfig {
    /// Builds the tables from the boost plan of `stage` (see [*Tables and interpolation without
    /// division*](DutyLimiterConfig#tables-and-interpolation-without-division)).
    ///
    /// # Errors
    ///
    /// Bad parameters, named; the plan's errors at any table node; a window wider than the
    /// tables can span (`input_v`); overvoltage thresholds not inside the valid output window
    /// or not ordered (`resume_v < overvoltage_v`).
    pub fn new(stage: &BoostStage, p: &DutyLimiterParams) -> Result<Self, Error> {
        let vpc_in = positive("input_v_per_count", p.input_v_per_count)?;
        let vpc_out = positive("output_v_per_count", p.output_v_per_count)?;
        let fs = p.duty_full_scale;
        if fs == 0 {
            return Err(Error::NotPositive {
                param: "duty_full_scale",
            });
        }
        let adc_max = p.adc_max_counts;
        let lo = libm::ceilf(counts("input_v", p.input_v.min(), vpc_in, adc_max)?);
        let hi = libm::floorf(counts("input_v", p.input_v.max(), vpc_in, adc_max)?);
        if lo > hi {
            return Err(Error::OutOfRange {
                param: "input_v",
                value: p.input_v.max(),
                min: lo * vpc_in,
                max: f32::INFINITY,
            });
        }
        let (lo, hi) = (lo as u16, hi as u16);
        let span = u32::from(hi - lo);
        let mut shift = 0u8;
        while ((DUTY_TABLE_LEN as u32 - 1) << shift) < span {
            shift += 1;
        }
        let tick = positive("tick_s", p.tick_s)?;
        let soft = in_range("soft_start_s", p.soft_start_s, 0.0, 1.0e4)?;
        let fs_q8 = f64::from(fs) * 256.0;
        let slew_q8 = if soft > 0.0 {
            libm::round(fs_q8 * f64::from(tick) / f64::from(soft)).clamp(1.0, fs_q8) as i32
        } else {
            fs_q8 as i32
        };
        let ov = libm::floorf(counts("overvoltage_v", p.overvoltage_v, vpc_out, adc_max)?);
        let resume = libm::floorf(counts("resume_v", p.resume_v, vpc_out, adc_max)?);
        if resume >= ov {
            return Err(Error::OutOfRange {
                param: "resume_v",
                value: p.resume_v,
                min: 0.0,
                max: (ov - 1.0) * vpc_out,
            });
        }
        if ov > f32::from(adc_max) - 1.0 {
            return Err(Error::OutOfRange {
                param: "overvoltage_v",
                value: p.overvoltage_v,
                min: 0.0,
                max: (f32::from(adc_max) - 1.0) * vpc_out,
            });
        }
        // A boost output never lies below half the pass-through voltage while the input is
        // present: a lower reading is a broken sense line, not a low output.
        let pass_v = p.input_v.min() - stage.params().diode_drop_v;
        let vout_lo = libm::floorf((0.5 * pass_v / vpc_out).max(0.0)) as u16;

        // Tolerance corners: every limit falls monotonically with the inductance (more ripple:
        // saturation; smaller K: light load) or with the resistances (gain peak falls with
        // more loss, saturation and light load with less), so its lowest value over the box
        // sits at one of the four corners (checked against the general worst-case search in
        // the unit tests).
        let tl = in_range("inductance_tol", p.inductance_tol, 0.0, 0.99)?;
        let tr = in_range("resistance_tol", p.resistance_tol, 0.0, 0.99)?;
        let nominal = *stage.params();
        let mut corners = [nominal; 4];
        for (k, c) in corners.iter_mut().enumerate() {
            let lf = if k & 1 == 0 { 1.0 - tl } else { 1.0 + tl };
            let rf = if k & 2 == 0 { 1.0 - tr } else { 1.0 + tr };
            c.inductance_h = nominal.inductance_h * lf;
            c.inductor_resistance_ohm = nominal.inductor_resistance_ohm * rf;
            c.switch_resistance_ohm = nominal.switch_resistance_ohm * rf;
        }
        let n_corners = if tl == 0.0 && tr == 0.0 { 1 } else { 4 };
        let mut stages = [*stage; 4];
        for (st, c) in stages.iter_mut().zip(corners).take(n_corners) {
            *st = c.validate()?;
        }
        let limits_at = |counts_in: f64| -> Result<[f64; LIMIT_TABLES], Error> {
            let op = OperatingPoint {
                light_load: p.light_load,
                ..OperatingPoint::with_load_current(
                    (counts_in * f64::from(vpc_in)) as f32,
                    p.output_v,
                    p.max_load_current_a,
                )
            };
            let mut out = [1.0f64; LIMIT_TABLES];
            for st in stages.iter().take(n_corners) {
                let l = st.duty_limits(&op)?;
                for (o, v) in out.iter_mut().zip([
                    l.saturation.unwrap_or(1.0),
                    l.gain_peak.map_or(1.0, |g| g.duty),
                    l.light_load.unwrap_or(1.0),
                ]) {
                    *o = o.min(f64::from(v));
                }
            }
            Ok(out)
        };
        let step = f64::from(1u32 << shift);
        let mut nodes = [[0.0f64; DUTY_TABLE_LEN]; LIMIT_TABLES];
        for i in 0..DUTY_TABLE_LEN {
            let l = limits_at(f64::from(lo) + i as f64 * step)?;
            for (t, v) in nodes.iter_mut().zip(l) {
                t[i] = v;
            }
        }
        // Lower the nodes until every chord lies at or below the limit at the interior checks.
        let mut lowered = nodes;
        if shift > 0 {
            for seg in 0..DUTY_TABLE_LEN - 1 {
                let mut excess = [0.0f64; LIMIT_TABLES];
                for j in 1..=CHECKS_PER_SEGMENT {
                    let frac = j as f64 / (CHECKS_PER_SEGMENT + 1) as f64;
                    let c = f64::from(lo) + (seg as f64 + frac) * step;
                    let l = limits_at(c)?;
                    for k in 0..LIMIT_TABLES {
                        let chord = nodes[k][seg] + (nodes[k][seg + 1] - nodes[k][seg]) * frac;
                        excess[k] = excess[k].max(chord - l[k]);
                    }
                }
                for k in 0..LIMIT_TABLES {
                    let e = EXCESS_FACTOR * excess[k];
                    lowered[k][seg] = lowered[k][seg].min(nodes[k][seg] - e);
                    lowered[k][seg + 1] = lowered[k][seg + 1].min(nodes[k][seg + 1] - e);
                }
            }
        }
        let to_q8 = |d: f64| libm::floor((d - NODE_MARGIN).clamp(0.0, 1.0) * fs_q8) as i32;
        let table = |k: usize| {
            let mut t = [0i32; DUTY_TABLE_LEN];
            for (q, d) in t.iter_mut().zip(lowered[k]) {
                *q = to_q8(d);
            }
            t
        };
        let params = stage.params();
        let f_sw = f64::from(params.frequency_hz);
        let min_off = 1.0 - f64::from(params.min_off_time_s) * f_sw;
        let min_on = libm::ceil(f64::from(params.min_on_time_s) * f_sw * f64::from(fs));
        Ok(Self::from_raw(DutyLimiterRaw {
            vin_lo_counts: lo,
            vin_hi_counts: hi,
            shift,
            saturation_q8: table(0),
            gain_peak_q8: table(1),
            light_load_q8: table(2),
            min_off_q8: to_q8(min_off),
            min_on_counts: min_on.clamp(0.0, f64::from(fs)) as u16,
            full_scale: fs,
            slew_q8,
            vout_lo_counts: vout_lo,
            vout_hi_counts: adc_max - 1,
            ov_trip_counts: ov as u16,
            ov_resume_counts: resume as u16,
        }))
    }
}
