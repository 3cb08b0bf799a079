//! Unit tests of the duty limiter.

use super::*;
use crate::boost::{BoostStage, BoostStageParams, LightLoad, OperatingPoint};
use crate::bounds::Range;
use proptest::prelude::*;
extern crate std;
use std::sync::OnceLock;

const VPC_IN: f32 = 6.6 / 4096.0;
const VPC_OUT: f32 = 24.75 / 4096.0;
const FS: u16 = 1000;

fn stage() -> BoostStage {
    // Heater rail of CHECKS section 3 with a 2 A inductor, 100 ns / 80 ns switch times.
    BoostStageParams::new(10e-6, 500e3)
        .with_inductor_resistance_ohm(0.040)
        .with_switch_resistance_ohm(0.025)
        .with_diode_drop_v(0.35)
        .with_saturation_current_a(2.0)
        .with_min_off_time_s(100e-9)
        .with_min_on_time_s(80e-9)
        .validate()
        .unwrap()
}

fn params() -> DutyLimiterParams {
    DutyLimiterParams {
        input_v: Range::new("input_v", 4.0, 6.0).unwrap(),
        output_v: 12.0,
        max_load_current_a: 0.5,
        light_load: Some(LightLoad {
            min_load_current_a: 0.05,
            max_output_v: 20.0,
        }),
        input_v_per_count: VPC_IN,
        output_v_per_count: VPC_OUT,
        adc_max_counts: 4095,
        duty_full_scale: FS,
        soft_start_s: 0.0,
        tick_s: 100e-6,
        overvoltage_v: 21.0,
        resume_v: 19.5,
        inductance_tol: 0.0,
        resistance_tol: 0.0,
    }
}

fn cfg() -> &'static DutyLimiterConfig {
    static CFG: OnceLock<DutyLimiterConfig> = OnceLock::new();
    CFG.get_or_init(|| DutyLimiterConfig::new(&stage(), &params()).unwrap())
}

/// The same limits with a 10 ms soft start at a 100 µs tick (10 counts per tick).
fn cfg_soft() -> &'static DutyLimiterConfig {
    static CFG: OnceLock<DutyLimiterConfig> = OnceLock::new();
    CFG.get_or_init(|| {
        let mut p = params();
        p.soft_start_s = 10e-3;
        DutyLimiterConfig::new(&stage(), &p).unwrap()
    })
}

/// The plan's limit at a reading, in f64 duty (the reference the tables must follow).
fn plan_limit(vin_counts: u16) -> f64 {
    let p = params();
    let op = OperatingPoint {
        light_load: p.light_load,
        ..OperatingPoint::with_load_current(
            (f64::from(vin_counts) * f64::from(VPC_IN)) as f32,
            p.output_v,
            p.max_load_current_a,
        )
    };
    f64::from(stage().duty_limits(&op).unwrap().duty_max)
}

fn mid_vout() -> u16 {
    (12.0 / VPC_OUT) as u16
}

/// The raw values carry every field, and the getters read them.
#[test]
fn raw_round_trip() {
    let c = cfg_soft();
    assert_eq!(DutyLimiterConfig::from_raw(c.raw()), *c);
    let r = c.raw();
    assert_eq!(
        (
            c.vin_lo_counts(),
            c.vin_hi_counts(),
            c.shift(),
            c.min_off_q8()
        ),
        (r.vin_lo_counts, r.vin_hi_counts, r.shift, r.min_off_q8)
    );
    assert_eq!(
        (c.saturation_q8(), c.gain_peak_q8(), c.light_load_q8()),
        (&r.saturation_q8, &r.gain_peak_q8, &r.light_load_q8)
    );
    assert_eq!(
        (
            c.min_on_counts(),
            c.full_scale(),
            c.slew_q8(),
            c.vout_lo_counts(),
            c.vout_hi_counts(),
            c.ov_trip_counts(),
            c.ov_resume_counts()
        ),
        (
            r.min_on_counts,
            r.full_scale,
            r.slew_q8,
            r.vout_lo_counts,
            r.vout_hi_counts,
            r.ov_trip_counts,
            r.ov_resume_counts
        )
    );
    let mut s = DutyLimiterState::new();
    c.update(&mut s, 500, 3103, mid_vout());
    s.reset();
    assert_eq!(s, DutyLimiterState::new());
}

