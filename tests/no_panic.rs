//! No public function of the plan side panics, whatever f32 it is given: NaN, ±inf,
//! subnormals, zero, negatives and huge values. Every `Ok` result is finite.

use lenz::armature::{
    Armature, ArmatureSpread, GapInductance, GapTable, MagneticCircuit, Mechanics,
};
use lenz::bounds::{CoilSpread, worst_case};
use lenz::kernel::{
    BridgeGuardConfig, BridgeGuardParams, EstimatorConfig, JamConfig, JamParams, MonitorConfig,
    MonitorParams, SenseScale, SpeedErrorTerms, SpeedEstimatorConfig,
};
use lenz::motor::{MotorParams, MotorSpread, Rail, ReturnPath};
use lenz::trip::{Curve, InverseTime, SenseChain, SenseParams, Thermal};
use lenz::{CoilParams, Error, Range};
use proptest::prelude::*;

/// Arbitrary f32 with the edge cases drawn often.
fn wild() -> impl Strategy<Value = f32> {
    prop_oneof![
        3 => any::<f32>(),
        1 => Just(f32::NAN),
        1 => Just(f32::INFINITY),
        1 => Just(f32::NEG_INFINITY),
        1 => Just(0.0f32),
        1 => Just(-0.0f32),
        1 => Just(f32::MIN_POSITIVE / 2.0),
        1 => Just(f32::MAX),
        1 => Just(-1.0f32),
        2 => 1e-3f32..1e3,
    ]
}

