//! Vectors of the armature movement detector: pull-ins and releases of a demo valve coil
//! (invented values; the current with the dip of a moving armature, drawn as a smooth
//! waveform with ADC noise), a stuck armature, a release without drop-out, plus raw edge
//! configurations (any thresholds, any currents, starts and releases anywhere).

use std::fmt::Write as _;

use lenz::kernel::{Motion, MovementConfig, MovementParams, MovementRaw, MovementState};

use super::Rng;

/// Demo valve detector (invented): 10 kHz tick, 25 mA hysteresis, persistence 3.
const PARAMS: MovementParams = MovementParams {
    tick_s: 100e-6,
    hysteresis_a: 0.025,
    persistence: 3,
    min_peak_a: 0.2,
    min_release_a: 0.05,
    pull_in_deadline_s: 0.02,
    release_deadline_s: 0.015,
};

/// `c` as a constant expression (the raw values' `Debug` form is a struct literal).
fn config_expr(c: &MovementConfig) -> String {
    format!("MovementConfig::from_raw({:?})", c.raw())
}

fn motion_expr(m: Motion) -> String {
    format!("Motion::{m:?}")
}

/// What the check does before an update.
#[derive(Clone, Copy, PartialEq)]
enum Cmd {
    None,
    Start,
    Release,
}

impl Cmd {
    fn expr(self) -> &'static str {
        match self {
            Cmd::None => "Cmd::None",
            Cmd::Start => "Cmd::Start",
            Cmd::Release => "Cmd::Release",
        }
    }
}

/// A pull-in current, µA, at tick `k`: the RL rise towards `final_a` (time constant `tau`
/// ticks) until the armature starts at `move_at`, a dip to `dip` of the current at the seating
/// `seat_at` (`move_at < seat_at`), then the rise again.
fn pull_in_ua(k: usize, final_a: f64, tau: f64, move_at: usize, seat_at: usize, dip: f64) -> f64 {
    let rise = |t: f64| final_a * (1.0 - (-t / tau).exp());
    let k = k as f64;
    let (m, s) = (move_at as f64, seat_at as f64);
    let a = if k <= m {
        rise(k)
    } else if k <= s {
        // Smooth fall from the peak to the valley.
        let peak = rise(m);
        let x = (k - m) / (s - m);
        peak * (1.0 - (1.0 - dip) * (0.5 - 0.5 * (std::f64::consts::PI * x).cos()))
    } else {
        let valley = rise(m) * dip;
        final_a - (final_a - valley) * (-(k - s) / (tau * 1.6)).exp()
    };
    a * 1e6
}

/// A release current, µA: decay from `from_a` (time constant `tau` ticks), a bump of
/// `bump_a` from `open_at` as the armature opens (none if 0), decaying with the rest.
fn release_ua(k: usize, from_a: f64, tau: f64, open_at: usize, bump_a: f64) -> f64 {
    let k = k as f64;
    let o = open_at as f64;
    let mut a = from_a * (-k / tau).exp();
    if k > o && bump_a > 0.0 {
        let x = k - o;
        a += bump_a * (x / 8.0).min(1.0) * (-(x - 8.0).max(0.0) / (tau * 0.7)).exp();
    }
    a * 1e6
}

fn noisy(rng: &mut Rng, ua: f64, noise_ua: i32) -> i32 {
    ua.round() as i32 + rng.range(-noise_ua, noise_ua)
}

