//! The shipped `motor.toml` (the demo's vent motor, invented values) under its winding and
//! load faults: the built-in driver's overload and open-winding checks trip with their own
//! cause, the same driver without them misses both (checks that can fail), a shorted winding
//! runs on without a nuisance trip, and the plan's verdicts on the two thresholds against the
//! steady-state current in closed form.
//!
//! Run with `--nocapture` to see the measured figures.

#[path = "common/demo_motor.rs"]
mod demo_motor;
use demo_motor::{show, text};
use lenz_harness::System as System_;
use lenz_harness::closed_loop::RunResult;
use lenz_harness::scenario::run::{Params, Record};
use ode_solvers::{Dop853, System, Vector2};

/// Runs scenario `name` of `text` with the built-in driver at nominal values.
fn run(text: &str, name: &str) -> RunResult {
    let f = lenz_harness::scenario::parse("motor.toml", text).unwrap_or_else(|e| panic!("{e}"));
    let k = f
        .scenarios
        .iter()
        .position(|s| s.name == name)
        .unwrap_or_else(|| panic!("scenario {name}"));
    let r = lenz_harness::scenario::run::run(&f, k, &Params::NOMINAL, Record::None)
        .unwrap_or_else(|e| panic!("{name}: {e}"));
    show(name, &r);
    for e in &r.events {
        println!("  {:>9.3} ms  {}", e.t_s * 1e3, e.what);
    }
    r
}

fn trips(r: &RunResult) -> Vec<&str> {
    r.events
        .iter()
        .filter(|e| e.what.starts_with("trip"))
        .map(|e| e.what.as_str())
        .collect()
}

/// The file without the table `[controller.motor.NAME]` (and its comment block above).
fn without(text: &str, name: &str) -> String {
    let header = format!("[controller.motor.{name}]");
    let at = text.find(&header).expect("the table");
    let start = text[..at]
        .trim_end()
        .rfind("\n\n")
        .expect("a blank line before")
        + 1;
    let end = at + text[at..].find("\n\n").expect("a blank line after");
    format!("{}{}", &text[..start], &text[end..])
}

#[test]
fn overload_and_open_winding_trip_with_their_own_cause() {
    let t = text();
    for (scenario, cause, before_s) in [
        ("overload", "trip: motor overload", 0.9),
        ("open winding", "trip: open motor winding", 0.53),
    ] {
        let r = run(&t, scenario);
        assert!(r.passed(), "{scenario}: {:?}", r.violations());
        let got = trips(&r);
        assert_eq!(got, vec![cause], "{scenario}");
        // The trip comes after the fault at 500 ms: the overload's 300 ms after the slowing
        // rotor's current has passed 2.5 A (tens of ms), the jam time's 20 ms after the
        // current has died away.
        let at = r.events.iter().find(|e| e.what == cause).unwrap().t_s;
        assert!(at > 0.5 && at < before_s, "{scenario}: trip at {at} s");
    }
}

#[test]
fn the_driver_without_its_checks_misses_both() {
    let t = without(&without(&text(), "overload"), "open_winding");
    assert!(!t.contains("[controller.motor.overload]") && !t.contains("min_duty"));
    for scenario in ["overload", "open winding"] {
        let r = run(&t, scenario);
        assert!(trips(&r).is_empty(), "{scenario}");
        let p = r.property("trip_latency").expect("trip latency");
        assert!(!p.pass && p.value.is_infinite(), "{scenario}: {p:?}");
    }
}

#[test]
fn a_shorted_winding_runs_on_without_a_nuisance_trip() {
    let r = run(&text(), "shorted winding");
    assert!(r.passed(), "{:?}", r.violations());
    assert!(trips(&r).is_empty());
    assert!(
        r.events.iter().any(|e| e.what.contains("ShortedWinding")),
        "the fault was applied"
    );
}

/// The steady running current of the linear model at mean winding voltage `u` and load
/// torque `t` (negative: aiding): `k·i = t + b·ω`, `u = R·i + k·ω` (Krishnan, *Electric Motor
/// Drives*, ch. 3, the DC machine in steady state; cited from memory), solved for `i`.
fn steady_current(u: f64, r: f64, k: f64, b: f64, t: f64) -> f64 {
    (t + b * u / k) / (k + b * r / k)
}

/// The motor `L·di/dt = u − R·i − k·ω`, `J·dω/dt = k·i − b·ω − T`.
struct Dc {
    u: f64,
    r: f64,
    l: f64,
    k: f64,
    j: f64,
    b: f64,
    t: f64,
}

impl System<f64, Vector2<f64>> for Dc {
    fn system(&self, _t: f64, y: &Vector2<f64>, dy: &mut Vector2<f64>) {
        dy[0] = (self.u - self.r * y[0] - self.k * y[1]) / self.l;
        dy[1] = (self.k * y[0] - self.b * y[1] - self.t) / self.j;
    }
}

