//! The brushed DC motor in the closed loop: the demo vent motor (invented values, CHECKS
//! C5.1) on its 12 V bridge, driven tick by tick through the `Controller` interface.
//!
//! - Plant-in-loop consistency: the steady speed and current of a run at full drive and at a
//!   PWM duty against the textbook steady state of the DC machine,
//!   `ω = (V − R·T/k)/(k + R·b/k)`, `i = (T + b·ω)/k` (A. E. Fitzgerald, C. Kingsley,
//!   S. D. Umans, *Electric Machinery*, 6th ed., ch. 7, from memory), evaluated by
//!   `lenz::motor::Motor::steady_state` and, independently, in f64 here.
//! - The `lenz::drive::MotorDriver` in the loop (`controllers::BridgeMotorDriver`): start, run,
//!   stop (coast, then brake below the brake speed), reversal through brake below the
//!   reversal speed, and a jam detected with its latency and cause.
//! - Checks that can fail: a controller that reverses at full speed without braking fails
//!   `reversal_peak_current`; one without a jam detector fails `jam_latency`; one that slows
//!   the motor by cutting the duty pumps a bus whose supply cannot sink current above the
//!   capacitor's rating (`bus_voltage`). The driver passes all three.
//!
//! Run with `--nocapture` to see the measured figures.

use lenz::drive::MotorDriverConfig;
use lenz_harness::closed_loop::demo_vent::{
    VENT_BUS_RATING_V, VENT_FRICTION, VENT_INDUCTANCE_H, VENT_LOAD_NM, VENT_PWM_MAX_DUTY,
    VENT_RESISTANCE_OHM, VENT_SUPPLY_V, VENT_SWITCH_OHM, VENT_TORQUE_CONSTANT, vent_driver_config,
    vent_driver_params, vent_loop, vent_plant, vent_plant_of, vent_sensors, vent_spec,
};
use lenz_harness::closed_loop::{
    Actuation, Controller, Direction, Drive, MotorBridge, MotorCommand, MotorLimits, RunResult,
    Sensed, Telemetry, TripCause, run,
};
use lenz_harness::controllers::BridgeMotorDriver;
use lenz_harness::faults::{Fault, FaultAt};

const FULL: i32 = 65_536;

fn fwd(duty: f64) -> MotorCommand {
    MotorCommand::Forward {
        duty_q16: (duty * 65_536.0).round() as i32,
    }
}

fn rev(duty: f64) -> MotorCommand {
    MotorCommand::Reverse {
        duty_q16: (duty * 65_536.0).round() as i32,
    }
}

/// Firmware without any guard: drives the bridge as commanded, at once (full on, or PWM at the
/// duty), brakes and coasts as commanded, never trips.
struct OpenLoop;

impl Controller for OpenLoop {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let drive = |q: i32| {
            if q >= FULL {
                Drive::On
            } else {
                Drive::Pwm {
                    duty: f64::from(q) / f64::from(FULL),
                }
            }
        };
        match s.motor {
            MotorCommand::Forward { duty_q16 } => {
                Actuation::bridge(Direction::Forward, drive(duty_q16))
            }
            MotorCommand::Reverse { duty_q16 } => {
                Actuation::bridge(Direction::Reverse, drive(duty_q16))
            }
            MotorCommand::Brake => Actuation::BRAKE,
            MotorCommand::Coast => Actuation::COAST,
        }
    }
}

/// Records every tick's actuation of the controller it wraps.
struct Recorder<C> {
    inner: C,
    acts: Vec<Actuation>,
}

impl<C: Controller> Controller for Recorder<C> {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let a = self.inner.tick(s);
        self.acts.push(a);
        a
    }
    fn telemetry(&self) -> Telemetry {
        self.inner.telemetry()
    }
}

fn driver() -> BridgeMotorDriver {
    BridgeMotorDriver::new(vent_driver_config().unwrap(), VENT_PWM_MAX_DUTY).unwrap()
}

fn limits_with(
    f: impl FnOnce(&mut MotorLimits),
) -> impl FnOnce(&mut lenz_harness::closed_loop::LoopConfig) {
    move |cfg| {
        let mut m = cfg.limits.motor.unwrap();
        f(&mut m);
        cfg.limits.motor = Some(m);
    }
}

fn show(label: &str, r: &RunResult) {
    println!("{label}:");
    for p in &r.properties {
        println!(
            "  {:<28} {:>12.6} {} (limit {}) {}{}",
            p.name,
            p.value,
            p.unit,
            p.limit,
            if p.pass { "pass" } else { "FAIL" },
            p.detail
                .as_deref()
                .map_or(String::new(), |d| format!(" — {d}"))
        );
    }
}

