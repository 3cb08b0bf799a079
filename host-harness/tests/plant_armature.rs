//! The moving-armature plant against an outside general-purpose solver: `ode_solvers` Dop853
//! (an explicit Runge–Kutta 8(5,3) pair from crates.io) on the same coupled equations with the
//! same events, written here independently of the plant.
//!
//! The plant integrates flux linkage `λ` with the project's own Dormand–Prince 5(4) and
//! locates events by regula falsi; the reference integrates the current in its own form,
//! `∂λ/∂i·di/dt = a − b·i − ∂λ/∂x·v` (the motional EMF written out), with Dop853, and locates
//! each event by bisection on fresh Dop853 runs. Label: computed (plant cross-checked against a
//! general-purpose ODE solver). The demo valve and relay values are invented.

use lenz_harness::demo::armature::{RELAY, VALVE};
use lenz_harness::plant::{
    ArmatureDrive, ArmatureDriveSpec, ArmatureEventKind, ArmatureMode, EndStop,
};

#[path = "common/armature_reference.rs"]
#[allow(dead_code)]
mod armature_reference;
use armature_reference::*;

/// The reference model of a freewheel-diode drive: on, `V_s` across winding and on path;
/// freewheeling, `−V_f` across the winding.
fn model_of(s: &ArmatureDriveSpec) -> Model {
    Model::of(
        &s.armature,
        (s.supply_v, s.winding_ohm + s.on_path_ohm),
        (-s.freewheel_vf_v, s.winding_ohm),
    )
}

fn plant_kinds(p: &ArmatureDrive) -> Vec<(f64, Kind)> {
    p.events()
        .iter()
        .filter_map(|e| {
            let k = match e.kind {
                ArmatureEventKind::LiftOff(EndStop::Open) => Kind::LiftOffOpen,
                ArmatureEventKind::LiftOff(EndStop::Closed) => Kind::LiftOffClosed,
                ArmatureEventKind::Impact(EndStop::Closed, s) => Kind::ImpactClosed(s),
                ArmatureEventKind::Impact(EndStop::Open, s) => Kind::ImpactOpen(s),
                ArmatureEventKind::Rest(EndStop::Closed) => Kind::RestClosed,
                ArmatureEventKind::Rest(EndStop::Open) => Kind::RestOpen,
                ArmatureEventKind::CurrentZero => Kind::CurrentZero,
                _ => return None,
            };
            Some((e.t_s, k))
        })
        .collect()
}

/// Runs plant and reference with the switch on from 0 to `n_off·DT`, sampling the current
/// every `DT` to `n_end·DT`; compares events and samples and returns the plant's samples.
fn compare(spec: ArmatureDriveSpec, n_off: usize, n_end: usize) -> (ArmatureDrive, Vec<f64>) {
    let model = model_of(&spec);
    let jammed = spec.armature.faults.stuck;
    let mut plant = ArmatureDrive::new(spec).unwrap();
    let mut reference = Reference::new(model, jammed);
    plant.set_switch(true);
    reference.switch(true);
    let mut samples = Vec::with_capacity(n_end);
    let mut peak: f64 = 0.0;
    let mut worst: f64 = 0.0;
    for k in 1..=n_end {
        let t = k as f64 * DT;
        plant.advance_to(t);
        reference.advance(t);
        let (ip, ir) = (plant.current_a(), reference.y[0]);
        peak = peak.max(ir.abs());
        worst = worst.max((ip - ir).abs());
        samples.push(ip);
        if k == n_off {
            plant.set_switch(false);
            reference.switch(false);
        }
    }
    println!(
        "worst current difference {worst:e} A of {peak} A; {} events",
        reference.events.len()
    );
    // Current samples within 1e-10 of the peak current (measured: below 1e-13).
    assert!(
        worst <= 1e-10 * peak,
        "current differs by {worst:e} A (peak {peak} A)"
    );
    let pe = plant_kinds(&plant);
    let re = &reference.events;
    assert_eq!(
        pe.len(),
        re.len(),
        "event count: plant {pe:#?}\nreference {re:#?}"
    );
    let dt_max = pe
        .iter()
        .zip(re)
        .map(|((tp, _), (tr, _))| (tp - tr).abs())
        .fold(0.0, f64::max);
    println!("largest event time difference {dt_max:e} s");
    for ((tp, kp), (tr, kr)) in pe.iter().zip(re) {
        assert!(
            kp.same_kind(kr),
            "plant {kp:?} at {tp} vs reference {kr:?} at {tr}"
        );
        // Event times within 1 ps (measured: below 1e-15 s).
        assert!(
            (tp - tr).abs() <= 1e-12,
            "{kp:?}: plant {tp} s, reference {tr} s"
        );
        if let (
            Kind::ImpactClosed(a) | Kind::ImpactOpen(a),
            Kind::ImpactClosed(b) | Kind::ImpactOpen(b),
        ) = (kp, kr)
        {
            // Impact speeds within 1e-6 relative.
            assert!((a - b).abs() <= 1e-6 * b, "{kp:?} vs {kr:?}");
        }
    }
    (plant, samples)
}

