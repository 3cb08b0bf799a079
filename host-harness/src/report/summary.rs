//! The summary at the top of a report: how many files, scenarios and properties, how many
//! failed, and the smallest margin to a limit.

use super::Outcome;
use crate::closed_loop::Property;

/// The property closest to (or furthest past) its limit.
#[derive(Debug, Clone)]
pub struct Worst<'a> {
    /// The scenario's run.
    pub outcome: &'a Outcome,
    /// The property.
    pub property: &'a Property,
    /// `(limit − value) / limit`: 0.25 is 25 % below the limit, negative past it,
    /// `-inf` for a value that never came (a trip that never happened).
    pub margin: f64,
}

/// Counts over a report.
#[derive(Debug, Clone, Default)]
pub struct Summary<'a> {
    /// Scenario files.
    pub files: usize,
    /// Scenarios run.
    pub scenarios: usize,
    /// Properties that hold.
    pub held: usize,
    /// Every property that failed, in report order: `(run, property)`.
    pub failed: Vec<(&'a Outcome, &'a Property)>,
    /// Plan verdicts that pass and fail.
    pub plan_pass: usize,
    /// Plan verdicts that fail.
    pub plan_fail: usize,
    /// The smallest margin of a property with a positive finite limit (a count that must stay
    /// zero, such as "no trip", has no relative margin: it only holds or fails).
    pub worst: Option<Worst<'a>>,
}

/// `(limit − value) / limit` of `p` against an upper limit, `(value − limit) / limit` against
/// a lower one (`hold-current`); `None` without a positive finite limit.
#[must_use]
pub fn margin(p: &Property) -> Option<f64> {
    if !(p.limit.is_finite() && p.limit > 0.0) || p.value.is_nan() {
        return None;
    }
    Some(if p.value.is_finite() {
        match p.bound {
            crate::closed_loop::Bound::Max => (p.limit - p.value) / p.limit,
            crate::closed_loop::Bound::Min => (p.value - p.limit) / p.limit,
        }
    } else {
        f64::NEG_INFINITY
    })
}

impl<'a> Summary<'a> {
    /// Adds one file's runs and plan verdict counts.
    pub fn add_file(&mut self, outcomes: &'a [Outcome], plan_pass: usize, plan_fail: usize) {
        self.files += 1;
        self.plan_pass += plan_pass;
        self.plan_fail += plan_fail;
        for o in outcomes {
            self.scenarios += 1;
            for p in &o.result.properties {
                if p.pass {
                    self.held += 1;
                } else {
                    self.failed.push((o, p));
                }
                if let Some(m) = margin(p)
                    && self.worst.as_ref().is_none_or(|w| m < w.margin)
                {
                    self.worst = Some(Worst {
                        outcome: o,
                        property: p,
                        margin: m,
                    });
                }
            }
        }
    }

    /// Nothing failed and something was checked.
    #[must_use]
    pub fn all_hold(&self) -> bool {
        self.failed.is_empty() && self.plan_fail == 0 && self.held + self.plan_pass > 0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::closed_loop::RunResult;

    fn prop(name: &'static str, value: f64, limit: f64) -> Property {
        Property {
            name,
            value,
            limit,
            unit: "V",
            pass: value <= limit,
            bound: crate::closed_loop::Bound::Max,
            detail: None,
        }
    }

    #[test]
    fn a_lower_limit_has_its_margin_above_the_limit() {
        let mut p = prop("hold_current", 0.3, 0.25);
        p.bound = crate::closed_loop::Bound::Min;
        p.pass = true;
        let m = margin(&p).expect("a positive limit");
        assert!((m - 0.2).abs() < 1e-12, "{m}");
        p.value = 0.2;
        assert!(margin(&p).expect("a positive limit") < 0.0);
    }

    fn outcome(props: Vec<Property>) -> Outcome {
        Outcome {
            file: "valve.toml".into(),
            system: "valve".into(),
            scenario: "s".into(),
            stem: "valve--s".into(),
            result: RunResult {
                properties: props,
                waveform: Default::default(),
                events: vec![],
                switch_offs: vec![],
                ticks: 1,
                simulated_s: 1e-4,
            },
        }
    }

    #[test]
    fn counts_failures_and_the_smallest_margin() {
        let runs = [
            outcome(vec![prop("a", 30.0, 40.0), prop("trips", 0.0, 0.0)]),
            outcome(vec![prop("b", 44.0, 40.0), prop("c", 39.0, 40.0)]),
        ];
        let mut s = Summary::default();
        s.add_file(&runs, 3, 0);
        assert_eq!((s.files, s.scenarios, s.held), (1, 2, 3));
        assert_eq!(s.failed.len(), 1);
        assert_eq!(s.failed[0].1.name, "b");
        let w = s.worst.as_ref().expect("a margin");
        assert_eq!(w.property.name, "b");
        assert!((w.margin + 0.1).abs() < 1e-12);
        assert!(!s.all_hold());
    }

    #[test]
    fn a_report_that_checks_nothing_does_not_hold() {
        let s = Summary::default();
        assert!(!s.all_hold());
        assert_eq!(
            margin(&prop("x", f64::INFINITY, 1.0)),
            Some(f64::NEG_INFINITY)
        );
        assert_eq!(margin(&prop("x", 1.0, 0.0)), None);
    }
}