/// Time the current of a full reverse start from rest spends between `−a` and `+a` while it
/// crosses to its running value, from `ode_solvers`' Dop853 (dense output every µs, crossings
/// interpolated linearly).
fn reverse_start_dwell(m: Dc, a: f64) -> f64 {
    let dt = 1e-6;
    let mut s = Dop853::new(m, 0.0, 0.4, dt, Vector2::new(0.0, 0.0), 1e-12, 1e-14);
    s.integrate().expect("reference integrates");
    let (x, y) = (s.x_out(), s.y_out());
    let cross = |level: f64| {
        let k = (1..y.len())
            .find(|&k| y[k - 1][0] < level && y[k][0] >= level)
            .expect("the current crosses");
        let f = (level - y[k - 1][0]) / (y[k][0] - y[k - 1][0]);
        x[k - 1] + f * (x[k] - x[k - 1])
    };
    cross(a) - cross(-a)
}

#[test]
fn the_plan_bounds_both_thresholds_by_the_running_current() {
    let sys = System_::from_toml("motor.toml", &text()).unwrap_or_else(|e| panic!("{e}"));
    let rep = sys.plan().unwrap_or_else(|e| panic!("{e}"));
    let find = |start: &str| {
        rep.verdicts
            .iter()
            .find(|v| v.check.starts_with(start))
            .unwrap_or_else(|| panic!("verdict {start}"))
    };
    let over = find("highest running current read at the rated torque");
    let open = find("lowest running current read at the smallest judged duty");
    let cross = find("time a sound winding's current takes to cross");
    println!("{over:?}\n{open:?}\n{cross:?}");
    assert!(over.pass && open.pass && cross.pass);
    // The loop: winding R(T) (copper 0.00393 /K, IEC 60028) ± 10 %, two 50 mΩ switches and
    // the 50 mΩ source; k 30 mN·m/A ± 5 %; L 2 mH ± 20 %; J 20 µkg·m², b 1 µN·m·s/rad;
    // 6σ of 0.7 LSB noise at 8.057 mA per count; no gain error, offset or gain spread.
    let noise = 6.0 * 0.7 * 3.3 / 4096.0 / (0.01 * 10.0);
    let r = |temp: f64, f: f64| 1.5 * (1.0 + 0.00393 * (temp - 20.0)) * f + 0.15;
    let (b, j) = (1e-6, 20e-6);
    // Overload: highest at the weakest torque constant; the friction term makes the fastest
    // corner (13.2 V, coldest, lowest R) the highest.
    let want = steady_current(13.2, r(-20.0, 0.9), 0.03 * 0.95, b, 0.06) + noise;
    let got = f64::from(over.value.unwrap());
    assert!((got - want).abs() < 1e-4, "{got} against {want}");
    // Open winding, running: lowest in reverse, where the 20 mN·m load aids the drive, at the
    // strongest torque constant, 13.2 V, the hottest and highest winding; full duty only
    // (no ripple).
    let want = -steady_current(13.2, r(60.0, 1.1), 0.03 * 1.05, b, -0.02) - noise;
    let got = f64::from(open.value.unwrap());
    assert!((got - want).abs() < 1e-4, "{got} against {want}");
    // Open winding, crossing: the band ±(50 mA + noise); the longest crossing at 13.2 V,
    // 60 °C, L −20 %, R +10 %, k −5 % (the plan's corner). A reverse start from rest, solved
    // by Dop853, crosses the band in the time the plan's slow-mode closed form gives.
    let a = 0.05 + noise;
    let m = Dc {
        u: -13.2,
        r: r(60.0, 1.1),
        l: 1.6e-3,
        k: 0.03 * 0.95,
        j,
        b,
        t: 0.02,
    };
    let dwell = reverse_start_dwell(m, a);
    let got = f64::from(cross.value.unwrap());
    println!("crossing: plan {got} s, Dop853 {dwell} s");
    assert!(
        (got - dwell).abs() < 1e-6 + 1e-5 * dwell,
        "{got} against {dwell}"
    );
    // Thresholds past those bounds fail the verdicts: an overload current below the rated
    // running current, and an open-winding current whose band the current needs longer than
    // the jam time to cross.
    let t = text()
        .replace("current = \"2.5A\"", "current = \"2.1A\"")
        .replace("current = \"50mA\"", "current = \"150mA\"");
    let rep = System_::from_toml("motor.toml", &t)
        .unwrap_or_else(|e| panic!("{e}"))
        .plan()
        .unwrap_or_else(|e| panic!("{e}"));
    assert!(!rep.passed);
    for start in [
        "highest running current read at the rated torque",
        "time a sound winding's current takes to cross",
    ] {
        let v = rep
            .verdicts
            .iter()
            .find(|v| v.check.starts_with(start))
            .unwrap();
        assert!(!v.pass, "{v:?}");
    }
}
