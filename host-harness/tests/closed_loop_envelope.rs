//! The envelope the closed loop records between samples (lowest and highest switch voltage and
//! coil current since the previous recorded point), on the greenhouse demo valve (values
//! invented for the demo) in PWM hold with a freewheel diode.
//!
//! The sampled waveform sees one instant per tick; the envelope must span the on and off
//! levels of every PWM period, contain every sample, reach the plant's own highest switch
//! voltage, and in the periodic steady state equal the current's ripple bounds of the closed
//! form F1.3 (`docs/references.md`; derived from F1.1, textbook: RLT), taken here with the
//! on and off paths' own resistances.

use lenz_harness::closed_loop::demo::{DIODE, PWM_NS, valve_loop, valve_plant};
use lenz_harness::closed_loop::{Actuation, Controller, Sensed, run};
use lenz_harness::demo::{DIODE_DROP_V, VALVE_INDUCTANCE_H, VALVE_RESISTANCE_OHM};

const SUPPLY_V: f64 = 24.0;
const HOLD_DUTY: f64 = 0.45;

/// On for 5 ms, PWM hold at `HOLD_DUTY` until 40 ms, then off.
struct PullInHold;

impl Controller for PullInHold {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        match s.time_ns {
            t if t < 5_000_000 => Actuation::ON,
            t if t < 40_000_000 => Actuation::pwm(HOLD_DUTY),
            _ => Actuation::OFF,
        }
    }
}

#[test]
fn the_envelope_spans_pwm_hold_and_matches_the_closed_form_ripple() {
    let mut plant = valve_plant(20.0, SUPPLY_V, DIODE);
    let cfg = valve_loop(0.060, vec![], vec![]);
    let r = run(&mut plant, &mut PullInHold, &cfg).expect("run");
    let w = &r.waveform;
    let n = w.t_s.len();
    assert!(n > 500);
    for v in [
        &w.switch_v_min,
        &w.switch_v_max,
        &w.current_min_a,
        &w.current_max_a,
    ] {
        assert_eq!(v.len(), n);
    }
    // Every sample lies inside its envelope.
    for k in 0..n {
        assert!(
            w.switch_v_min[k] <= w.switch_v[k] + 1e-12
                && w.switch_v[k] <= w.switch_v_max[k] + 1e-12,
            "switch voltage at {} s",
            w.t_s[k]
        );
        assert!(
            w.current_min_a[k] <= w.current_a[k] + 1e-12
                && w.current_a[k] <= w.current_max_a[k] + 1e-12,
            "current at {} s",
            w.t_s[k]
        );
    }
    // The envelope reaches the plant's own highest switch voltage.
    let env_max = w.switch_v_max.iter().copied().fold(f64::MIN, f64::max);
    assert!(
        (env_max - plant.peak_switch_v()).abs() <= 1e-9 * plant.peak_switch_v(),
        "{env_max} V against the plant's {} V",
        plant.peak_switch_v()
    );

    // Periodic steady state of the hold (F1.3 with the on path's and the off path's own
    // resistances: source, switch, shunt and winding on; winding and diode off).
    let r_on = VALVE_RESISTANCE_OHM + 0.2 + 0.1 + 0.010;
    let r_off = VALVE_RESISTANCE_OHM;
    let t_pwm = PWM_NS as f64 * 1e-9;
    let a_on = (-HOLD_DUTY * t_pwm * r_on / VALVE_INDUCTANCE_H).exp();
    let a_off = (-(1.0 - HOLD_DUTY) * t_pwm * r_off / VALVE_INDUCTANCE_H).exp();
    let (i_on, i_off) = (SUPPLY_V / r_on, -DIODE_DROP_V / r_off);
    let i_max = (i_on * (1.0 - a_on) + a_on * i_off * (1.0 - a_off)) / (1.0 - a_on * a_off);
    let i_min = i_off + (i_max - i_off) * a_off;
    let mut checked = 0;
    for k in (0..n).filter(|&k| w.t_s[k] > 0.034 && w.t_s[k] < 0.0399) {
        checked += 1;
        // The sample alone sees one level; the envelope both.
        assert!(w.switch_v_min[k] < 0.5, "on level {} V", w.switch_v_min[k]);
        assert!(
            w.switch_v_max[k] > SUPPLY_V && w.switch_v_max[k] < SUPPLY_V + 1.0,
            "off level {} V",
            w.switch_v_max[k]
        );
        for (got, want, what) in [
            (w.current_max_a[k], i_max, "highest"),
            (w.current_min_a[k], i_min, "lowest"),
        ] {
            assert!(
                (got - want).abs() < 2e-3 * want,
                "{what} current {got} A against {want} A at {} s",
                w.t_s[k]
            );
        }
    }
    assert!(checked > 40, "{checked} points in the steady state");
    println!(
        "hold ripple: envelope {:.6}..{:.6} A, closed form {i_min:.6}..{i_max:.6} A",
        w.current_min_a[n * 6 / 10],
        w.current_max_a[n * 6 / 10]
    );

    // After the switch-off has decayed, the band closes at the supply.
    let last = n - 1;
    assert!((w.switch_v_max[last] - w.switch_v_min[last]).abs() < 1e-9);
}
