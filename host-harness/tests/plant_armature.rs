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
    ArmatureDrive, ArmatureDriveSpec, ArmatureEventKind, ArmatureMode, EndStop, GapCurve,
};
use ode_solvers::{Dop853, OutputType, System, Vector3};

/// Sample period of the comparison, s.
const DT: f64 = 20e-6;

#[derive(Debug, Clone, Copy, PartialEq)]
enum Mech {
    RestOpen,
    Moving,
    RestClosed,
    Jammed,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Elec {
    On,
    Freewheel,
    Idle,
}

/// What happened, in a form both sides can be compared in.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Kind {
    LiftOffOpen,
    ImpactClosed(f64),
    RestClosed,
    LiftOffClosed,
    ImpactOpen(f64),
    RestOpen,
    CurrentZero,
}

impl Kind {
    fn same_kind(&self, o: &Kind) -> bool {
        std::mem::discriminant(self) == std::mem::discriminant(o)
    }
}

/// The reference model's constants, read from the plant's spec.
#[derive(Debug, Clone, Copy)]
struct Model {
    l0: f64,
    x0: f64,
    sat: Option<f64>,
    m: f64,
    open: f64,
    closed: f64,
    preload: f64,
    rate: f64,
    c: f64,
    load: f64,
    e: f64,
    rest: f64,
    r_w: f64,
    r_on: f64,
    vs: f64,
    vf: f64,
}

impl Model {
    fn of(s: &ArmatureDriveSpec) -> Self {
        let a = &s.armature;
        let GapCurve::Reluctance {
            zero_gap_h,
            halving_gap_m,
        } = a.gap
        else {
            panic!("the reference uses the reluctance form");
        };
        Self {
            l0: zero_gap_h,
            x0: halving_gap_m,
            sat: a.saturation_flux_vs,
            m: a.mass_kg,
            open: a.open_gap_m,
            closed: a.closed_gap_m,
            preload: a.spring_preload_n,
            rate: a.spring_rate_n_per_m,
            c: a.damping_n_s_per_m + a.faults.extra_damping_n_s_per_m,
            load: a.load_n + a.faults.extra_load_n,
            e: a.restitution,
            rest: a.rest_speed_m_s,
            r_w: s.winding_ohm,
            r_on: s.on_path_ohm,
            vs: s.supply_v,
            vf: s.freewheel_vf_v,
        }
    }

    /// `L(x)` and `dL/dx`.
    fn l(&self, x: f64) -> (f64, f64) {
        let d = 1.0 + x / self.x0;
        (self.l0 / d, -self.l0 / (self.x0 * d * d))
    }

    /// `∂λ/∂i` and `∂λ/∂x` at current `i`, gap `x`.
    fn partials(&self, i: f64, x: f64) -> (f64, f64) {
        let (l, dl) = self.l(x);
        match self.sat {
            None => (l, i * dl),
            Some(ls) => {
                let ch = (l * i / ls).cosh();
                let sech2 = 1.0 / (ch * ch);
                (l * sech2, i * dl * sech2)
            }
        }
    }

    /// Pull force: `½ i² |dL/dx|`, or `|dL/dx|/L² · λ² · (u tanh u − ln cosh u)`.
    fn pull(&self, i: f64, x: f64) -> f64 {
        let (l, dl) = self.l(x);
        match self.sat {
            None => 0.5 * i * i * -dl,
            Some(ls) => {
                let u = (l * i / ls).abs();
                let g = if u < 1e-3 {
                    0.5 * u * u
                } else {
                    u * u.tanh() - u.cosh().ln()
                };
                -dl / (l * l) * ls * ls * g
            }
        }
    }

    fn opening(&self, x: f64) -> f64 {
        self.preload + self.rate * (self.open - x) + self.load
    }

    fn rhs(&self, mech: Mech, elec: Elec, y: &Vector3<f64>) -> Vector3<f64> {
        let (i, x, v) = (y[0], y[1], y[2]);
        let moving = mech == Mech::Moving;
        let (a, b) = match elec {
            Elec::On => (self.vs, self.r_w + self.r_on),
            Elec::Freewheel => (-self.vf, self.r_w),
            Elec::Idle => (0.0, 0.0),
        };
        let (li, lx) = self.partials(i, x);
        let vv = if moving { v } else { 0.0 };
        let di = if elec == Elec::Idle {
            0.0
        } else {
            (a - b * i - lx * vv) / li
        };
        let dv = if moving {
            (self.opening(x) - self.pull(i, x) - self.c * v) / self.m
        } else {
            0.0
        };
        Vector3::new(di, vv, dv)
    }

    fn g(&self, mech: Mech, elec: Elec, y: &Vector3<f64>) -> [f64; 3] {
        let (i, x) = (y[0], y[1]);
        let e0 = if elec == Elec::Freewheel { i } else { 1.0 };
        let (e1, e2) = match mech {
            Mech::Moving => (x - self.closed, self.open - x),
            Mech::RestOpen => (self.opening(self.open) - self.pull(i, self.open), 1.0),
            Mech::RestClosed => (self.pull(i, self.closed) - self.opening(self.closed), 1.0),
            Mech::Jammed => (1.0, 1.0),
        };
        [e0, e1, e2]
    }
}

/// One segment of the reference: the equations of a mode, stopping at the first step where
/// an event function changes sign.
struct Segment {
    model: Model,
    mech: Mech,
    elec: Elec,
    g0: [f64; 3],
}

impl System<f64, Vector3<f64>> for Segment {
    fn system(&self, _t: f64, y: &Vector3<f64>, dy: &mut Vector3<f64>) {
        *dy = self.model.rhs(self.mech, self.elec, y);
    }

