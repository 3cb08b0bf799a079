//! The moving armature's plan routines against the textbook relations and the reference sheet
//! (`docs/references.md`, section 5, C5.2). Each check names its source.
//!
//! The force is checked against the co-energy it must derive from: `f = ∂W′(i, x)/∂x` at
//! constant current (A. E. Fitzgerald, C. Kingsley, S. D. Umans, *Electric Machinery*, ch. 3;
//! from memory). The co-energy here is an f64 quadrature of the flux linkage over the current,
//! differentiated numerically in the gap, so nothing of the routine's closed forms is reused.

use lenz::Error;
use lenz::armature::{Armature, GapInductance, GapTable, MagneticCircuit, Mechanics};
use lenz_checks::assert_close;

/// CHECKS C5.2 gap model: `L₀` 0.2 H, `x₀` 0.5 mm.
const L0: f64 = 0.2;
const X0: f64 = 0.5e-3;

fn c52_gap() -> GapInductance {
    GapInductance::Reluctance {
        zero_gap_h: L0 as f32,
        halving_gap_m: X0 as f32,
    }
}

/// `L(x)` of the reluctance form, written here from the magnetic circuit `N²/(ℛ_iron +
/// x/(μ₀A))` with `N²/ℛ_iron = L₀` and `μ₀A·ℛ_iron = x₀`.
fn l_of(x: f64) -> f64 {
    L0 / (1.0 + x / X0)
}

/// Flux linkage of the saturating model, `λ_sat·tanh(L(x)·i/λ_sat)`, or `L(x)·i`.
fn flux(sat: Option<f64>, i: f64, x: f64) -> f64 {
    match sat {
        None => l_of(x) * i,
        Some(ls) => ls * (l_of(x) * i / ls).tanh(),
    }
}

/// Co-energy `W′(i, x) = ∫₀ⁱ λ(i′, x) di′` by composite five-point Gauss–Legendre.
fn coenergy(sat: Option<f64>, i: f64, x: f64) -> f64 {
    let nodes = [
        (0.0, 128.0 / 225.0),
        (-0.538_469_310_105_683, 0.478_628_670_499_366),
        (0.538_469_310_105_683, 0.478_628_670_499_366),
        (-0.906_179_845_938_664, 0.236_926_885_056_189),
        (0.906_179_845_938_664, 0.236_926_885_056_189),
    ];
    let panels = 200;
    let h = i / panels as f64;
    (0..panels)
        .map(|k| {
            let m = (k as f64 + 0.5) * h;
            nodes
                .iter()
                .map(|(t, w)| w * flux(sat, m + 0.5 * h * t, x))
                .sum::<f64>()
                * 0.5
                * h
        })
        .sum()
}

/// Closing force `−∂W′/∂x` by a fourth-order central difference of the co-energy.
fn force_from_coenergy(sat: Option<f64>, i: f64, x: f64) -> f64 {
    let h = 1e-3 * X0;
    let w = |dx: f64| coenergy(sat, i, x + dx);
    -(-w(2.0 * h) + 8.0 * w(h) - 8.0 * w(-h) + w(-2.0 * h)) / (12.0 * h)
}

#[test]
fn c5_2_inductance_slope_and_force() {
    // Source: CHECKS C5.2 (computed from the reluctance form; force relation Fitzgerald ch. 3,
    // from memory): at 2 mm, L = 40 mH, dL/dx = −16 H/m, 0.5 A pulls with 2.0 N.
    let g = c52_gap();
    assert_close("L(2 mm)", g.inductance_h(2e-3).unwrap() as f64, 0.040, 1e-6);
    assert_close(
        "dL/dx(2 mm)",
        g.slope_h_per_m(2e-3).unwrap() as f64,
        -16.0,
        1e-6,
    );
    assert_close(
        "dL/dx(0.05 mm)",
        g.slope_h_per_m(0.05e-3).unwrap() as f64,
        -330.578_512,
        1e-6,
    );
    let m = MagneticCircuit::new(g, None).unwrap();
    assert_close(
        "F(0.5 A, 2 mm)",
        m.pull_force_n(0.5, 2e-3).unwrap() as f64,
        2.0,
        1e-6,
    );
}

#[test]
fn c5_2_pull_in_and_hold_currents() {
    // Source: CHECKS C5.2 (computed): 1.5 N preload at the 2 mm open gap needs
    // sqrt(2F/|dL/dx|) = 0.43301 A; 2.5 N at the 0.05 mm residual gap needs 0.12298 A.
    // The sheet takes the closed-gap spring force as preload + 500 N/m × 2 mm = 2.5 N; the
    // stroke to a 0.05 mm residual gap is 1.95 mm, so the rate here is 1.0 N / 1.95 mm to give
    // the same 2.5 N at the closed stop.
    let mech = Mechanics {
        open_gap_m: 2.0e-3,
        closed_gap_m: 0.05e-3,
        spring_preload_n: 1.5,
        spring_rate_n_per_m: 1.0 / 1.95e-3,
        load_n: 0.0,
    };
    let a = Armature::new(MagneticCircuit::new(c52_gap(), None).unwrap(), mech).unwrap();
    let p = a.pull_in_current().unwrap();
    assert_close("pull-in current", p.current_a as f64, 0.433_013, 2e-6);
    assert_eq!(p.gap_m, 2.0e-3, "the open stop binds");
    assert_close(
        "must-hold current",
        a.hold_current_a().unwrap() as f64,
        0.122_98,
        5e-5,
    );
    assert_close(
        "spring at the closed stop",
        mech.opening_force_n(0.05e-3).unwrap() as f64,
        2.5,
        1e-6,
    );
}