pub fn generate() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0011);
    let demo = MovementConfig::new(&PARAMS).expect("demo detector is valid");
    // ADC noise of ±4 mA (well below the 25 mA hysteresis).
    let noise = 4_000;
    let mut cases: Vec<(MovementConfig, Vec<(Cmd, i32)>)> = Vec::new();
    // Pull-ins with the dip at different depths and times, each followed by a release with
    // its drop-out bump.
    for &(move_at, seat_at, dip, open_at, bump) in &[
        (25usize, 45usize, 0.55, 20usize, 0.06),
        (35, 70, 0.75, 30, 0.03),
        (18, 30, 0.85, 12, 0.1),
    ] {
        let mut v = vec![];
        for k in 0..110 {
            let i = pull_in_ua(k, 0.75, 20.0, move_at, seat_at, dip);
            v.push((
                if k == 0 { Cmd::Start } else { Cmd::None },
                noisy(&mut rng, i, noise),
            ));
        }
        for k in 0..90 {
            let i = release_ua(k, 0.7, 15.0, open_at, bump);
            v.push((
                if k == 0 { Cmd::Release } else { Cmd::None },
                noisy(&mut rng, i, noise),
            ));
        }
        cases.push((demo, v));
    }
    // A stuck armature: the plain RL rise, no dip, until the deadline (200 ticks) and past it.
    cases.push((
        demo,
        (0..230)
            .map(|k| {
                let i = pull_in_ua(k, 0.75, 20.0, 10_000, 10_001, 1.0);
                (
                    if k == 0 { Cmd::Start } else { Cmd::None },
                    noisy(&mut rng, i, noise),
                )
            })
            .collect(),
    ));
    // A release without drop-out (the armature stays closed), past the deadline (150 ticks).
    cases.push((
        demo,
        (0..170)
            .map(|k| {
                let i = release_ua(k, 0.7, 40.0, 0, 0.0);
                (
                    if k == 0 { Cmd::Release } else { Cmd::None },
                    noisy(&mut rng, i, noise),
                )
            })
            .collect(),
    ));
    // Updates before any start (idle), then a start.
    cases.push((
        demo,
        (0..40)
            .map(|k| {
                (
                    if k == 20 { Cmd::Start } else { Cmd::None },
                    rng.range(0, 900_000),
                )
            })
            .collect(),
    ));
    // Raw edge configurations: any thresholds and currents, starts and releases anywhere.
    for _ in 0..8 {
        let config = MovementConfig::from_raw(MovementRaw {
            hysteresis_ua: if rng.bool() {
                rng.any_i32()
            } else {
                rng.range(0, 50_000)
            },
            persistence: if rng.bool() {
                rng.range(0, 4) as u16
            } else {
                rng.next_u64() as u16
            },
            min_peak_ua: rng.any_i32(),
            min_release_ua: rng.any_i32(),
            deadline_ticks: if rng.bool() {
                rng.range(0, 80) as u32
            } else {
                rng.next_u64() as u32
            },
            release_deadline_ticks: if rng.bool() {
                rng.range(0, 80) as u32
            } else {
                rng.next_u64() as u32
            },
        });
        let steps = (0..60)
            .map(|k| {
                let cmd = match (k, rng.range(0, 15)) {
                    (0, _) | (_, 0) => Cmd::Start,
                    (_, 1) => Cmd::Release,
                    _ => Cmd::None,
                };
                let i = if rng.range(0, 3) == 0 {
                    rng.any_i32()
                } else {
                    rng.range(-100_000, 1_000_000)
                };
                (cmd, i)
            })
            .collect();
        cases.push((config, steps));
    }

    let mut src = String::from("// Generated by gen/movement.rs with the host build of lenz.\n\n");
    src.push_str("/// Generated sequences.\npub static CASES: &[Case] = &[\n");
    let mut seen = [false; 8];
    for (config, steps) in &cases {
        let mut s = MovementState::new();
        let _ = write!(
            src,
            "    Case {{ config: {}, steps: &[",
            config_expr(config)
        );
        for &(cmd, i) in steps {
            match cmd {
                Cmd::Start => config.start(&mut s),
                Cmd::Release => config.release(&mut s),
                Cmd::None => {}
            }
            let want = config.update(&mut s, i);
            seen[match want {
                Motion::Idle => 0,
                Motion::Waiting => 1,
                Motion::Moving => 2,
                Motion::Seated { .. } => 3,
                Motion::NoMotion => 4,
                Motion::Decaying => 5,
                Motion::DroppedOut { .. } => 6,
                Motion::NoDropOut => 7,
            }] = true;
            let _ = write!(src, "({}, {i}, {}), ", cmd.expr(), motion_expr(want));
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    // The vectors must reach every verdict.
    assert!(
        seen.iter().all(|&b| b),
        "movement vectors miss a verdict: {seen:?}"
    );

    // Cost run: a stuck armature's flat current top with ADC noise below the hysteresis, the
    // path that repeats every tick until the deadline (here beyond the run).
    let bench = MovementConfig::new(&MovementParams {
        pull_in_deadline_s: 100.0,
        ..PARAMS
    })
    .expect("bench detector is valid");
    let _ = writeln!(
        src,
        "/// Configuration of the cost run (the demo detector, deadline beyond the run).\npub const BENCH_CONFIG: MovementConfig = {};\n",
        config_expr(&bench)
    );
    src.push_str("/// Inputs of the cost run, µA.\npub static BENCH_INPUTS: &[i32] = &[");
    for _ in 0..64 {
        let _ = write!(src, "{}, ", 750_000 + rng.range(-10_000, 10_000));
    }
    src.push_str("];\n\n");
    let _ = writeln!(
        src,
        "/// The straightforward version's parameters for the cost run.\npub const NAIVE: Naive = Naive {{ tick_s: {:?}, hysteresis_a: {:?}, persistence: {}, min_peak_a: {:?}, min_release_a: {:?}, deadline_s: {:?}, release_deadline_s: {:?} }};",
        PARAMS.tick_s,
        PARAMS.hysteresis_a,
        PARAMS.persistence,
        PARAMS.min_peak_a,
        PARAMS.min_release_a,
        100.0f32,
        PARAMS.release_deadline_s
    );
    src
}
