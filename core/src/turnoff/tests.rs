//! Unit tests of the switch-off plan: errors, verdicts, comparison and worst-case corners.
//! The reference values of docs/references.md, the ODE cross-check and the property tests live in the
//! root package's `tests/turnoff_reference.rs`.

use super::*;
use crate::coil::CoilParams;
use crate::testing::isclose;

fn valve(clamp: Clamp) -> SwitchOff {
    // Demo valve (invented): 120 mH, 32 Ω, 24 V, 0.75 A.
    SwitchOff::new(0.120, 32.0, 24.0, 0.75, clamp).unwrap()
}

#[test]
fn switch_clamp_must_exceed_supply() {
    for vcl in [24.0f32, 12.0] {
        let e = SwitchOff::new(0.12, 32.0, 24.0, 0.75, Clamp::Switch { clamp_v: vcl }).unwrap_err();
        assert_eq!(e.param(), "clamp_v");
    }
    assert!(SwitchOff::new(0.12, 32.0, 24.0, 0.75, Clamp::Switch { clamp_v: 24.01 }).is_ok());
}

#[test]
fn bad_inputs_name_the_parameter() {
    let cases: [(f32, f32, f32, f32, Clamp, &str); 6] = [
        (
            f32::NAN,
            32.0,
            24.0,
            0.75,
            Clamp::Diode { forward_v: 0.7 },
            "inductance_h",
        ),
        (
            0.12,
            0.0,
            24.0,
            0.75,
            Clamp::Diode { forward_v: 0.7 },
            "resistance_ohm",
        ),
        (
            0.12,
            32.0,
            -1.0,
            0.75,
            Clamp::Diode { forward_v: 0.7 },
            "supply_v",
        ),
        (
            0.12,
            32.0,
            24.0,
            -0.1,
            Clamp::Diode { forward_v: 0.7 },
            "initial_current_a",
        ),
        (
            0.12,
            32.0,
            24.0,
            0.75,
            Clamp::Zener {
                zener_v: 0.0,
                forward_v: 0.7,
            },
            "zener_v",
        ),
        (
            0.12,
            32.0,
            24.0,
            0.75,
            Clamp::Unclamped {
                capacitance_f: f32::INFINITY,
            },
            "capacitance_f",
        ),
    ];
    for (l, r, v, i, c, name) in cases {
        assert_eq!(SwitchOff::new(l, r, v, i, c).unwrap_err().param(), name);
    }
    let off = valve(Clamp::Diode { forward_v: 0.7 });
    assert_eq!(
        off.time_to_current_s(0.0).unwrap_err().param(),
        "target_current_a"
    );
    assert_eq!(off.current_a(-1.0).unwrap_err().param(), "t_s");
}

#[test]
fn ideal_diode_decay_is_exponential_only() {
    let off = valve(Clamp::Diode { forward_v: 0.0 });
    match off.decay_end().unwrap() {
        DecayEnd::Exponential { fraction, time_s } => {
            assert_eq!(fraction, TAIL_FRACTION);
            // tau ln(100), computed.
            assert!(isclose(time_s as f64, 3.75e-3 * 100f64.ln(), 1e-6, 0.0));
        }
        other => panic!("{other:?}"),
    }
    // All the stored energy goes into the winding.
    assert!(isclose(
        off.resistance_energy_j().unwrap() as f64,
        33.75e-3,
        1e-6,
        0.0
    ));
    assert_eq!(off.clamp_energy_j().unwrap(), 0.0);
}

