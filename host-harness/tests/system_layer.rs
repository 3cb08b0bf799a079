//! The system layer from a user's side: the firmware inputs against the kernels' own
//! constructors, the plan's verdicts on the controller's settings, the new properties'
//! file checks, and the open controller slot with the built-in controller.

use lenz::kernel::{
    MonitorConfig, MonitorParams, SenseScale, TrackingOffTimerConfig, TripConfig, TripParams,
};
use lenz::turnoff::Clamp;
use lenz::{CoilParams, Range};
use lenz_harness::System;

fn valve_text() -> String {
    std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/valve.toml"))
        .expect("the demo valve file")
}

fn valve() -> System {
    System::from_toml("valve.toml", &valve_text()).unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn firmware_inputs_are_what_the_kernels_compute_from_the_nominal_description() {
    let fw = valve().firmware_inputs().unwrap_or_else(|e| panic!("{e}"));
    // The description's values, typed here from valve.toml (not read through the system).
    let coil = CoilParams::new(0.120, 32.0)
        .with_switch_resistance_ohm(0.1)
        .with_source_resistance_ohm(0.2)
        .with_shunt_resistance_ohm(0.010)
        .with_diode_drop_v(0.7)
        .validate()
        .unwrap();
    let clamp = Clamp::Diode { forward_v: 0.7 };
    let off_timer = TrackingOffTimerConfig::new(&coil, 20.0, 100e-6, &clamp, 0.075).unwrap();
    // 3.3 V over 4096 counts, 10 mΩ · 20 V/V: A per count; 80.57 mV bias in counts.
    let amps_per_count = (3.3 / 4096.0 / (0.010 * 20.0)) as f32;
    let zero = (0.080_57 * 4096.0 / 3.3) as f32;
    let scale = SenseScale::new(amps_per_count, zero, 10, 4085).unwrap();
    let monitor = MonitorConfig::new(
        scale,
        &MonitorParams {
            abs_tol_a: 0.05,
            rel_tol: 0.2,
            open_min_estimate_a: 0.1,
            open_max_a: 0.02,
            persistence: 3,
            stuck_samples: 50,
            stuck_min_change_a: 0.1,
        },
    )
    .unwrap();
    let trip = TripConfig::new(&TripParams {
        sample_period_s: 100e-6,
        amps_per_count,
        // 2 A at 4.028 mA per count, rounded up; the full scale above the 100-count zero.
        instantaneous_counts: (2.0 / amps_per_count).ceil() as u16,
        full_scale_counts: 4095 - 100,
        blanking_s: 0.0,
        persistence_n: 1,
        persistence_m: 1,
        stuck_samples: 0,
        inverse: None,
        thermal: None,
        retries: 0,
        retry_delay_s: 0.0,
    })
    .unwrap();
    let c = fw.coil.expect("a coil drive");
    assert_eq!(c.coil, coil);
    assert_eq!(c.clamp, clamp);
    // Field for field: each raw form holds every field of its configuration.
    assert_eq!(c.off_timer.map(|o| o.raw()), Some(off_timer.raw()));
    assert_eq!(c.estimator.raw(), off_timer.estimator().raw());
    assert_eq!(c.monitor.raw(), monitor.raw());
    assert_eq!(c.trip.raw(), trip.raw());
    assert_eq!(fw.sense.current, scale);
    // 11:1 divider: 3.3 V · 11 / 4096 per count, in mV, Q16.
    let mv_q16 = (3.3 / 0.090_909_090_9 / 4096.0 * 1000.0 * 65536.0_f64).round() as i32;
    assert!((fw.sense.supply_mv_per_count_q16 - mv_q16).abs() <= 1);
    assert_eq!(fw.supply_v, Range::new("supply_v", 21.6, 26.4).unwrap());
    // The scaling in use: 2000 counts of supply are 2000 · 8.862 mV (rounded down by the
    // shift).
    let mv = fw.supply_mv(2000);
    assert!((f64::from(mv) - 2000.0 * 3.3 / 0.090_909_090_9 / 4096.0 * 1000.0).abs() <= 1.0);
}

#[test]
fn the_plan_fails_a_pull_in_setting_above_the_lowest_steady_current() {
    let text = valve_text().replace("pull_in_current = \"0.48A\"", "pull_in_current = \"0.54A\"");
    let plan = System::from_toml("valve.toml", &text)
        .unwrap()
        .plan()
        .unwrap();
    assert!(!plan.passed);
    let v = plan
        .verdicts
        .iter()
        .find(|v| v.check.starts_with("pull-in current setting"))
        .expect("the verdict");
    assert!(!v.pass);
    // Lowest steady current: 21.6 V over 32 Ω · 1.05 · (1 + 0.00393 · 65) + 0.31 Ω (copper,
    // published: IEC28; computed: closed form) at the hot, low-supply corner, named in the note.
    let r = 32.0 * 1.05 * (1.0 + 0.00393 * 65.0) + 0.31;
    assert!(
        (f64::from(v.limit) - 21.6 / r).abs() < 1e-4 * 21.6 / r,
        "{v:?}"
    );
    let note = v.note.as_deref().unwrap_or("");
    assert!(note.contains("21.60 V") && note.contains("85 °C"), "{note}");
}

#[test]
fn the_plan_fails_a_hold_below_the_must_hold_current() {
    let with_must_hold = |duty: &str| {
        let text = valve_text()
            .replace(
                "release_current = \"75mA\"",
                "release_current = \"75mA\"\nhold_current = \"0.3A\"",
            )
            .replace("hold_duty = 0.45", &format!("hold_duty = {duty}"));
        System::from_toml("valve.toml", &text)
            .unwrap()
            .plan()
            .unwrap()
    };
    let verdict = |duty: &str| {
        with_must_hold(duty)
            .verdicts
            .into_iter()
            .find(|v| v.check == "lowest hold current ≥ must-hold current")
            .expect("the hold verdict")
    };
    // Mean hold current (D·V − (1 − D)·V_f)/R at the hot, low-supply corner, R = 42.70 Ω:
    // duty 0.45 gives 0.219 A, below 0.3 A; duty 0.7 gives 0.347 A (the valley lies a few mA
    // below the mean at 20 kHz; copper per published: IEC28; computed: closed form).
    let low = verdict("0.45");
    assert!(!low.pass, "{low:?}");
    // The mean of the averaged loop: the on path has the winding and the 0.31 Ω of switch,
    // source and shunt, the freewheel path the winding alone, so the resistance is their
    // duty-weighted mean. The valve's plunger holds seated (332 mH, L −10 %): a ripple of
    // about 1 mA, so the valley lies within 1 mA under this mean.
    let winding = 32.0 * 1.05 * (1.0 + 0.00393 * 65.0);
    let r = 0.45 * (winding + 0.31) + 0.55 * winding;
    let mean = (0.45 * 21.6 - 0.55 * 0.7) / r;
    let got = f64::from(low.value.expect("a value"));
    assert!(
        got < mean && got > mean - 0.001,
        "{got} against the mean {mean}"
    );
    assert!(verdict("0.7").pass);
}

fn parse_error(text: &str) -> String {
    System::from_toml("valve.toml", text)
        .err()
        .map(|e| e.to_string())
        .expect("an error")
}

#[test]
fn new_properties_reject_what_would_check_nothing() {
    let base = valve_text();
    // hold-current takes a lower limit.
    let t = base.replacen(
        "property = \"no-trip\"",
        "property = \"hold-current\"\nmax = \"1A\"",
        1,
    );
    assert!(
        parse_error(&t).contains("write `min`"),
        "{}",
        parse_error(&t)
    );
    // Without a must-hold current in the coil, hold-current needs `min`.
    let t = base.replacen("property = \"no-trip\"", "property = \"hold-current\"", 1);
    assert!(parse_error(&t).contains("missing key `min`"));
    // A scenario without an on command: pull-in-time would check nothing.
    let t = format!(
        "{base}\n[[scenario]]\nname = \"idle\"\nduration = \"10ms\"\n[[scenario.check]]\nproperty = \"pull-in-time\"\nmax = \"1ms\"\n"
    );
    let e = parse_error(&t);
    assert!(
        e.contains("command = \\\"on\\\"") || e.contains("command = \"on\""),
        "{e}"
    );
    // A min belongs to hold-current only.
    let t = base.replacen(
        "property = \"no-trip\"",
        "property = \"no-trip\"\nmin = 0",
        1,
    );
    assert!(parse_error(&t).contains("key `min` belongs to hold-current"));
}

#[test]
fn the_built_in_controller_goes_through_the_open_slot_like_any_other() {
    let sys = valve();
    let file = sys.description();
    let a = sys
        .run_all(|fw| {
            let plan = lenz_harness::scenario::run::coil_driver(file, f64::from(fw.temp_c))
                .unwrap_or_else(|e| panic!("{e}"));
            lenz_harness::controllers::ValveDriver::new(plan).expect("the driver starts")
        })
        .unwrap_or_else(|e| panic!("{e}"));
    for (k, o) in a.outcomes.iter().enumerate() {
        let b = lenz_harness::scenario::run::run(
            file,
            k,
            &lenz_harness::scenario::run::Params::NOMINAL,
            lenz_harness::scenario::run::Record::None,
        )
        .unwrap();
        let va: Vec<f64> = o.result.properties.iter().map(|p| p.value).collect();
        let vb: Vec<f64> = b.properties.iter().map(|p| p.value).collect();
        assert_eq!(va, vb, "{}", o.scenario);
    }
    assert!(a.all_hold(), "{a}");
}

#[test]
fn a_file_without_a_controller_runs_only_from_code() {
    let text = valve_text();
    let start = text.find("[controller.coil]").expect("controller table");
    let end = text.find("\n[tolerances]").expect("tolerances table");
    let own = format!("{}{}", &text[..start], &text[end..]);
    let sys = System::from_toml("valve.toml", &own).unwrap_or_else(|e| panic!("{e}"));
    let e = lenz_harness::scenario::run::run(
        sys.description(),
        0,
        &lenz_harness::scenario::run::Params::NOMINAL,
        lenz_harness::scenario::run::Record::None,
    )
    .expect_err("no built-in controller");
    assert!(e.to_string().contains("no [controller]"), "{e}");
}

#[test]
fn the_inputs_plan_a_drive_coil_driver() {
    use lenz::drive::{CoilDriverConfig, Hold, PullInSource};
    let fw = valve().firmware_inputs().unwrap_or_else(|e| panic!("{e}"));
    let params = fw
        .coil_driver_params(Hold::Duty { duty: 0.45 }, PullInSource::Estimate, 0.1)
        .unwrap();
    let cfg = CoilDriverConfig::new(&params).unwrap_or_else(|e| panic!("{e}"));
    // The driver's kernels are the inputs' kernels.
    let c = fw.coil.expect("a coil drive");
    assert_eq!(cfg.raw().monitor, c.monitor.raw());
    assert_eq!(cfg.raw().trip, c.trip.raw());
    assert_eq!(
        cfg.raw().off_timer,
        c.off_timer.map(|o| o.raw()).expect("tracked")
    );
    // 0.48 A of [controller.coil], in µA.
    assert_eq!(cfg.raw().pull_in_ua, 480_000);
}

/// A controller that switches fully on while the demand is on.
struct FullOn;

impl lenz_harness::closed_loop::Controller for FullOn {
    fn tick(
        &mut self,
        s: &lenz_harness::closed_loop::Sensed,
    ) -> lenz_harness::closed_loop::Actuation {
        if s.demand {
            lenz_harness::closed_loop::Actuation::ON
        } else {
            lenz_harness::closed_loop::Actuation::OFF
        }
    }
}

#[test]
fn coil_properties_against_the_step_response() {
    // A linear coil without a thermal model, switched fully on at 10 ms and off at 40 ms
    // (invented values).
    let text = r#"
[system]
name = "step"
tick = "100us"
pwm_frequency = "20kHz"
sample_offset = "20us"
[system.supply]
min = "12V"
nominal = "12V"
max = "12V"
source_resistance = "0.1ohm"
[system.temperature]
min = 20
nominal = 20
max = 20
[system.coil]
inductance = "40mH"
resistance = "12ohm"
pull_in_current = "0.6A"
release_current = "0.1A"
hold_current = "0.25A"
[system.clamp.freewheel]
diode_drop = "0.7V"
[system.switch]
on_resistance = "50mohm"
breakdown = "40V"
[system.sense]
adc_bits = 12
adc_reference = "3.3V"
shunt = "50mohm"
gain = 20
bias = "80.57mV"
supply_divider = 0.175
output_divider = 0.05
[[scenario]]
name = "step"
duration = "50ms"
[[scenario.event]]
at = "10ms"
command = "on"
[[scenario.event]]
at = "40ms"
command = "off"
[[scenario.check]]
property = "pull-in-time"
max = "10ms"
[[scenario.check]]
property = "hold-current"
[[scenario.check]]
property = "coil-temperature"
max = 21
[[scenario.check]]
property = "coil-power"
max = "20W"
"#;
    let sys = System::from_toml("step.toml", text).unwrap_or_else(|e| panic!("{e}"));
    let r = sys.run_all(|_| FullOn).unwrap_or_else(|e| panic!("{e}"));
    assert!(r.all_hold(), "{r}");
    let value = |name: &str| r.property("step", name).expect(name).value;
    // i(t) = I∞ (1 − e^(−t/τ)), I∞ = 12 V / 12.2 Ω, τ = 40 mH / 12.2 Ω (computed: closed form
    // of the RL step, published: IEC28 for the copper that stays at 20 °C here).
    let r_loop: f64 = 12.0 + 0.05 + 0.05 + 0.1;
    let (i_inf, tau) = (12.0 / r_loop, 0.040 / r_loop);
    let t_pull = -tau * (1.0 - 0.6 / i_inf).ln();
    // The loop observes the current at every switch edge, sampling instant and tick end: at
    // most 80 µs apart here.
    let t = value("pull_in_time");
    assert!(t >= t_pull && t <= t_pull + 80e-6, "{t} against {t_pull}");
    // Lowest current while held: the first observation at or above 0.6 A.
    let slope = (i_inf - 0.6) / tau;
    let hold = value("hold_current");
    assert!(hold >= 0.6 && hold <= 0.6 + slope * 80e-6, "{hold}");
    assert_eq!(value("coil_temperature"), 20.0);
    // Mean winding power from the observed pull-in to the off command: 12 Ω · ∫ i² dt / T,
    // with ∫ (1 − e^(−t/τ))² dt = t + 2τ e^(−t/τ) − τ/2 e^(−2t/τ).
    let prim = |t: f64| t + 2.0 * tau * (-t / tau).exp() - 0.5 * tau * (-2.0 * t / tau).exp();
    let t_off = 0.030;
    let p = 12.0 * i_inf * i_inf * (prim(t_off) - prim(t)) / (t_off - t);
    let got = value("coil_power");
    assert!((got - p).abs() < 1e-4 * p, "{got} against {p}");
}