#[test]
fn valve_pull_in_bounce_and_release_match_dop853() {
    let (plant, samples) = compare(VALVE.drive(), 1500, 3000);
    let s = plant.strokes()[0];
    let impact = s.first_impact_t_s.unwrap();
    // The current dip: a peak while the plunger accelerates, a minimum at the first impact.
    let k_impact = (impact / DT) as usize;
    let (k_peak, &peak) = samples[..k_impact]
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .unwrap();
    let (k_min, &valley) = samples[k_peak..k_impact + 3]
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .map(|(k, v)| (k + k_peak, v))
        .unwrap();
    println!(
        "valve: lift-off {:.3} ms, peak {:.4} A at {:.2} ms, valley {:.4} A at {:.2} ms, \
         first impact {:.3} ms at {:.3} m/s, seated {:.3} ms after {} impacts, release {:.3} ms \
         after switch-off, open {:.3} ms, {:.1} mJ from the supply to seat",
        s.lift_off_t_s.unwrap() * 1e3,
        peak,
        k_peak as f64 * DT * 1e3,
        valley,
        (k_min + 1) as f64 * DT * 1e3,
        impact * 1e3,
        s.impact_speed_m_s.unwrap(),
        s.seated_t_s.unwrap() * 1e3,
        s.closed_impacts,
        (s.release_t_s.unwrap() - s.off_t_s.unwrap()) * 1e3,
        s.opened_t_s.unwrap() * 1e3,
        s.seat_energy_j.unwrap() * 1e3,
    );
    assert!(peak - valley > 0.2, "a deep dip: {peak} -> {valley}");
    assert!(
        ((k_min + 1) as f64 * DT - impact).abs() <= DT,
        "the valley is the impact"
    );
    assert!(
        s.seated_t_s.unwrap() > impact && s.closed_impacts >= 2,
        "it bounces"
    );
    assert_eq!(plant.mode(), ArmatureMode::RestOpen);
}

#[test]
fn relay_matches_dop853() {
    compare(RELAY.drive(), 1000, 2500);
}

#[test]
fn saturating_valve_matches_dop853() {
    let mut spec = VALVE.drive();
    // Saturation at 0.12 V·s: the closed plunger's 0.33 H carries at most 0.36 A unsaturated.
    spec.armature.saturation_flux_vs = Some(0.12);
    compare(spec, 1500, 3000);
}

#[test]
fn sluggish_and_stuck_armatures_match_dop853() {
    let mut sluggish = VALVE.drive();
    sluggish.armature.faults.extra_damping_n_s_per_m = 20.0;
    let (p, _) = compare(sluggish, 1500, 3000);
    let nominal = VALVE.drive();
    let mut n = ArmatureDrive::new(nominal).unwrap();
    n.set_switch(true);
    n.advance_to(0.03);
    let (slow, fast) = (p.strokes()[0], n.strokes()[0]);
    assert!(
        slow.seated_t_s.unwrap() > fast.seated_t_s.unwrap() + 1e-3,
        "the sluggish armature seats later: {slow:?} vs {fast:?}"
    );
    let mut stuck = VALVE.drive();
    stuck.armature.faults.stuck = true;
    let (p, samples) = compare(stuck, 1500, 1600);
    assert!(p.events().iter().all(|e| !matches!(
        e.kind,
        ArmatureEventKind::LiftOff(_) | ArmatureEventKind::Impact(..)
    )));
    // No dip: the current of a stuck armature only rises while the switch is on.
    assert!(samples[..1500].windows(2).all(|w| w[1] > w[0]));
}