#[test]
fn force_is_the_gap_derivative_of_the_coenergy() {
    // Source: f = ∂W′(i, x)/∂x at constant current (Fitzgerald, Kingsley, Umans, ch. 3; from
    // memory), computed: co-energy by quadrature, derivative by central differences.
    for sat in [None, Some(0.02), Some(0.08)] {
        let m = MagneticCircuit::new(c52_gap(), sat.map(|s| s as f32)).unwrap();
        for &i in &[0.05, 0.3, 0.8, 2.5] {
            for &x in &[0.0, 0.05e-3, 0.5e-3, 2.0e-3] {
                let x = f64::max(x, 2.5e-3 * X0); // the difference stencil stays at x ≥ 0
                let want = force_from_coenergy(sat, i, x);
                let got = m.pull_force_n(i as f32, x as f32).unwrap() as f64;
                assert_close(&format!("F({i} A, {x} m, sat {sat:?})"), got, want, 2e-5);
                let w = m.coenergy_j(i as f32, x as f32).unwrap() as f64;
                assert_close(
                    &format!("W'({i} A, {x} m, sat {sat:?})"),
                    w,
                    coenergy(sat, i, x),
                    2e-5,
                );
            }
        }
    }
}

#[test]
fn work_over_a_stroke_at_constant_current_is_the_coenergy_change() {
    // Source: the integral form of the same relation, ∫F dx = ΔW′ at constant current
    // (Fitzgerald ch. 3, from memory); computed: the routine's force integrated over the
    // stroke by Simpson's rule against its own co-energy at the two ends.
    for sat in [None, Some(0.03)] {
        let m = MagneticCircuit::new(c52_gap(), sat).unwrap();
        let (a, b) = (0.05e-3f64, 2.0e-3f64);
        let n = 400;
        let h = (b - a) / n as f64;
        let mut work = 0.0;
        for k in 0..=n {
            let x = a + h * k as f64;
            let w = if k == 0 || k == n {
                1.0
            } else if k % 2 == 1 {
                4.0
            } else {
                2.0
            };
            work += w * m.pull_force_n(0.6, x as f32).unwrap() as f64;
        }
        work *= h / 3.0;
        let dw = m.coenergy_j(0.6, a as f32).unwrap() as f64
            - m.coenergy_j(0.6, b as f32).unwrap() as f64;
        assert_close(&format!("work vs co-energy, sat {sat:?}"), work, dw, 1e-5);
    }
}

#[test]
fn a_table_sampled_from_the_reluctance_form_reproduces_it() {
    // Computed: 1/L is linear in the gap for the reluctance form, which is exactly how a
    // table is interpolated, so inductance and force agree between the points too.
    let pts: Vec<(f32, f32)> = (0..9)
        .map(|k| {
            let x = k as f64 * 0.3e-3;
            (x as f32, l_of(x) as f32)
        })
        .collect();
    let table = GapInductance::Table(GapTable::new(&pts).unwrap());
    let reluctance = c52_gap();
    let (mt, mr) = (
        MagneticCircuit::new(table, None).unwrap(),
        MagneticCircuit::new(reluctance, None).unwrap(),
    );
    for k in 0..=48 {
        let x = (k as f64 * 0.05e-3) as f32;
        assert_close(
            "L table vs form",
            table.inductance_h(x).unwrap() as f64,
            l_of(x as f64),
            2e-6,
        );
        assert_close(
            "F table vs form",
            mt.pull_force_n(0.4, x).unwrap() as f64,
            mr.pull_force_n(0.4, x).unwrap() as f64,
            2e-5,
        );
    }
    assert_eq!(
        table.inductance_h(2.5e-3).unwrap_err().param(),
        "gap_m",
        "beyond the table"
    );
}

#[test]
fn saturated_force_approaches_its_limit() {
    // Computed: g(u) = u tanh u − ln cosh u → ln 2, so F → ln 2 · λ²/(L₀x₀) at any gap of the
    // reluctance form (here 0.693 · 4e-4 / 1e-4 = 2.77 N).
    let m = MagneticCircuit::new(c52_gap(), Some(0.02)).unwrap();
    let limit = 2f64.ln() * 0.02 * 0.02 / (L0 * X0);
    for x in [0.0f32, 1e-3, 2e-3] {
        assert_close(
            "limit",
            m.force_limit_n(x).unwrap().unwrap() as f64,
            limit,
            1e-6,
        );
        let f = m.pull_force_n(1000.0, x).unwrap() as f64;
        assert_close("F at 1 kA", f, limit, 1e-6);
        assert!(m.pull_force_n(0.5, x).unwrap() as f64 <= limit);
    }
    assert!(matches!(
        m.current_for_force_a(3.0, 1e-3),
        Err(Error::Unreachable {
            param: "force_n",
            ..
        })
    ));
}
