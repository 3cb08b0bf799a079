//! The plant against an outside general-purpose solver: `ode_solvers` Dop853 (an explicit
//! Runge–Kutta 8(5,3) pair from crates.io), on a saturating coil and on a boost start-up.
//!
//! The reference equations are written here independently of the plant: the coil in current
//! form `di/dt = v / L_d(i)` (the plant integrates flux linkage and inverts the curve), the
//! boost with its diode as a switch in the right-hand side. Label: computed (plant cross-checked
//! against a general-purpose ODE solver).

use lenz_harness::plant::{
    Boost, BoostSpec, Clamp, CoilDrive, CoilDriveSpec, CoilSpec, InductanceCurve, SwitchSpec,
};
use ode_solvers::{Dop853, OutputType, System, Vector1, Vector2};

// Demo valve with a saturating core (invented): 120 mH unsaturated, knee at 0.5 A, 20 mH
// residual; 32 Ω, 24 V, diode 0.7 V + zener 24 V.
const L0: f64 = 0.120;
const IK: f64 = 0.5;
const LR: f64 = 0.020;
const R: f64 = 32.0;
const VS: f64 = 24.0;
const VC: f64 = 24.7;

fn l_d(i: f64) -> f64 {
    let x = i / IK;
    LR + (L0 - LR) / (1.0 + x * x)
}

struct CoilOde {
    v: f64,
    r: f64,
}

impl System<f64, Vector1<f64>> for CoilOde {
    fn system(&self, _t: f64, y: &Vector1<f64>, dy: &mut Vector1<f64>) {
        dy[0] = (self.v - self.r * y[0]) / l_d(y[0]);
    }
}

/// The clamp phase in time: current and the energy the clamp takes, `dE/dt = V_c i`.
struct DecayOde;

impl System<f64, Vector2<f64>> for DecayOde {
    fn system(&self, _t: f64, y: &Vector2<f64>, dy: &mut Vector2<f64>) {
        dy[0] = -(VC + R * y[0]) / l_d(y[0]);
        dy[1] = VC * y[0];
    }
}

fn decay(i_off: f64, t: f64) -> Vector2<f64> {
    let mut s = Dop853::new(DecayOde, 0.0, t, t, Vector2::new(i_off, 0.0), 1e-13, 1e-16);
    s.set_output(OutputType::Sparse);
    s.integrate().expect("reference integrates");
    *s.y_out().last().unwrap()
}

fn dop1(v: f64, i0: f64, t: f64) -> f64 {
    let mut s = Dop853::new(
        CoilOde { v, r: R },
        0.0,
        t,
        t,
        Vector1::new(i0),
        1e-13,
        1e-15,
    );
    s.set_output(OutputType::Sparse);
    s.integrate().expect("reference integrates");
    s.y_out().last().unwrap()[0]
}

#[test]
fn saturating_coil_matches_dop853() {
    let mut p = CoilDrive::new(CoilDriveSpec {
        coil: CoilSpec {
            curve: InductanceCurve::Knee {
                l0_h: L0,
                knee_a: IK,
                l_res_h: LR,
            },
            r20_ohm: R,
            alpha20_per_k: 0.00393,
            temp_c: 20.0,
            thermal: None,
        },
        clamp: Clamp::DiodeZener {
            vf_v: 0.7,
            vz_v: 24.0,
        },
        switch: SwitchSpec {
            on_resistance_ohm: 0.0,
            breakdown_v: 100.0,
        },
        supply_v: VS,
        source_resistance_ohm: 0.0,
        shunt_ohm: 0.0,
    })
    .unwrap();
    // On for 20 ms: compare every 0.25 ms against Dop853 started from the plant's previous sample.
    p.set_switch(true);
    let mut worst = 0.0f64;
    let mut i_ref = 0.0;
    for k in 1..=80 {
        let t = k as f64 * 0.25e-3;
        p.advance_to(t);
        i_ref = dop1(VS, i_ref, 0.25e-3);
        worst = worst.max((p.current_a() - i_ref).abs() / 0.75);
    }
    assert!(worst < 1e-8, "on phase: worst rel error {worst:e}");
    // The saturating coil rises faster than a linear 120 mH one, which reaches
    // 0.75 (1 - e^(-20/3.75)) = 0.74638 A after 20 ms.
    let i_off = p.current_a();
    assert!(i_off > 0.7470, "{i_off}");
    p.set_switch(false);
    let t_off = p.time_s();
    let e0 = p.energies().coil_clamp_j();
    // Off: samples every 0.2 ms while the current flows.
    let mut worst = 0.0f64;
    let mut i_ref = i_off;
    for k in 1..=5 {
        p.advance_to(t_off + k as f64 * 0.2e-3);
        i_ref = dop1(-VC, i_ref, 0.2e-3);
        worst = worst.max((p.current_a() - i_ref).abs() / i_off);
    }
    assert!(worst < 1e-8, "off phase: worst rel error {worst:e}");
    p.advance_to(t_off + 10e-3);
    // Time to zero by bisection on the reference's end time, and the clamp energy there.
    let (mut lo, mut hi) = (0.0, 10e-3);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if decay(i_off, mid)[0] > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let y = Vector2::new(hi, decay(i_off, hi)[1]);
    let rec = p.switch_offs().last().unwrap();
    let t0 = rec.decay_s.unwrap();
    assert!((t0 / y[0] - 1.0).abs() < 1e-8, "t to 0: {t0} vs {}", y[0]);
    let e = p.energies().coil_clamp_j() - e0;
    assert!(
        (e / y[1] - 1.0).abs() < 1e-8,
        "clamp energy {e} vs {}",
        y[1]
    );
}

