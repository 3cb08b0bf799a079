//! The armature properties of a run, from the plant's strokes ([`Stroke`]) against the
//! application's demand schedule:
//!
//! - **Seat time**: from each on command (the demand's change) to the armature's final seating
//!   (at rest at the closed stop, after its bounces); the longest over the run. An on period
//!   in which it did not seat (stuck, too weak, the run ended) counts as infinite.
//! - **Impact velocity**: the speed of the first impact at the closed stop of each stroke;
//!   the highest over the run (infinite when nothing ever reached the closed stop: a check that
//!   sees no impact must not pass).
//! - **Armature release time**: from each off command after a seating to the armature's
//!   mechanical opening (back at the open stop); the longest (infinite when it did not open
//!   before the next on command or the end). Beside the current-based `release-time`.
//! - **Actuation energy**: the supply energy from the switch-on that starts a stroke to its
//!   seating; the highest over the run (infinite when nothing seated).
//!
//! Event times are the plant's, located exactly by its integrator.

use crate::plant::Stroke;

/// The armature properties' values at the end of a run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct ArmatureValues {
    pub seat_s: f64,
    pub impact_m_s: f64,
    pub release_s: f64,
    pub energy_j: f64,
}

/// The values over `strokes` for the demand `schedule` (time, on) up to `end_s`.
pub(super) fn values(strokes: &[Stroke], schedule: &[(f64, bool)], end_s: f64) -> ArmatureValues {
    // On periods: (start, end) of each demand-on, in order.
    let periods = super::detection_watch::on_periods(schedule, end_s);
    let mut seat = 0.0f64;
    let mut release = 0.0f64;
    for (k, &(t_on, t_off)) in periods.iter().enumerate() {
        let next_on = periods.get(k + 1).map_or(end_s, |p| p.0);
        let in_period = strokes
            .iter()
            .filter(|s| s.on_t_s >= t_on && s.on_t_s < t_off);
        let seated = in_period
            .filter_map(|s| s.seated_t_s.filter(|&t| t <= t_off).map(|t| (s, t)))
            .next();
        match seated {
            Some((s, t_seat)) => {
                seat = seat.max(t_seat - t_on);
                if t_off < end_s {
                    // The opening after this off command: of this stroke or a later one
                    // (a PWM hold may have dropped and re-seated it).
                    let opened = strokes
                        .iter()
                        .filter(|r| r.on_t_s >= s.on_t_s)
                        .filter_map(|r| r.opened_t_s)
                        .find(|&t| t >= t_off && t <= next_on);
                    release = release.max(opened.map_or(f64::INFINITY, |t| t - t_off));
                }
            }
            None => seat = f64::INFINITY,
        }
    }
    let worst = |f: fn(&Stroke) -> Option<f64>| {
        strokes
            .iter()
            .filter_map(f)
            .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
            .unwrap_or(f64::INFINITY)
    };
    ArmatureValues {
        seat_s: if periods.is_empty() {
            f64::INFINITY
        } else {
            seat
        },
        impact_m_s: worst(|s| s.impact_speed_m_s),
        release_s: release,
        energy_j: worst(|s| s.seat_energy_j),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stroke(on: f64, seated: Option<f64>, opened: Option<f64>) -> Stroke {
        Stroke {
            on_t_s: on,
            seated_t_s: seated,
            first_impact_t_s: seated,
            impact_speed_m_s: seated.map(|_| 1.0),
            seat_energy_j: seated.map(|_| 0.05),
            opened_t_s: opened,
            ..Stroke::default()
        }
    }

    #[test]
    fn seat_and_release_times_run_from_the_commands() {
        let s = [stroke(0.0051, Some(0.0123), Some(0.1))];
        let v = values(&s, &[(0.005, true), (0.085, false)], 0.2);
        assert!((v.seat_s - 0.0073).abs() < 1e-12, "{v:?}");
        assert!((v.release_s - 0.015).abs() < 1e-12, "{v:?}");
        assert_eq!((v.impact_m_s, v.energy_j), (1.0, 0.05));
    }

    #[test]
    fn a_stroke_that_never_seats_or_opens_is_infinite() {
        let v = values(
            &[stroke(0.0051, None, None)],
            &[(0.005, true), (0.05, false)],
            0.1,
        );
        assert!(v.seat_s.is_infinite() && v.impact_m_s.is_infinite() && v.energy_j.is_infinite());
        let v = values(
            &[stroke(0.0051, Some(0.01), None)],
            &[(0.005, true), (0.05, false)],
            0.1,
        );
        assert!(v.release_s.is_infinite(), "{v:?}");
        let v = values(&[], &[], 0.1);
        assert!(v.seat_s.is_infinite());
    }
}
