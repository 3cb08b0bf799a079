//! A coil drive with a moving armature in the closed loop's plant (`CoilDrive::with_armature`)
//! against an outside general-purpose solver: `ode_solvers` Dop853 (an explicit Runge–Kutta
//! 8(5,3) pair from crates.io) on the same coupled equations with the same events, written here
//! independently of the plant, for clamp networks other than the freewheel diode (diode and
//! zener, active clamp across the switch, resistor and diode), with supply source resistance
//! and shunt.
//!
//! The plant integrates flux linkage `λ` with the project's own Dormand–Prince 5(4) and
//! locates events by regula falsi; the reference integrates the current,
//! `∂λ/∂i·di/dt = a − b·i − ∂λ/∂x·v` (the motional EMF written out), with Dop853, where each
//! topology's `a`, `b` are written down here from the circuit (KVL around the loop that
//! conducts), and locates each event by bisection on fresh Dop853 runs. Label: computed (plant
//! cross-checked against a general-purpose ODE solver). The demo valve and relay values are
//! invented. The unclamped network (two electrical states) is checked by its energy balance.

use lenz_harness::demo::armature::{ON_PATH_OHM, RELAY, VALVE};
use lenz_harness::plant::{
    ArmatureEventKind, ArmatureMode, ArmatureSpec, Clamp, CoilDrive, CoilDriveSpec, CoilSpec,
    EndStop, PlantEventKind, SwitchSpec,
};

#[path = "common/armature_reference.rs"]
#[allow(dead_code)]
mod armature_reference;
use armature_reference::*;

/// The drive of the comparisons: the on path's 0.2 Ω split into switch, shunt and source.
const R_ON: f64 = 0.1;
const R_SHUNT: f64 = 0.05;
const R_SOURCE: f64 = ON_PATH_OHM - R_ON - R_SHUNT;

fn drive(r_w: f64, supply_v: f64, clamp: Clamp) -> CoilDriveSpec {
    CoilDriveSpec {
        // The armature's gap curve replaces this inductance.
        coil: CoilSpec::linear(0.1, r_w, 20.0),
        clamp,
        switch: SwitchSpec {
            on_resistance_ohm: R_ON,
            breakdown_v: 80.0,
        },
        supply_v,
        source_resistance_ohm: R_SOURCE,
        shunt_ohm: R_SHUNT,
    }
}

/// `(a, b)` of the clamp's topology, from the circuit: a zener clamp drives
/// `−(V_f + V_z)` around the coil, a resistor clamp adds its resistance, an active clamp at
/// `V_cl` leaves `V_s − V_cl` across the coil with the source and shunt in the loop.
fn clamp_segment(r_w: f64, vs: f64, clamp: Clamp) -> (f64, f64) {
    match clamp {
        Clamp::Freewheel { vf_v } => (-vf_v, r_w),
        Clamp::DiodeZener { vf_v, vz_v } => (-(vf_v + vz_v), r_w),
        Clamp::ResistorDiode { r_ohm, vf_v } => (-vf_v, r_w + r_ohm),
        Clamp::AcrossSwitch { vcl_v } => (vs - vcl_v, r_w + R_SOURCE + R_SHUNT),
        Clamp::Unclamped { .. } => panic!("two-state network"),
    }
}