#[test]
fn verdicts_catch_each_rating() {
    let zener = valve(Clamp::Zener {
        zener_v: 47.0,
        forward_v: 0.7,
    });
    let ok = zener
        .verdicts(&Ratings {
            switch_breakdown_v: Some(100.0),
            avalanche_energy_j: Some(0.1),
            clamp_energy_j: Some(0.05),
            clamp_peak_power_w: Some(100.0),
        })
        .unwrap();
    assert!(ok.all_pass(), "{ok:?}");
    assert!(!ok.switch_avalanches);
    assert!(ok.avalanche_energy.is_none());
    // A 60 V switch is below the 71.7 V peak: it avalanches first.
    let low = zener
        .verdicts(&Ratings {
            switch_breakdown_v: Some(60.0),
            avalanche_energy_j: Some(0.01),
            ..Ratings::default()
        })
        .unwrap();
    assert!(!low.switch_voltage.unwrap().passes());
    assert!(low.switch_avalanches);
    let av = low.avalanche_energy.unwrap();
    let at_bv = valve(Clamp::Switch { clamp_v: 60.0 })
        .clamp_energy_j()
        .unwrap();
    assert_eq!(av.value, at_bv);
    assert!(!av.passes());
    assert!(!low.all_pass());
    // Clamp part ratings.
    let small = zener
        .verdicts(&Ratings {
            clamp_energy_j: Some(0.02),
            clamp_peak_power_w: Some(30.0),
            ..Ratings::default()
        })
        .unwrap();
    assert!(!small.clamp_energy.unwrap().passes());
    // 47.7 V * 0.75 A = 35.8 W peak.
    assert!(!small.clamp_peak_power.unwrap().passes());
}

#[test]
fn comparison_orders_the_trade_off() {
    let base = valve(Clamp::Diode { forward_v: 0.7 });
    let clamps = [
        Clamp::Diode { forward_v: 0.7 },
        Clamp::Zener {
            zener_v: 24.0,
            forward_v: 0.7,
        },
        Clamp::Zener {
            zener_v: 47.0,
            forward_v: 0.7,
        },
        Clamp::Switch { clamp_v: 65.0 },
    ];
    let s = compare(&base, &clamps, 0.075).unwrap();
    // Faster release costs switch voltage and clamp energy.
    for w in s.windows(2).take(2) {
        assert!(w[1].time_to_target_s < w[0].time_to_target_s);
        assert!(w[1].peak_switch_voltage_v > w[0].peak_switch_voltage_v);
        assert!(w[1].clamp_energy_j > w[0].clamp_energy_j);
    }
    assert_eq!(s[3].clamp, clamps[3]);
    assert!(compare(&base, &[Clamp::Switch { clamp_v: 20.0 }], 0.075).is_err());
}

#[test]
fn worst_case_initial_current_at_high_supply_and_cold_coil() {
    // Demo valve (invented): 24 V ±10 %, -20..85 °C, L ±10 %, R ±5 %.
    let spread = TurnOffSpread {
        spread: CoilSpread::new(
            CoilParams::new(0.120, 32.0),
            crate::Range::tolerance("supply_v", 24.0, 0.1).unwrap(),
            crate::Range::new("temp_c", -20.0, 85.0).unwrap(),
            0.1,
            0.05,
        )
        .unwrap(),
        clamp: Clamp::Zener {
            zener_v: 24.0,
            forward_v: 0.7,
        },
    };
    let i = spread.initial_current_a().unwrap();
    assert_eq!(i.max_at.supply_v, spread.spread.supply_v.max());
    assert_eq!(i.max_at.temp_c, -20.0);
    let e = spread.clamp_energy_j().unwrap();
    assert_eq!(e.max_at.supply_v, spread.spread.supply_v.max());
    assert!((e.max_at.temp_c + 20.0).abs() < 1e-3, "{:?}", e.max_at);
    assert!(isclose(e.max_at.inductance_h as f64, 0.132, 1e-6, 0.0));
    // Release to a fixed drop-out current: longest where the current is highest and the
    // inductance largest; compare against a direct evaluation at that corner.
    let rel = spread.release_time_s(Some(0.075)).unwrap();
    let c = rel.max_at;
    // t = (L/R) ln((V + Vc)/(Ix R + Vc)): both factors fall with R, so the cold end is the
    // slow one here.
    assert!((c.temp_c + 20.0).abs() < 1e-3, "{c:?}");
    assert_eq!(c.supply_v, spread.spread.supply_v.max());
    let coil = CoilParams::new(c.inductance_h, c.resistance_ohm)
        .validate()
        .unwrap();
    let direct = SwitchOff::from_coil(&coil, c.supply_v, c.temp_c, spread.clamp)
        .unwrap()
        .time_to_current_s(0.075)
        .unwrap();
    assert!(isclose(rel.max as f64, direct as f64, 1e-6, 0.0));
    // Default drop-out: 10 % of the nominal 0.75 A (common practice).
    let nominal = spread.nominal_current_a().unwrap();
    assert!(isclose(nominal as f64, 0.75, 1e-6, 0.0));
    let default = spread.release_time_s(None).unwrap();
    assert!(isclose(default.max as f64, rel.max as f64, 1e-5, 0.0));
}

