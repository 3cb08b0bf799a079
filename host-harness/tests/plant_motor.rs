//! The motor plant against an outside general-purpose solver, `ode_solvers` Dop853 (an explicit
//! Runge–Kutta 8(5,3) pair from crates.io), and against the motor plan routines of `lenz`.
//!
//! The reference equations are written here independently of the plant, from the textbook DC
//! machine (`L di/dt = u − R i − k ω`, `J dω/dt = k i − b ω − T`; Fitzgerald, Kingsley, Umans,
//! *Electric Machinery*, ch. 7, from memory) and the bridge's topologies as in the plant's
//! docs, with the returned charge, returned energy and copper loss carried as extra states.
//! Events (the coasting current reaching zero) are located by bisection on re-integrations.
//! Label of every check: computed (plant cross-checked against a general-purpose ODE solver).

use lenz::kernel::BridgeMode;
use lenz::motor::{MotorParams, Rail, ReturnPath};
use lenz_harness::plant::{Decay, LoadProfile, MotorEventKind, MotorPlant, MotorSpec, Thermal};
use ode_solvers::{Dop853, OutputType, System, Vector6};

/// The vent motor of the reference sheet (CHECKS C5.1, invented demo values).
const L: f64 = 2e-3;
const R: f64 = 1.5;
const K: f64 = 0.03;
const J: f64 = 2e-5;
const B: f64 = 1e-6;
const LOAD: f64 = 0.02;
const VS: f64 = 12.0;
const VF: f64 = 0.7;

#[derive(Clone, Copy, PartialEq)]
enum Mode {
    Forward,
    Reverse,
    Brake,
    /// Coast with `i > 0`: through the diodes into the bus.
    CoastPos,
    /// Coast with the diodes blocking (`i = 0`).
    CoastBlocked,
}

/// States `[i, ω, v_bus, returned charge, returned energy, copper loss]`.
#[derive(Clone, Copy)]
struct Ref {
    mode: Mode,
    r_w: f64,
    r_sw: f64,
    rs: f64,
    c: f64,
    /// The supply conducts (`false`: the bus capacitor alone).
    supply_on: bool,
    jammed: bool,
    load: f64,
}

impl System<f64, Vector6<f64>> for Ref {
    fn system(&self, _t: f64, y: &Vector6<f64>, dy: &mut Vector6<f64>) {
        let (i, w, v) = (y[0], y[1], y[2]);
        let driven = self.r_w + 2.0 * self.r_sw;
        let (di, i_bus) = match self.mode {
            Mode::Forward => ((v - driven * i - K * w) / L, i),
            Mode::Reverse => ((-v - driven * i - K * w) / L, -i),
            Mode::Brake => ((-driven * i - K * w) / L, 0.0),
            Mode::CoastPos => ((-(v + 2.0 * VF) - self.r_w * i - K * w) / L, -i),
            Mode::CoastBlocked => (0.0, 0.0),
        };
        dy[0] = di;
        dy[1] = if self.jammed {
            0.0
        } else {
            (K * i - B * w - self.load) / J
        };
        dy[2] = if !self.supply_on {
            -i_bus / self.c
        } else if self.rs > 0.0 {
            ((VS - v) / self.rs - i_bus) / self.c
        } else {
            0.0
        };
        let ret = (-i_bus).max(0.0);
        dy[3] = ret;
        dy[4] = v * ret;
        dy[5] = self.r_w * i * i;
    }
}

impl Ref {
    fn new(mode: Mode) -> Self {
        Self {
            mode,
            r_w: R,
            r_sw: 0.0,
            rs: 0.0,
            c: 100e-6,
            supply_on: true,
            jammed: false,
            load: LOAD,
        }
    }

    fn with(self, mode: Mode) -> Self {
        Self { mode, ..self }
    }

    fn run(&self, y0: Vector6<f64>, dt: f64) -> Vector6<f64> {
        if dt <= 0.0 {
            return y0;
        }
        let mut s = Dop853::from_param(
            *self,
            0.0,
            dt,
            dt,
            y0,
            1e-12,
            1e-13,
            0.9,
            0.0,
            0.333,
            6.0,
            dt,
            0.0,
            10_000_000,
            u32::MAX,
            OutputType::Sparse,
        );
        s.integrate().expect("reference integrates");
        *s.y_out().last().unwrap()
    }

