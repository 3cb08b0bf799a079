//! Unit and property tests of the motor plan routines.

use super::*;
use crate::Error;
use crate::bounds::Range;
use crate::testing::motor64::M;
use crate::testing::{isclose, ref64};
use proptest::prelude::*;
use proptest::test_runner::RngSeed;

/// CHECKS C5.1 motor (values of the reference sheet, invented for the greenhouse vent motor).
fn c51() -> Motor {
    super::test_vent::vent()
}

#[test]
fn reference_sheet_c51() {
    // CHECKS C5.1 (computed: closed forms, peaks cross-checked with scipy solve_ivp, rtol
    // 1e-11): V 12 V, R 1.5 Ω, L 2 mH, k 0.03, J 2e-5, b 1e-6, load 0.02 N·m.
    let m = c51();
    assert!(isclose(
        f64::from(m.stall_current_a(12.0, 20.0).unwrap()),
        8.0,
        1e-6,
        0.0
    ));
    assert!(isclose(
        f64::from(m.stall_torque_nm(12.0, 20.0).unwrap()),
        0.24,
        1e-6,
        0.0
    ));
    let tau_e = f64::from(m.electrical_time_constant_s(20.0).unwrap());
    assert!(isclose(tau_e, 2e-3 / 1.5, 1e-6, 0.0));
    let s = m.steady_state(12.0, 20.0, 0.02).unwrap();
    assert!(
        isclose(f64::from(s.speed_rad_s), 366.057, 1e-5, 0.0),
        "{s:?}"
    );
    assert!(
        isclose(f64::from(s.current_a), 0.678869, 1e-5, 0.0),
        "{s:?}"
    );
    let tau_m = f64::from(m.mechanical_time_constant_s(20.0).unwrap());
    assert!(isclose(tau_m, 33.278e-3, 1e-4, 0.0), "{tau_m}");
    let ke = f64::from(m.kinetic_energy_j(s.speed_rad_s).unwrap());
    assert!(isclose(ke, 1.33997, 1e-5, 0.0), "{ke}");
    let start = m.start_peak(12.0, 20.0, 0.02).unwrap();
    assert!(
        isclose(f64::from(start.current_a), 7.3027, 1e-4, 0.0),
        "{start:?}"
    );
    let ts = f64::from(start.time_s.unwrap());
    assert!((ts - 4.68e-3).abs() < 0.01e-3, "{ts}");
    let rev = m.reversal_peak(12.0, 20.0, 0.02).unwrap();
    assert!(
        isclose(f64::from(rev.current_a), -13.797, 1e-4, 0.0),
        "{rev:?}"
    );
    let tr = f64::from(rev.time_s.unwrap());
    assert!((tr - 4.56e-3).abs() < 0.01e-3, "{tr}");
    let brake = m.brake_peak(12.0, 20.0, 0.02).unwrap();
    assert!(
        isclose(f64::from(brake.magnitude_a()), 6.5593, 1e-4, 0.0),
        "{brake:?}"
    );
    // Below the simple bounds: stall current for the start, (V + k·ω)/R for the reversal.
    assert!(start.magnitude_a() < 8.0);
    assert!(f64::from(rev.magnitude_a()) < (12.0 + 0.03 * 366.057) / 1.5);
}

#[test]
fn winding_follows_copper_like_the_coil() {
    // The motor's winding resistance is the coil model's (IEC 60028, α₂₀ = 0.00393 /K).
    let m = c51();
    let want = ref64::copper(1.5, 20.0, 85.0);
    assert!(isclose(
        f64::from(m.resistance_ohm(85.0).unwrap()),
        want,
        1e-6,
        0.0
    ));
    assert_eq!(
        m.resistance_ohm(85.0).unwrap(),
        m.winding().resistance_ohm(85.0).unwrap()
    );
    // The stall current falls with temperature exactly by the copper factor.
    let ratio = m.stall_current_a(12.0, -40.0).unwrap() / m.stall_current_a(12.0, 85.0).unwrap();
    let want = ref64::copper(1.5, 20.0, 85.0) / ref64::copper(1.5, 20.0, -40.0);
    assert!(isclose(f64::from(ratio), want, 1e-6, 0.0));
}