fn ok_finite(r: Result<f32, lenz::Error>) -> Result<(), TestCaseError> {
    if let Ok(v) = r {
        prop_assert!(v.is_finite(), "Ok({v}) is not finite");
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2000, ..ProptestConfig::default() })]

    #[test]
    fn coil_routines(
        l in wild(), r in wild(), tref in wild(), alpha in wild(), rs in wild(), vd in wild(),
        v in wild(), t in wild(), i0 in wild(), x in wild(), d in wild(), f in wild(),
    ) {
        let p = CoilParams::new(l, r)
            .with_reference_temp_c(tref)
            .with_alpha20_per_k(alpha)
            .with_switch_resistance_ohm(rs)
            .with_diode_drop_v(vd)
            .with_switch_drop_v(vd);
        // Also a valid coil, so the routines themselves see the wild arguments.
        let valid = CoilParams::new(0.12, 32.0).with_diode_drop_v(0.7).validate().unwrap();
        let coils: Vec<_> = [p.validate().ok(), Some(valid)].into_iter().flatten().collect();
        for c in coils {
            ok_finite(c.resistance_ohm(t))?;
            ok_finite(c.time_constant_s(t))?;
            ok_finite(c.steady_current_a(v, t))?;
            ok_finite(c.stored_energy_j(i0))?;
            ok_finite(c.current_after_a(v, t, i0, x))?;
            ok_finite(c.time_to_current_s(v, t, i0, x))?;
            ok_finite(c.pull_in_time_s(v, t, x))?;
            ok_finite(c.temperature_from_resistance_c(x))?;
            ok_finite(c.temperature_from_steady_current_c(v, x))?;
            if let Ok(s) = c.pwm_steady_state(v, t, d, f) {
                prop_assert!(s.min_a.is_finite() && s.max_a.is_finite() && s.mean_a.is_finite());
                prop_assert!(s.min_a <= s.max_a);
            }
            let _ = EstimatorConfig::new(&c, t, x);
            let _ = EstimatorConfig::with_clamp(&c, t, x, rs, vd, true);
        }
    }

    #[test]
    fn motor_routines(
        l in wild(), r in wild(), k in wild(), j in wild(), b in wild(), rb in wild(),
        v in wild(), t in wild(), load in wild(), x in wild(), y in wild(), z in wild(),
    ) {
        let p = MotorParams::new(l, r, k)
            .with_inertia_kg_m2(j)
            .with_friction_nm_s_per_rad(b)
            .with_bridge_resistance_ohm(rb);
        // Also a valid motor, so the routines themselves see the wild arguments.
        let valid = MotorParams::new(2e-3, 1.5, 0.03)
            .with_inertia_kg_m2(2e-5)
            .with_friction_nm_s_per_rad(1e-6)
            .validate()
            .unwrap();
        let motors: Vec<_> = [p.validate().ok(), Some(valid)].into_iter().flatten().collect();
        for m in motors {
            ok_finite(m.resistance_ohm(t))?;
            ok_finite(m.stall_current_a(v, t))?;
            ok_finite(m.stall_torque_nm(v, t))?;
            if let Ok(s) = m.steady_state(v, t, load) {
                prop_assert!(s.speed_rad_s.is_finite() && s.current_a.is_finite());
            }
            ok_finite(m.electrical_time_constant_s(t))?;
            ok_finite(m.mechanical_time_constant_s(t))?;
            ok_finite(m.kinetic_energy_j(x))?;
            for peak in [
                m.start_peak(v, t, load),
                m.reversal_peak(v, t, load),
                m.brake_peak(v, t, load),
                m.ramp_start_peak(v, t, load, x),
            ]
            .into_iter()
            .flatten()
            {
                prop_assert!(peak.current_a.is_finite());
                prop_assert!(peak.time_s.is_none_or(f32::is_finite));
            }
            ok_finite(m.soft_start_ramp_s(v, t, load, x))?;
            if let Ok((i, w)) = m.state_after(x, t, load, y, z, x) {
                prop_assert!(i.is_finite() && w.is_finite());
            }
            ok_finite(m.brake_peak_from_state(t, load, y, x).map(|p| p.current_a))?;
            ok_finite(m.ramp_time_to_speed_s(v, t, load, x, y))?;
            let _ = SpeedEstimatorConfig::new(&m, t, x, y);
            ok_finite(SpeedEstimatorConfig::error_bound_rad_s(&m, t, &m, v, x, y, &SpeedErrorTerms {
                current_max_a: z, current_step_max_a: x, speed_max_rad_s: y, accel_max_rad_s2: v,
                voltage_error_v: load,
            }))?;
            ok_finite(SpeedEstimatorConfig::pwm_voltage_error_v(&m, t, x, v, y))?;
            let _ = BridgeGuardConfig::new(&m, &BridgeGuardParams {
                supply_v: v, temp_c: t, max_temp_c: t, load_torque_nm: load, current_limit_a: x, tick_s: y,
                dead_time_s: z, reverse_speed_rad_s: x, probe_interval_s: y, resume_margin_rad_s: Some(z),
            });
            for rail in [Rail::Sinks, Rail::Capacitor { capacitance_f: y }] {
                for path in [ReturnPath::Switches, ReturnPath::Diodes { diode_drop_v: z }] {
                    if let Ok(ret) = m.rail_return(v, t, load, path, rail) {
                        for q in [ret.charge_c, ret.energy_j, ret.duration_s, ret.peak_bus_v, ret.speed_rad_s] {
                            prop_assert!(q.is_finite());
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn jam_plan(a in wild(), b in wild(), c in wild(), d in wild(), e in wild()) {
        let _ = JamConfig::new(&JamParams {
            jam_current_a: a, jam_speed_rad_s: b, persistence_s: c, blanking_s: d,
            overload_current_a: Some(e), overload_s: a, open_current_a: Some(b), open_min_duty: c,
            tick_s: d,
        });
    }

    #[test]
    fn motor_spread(v0 in wild(), v1 in wild(), t0 in wild(), t1 in wild(), tol in wild(), load in wild()) {
        let motor = MotorParams::new(2e-3, 1.5, 0.03).with_inertia_kg_m2(2e-5);
        if let (Ok(sv), Ok(st)) = (Range::new("supply_v", v0, v1), Range::new("temp_c", t0, t1))
            && let Ok(s) = MotorSpread::new(motor, sv, st, load, [tol; 4]) {
                for b in [s.stall_current_a(), s.steady_speed_rad_s(), s.start_peak_current_a()]
                    .into_iter()
                    .flatten()
                {
                    prop_assert!(b.min.is_finite() && b.max.is_finite() && b.min <= b.max);
                }
            }
    }

    #[test]
    fn ranges_and_bounds(a in wild(), b in wild(), tol in wild()) {
        let _ = Range::new("x", a, b);
        let _ = Range::exact("x", a);
        let _ = Range::tolerance("x", a, tol);
        if let Ok(r) = Range::new("x", a, b) {
            prop_assert!(r.mid().is_finite() && r.min() <= r.mid() && r.mid() <= r.max(), "mid of {r:?}");
            let w = worst_case(&[r], |p| Ok(p[0] * 2.0));
            if let Ok(bound) = w {
                prop_assert!(bound.min <= bound.max);
            }
        }
    }

    #[test]
    fn coil_spread(v0 in wild(), v1 in wild(), t0 in wild(), t1 in wild(), tol in wild(), ip in wild()) {
        let coil = CoilParams::new(0.3, 120.0);
        if let (Ok(sv), Ok(st)) = (Range::new("supply_v", v0, v1), Range::new("temp_c", t0, t1))
            && let Ok(s) = CoilSpread::new(coil, sv, st, tol, tol) {
                for b in [s.steady_current_a(), s.time_constant_s(), s.stored_energy_j(), s.pull_in_time_s(ip)]
                    .into_iter()
                    .flatten()
                {
                    prop_assert!(b.min.is_finite() && b.max.is_finite() && b.min <= b.max);
                }
            }
    }

    #[test]
    fn monitor_plan(a in wild(), off in wild(), tol in wild(), rel in wild(), p in any::<u16>(), lo in any::<u16>(), hi in any::<u16>()) {
        if let Ok(scale) = SenseScale::new(a, off, lo, hi) {
            let _ = MonitorConfig::new(scale, &MonitorParams {
                abs_tol_a: tol, rel_tol: rel, open_min_estimate_a: tol, open_max_a: a,
                persistence: p, stuck_samples: p, stuck_min_change_a: tol,
            });
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2000, ..ProptestConfig::default() })]

    #[test]
    fn trip_routines(ci in 0usize..Curve::ALL.len(), v in proptest::array::uniform8(wild()), bits in any::<u8>()) {
        let [pickup, tms, i, t_min, tau, k, base, x] = v;
        let curve = Curve::ALL[ci];
        for el in [InverseTime::new(curve, pickup, tms), InverseTime::new(curve, 2.5, 0.05)]
            .into_iter()
            .flatten()
        {
            ok_finite(el.trip_time_s(i))?;
            if let Ok(Some(r)) = el.rate_per_s(i) {
                prop_assert!(r.is_finite(), "rate Ok({r}) at {i} A");
            }
            if let Ok(Some(r)) = el.reset_time_s(i) {
                prop_assert!(r.is_finite(), "reset Ok({r}) at {i} A");
            }
            if let Ok(el) = el.with_definite_min_s(t_min) {
                ok_finite(el.trip_time_s(i))?;
            }
        }
        for th in [Thermal::new(tau, k, base), Thermal::new(100.0, 1.1, 2.0)].into_iter().flatten() {
            ok_finite(th.steady_state(i))?;
            ok_finite(th.trip_time_s(i, x))?;
            ok_finite(th.state_after(x, i, t_min))?;
            ok_finite(th.adiabatic_trip_time_s(i))?;
            ok_finite(th.decay_factor(x))?;
        }
        let params = SenseParams {
            shunt_ohm: pickup, shunt_tol: tms, gain: k, gain_tol: 0.01, offset_v: x,
            vref_v: base, vref_tol: 0.005, bits,
        };
        let nominal = SenseParams {
            shunt_ohm: 0.01, shunt_tol: 0.01, gain: 20.0, gain_tol: 0.005, offset_v: 0.002,
            vref_v: 3.3, vref_tol: 0.005, bits: 12,
        };
        for sc in [SenseChain::new(&params), SenseChain::new(&nominal)].into_iter().flatten() {
            ok_finite(sc.tolerance_rss(i))?;
            ok_finite(sc.tolerance_linear_sum(i))?;
        }
    }
}

/// The four routines that returned `Ok(inf)` at the ends of the f32 range: now each names the
/// parameter instead (the values are the reproductions).
#[test]
fn extreme_currents_are_errors_not_infinite() {
    let el = InverseTime::new(Curve::IecExtremelyInverse, 1.0, 0.05).unwrap();
    match el.rate_per_s(f32::MAX) {
        Err(Error::OutOfRange { param, max, .. }) => {
            assert_eq!(param, "current_a");
            // The largest current with a finite rate, and the next float above has none.
            assert!(el.rate_per_s(max).unwrap().unwrap().is_finite());
            let above = f32::from_bits(max.to_bits() + 1);
            assert!(el.rate_per_s(above).is_err(), "{max} {above}");
        }
        other => panic!("rate at f32::MAX: {other:?}"),
    }
    let sc = SenseChain::new(&SenseParams {
        shunt_ohm: 0.01,
        shunt_tol: 0.01,
        gain: 20.0,
        gain_tol: 0.005,
        offset_v: 0.002,
        vref_v: 3.3,
        vref_tol: 0.005,
        bits: 12,
    })
    .unwrap();
    assert_eq!(sc.tolerance_rss(1e-40).unwrap_err().param(), "current_a");
    assert_eq!(
        sc.tolerance_linear_sum(1e-44).unwrap_err().param(),
        "current_a"
    );
    // Just above the square-root limit the scaled form keeps a finite answer: the offset term.
    let rss = sc.tolerance_rss(1e-20).unwrap();
    let offset_term = 0.002f32 / (1e-20 * 0.01);
    assert!(
        (rss / offset_term - 1.0).abs() < 1e-6,
        "{rss} {offset_term}"
    );
    let th = Thermal::new(100.0, 1.1, 2.0).unwrap();
    match th.steady_state(1e30) {
        Err(Error::OutOfRange { param, max, .. }) => {
            assert_eq!(param, "current_a");
            assert!(th.steady_state(max * 0.999_999).unwrap().is_finite());
        }
        other => panic!("steady state at 1e30 A: {other:?}"),
    }
    let r = Range::new("x", 3.0e38, f32::MAX).unwrap();
    let mid = r.mid();
    assert!(
        mid.is_finite() && (3.0e38..=f32::MAX).contains(&mid),
        "{mid}"
    );
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    #[test]
    fn armature_routines(v in proptest::array::uniform14(wild()), use_sat in any::<bool>()) {
        let [l0, x0, sat, i, x, f, open, closed, preload, rate, load, tol, tx, tl] = v;
        let _ = GapTable::new(&[(0.0, 0.2), (tx, tl), (2.0e-3, 0.05)]);
        let _ = GapTable::new(&[(tx, tl)]);
        let gaps = [
            GapInductance::Reluctance { zero_gap_h: l0, halving_gap_m: x0 },
            GapInductance::Reluctance { zero_gap_h: 0.36, halving_gap_m: 0.6e-3 },
        ];
        let sats = [if use_sat { Some(sat) } else { None }, Some(0.05), None];
        for g in gaps {
            ok_finite(g.inductance_h(x))?;
            ok_finite(g.slope_h_per_m(x))?;
            for s in sats {
                let Ok(m) = MagneticCircuit::new(g, s) else { continue };
                ok_finite(m.flux_linkage_vs(i, x))?;
                ok_finite(m.coenergy_j(i, x))?;
                ok_finite(m.pull_force_n(i, x))?;
                ok_finite(m.current_for_force_a(f, x))?;
                if let Ok(Some(v)) = m.force_limit_n(x) {
                    prop_assert!(v.is_finite());
                }
                let mechs = [
                    Mechanics { open_gap_m: open, closed_gap_m: closed, spring_preload_n: preload, spring_rate_n_per_m: rate, load_n: load },
                    Mechanics { open_gap_m: 1.2e-3, closed_gap_m: 0.05e-3, spring_preload_n: 5.0, spring_rate_n_per_m: 1000.0, load_n: 1.5 },
                ];
                for mech in mechs {
                    ok_finite(mech.opening_force_n(x))?;
                    let Ok(a) = Armature::new(m, mech) else { continue };
                    if let Ok(p) = a.pull_in_current() {
                        prop_assert!(p.current_a.is_finite() && p.gap_m.is_finite());
                    }
                    ok_finite(a.hold_current_a())?;
                    if s.is_none()
                        && let (Ok(r_open), Ok(r_pre)) = (Range::new("open_gap_m", open, open * 1.05), Range::tolerance("spring_preload_n", preload, 0.1))
                        && let Ok(spread) = ArmatureSpread::new(a, tol, r_open, r_pre, Range::exact("spring_rate_n_per_m", rate).unwrap_or(r_pre), Range::new("load_n", 0.0, load).unwrap_or(r_pre))
                    {
                        for b in [spread.pull_in_current_a(), spread.hold_current_a()].into_iter().flatten() {
                            prop_assert!(b.min.is_finite() && b.max.is_finite() && b.min <= b.max);
                        }
                    }
                }
            }
        }
    }
}