    /// First time in `(0, horizon]` the current falls to zero, sampling every `dx`.
    fn current_zero(&self, y0: Vector6<f64>, horizon: f64, dx: f64) -> (f64, Vector6<f64>) {
        let mut t = 0.0;
        let mut y = y0;
        while t < horizon {
            let n = self.run(y, dx);
            if n[0] <= 0.0 {
                let (mut lo, mut hi) = (0.0, dx);
                for _ in 0..100 {
                    let m = 0.5 * (lo + hi);
                    if self.run(y, m)[0] > 0.0 {
                        lo = m;
                    } else {
                        hi = m;
                    }
                }
                return (t + hi, self.run(y, hi));
            }
            y = n;
            t += dx;
        }
        panic!("no zero within the horizon");
    }
}

fn spec() -> MotorSpec {
    let mut s = MotorSpec::new(L, R, K, J);
    s.friction_nm_s_per_rad = B;
    s.diode_drop_v = VF;
    s
}

fn plant(s: MotorSpec) -> MotorPlant {
    let mut p = MotorPlant::new(s).unwrap();
    p.set_load_torque_nm(LOAD);
    p
}

fn state(p: &MotorPlant) -> Vector6<f64> {
    Vector6::new(
        p.current_a(),
        p.speed_rad_s(),
        p.bus_v(),
        p.returned_charge_c(),
        p.returned_energy_j(),
        p.copper_loss_j(),
    )
}

/// Compares plant and reference states: current and speed relative to their scales, bus
/// voltage and the integrals relative to their values.
fn assert_states(what: &str, got: &Vector6<f64>, want: &Vector6<f64>, tol: f64) {
    let scales: [f64; 6] = [8.0, 400.0, 12.0, 1e-6, 1e-5, 1e-4];
    for (n, scale) in scales.iter().enumerate() {
        let err = (got[n] - want[n]).abs();
        assert!(
            err <= tol * scale.max(want[n].abs()),
            "{what}: state {n}: {} vs {} (err {err:e})",
            got[n],
            want[n]
        );
    }
}

#[test]
fn start_reversal_and_brake_match_dop853_and_the_plan() {
    let m = MotorParams::new(L as f32, R as f32, K as f32)
        .with_inertia_kg_m2(J as f32)
        .with_friction_nm_s_per_rad(B as f32)
        .validate()
        .unwrap();
    // Start from rest.
    let mut p = plant(spec());
    p.set_bridge(BridgeMode::Forward);
    let mut y = state(&p);
    for n in 1..=40 {
        p.advance_to(n as f64 * 1e-3);
        y = Ref::new(Mode::Forward).run(y, 1e-3);
        assert_states(&format!("start {n} ms"), &state(&p), &y, 1e-9);
    }
    let plan = m.start_peak(12.0, 20.0, 0.02).unwrap();
    assert!((p.peak_current_a() - f64::from(plan.current_a)).abs() < 1e-5 * 7.3);
    // Reversal and brake from the steady run.
    for (mode, bridge, plan) in [
        (
            Mode::Reverse,
            BridgeMode::Reverse,
            m.reversal_peak(12.0, 20.0, 0.02).unwrap(),
        ),
        (
            Mode::Brake,
            BridgeMode::Brake,
            m.brake_peak(12.0, 20.0, 0.02).unwrap(),
        ),
    ] {
        let mut p = plant(spec());
        p.settle_forward();
        let t0 = p.time_s();
        p.set_bridge(bridge);
        let mut y = state(&p);
        for n in 1..=20 {
            p.advance_to(t0 + n as f64 * 1e-3);
            y = Ref::new(mode).run(y, 1e-3);
            assert_states(&format!("{n} ms"), &state(&p), &y, 1e-9);
        }
        assert!(
            (p.peak_current_a() - f64::from(plan.magnitude_a())).abs() < 1e-5 * 14.0,
            "{} vs {plan:?}",
            p.peak_current_a()
        );
    }
}