    fn solout(&mut self, _t: f64, y: &Vector3<f64>, _dy: &Vector3<f64>) -> bool {
        let g = self.model.g(self.mech, self.elec, y);
        (0..3).any(|j| self.g0[j] >= 0.0 && g[j] < 0.0)
    }
}

/// The reference simulation: switch on at 0, off at `t_off`, samples every `DT` to `t_end`.
struct Reference {
    model: Model,
    t: f64,
    y: Vector3<f64>,
    mech: Mech,
    elec: Elec,
    events: Vec<(f64, Kind)>,
}

impl Reference {
    fn new(model: Model, jammed: bool) -> Self {
        Self {
            model,
            t: 0.0,
            y: Vector3::new(0.0, model.open, 0.0),
            mech: if jammed { Mech::Jammed } else { Mech::RestOpen },
            elec: Elec::Idle,
            events: Vec::new(),
        }
    }

    fn solve(
        &self,
        y0: Vector3<f64>,
        t0: f64,
        t1: f64,
        stop: bool,
    ) -> (Vec<f64>, Vec<Vector3<f64>>) {
        let seg = Segment {
            model: self.model,
            mech: self.mech,
            elec: self.elec,
            g0: if stop {
                self.model.g(self.mech, self.elec, &y0)
            } else {
                [-1.0; 3]
            },
        };
        let mut s = Dop853::new(seg, t0, t1, t1 - t0, y0, 1e-13, 1e-16);
        s.set_output(OutputType::Sparse);
        s.integrate().expect("reference integrates");
        (s.x_out().clone(), s.y_out().clone())
    }

    fn settle(&mut self) {
        let m = self.model;
        let i = self.y[0];
        match self.mech {
            Mech::RestOpen if m.pull(i, m.open) > m.opening(m.open) => {
                self.mech = Mech::Moving;
                self.events.push((self.t, Kind::LiftOffOpen));
            }
            Mech::RestClosed if m.pull(i, m.closed) < m.opening(m.closed) => {
                self.mech = Mech::Moving;
                self.events.push((self.t, Kind::LiftOffClosed));
            }
            _ => {}
        }
    }

    fn impact(&mut self, closed: bool) {
        let m = self.model;
        let v_in = self.y[2];
        self.y[1] = if closed { m.closed } else { m.open };
        let speed = v_in.abs();
        self.events.push((
            self.t,
            if closed {
                Kind::ImpactClosed(speed)
            } else {
                Kind::ImpactOpen(speed)
            },
        ));
        let v_out = -m.e * v_in;
        if v_out.abs() < m.rest {
            self.y[2] = 0.0;
            self.mech = if closed {
                Mech::RestClosed
            } else {
                Mech::RestOpen
            };
            self.events.push((
                self.t,
                if closed {
                    Kind::RestClosed
                } else {
                    Kind::RestOpen
                },
            ));
            self.settle();
        } else {
            self.y[2] = v_out;
        }
    }

    /// Advances to `t1`, handling every event on the way.
    fn advance(&mut self, t1: f64) {
        while self.t < t1 {
            if self.elec == Elec::Idle && self.mech != Mech::Moving {
                self.t = t1;
                return;
            }
            let (ts, ys) = self.solve(self.y, self.t, t1, true);
            let n = ts.len();
            let yb = ys[n - 1];
            let g0 = self.model.g(self.mech, self.elec, &self.y);
            let gb = self.model.g(self.mech, self.elec, &yb);
            let fired: Vec<usize> = (0..3).filter(|&j| g0[j] >= 0.0 && gb[j] < 0.0).collect();
            if fired.is_empty() {
                self.t = t1;
                self.y = yb;
                continue;
            }
            // Bisection on the step that crossed, each trial a fresh run from its start.
            let (ta, ya) = (ts[n - 2], ys[n - 2]);
            let (mut lo, mut hi) = (0.0, ts[n - 1] - ta);
            let mut y_hi = yb;
            let mut which = fired[0];
            for _ in 0..100 {
                let mid = 0.5 * (lo + hi);
                if mid <= lo || mid >= hi {
                    break;
                }
                let (_, yy) = self.solve(ya, ta, ta + mid, false);
                let ym = *yy.last().unwrap();
                let gm = self.model.g(self.mech, self.elec, &ym);
                if let Some(j) = (0..3).find(|&j| g0[j] >= 0.0 && gm[j] < 0.0) {
                    hi = mid;
                    y_hi = ym;
                    which = j;
                } else {
                    lo = mid;
                }
            }
            self.t = ta + hi;
            self.y = y_hi;
            match (which, self.mech) {
                (0, _) => {
                    self.y[0] = 0.0;
                    self.elec = Elec::Idle;
                    self.events.push((self.t, Kind::CurrentZero));
                    self.settle();
                }
                (1, Mech::Moving) => self.impact(true),
                (2, Mech::Moving) => self.impact(false),
                (1, Mech::RestOpen) => {
                    self.mech = Mech::Moving;
                    self.y[2] = 0.0;
                    self.events.push((self.t, Kind::LiftOffOpen));
                }
                (1, Mech::RestClosed) => {
                    self.mech = Mech::Moving;
                    self.y[2] = 0.0;
                    self.events.push((self.t, Kind::LiftOffClosed));
                }
                other => panic!("unexpected event {other:?}"),
            }
        }
    }

    fn switch(&mut self, on: bool) {
        self.elec = if on {
            Elec::On
        } else if self.y[0] > 0.0 {
            Elec::Freewheel
        } else {
            Elec::Idle
        };
        self.settle();
    }
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
    let model = Model::of(&spec);
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