// CHECKS section 3 heater rail (invented demo values): 5 V -> 12 V, 10 uH, 40 mohm DCR,
// 25 mohm switch, 0.35 V diode, 22 uF with 5 mohm ESR, 24 ohm load, 500 kHz.
#[derive(Clone, Copy, PartialEq)]
enum Topology {
    On,
    Diode,
    Idle,
}

struct BoostOde {
    topology: Topology,
    curve: fn(f64) -> f64,
}

const DCR: f64 = 0.040;
const RON: f64 = 0.025;
const VD: f64 = 0.35;
const C: f64 = 22e-6;
const ESR: f64 = 0.005;
const RL: f64 = 24.0;
const VIN: f64 = 5.0;

impl System<f64, Vector2<f64>> for BoostOde {
    fn system(&self, _t: f64, y: &Vector2<f64>, dy: &mut Vector2<f64>) {
        let (i, vc) = (y[0], y[1]);
        let l = (self.curve)(i);
        match self.topology {
            Topology::On => {
                dy[0] = (VIN - (DCR + RON) * i) / l;
                dy[1] = -vc / ((RL + ESR) * C);
            }
            Topology::Diode => {
                let vo = (vc + ESR * i) * RL / (RL + ESR);
                dy[0] = (VIN - VD - DCR * i - vo) / l;
                dy[1] = (i - vo / RL) / C;
            }
            Topology::Idle => {
                dy[0] = 0.0;
                dy[1] = -vc / ((RL + ESR) * C);
            }
        }
    }
}

fn dop2(
    topology: Topology,
    curve: fn(f64) -> f64,
    a: f64,
    z: f64,
    y: Vector2<f64>,
) -> Vector2<f64> {
    if z <= a {
        return y;
    }
    let mut s = Dop853::new(BoostOde { topology, curve }, a, z, z - a, y, 1e-12, 1e-14);
    s.set_output(OutputType::Sparse);
    s.integrate().expect("reference integrates");
    *s.y_out().last().unwrap()
}

/// One switch-off interval of the reference: the diode conducts until the current reaches
/// zero (found by bisection on the end time of smooth integrations), then blocks.
fn off_interval(curve: fn(f64) -> f64, a: f64, z: f64, y: Vector2<f64>) -> Vector2<f64> {
    let forward = VIN - VD > y[1] * RL / (RL + ESR);
    if y[0] <= 0.0 && !forward {
        return dop2(Topology::Idle, curve, a, z, y);
    }
    let end = dop2(Topology::Diode, curve, a, z, y);
    if end[0] >= 0.0 {
        return end;
    }
    let (mut lo, mut hi) = (a, z);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if dop2(Topology::Diode, curve, a, mid, y)[0] > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let mut at_zero = dop2(Topology::Diode, curve, a, hi, y);
    at_zero[0] = 0.0;
    dop2(Topology::Idle, curve, hi, z, at_zero)
}

fn boost_startup(curve: InductanceCurve, l_of_i: fn(f64) -> f64, duty: f64, periods: usize) {
    let mut b = Boost::new(BoostSpec {
        inductor: curve,
        dcr_ohm: DCR,
        switch_on_resistance_ohm: RON,
        diode_drop_v: VD,
        output_c_f: C,
        esr_ohm: ESR,
        load_ohm: RL,
        input_v: VIN,
        source_resistance_ohm: 0.0,
    })
    .unwrap();
    let ts = 2e-6;
    let mut y = Vector2::new(0.0, 0.0);
    let (mut worst_i, mut worst_v) = (0.0f64, 0.0f64);
    let mut peak_i = 0.0f64;
    for k in 0..periods {
        let t0 = k as f64 * ts;
        for (on, a, z) in [(true, t0, t0 + duty * ts), (false, t0 + duty * ts, t0 + ts)] {
            b.set_switch(on);
            b.advance_to(z);
            y = if on {
                dop2(Topology::On, l_of_i, a, z, y)
            } else {
                off_interval(l_of_i, a, z, y)
            };
            worst_i = worst_i.max((b.inductor_current_a() - y[0]).abs());
            worst_v = worst_v.max((b.capacitor_v() - y[1]).abs());
            peak_i = peak_i.max(y[0]);
        }
    }
    assert!(
        worst_i < 1e-6 * peak_i,
        "inductor current: worst {worst_i:e} A of {peak_i} A"
    );
    assert!(
        worst_v < 1e-6 * 12.0,
        "capacitor voltage: worst {worst_v:e} V"
    );
    assert!(
        b.capacitor_v() > 8.0,
        "the rail came up: {}",
        b.capacitor_v()
    );
    assert!(b.dcm_events() > 0, "the start-up overshoot visits DCM");
}

#[test]
fn boost_startup_linear_inductor_matches_dop853() {
    boost_startup(InductanceCurve::Linear { l_h: 10e-6 }, |_| 10e-6, 0.6, 400);
}

#[test]
fn boost_startup_saturating_inductor_matches_dop853() {
    // 10 uH unsaturated, knee 2 A, 3 uH residual (invented): the start-up inrush saturates it.
    fn l(i: f64) -> f64 {
        let x = i / 2.0;
        3e-6 + 7e-6 / (1.0 + x * x)
    }
    boost_startup(
        InductanceCurve::Knee {
            l0_h: 10e-6,
            knee_a: 2.0,
            l_res_h: 3e-6,
        },
        l,
        0.6,
        400,
    );
}