#[test]
fn stall_and_missing_inertia_are_errors() {
    let m = c51();
    // At and above the stall torque 0.24 N·m the motor stalls.
    for load in [0.24f32, 0.3] {
        match m.steady_state(12.0, 20.0, load) {
            Err(Error::Unreachable {
                param: "load_torque_nm",
                limit,
                ..
            }) => assert!(isclose(f64::from(limit), 0.24, 1e-6, 0.0)),
            other => panic!("{other:?}"),
        }
    }
    assert!(matches!(
        m.reversal_peak(12.0, 20.0, 0.3),
        Err(Error::Unreachable { .. })
    ));
    let no_j = MotorParams::new(2e-3, 1.5, 0.03).validate().unwrap();
    assert!(no_j.steady_state(12.0, 20.0, 0.02).is_ok());
    assert_eq!(
        no_j.start_peak(12.0, 20.0, 0.0).unwrap_err(),
        Error::NotPositive {
            param: "inertia_kg_m2"
        }
    );
    assert_eq!(
        MotorParams::new(2e-3, 1.5, 0.0)
            .validate()
            .unwrap_err()
            .param(),
        "torque_constant_nm_per_a"
    );
    assert_eq!(
        m.steady_state(12.0, 20.0, -0.1).unwrap_err().param(),
        "load_torque_nm"
    );
    assert_eq!(
        m.steady_state(0.0, 20.0, 0.0).unwrap_err().param(),
        "supply_v"
    );
}

#[test]
fn underdamped_and_critical_cases() {
    // A light rotor with a large winding inductance rings: α = 260, ω₀ ≈ 2500 rad/s.
    let light = MotorParams::new(10e-3, 5.0, 0.05)
        .with_inertia_kg_m2(4e-8)
        .validate()
        .unwrap();
    let d = light.dynamics(20.0, true).unwrap();
    let (alpha, w0sq) = d.alpha_w0sq();
    assert!(alpha * alpha < w0sq, "underdamped");
    let mm = M {
        r: 5.0,
        l: 10e-3,
        k: 0.05,
        j: 4e-8,
        b: 0.0,
    };
    for (got, want) in [
        (
            light.start_peak(12.0, 20.0, 0.0).unwrap(),
            mm.peak(12.0, 0.0, 0.0, 0.0),
        ),
        (light.brake_peak(12.0, 20.0, 0.0).unwrap(), {
            let (i0, w0) = mm.steady(12.0, 0.0);
            mm.peak(0.0, 0.0, i0, w0)
        }),
    ] {
        assert!(
            isclose(f64::from(got.magnitude_a()), want, 1e-6, 0.0),
            "{got:?} {want}"
        );
    }
    // Critically damped: choose J so that α² = ω₀² exactly in f64 terms is not required; the
    // routine is continuous through it (J on both sides of the critical value).
    // α² = ω₀²  ⇔  (R/L)²/4 = k²/(L·J) for b = 0  ⇔  J = 4·k²·L/R².
    let jc = 4.0 * 0.05f32 * 0.05 * 10e-3 / 25.0;
    let peaks: [f32; 3] = [0.999, 1.0, 1.001].map(|f| {
        MotorParams::new(10e-3, 5.0, 0.05)
            .with_inertia_kg_m2(jc * f)
            .validate()
            .unwrap()
            .start_peak(12.0, 20.0, 0.0)
            .unwrap()
            .current_a
    });
    let crit = M {
        r: 5.0,
        l: 10e-3,
        k: 0.05,
        j: f64::from(jc),
        b: 0.0,
    }
    .peak(12.0, 0.0, 0.0, 0.0);
    assert!(
        isclose(f64::from(peaks[1]), crit, 1e-5, 0.0),
        "{peaks:?} {crit}"
    );
    assert!((peaks[0] - peaks[2]).abs() < 2e-3 * peaks[1], "{peaks:?}");
}