#[test]
fn every_reading_in_the_window_is_within_one_lsb_below_the_plan() {
    let c = cfg();
    let r = c.raw();
    let mut worst = 0.0f64;
    assert_eq!((r.vin_lo_counts, r.vin_hi_counts, r.shift), (2483, 3723, 6));
    for vin in r.vin_lo_counts..=r.vin_hi_counts {
        let want = plan_limit(vin) * f64::from(FS);
        let got = f64::from(c.limit_q8(vin)) / 256.0;
        assert!(got <= want + 1e-9, "vin {vin}: {got} above the plan {want}");
        worst = worst.max(want - got);
    }
    // Spacing 64 counts. The light-load limit has a kink where the stage at that limit
    // changes from CCM (low input) to DCM (high input), near 5.57 V here, and its DCM branch
    // is convex (the chord must be lowered by h²·f''/8 ≈ 0.06 counts); measured worst 0.083
    // counts, far below one duty count, so the output stays within one count of the floor
    // of the plan's limit.
    assert!(worst < 0.1, "worst table error {worst} counts");
}

#[test]
fn tolerance_tables_hold_the_worst_case_over_l_and_r() {
    // L ±20 %, R ±30 %: each table node must lie at or below the lowest limit that the
    // general worst-case search (corners plus interior extrema) finds over the box.
    use crate::bounds::worst_case;
    let mut p = params();
    p.inductance_tol = 0.2;
    p.resistance_tol = 0.3;
    let c = DutyLimiterConfig::new(&stage(), &p).unwrap();
    let nominal = *stage().params();
    for vin in [2483u16, 2900, 3300, 3650] {
        let op = OperatingPoint {
            light_load: p.light_load,
            ..OperatingPoint::with_load_current(f32::from(vin) * VPC_IN, 12.0, 0.5)
        };
        let ranges = [
            Range::tolerance("inductance_h", nominal.inductance_h, 0.2).unwrap(),
            Range::tolerance("resistance", 1.0, 0.3).unwrap(),
        ];
        let b = worst_case(&ranges, |x| {
            let st = BoostStageParams {
                inductance_h: x[0],
                inductor_resistance_ohm: nominal.inductor_resistance_ohm * x[1],
                switch_resistance_ohm: nominal.switch_resistance_ohm * x[1],
                ..nominal
            }
            .validate()?;
            Ok(st.duty_limits(&op)?.duty_max)
        })
        .unwrap();
        let want = f64::from(b.min) * f64::from(FS);
        let got = f64::from(c.limit_q8(vin)) / 256.0;
        assert!(got <= want, "{vin}: table {got} above worst case {want}");
        assert!(
            got >= want - 0.2,
            "{vin}: table {got} far below worst case {want}"
        );
        // And the tolerance really lowers the limit against the nominal stage.
        assert!(got < f64::from(cfg().limit_q8(vin)) / 256.0 - 1.0);
    }
}

#[test]
fn overvoltage_cuts_at_once_and_resumes_with_hysteresis() {
    let c = cfg();
    let mut s = DutyLimiterState::new();
    let vin = (5.0 / VPC_IN) as u16;
    assert_eq!(c.update(&mut s, 300, vin, mid_vout()), 300);
    let trip = c.raw().ov_trip_counts;
    let resume = c.raw().ov_resume_counts;
    assert_eq!(c.update(&mut s, 300, vin, trip), 0);
    assert!(s.overvoltage());
    assert_eq!(c.update(&mut s, 300, vin, resume + 1), 0);
    assert_eq!(c.update(&mut s, 300, vin, trip - 1), 0);
    assert_eq!(c.update(&mut s, 300, vin, resume), 300);
    assert!(!s.overvoltage());
}

