//! The detection properties of a run: the controller's armature reports (its telemetry's
//! `seated` and `dropped_out`) against the plant's strokes ([`Stroke`]).
//!
//! - **Seat-detection latency**: for each on period in which the armature seated, the first
//!   `seated` report in that period minus the plant's final seating (negative when the
//!   firmware decides before the last bounce has died away); the largest over the run.
//!   Infinite when the armature seated and no report came in the period (a check that sees
//!   no report must not pass), or when nothing seated at all.
//! - **Drop-out-detection latency**: for each release of the armature (it left the closed
//!   stop after a switch-off), the first `dropped_out` report after that switch-off minus the
//!   release; the largest over the run; infinite when a release was not reported, or when
//!   nothing was released.
//! - **False detections**: `seated` reports (a rise of the flag) made while the armature of
//!   that on period had not reached the closed stop yet (no first impact before the report,
//!   or none at all), plus `dropped_out` reports made when the armature had not left the
//!   closed stop since the switch-off.
//!
//! The reports are the ticks at which the flags rise; the run keeps only those rises (one per
//! pull-in or release at most), so the memory grows with the actuations, not the ticks.

use crate::plant::Stroke;

/// The run event of the controller's seated report.
pub const SEATED_EVENT: &str = "firmware: armature seated";
/// The run event of the controller's drop-out report.
pub const DROPPED_OUT_EVENT: &str = "firmware: armature dropped out";

/// The rises of the controller's detection flags.
#[derive(Debug, Clone, Default)]
pub(super) struct DetectionWatch {
    seated: bool,
    dropped_out: bool,
    /// Times of the rises of `seated`, s.
    seated_at: Vec<f64>,
    /// Times of the rises of `dropped_out`, s.
    dropped_out_at: Vec<f64>,
}

/// The detection properties' values at the end of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct DetectionValues {
    pub seat_latency_s: f64,
    pub dropout_latency_s: f64,
    pub false_detections: u64,
}

impl DetectionWatch {
    /// The telemetry of the tick at `t_s`; returns the run events of the reports that rose
    /// in it (the detection marks of the report).
    pub fn note(&mut self, t_s: f64, seated: bool, dropped_out: bool) -> Vec<&'static str> {
        let mut rose = Vec::new();
        if seated && !self.seated {
            self.seated_at.push(t_s);
            rose.push(SEATED_EVENT);
        }
        if dropped_out && !self.dropped_out {
            self.dropped_out_at.push(t_s);
            rose.push(DROPPED_OUT_EVENT);
        }
        self.seated = seated;
        self.dropped_out = dropped_out;
        rose
    }

    /// The values over `strokes` for the demand `schedule` (time, on) up to `end_s`.
    pub fn values(
        &self,
        strokes: &[Stroke],
        schedule: &[(f64, bool)],
        end_s: f64,
    ) -> DetectionValues {
        let periods = on_periods(schedule, end_s);
        let mut seat_latency = f64::NEG_INFINITY;
        let mut dropout_latency = f64::NEG_INFINITY;
        let mut false_detections = 0u64;
        let stroke_of = |t: f64| strokes.iter().rfind(|s| s.on_t_s <= t);
        for &t in &self.seated_at {
            let impacted = stroke_of(t)
                .and_then(|s| s.first_impact_t_s)
                .is_some_and(|ti| ti <= t);
            if !impacted {
                false_detections += 1;
            }
        }
        for &t in &self.dropped_out_at {
            let released = stroke_of(t)
                .and_then(|s| s.release_t_s)
                .is_some_and(|tr| tr <= t);
            if !released {
                false_detections += 1;
            }
        }
        for &(t_on, t_off) in &periods {
            let seated = strokes
                .iter()
                .filter(|s| s.on_t_s >= t_on && s.on_t_s < t_off)
                .find_map(|s| s.seated_t_s.filter(|&t| t <= t_off));
            if let Some(t_seat) = seated {
                let report = self
                    .seated_at
                    .iter()
                    .find(|&&t| t >= t_on && t <= t_off)
                    .copied();
                seat_latency = seat_latency.max(report.map_or(f64::INFINITY, |t| t - t_seat));
            }
        }
        for s in strokes {
            let (Some(t_off), Some(t_rel)) = (s.off_t_s, s.release_t_s) else {
                continue;
            };
            let next_on = periods
                .iter()
                .map(|p| p.0)
                .find(|&t| t > t_off)
                .unwrap_or(end_s);
            let report = self
                .dropped_out_at
                .iter()
                .find(|&&t| t >= t_off && t <= next_on)
                .copied();
            dropout_latency = dropout_latency.max(report.map_or(f64::INFINITY, |t| t - t_rel));
        }
        // Nothing seated or released: nothing detected, which fails rather than passes.
        let none = |v: f64| {
            if v == f64::NEG_INFINITY {
                f64::INFINITY
            } else {
                v
            }
        };
        DetectionValues {
            seat_latency_s: none(seat_latency),
            dropout_latency_s: none(dropout_latency),
            false_detections,
        }
    }
}

/// (start, end) of each on period of the demand schedule.
pub(super) fn on_periods(schedule: &[(f64, bool)], end_s: f64) -> Vec<(f64, f64)> {
    let mut periods = Vec::new();
    let mut on_from: Option<f64> = None;
    for &(t, on) in schedule {
        match (on, on_from) {
            (true, None) => on_from = Some(t),
            (false, Some(t0)) => {
                periods.push((t0, t));
                on_from = None;
            }
            _ => {}
        }
    }
    if let Some(t0) = on_from {
        periods.push((t0, end_s));
    }
    periods
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stroke(on: f64, impact: f64, seated: f64, off: f64, release: f64) -> Stroke {
        Stroke {
            on_t_s: on,
            first_impact_t_s: Some(impact),
            seated_t_s: Some(seated),
            off_t_s: Some(off),
            release_t_s: Some(release),
            ..Stroke::default()
        }
    }

    #[test]
    fn latencies_run_from_the_plants_events_to_the_reports() {
        let s = [stroke(0.005, 0.012, 0.0125, 0.085, 0.090)];
        let mut w = DetectionWatch::default();
        for (t, seated, dropped) in [
            (0.0, false, false),
            (0.0128, true, false),
            (0.0851, false, false),
            (0.0915, false, true),
        ] {
            let _ = w.note(t, seated, dropped);
        }
        let v = w.values(&s, &[(0.005, true), (0.085, false)], 0.2);
        assert!((v.seat_latency_s - 0.0003).abs() < 1e-12, "{v:?}");
        assert!((v.dropout_latency_s - 0.0015).abs() < 1e-12, "{v:?}");
        assert_eq!(v.false_detections, 0);
    }

    #[test]
    fn reports_before_the_motion_are_false_and_missing_ones_infinite() {
        let s = [stroke(0.005, 0.012, 0.0125, 0.085, 0.090)];
        let mut w = DetectionWatch::default();
        assert_eq!(w.note(0.008, true, false), [SEATED_EVENT]); // before the impact
        assert_eq!(w.note(0.086, false, true), [DROPPED_OUT_EVENT]); // before the release
        let v = w.values(&s, &[(0.005, true), (0.085, false)], 0.2);
        assert_eq!(v.false_detections, 2);
        let quiet = DetectionWatch::default().values(&s, &[(0.005, true), (0.085, false)], 0.2);
        assert!(quiet.seat_latency_s.is_infinite() && quiet.dropout_latency_s.is_infinite());
        let nothing = DetectionWatch::default().values(&[], &[], 0.2);
        assert!(nothing.seat_latency_s.is_infinite() && nothing.dropout_latency_s.is_infinite());
    }
}
