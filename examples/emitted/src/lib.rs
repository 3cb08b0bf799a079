//! The constants `lenz emit --lang rust` writes for the shipped scenario files (invented demo
//! data), compiled as a user's firmware would compile them: `tests/bit_for_bit.rs` compares
//! them with the configurations the firmware plans at init.
#![no_std]

/// The irrigation valve (`host-harness/scenarios/valve.toml`).
pub mod valve {
    include!(concat!(env!("OUT_DIR"), "/valve.rs"));
}

/// The relay (`host-harness/scenarios/relay.toml`).
pub mod relay {
    include!(concat!(env!("OUT_DIR"), "/relay.rs"));
}

/// The boost stage (`host-harness/scenarios/boost.toml`).
pub mod boost {
    include!(concat!(env!("OUT_DIR"), "/boost.rs"));
}