fn prop(r: &RunResult, name: &str) -> (f64, bool) {
    let p = r
        .property(name)
        .unwrap_or_else(|| panic!("property {name} not listed"));
    (p.value, p.pass)
}

/// The textbook steady state in f64 (module docs), loop resistance `r`.
fn textbook(v: f64, r: f64, t: f64) -> (f64, f64) {
    let (k, b) = (VENT_TORQUE_CONSTANT, VENT_FRICTION);
    let w = (v - r * t / k) / (k + r * b / k);
    let i = (t + b * w) / k;
    (w, i)
}

#[test]
fn steady_run_in_the_loop_agrees_with_the_textbook_steady_state() {
    // Full drive for 1 s (28 mechanical time constants): the loop's final state against the
    // steady state at the plant's own winding temperature, with the supply's source
    // resistance in the loop (R = R_w(T) + 2 R_sw + R_s, V the open-circuit supply).
    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let cfg = vent_loop(1.0, vec![(0.0, fwd(1.0))], vec![]);
    let res = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    let p = plant.plant();
    let temp = p.winding_temp_c();
    let r_w =
        VENT_RESISTANCE_OHM * (1.0 + f64::from(lenz::coil::COPPER_ALPHA20_PER_K) * (temp - 20.0));
    let r = r_w + 2.0 * VENT_SWITCH_OHM + p.spec().source_resistance_ohm;
    let (w, i) = textbook(VENT_SUPPLY_V, r, VENT_LOAD_NM);
    // The plan routine (f32) with the same loop resistance, as a second source.
    let m = lenz::motor::MotorParams::new(
        VENT_INDUCTANCE_H as f32,
        VENT_RESISTANCE_OHM as f32,
        VENT_TORQUE_CONSTANT as f32,
    )
    .with_friction_nm_s_per_rad(VENT_FRICTION as f32)
    .with_bridge_resistance_ohm((r - r_w) as f32)
    .validate()
    .unwrap();
    let plan = m
        .steady_state(VENT_SUPPLY_V as f32, temp as f32, VENT_LOAD_NM as f32)
        .unwrap();
    let (ew, ei) = (
        (p.speed_rad_s() - w).abs() / w,
        (p.current_a() - i).abs() / i,
    );
    println!(
        "full drive: loop {:.4} rad/s {:.5} A; textbook {w:.4} rad/s {i:.5} A (rel. error {ew:.2e}, {ei:.2e}); plan {:.4} rad/s {:.5} A; winding {temp:.3} °C",
        p.speed_rad_s(),
        p.current_a(),
        plan.speed_rad_s,
        plan.current_a
    );
    // Exact plant: what remains is the winding's warming (R rises by about 2e-4 over the run
    // and the rotor follows it with τ_m ≈ 36 ms, so the state lags the steady state at the
    // final R) and the residual transient (e^-28): 1e-5.
    assert!(ew < 1e-5 && ei < 1e-5, "{ew} {ei}");
    // f32 plan routine: 1e-5 relative.
    assert!((f64::from(plan.speed_rad_s) - w).abs() < 1e-5 * w);
    assert!((f64::from(plan.current_a) - i).abs() < 1e-5 * i);
    assert!(res.passed(), "{:?}", res.violations());

    // PWM at 60 % (slow decay, 20 kHz): the mean speed over the last 20 ms (200 tick samples)
    // against the textbook steady state at the mean applied voltage 0.6·V. The bridge's
    // switching makes the bus equation time-varying, so the average is not exact: 0.5 %.
    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let mut cfg = vent_loop(1.0, vec![(0.0, fwd(0.6))], vec![]);
    cfg.limits.motor = None;
    let res = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    let n = res.waveform.speed_rad_s.len();
    assert_eq!(n, 10_000, "one speed sample per tick");
    let tail = &res.waveform.speed_rad_s[n - 200..];
    let mean_w = tail.iter().sum::<f64>() / 200.0;
    // The samples of the current sit at the ripple's valley (the end of a PWM period): the
    // mean current is the middle of the envelope between samples (a symmetric ripple to first
    // order in T/τ_e).
    let w = &res.waveform;
    let mean_i = (n - 200..n)
        .map(|k| 0.5 * (w.current_min_a[k] + w.current_max_a[k]))
        .sum::<f64>()
        / 200.0;
    let temp = plant.plant().winding_temp_c();
    let r_w =
        VENT_RESISTANCE_OHM * (1.0 + f64::from(lenz::coil::COPPER_ALPHA20_PER_K) * (temp - 20.0));
    let (w, i) = textbook(
        0.6 * VENT_SUPPLY_V,
        r_w + 2.0 * VENT_SWITCH_OHM + 0.6 * 0.05,
        VENT_LOAD_NM,
    );
    println!(
        "PWM 60 %: loop mean {mean_w:.3} rad/s {mean_i:.4} A; textbook {w:.3} rad/s {i:.4} A (rel. {:.2e}, {:.2e})",
        (mean_w - w).abs() / w,
        (mean_i - i).abs() / i
    );
    assert!((mean_w - w).abs() < 5e-3 * w, "{mean_w} against {w}");
    assert!((mean_i - i).abs() < 0.01 * i, "{mean_i} against {i}");
}