#[test]
fn soft_start_ramps_and_skips_short_pulses() {
    let c = cfg_soft();
    assert_eq!(c.raw().slew_q8, 10 << 8);
    assert_eq!(c.raw().min_on_counts, 40); // 80 ns at 500 kHz: D_min 0.04 (CHECKS C3.3)
    let vin = (5.0 / VPC_IN) as u16;
    let mut s = DutyLimiterState::new();
    let outs: std::vec::Vec<u16> = (0..6)
        .map(|_| c.update(&mut s, 500, vin, mid_vout()))
        .collect();
    assert_eq!(outs, [0, 0, 0, 40, 50, 60]);
    // An implausible output reading restarts the soft start.
    assert_eq!(c.update(&mut s, 500, vin, 0), 0);
    assert_eq!(c.update(&mut s, 500, vin, mid_vout()), 0);
}

#[test]
fn binding_limit_follows_the_input() {
    // Saturation binds at low input, the light-load overvoltage limit at high input; the
    // kernel follows whichever is lower (the plan names it).
    let c = cfg();
    let p = params();
    for (v, reason) in [(4.5f32, "saturation"), (5.9, "light_load_overvoltage")] {
        let vin = (v / VPC_IN) as u16;
        let op = OperatingPoint {
            light_load: p.light_load,
            ..OperatingPoint::with_load_current(f32::from(vin) * VPC_IN, 12.0, 0.5)
        };
        let l = stage().duty_limits(&op).unwrap();
        assert_eq!(l.duty_max_reason.as_str(), reason);
        let want = f64::from(l.duty_max) * f64::from(FS);
        let got = f64::from(c.limit_counts(vin));
        assert!(got <= want && got >= want - 1.0, "{v} V: {got} vs {want}");
    }
}

proptest! {
    /// The interpolation through `mul_wide` equals the i64 product on any table values
    /// and offsets (computed: exact integer identity).
    #[test]
    fn interpolation_same_as_i64(a in any::<i32>(), b in any::<i32>(), off in any::<u32>(),
                                 shift in 0u8..20) {
        let mut raw = DutyLimiterConfig::from_raw(DutyLimiterRaw {
            vin_lo_counts: 0, vin_hi_counts: u16::MAX, shift,
            saturation_q8: [a; DUTY_TABLE_LEN], gain_peak_q8: [0; DUTY_TABLE_LEN],
            light_load_q8: [0; DUTY_TABLE_LEN], min_off_q8: 0, min_on_counts: 0,
            full_scale: 1, slew_q8: 0, vout_lo_counts: 0, vout_hi_counts: 0,
            ov_trip_counts: 0, ov_resume_counts: 0,
        }).r;
        raw.saturation_q8[1] = b;
        let cfg = DutyLimiterConfig::from_raw(raw);
        let sh = u32::from(shift.min(16));
        let off = off & ((2u32 << sh) - 1);
        let t = &cfg.r.saturation_q8;
        let idx = (off >> sh) as usize;
        let frac = i64::from(off & ((1u32 << sh) - 1));
        let want = match t.get(idx) {
            None => 0,
            Some(&x) => {
                let y = i64::from(*t.get(idx + 1).unwrap_or(&x));
                i64::from(x) + (((y - i64::from(x)) * frac) >> sh)
            }
        };
        prop_assert_eq!(i64::from(cfg.interp(t, off)), want);
    }
}

