//! Vectors of the duty limiter: a demo boost stage (invented values) through the plan
//! constructor, driven through the soft start, the input window and beyond, overvoltage cut
//! and resume, and the minimum on time; plus raw edge configurations (any tables and limits)
//! with any readings.

use std::fmt::Write as _;

use lenz::Range;
use lenz::boost::{BoostStageParams, LightLoad};
use lenz::kernel::{
    DUTY_TABLE_LEN, DutyLimiterConfig, DutyLimiterParams, DutyLimiterRaw, DutyLimiterState,
};

use super::Rng;

/// Demo boost stage (invented values): 10 µH, 500 kHz, 2 A inductor, 4 ..= 6 V in, 12 V out.
const L_H: f32 = 10e-6;
const F_SW_HZ: f32 = 500e3;
const R_L_OHM: f32 = 0.040;
const R_SW_OHM: f32 = 0.025;
const I_SAT_A: f32 = 2.0;
const T_OFF_MIN_S: f32 = 100e-9;
const T_ON_MIN_S: f32 = 80e-9;
const VPC_IN: f32 = 6.6 / 4096.0;
const VPC_OUT: f32 = 24.75 / 4096.0;

fn params(soft_start_s: f32, tol: f32) -> DutyLimiterParams {
    DutyLimiterParams {
        input_v: Range::new("input_v", 4.0, 6.0).expect("demo window is valid"),
        output_v: 12.0,
        max_load_current_a: 0.5,
        light_load: Some(LightLoad {
            min_load_current_a: 0.05,
            max_output_v: 20.0,
        }),
        input_v_per_count: VPC_IN,
        output_v_per_count: VPC_OUT,
        adc_max_counts: 4095,
        duty_full_scale: 1000,
        soft_start_s,
        tick_s: 100e-6,
        overvoltage_v: 21.0,
        resume_v: 19.5,
        inductance_tol: tol,
        resistance_tol: tol,
    }
}

/// `r` as a constant expression (the raw values' `Debug` form is a struct literal).
fn raw_expr(r: &DutyLimiterRaw) -> String {
    format!("DutyLimiterConfig::from_raw({r:?})")
}

/// `(request, vin counts, vout counts)` per tick: a soft start at full request, an input sweep
/// across and beyond the window, requests of any size, an overvoltage excursion and its
/// resume, a broken output sense line.
fn demo_inputs(rng: &mut Rng, n: usize) -> Vec<(i32, u16, u16)> {
    let vin_mid = (5.0 / VPC_IN) as i32;
    let vout_mid = (12.0 / VPC_OUT) as i32;
    (0..n)
        .map(|k| {
            let vin = match k {
                0..=99 => vin_mid,
                100..=299 => 2300 + (k as i32 - 100) * 8, // 3.7 .. 6.3 V
                _ => vin_mid + rng.range(-300, 300),
            };
            let vout = match k {
                0..=299 => vout_mid + rng.range(-20, 20),
                300..=339 => 3400 + (k as i32 - 300) * 5, // through 21 V and down
                340..=379 => 3595 - (k as i32 - 340) * 12,
                380..=389 => 0, // open sense line
                _ => vout_mid + rng.range(-40, 40),
            };
            let request = match k {
                0..=299 => 1000,
                _ => match rng.range(0, 5) {
                    0 => rng.any_i32(),
                    1 => rng.range(0, 20),
                    _ => rng.range(0, 1100),
                },
            };
            (
                request,
                vin.clamp(0, 4095) as u16,
                vout.clamp(0, 4095) as u16,
            )
        })
        .collect()
}

