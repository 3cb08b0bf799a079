//! The numerics of the boost stage, in f64 (see the [parent module](super) for the derivations).
//!
//! Everything here works on already validated values; the public routines in the parent module
//! validate, convert to f64 once, call these, and check that the results are finite before
//! converting back to f32. Root finding is bracketed bisection throughout: it cannot diverge,
//! and each bracket is established before the search (a function that does not change sign over
//! its bracket gives `None`, never a made-up root).

/// Largest duty the searches consider: `1 − 10⁻⁹` (at duty 1 the loss-free gain is infinite).
pub(crate) const DUTY_TOP: f64 = 1.0 - 1.0e-9;

/// Number of grid steps used to find the first crossing of a limit before bisection.
const SCAN_STEPS: usize = 256;

/// The stage in f64: inductance, resistances, diode drop and switching period.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Stage64 {
    pub l: f64,
    pub rl: f64,
    pub ron: f64,
    pub vd: f64,
    pub t: f64,
}

/// The CCM operating point at a duty, from the averaged loss model.
#[derive(Debug, Clone, Copy)]
pub(crate) struct CcmPoint {
    pub v: f64,
    pub il: f64,
    pub ripple: f64,
    pub ipk: f64,
    pub valley: f64,
    /// Inductor voltage during the on interval, `V_g − I_L (R_L + R_on)`.
    pub v_on: f64,
}

/// One DCM switching cycle from zero current, with the output held at `v`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct DcmCycle {
    pub ipk: f64,
    /// Diode conduction time, s.
    pub t2: f64,
    /// Charge through the inductor during the on interval, C.
    pub q_on: f64,
    /// Charge delivered to the output during the diode interval, C.
    pub q_off: f64,
    /// `t_on + t2 ≤ T`: the current really returns to zero within the period.
    pub valid: bool,
}

/// Mode and waveform figures at one duty (forward model).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Point {
    pub ccm: bool,
    pub v: f64,
    pub il_avg: f64,
    pub ripple: f64,
    pub ipk: f64,
    pub valley: f64,
    /// Fraction of the period the diode conducts.
    pub d2: f64,
}

/// `y − ln(1 + y)` without cancellation for small `y ≥ 0`.
fn y_minus_ln1p(y: f64) -> f64 {
    if y < 1.0e-4 {
        y * y * (0.5 - y * (1.0 / 3.0 - y * 0.25))
    } else {
        y - libm::log1p(y)
    }
}

/// `z − (1 − e^(−z))` without cancellation for small `z ≥ 0`.
fn z_minus_one_minus_exp(z: f64) -> f64 {
    if z < 1.0e-4 {
        z * z * (0.5 - z * (1.0 / 6.0 - z / 24.0))
    } else {
        z + libm::expm1(-z)
    }
}

