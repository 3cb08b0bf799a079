//! Where the estimator-error property is measured on a coil whose armature moves.
//!
//! A firmware estimator models a coil of one inductance. While the armature moves, the coil's
//! inductance changes and a motional EMF appears, so no fixed-inductance estimate can follow
//! it: the driver with the movement detector knowingly blanks its plausibility monitor from
//! the switch-on to the seated report and re-seeds the estimate from the measured current at
//! that report (`lenz::drive::CoilDriverConfig::with_movement`). Its estimate is planned with
//! the seated coil (`system::firmware_movement`), and that is the coil it is checked against.
//!
//! The rule, from the plant and the controller together:
//!
//! - a coil without an armature: every tick (before the first fault), as before;
//! - a coil with an armature: only the ticks at which the plant's armature rests at its closed
//!   stop **and** the controller has reported it seated since the last on command. The ticks
//!   from the switch-on to the report are left to the armature properties: `seat-time`
//!   bounds the motion and `seat-detection-latency` the time from the final seating to the
//!   report. The decay after a switch-off counts while the armature is still seated; the
//!   drop-out and the return to the open stop do not.
//!
//! The plant decides the motion, not the firmware: a firmware that blanks or reports at the
//! wrong time does not widen its own window. A controller that never reports a seating has no
//! tick in scope, and the property is then infinite (it fails: nothing was checked).

/// Whether the estimate at this tick is in scope: `plant_seated` is the plant's armature
/// resting at its closed stop (`None`: nothing moves), `reported_seated` whether the
/// controller has reported the seating since the last on command.
#[must_use]
pub(super) fn in_scope(plant_seated: Option<bool>, reported_seated: bool) -> bool {
    plant_seated.is_none_or(|seated| seated && reported_seated)
}

/// What the property's detail says about its scope, with the count of measured ticks.
#[must_use]
pub(super) fn detail(moving: bool, measured: u64) -> Option<String> {
    match (moving, measured) {
        (_, 0) => Some(
            "no tick in scope: nothing was checked (with an armature, the estimate is \
             checked only while the armature is seated and the controller has reported it)"
                .into(),
        ),
        (true, n) => Some(format!(
            "{n} ticks checked: while the armature rests seated, from the controller's seated \
             report on (not during the motion)"
        )),
        (false, _) => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn only_a_reported_seating_of_a_seated_armature_is_in_scope() {
        assert!(in_scope(None, false));
        assert!(in_scope(None, true));
        assert!(in_scope(Some(true), true));
        // Moving or open, or seated before the controller knows it: out of scope.
        assert!(!in_scope(Some(false), true));
        assert!(!in_scope(Some(false), false));
        assert!(!in_scope(Some(true), false));
    }

    #[test]
    fn the_detail_says_when_nothing_was_checked() {
        assert!(detail(true, 0).is_some_and(|d| d.contains("nothing was checked")));
        assert!(detail(false, 0).is_some_and(|d| d.contains("nothing was checked")));
        assert!(detail(true, 12).is_some_and(|d| d.starts_with("12 ticks")));
        assert_eq!(detail(false, 12), None);
    }
}