#[test]
fn no_overshoot_reports_the_final_value() {
    // Friction-dominated (b/J = 10⁴ /s against R/L = 750 /s): overdamped with p < 0 in the
    // module docs, so the start current rises monotonically to its final value; the supremum
    // has no time.
    let m = MotorParams::new(2e-3, 1.5, 0.03)
        .with_inertia_kg_m2(1e-5)
        .with_friction_nm_s_per_rad(0.1)
        .validate()
        .unwrap();
    let p = m.start_peak(12.0, 20.0, 0.0).unwrap();
    let s = m.steady_state(12.0, 20.0, 0.0).unwrap();
    assert_eq!(p.time_s, None, "{p:?}");
    assert_eq!(p.current_a, s.current_a);
    let mm = M {
        r: 1.5,
        l: 2e-3,
        k: 0.03,
        j: 1e-5,
        b: 0.1,
    };
    assert!(isclose(
        f64::from(p.current_a),
        mm.peak(12.0, 0.0, 0.0, 0.0),
        1e-6,
        0.0
    ));
}

#[test]
fn coast_returns_charge_and_lifts_the_bus() {
    let m = c51();
    let path = ReturnPath::Diodes { diode_drop_v: 0.7 };
    let sink = m.rail_return(12.0, 20.0, 0.02, path, Rail::Sinks).unwrap();
    let mm = M {
        r: 1.5,
        l: 2e-3,
        k: 0.03,
        j: 2e-5,
        b: 1e-6,
    };
    let (q, t0) = mm.returned_sink(12.0, 0.02, 1.4);
    assert!(
        isclose(f64::from(sink.charge_c), q, 1e-6, 0.0),
        "{sink:?} {q}"
    );
    assert!(isclose(f64::from(sink.duration_s), t0, 1e-6, 0.0));
    assert!(isclose(f64::from(sink.energy_j), 12.0 * q, 1e-6, 0.0));
    assert_eq!(sink.peak_bus_v, 12.0);
    let cap = m
        .rail_return(
            12.0,
            20.0,
            0.02,
            path,
            Rail::Capacitor {
                capacitance_f: 10e-6,
            },
        )
        .unwrap();
    let (qc, tc) = mm.returned_cap(12.0, 0.02, 1.4, 10e-6);
    assert!(
        isclose(f64::from(cap.charge_c), qc, 1e-6, 0.0),
        "{cap:?} {qc}"
    );
    assert!(isclose(f64::from(cap.duration_s), tc, 1e-5, 0.0));
    assert!(isclose(
        f64::from(cap.peak_bus_v),
        12.0 + qc / 10e-6,
        1e-6,
        0.0
    ));
    // Energy into the capacitor alone equals its energy gain ½C(V₁² − V₀²).
    let gain = 0.5 * 10e-6 * (f64::from(cap.peak_bus_v).powi(2) - 144.0);
    assert!(isclose(f64::from(cap.energy_j), gain, 1e-5, 0.0));
    // The switches of a reversal return more than the diodes (no 1.4 V in the loop).
    let rev = m
        .rail_return(12.0, 20.0, 0.02, ReturnPath::Switches, Rail::Sinks)
        .unwrap();
    assert!(rev.charge_c > sink.charge_c);
}

