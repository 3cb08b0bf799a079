//! The plant against closed forms on linear cases: switch-off with every clamp kind (docs/references.md
//! section 2: C2.1 to C2.6), the RL step and PWM steady state (C1.1, C1.3), and the `lenz`
//! plan routines. Every figure here is measured on the simulated waveform (zero crossings,
//! energies per element, peaks), not computed from the same formulas.
//!
//! Labels as in docs/references.md: "computed" = computed: closed form cross-checked numerically with
//! scipy solve_ivp; "published: RLT" = first-order step table (63.2 / 86.5 / 95.0 / 98.2 /
//! 99.3 % at 1..5 τ); "published form: TOSH" = Toshiba Electronic Devices & Storage, MOSFET FAQ
//! "How to calculate the avalanche energy"; "IFX" = Infineon smart high-side switch datasheets,
//! section "Inductive load switch-off energy dissipation".

use lenz_harness::plant::{Clamp, CoilDrive, CoilDriveSpec, CoilSpec, PlantEventKind, SwitchSpec};

fn rel(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

fn check(what: &str, got: f64, want: f64, rtol: f64) {
    assert!(
        rel(got, want) <= rtol,
        "{what}: got {got}, want {want}, rel err {:.3e} > {rtol:e}",
        rel(got, want)
    );
}

fn drive(l: f64, r: f64, vs: f64, clamp: Clamp, bv: f64) -> CoilDrive {
    CoilDrive::new(CoilDriveSpec {
        coil: CoilSpec::linear(l, r, 20.0),
        clamp,
        switch: SwitchSpec {
            on_resistance_ohm: 0.0,
            breakdown_v: bv,
        },
        supply_v: vs,
        source_resistance_ohm: 0.0,
        shunt_ohm: 0.0,
    })
    .expect("valid test plant")
}

/// Valve of CHECKS section 2: 24 V, 32 Ω, 120 mH (I0 = 0.75 A).
fn valve(clamp: Clamp, bv: f64) -> CoilDrive {
    drive(0.120, 32.0, 24.0, clamp, bv)
}

/// Switches on for 40 time constants (current within 1e-17 of V/R), then off.
fn charged_then_off(mut p: CoilDrive, tau: f64) -> CoilDrive {
    p.set_switch(true);
    p.advance_to(40.0 * tau);
    p.set_switch(false);
    p
}

/// Time after the switch-off edge at which the current falls to `ix`, by bisection on copies
/// of the plant (the plant's own events give only the zero crossing).
fn time_to(p: &CoilDrive, ix: f64) -> f64 {
    let t0 = p.time_s();
    let (mut lo, mut hi) = (0.0, 0.2);
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        let mut q = p.clone();
        q.advance_to(t0 + mid);
        if q.current_a() > ix {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

struct Off {
    t10: f64,
    t0: Option<f64>,
    peak_v: f64,
    clamp_j: f64,
    switch_j: f64,
    winding_j: f64,
    supply_j: f64,
    p: CoilDrive,
}

fn switch_off(p: CoilDrive, tau: f64, i_x: f64) -> Off {
    let mut p = charged_then_off(p, tau);
    let t10 = time_to(&p, i_x);
    let e0 = *p.energies();
    p.advance_to(p.time_s() + 0.1);
    let rec = *p.switch_offs().last().expect("a switch-off was recorded");
    let e = p.energies();
    Off {
        t10,
        t0: rec.decay_s,
        peak_v: rec.peak_switch_v,
        clamp_j: rec.clamp_j,
        switch_j: rec.switch_j,
        winding_j: e.winding_j - e0.winding_j,
        supply_j: e.supply_j - e0.supply_j,
        p,
    }
}

const TAU_VALVE: f64 = 0.120 / 32.0;

#[test]
fn c2_1_freewheel_diode() {
    // CHECKS C2.1 (computed).
    let o = switch_off(
        valve(Clamp::Freewheel { vf_v: 0.7 }, 1000.0),
        TAU_VALVE,
        0.075,
    );
    check("t to 10 %", o.t10, 7.782754246e-3, 1e-7);
    check("t to 0", o.t0.unwrap(), 13.3630432e-3, 1e-7);
    check("peak switch voltage", o.peak_v, 24.7, 1e-12);
    check("diode energy", o.clamp_j, 1.764128401e-3, 1e-7);
    check("coil R energy", o.winding_j, 31.9858716e-3, 1e-7);
    // Ideal diode: t to 10 % = tau ln 10 = 8.634694099 ms (CHECKS C2.1, computed).
    let o = switch_off(
        valve(Clamp::Freewheel { vf_v: 0.0 }, 1000.0),
        TAU_VALVE,
        0.075,
    );
    check("ideal diode t to 10 %", o.t10, 8.634694099e-3, 1e-7);
    assert!(o.t0.is_none(), "an ideal diode never reaches zero");
}

#[test]
fn c2_2_diode_zener() {
    // CHECKS C2.2 (computed; all matched solve_ivp to 1e-11).
    for (vz, t10, t0, e, vpk) in [
        (24.0, 2.198044883e-3, 2.545784199e-3, 20.93257868e-3, 48.7),
        (47.0, 1.344261523e-3, 1.528347561e-3, 25.48643991e-3, 71.7),
    ] {
        let o = switch_off(
            valve(
                Clamp::DiodeZener {
                    vf_v: 0.7,
                    vz_v: vz,
                },
                1000.0,
            ),
            TAU_VALVE,
            0.075,
        );
        check("t to 10 %", o.t10, t10, 1e-7);
        check("t to 0", o.t0.unwrap(), t0, 1e-7);
        check("clamp energy", o.clamp_j, e, 1e-7);
        check("peak switch voltage", o.peak_v, vpk, 1e-12);
        assert_eq!(o.switch_j, 0.0, "the switch takes nothing");
    }
    // Reference coil 12 V, 24 Ω, 40 mH, I0 0.5 A, Vc 18.7 V.
    let o = switch_off(
        drive(
            0.040,
            24.0,
            12.0,
            Clamp::DiodeZener {
                vf_v: 0.7,
                vz_v: 18.0,
            },
            1000.0,
        ),
        0.040 / 24.0,
        0.05,
    );
    check("ref t to 10 %", o.t10, 0.7225715381e-3, 1e-7);
    check("ref t to 0", o.t0.unwrap(), 0.8262318846e-3, 1e-7);
    check("ref clamp energy", o.clamp_j, 3.544790512e-3, 1e-7);
    check("ref peak", o.peak_v, 30.7, 1e-12);
}

#[test]
fn c2_3_clamp_across_the_switch() {
    // CHECKS C2.3 (computed; exact form confirmed against IFX; R = 0 form published: TOSH).
    for (vcl, t0, t10, esw, eas, esup) in [
        (
            45.0,
            2.858025195e-3,
            2.452224253e-3,
            42.16144345e-3,
            72.32142857e-3,
            22.48610318e-3,
        ),
        (
            65.0,
            1.728057012e-3,
            1.514729358e-3,
            38.89775197e-3,
            53.50609756e-3,
            14.36224688e-3,
        ),
    ] {
        let o = switch_off(
            valve(Clamp::AcrossSwitch { vcl_v: vcl }, 100.0),
            TAU_VALVE,
            0.075,
        );
        check("t to 0", o.t0.unwrap(), t0, 1e-7);
        check("t to 10 %", o.t10, t10, 1e-7);
        check("switch energy", o.switch_j, esw, 1e-7);
        check("supply energy", o.supply_j, esup, 1e-7);
        check("peak switch voltage", o.peak_v, vcl, 1e-12);
        assert_eq!(
            o.p.energies().avalanche_j,
            0.0,
            "an active clamp, not avalanche"
        );
        // The R = 0 avalanche form is an upper bound of the exact energy (CHECKS Findings 4).
        assert!(o.switch_j < eas);
    }
}

#[test]
fn c2_4_avalanche_of_an_unclamped_switch() {
    // CHECKS C2.4: 12 V, 40 mH, 0.5 A, BV 65 V, coil R 24 Ω: exact 5.339687319 mJ, avalanche
    // duration 340.1589272 us (computed). With 1 pF across the switch the ringing up to BV
    // takes nanoseconds and stores 2 nJ, below the tolerance.
    let p = drive(0.040, 24.0, 12.0, Clamp::Unclamped { c_f: 1e-12 }, 65.0);
    let mut p = charged_then_off(p, 0.040 / 24.0);
    p.advance_to(p.time_s() + 5e-3);
    let rec = p.switch_offs()[0];
    check("avalanche energy", rec.avalanche_j, 5.339687319e-3, 1e-5);
    check("peak switch voltage", rec.peak_switch_v, 65.0, 1e-12);
    let ev = p.events();
    let start = ev
        .iter()
        .find(|e| e.kind == PlantEventKind::SwitchClampStart)
        .unwrap()
        .t_s;
    let end = ev
        .iter()
        .find(|e| e.kind == PlantEventKind::SwitchClampEnd)
        .unwrap()
        .t_s;
    check("avalanche duration", end - start, 340.1589272e-6, 1e-5);
}

#[test]
fn c2_5_resistor_diode() {
    // CHECKS C2.5 (computed).
    for (rs, t10, t0, vpk, e_rs, e_d, e_coil) in [
        (
            33.0,
            4.029544137e-3,
            7.860252927e-3,
            49.45,
            16.67262729e-3,
            0.9099765549e-3,
            16.16739616e-3,
        ),
        (
            100.0,
            2.037556069e-3,
            4.508036928e-3,
            99.7,
            25.21928913e-3,
            0.4605383478e-3,
            8.070172522e-3,
        ),
    ] {
        let o = switch_off(
            valve(
                Clamp::ResistorDiode {
                    r_ohm: rs,
                    vf_v: 0.7,
                },
                1000.0,
            ),
            TAU_VALVE,
            0.075,
        );
        check("t to 10 %", o.t10, t10, 1e-7);
        check("t to 0", o.t0.unwrap(), t0, 1e-7);
        check("peak", o.peak_v, vpk, 1e-12);
        check("E Rs", o.p.energies().clamp_resistor_j, e_rs, 1e-7);
        check("E diode", o.p.energies().diode_j, e_d, 1e-7);
        check("E coil R", o.winding_j, e_coil, 1e-7);
    }
}

#[test]
fn c2_5_resistor_clamp_sharing_with_the_switch() {
    // 100 Ω resistor clamp with the switch breaking down at 80 V: the switch clamps until
    // Vs + Vf + Rs i falls to 80 V (i = 0.553 A), then the resistor takes everything. The
    // energy split must still balance exactly (computed: energy conservation).
    let o = switch_off(
        valve(
            Clamp::ResistorDiode {
                r_ohm: 100.0,
                vf_v: 0.7,
            },
            80.0,
        ),
        TAU_VALVE,
        0.075,
    );
    assert!(o.p.energies().avalanche_j > 0.0);
    check("peak", o.peak_v, 80.0, 1e-12);
    let e = o.p.energies();
    let sinks = e.winding_j + e.coil_clamp_j() + e.switch_off_j();
    check("balance", e.supply_j, sinks, 1e-9);
}

#[test]
fn c2_6_unclamped_ringing_peak() {
    // CHECKS C2.6 (computed, ODE 1e-10): damped exact first peak and its time.
    let p = valve(Clamp::Unclamped { c_f: 100e-12 }, 1e6);
    let mut p = charged_then_off(p, TAU_VALVE);
    let t_off = p.time_s();
    p.advance_to(t_off + 20e-6);
    let peak = p
        .events()
        .iter()
        .find(|e| e.kind == PlantEventKind::RingPeak && e.t_s > t_off)
        .unwrap();
    check("valve peak time", peak.t_s - t_off, 5.442998673e-6, 1e-7);
    check(
        "valve peak",
        p.switch_offs()[0].peak_switch_v,
        25985.91385,
        1e-9,
    );
    // 12 V, 2 uH, 0.05 ohm, 10 nF, I0 1 A: on for tau ln(240/239) reaches exactly 1 A.
    let mut p = drive(2e-6, 0.05, 12.0, Clamp::Unclamped { c_f: 10e-9 }, 1e6);
    p.set_switch(true);
    p.advance_to(40e-6 * (240.0f64 / 239.0).ln());
    check("start current", p.current_a(), 1.0, 1e-12);
    p.set_switch(false);
    let t_off = p.time_s();
    p.advance_to(t_off + 1e-6);
    let peak = p
        .events()
        .iter()
        .find(|e| e.kind == PlantEventKind::RingPeak && e.t_s > t_off)
        .unwrap();
    check("small peak time", peak.t_s - t_off, 0.3215088574e-6, 1e-7);
    check(
        "small peak",
        p.switch_offs()[0].peak_switch_v,
        30.45673074,
        1e-8,
    );
}

#[test]
fn c1_1_step_and_the_plan_routines() {
    // CHECKS C1.1: 40 mH, 24 Ω, 12 V (published: RLT; computed).
    let mut p = drive(0.040, 24.0, 12.0, Clamp::Freewheel { vf_v: 0.7 }, 1000.0);
    p.set_switch(true);
    let tau = 0.040 / 24.0;
    for (n, want) in [
        (1.0, 0.3160602794),
        (2.0, 0.4323323584),
        (3.0, 0.4751064658),
        (4.0, 0.4908421806),
        (5.0, 0.4966310265),
    ] {
        p.advance_to(n * tau);
        check("i(n tau)", p.current_a(), want, 1e-9);
    }
    // Against the lenz f32 plan routines (1e-5 relative, the f32 accuracy they document).
    let coil = lenz::CoilParams::new(0.040, 24.0)
        .with_diode_drop_v(0.7)
        .validate()
        .unwrap();
    let mut p = drive(0.040, 24.0, 12.0, Clamp::Freewheel { vf_v: 0.7 }, 1000.0);
    p.set_switch(true);
    for t in [0.2e-3, 1e-3, 3e-3] {
        p.advance_to(t);
        let plan = coil.current_after_a(12.0, 20.0, 0.0, t as f32).unwrap() as f64;
        check("plan current_after_a", p.current_a(), plan, 1e-5);
    }
    let t_pull = coil.pull_in_time_s(12.0, 20.0, 0.25).unwrap() as f64;
    let p0 = drive(0.040, 24.0, 12.0, Clamp::Freewheel { vf_v: 0.7 }, 1000.0);
    let mut q = p0.clone();
    q.set_switch(true);
    q.advance_to(t_pull);
    check(
        "pull-in current at the plan's time",
        q.current_a(),
        0.25,
        1e-5,
    );
}

#[test]
fn c1_3_pwm_periods_and_steady_state() {
    // CHECKS C1.3: 40 mH, 24 Ω, 12 V, 2 kHz, D 0.6, Vf 0.7 V (computed).
    let mut p = drive(0.040, 24.0, 12.0, Clamp::Freewheel { vf_v: 0.7 }, 1000.0);
    let period = 0.5e-3;
    let mut ends = Vec::new();
    let mut imax = 0.0;
    let mut q_last = 0.0;
    for k in 0..400 {
        let t0 = k as f64 * period;
        p.set_switch(true);
        p.advance_to(t0 + 0.6 * period);
        imax = p.current_a();
        p.set_switch(false);
        let q0 = p.charge_c();
        p.advance_to(t0 + period);
        let _ = q0;
        ends.push(p.current_a());
        q_last = p.charge_c();
    }
    check("end of period 1", ends[0], 0.06975295409, 1e-8);
    check("end of period 5", ends[4], 0.2090770671, 1e-8);
    check("end of period 20", ends[19], 0.2684604372, 1e-8);
    check("imax", imax, 0.3071591096, 1e-8);
    check("imin", *ends.last().unwrap(), 0.2691275377, 1e-8);
    // Mean current over the last period from the charge integral.
    let mut q = p.clone();
    let t = q.time_s();
    q.set_switch(true);
    q.advance_to(t + 0.6 * period);
    q.set_switch(false);
    q.advance_to(t + period);
    check("mean", (q.charge_c() - q_last) / period, 0.2883333333, 1e-8);
    // And the plan routine (f32).
    let coil = lenz::CoilParams::new(0.040, 24.0)
        .with_diode_drop_v(0.7)
        .validate()
        .unwrap();
    let ss = coil.pwm_steady_state(12.0, 20.0, 0.6, 2000.0).unwrap();
    check("plan imax", imax, ss.max_a as f64, 1e-5);
    check(
        "plan mean",
        (q.charge_c() - q_last) / period,
        ss.mean_a as f64,
        1e-5,
    );
}

#[test]
fn energy_balances_with_source_and_shunt_and_heating() {
    // Supply energy = every dissipation + what is stored, to rounding, with a source
    // resistance, a shunt, an on-resistance and the winding heating up (computed: energy
    // conservation of the circuit).
    let mut spec = CoilDriveSpec {
        coil: CoilSpec::linear(0.120, 32.0, 25.0),
        clamp: Clamp::DiodeZener {
            vf_v: 0.7,
            vz_v: 24.0,
        },
        switch: SwitchSpec {
            on_resistance_ohm: 0.2,
            breakdown_v: 60.0,
        },
        supply_v: 24.0,
        source_resistance_ohm: 0.5,
        shunt_ohm: 0.1,
    };
    spec.coil.thermal = Some(lenz_harness::plant::Thermal {
        r_th_k_per_w: 20.0,
        c_th_j_per_k: 0.5,
        ambient_c: 25.0,
    });
    let mut p = CoilDrive::new(spec).unwrap();
    for k in 0..200 {
        let t0 = k as f64 * 50e-6;
        p.set_switch(k < 100 || k % 2 == 0);
        p.advance_to(t0 + 50e-6);
    }
    p.set_switch(false);
    p.advance_to(0.2);
    let e = p.energies();
    let sinks = e.winding_j
        + e.coil_clamp_j()
        + e.switch_off_j()
        + e.switch_conduction_j
        + e.shunt_j
        + e.source_j
        + p.stored_energy_j();
    check("balance", e.supply_j, sinks, 1e-10);
    assert!(p.winding_temp_c() > 25.0, "the winding heated up");
}

#[test]
fn copper_heating_settles_at_the_thermal_fixed_point() {
    // 24 V on 32 Ω (20 °C) through 25 K/W to 25 °C ambient, 0.4 J/K (tau_th = 10 s): the
    // steady state solves T = Ta + Rth V² R(T)/(R(T))² = Ta + Rth V²/R(T) with
    // R(T) = 32 (1 + 0.00393 (T − 20)) (IEC 60028 copper). Solved here by fixed-point
    // iteration (computed: closed form cross-checked numerically), against 120 s of simulation.
    let mut spec = CoilDriveSpec {
        coil: CoilSpec::linear(0.120, 32.0, 25.0),
        clamp: Clamp::Freewheel { vf_v: 0.7 },
        switch: SwitchSpec {
            on_resistance_ohm: 0.0,
            breakdown_v: 100.0,
        },
        supply_v: 24.0,
        source_resistance_ohm: 0.0,
        shunt_ohm: 0.0,
    };
    spec.coil.thermal = Some(lenz_harness::plant::Thermal {
        r_th_k_per_w: 25.0,
        c_th_j_per_k: 0.4,
        ambient_c: 25.0,
    });
    let mut p = CoilDrive::new(spec).unwrap();
    p.set_switch(true);
    p.advance_to(120.0);
    let r = |t: f64| 32.0 * (1.0 + 0.00393 * (t - 20.0));
    let mut t = 25.0;
    for _ in 0..200 {
        t = 25.0 + 25.0 * 24.0 * 24.0 / r(t);
    }
    check("winding temperature", p.winding_temp_c(), t, 1e-6);
    check("hot current", p.current_a(), 24.0 / r(t), 1e-6);
}

#[test]
fn c2_7_relay_release_current_part() {
    // CHECKS C2.7: demo relay 12 V, 120 Ω, 0.3 H, I_nom 100 mA; decay to 10 % and 30 %
    // (computed; release fraction published: RELAY, relay datasheet convention).
    for (clamp, t10, t30) in [
        (
            Clamp::Freewheel { vf_v: 0.7 },
            4.749370268e-3,
            2.707467427e-3,
        ),
        (
            Clamp::DiodeZener {
                vf_v: 0.7,
                vz_v: 24.0,
            },
            0.8713344659e-3,
            0.649787376e-3,
        ),
        (
            Clamp::ResistorDiode {
                r_ohm: 470.0,
                vf_v: 0.7,
            },
            1.119794426e-3,
            0.5984650962e-3,
        ),
    ] {
        let p = charged_then_off(drive(0.3, 120.0, 12.0, clamp, 1000.0), 0.3 / 120.0);
        check("relay t to 10 %", time_to(&p, 0.010), t10, 1e-7);
        check("relay t to 30 %", time_to(&p, 0.030), t30, 1e-7);
    }
}
