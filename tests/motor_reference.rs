//! The motor plan routines against an independent solution of the same equations by a
//! general-purpose solver (`ode_solvers` Dop853, an explicit Runge–Kutta 8(5,3) pair from
//! crates.io), and the steady state and time constants against the textbook forms.
//!
//! The equations are written here from the textbook DC machine model (Fitzgerald, Kingsley,
//! Umans, *Electric Machinery*, ch. 7, from memory): `L di/dt = v − R i − k ω`,
//! `J dω/dt = k i − b ω − T`, plus `dq/dt = i` for the charge into the rail and the time as a
//! fourth state (the ramp's voltage depends on it). Peaks are found
//! from dense output refined by golden-section search on re-integrations, zeros of the
//! current by bisection on re-integrations: nothing is taken from the routines' closed forms.
//! Label of every check: computed (plan routine cross-checked against a general-purpose ODE
//! solver), unless a textbook form is named beside it.

use lenz::motor::{Motor, MotorParams, Rail, ReturnPath};
use lenz_checks::{assert_close, copper_resistance};
use ode_solvers::{Dop853, OutputType, System, Vector4};

#[derive(Clone, Copy)]
enum Drive {
    /// A constant applied voltage.
    Const(f64),
    /// A linear ramp from 0 to `v` over `ramp` s, then `v`.
    Ramp { v: f64, ramp: f64 },
    /// The winding returns current into the rail against `v0 + drop` (plus `q/C` when the
    /// rail is the capacitor alone).
    Return { v0: f64, drop: f64, c: Option<f64> },
}

#[derive(Clone, Copy)]
struct Ode {
    r: f64,
    l: f64,
    k: f64,
    j: f64,
    b: f64,
    load: f64,
    drive: Drive,
}

impl System<f64, Vector4<f64>> for Ode {
    /// The time is carried as the fourth state (`dt/dt = 1`) so the system is autonomous: the
    /// solver then sees the ramp's time dependence through its states.
    fn system(&self, _t: f64, y: &Vector4<f64>, dy: &mut Vector4<f64>) {
        let t = y[3];
        let v = match self.drive {
            Drive::Const(v) => v,
            Drive::Ramp { v, ramp } => {
                if t < ramp {
                    v * t / ramp
                } else {
                    v
                }
            }
            Drive::Return { v0, drop, c } => -(v0 + drop + c.map_or(0.0, |c| y[2] / c)),
        };
        dy[0] = (v - self.r * y[0] - self.k * y[1]) / self.l;
        dy[1] = (self.k * y[0] - self.b * y[1] - self.load) / self.j;
        dy[2] = y[0];
        dy[3] = 1.0;
    }
}

const RTOL: f64 = 1e-12;
const ATOL: f64 = 1e-12;

impl Ode {
    fn with(self, drive: Drive) -> Self {
        Self { drive, ..self }
    }

    /// The end of a ramp, where the right-hand side has a kink: integrations stop there and
    /// restart, so the solver never steps across it.
    fn kink(&self) -> Option<f64> {
        match self.drive {
            Drive::Ramp { ramp, .. } => Some(ramp),
            _ => None,
        }
    }

    /// State `dt` after `t0` from `y0`.
    fn state_after(&self, t0: f64, y0: Vector4<f64>, dt: f64) -> Vector4<f64> {
        if dt <= 0.0 {
            return y0;
        }
        if let Some(tk) = self.kink()
            && t0 < tk
            && t0 + dt > tk
        {
            let mid = self.state_after(t0, y0, tk - t0);
            return self.state_after(tk, mid, t0 + dt - tk);
        }
        let mut s = Dop853::from_param(
            *self,
            t0,
            t0 + dt,
            dt,
            y0,
            RTOL,
            ATOL,
            0.9,
            0.0,
            0.333,
            6.0,
            dt,
            0.0,
            10_000_000,
            // No stiffness test: the ramp's kink and the stiff test case are integrated through
            // with small steps instead of aborting.
            u32::MAX,
            OutputType::Sparse,
        );
        s.integrate().expect("reference integrates");
        *s.y_out().last().unwrap()
    }