#[test]
fn coast_returns_charge_until_the_diodes_block() {
    let m = MotorParams::new(L as f32, R as f32, K as f32)
        .with_inertia_kg_m2(J as f32)
        .with_friction_nm_s_per_rad(B as f32)
        .validate()
        .unwrap();
    let mut p = plant(spec());
    p.settle_forward();
    p.set_bridge(BridgeMode::Coast);
    p.advance_to(20e-3);
    let zero = p
        .events()
        .iter()
        .find(|e| e.kind == MotorEventKind::DiodesBlock)
        .expect("the diodes block");
    let y0 = {
        let mut q = plant(spec());
        q.settle_forward();
        state(&q)
    };
    let (t0, y) = Ref::new(Mode::CoastPos).current_zero(y0, 20e-3, 0.1e-3);
    assert!((zero.t_s - t0).abs() < 1e-12, "{} vs {t0}", zero.t_s);
    // The returned charge and energy stop at the zero.
    assert!((p.returned_charge_c() / y[3] - 1.0).abs() < 1e-9);
    assert!((p.returned_energy_j() / y[4] - 1.0).abs() < 1e-9);
    // The rotor then coasts down on its own (no current, mechanical equation only).
    let y_end = Ref::new(Mode::CoastBlocked).run(y, 20e-3 - t0);
    assert_states("coasting", &state(&p), &y_end, 1e-9);
    // The plan routine gives the same charge and energy (sinking supply, 12 V bus).
    let plan = m
        .rail_return(
            12.0,
            20.0,
            0.02,
            ReturnPath::Diodes { diode_drop_v: 0.7 },
            Rail::Sinks,
        )
        .unwrap();
    assert!((f64::from(plan.charge_c) / y[3] - 1.0).abs() < 1e-5);
    assert!((f64::from(plan.energy_j) / y[4] - 1.0).abs() < 1e-5);
    assert!((f64::from(plan.duration_s) / t0 - 1.0).abs() < 1e-5);
}

#[test]
fn a_supply_that_cannot_sink_pumps_the_bus() {
    let m = MotorParams::new(L as f32, R as f32, K as f32)
        .with_inertia_kg_m2(J as f32)
        .with_friction_nm_s_per_rad(B as f32)
        .validate()
        .unwrap();
    for c in [10e-6, 100e-6] {
        let mut s = spec();
        s.bus_capacitance_f = c;
        s.supply_sinks = false;
        let mut p = plant(s);
        p.settle_forward();
        let y0 = state(&p);
        p.set_bridge(BridgeMode::Coast);
        p.advance_to(20e-3);
        assert!(
            p.events()
                .iter()
                .any(|e| e.kind == MotorEventKind::SupplyBlocks)
        );
        let reference = Ref {
            c,
            supply_on: false,
            ..Ref::new(Mode::CoastPos)
        };
        let (_, y) = reference.current_zero(y0, 20e-3, 0.02e-3);
        assert!(
            (p.peak_bus_v() / y[2] - 1.0).abs() < 1e-9,
            "{} vs {}",
            p.peak_bus_v(),
            y[2]
        );
        // The bus stays up: nothing discharges it once the diodes block.
        assert!((p.bus_v() - y[2]).abs() < 1e-9);
        // The plan's peak bus voltage.
        let plan = m
            .rail_return(
                12.0,
                20.0,
                0.02,
                ReturnPath::Diodes { diode_drop_v: 0.7 },
                Rail::Capacitor {
                    capacitance_f: c as f32,
                },
            )
            .unwrap();
        assert!((f64::from(plan.peak_bus_v) / y[2] - 1.0).abs() < 1e-6);
        // With the supply able to sink, the bus stays at 12 V.
        let mut s = spec();
        s.bus_capacitance_f = c;
        let mut p = plant(s);
        p.settle_forward();
        p.set_bridge(BridgeMode::Coast);
        p.advance_to(20e-3);
        assert_eq!(p.peak_bus_v(), 12.0);
    }
}

#[test]
fn source_resistance_and_bus_capacitor() {
    let mut s = spec();
    s.source_resistance_ohm = 0.2;
    s.bus_capacitance_f = 470e-6;
    s.switch_on_resistance_ohm = 0.05;
    let mut p = plant(s);
    p.set_bridge(BridgeMode::Forward);
    let reference = Ref {
        rs: 0.2,
        c: 470e-6,
        r_sw: 0.05,
        ..Ref::new(Mode::Forward)
    };
    let mut y = state(&p);
    for n in 1..=30 {
        p.advance_to(n as f64 * 1e-3);
        y = reference.run(y, 1e-3);
        assert_states(&format!("{n} ms"), &state(&p), &y, 1e-9);
    }
    // The bus dipped below the supply while the start current flowed.
    assert!(p.bus_v() < 12.0);
}

/// PWM periods by the reference: on in the forward topology, off in the decay's topology, the
/// fast decay's current stopping at zero when the diodes block.
fn pwm_reference(
    mut y: Vector6<f64>,
    duty: f64,
    period: f64,
    decay: Decay,
    periods: usize,
) -> Vector6<f64> {
    let r = Ref::new(Mode::Forward);
    for _ in 0..periods {
        y = r.run(y, duty * period);
        let off = (1.0 - duty) * period;
        match decay {
            Decay::Slow => y = r.with(Mode::Brake).run(y, off),
            Decay::Fast => {
                let coast = r.with(Mode::CoastPos);
                let end = coast.run(y, off);
                if end[0] > 0.0 {
                    y = end;
                } else {
                    let (t0, mut z) = coast.current_zero(y, off, off / 8.0);
                    z[0] = 0.0;
                    y = r.with(Mode::CoastBlocked).run(z, off - t0);
                }
            }
        }
    }
    y
}

