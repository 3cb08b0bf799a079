//! The demo vent motor is described twice: as a closed-loop fixture in code
//! (`lenz_harness::closed_loop::demo_vent`, for the closed-loop tests that build the loop
//! without a file) and as the shipped `scenarios/motor.toml` (invented values). The motor,
//! its bridge, supply, bus, thermal path and timing must be the same in both; the fixture's
//! sense chain and driver settings are its own (its module docs).

use lenz_harness::closed_loop::demo_vent::{
    VENT_BUS_F, VENT_BUS_RATING_V, VENT_LOAD_NM, VENT_PWM_NS, VENT_SAMPLE_OFFSET_NS, VENT_SUPPLY_V,
    VENT_TICK_NS, vent_spec,
};

#[path = "common/demo_motor.rs"]
mod demo_motor;

fn same(what: &str, file: f64, code: f64) {
    assert!(
        (file - code).abs() <= 1e-12 * code.abs(),
        "{what}: motor.toml {file}, demo_vent {code}"
    );
}

#[test]
fn the_fixture_and_the_file_describe_the_same_vent() {
    let f = lenz_harness::scenario::parse("motor.toml", &demo_motor::text())
        .unwrap_or_else(|e| panic!("{e}"));
    let s = &f.system;
    let m = s.motor.expect("[system.motor]");
    let spec = vent_spec(20.0, VENT_SUPPLY_V);
    same("inductance", m.inductance.get(), spec.inductance_h);
    same("resistance", m.resistance.get(), spec.r20_ohm);
    same(
        "torque constant",
        m.torque_constant.get(),
        spec.torque_constant_nm_per_a,
    );
    same("inertia", m.inertia.get(), spec.inertia_kg_m2);
    same("friction", m.friction.get(), spec.friction_nm_s_per_rad);
    same("load torque", m.load_torque.get(), VENT_LOAD_NM);
    same("diode drop", m.diode_drop.get(), spec.diode_drop_v);
    same("bus capacitance", m.bus_capacitance.get(), VENT_BUS_F);
    same(
        "bus capacitance (spec)",
        m.bus_capacitance.get(),
        spec.bus_capacitance_f,
    );
    let th = spec.thermal.expect("the fixture's thermal path");
    same(
        "thermal resistance",
        m.thermal_resistance.expect("thermal_resistance").get(),
        th.r_th_k_per_w,
    );
    same(
        "thermal capacitance",
        m.thermal_capacitance.expect("thermal_capacitance").get(),
        th.c_th_j_per_k,
    );
    same(
        "switch on-resistance",
        s.switch.on_resistance.get(),
        spec.switch_on_resistance_ohm,
    );
    same(
        "source resistance",
        s.supply.source_resistance.get(),
        spec.source_resistance_ohm,
    );
    same("nominal supply", s.supply.nominal.get(), VENT_SUPPLY_V);
    same(
        "bus rating",
        s.ratings.bus_voltage.expect("bus_voltage").get(),
        VENT_BUS_RATING_V,
    );
    same("tick", s.tick.get(), VENT_TICK_NS as f64 * 1e-9);
    same(
        "PWM period",
        1.0 / s.pwm_frequency.get(),
        VENT_PWM_NS as f64 * 1e-9,
    );
    same(
        "sample offset",
        s.sample_offset.get(),
        VENT_SAMPLE_OFFSET_NS as f64 * 1e-9,
    );
    assert!(m.supply_sinks && spec.supply_sinks);
}