    /// Dense samples every `dx` from `t0` to `t1` (and at a kink).
    fn dense(&self, t0: f64, y0: Vector4<f64>, t1: f64, dx: f64) -> (Vec<f64>, Vec<Vector4<f64>>) {
        if let Some(tk) = self.kink()
            && t0 < tk
            && t1 > tk
        {
            let (mut ts, mut ys) = self.dense(t0, y0, tk, dx);
            let (t2, y2) = self.dense(tk, self.state_after(t0, y0, tk - t0), t1, dx);
            ts.extend(t2.into_iter().skip(1));
            ys.extend(y2.into_iter().skip(1));
            return (ts, ys);
        }
        let mut s = Dop853::from_param(
            *self,
            t0,
            t1,
            dx,
            y0,
            RTOL,
            ATOL,
            0.9,
            0.0,
            0.333,
            6.0,
            (t1 - t0) / 64.0,
            0.0,
            10_000_000,
            // No stiffness test: the ramp's kink and the stiff test case are integrated through
            // with small steps instead of aborting.
            u32::MAX,
            OutputType::Dense,
        );
        s.integrate().expect("reference integrates");
        let (mut ts, mut ys) = (s.x_out().clone(), s.y_out().clone());
        // The end state from a fresh integration to exactly `t1` (a safeguard: the last dense
        // value is interpolated at an output point that may fall a rounding error off `t1`).
        if let Some(last) = ys.last_mut() {
            *last = self.state_after(t0, y0, t1 - t0);
        }
        if let Some(t) = ts.last_mut() {
            *t = t1;
        }
        (ts, ys)
    }

    /// Largest |i| over `[0, horizon]` from `y0`: dense samples, then golden-section search
    /// around the best sample, each probe a fresh integration from the sample before it.
    fn peak(&self, y0: Vector4<f64>, horizon: f64, dx: f64) -> (f64, f64) {
        let (ts, ys) = self.dense(0.0, y0, horizon, dx);
        let (k, _) = ys
            .iter()
            .enumerate()
            .max_by(|a, b| a.1[0].abs().total_cmp(&b.1[0].abs()))
            .unwrap();
        if k == 0 || k + 1 == ys.len() {
            return (ys[k][0].abs(), ts[k]);
        }
        let (t_a, y_a) = (ts[k - 1], ys[k - 1]);
        let f = |t: f64| self.state_after(t_a, y_a, t - t_a)[0].abs();
        let (mut a, mut b) = (ts[k - 1], ts[k + 1]);
        let g = 0.618_033_988_749_894_9;
        for _ in 0..80 {
            let (x1, x2) = (b - g * (b - a), a + g * (b - a));
            if f(x1) > f(x2) {
                b = x2;
            } else {
                a = x1;
            }
        }
        let t = 0.5 * (a + b);
        (f(t), t)
    }

    /// First zero of the current from a positive start: dense samples, then bisection.
    fn first_zero(&self, y0: Vector4<f64>, horizon: f64, dx: f64) -> (f64, Vector4<f64>) {
        let (ts, ys) = self.dense(0.0, y0, horizon, dx);
        let k = ys
            .iter()
            .position(|y| y[0] <= 0.0)
            .expect("the current reaches zero");
        let (t_a, y_a) = (ts[k - 1], ys[k - 1]);
        let (mut a, mut b) = (t_a, ts[k]);
        for _ in 0..100 {
            let m = 0.5 * (a + b);
            if self.state_after(t_a, y_a, m - t_a)[0] > 0.0 {
                a = m;
            } else {
                b = m;
            }
        }
        let t = 0.5 * (a + b);
        (t, self.state_after(t_a, y_a, t - t_a))
    }
}

/// The reference sheet's vent motor (CHECKS C5.1, invented demo values), at 20 °C.
fn c51() -> (Motor, Ode) {
    let m = MotorParams::new(2e-3, 1.5, 0.03)
        .with_inertia_kg_m2(2e-5)
        .with_friction_nm_s_per_rad(1e-6)
        .validate()
        .unwrap();
    let ode = Ode {
        r: 1.5,
        l: 2e-3,
        k: 0.03,
        j: 2e-5,
        b: 1e-6,
        load: 0.02,
        drive: Drive::Const(12.0),
    };
    (m, ode)
}

fn running(ode: &Ode, v: f64) -> Vector4<f64> {
    // Steady state from the two equations with the derivatives zero (Cramer's rule).
    let det = -ode.r * ode.b - ode.k * ode.k;
    let i = (-ode.b * v - ode.k * ode.load) / det;
    let w = (ode.r * ode.load - ode.k * v) / det;
    Vector4::new(i, w, 0.0, 0.0)
}

/// Start, reversal and brake peaks of one motor against Dop853.
fn check_peaks(m: &Motor, ode: &Ode, v: f32, temp: f32, horizon: f64, dx: f64) {
    let load = ode.load as f32;
    let v64 = f64::from(v);
    let zero = Vector4::new(0.0, 0.0, 0.0, 0.0);
    let run = running(ode, v64);
    let cases = [
        (
            "start",
            m.start_peak(v, temp, load).unwrap(),
            ode.with(Drive::Const(v64)),
            zero,
        ),
        (
            "reversal",
            m.reversal_peak(v, temp, load).unwrap(),
            ode.with(Drive::Const(-v64)),
            run,
        ),
        (
            "brake",
            m.brake_peak(v, temp, load).unwrap(),
            ode.with(Drive::Const(0.0)),
            run,
        ),
    ];
    for (name, got, sys, y0) in cases {
        let (want, at) = sys.peak(y0, horizon, dx);
        assert_close(
            &format!("{name} peak"),
            f64::from(got.magnitude_a()),
            want,
            1e-6,
        );
        if let Some(t) = got.time_s {
            assert!(
                (f64::from(t) - at).abs() < 1e-3 * at + dx * 1e-3,
                "{name} at {t} vs {at}"
            );
        }
    }
}