/// Everything the supply delivered is in the losses or still stored (computed: energy balance
/// of the coupled model; it closes only if the force is the co-energy's derivative).
fn assert_energy_balance(p: &ArmatureDrive) {
    let e = p.energies();
    let out = e.winding_j
        + e.on_path_j
        + e.diode_j
        + e.damping_j
        + e.impact_j
        + p.magnetic_energy_j()
        + p.kinetic_energy_j()
        + p.potential_energy_j();
    assert!(
        (e.supply_j - out).abs() <= 1e-9 * e.supply_j,
        "at {} s: supply {} J, accounted {} J",
        p.time_s(),
        e.supply_j,
        out
    );
}

#[test]
fn energy_balances_through_motion_bounce_and_release() {
    for sat in [None, Some(0.12)] {
        let mut spec = VALVE.drive();
        spec.armature.saturation_flux_vs = sat;
        let mut p = ArmatureDrive::new(spec).unwrap();
        p.set_switch(true);
        for k in 1..=600 {
            p.advance_to(k as f64 * 1e-4);
            if k % 7 == 0 {
                assert_energy_balance(&p);
            }
            if k == 300 {
                p.set_switch(false);
            }
        }
        assert_energy_balance(&p);
        assert!(p.energies().impact_j > 0.0 && p.energies().damping_j > 0.0);
    }
}

/// Current of a fresh run of `spec` at the time of its first event of `kind`.
fn current_at_event(spec: &ArmatureDriveSpec, kind: ArmatureEventKind) -> f64 {
    let mut p = ArmatureDrive::new(spec.clone()).unwrap();
    p.set_switch(true);
    p.advance_to(0.03);
    p.set_switch(false);
    p.advance_to(0.06);
    let t = p
        .events()
        .iter()
        .find(|e| e.kind == kind)
        .map(|e| e.t_s)
        .expect("event happens");
    let mut q = ArmatureDrive::new(spec.clone()).unwrap();
    q.set_switch(true);
    if t <= 0.03 {
        q.advance_to(t);
    } else {
        q.advance_to(0.03);
        q.set_switch(false);
        q.advance_to(t);
    }
    q.current_a()
}

#[test]
fn lift_off_and_release_happen_at_the_plans_currents() {
    // The plant's lift-off from the open stop and release from the closed stop happen where
    // the plan's (f32, `lenz::armature`) pull-in and must-hold currents say (computed: two
    // implementations of the same force balance).
    for demo in [VALVE, RELAY] {
        let spec = demo.drive();
        let plan = demo.plan().unwrap();
        let lift = current_at_event(&spec, ArmatureEventKind::LiftOff(EndStop::Open));
        let release = current_at_event(&spec, ArmatureEventKind::LiftOff(EndStop::Closed));
        let want_pull = plan.pull_in_current_a().unwrap() as f64;
        let want_hold = plan.hold_current_a().unwrap() as f64;
        assert!(
            (lift / want_pull - 1.0).abs() < 2e-6,
            "{lift} vs {want_pull}"
        );
        assert!(
            (release / want_hold - 1.0).abs() < 2e-6,
            "{release} vs {want_hold}"
        );
    }
}

#[test]
fn an_excess_load_keeps_it_open_where_the_plan_says_so() {
    let steady = VALVE.supply_v / (VALVE.winding_ohm + 0.2);
    for (extra, moves) in [(10.0, true), (15.0, false)] {
        let mut spec = VALVE.drive();
        spec.armature.faults.extra_load_n = extra;
        let plan = lenz::armature::Armature::new(
            *VALVE.plan().unwrap().magnet(),
            lenz::armature::Mechanics {
                load_n: (VALVE.load_n + extra) as f32,
                ..*VALVE.plan().unwrap().mechanics()
            },
        )
        .unwrap();
        let pull = plan.pull_in_current_a().unwrap() as f64;
        assert_eq!(pull < steady, moves, "plan: {pull} A against {steady} A");
        let mut p = ArmatureDrive::new(spec).unwrap();
        p.set_switch(true);
        p.advance_to(0.05);
        assert_eq!(p.strokes()[0].seated_t_s.is_some(), moves);
        assert_eq!(p.mode() == ArmatureMode::RestClosed, moves);
    }
}
