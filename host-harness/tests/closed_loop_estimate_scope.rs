//! The scope of `estimator-error` on a coil whose armature moves (`closed_loop`'s
//! `estimate_scope`): the estimate is checked while the plant's armature rests seated and the
//! controller has reported the seating, not during the motion. The property must still fail
//! for an estimate that is wrong inside that scope, and must not pass when nothing was in
//! scope. The shipped demo valve (invented values) with its example driver.
//! Label: computed (closed loop).

#[path = "common/demo_valve.rs"]
mod demo_valve;
use demo_valve::valve_with;

use lenz_harness::closed_loop::{Actuation, Controller, RunResult, Sensed, Telemetry};
use lenz_harness::controllers::ValveDriver;
use lenz_harness::scenario::{self, File, run};

/// The checks of the open-close cycle (`demo_valve::open_close_cycle`).
const CHECKS: &str = r#"
[[scenario.check]]
property = "estimator-error"
max = "50mA"
"#;

fn cycle() -> String {
    demo_valve::open_close_cycle(CHECKS)
}

/// When the wrapped driver's estimate is falsified.
#[derive(Clone, Copy)]
enum Wrong {
    /// While the driver reports the armature seated (inside the scope).
    WhileSeated,
    /// While the coil is on and the driver has not reported the seating (the pull-in: the
    /// motion, outside the scope).
    DuringPullIn,
    /// Never reports a seating (and its estimate is right).
    NeverReports,
}

/// The example driver of the file with its estimate off by `OFFSET_A` (or its seated report
/// hidden) as `wrong` says.
struct Falsified {
    inner: ValveDriver,
    wrong: Wrong,
    on: bool,
}

const OFFSET_A: f64 = 0.2;

impl Controller for Falsified {
    fn tick(&mut self, sensed: &Sensed) -> Actuation {
        self.on = sensed.demand;
        self.inner.tick(sensed)
    }
    fn telemetry(&self) -> Telemetry {
        let mut t = self.inner.telemetry();
        let falsify = match self.wrong {
            Wrong::WhileSeated => t.seated,
            Wrong::DuringPullIn => self.on && !t.seated,
            Wrong::NeverReports => {
                t.seated = false;
                false
            }
        };
        if falsify {
            t.estimate_a = t.estimate_a.map(|e| e + OFFSET_A);
        }
        t
    }
}

fn file() -> File {
    scenario::parse("scope.toml", &valve_with(&cycle())).unwrap_or_else(|e| panic!("{e}"))
}

fn with(f: &File, wrong: Wrong) -> RunResult {
    let (r, _) = run::run_with(f, 0, &run::Params::NOMINAL, run::Record::None, |temp| {
        let fw = lenz_harness::system::firmware::inputs(f, temp)
            .map_err(|e| run::RunSetupError(e.to_string()))?;
        let cfg = run::valve_driver(f, &fw)?;
        let inner = ValveDriver::new(cfg).map_err(|e| run::RunSetupError(e.to_string()))?;
        Ok(Falsified {
            inner,
            wrong,
            on: false,
        })
    })
    .unwrap_or_else(|e| panic!("{e}"));
    r
}

fn estimator_error(r: &RunResult) -> (f64, bool, String) {
    let p = r.property("estimator_error").expect("listed");
    (p.value, p.pass, p.detail.clone().unwrap_or_default())
}

#[test]
fn the_shipped_driver_passes_with_its_seated_estimate() {
    let f = file();
    let r = run::run(&f, 0, &run::Params::NOMINAL, run::Record::None).unwrap();
    let (v, pass, detail) = estimator_error(&r);
    println!("estimator error {v} A: {detail}");
    assert!(pass && v < 0.01, "{v} {detail}");
    // About 80 ms seated between the report and the switch-off, plus the seated decay.
    assert!(detail.contains("ticks checked"), "{detail}");
}

#[test]
fn a_wrong_estimate_while_seated_fails() {
    let (v, pass, _) = estimator_error(&with(&file(), Wrong::WhileSeated));
    println!("wrong while seated: {v} A");
    assert!(!pass && v >= OFFSET_A - 0.01, "{v}");
}

#[test]
fn a_wrong_estimate_during_the_motion_is_out_of_scope() {
    let (v, pass, _) = estimator_error(&with(&file(), Wrong::DuringPullIn));
    println!("wrong during the pull-in: {v} A");
    assert!(pass && v < 0.01, "{v}");
}

#[test]
fn a_controller_that_never_reports_the_seating_checks_nothing_and_fails() {
    let (v, pass, detail) = estimator_error(&with(&file(), Wrong::NeverReports));
    assert!(!pass && v.is_infinite(), "{v}");
    assert!(detail.contains("nothing was checked"), "{detail}");
}

#[test]
fn without_an_armature_every_tick_counts() {
    // The same valve without its plunger: the pull-in is in scope again, so a wrong estimate
    // during the pull-in fails there.
    let text = demo_valve::valve_without_armature(&cycle());
    let f = scenario::parse("plain.toml", &text).unwrap_or_else(|e| panic!("{e}"));
    let (v, pass, detail) = estimator_error(&with(&f, Wrong::DuringPullIn));
    println!("no armature, wrong during the pull-in: {v} A ({detail})");
    assert!(!pass && v >= OFFSET_A - 0.01, "{v}");
}