#[test]
fn driver_starts_runs_stops_and_reverses_within_its_limits() {
    // Forward, stop, forward again, reverse at full speed, coast: every property of the vent
    // holds; the reversal reaches the reverse drive only after braking the rotor below the
    // reversal speed.
    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let mut cfg = vent_loop(
        2.4,
        vec![
            (0.0, fwd(1.0)),
            (0.5, MotorCommand::Brake),
            (0.8, fwd(1.0)),
            (1.2, rev(1.0)),
            (2.0, MotorCommand::Coast),
        ],
        vec![],
    );
    limits_with(|m| {
        m.reversal_peak_current_max_a = Some(6.0);
        // A reversal first coasts and brakes the rotor down from full speed.
        m.time_to_speed.as_mut().unwrap().max_s = 0.6;
    })(&mut cfg);
    let mut ctrl = Recorder {
        inner: driver(),
        acts: Vec::new(),
    };
    let res = run(&mut plant, &mut ctrl, &cfg).unwrap();
    show("driver: start, stop, start, reverse, coast", &res);
    assert!(res.passed(), "{:?}", res.violations());
    let w = &res.waveform.speed_rad_s;
    let k_rev = 12_000;
    let first_rev = (k_rev..ctrl.acts.len())
        .find(|&k| ctrl.acts[k].direction == Direction::Reverse && ctrl.acts[k].drive != Drive::Off)
        .expect("the driver reverses");
    let braked = (k_rev..first_rev).any(|k| ctrl.acts[k] == Actuation::BRAKE);
    // The speed in the tick the reverse drive starts (sampled at that tick's end).
    println!(
        "reverse drive from tick {first_rev} ({:.1} ms after the command), rotor at {:.2} rad/s; braked before: {braked}",
        (first_rev - k_rev) as f64 * 0.1,
        w[first_rev]
    );
    assert!(braked, "no brake tick before the reversal");
    // Reversal speed 50 rad/s plus the estimator's error at low speed (speed.rs bound):
    // 60 rad/s.
    assert!(w[first_rev].abs() < 60.0, "{}", w[first_rev]);
    // Before the reversal the rotor ran forward at speed; at the end of the reverse drive it
    // runs backwards at speed.
    assert!(
        w[11_999] > 300.0 && w[19_999] < -300.0,
        "{} {}",
        w[11_999],
        w[19_999]
    );
    // Stop at 0.5 s: by 0.8 s the rotor is braked; the vent's load turns the braked rotor
    // backwards, towards R·T/(k² + R·b) = 35.5 rad/s (the guard's creep speed).
    assert!((-36.0..0.0).contains(&w[7_999]), "{}", w[7_999]);
}

#[test]
fn reversal_without_braking_fails_the_reversal_peak() {
    let commands = vec![(0.0, fwd(1.0)), (0.5, rev(1.0))];
    let mut cfg = vent_loop(0.8, commands, vec![]);
    limits_with(|m| m.reversal_peak_current_max_a = Some(6.0))(&mut cfg);

    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let naive = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    show("open loop: reversal at full speed", &naive);
    let (peak, pass) = prop(&naive, "reversal_peak_current");
    assert!(
        !pass,
        "a full-speed reversal without braking must fail: {peak} A"
    );
    // Bound: (V + k·ω)/R with the speed at the reversal (no current can exceed the whole
    // voltage over the loop resistance): between the stall current and that bound.
    let r = VENT_RESISTANCE_OHM + 2.0 * VENT_SWITCH_OHM + 0.05;
    let (w0, _) = textbook(VENT_SUPPLY_V, r, VENT_LOAD_NM);
    let bound =
        (VENT_SUPPLY_V + VENT_TORQUE_CONSTANT * w0) / (VENT_RESISTANCE_OHM + 2.0 * VENT_SWITCH_OHM);
    println!("naive reversal peak {peak:.3} A, bound (V + kω)/R = {bound:.3} A");
    assert!(peak > VENT_SUPPLY_V / r && peak <= bound, "{peak}");

    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let guarded = run(&mut plant, &mut driver(), &cfg).unwrap();
    show("driver: reversal at full speed", &guarded);
    let (peak_g, pass) = prop(&guarded, "reversal_peak_current");
    assert!(pass && peak_g <= 6.0, "{peak_g}");
    println!("reversal peaks: without braking {peak:.3} A, driver {peak_g:.3} A");
}