#[test]
fn soft_start_ramp_meets_its_limit() {
    let m = c51();
    assert_eq!(
        m.ramp_start_peak(12.0, 20.0, 0.02, 0.0).unwrap(),
        m.start_peak(12.0, 20.0, 0.02).unwrap()
    );
    let ramp = m.soft_start_ramp_s(12.0, 20.0, 0.02, 3.0).unwrap();
    assert!(ramp > 0.0);
    let at = m
        .ramp_start_peak(12.0, 20.0, 0.02, ramp)
        .unwrap()
        .magnitude_a();
    assert!(at <= 3.0 && at > 2.99, "{at}");
    let shorter = m
        .ramp_start_peak(12.0, 20.0, 0.02, 0.99 * ramp)
        .unwrap()
        .magnitude_a();
    assert!(shorter > 3.0, "{shorter}");
    // A limit already met by a step needs no ramp; one below the running current cannot be met.
    assert_eq!(m.soft_start_ramp_s(12.0, 20.0, 0.02, 8.0).unwrap(), 0.0);
    assert!(matches!(
        m.soft_start_ramp_s(12.0, 20.0, 0.02, 0.5),
        Err(Error::Unreachable {
            param: "current_limit_a",
            ..
        })
    ));
}

#[test]
fn ramp_peak_matches_a_fine_simulation() {
    // Reference: RK4 at 0.1 µs steps of the same equations with the ramped voltage (computed).
    let (r, l, k, j, b, load, v, ramp) = (1.5, 2e-3, 0.03, 2e-5, 1e-6, 0.02, 12.0, 20e-3);
    let f = |t: f64, y: [f64; 2]| {
        let u = if t < ramp { v * t / ramp } else { v };
        [
            (u - r * y[0] - k * y[1]) / l,
            (k * y[0] - b * y[1] - load) / j,
        ]
    };
    let h = 1e-7;
    let (mut y, mut t, mut best) = ([0.0f64; 2], 0.0, 0.0f64);
    let mut t_200: Option<f64> = None;
    while t < 0.2 {
        let add = |a: [f64; 2], d: [f64; 2], s: f64| [a[0] + s * d[0], a[1] + s * d[1]];
        let k1 = f(t, y);
        let k2 = f(t + h / 2.0, add(y, k1, h / 2.0));
        let k3 = f(t + h / 2.0, add(y, k2, h / 2.0));
        let k4 = f(t + h, add(y, k3, h));
        for m in 0..2 {
            y[m] += h / 6.0 * (k1[m] + 2.0 * k2[m] + 2.0 * k3[m] + k4[m]);
        }
        t += h;
        best = best.max(y[0].abs());
        if t_200.is_none() && y[1] >= 200.0 {
            t_200 = Some(t);
        }
    }
    let got = c51().ramp_start_peak(12.0, 20.0, 0.02, 20e-3).unwrap();
    assert!(
        isclose(f64::from(got.magnitude_a()), best, 1e-5, 0.0),
        "{got:?} {best}"
    );
    // The time to 200 rad/s, to the simulation's step.
    let t = f64::from(
        c51()
            .ramp_time_to_speed_s(12.0, 20.0, 0.02, 20e-3, 200.0)
            .unwrap(),
    );
    assert!((t - t_200.unwrap()).abs() <= 2.0 * h, "{t} vs {t_200:?}");
    // A speed above the final one is never reached.
    assert!(matches!(
        c51().ramp_time_to_speed_s(12.0, 20.0, 0.02, 20e-3, 400.0),
        Err(Error::Unreachable {
            param: "speed_rad_s",
            ..
        })
    ));
    // With a step (no ramp) sooner.
    let step = f64::from(
        c51()
            .ramp_time_to_speed_s(12.0, 20.0, 0.02, 0.0, 200.0)
            .unwrap(),
    );
    assert!(step < t && step > 0.0);
}