pub fn generate() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0006);
    let stage = BoostStageParams::new(L_H, F_SW_HZ)
        .with_inductor_resistance_ohm(R_L_OHM)
        .with_switch_resistance_ohm(R_SW_OHM)
        .with_diode_drop_v(0.35)
        .with_saturation_current_a(I_SAT_A)
        .with_min_off_time_s(T_OFF_MIN_S)
        .with_min_on_time_s(T_ON_MIN_S)
        .validate()
        .expect("demo stage is valid");
    let mut cases: Vec<(DutyLimiterRaw, Vec<(i32, u16, u16)>)> = Vec::new();
    for (soft, tol) in [(10e-3, 0.0), (0.0, 0.2), (2e-3, 0.1)] {
        let cfg = DutyLimiterConfig::new(&stage, &params(soft, tol)).expect("demo limiter");
        cases.push((cfg.raw(), demo_inputs(&mut rng, 450)));
    }
    for _ in 0..6 {
        let mut t = [[0i32; DUTY_TABLE_LEN]; 3];
        for v in t.iter_mut().flatten() {
            *v = rng.any_i32();
        }
        let a = rng.range(0, 65535) as u16;
        let b = rng.range(0, 65535) as u16;
        let raw = DutyLimiterRaw {
            vin_lo_counts: a.min(b),
            vin_hi_counts: a.max(b),
            shift: rng.range(0, 20) as u8,
            saturation_q8: t[0],
            gain_peak_q8: t[1],
            light_load_q8: t[2],
            min_off_q8: rng.any_i32(),
            min_on_counts: rng.range(0, 65535) as u16,
            full_scale: rng.range(0, 65535) as u16,
            slew_q8: rng.any_i32(),
            vout_lo_counts: rng.range(0, 2000) as u16,
            vout_hi_counts: rng.range(2000, 65535) as u16,
            ov_trip_counts: rng.range(0, 65535) as u16,
            ov_resume_counts: rng.range(0, 65535) as u16,
        };
        let inputs = (0..120)
            .map(|_| {
                (
                    rng.any_i32(),
                    rng.range(0, 65535) as u16,
                    rng.range(0, 65535) as u16,
                )
            })
            .collect();
        cases.push((raw, inputs));
    }

    let mut src = String::from("// Generated by gen/duty.rs with the host build of lenz.\n\n");
    src.push_str("/// Generated sequences.\npub static CASES: &[Case] = &[\n");
    let (mut zero, mut between, mut overvoltage) = (false, false, false);
    for (raw, inputs) in &cases {
        let cfg = DutyLimiterConfig::from_raw(*raw);
        let mut s = DutyLimiterState::new();
        let _ = write!(src, "    Case {{ config: {}, steps: &[", raw_expr(raw));
        for &(req, vin, vout) in inputs {
            let d = cfg.update(&mut s, req, vin, vout);
            zero |= d == 0;
            between |= d > 0;
            overvoltage |= s.overvoltage();
            let _ = write!(src, "({req}, {vin}, {vout}, {d}), ");
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    assert!(
        zero && between && overvoltage,
        "duty vectors miss a range (zero {zero}, duty {between}, overvoltage {overvoltage})"
    );
    // Cost run: the first demo in steady regulation (a request that moves around the limit).
    let vin_mid = (5.0 / VPC_IN) as i32;
    let vout_mid = (12.0 / VPC_OUT) as i32;
    let bench: Vec<(i32, u16, u16)> = (0..256)
        .map(|_| {
            (
                rng.range(300, 1000),
                (vin_mid + rng.range(-200, 200)) as u16,
                (vout_mid + rng.range(-20, 20)) as u16,
            )
        })
        .collect();
    let _ = writeln!(
        src,
        "/// Configuration of the cost run (the first demo).\npub static BENCH_CONFIG: DutyLimiterConfig = {};\n",
        raw_expr(&cases[0].0)
    );
    src.push_str("/// Inputs of the cost run.\npub static BENCH_INPUTS: &[(i32, u16, u16)] = &[");
    for (r, vi, vo) in &bench {
        let _ = write!(src, "({r}, {vi}, {vo}), ");
    }
    src.push_str("];\n\n");
    let _ = writeln!(
        src,
        "/// The straightforward version's parameters.\npub const NAIVE: Naive = Naive {{ vin_per_count_v: {VPC_IN:?}, vout_per_count_v: {VPC_OUT:?}, vin_min_v: 4.0, vin_max_v: 6.0, vout_min_v: 1.8, vout_max_v: 24.7, overvoltage_v: 21.0, resume_v: 19.5, l_h: {L_H:?}, f_sw_hz: {F_SW_HZ:?}, r_loss_ohm: {:?}, load_ohm: 24.0, load_a: 0.5, light_load_ohm: 240.0, light_load_max_v: 20.0, saturation_a: {I_SAT_A:?}, min_off_s: {T_OFF_MIN_S:?}, min_on_s: {T_ON_MIN_S:?}, full_scale: 1000.0, slew_per_tick: 10.0 }};",
        R_L_OHM + R_SW_OHM
    );
    src
}
