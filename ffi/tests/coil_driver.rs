//! The coil driver through the C API gives exactly what `lenz::drive::CoilDriver` gives: the
//! demo valve's configuration (planned by the harness from `host-harness/scenarios/valve.toml`)
//! back exactly from its raw values, and the same duty, phase, fault and estimate tick by
//! tick on random demands and readings. Proptest seeds are fixed.

#![allow(
    clippy::undocumented_unsafe_blocks,
    reason = "every unsafe call here passes pointers to live locals of the right type, or null"
)]

use std::convert::Infallible;
use std::mem::MaybeUninit;
use std::path::Path;
use std::ptr;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::{CoilDriver, CoilDriverConfig, CoilDriverRaw, CoilSense};
use lenz_ffi::*;
use proptest::prelude::*;
use proptest::test_runner::{Config as ProptestConfig, RngSeed};

const MAX_DUTY: u16 = 1000;

#[derive(Debug)]
struct Pwm(u16);

impl ErrorType for Pwm {
    type Error = Infallible;
}

impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        MAX_DUTY
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0 = duty;
        Ok(())
    }
}

fn valve_config(temp_c: f64) -> CoilDriverConfig {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("..")
        .join("host-harness")
        .join("scenarios")
        .join("valve.toml");
    let file = lenz_harness::scenario::load(&path).expect("the demo valve file");
    lenz_harness::pil::params::coil_driver_config(&file, temp_c).expect("its plan")
}

fn c_config(raw: &CoilDriverRaw) -> MaybeUninit<LenzCoilDriverConfig> {
    let c: LenzCoilDriverRaw = (*raw).into();
    let mut cfg = MaybeUninit::<LenzCoilDriverConfig>::uninit();
    assert_eq!(
        unsafe { lenz_coil_driver_init(cfg.as_mut_ptr(), &c) },
        LenzStatus::Ok
    );
    cfg
}

#[test]
fn raw_values_come_back_exactly() {
    for temp in [-20.0, 20.0, 85.0] {
        let raw = valve_config(temp).raw();
        let cfg = c_config(&raw);
        let mut back = MaybeUninit::<LenzCoilDriverRaw>::uninit();
        assert_eq!(
            unsafe { lenz_coil_driver_raw(cfg.as_ptr(), back.as_mut_ptr()) },
            LenzStatus::Ok
        );
        assert_eq!(CoilDriverRaw::from(unsafe { back.assume_init() }), raw);
    }
}

#[test]
fn start_refuses_a_resolution_that_cannot_set_the_hold_duty() {
    let cfg = c_config(&valve_config(20.0).raw());
    let mut drv = MaybeUninit::<LenzCoilDriver>::uninit();
    let mut ok = 7u8;
    for (max, want) in [(0u16, 0u8), (3, 0), (MAX_DUTY, 1)] {
        assert_eq!(
            unsafe { lenz_coil_driver_start(drv.as_mut_ptr(), cfg.as_ptr(), max, &mut ok) },
            LenzStatus::Ok
        );
        assert_eq!(ok, want, "max_duty {max}");
    }
    let mut out = MaybeUninit::<LenzCoilDriverOutput>::uninit();
    assert_eq!(
        unsafe { lenz_coil_driver_update(ptr::null_mut(), true, 100, 2700, out.as_mut_ptr()) },
        LenzStatus::NullPointer
    );
    assert_eq!(
        unsafe { lenz_coil_driver_update(drv.as_mut_ptr(), true, 100, 2700, ptr::null_mut()) },
        LenzStatus::NullPointer
    );
    assert_eq!(
        unsafe { lenz_coil_driver_start(drv.as_mut_ptr(), ptr::null(), MAX_DUTY, &mut ok) },
        LenzStatus::NullPointer
    );
    assert_eq!(
        unsafe { lenz_coil_driver_clear_fault(ptr::null_mut()) },
        LenzStatus::NullPointer
    );
}

/// One tick's inputs: demand, current and supply readings (around the valve's range, and
/// anywhere).
fn tick() -> impl Strategy<Value = (bool, u16, u16)> {
    (
        prop::bool::weighted(0.7),
        prop_oneof![4 => 90u16..400, 1 => any::<u16>()],
        prop_oneof![4 => 2400u16..3000, 1 => any::<u16>()],
    )
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 64,
        rng_seed: RngSeed::Fixed(0x00C0_11D5),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    #[test]
    fn same_outputs_as_the_rust_driver(
        temp in prop_oneof![Just(-20.0), Just(20.0), Just(85.0)],
        ticks in prop::collection::vec(tick(), 1..400),
        clear_at in 0usize..400,
    ) {
        let cfg = valve_config(temp);
        let c_cfg = c_config(&cfg.raw());
        let mut drv = MaybeUninit::<LenzCoilDriver>::uninit();
        let mut ok = 0u8;
        prop_assert_eq!(
            unsafe { lenz_coil_driver_start(drv.as_mut_ptr(), c_cfg.as_ptr(), MAX_DUTY, &mut ok) },
            LenzStatus::Ok
        );
        prop_assert_eq!(ok, 1);
        let mut rust = CoilDriver::new(cfg, Pwm(0)).expect("the resolution suits");
        for (k, &(demand, current, supply)) in ticks.iter().enumerate() {
            if k == clear_at {
                rust.clear_fault();
                prop_assert_eq!(
                    unsafe { lenz_coil_driver_clear_fault(drv.as_mut_ptr()) },
                    LenzStatus::Ok
                );
            }
            let _ = rust.update(demand, CoilSense { current_counts: current, supply_counts: supply });
            let mut out = MaybeUninit::<LenzCoilDriverOutput>::uninit();
            prop_assert_eq!(
                unsafe { lenz_coil_driver_update(drv.as_mut_ptr(), demand, current, supply, out.as_mut_ptr()) },
                LenzStatus::Ok
            );
            let out = unsafe { out.assume_init() };
            prop_assert_eq!(out.duty, rust.output().0, "tick {}", k);
            prop_assert_eq!(out.estimate_ua, rust.estimate_ua(), "tick {}", k);
            prop_assert_eq!(out.released != 0, rust.released(), "tick {}", k);
            prop_assert_eq!(out.pull_in_timed_out != 0, rust.pull_in_timed_out(), "tick {}", k);
            prop_assert_eq!(
                out.phase as u8,
                match rust.phase() {
                    lenz::drive::CoilPhase::Idle => 0u8,
                    lenz::drive::CoilPhase::PullIn => 1,
                    lenz::drive::CoilPhase::Hold => 2,
                    lenz::drive::CoilPhase::Releasing => 3,
                    lenz::drive::CoilPhase::Faulted => 4,
                },
                "tick {}", k
            );
            prop_assert_eq!(out.fault == LenzCoilFault::None, rust.fault().is_none(), "tick {}", k);
        }
    }
}