#[test]
fn spread_corners_are_the_physical_ones() {
    let s = MotorSpread::new(
        MotorParams::new(2e-3, 1.5, 0.03)
            .with_inertia_kg_m2(2e-5)
            .with_friction_nm_s_per_rad(1e-6),
        Range::new("supply_v", 10.8, 13.2).unwrap(),
        Range::new("temp_c", -20.0, 80.0).unwrap(),
        0.02,
        [0.2, 0.1, 0.05, 0.1],
    )
    .unwrap();
    let stall = s.stall_current_a().unwrap();
    let r_min = ref64::copper(1.35, 20.0, -20.0);
    assert!(
        isclose(f64::from(stall.max), 13.2 / r_min, 1e-5, 0.0),
        "{stall:?}"
    );
    let speed = s.steady_speed_rad_s().unwrap();
    assert_eq!(speed.max_at.supply_v, 13.2);
    // The reversal peak is largest at the highest supply and the coldest winding.
    let rev = s.reversal_peak_current_a().unwrap();
    assert_eq!(rev.max_at.supply_v, 13.2);
    assert_eq!(rev.max_at.temp_c, -20.0);
    let nominal = c51().reversal_peak(12.0, 20.0, 0.02).unwrap().magnitude_a();
    assert!(rev.min < nominal && nominal < rev.max);
    let bus = s.coast_peak_bus_v(0.7, 100e-6).unwrap();
    assert!(bus.max > 13.2 && bus.min > 10.8);
}

/// Motors over the documented range of the module docs.
fn motor_strategy() -> impl Strategy<Value = (f32, f32, f32, f32, f32)> {
    (
        -4.0f32..-1.0, // log10 L: 100 µH ..= 100 mH
        -1.0f32..1.7,  // log10 R: 0.1 ..= 50 Ω
        -3.0f32..-0.3, // log10 k: 1e-3 ..= 0.5 N·m/A
        -6.0f32..-3.0, // log10 J: 1e-6 ..= 1e-3 kg·m²
        0.0f32..1e-4,  // b
    )
        .prop_map(|(l, r, k, j, b)| {
            (
                10f32.powf(l),
                10f32.powf(r),
                10f32.powf(k),
                10f32.powf(j),
                b,
            )
        })
}

fn config(cases: u32) -> ProptestConfig {
    ProptestConfig {
        cases,
        rng_seed: RngSeed::Fixed(0x004d_4f54_4f52),
        ..ProptestConfig::default()
    }
}

fn build(p: (f32, f32, f32, f32, f32), temp: f32) -> (Motor, M) {
    let (l, r, k, j, b) = p;
    let m = MotorParams::new(l, r, k)
        .with_inertia_kg_m2(j)
        .with_friction_nm_s_per_rad(b)
        .validate()
        .unwrap();
    let mm = M {
        r: ref64::copper(f64::from(r), 20.0, f64::from(temp)),
        l: f64::from(l),
        k: f64::from(k),
        j: f64::from(j),
        b: f64::from(b),
    };
    (m, mm)
}

proptest! {
    #![proptest_config(config(256))]

    #[test]
    fn steady_state_matches_f64(
        p in motor_strategy(), v in 1.0f32..100.0, temp in -40.0f32..150.0, frac in 0.0f32..0.9,
    ) {
        let (m, mm) = build(p, temp);
        let load = frac * m.stall_torque_nm(v, temp).unwrap();
        let s = m.steady_state(v, temp, load).unwrap();
        let (i, w) = mm.steady(f64::from(v), f64::from(load));
        prop_assert!(isclose(f64::from(s.speed_rad_s), w, 1e-4, 0.0), "{s:?} {w}");
        prop_assert!(isclose(f64::from(s.current_a), i, 1e-4, 1e-12), "{s:?} {i}");
        let tau_m = f64::from(m.mechanical_time_constant_s(temp).unwrap());
        prop_assert!(isclose(tau_m, mm.j * mm.r / (mm.k * mm.k + mm.r * mm.b), 1e-4, 0.0));
    }

    #[test]
    fn peaks_match_f64(
        p in motor_strategy(), v in 1.0f32..100.0, temp in -40.0f32..150.0, frac in 0.0f32..0.9,
    ) {
        let (m, mm) = build(p, temp);
        let load = frac * m.stall_torque_nm(v, temp).unwrap();
        let (v64, t64) = (f64::from(v), f64::from(load));
        let (i0, w0) = mm.steady(v64, t64);
        let cases = [
            (m.start_peak(v, temp, load).unwrap(), mm.peak(v64, t64, 0.0, 0.0)),
            (m.reversal_peak(v, temp, load).unwrap(), mm.peak(-v64, t64, i0, w0)),
            (m.brake_peak(v, temp, load).unwrap(), mm.peak(0.0, t64, i0, w0)),
        ];
        for (got, want) in cases {
            prop_assert!(isclose(f64::from(got.magnitude_a()), want, 1e-4, 0.0), "{got:?} vs {want}");
        }
    }
}

