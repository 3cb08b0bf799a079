//! Vectors of the estimator: four demo coils (invented values) through their plan
//! constructors with PWM-like switching and a noisy supply, plus raw edge configurations
//! (any `i32` coefficients and inputs) that drive the saturation paths.

use std::fmt::Write as _;

use lenz::CoilParams;
use lenz::kernel::{CURRENT_LIMIT_UA, EstimatorConfig, EstimatorRaw, EstimatorState, OffPath};

use super::Rng;

struct Plan {
    coil: lenz::Coil,
    temp_c: f32,
    tick_s: f32,
    extra_off_ohm: f32,
    clamp_v: f32,
    supply_coupled: bool,
    supply_mv: i32,
}

fn plans() -> Vec<Plan> {
    let coil = |l: f32, r: f32, diode: f32| {
        CoilParams::new(l, r)
            .with_diode_drop_v(diode)
            .validate()
            .expect("demo coil is valid")
    };
    vec![
        // Relay coil, freewheel diode, 12 V.
        Plan {
            coil: coil(0.040, 24.0, 0.7),
            temp_c: 20.0,
            tick_s: 100e-6,
            extra_off_ohm: 0.0,
            clamp_v: 0.7,
            supply_coupled: false,
            supply_mv: 12_000,
        },
        // Valve coil, 24 V, warm winding, resistor plus diode clamp.
        Plan {
            coil: coil(0.120, 32.0, 0.7),
            temp_c: 60.0,
            tick_s: 100e-6,
            extra_off_ohm: 100.0,
            clamp_v: 0.7,
            supply_coupled: false,
            supply_mv: 24_000,
        },
        // Small motor-like load, diode plus zener clamp across the coil, cold.
        Plan {
            coil: coil(0.015, 5.0, 0.7),
            temp_c: -20.0,
            tick_s: 50e-6,
            extra_off_ohm: 0.0,
            clamp_v: 15.7,
            supply_coupled: false,
            supply_mv: 24_000,
        },
        // Zener clamp across the switch (the supply keeps driving the coil while off).
        Plan {
            coil: coil(0.120, 32.0, 0.7),
            temp_c: 20.0,
            tick_s: 100e-6,
            extra_off_ohm: 0.0,
            clamp_v: 36.0,
            supply_coupled: true,
            supply_mv: 24_000,
        },
    ]
}

/// `c` as a constant expression (the raw values' `Debug` form is a struct literal).
pub fn config_expr(c: &EstimatorConfig) -> String {
    format!("EstimatorConfig::from_raw({:?})", c.raw())
}

struct Case {
    config: EstimatorConfig,
    start_ua: i32,
    inputs: Vec<(bool, i32)>,
}

/// PWM at a period of 40 ticks with a duty that changes every period, supply ±5 % noise,
/// and a long off stretch at the end so the current decays to zero.
fn pwm_inputs(rng: &mut Rng, supply_mv: i32, ticks: usize) -> Vec<(bool, i32)> {
    let mut v = Vec::with_capacity(ticks);
    let mut duty = 30;
    for k in 0..ticks {
        if k % 40 == 0 {
            duty = rng.range(0, 40);
        }
        let on = k < ticks - 120 && (k % 40) < duty as usize;
        let noise = rng.range(-supply_mv / 20, supply_mv / 20);
        v.push((on, supply_mv + noise));
    }
    v
}

pub fn generate() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0001);
    let mut cases = Vec::new();
    let mut naive = String::new();
    let mut bench_inputs = Vec::new();
    for (n, p) in plans().iter().enumerate() {
        let config = EstimatorConfig::with_clamp(
            &p.coil,
            p.temp_c,
            p.tick_s,
            p.extra_off_ohm,
            p.clamp_v,
            p.supply_coupled,
        )
        .expect("demo coefficients are valid");
        let inputs = pwm_inputs(&mut rng, p.supply_mv, 400);
        if n == 1 {
            let r_on = p
                .coil
                .on_loop_resistance_ohm(p.temp_c)
                .expect("valid temperature");
            let r_off = p
                .coil
                .off_loop_resistance_ohm(p.temp_c)
                .expect("valid temperature")
                + p.extra_off_ohm;
            naive = format!(
                "Naive {{ l_h: {:?}, r_on_ohm: {:?}, r_off_ohm: {:?}, tick_s: {:?}, switch_drop_v: {:?}, clamp_v: {:?}, supply_coupled: {} }}",
                p.coil.inductance_h(),
                r_on,
                r_off,
                p.tick_s,
                p.coil.params().switch_drop_v,
                p.clamp_v,
                p.supply_coupled
            );
            bench_inputs = inputs.clone();
        }
        cases.push(Case {
            config,
            start_ua: 0,
            inputs,
        });
    }
    // Raw edge configurations: any coefficients, any start, any inputs.
    for _ in 0..8 {
        let config = EstimatorConfig::from_raw(EstimatorRaw {
            on_step_q31: rng.any_i32(),
            on_conductance_q16: rng.any_i32(),
            switch_drop_mv: rng.any_i32(),
            off: OffPath {
                step_q31: rng.any_i32(),
                conductance_q16: rng.any_i32(),
                clamp_mv: rng.any_i32(),
                supply_coupled: rng.bool(),
            },
        });
        let start_ua = rng.any_i32();
        let inputs = (0..100).map(|_| (rng.bool(), rng.any_i32())).collect();
        cases.push(Case {
            config,
            start_ua,
            inputs,
        });
    }

    let mut src = String::from("// Generated by gen/estimator.rs with the host build of lenz.\n\n");
    src.push_str("/// Generated sequences.\npub static CASES: &[Case] = &[\n");
    let (mut zero, mut limit, mut between) = (false, false, false);
    for c in &cases {
        let mut s = EstimatorState::with_current_ua(c.start_ua);
        let _ = write!(
            src,
            "    Case {{ config: {}, start_ua: {}, steps: &[",
            config_expr(&c.config),
            c.start_ua
        );
        for &(on, supply_mv) in &c.inputs {
            let want = c.config.update(&mut s, on, supply_mv);
            zero |= want == 0;
            limit |= want == CURRENT_LIMIT_UA;
            between |= want > 0 && want < CURRENT_LIMIT_UA;
            let _ = write!(src, "({on}, {supply_mv}, {want}), ");
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    // The vectors must reach both saturations and the range between them.
    assert!(
        zero && limit && between,
        "estimator vectors miss a range (zero {zero}, limit {limit}, between {between})"
    );
    let _ = writeln!(
        src,
        "/// Configuration of the cost run (the second demo coil).\npub const BENCH_CONFIG: EstimatorConfig = {};\n",
        config_expr(&cases[1].config)
    );
    src.push_str("/// Inputs of the cost run.\npub static BENCH_INPUTS: &[(bool, i32)] = &[");
    for (on, supply_mv) in &bench_inputs {
        let _ = write!(src, "({on}, {supply_mv}), ");
    }
    src.push_str("];\n\n");
    let _ = writeln!(
        src,
        "/// The straightforward version's parameters for the cost run.\npub const NAIVE: Naive = {naive};"
    );
    src
}