/// The largest current magnitude from `from_s` on (the envelope between recorded points).
fn peak_after(r: &RunResult, from_s: f64) -> f64 {
    let w = &r.waveform;
    (0..w.t_s.len())
        .filter(|&k| w.t_s[k] >= from_s)
        .map(|k| w.current_max_a[k].abs().max(w.current_min_a[k].abs()))
        .fold(0.0, f64::max)
}

#[test]
fn restart_while_coasting_stays_within_the_guard_limit() {
    // Full speed, stop (the guard coasts: too fast to brake), forward again while the rotor
    // still turns at about 300 rad/s. Ramping from duty zero, the slow-decay PWM shorts the
    // spinning winding for most of each period: a brake of −k·ω/R that exceeds the guard's
    // 4 A. Resumed at the back-EMF's duty less the coasting estimate's error (bridge.rs,
    // "Soft start"), it stays within.
    let limit = 4.0;
    let sensors = vent_sensors();
    let with_fix = vent_driver_params(&sensors).unwrap();
    let margin = with_fix
        .guard
        .resume_margin_rad_s
        .expect("the vent's guard probes");
    let mut without_fix = with_fix;
    without_fix.guard.resume_margin_rad_s = None;
    println!("resume margin {margin:.2} rad/s");
    for resume_s in [0.53, 0.56] {
        let cfg = vent_loop(
            resume_s + 0.15,
            vec![
                (0.0, fwd(1.0)),
                (0.5, MotorCommand::Coast),
                (resume_s, fwd(1.0)),
            ],
            vec![],
        );
        let mut peaks = Vec::new();
        for (label, params) in [("from duty zero", without_fix), ("resumed", with_fix)] {
            let config = MotorDriverConfig::new(&params).unwrap();
            let mut ctrl = BridgeMotorDriver::new(config, VENT_PWM_MAX_DUTY).unwrap();
            let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
            let res = run(&mut plant, &mut ctrl, &cfg).unwrap();
            let k = res
                .waveform
                .t_s
                .iter()
                .position(|&t| t >= resume_s)
                .unwrap();
            let w = res.waveform.speed_rad_s[k];
            let peak = peak_after(&res, resume_s);
            println!(
                "restart at {resume_s} s, rotor at {w:.1} rad/s, {label}: peak {peak:.3} A (limit {limit} A)"
            );
            assert!(w > 250.0, "{w}");
            assert!(
                prop(&res, "no_trip_in_normal_operation").1,
                "{label}: tripped"
            );
            peaks.push(peak);
        }
        assert!(peaks[0] > limit, "from duty zero: {} A", peaks[0]);
        assert!(peaks[1] < limit, "resumed: {} A", peaks[1]);
    }
}

#[test]
fn jam_without_a_detector_fails_the_jam_latency() {
    let jam = vec![FaultAt {
        t_s: 0.5,
        fault: Fault::Jam,
        expect_trip: true,
    }];
    let mut cfg = vent_loop(0.7, vec![(0.0, fwd(1.0))], jam);
    limits_with(|m| m.jam_latency_max_s = Some(0.030))(&mut cfg);

    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let naive = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    show("open loop: jam", &naive);
    let (lat, pass) = prop(&naive, "jam_latency");
    assert!(!pass && lat.is_infinite(), "{lat}");
    // The locked rotor draws the stall current V/R (τ_e ≈ 1.2 ms: settled by 0.7 s).
    let r = VENT_RESISTANCE_OHM + 2.0 * VENT_SWITCH_OHM;
    let stall = VENT_SUPPLY_V / (r + 0.05);
    let i_end = plant.plant().current_a();
    println!("locked rotor current {i_end:.4} A, V/(R + R_s) = {stall:.4} A");
    assert!((i_end - stall).abs() < 0.01 * stall);

    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let guarded = run(&mut plant, &mut driver(), &cfg).unwrap();
    show("driver: jam", &guarded);
    let (lat_g, pass) = prop(&guarded, "jam_latency");
    assert!(pass, "{lat_g}");
    // Persistence 20 ms: the latency is at least that, plus the current's rise and the
    // readings' one-tick delay.
    assert!((0.020..0.030).contains(&lat_g), "{lat_g}");
    let detail = guarded
        .property("jam_latency")
        .unwrap()
        .detail
        .clone()
        .unwrap();
    assert!(
        detail.contains(&TripCause::Motor(lenz::kernel::MotorFault::Jam).to_string()),
        "{detail}"
    );
    println!("jam latency with the driver: {:.2} ms", lat_g * 1e3);
}