fn plant_kinds(p: &CoilDrive) -> Vec<(f64, Kind)> {
    let m = p.armature().unwrap();
    let mut out: Vec<(f64, Kind)> = m
        .events()
        .iter()
        .filter_map(|e| {
            let k = match e.kind {
                ArmatureEventKind::LiftOff(EndStop::Open) => Kind::LiftOffOpen,
                ArmatureEventKind::LiftOff(EndStop::Closed) => Kind::LiftOffClosed,
                ArmatureEventKind::Impact(EndStop::Closed, s) => Kind::ImpactClosed(s),
                ArmatureEventKind::Impact(EndStop::Open, s) => Kind::ImpactOpen(s),
                ArmatureEventKind::Rest(EndStop::Closed) => Kind::RestClosed,
                ArmatureEventKind::Rest(EndStop::Open) => Kind::RestOpen,
                _ => return None,
            };
            Some((e.t_s, k))
        })
        .collect();
    // The coil drive records the current zero among its own events.
    out.extend(
        p.events()
            .iter()
            .filter(|e| e.kind == PlantEventKind::CurrentZero)
            .map(|e| (e.t_s, Kind::CurrentZero)),
    );
    // At the same instant the current zero comes first (the release it causes follows).
    out.sort_by(|a, b| {
        a.0.total_cmp(&b.0)
            .then_with(|| (b.1 == Kind::CurrentZero).cmp(&(a.1 == Kind::CurrentZero)))
    });
    out
}

struct Case {
    armature: ArmatureSpec,
    r_w: f64,
    supply_v: f64,
    clamp: Clamp,
}

fn case(demo: &lenz_harness::demo::armature::DemoArmature, clamp: Clamp) -> Case {
    Case {
        armature: demo.drive().armature,
        r_w: demo.winding_ohm,
        supply_v: demo.supply_v,
        clamp,
    }
}