proptest! {
    #[test]
    fn tick_within_limits_and_one_lsb_of_the_plan(
        vin in 2483u16..=3723, request in any::<i32>(),
    ) {
        let c = cfg();
        let mut s = DutyLimiterState::new();
        let out = c.update(&mut s, request, vin, mid_vout());
        let exact = plan_limit(vin) * f64::from(FS);
        let want = exact.min(f64::from(request.clamp(0, i32::from(FS))));
        let want_counts = libm::floor(want) as i64;
        let want_counts = if want_counts < i64::from(c.raw().min_on_counts) { 0 } else { want_counts };
        prop_assert!(f64::from(out) <= exact + 1e-9);
        prop_assert!(i64::from(out) <= want_counts && i64::from(out) >= want_counts - 1,
            "out {} want {}", out, want_counts);
    }

    #[test]
    fn never_exceeds_any_limit(
        seq in proptest::collection::vec((any::<i32>(), 2400u16..3800, 0u16..4096), 1..64),
    ) {
        let c = cfg_soft();
        let r = c.raw();
        let mut s = DutyLimiterState::new();
        for (req, vin, vout) in seq {
            let before = s;
            let out = c.update(&mut s, req, vin, vout);
            prop_assert!(out <= r.full_scale);
            prop_assert!(i32::from(out) <= req.max(0));
            prop_assert!(out <= c.limit_counts(vin));
            prop_assert!(i32::from(out) << 8 <= before.last_q8() + r.slew_q8);
            prop_assert!(out == 0 || out >= r.min_on_counts);
            if vout >= r.ov_trip_counts || vin < r.vin_lo_counts || vin > r.vin_hi_counts {
                prop_assert_eq!(out, 0);
            }
        }
    }

    #[test]
    fn raw_coefficients_never_panic(
        lo in any::<u16>(), hi in any::<u16>(), shift in any::<u8>(),
        t in any::<[i32; DUTY_TABLE_LEN]>(), min_off in any::<i32>(), min_on in any::<u16>(),
        fs in any::<u16>(), slew in any::<i32>(), thresholds in any::<[u16; 4]>(),
        seq in proptest::collection::vec((any::<i32>(), any::<u16>(), any::<u16>()), 1..32),
    ) {
        let c = DutyLimiterConfig::from_raw(DutyLimiterRaw {
            vin_lo_counts: lo, vin_hi_counts: hi, shift,
            saturation_q8: t, gain_peak_q8: t, light_load_q8: t,
            min_off_q8: min_off, min_on_counts: min_on, full_scale: fs, slew_q8: slew,
            vout_lo_counts: thresholds[0], vout_hi_counts: thresholds[1],
            ov_trip_counts: thresholds[2], ov_resume_counts: thresholds[3],
        });
        let mut s = DutyLimiterState::new();
        for (req, vin, vout) in seq {
            let out = c.update(&mut s, req, vin, vout);
            prop_assert!(out <= fs);
        }
    }
}

/// The limiter as first written, every sum and product in i64 (the reference for the 32-bit
/// arithmetic of [`DutyLimiterConfig::update`]); returns the duty and the new
/// `(last_q8, overvoltage)`.
fn update_i64(
    c: &DutyLimiterRaw,
    last_q8: i32,
    tripped: bool,
    request: i32,
    vin: u16,
    vout: u16,
) -> (u16, i32, bool) {
    if vin < c.vin_lo_counts
        || vin > c.vin_hi_counts
        || vout < c.vout_lo_counts
        || vout > c.vout_hi_counts
    {
        return (0, 0, tripped);
    }
    let mut tripped = tripped;
    if tripped {
        if vout > c.ov_resume_counts {
            return (0, 0, true);
        }
        tripped = false;
    }
    if vout >= c.ov_trip_counts {
        return (0, 0, true);
    }
    let shift = u32::from(c.shift.min(16));
    let off = u32::from(vin - c.vin_lo_counts);
    let idx = (off >> shift) as usize;
    let frac = i64::from(off & ((1u32 << shift) - 1));
    let interp = |t: &[i32; DUTY_TABLE_LEN]| -> i64 {
        match t.get(idx) {
            None => 0,
            Some(&a) => {
                let b = i64::from(*t.get(idx + 1).unwrap_or(&a));
                i64::from(a) + (((b - i64::from(a)) * frac) >> shift)
            }
        }
    };
    let fs_q8 = i64::from(c.full_scale) << 8;
    let lim = i64::from(c.min_off_q8)
        .min(interp(&c.saturation_q8))
        .min(interp(&c.gain_peak_q8))
        .min(interp(&c.light_load_q8))
        .clamp(0, fs_q8);
    let req_q8 = i64::from(request).clamp(0, i64::from(c.full_scale)) << 8;
    let ramp_q8 = i64::from(last_q8) + i64::from(c.slew_q8);
    let out = lim.min(ramp_q8).min(req_q8).clamp(0, fs_q8);
    let whole = (out >> 8) as u16;
    (
        if whole < c.min_on_counts { 0 } else { whole },
        out as i32,
        tripped,
    )
}