#[test]
fn pwm_with_either_decay() {
    for decay in [Decay::Slow, Decay::Fast] {
        for duty in [0.3, 0.7] {
            let mut p = plant(spec());
            p.advance_pwm(BridgeMode::Forward, duty, 50e-6, decay, 20e-3)
                .unwrap();
            let want = pwm_reference(state(&plant(spec())), duty, 50e-6, decay, 400);
            assert_states(&format!("{decay:?} {duty}"), &state(&p), &want, 1e-8);
        }
    }
    // Fast decay at low duty runs discontinuous: the diodes block every period.
    let mut p = plant(spec());
    p.advance_pwm(BridgeMode::Forward, 0.3, 50e-6, Decay::Fast, 20e-3)
        .unwrap();
    let blocks = p
        .events()
        .iter()
        .filter(|e| e.kind == MotorEventKind::DiodesBlock)
        .count();
    assert!(blocks > 100, "{blocks}");
}

#[test]
fn jam_and_load_steps() {
    let mut p = plant(spec());
    p.set_load_profile(LoadProfile {
        steps: vec![(0.0, 0.02), (0.1, 0.1)],
        jam_at_s: Some(0.15),
    });
    p.set_bridge(BridgeMode::Forward);
    p.advance_to(0.1);
    let mut y = state(&p);
    // 0.1 ..= 0.15 s under the heavier load, then locked.
    p.advance_to(0.15);
    y = Ref {
        load: 0.1,
        ..Ref::new(Mode::Forward)
    }
    .run(y, 0.05);
    assert_states("heavier load", &state(&p), &y, 1e-9);
    y[1] = 0.0;
    p.advance_to(0.16);
    let y = Ref {
        load: 0.1,
        jammed: true,
        ..Ref::new(Mode::Forward)
    }
    .run(y, 0.01);
    assert_states("jammed", &state(&p), &y, 1e-9);
    assert!(p.jammed());
}

#[test]
fn copper_heating_follows_the_thermal_model() {
    // Locked rotor at 12 V from 20 °C into 20 K/W, 5 J/K: the winding heats while its
    // resistance (IEC 60028 copper) rises and the stall current falls. Reference: Dop853 on the
    // continuous model L dI/dt = V − R(T)·I, C dT/dt = R(T)·I² − (T − T_a)/R_th; the plant
    // updates the temperature every 1 ms from the mean loss (zero-order hold): the resistance
    // lags by half a step, so the loss is off by about |dP/dT|·(dT/dt)·0.5 ms ≈ 0.38 W/K ·
    // 15 K/s · 0.5 ms ≈ 3 mW, about 1.1 mK after 2 s; the tolerance is 2 mK.
    struct Heat;
    impl System<f64, Vector6<f64>> for Heat {
        fn system(&self, _t: f64, y: &Vector6<f64>, dy: &mut Vector6<f64>) {
            let r = R * (1.0 + 0.00393 * (y[0] - 20.0));
            dy[0] = (r * y[1] * y[1] - (y[0] - 20.0) / 20.0) / 5.0;
            dy[1] = (VS - r * y[1]) / L;
        }
    }
    let mut s = spec();
    s.thermal = Some(Thermal {
        r_th_k_per_w: 20.0,
        c_th_j_per_k: 5.0,
        ambient_c: 20.0,
    });
    let mut p = plant(s);
    p.jam();
    p.set_bridge(BridgeMode::Forward);
    p.advance_to(2.0);
    let mut sol = Dop853::new(
        Heat,
        0.0,
        2.0,
        2.0,
        Vector6::new(20.0, 0.0, 0.0, 0.0, 0.0, 0.0),
        1e-12,
        1e-12,
    );
    sol.set_output(OutputType::Sparse);
    sol.integrate().unwrap();
    let want = sol.y_out().last().unwrap()[0];
    assert!(
        (p.winding_temp_c() - want).abs() < 2e-3,
        "{} vs {want}",
        p.winding_temp_c()
    );
    assert!(p.winding_temp_c() > 40.0);
    // The current follows the hotter winding: V/R(T).
    let r = R * (1.0 + 0.00393 * (p.winding_temp_c() - 20.0));
    assert!(
        (p.current_a() - VS / r).abs() < 1e-3,
        "{} vs {}",
        p.current_a(),
        VS / r
    );
}