#[test]
fn peaks_of_the_vent_motor() {
    // CHECKS C5.1 values (computed with scipy solve_ivp, rtol 1e-11): 7.3027 A at ~4.68 ms,
    // 13.797 A at ~4.56 ms, 6.5593 A; here against Dop853 at rtol 1e-12.
    let (m, ode) = c51();
    check_peaks(&m, &ode, 12.0, 20.0, 0.2, 20e-6);
    assert_close(
        "start",
        f64::from(m.start_peak(12.0, 20.0, 0.02).unwrap().current_a),
        7.3027,
        1e-4,
    );
}

#[test]
fn peaks_of_the_vent_motor_hot_winding() {
    // At 85 °C the winding resistance follows copper (IEC 60028); the reference ODE takes it
    // from the f64 copper formula of lenz-checks, independently of the coil model.
    let (m, ode) = c51();
    let hot = Ode {
        r: copper_resistance(1.5, 20.0, 85.0),
        ..ode
    };
    check_peaks(&m, &hot, 13.2, 85.0, 0.2, 20e-6);
}

#[test]
fn peaks_of_an_underdamped_motor() {
    // A light rotor behind a large inductance rings (α = 250 /s, ω₀ ≈ 2500 rad/s).
    let m = MotorParams::new(10e-3, 5.0, 0.05)
        .with_inertia_kg_m2(4e-8)
        .validate()
        .unwrap();
    let ode = Ode {
        r: 5.0,
        l: 10e-3,
        k: 0.05,
        j: 4e-8,
        b: 0.0,
        load: 0.01,
        drive: Drive::Const(12.0),
    };
    check_peaks(&m, &ode, 12.0, 20.0, 0.05, 2e-6);
}

#[test]
fn peaks_of_a_friction_dominated_motor() {
    // Overdamped with b/J ≫ R/L: the start rises to its final value without overshoot.
    let m = MotorParams::new(2e-3, 1.5, 0.03)
        .with_inertia_kg_m2(1e-5)
        .with_friction_nm_s_per_rad(0.1)
        .validate()
        .unwrap();
    let ode = Ode {
        r: 1.5,
        l: 2e-3,
        k: 0.03,
        j: 1e-5,
        b: 0.1,
        load: 0.05,
        drive: Drive::Const(12.0),
    };
    check_peaks(&m, &ode, 12.0, 20.0, 0.05, 5e-6);
}

#[test]
fn ramped_start_peak() {
    let (m, ode) = c51();
    for ramp in [5e-3, 20e-3, 80e-3] {
        let got = m.ramp_start_peak(12.0, 20.0, 0.02, ramp as f32).unwrap();
        let (want, _) = ode.with(Drive::Ramp { v: 12.0, ramp }).peak(
            Vector4::new(0.0, 0.0, 0.0, 0.0),
            0.4,
            20e-6,
        );
        assert_close(
            &format!("ramp {ramp}"),
            f64::from(got.magnitude_a()),
            want,
            1e-6,
        );
    }
    // The shortest ramp for a 3 A limit meets it (peak within the limit, and a 1 % shorter
    // ramp exceeds it), by the reference too.
    let ramp = f64::from(m.soft_start_ramp_s(12.0, 20.0, 0.02, 3.0).unwrap());
    let zero = Vector4::new(0.0, 0.0, 0.0, 0.0);
    let (at, _) = ode
        .with(Drive::Ramp { v: 12.0, ramp })
        .peak(zero, 0.4, 20e-6);
    let (shorter, _) = ode
        .with(Drive::Ramp {
            v: 12.0,
            ramp: 0.99 * ramp,
        })
        .peak(zero, 0.4, 20e-6);
    assert!(at <= 3.0 + 1e-5 && shorter > 3.0, "{at} {shorter}");
}

