//! The closed loop's release time against an outside reference: the instant the coil current
//! falls below the release current, found here by `ode_solvers` Dop853 (an explicit
//! Runge–Kutta 8(5,3) pair from crates.io) on the circuit equations written independently of
//! the plant, and bisection on the integration time. The loop must report it within 0.1 % or
//! 1 µs, whichever is larger, although its edges (switch, sampling, tick end) are tens of
//! microseconds apart. Label: computed (closed loop cross-checked against a general-purpose ODE
//! solver). Values invented for the greenhouse demo's 24 V irrigation valve.

use lenz_harness::closed_loop::demo::sensors;
use lenz_harness::closed_loop::{Actuation, Controller, Limits, LoopConfig, Release, Sensed, run};
use lenz_harness::plant::{Clamp, CoilDrive, CoilDriveSpec, CoilSpec, InductanceCurve, SwitchSpec};
use ode_solvers::{Dop853, OutputType, System, Vector1};

const VS: f64 = 24.0;
const R_W: f64 = 32.0;
const R_SRC: f64 = 0.2;
const R_ON: f64 = 0.1;
const R_SH: f64 = 0.010;
const L0: f64 = 0.120;
// Saturating core (invented): knee at 0.5 A, 20 mH residual.
const IK: f64 = 0.5;
const LR: f64 = 0.020;
/// Demand on at 0, off at this time (a tick instant), s.
const T_OFF: f64 = 0.020;

/// Switches on while the application demands it.
struct Follow;

impl Controller for Follow {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        if s.demand {
            Actuation::ON
        } else {
            Actuation::OFF
        }
    }
}

fn plant(curve: InductanceCurve, clamp: Clamp) -> CoilDrive {
    CoilDrive::new(CoilDriveSpec {
        coil: CoilSpec {
            curve,
            r20_ohm: R_W,
            alpha20_per_k: 0.00393,
            temp_c: 20.0,
            thermal: None,
        },
        clamp,
        switch: SwitchSpec {
            on_resistance_ohm: R_ON,
            breakdown_v: 100.0,
        },
        supply_v: VS,
        source_resistance_ohm: R_SRC,
        shunt_ohm: R_SH,
    })
    .unwrap()
}

/// The loop's release time for a demand-off at `T_OFF` with release current `level_a`.
fn loop_release_s(mut p: CoilDrive, level_a: f64) -> f64 {
    let cfg = LoopConfig {
        tick_ns: 100_000,
        pwm_period_ns: 50_000,
        duration_ns: 40_000_000,
        sample_offset_ns: 20_000,
        sensors: sensors(),
        seed: 1,
        demand: vec![(0.0, true), (T_OFF, false)],
        motor_commands: Vec::new(),
        faults: vec![],
        limits: Limits {
            release: Some(Release {
                current_a: level_a,
                max_s: 1.0,
            }),
            ..Limits::default()
        },
        record_every: 0,
    };
    let res = run(&mut p, &mut Follow, &cfg).unwrap();
    res.property("release_time").unwrap().value
}

/// `L_d(i) di/dt = v − r i` with a constant `v` (one topology of the circuit).
struct Coil {
    v: f64,
    r: f64,
    saturating: bool,
}

impl Coil {
    fn l_d(&self, i: f64) -> f64 {
        if self.saturating {
            let x = i / IK;
            LR + (L0 - LR) / (1.0 + x * x)
        } else {
            L0
        }
    }
}

impl System<f64, Vector1<f64>> for Coil {
    fn system(&self, _t: f64, y: &Vector1<f64>, dy: &mut Vector1<f64>) {
        dy[0] = (self.v - self.r * y[0]) / self.l_d(y[0]);
    }
}

fn dop(c: Coil, i0: f64, t: f64) -> f64 {
    if t <= 0.0 {
        return i0;
    }
    let mut s = Dop853::new(c, 0.0, t, t, Vector1::new(i0), 1e-13, 1e-15);
    s.set_output(OutputType::Sparse);
    s.integrate().expect("reference integrates");
    s.y_out().last().unwrap()[0]
}

/// Reference release time: on from 0 to `T_OFF` through the whole loop resistance, then the
/// clamp `v_clamp` (and `r_clamp`) alone; the instant the current reaches `level_a`, by
/// bisection on the Dop853 integration time.
fn reference_release_s(saturating: bool, v_clamp: f64, r_clamp: f64, level_a: f64) -> f64 {
    let on = Coil {
        v: VS,
        r: R_SRC + R_W + R_ON + R_SH,
        saturating,
    };
    let i_off = dop(on, 0.0, T_OFF);
    let off = |t| {
        dop(
            Coil {
                v: -v_clamp,
                r: R_W + r_clamp,
                saturating,
            },
            i_off,
            t,
        )
    };
    let (mut lo, mut hi) = (0.0, 0.020);
    assert!(off(hi) < level_a, "the reference current must cross");
    while hi - lo > 1e-12 {
        let mid = 0.5 * (lo + hi);
        if off(mid) < level_a {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    0.5 * (lo + hi)
}

fn assert_release(got: f64, want: f64) {
    let tol = (1e-3 * want).max(1e-6);
    assert!(
        (got - want).abs() <= tol,
        "release {got:.9} s against the reference {want:.9} s (tolerance {tol:e} s)"
    );
}

#[test]
fn diode_zener_release_is_the_exact_crossing() {
    // Diode 0.7 V + zener 33 V, release below 0.2 A: about 1.35 ms.
    let p = plant(
        InductanceCurve::Linear { l_h: L0 },
        Clamp::DiodeZener {
            vf_v: 0.7,
            vz_v: 33.0,
        },
    );
    let want = reference_release_s(false, 33.7, 0.0, 0.2);
    assert!((1.3e-3..1.4e-3).contains(&want), "{want}");
    assert_release(loop_release_s(p, 0.2), want);
}

#[test]
fn resistor_clamp_release_is_the_exact_crossing() {
    // Diode 0.7 V + 22 Ω, release below 0.2 A (the switch stays below its breakdown:
    // 24 + 0.7 + 22 · 0.743 ≈ 41 V).
    let p = plant(
        InductanceCurve::Linear { l_h: L0 },
        Clamp::ResistorDiode {
            r_ohm: 22.0,
            vf_v: 0.7,
        },
    );
    let want = reference_release_s(false, 0.7, 22.0, 0.2);
    assert_release(loop_release_s(p, 0.2), want);
}

#[test]
fn saturating_coil_release_is_the_exact_crossing() {
    // Freewheel diode on the saturating core: the adaptive integrator's event location.
    let curve = InductanceCurve::Knee {
        l0_h: L0,
        knee_a: IK,
        l_res_h: LR,
    };
    let p = plant(curve, Clamp::Freewheel { vf_v: 0.7 });
    let want = reference_release_s(true, 0.7, 0.0, 0.3);
    assert_release(loop_release_s(p, 0.3), want);
}