proptest! {
    #![proptest_config(config(48))]

    /// Loads at which the linear model's coast current returns to zero for good (no
    /// overhauling: `k·T ≤ b·(V + V_path)`), with a sinking supply and with the capacitor alone.
    #[test]
    fn rail_return_matches_f64(
        p in motor_strategy(), v in 5.0f32..60.0, frac in 0.0f32..0.9, vf in 0.0f32..1.5,
        log_c in -5.0f32..-2.0,
    ) {
        let (m, mm) = build(p, 20.0);
        let drop = 2.0 * f64::from(vf);
        let overhaul = (mm.b * (f64::from(v) + drop) / mm.k) as f32;
        let load = frac * m.stall_torque_nm(v, 20.0).unwrap().min(overhaul);
        let path = ReturnPath::Diodes { diode_drop_v: vf };
        let c = 10f32.powf(log_c);
        for (rail, cap) in [(Rail::Sinks, None), (Rail::Capacitor { capacitance_f: c }, Some(f64::from(c)))] {
            let got = m.rail_return(v, 20.0, load, path, rail).unwrap();
            let (q, t0) = match cap {
                None => mm.returned_sink(f64::from(v), f64::from(load), drop),
                Some(c) => mm.returned_cap(f64::from(v), f64::from(load), drop, c),
            };
            prop_assert!(isclose(f64::from(got.charge_c), q, 1e-4, 1e-15), "{got:?} vs {q}");
            prop_assert!(isclose(f64::from(got.duration_s), t0, 1e-4, 1e-15), "{got:?} vs {t0}");
            let rise = f64::from(got.peak_bus_v) - f64::from(v);
            let want = cap.map_or(0.0, |c| q / c);
            prop_assert!(isclose(rise, want, 1e-4, 1e-5), "{got:?} vs {want}");
        }
    }

    /// Any load up to 0.9 of the stall torque into a sinking supply: where the routine finds
    /// the zero it matches the reference; where it reports the load, the linear model's final
    /// coast current is positive (the load drives the rotor backwards and the winding keeps
    /// generating into the rail).
    #[test]
    fn rail_return_with_heavy_loads(
        p in motor_strategy(), v in 5.0f32..60.0, frac in 0.0f32..0.9, vf in 0.0f32..1.5,
    ) {
        let (m, mm) = build(p, 20.0);
        let load = frac * m.stall_torque_nm(v, 20.0).unwrap();
        let drop = 2.0 * f64::from(vf);
        let path = ReturnPath::Diodes { diode_drop_v: vf };
        match m.rail_return(v, 20.0, load, path, Rail::Sinks) {
            Ok(got) => {
                let (q, t0) = mm.returned_sink(f64::from(v), f64::from(load), drop);
                prop_assert!(isclose(f64::from(got.charge_c), q, 1e-4, 1e-15), "{got:?} vs {q}");
                prop_assert!(isclose(f64::from(got.duration_s), t0, 1e-4, 1e-15), "{got:?} vs {t0}");
            }
            Err(e) => {
                let i_inf = mm.steady(-(f64::from(v) + drop), f64::from(load)).0;
                prop_assert_eq!(e.param(), "load_torque_nm");
                prop_assert!(i_inf > 0.0, "gave up although the current must reach zero: {e:?}");
            }
        }
    }
}