#[test]
fn release_states_its_source() {
    let off = valve(Clamp::Diode { forward_v: 0.7 });
    let r = off.release_time_s(0.75, None).unwrap();
    assert_eq!(
        r.source,
        DropoutSource::CommonPractice {
            fraction: RELEASE_FRACTION_COMMON_PRACTICE
        }
    );
    assert!(isclose(r.dropout_a as f64, 0.075, 1e-6, 0.0));
    let given = off.release_time_s(0.75, Some(0.2)).unwrap();
    assert_eq!(given.source, DropoutSource::Given);
    assert!(given.time_s < r.time_s);
}

#[test]
fn spread_with_switch_clamp_needs_clamp_above_every_supply() {
    let spread = |clamp_v| TurnOffSpread {
        spread: CoilSpread::new(
            CoilParams::new(0.120, 32.0),
            crate::Range::tolerance("supply_v", 24.0, 0.1).unwrap(),
            crate::Range::new("temp_c", -20.0, 85.0).unwrap(),
            0.1,
            0.05,
        )
        .unwrap(),
        clamp: Clamp::Switch { clamp_v },
    };
    // 25 V lies above the nominal 24 V but below the 26.4 V corner.
    assert_eq!(
        spread(25.0).peak_switch_voltage_v().unwrap_err().param(),
        "clamp_v"
    );
    let ok = spread(45.0);
    let e = ok.clamp_energy_j().unwrap();
    // The switch energy grows with the supply (more current, and the supply feeds the decay).
    assert_eq!(e.max_at.supply_v, ok.spread.supply_v.max());
    assert!(e.min < e.max);
    let t = ok.decay_time_s().unwrap();
    assert!(t.min > 0.0 && t.max > t.min);
}

mod props {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(32))]

        /// Worst-case evaluation never panics on any input; what succeeds is ordered.
        #[test]
        fn spread_never_panics(
            l in prop_oneof![1 => any::<f32>(), 4 => 1e-3f32..1.0],
            r in prop_oneof![1 => any::<f32>(), 4 => 1.0f32..100.0],
            v in prop_oneof![1 => any::<f32>(), 4 => 1.0f32..50.0],
            tol in prop_oneof![1 => any::<f32>(), 4 => 0.0f32..0.3],
            a in prop_oneof![1 => any::<f32>(), 4 => 0.0f32..100.0],
            kind in 0u8..5,
        ) {
            let clamp = match kind {
                0 => Clamp::Diode { forward_v: a },
                1 => Clamp::Zener { zener_v: a, forward_v: 0.7 },
                2 => Clamp::Switch { clamp_v: a },
                3 => Clamp::Resistor { resistance_ohm: a, forward_v: 0.7 },
                _ => Clamp::Unclamped { capacitance_f: a * 1e-12 },
            };
            let Ok(supply) = crate::Range::tolerance("supply_v", v, 0.1) else { return Ok(()); };
            let Ok(temp) = crate::Range::new("temp_c", -20.0, 85.0) else { return Ok(()); };
            let Ok(spread) = CoilSpread::new(CoilParams::new(l, r), supply, temp, tol, tol) else {
                return Ok(());
            };
            let s = TurnOffSpread { spread, clamp };
            for b in [
                s.initial_current_a(),
                s.peak_switch_voltage_v(),
                s.clamp_energy_j(),
                s.release_time_s(None),
                s.time_to_current_s(a),
            ]
            .into_iter()
            .flatten()
            {
                prop_assert!(b.min <= b.max && b.min.is_finite() && b.max.is_finite());
            }
        }
    }
}
