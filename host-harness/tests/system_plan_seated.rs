//! The plan of a coil with a moving armature holds and switches it off seated: the stored
//! energy, the hold and every switch-off figure use the seated inductance `L(closed_gap)`
//! (`system::plan`). Against the closed form of the freewheel decay, and against the closed
//! loop: every release time the shipped demo files measure lies within the plan's bound. The
//! shipped files' armature sections are the demo constants of `lenz_harness::demo::armature`
//! (one set of invented values).
//! Label: computed (closed forms here; closed loop).

#[path = "common/demo_valve.rs"]
mod demo_valve;
use lenz_harness::demo::armature::{DemoArmature, RELAY, VALVE as PLUNGER};
use lenz_harness::scenario::{self, File, run};

const VALVE: &str = include_str!("../scenarios/valve.toml");
const RELAY_FILE: &str = include_str!("../scenarios/relay.toml");

fn parse(name: &str, text: &str) -> File {
    scenario::parse(name, text).unwrap_or_else(|e| panic!("{e}"))
}

fn release_bound(f: &File) -> f64 {
    let p = lenz_harness::system::plan::plan(f).unwrap_or_else(|e| panic!("{e}"));
    let fig = p
        .figures
        .iter()
        .find(|x| x.figure == "release time (current part)")
        .expect("the release figure");
    f64::from(fig.max)
}

/// The file's system and controller without the armature section (and without its
/// scenarios, whose armature checks need one).
fn without_armature(text: &str) -> String {
    demo_valve::without_armature(
        text,
        "[[scenario]]\nname = \"on\"\nduration = \"1ms\"\n\
         [[scenario.check]]\nproperty = \"peak-current\"\nmax = \"10A\"\n",
    )
}

/// The freewheel release from the steady current of the cold (−20 °C, R −5 %), high-supply
/// corner to `ix`, with inductance `l`: t = τ·ln((I0 + Vf/R)/(Ix + Vf/R)), τ = L/R, R the
/// winding (docs/references.md F2.1; closed form). `loop_ohm`: switch, source and shunt.
fn release_closed_form(l: f64, r20: f64, v: f64, loop_ohm: f64, ix: f64) -> f64 {
    let r = r20 * 0.95 * (1.0 + 0.00393 * (-20.0 - 20.0));
    let i0 = v / (r + loop_ohm);
    let a = 0.7 / r;
    l / r * ((i0 + a) / (ix + a)).ln()
}

fn seated_h(a: &DemoArmature) -> f64 {
    // The reluctance form L(x) = L0 / (1 + x/x0) at the closed gap.
    a.zero_gap_h / (1.0 + a.closed_gap_m / a.halving_gap_m)
}

#[test]
fn the_release_bound_uses_the_seated_coil() {
    for (name, text, a, v, loop_ohm, ix, unmoved_h) in [
        ("valve.toml", VALVE, PLUNGER, 26.4, 0.31, 0.075, 0.120),
        ("relay.toml", RELAY_FILE, RELAY, 13.2, 0.4, 0.010, 0.3),
    ] {
        let bound = release_bound(&parse(name, text));
        let want = release_closed_form(seated_h(&a) * 1.1, a.winding_ohm, v, loop_ohm, ix);
        let plain = release_bound(&parse(name, &without_armature(text)));
        let want_plain = release_closed_form(unmoved_h * 1.1, a.winding_ohm, v, loop_ohm, ix);
        println!(
            "{name}: release bound {bound} s seated (closed form {want}), {plain} s unmoved \
             (closed form {want_plain})"
        );
        assert!(
            (bound / want - 1.0).abs() < 1e-5,
            "{name}: {bound} vs {want}"
        );
        assert!((plain / want_plain - 1.0).abs() < 1e-5, "{name}: {plain}");
        assert!(bound > 2.0 * plain, "{name}");
    }
}

#[test]
fn every_measured_release_lies_within_the_plan_bound_and_the_file_limits_cover_it() {
    for (name, text) in [("valve.toml", VALVE), ("relay.toml", RELAY_FILE)] {
        let f = parse(name, text);
        let bound = release_bound(&f);
        let requirement = f
            .system
            .requirements
            .release_time
            .expect("a release requirement")
            .get();
        // The file's requirement is the plan's bound rounded up (its comment), not more.
        assert!(
            requirement >= bound && requirement < bound * 1.2,
            "{name}: {requirement} vs {bound}"
        );
        let p = lenz_harness::system::plan::plan(&f).unwrap();
        assert!(p.passed, "{name}: {:#?}", p.verdicts);
        let mut measured = 0;
        for k in 0..f.scenarios.len() {
            let r = run::run(&f, k, &run::Params::NOMINAL, run::Record::None).unwrap();
            if let Some(rel) = r.property("release_time") {
                println!("{name} {}: release {} s", f.scenarios[k].name, rel.value);
                assert!(rel.value <= bound, "{name}: {} > {bound}", rel.value);
                measured += 1;
            }
        }
        assert!(measured >= 3, "{name}");
    }
}

#[test]
fn the_shipped_armatures_are_the_demo_constants() {
    for (name, text, a) in [
        ("valve.toml", VALVE, PLUNGER),
        ("relay.toml", RELAY_FILE, RELAY),
    ] {
        let f = parse(name, text);
        let c = f.system.coil.expect("a coil");
        let k = c.armature.expect("an armature");
        let same = |x: f64, y: f64| (x - y).abs() <= 1e-12 * y.abs().max(1e-12);
        for (key, file, demo) in [
            (
                "zero_gap_inductance",
                k.zero_gap_inductance.get(),
                a.zero_gap_h,
            ),
            ("halving_gap", k.halving_gap.get(), a.halving_gap_m),
            ("mass", k.mass.get(), a.mass_kg),
            ("open_gap", k.open_gap.get(), a.open_gap_m),
            ("closed_gap", k.closed_gap.get(), a.closed_gap_m),
            ("spring_preload", k.spring_preload.get(), a.spring_preload_n),
            ("spring_rate", k.spring_rate.get(), a.spring_rate_n_per_m),
            ("damping", k.damping.get(), a.damping_n_s_per_m),
            ("load", k.load.get(), a.load_n),
            ("restitution", k.restitution.get(), a.restitution),
            ("resistance", c.resistance.get(), a.winding_ohm),
        ] {
            assert!(same(file, demo), "{name}: {key} {file} vs {demo}");
        }
        // The coil's `inductance` is the gap curve at the open stop (where the pull-in starts).
        let open = a.zero_gap_h / (1.0 + a.open_gap_m / a.halving_gap_m);
        assert!(same(c.inductance.get(), open), "{name}: {open}");
    }
}