/// Forward at full duty, then a cut to 20 % duty at 0.5 s: the rotor's back-EMF exceeds the
/// mean applied voltage and the slow-decay bridge returns its kinetic energy to the bus.
#[test]
fn cutting_the_duty_at_speed_pumps_a_bus_that_cannot_sink() {
    let commands = vec![(0.0, fwd(1.0)), (0.5, fwd(0.2))];
    let no_sink = || {
        let mut s = vent_spec(20.0, VENT_SUPPLY_V);
        s.supply_sinks = false;
        vent_plant_of(s).unwrap()
    };
    let mut cfg = vent_loop(0.8, commands.clone(), vec![]);
    // The duty cut's speed is not the full-drive speed: no time-to-speed check here.
    limits_with(|m| m.time_to_speed = None)(&mut cfg);

    let mut plant: MotorBridge = no_sink();
    let naive = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    show("open loop: duty cut, supply cannot sink", &naive);
    let (bus, pass) = prop(&naive, "bus_voltage");
    assert!(!pass && bus > VENT_BUS_RATING_V, "{bus}");
    // Energy bound: the bus cannot rise above sqrt(V² + 2·E_k/C), all the kinetic energy
    // at the cut delivered to the capacitor.
    let (w0, _) = textbook(VENT_SUPPLY_V, VENT_RESISTANCE_OHM + 0.15, VENT_LOAD_NM);
    let ek = 0.5 * 2e-5 * w0 * w0;
    let bound = (VENT_SUPPLY_V * VENT_SUPPLY_V + 2.0 * ek / 470e-6).sqrt();
    println!("bus peak {bus:.3} V, energy bound {bound:.3} V");
    assert!(bus < bound);

    // The same cut with a supply that sinks: the bus stays near the supply.
    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let sinking = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    let (bus_s, pass) = prop(&sinking, "bus_voltage");
    println!("bus peak with a sinking supply {bus_s:.3} V");
    assert!(pass && bus_s < VENT_SUPPLY_V + 1.0, "{bus_s}");

    // The driver's stop (coast, then brake below the brake speed) with the supply that cannot
    // sink: only the winding's current returns while coasting.
    let mut plant = no_sink();
    let cfg = vent_loop(
        1.0,
        vec![(0.0, fwd(1.0)), (0.5, MotorCommand::Brake)],
        vec![],
    );
    let stop = run(&mut plant, &mut driver(), &cfg).unwrap();
    show("driver: stop, supply cannot sink", &stop);
    let (bus_d, pass) = prop(&stop, "bus_voltage");
    assert!(pass, "{bus_d}");
    println!("bus peaks: duty cut {bus:.3} V, sinking {bus_s:.3} V, driver stop {bus_d:.3} V");
}

#[test]
fn a_run_without_a_jam_or_reversal_does_not_pass_their_checks() {
    let mut cfg = vent_loop(0.3, vec![(0.0, fwd(1.0))], vec![]);
    limits_with(|m| {
        m.jam_latency_max_s = Some(0.03);
        m.reversal_peak_current_max_a = Some(6.0);
    })(&mut cfg);
    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let res = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    for name in ["jam_latency", "reversal_peak_current"] {
        let p = res.property(name).unwrap();
        assert!(
            !p.pass && p.value.is_infinite() && p.detail.is_some(),
            "{p:?}"
        );
    }
    // And a drive command whose speed is never reached fails time_to_speed.
    let mut cfg = vent_loop(0.3, vec![(0.0, fwd(0.5))], vec![]);
    cfg.limits
        .motor
        .as_mut()
        .unwrap()
        .time_to_speed
        .as_mut()
        .unwrap()
        .speed_rad_s = 300.0;
    let mut plant = vent_plant(20.0, VENT_SUPPLY_V);
    let res = run(&mut plant, &mut OpenLoop, &cfg).unwrap();
    let (t, pass) = prop(&res, "time_to_speed");
    assert!(!pass && t.is_infinite(), "{t}");
}
