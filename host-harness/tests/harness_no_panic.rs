//! No public function of the plant or the closed loop panics on any input: arbitrary f64
//! (NaN, ±inf, subnormals, zero, negatives) either gives a named error or a run.

use lenz::kernel::BridgeMode;
use lenz_harness::closed_loop::AdcChannel;
use lenz_harness::plant::{
    ArmatureDrive, Boost, BoostSpec, Clamp, CoilDrive, CoilDriveSpec, CoilSpec, Decay,
    InductanceCurve, LoadProfile, MotorPlant, MotorSpec, SwitchSpec,
};
use proptest::prelude::*;
use rand::SeedableRng;

fn any_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(f64::NEG_INFINITY),
        Just(0.0),
        Just(-0.0),
        Just(f64::MIN_POSITIVE / 2.0),
        -1e3f64..1e3,
        any::<f64>(),
    ]
}

proptest! {
    #[test]
    fn motor_plant_never_panics(
        l in any_f64(), r in any_f64(), k in any_f64(), j in any_f64(), vs in any_f64(),
        rs in any_f64(), c in any_f64(), sinks in any::<bool>(),
        steps in proptest::collection::vec((0u8..6, any_f64()), 0..8),
    ) {
        let mut spec = MotorSpec::new(l, r, k, j);
        spec.supply_v = vs;
        spec.source_resistance_ohm = rs;
        spec.bus_capacitance_f = c;
        spec.supply_sinks = sinks;
        // Also a valid motor, so the operations themselves see the wild arguments.
        let mut valid = MotorSpec::new(2e-3, 1.5, 0.03, 2e-5);
        valid.supply_sinks = sinks;
        for spec in [spec, valid] {
            match MotorPlant::new(spec) {
                Err(e) => prop_assert!(!e.param().is_empty()),
                Ok(mut p) => {
                    for (op, x) in &steps {
                        let t1 = p.time_s() + x.abs().min(2e-3);
                        match op {
                            0 => p.set_bridge(BridgeMode::Forward),
                            1 => p.set_bridge(BridgeMode::Coast),
                            2 => {
                                let _ = p.advance_pwm(BridgeMode::Reverse, *x, 5e-5, Decay::Fast, t1);
                            }
                            3 => {
                                p.set_load_torque_nm(*x);
                                p.set_supply_v(*x);
                            }
                            4 => p.set_load_profile(LoadProfile { steps: vec![(*x, *x)], jam_at_s: Some(*x) }),
                            _ => {
                                p.set_state(*x, *x, *x);
                                p.set_supply_sinks(!sinks);
                            }
                        }
                        p.advance_to(t1);
                        let _ = (p.current_a(), p.speed_rad_s(), p.bus_v(), p.peak_current_a());
                    }
                }
            }
        }
    }

    #[test]
    fn coil_drive_never_panics(
        l in any_f64(), r in any_f64(), t in any_f64(), vs in any_f64(), bv in any_f64(),
        ron in any_f64(), c in any_f64(), kind in 0u8..5, steps in proptest::collection::vec((any::<bool>(), any_f64()), 0..8),
    ) {
        let clamp = match kind {
            0 => Clamp::Freewheel { vf_v: c },
            1 => Clamp::DiodeZener { vf_v: 0.7, vz_v: c },
            2 => Clamp::AcrossSwitch { vcl_v: c },
            3 => Clamp::ResistorDiode { r_ohm: c, vf_v: 0.7 },
            _ => Clamp::Unclamped { c_f: c },
        };
        let spec = CoilDriveSpec {
            coil: CoilSpec::linear(l, r, t),
            clamp,
            switch: SwitchSpec { on_resistance_ohm: ron, breakdown_v: bv },
            supply_v: vs,
            source_resistance_ohm: 0.0,
            shunt_ohm: 0.0,
        };
        match CoilDrive::new(spec) {
            Err(e) => prop_assert!(!e.param().is_empty()),
            Ok(mut p) => {
                for (on, dt) in steps {
                    p.set_switch(on);
                    let t1 = p.time_s() + dt.abs().min(1e-3);
                    p.advance_to(t1);
                    let _ = (p.current_a(), p.switch_voltage_v(), p.supply_terminal_v());
                    p.set_supply_v(dt);
                    p.set_coil_scale(dt, dt);
                }
            }
        }
    }

    #[test]
    fn boost_and_adc_never_panic(
        l in any_f64(), c in any_f64(), load in any_f64(), vin in any_f64(), x in any_f64(),
        bits in any::<u8>(), vref in any_f64(),
    ) {
        let spec = BoostSpec {
            inductor: InductanceCurve::Linear { l_h: l },
            dcr_ohm: 0.04,
            switch_on_resistance_ohm: 0.025,
            diode_drop_v: 0.35,
            output_c_f: c,
            esr_ohm: 0.005,
            load_ohm: load,
            input_v: vin,
            source_resistance_ohm: 0.0,
        };
        if let Ok(mut b) = Boost::new(spec) {
            for k in 0..6 {
                b.set_switch(k % 2 == 0);
                b.advance_to((k + 1) as f64 * 1e-6);
                b.set_load_ohm(x);
            }
        }
        let ch = AdcChannel { bits, vref_v: vref, volts_per_unit: x, bias_v: x, gain_error: x,
            offset_error_v: x, noise_rms_lsb: x };
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(3);
        let code = ch.convert(x, x, &mut rng);
        prop_assert!(code <= ch.max_code());
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    #[test]
    fn armature_drive_never_panics(
        v in proptest::array::uniform8(any_f64()), sat in any::<bool>(), stuck in any::<bool>(),
        steps in proptest::collection::vec((any::<bool>(), any_f64()), 0..8),
    ) {
        use lenz_harness::demo::armature::VALVE;
        // Each draw changes a few values of the demo valve, so both errors and runs occur.
        let mut spec = VALVE.drive();
        let a = &mut spec.armature;
        a.saturation_flux_vs = sat.then_some(v[0]);
        a.mass_kg = if v[1].is_finite() && v[1] > 0.0 { v[1].min(1.0) } else { v[1] };
        a.spring_preload_n = v[2];
        a.restitution = v[3];
        a.faults.stuck = stuck;
        a.faults.extra_load_n = v[4].abs();
        spec.supply_v = v[5];
        spec.freewheel_vf_v = v[6];
        if v[7].is_nan() {
            a.gap = lenz_harness::plant::GapCurve::Table(vec![(0.0, v[7]), (1e-3, 0.1)]);
        }
        match ArmatureDrive::new(spec) {
            Err(e) => prop_assert!(!e.param().is_empty()),
            Ok(mut p) => {
                for (on, dt) in steps {
                    p.set_switch(on);
                    let t1 = p.time_s() + dt.abs().min(2e-3);
                    p.advance_to(t1);
                    let _ = (p.current_a(), p.gap_m(), p.velocity_m_s(), p.magnetic_energy_j());
                    p.set_supply_v(dt);
                }
                prop_assert!(p.gap_m() >= VALVE.closed_gap_m && p.gap_m() <= VALVE.open_gap_m);
            }
        }
    }
}