/// Runs plant and reference with the switch on from 0 to `n_off·DT`, sampling the current
/// every `DT` to `n_end·DT`; compares events and samples; returns the plant.
fn compare(c: &Case, n_off: usize, n_end: usize) -> CoilDrive {
    let on = (c.supply_v, c.r_w + ON_PATH_OHM);
    let off = clamp_segment(c.r_w, c.supply_v, c.clamp);
    let model = Model::of(&c.armature, on, off);
    let jammed = c.armature.faults.stuck;
    let mut plant =
        CoilDrive::with_armature(drive(c.r_w, c.supply_v, c.clamp), c.armature.clone()).unwrap();
    let mut reference = Reference::new(model, jammed);
    plant.set_switch(true);
    reference.switch(true);
    let mut peak: f64 = 0.0;
    let mut worst: f64 = 0.0;
    let mut worst_x: f64 = 0.0;
    for k in 1..=n_end {
        let t = k as f64 * DT;
        plant.advance_to(t);
        reference.advance(t);
        let (ip, ir) = (plant.current_a(), reference.y[0]);
        peak = peak.max(ir.abs());
        worst = worst.max((ip - ir).abs());
        let xp = plant.armature().unwrap().gap_m();
        worst_x = worst_x.max((xp - reference.y[1]).abs());
        if k == n_off {
            plant.set_switch(false);
            reference.switch(false);
        }
    }
    assert!(plant.failure().is_none());
    let pe = plant_kinds(&plant);
    let re = &reference.events;
    let dt_max = pe
        .iter()
        .zip(re)
        .map(|((tp, _), (tr, _))| (tp - tr).abs())
        .fold(0.0, f64::max);
    println!(
        "{:?}: worst current difference {worst:e} A of {peak} A, worst gap difference \
         {worst_x:e} m, {} events, largest event time difference {dt_max:e} s",
        c.clamp,
        re.len()
    );
    // Current samples within 1e-9 of the peak current, gaps within 1e-9 of the open gap.
    assert!(
        worst <= 1e-9 * peak,
        "current differs by {worst:e} A (peak {peak} A)"
    );
    if std::env::var_os("SHOW_EVENTS").is_some() {
        println!("plant {pe:?}\nreference {re:?}");
    }
    assert!(
        worst_x <= 1e-9 * c.armature.open_gap_m,
        "gap differs by {worst_x:e} m"
    );
    assert_eq!(
        pe.len(),
        re.len(),
        "event count: plant {pe:#?}\nreference {re:#?}"
    );
    for ((tp, kp), (tr, kr)) in pe.iter().zip(re) {
        assert!(
            kp.same_kind(kr),
            "plant {kp:?} at {tp} vs reference {kr:?} at {tr}"
        );
        // Event times within 10 ps.
        assert!(
            (tp - tr).abs() <= 1e-11,
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
    plant
}

fn assert_stroke_complete(p: &CoilDrive) {
    let s = p.armature().unwrap().strokes()[0];
    assert!(
        s.seated_t_s.is_some() && s.release_t_s.is_some() && s.opened_t_s.is_some(),
        "{s:?}"
    );
    assert!(s.closed_impacts >= 1);
    assert_eq!(p.armature().unwrap().mode(), ArmatureMode::RestOpen);
}

#[test]
fn valve_with_a_zener_clamp_matches_dop853() {
    let c = case(
        &VALVE,
        Clamp::DiodeZener {
            vf_v: 0.7,
            vz_v: 30.0,
        },
    );
    let p = compare(&c, 1500, 2500);
    assert_stroke_complete(&p);
}

#[test]
fn valve_with_an_active_clamp_matches_dop853() {
    let c = case(&VALVE, Clamp::AcrossSwitch { vcl_v: 45.0 });
    let p = compare(&c, 1500, 2500);
    assert_stroke_complete(&p);
    assert!(p.energies().switch_clamp_j > 0.0);
}

#[test]
fn relay_with_a_resistor_clamp_matches_dop853() {
    let c = case(
        &RELAY,
        Clamp::ResistorDiode {
            r_ohm: 300.0,
            vf_v: 0.7,
        },
    );
    let p = compare(&c, 1000, 2000);
    assert_stroke_complete(&p);
}

#[test]
fn saturating_sluggish_valve_with_a_zener_clamp_matches_dop853() {
    let mut c = case(
        &VALVE,
        Clamp::DiodeZener {
            vf_v: 0.7,
            vz_v: 30.0,
        },
    );
    c.armature.saturation_flux_vs = Some(0.12);
    c.armature.faults.extra_damping_n_s_per_m = 10.0;
    compare(&c, 1500, 2500);
}

#[test]
fn a_stuck_armature_with_a_freewheel_diode_matches_dop853() {
    let mut c = case(&VALVE, Clamp::Freewheel { vf_v: 0.7 });
    c.armature.faults.stuck = true;
    let p = compare(&c, 1000, 1500);
    let m = p.armature().unwrap();
    assert_eq!(m.mode(), ArmatureMode::Jammed);
    assert!(m.strokes()[0].lift_off_t_s.is_none());
}

/// Everything the supply delivered is in the losses or still stored (computed: the energy
/// balance of the coupled model closes only if the force is the co-energy's derivative).
/// `initial_j`: the energy stored at the start (the unclamped switch capacitance charged to
/// the supply).
fn assert_energy_balance(p: &CoilDrive, initial_j: f64) {
    let e = p.energies();
    let m = p.armature().unwrap();
    let out = e.winding_j
        + e.coil_clamp_j()
        + e.switch_off_j()
        + e.switch_conduction_j
        + e.shunt_j
        + e.source_j
        + m.damping_j()
        + m.impact_j()
        + p.stored_energy_j()
        + p.capacitor_energy_j()
        + m.kinetic_energy_j()
        + m.potential_energy_j();
    assert!(
        (e.supply_j + initial_j - out).abs() <= 1e-8 * e.supply_j,
        "at {} s: supply {} J, accounted {} J",
        p.time_s(),
        e.supply_j,
        out
    );
}

#[test]
fn energy_balances_with_every_clamp_and_pwm() {
    for clamp in [
        Clamp::Freewheel { vf_v: 0.7 },
        Clamp::DiodeZener {
            vf_v: 0.7,
            vz_v: 30.0,
        },
        Clamp::AcrossSwitch { vcl_v: 45.0 },
        Clamp::ResistorDiode {
            r_ohm: 100.0,
            vf_v: 0.7,
        },
        Clamp::Unclamped { c_f: 1e-9 },
    ] {
        let c = case(&VALVE, clamp);
        let mut p =
            CoilDrive::with_armature(drive(c.r_w, c.supply_v, clamp), c.armature.clone()).unwrap();
        let initial_j = p.capacitor_energy_j();
        // Pull in for 20 ms, hold at 50 % duty (20 kHz) for 10 ms, then off for 30 ms.
        p.set_switch(true);
        p.advance_to(0.02);
        assert_energy_balance(&p, initial_j);
        let period = 50e-6;
        for k in 0..200 {
            let t0 = 0.02 + k as f64 * period;
            p.set_switch(true);
            p.advance_to(t0 + 0.5 * period);
            p.set_switch(false);
            p.advance_to(t0 + period);
        }
        assert_energy_balance(&p, initial_j);
        let m = p.armature().unwrap();
        // The freewheel diode keeps the PWM's current up; the faster clamps let it fall
        // during each off time, so the armature may drop out and pull in again.
        if let Clamp::Freewheel { .. } = clamp {
            assert_eq!(m.mode(), ArmatureMode::RestClosed, "{clamp:?}: held");
            assert_eq!(m.strokes().len(), 1);
        }
        p.advance_to(0.06);
        assert_energy_balance(&p, initial_j);
        let m = p.armature().unwrap();
        assert!(p.failure().is_none());
        assert_eq!(m.mode(), ArmatureMode::RestOpen, "{clamp:?}: released");
        let s = m.strokes()[0];
        println!(
            "{clamp:?}: seated {:.3} ms, impact {:.3} m/s, release {:.3} ms after the last \
             switch-off, open at {:.3} ms, {:.1} mJ to seat",
            s.seated_t_s.unwrap() * 1e3,
            s.impact_speed_m_s.unwrap(),
            (s.release_t_s.unwrap() - s.off_t_s.unwrap()) * 1e3,
            s.opened_t_s.unwrap() * 1e3,
            s.seat_energy_j.unwrap() * 1e3
        );
    }
}

#[test]
fn a_faster_clamp_releases_sooner() {
    // A zener clamp takes the current down faster than a freewheel diode, so the armature
    // releases sooner (common practice, no source; here computed by the plant).
    let release = |clamp| {
        let c = case(&VALVE, clamp);
        let mut p =
            CoilDrive::with_armature(drive(c.r_w, c.supply_v, clamp), c.armature.clone()).unwrap();
        p.set_switch(true);
        p.advance_to(0.03);
        p.set_switch(false);
        p.advance_to(0.06);
        let s = p.armature().unwrap().strokes()[0];
        s.release_t_s.unwrap() - s.off_t_s.unwrap()
    };
    let diode = release(Clamp::Freewheel { vf_v: 0.7 });
    let zener = release(Clamp::DiodeZener {
        vf_v: 0.7,
        vz_v: 30.0,
    });
    println!("release after switch-off: diode {diode:e} s, zener {zener:e} s");
    assert!(zener < 0.5 * diode, "{zener} vs {diode}");
}

#[test]
fn armature_faults_apply_at_run_time() {
    let c = case(&VALVE, Clamp::Freewheel { vf_v: 0.7 });
    let mut p = CoilDrive::with_armature(drive(c.r_w, c.supply_v, c.clamp), c.armature).unwrap();
    assert!(p.set_armature_faults(lenz_harness::plant::ArmatureFaults {
        stuck: true,
        ..Default::default()
    }));
    p.set_switch(true);
    p.advance_to(0.03);
    assert_eq!(p.armature().unwrap().mode(), ArmatureMode::Jammed);
    assert!(!p.set_armature_faults(lenz_harness::plant::ArmatureFaults {
        extra_load_n: f64::NAN,
        ..Default::default()
    }));
    // Freed while the current flows: it pulls in at once.
    assert!(p.set_armature_faults(Default::default()));
    p.advance_to(0.06);
    assert_eq!(p.armature().unwrap().mode(), ArmatureMode::RestClosed);
    let mut plain = CoilDrive::new(drive(c.r_w, c.supply_v, c.clamp)).unwrap();
    assert!(!plain.set_armature_faults(Default::default()));
}
