//! The rule that decides which scenario files are accepted (`scenario::timing`) agrees with
//! what the closed loop does: over a grid of command times around the tick edges and the end of
//! the run, a file is accepted exactly when the firmware sees every command, each at the first
//! tick at or after its time, and a rejected file names the command the firmware would miss.

use lenz_harness::scenario::{
    self,
    run::{self, Params, Record},
};

const VALVE: &str = include_str!("../scenarios/valve.toml");
const TICK_US: u64 = 100;

/// The valve file (tick 100 µs) with one scenario of `duration_us` and two commands.
fn file(duration_us: u64, on_us: u64, off_us: u64) -> String {
    assert!(VALVE.contains("tick = \"100us\""));
    let head = &VALVE[..VALVE.find("[[scenario]]").expect("a scenario")];
    format!(
        "{head}[[scenario]]\nname = \"grid\"\nduration = \"{duration_us}us\"\n\
         [[scenario.event]]\nat = \"{on_us}us\"\ncommand = \"on\"\n\
         [[scenario.event]]\nat = \"{off_us}us\"\ncommand = \"off\"\n\
         [[scenario.check]]\nproperty = \"peak-current\"\nmax = \"2A\"\n"
    )
}

/// First tick at or after `t_us`, µs.
fn effective_us(t_us: u64) -> u64 {
    t_us.div_ceil(TICK_US) * TICK_US
}

#[test]
fn accepted_exactly_when_the_firmware_sees_every_command() {
    let duration_us = 1_000;
    let (mut accepted, mut rejected) = (0, 0);
    for on_us in (0..=400).step_by(10) {
        for off_us in (on_us + 10..=1_000).step_by(30) {
            let text = file(duration_us, on_us, off_us);
            let both_seen = effective_us(on_us) < effective_us(off_us)
                && effective_us(off_us) < duration_us.div_ceil(TICK_US) * TICK_US
                && off_us < duration_us;
            match scenario::parse("grid.toml", &text) {
                Ok(f) => {
                    accepted += 1;
                    assert!(both_seen, "on {on_us} µs, off {off_us} µs accepted");
                    let r = run::run(&f, 0, &Params::NOMINAL, Record::None).expect("runs");
                    let demand: Vec<(String, f64)> = r
                        .events
                        .iter()
                        .filter(|e| e.what.starts_with("demand"))
                        .map(|e| (e.what.clone(), e.t_s))
                        .collect();
                    assert_eq!(demand.len(), 2, "on {on_us}, off {off_us}: {demand:?}");
                    assert_eq!(demand[0].0, "demand on");
                    assert_eq!(demand[1].0, "demand off");
                    for ((_, t), at) in demand.iter().zip([on_us, off_us]) {
                        let want = effective_us(at) as f64 * 1e-6;
                        assert!((t - want).abs() < 1e-12, "{at} µs took effect at {t} s");
                    }
                }
                Err(e) => {
                    rejected += 1;
                    assert!(!both_seen, "on {on_us} µs, off {off_us} µs rejected: {e}");
                    let lost_on = effective_us(on_us) == effective_us(off_us);
                    let key = if lost_on {
                        "scenario[0].event[0].command"
                    } else if off_us >= duration_us {
                        "scenario[0].event[1].at"
                    } else {
                        "scenario[0].event[1].command"
                    };
                    assert_eq!(e.key, key, "on {on_us} µs, off {off_us} µs: {e}");
                    assert!(e.line > 0, "{e}");
                }
            }
        }
    }
    // The grid has both kinds.
    assert!(
        accepted > 100 && rejected > 10,
        "{accepted} accepted, {rejected} rejected"
    );
}