/// A table of any values or of plan-like duties.
fn any_table() -> impl Strategy<Value = [i32; DUTY_TABLE_LEN]> {
    prop_oneof![
        any::<[i32; DUTY_TABLE_LEN]>(),
        proptest::array::uniform32(0i32..=256_000)
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(1000))]
    /// The same duties and states as the all-i64 formulation on any raw coefficients and
    /// readings, mostly inside the windows (computed: exact integer identity).
    #[test]
    fn same_as_the_64_bit_formulation(
        lo in 0u16..4000, span in 0u16..2000, shift in 0u8..20,
        sat in any_table(), peak in any_table(), light in any_table(),
        min_off in prop_oneof![any::<i32>(), 0i32..=256_000], min_on in 0u16..100,
        fs in prop_oneof![any::<u16>(), 1u16..=1000], slew in prop_oneof![any::<i32>(), 1i32..5000],
        ov in 0u16..4096, resume in 0u16..4096,
        seq in proptest::collection::vec(
            (prop_oneof![any::<i32>(), -10i32..1100], 0u16..6500, 0u16..4096), 1..48),
    ) {
        let raw = DutyLimiterRaw {
            vin_lo_counts: lo, vin_hi_counts: lo.saturating_add(span), shift,
            saturation_q8: sat, gain_peak_q8: peak, light_load_q8: light,
            min_off_q8: min_off, min_on_counts: min_on, full_scale: fs, slew_q8: slew,
            vout_lo_counts: 10, vout_hi_counts: 4085,
            ov_trip_counts: ov.max(resume), ov_resume_counts: ov.min(resume),
        };
        let c = DutyLimiterConfig::from_raw(raw);
        let mut s = DutyLimiterState::new();
        let (mut last, mut tripped) = (0, false);
        for (req, vin, vout) in seq {
            let out = c.update(&mut s, req, vin, vout);
            let (want, l, t) = update_i64(&raw, last, tripped, req, vin, vout);
            (last, tripped) = (l, t);
            prop_assert_eq!(out, want);
            prop_assert_eq!((s.last_q8(), s.overvoltage()), (last, tripped));
        }
    }
}

proptest! {
    // Each case builds the tables (a few hundred plan evaluations): fewer cases.
    #![proptest_config(ProptestConfig::with_cases(24))]
    #[test]
    fn constructor_never_panics(
        d in proptest::collection::vec(
            prop_oneof![
                10 => (0.0f32..1.0).prop_map(|u| (true, u)),
                1 => any::<f32>().prop_map(|x| (false, x)),
                1 => proptest::sample::select(std::vec![
                    f32::NAN, f32::INFINITY, -1.0, 0.0, f32::MIN_POSITIVE / 2.0,
                ]).prop_map(|x| (false, x)),
            ],
            10,
        ),
        fs in any::<u16>(), adc in any::<u16>(),
    ) {
        let v = |k: usize, lo: f32, hi: f32| match d[k] {
            (true, u) => lo + (hi - lo) * u,
            (false, x) => x,
        };
        let (a, b) = (v(0, 2.0, 8.0), v(1, 2.0, 8.0));
        let Ok(input_v) = Range::new("input_v", a.min(b), a.max(b)) else {
            return Ok(());
        };
        let p = DutyLimiterParams {
            input_v,
            output_v: v(2, 8.0, 16.0),
            max_load_current_a: v(3, 0.01, 1.0),
            light_load: Some(LightLoad {
                min_load_current_a: v(4, 0.001, 0.1),
                max_output_v: v(5, 10.0, 30.0),
            }),
            input_v_per_count: v(6, 1e-3, 1e-2),
            output_v_per_count: v(7, 5e-3, 2e-2),
            adc_max_counts: adc,
            duty_full_scale: fs,
            soft_start_s: v(8, 0.0, 0.1),
            tick_s: v(9, 1e-5, 1e-3),
            overvoltage_v: v(5, 10.0, 30.0) + 1.0,
            resume_v: v(5, 10.0, 30.0),
            inductance_tol: v(6, 0.0, 0.3),
            resistance_tol: v(7, 0.0, 0.3),
        };
        if let Ok(c) = DutyLimiterConfig::new(&stage(), &p) {
            let r = c.raw();
            prop_assert!(r.vin_lo_counts <= r.vin_hi_counts);
            prop_assert!(r.ov_resume_counts < r.ov_trip_counts);
            let mut s = DutyLimiterState::new();
            let out = c.update(&mut s, i32::MAX, r.vin_lo_counts, r.ov_resume_counts);
            prop_assert!(out <= r.full_scale);
        }
    }
}