/// Bisection on a predicate that is `true` at `lo` and `false` at `hi`; returns the last point
/// known `true`, to the resolution of f64.
pub(crate) fn bisect(mut lo: f64, mut hi: f64, below: impl Fn(f64) -> bool) -> f64 {
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if below(mid) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

/// Root of a decreasing `f` with `f(lo) > 0 ≥ f(hi)` by the Illinois variant of regula falsi,
/// with a bisection step whenever a step fails to halve the bracket; returns the last point
/// known positive, to the resolution of f64 (as [`bisect`] on `f > 0` does).
pub(crate) fn falsi(mut lo: f64, mut hi: f64, f: impl Fn(f64) -> f64) -> f64 {
    let (mut f_lo, mut f_hi) = (f(lo), f(hi));
    let mut side = 0i8;
    for _ in 0..400 {
        let width = hi - lo;
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        let c = if f_lo.is_finite() && f_hi.is_finite() && f_lo != f_hi {
            let c = lo + f_lo * width / (f_lo - f_hi);
            // Keep the trial strictly inside, and away from an end it would crawl along.
            if c > lo && c < hi { c } else { mid }
        } else {
            mid
        };
        let fc = f(c);
        if fc > 0.0 {
            lo = c;
            f_lo = fc;
            if side == -1 {
                f_hi *= 0.5;
            }
            side = -1;
        } else {
            hi = c;
            f_hi = fc;
            if side == 1 {
                f_lo *= 0.5;
            }
            side = 1;
        }
        if hi - lo > 0.5 * width {
            // A slow step: bisect once, so the bracket at least halves every other step.
            let m = 0.5 * (lo + hi);
            if m <= lo || m >= hi {
                break;
            }
            let fm = f(m);
            if fm > 0.0 {
                lo = m;
                f_lo = fm;
            } else {
                hi = m;
                f_hi = fm;
            }
            side = 0;
        }
    }
    lo
}

/// The largest `x` in `0 ..= top` with `ok(x)`, for an `ok` that holds up to one crossing and
/// fails beyond it (a monotonic figure against its limit). `None` when `ok(top)` holds;
/// `Some(0)` when `ok(0)` fails.
pub(crate) fn monotone_crossing(top: f64, ok: impl Fn(f64) -> bool) -> Option<f64> {
    if !ok(0.0) {
        return Some(0.0);
    }
    if ok(top) {
        return None;
    }
    Some(bisect(0.0, top, ok))
}

/// The largest `x` in `0 ..= top` such that `ok(y)` holds for every grid point `y ≤ x` and the
/// bisection refinement of the first failing grid cell: the first crossing from the bottom.
/// `None` when `ok` holds over the whole interval; `Some(0)` when it fails at zero.
pub(crate) fn first_crossing(top: f64, ok: impl Fn(f64) -> bool) -> Option<f64> {
    if !ok(0.0) {
        return Some(0.0);
    }
    let mut prev = 0.0;
    for k in 1..=SCAN_STEPS {
        let x = top * k as f64 / SCAN_STEPS as f64;
        if !ok(x) {
            return Some(bisect(prev, x, &ok));
        }
        prev = x;
    }
    None
}

impl Stage64 {
    fn r1(&self) -> f64 {
        self.rl + self.ron
    }

    /// CCM conversion ratio with the diode drop and the resistive drops (CHECKS F3.2):
    /// `M = (1 − D'·V_D/V_g) / (D' + (R_L + D·R_on)/(D'·R))`.
    pub fn ccm_gain(&self, d: f64, vg: f64, r: f64) -> f64 {
        let dp = 1.0 - d;
        let num = 1.0 - dp * self.vd / vg;
        let loss = (self.rl + d * self.ron) / r;
        if dp <= 0.0 {
            return if loss > 0.0 { 0.0 } else { f64::INFINITY };
        }
        num / (dp + loss / dp)
    }

    /// Duty of the CCM gain peak and the peak gain, or `None` without resistive losses (the gain
    /// then rises without bound). Closed form: with `x = D'`, `a = V_D/V_g`, `c = (R_L+R_on)/R`,
    /// `r = R_on/R`, `dM/dx = 0` reduces to `(1 − a r) x² + 2 a c x − c = 0`.
    pub fn gain_peak(&self, vg: f64, r: f64) -> Option<(f64, f64)> {
        let c = self.r1() / r;
        if c <= 0.0 {
            return None;
        }
        let a = self.vd / vg;
        let rr = self.ron / r;
        let lead = 1.0 - a * rr;
        let x = if lead > 1.0e-12 {
            // Stable root of the quadratic (no cancellation between -ac and the square root).
            c / (a * c + libm::sqrt(a * a * c * c + lead * c))
        } else {
            // Absurdly heavy load against V_D·R_on: the gain falls from zero duty on.
            1.0
        };
        let d = (1.0 - x).clamp(0.0, DUTY_TOP);
        Some((d, self.ccm_gain(d, vg, r)))
    }

    /// The CCM point at duty `d` (CHECKS F3.2 and F3.5).
    pub fn ccm_point(&self, d: f64, vg: f64, r: f64) -> CcmPoint {
        let v = self.ccm_gain(d, vg, r) * vg;
        let dp = (1.0 - d).max(1.0e-300);
        let il = v / (r * dp);
        let v_on = vg - il * self.r1();
        let ripple = v_on * d * self.t / self.l;
        CcmPoint {
            v,
            il,
            ripple,
            ipk: il + 0.5 * ripple,
            valley: il - 0.5 * ripple,
            v_on,
        }
    }

    /// Inductor current at the end of an on interval of duty `d` that starts from zero, A.
    fn dcm_peak(&self, d: f64, vg: f64) -> f64 {
        let t_on = d * self.t;
        let r1 = self.r1();
        if r1 > 0.0 {
            let z = t_on * r1 / self.l;
            vg / r1 * -libm::expm1(-z)
        } else {
            vg * t_on / self.l
        }
    }

    /// One DCM cycle at duty `d` with the output at `v` (exact exponential forms).
    pub fn dcm_cycle(&self, d: f64, vg: f64, v: f64) -> DcmCycle {
        let t_on = d * self.t;
        let r1 = self.r1();
        let ipk = self.dcm_peak(d, vg);
        let q_on = if r1 > 0.0 {
            let z = t_on * r1 / self.l;
            vg * self.l / (r1 * r1) * z_minus_one_minus_exp(z)
        } else {
            0.5 * vg * t_on * t_on / self.l
        };
        let vx = v + self.vd - vg;
        if vx <= 0.0 {
            return DcmCycle {
                ipk,
                t2: f64::INFINITY,
                q_on,
                q_off: if self.rl > 0.0 {
                    self.l * ipk / self.rl
                } else {
                    f64::INFINITY
                },
                valid: false,
            };
        }
        let (t2, q_off) = if self.rl > 0.0 {
            let y = ipk * self.rl / vx;
            (
                self.l / self.rl * libm::log1p(y),
                self.l * vx / (self.rl * self.rl) * y_minus_ln1p(y),
            )
        } else {
            let t2 = self.l * ipk / vx;
            (t2, 0.5 * ipk * t2)
        };
        DcmCycle {
            ipk,
            t2,
            q_on,
            q_off,
            valid: t_on + t2 <= self.t,
        }
    }

    /// Charge delivered to the output during the diode interval of a DCM cycle with peak
    /// current `ipk` and output `v` (the `q_off` of [`Stage64::dcm_cycle`], with one
    /// logarithm), or `None` when the current cannot fall (`v + V_D ≤ V_g`).
    fn dcm_q_off(&self, ipk: f64, vg: f64, v: f64) -> Option<f64> {
        let vx = v + self.vd - vg;
        if vx <= 0.0 {
            return None;
        }
        Some(if self.rl > 0.0 {
            let y = ipk * self.rl / vx;
            self.l * vx / (self.rl * self.rl) * y_minus_ln1p(y)
        } else {
            0.5 * ipk * self.l * ipk / vx
        })
    }

    /// DCM output voltage at duty `d` into `r`: the `v` where the charge per cycle equals
    /// `v/R · T`. `None` when there is no such `v` with a valid DCM cycle.
    ///
    /// The peak current depends on the duty only, so it is computed once; the root in `v` is
    /// found by bracketed regula falsi (Illinois), which keeps the bracket and reaches the
    /// resolution of f64 in a few steps where bisection needs about fifty.
    pub fn dcm_output(&self, d: f64, vg: f64, r: f64) -> Option<f64> {
        if d <= 0.0 {
            return None;
        }
        let ipk = self.dcm_peak(d, vg);
        let excess = |v: f64| match self.dcm_q_off(ipk, vg, v) {
            Some(q) => q / self.t - v / r,
            // No diode interval: as a cycle with t2 = ∞ (only a limit, never a root).
            None => self.dcm_cycle(d, vg, v).q_off / self.t - v / r,
        };
        let v_lo = (vg - self.vd).max(0.0);
        let lo = v_lo + 1.0e-12 * vg.max(1.0);
        if excess(lo) <= 0.0 {
            return None;
        }
        let mut span = vg.max(1.0);
        let mut hi = v_lo + span;
        let mut n = 0;
        while excess(hi) > 0.0 {
            span *= 2.0;
            hi = v_lo + span;
            n += 1;
            if n > 200 || !hi.is_finite() {
                return None;
            }
        }
        let v = falsi(lo, hi, excess);
        self.dcm_cycle(d, vg, v).valid.then_some(v)
    }

    /// DCM duty that delivers `io` at output `v` (`None` if no valid DCM cycle does).
    pub fn dcm_duty(&self, v: f64, vg: f64, io: f64) -> Option<f64> {
        let short = |d: f64| self.dcm_cycle(d, vg, v).q_off / self.t < io;
        if v + self.vd - vg <= 0.0 || !short(1.0e-300) || short(DUTY_TOP) {
            return None;
        }
        let d = bisect(0.0, DUTY_TOP, short);
        self.dcm_cycle(d, vg, v).valid.then_some(d)
    }

    /// Mode and figures at duty `d` into a resistive load `r` (forward model).
    pub fn at_duty(&self, d: f64, vg: f64, r: f64) -> Point {
        let ccm = self.ccm_point(d, vg, r);
        if ccm.valley <= 0.0
            && let Some(v) = self.dcm_output(d, vg, r)
        {
            return self.dcm_point(d, vg, v);
        }
        Point {
            ccm: true,
            v: ccm.v,
            il_avg: ccm.il,
            ripple: ccm.ripple,
            ipk: ccm.ipk,
            valley: ccm.valley,
            d2: 1.0 - d,
        }
    }

    /// Figures of a DCM cycle at duty `d` and output `v`.
    pub fn dcm_point(&self, d: f64, vg: f64, v: f64) -> Point {
        let c = self.dcm_cycle(d, vg, v);
        Point {
            ccm: false,
            v,
            il_avg: (c.q_on + c.q_off) / self.t,
            ripple: c.ipk,
            ipk: c.ipk,
            valley: 0.0,
            d2: c.t2 / self.t,
        }
    }

    /// Peak inductor current at duty `d` into `r`, the mode taken from the CCM valley (without
    /// solving the DCM output: in DCM the peak depends on the on interval only).
    pub fn peak_at(&self, d: f64, vg: f64, r: f64) -> f64 {
        let ccm = self.ccm_point(d, vg, r);
        if ccm.valley <= 0.0 {
            self.dcm_peak(d, vg)
        } else {
            ccm.ipk
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;

    const HEATER: Stage64 = Stage64 {
        l: 10e-6,
        rl: 0.040,
        ron: 0.025,
        vd: 0.35,
        t: 2e-6,
    };

    #[test]
    fn falsi_finds_what_bisection_finds() {
        // Computed cross-check: the same roots by plain bisection, to a few ulp.
        let check = |lo: f64, hi: f64, f: &dyn Fn(f64) -> f64| {
            let a = falsi(lo, hi, f);
            let b = bisect(lo, hi, |x| f(x) > 0.0);
            assert!(f(a) > 0.0, "{a}");
            assert!(
                (a - b).abs() <= 8.0 * f64::EPSILON * b.abs().max(1e-300),
                "{a} {b}"
            );
        };
        check(0.0, 3.0, &|x| 2.0 - x);
        check(0.0, 10.0, &|x| (-x).exp() - 0.01);
        check(1.0, 1e6, &|x| 1.0 / x - 1e-5);
        check(-1.0, 1.0, &|x| 0.3 - x * x * x);
        check(0.0, 1.0, &|x| if x < 0.25 { 1.0 } else { -1.0 });
    }

    #[test]
    fn dcm_output_matches_the_bisection_of_the_full_cycle() {
        // The original formulation: bisection on the charge balance of the full DCM cycle.
        for (d, r) in [(0.05, 600.0), (0.2, 240.0), (0.4, 2000.0), (0.01, 50.0)] {
            let Some(v) = HEATER.dcm_output(d, 5.0, r) else {
                continue;
            };
            let excess = |v: f64| HEATER.dcm_cycle(d, 5.0, v).q_off / HEATER.t - v / r;
            let lo = 5.0 - 0.35 + 1e-12 * 5.0;
            let mut hi = lo + 5.0;
            while excess(hi) > 0.0 {
                hi += 5.0;
            }
            let want = bisect(lo, hi, |v| excess(v) > 0.0);
            assert!(isclose(v, want, 1e-12, 0.0), "d {d}, r {r}: {v} vs {want}");
        }
    }

    #[test]
    fn gain_peak_is_the_numeric_maximum() {
        // The closed form must agree with a dense scan of the gain (computed cross-check).
        let (d_pk, m_max) = HEATER.gain_peak(5.0, 24.0).unwrap();
        let mut best = (0.0, 0.0);
        for k in 0..200_000 {
            let d = 0.9 + 0.1 * k as f64 / 200_000.0;
            let m = HEATER.ccm_gain(d, 5.0, 24.0);
            if m > best.1 {
                best = (d, m);
            }
        }
        assert!((d_pk - best.0).abs() < 2e-6, "{d_pk} vs {}", best.0);
        assert!(isclose(m_max, best.1, 1e-10, 0.0));
    }

    #[test]
    fn dcm_solvers_invert_each_other() {
        let d = HEATER.dcm_duty(12.0, 5.0, 0.02).unwrap();
        let v = HEATER.dcm_output(d, 5.0, 600.0).unwrap();
        assert!(isclose(v, 12.0, 1e-12, 0.0), "{v}");
    }

    #[test]
    fn first_crossing_brackets() {
        assert_eq!(first_crossing(1.0, |_| false), Some(0.0));
        assert_eq!(first_crossing(1.0, |_| true), None);
        let x = first_crossing(1.0, |x| x <= 0.3).unwrap();
        assert!((x - 0.3).abs() < 1e-15);
    }
}