#[test]
fn energy_returned_to_the_rail() {
    let (m, ode) = c51();
    let run = running(&ode, 12.0);
    for (path, drop) in [
        (ReturnPath::Diodes { diode_drop_v: 0.7 }, 1.4),
        (ReturnPath::Switches, 0.0),
    ] {
        // A supply that sinks: the bus stays at 12 V.
        let got = m.rail_return(12.0, 20.0, 0.02, path, Rail::Sinks).unwrap();
        let sys = ode.with(Drive::Return {
            v0: 12.0,
            drop,
            c: None,
        });
        let (t0, y) = sys.first_zero(run, 0.05, 1e-6);
        assert_close("charge", f64::from(got.charge_c), y[2], 1e-6);
        assert_close("duration", f64::from(got.duration_s), t0, 1e-6);
        assert_close("energy", f64::from(got.energy_j), 12.0 * y[2], 1e-6);
        assert_close("speed at zero", f64::from(got.speed_rad_s), y[1], 1e-6);
        // The capacitor alone: its voltage rises by q/C.
        for c in [10e-6, 100e-6, 1e-3] {
            let got = m
                .rail_return(
                    12.0,
                    20.0,
                    0.02,
                    path,
                    Rail::Capacitor {
                        capacitance_f: c as f32,
                    },
                )
                .unwrap();
            let sys = ode.with(Drive::Return {
                v0: 12.0,
                drop,
                c: Some(c),
            });
            let (t0, y) = sys.first_zero(run, 0.05, 0.2e-6);
            assert_close("cap charge", f64::from(got.charge_c), y[2], 1e-6);
            assert_close("cap duration", f64::from(got.duration_s), t0, 1e-6);
            assert_close("peak bus", f64::from(got.peak_bus_v), 12.0 + y[2] / c, 1e-6);
            let gain = 0.5 * c * ((12.0 + y[2] / c).powi(2) - 144.0);
            assert_close(
                "energy into the capacitor",
                f64::from(got.energy_j),
                gain,
                1e-5,
            );
        }
    }
}

#[test]
fn steady_state_against_the_textbook_and_a_long_run() {
    // Textbook steady state of the DC machine (derivatives zero): ω = (kV − RT)/(k² + Rb),
    // i = (bV + kT)/(k² + Rb); here also reached by a run of 20 mechanical time constants.
    let (m, ode) = c51();
    let s = m.steady_state(12.0, 20.0, 0.02).unwrap();
    let y = ode.state_after(0.0, Vector4::new(0.0, 0.0, 0.0, 0.0), 0.7);
    assert_close("speed", f64::from(s.speed_rad_s), y[1], 1e-6);
    assert_close("current", f64::from(s.current_a), y[0], 1e-5);
    let (k, r, b, t, v) = (0.03f64, 1.5f64, 1e-6f64, 0.02f64, 12.0f64);
    assert_close(
        "speed form",
        f64::from(s.speed_rad_s),
        (k * v - r * t) / (k * k + r * b),
        1e-6,
    );
}

#[test]
fn time_constants_against_the_textbook() {
    // Electrical: with the rotor held (inertia at the accepted maximum) the current rises as
    // a first-order lag and reaches 1 − e⁻¹ = 63.21 % of V/R at τ_e = L/R (first-order step
    // table, reference sheet RLT).
    let held = MotorParams::new(2e-3, 1.5, 0.03)
        .with_inertia_kg_m2(1e3)
        .validate()
        .unwrap();
    let tau_e = f64::from(held.electrical_time_constant_s(20.0).unwrap());
    let ode = Ode {
        r: 1.5,
        l: 2e-3,
        k: 0.03,
        j: 1e3,
        b: 0.0,
        load: 0.0,
        drive: Drive::Const(12.0),
    };
    let y = ode.state_after(0.0, Vector4::new(0.0, 0.0, 0.0, 0.0), tau_e);
    assert_close("i(τ_e)", y[0], 8.0 * (1.0 - (-1.0f64).exp()), 1e-6);
    // Mechanical: with a negligible inductance the speed rises as a first-order lag with
    // τ_m = J·R/(k² + R·b) (J·R/k² for b = 0: R. Krishnan, Electric Motor Drives, ch. 3, from
    // memory), so ω(τ_m) = 63.21 % of the final speed, to within τ_e/τ_m = 2·10⁻⁵.
    let fast = MotorParams::new(1e-6, 1.5, 0.03)
        .with_inertia_kg_m2(2e-5)
        .with_friction_nm_s_per_rad(1e-6)
        .validate()
        .unwrap();
    let tau_m = f64::from(fast.mechanical_time_constant_s(20.0).unwrap());
    let ode = Ode {
        l: 1e-6,
        load: 0.0,
        ..c51().1
    };
    let y = ode.state_after(0.0, Vector4::new(0.0, 0.0, 0.0, 0.0), tau_m);
    let w_final = 0.03 * 12.0 / (0.03 * 0.03 + 1.5 * 1e-6);
    assert_close("ω(τ_m)", y[1], w_final * (1.0 - (-1.0f64).exp()), 5e-5);
}
