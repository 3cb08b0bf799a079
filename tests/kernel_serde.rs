//! Kernel configurations through serde: a configuration whose fields depend on each other
//! (the trip detector's derived thresholds, the monitor's persistence of at least one) is
//! written as its raw values and read back through `from_raw`, so a file edited by hand cannot
//! hold an inconsistent configuration.

use lenz::kernel::{
    InverseTable, MonitorConfig, MonitorParams, MonitorRaw, SenseScale, TripConfig, TripParams,
    TripRaw,
};
use lenz::trip::{Curve, InverseTime, Thermal};

/// Demo protection of the irrigation valve (invented values): 1 kHz samples, 4 mA per count.
fn trip() -> TripConfig {
    TripConfig::new(&TripParams {
        sample_period_s: 1e-3,
        amps_per_count: 4e-3,
        instantaneous_counts: 3000,
        full_scale_counts: 4095,
        blanking_s: 3e-3,
        persistence_n: 2,
        persistence_m: 3,
        stuck_samples: 40,
        inverse: Some(InverseTime::new(Curve::IeeeVeryInverse, 2.0, 0.05).unwrap()),
        thermal: Some(Thermal::new(0.5, 1.05, 2.5).unwrap()),
        retries: 2,
        retry_delay_s: 20e-3,
    })
    .unwrap()
}

#[test]
fn trip_config_round_trips_as_its_raw_values() {
    let cfg = trip();
    let json = serde_json::to_string(&cfg).unwrap();
    // The raw values, not the derived fields, are what is written.
    let raw: TripRaw = serde_json::from_str(&json).unwrap();
    assert_eq!(raw, cfg.raw());
    assert!(!json.contains("over_counts") && !json.contains("block_mask"));
    let back: TripConfig = serde_json::from_str(&json).unwrap();
    assert_eq!(back, cfg);
}

#[test]
fn deserialized_trip_config_is_clamped_as_from_raw() {
    // A block of 2^9 samples and an M of 40 do not exist: from_raw clamps them.
    let raw = TripRaw {
        block_log2: 9,
        persistence_m: 40,
        persistence_n: 0,
        inverse_table: InverseTable::DISABLED,
        ..trip().raw()
    };
    let cfg: TripConfig = serde_json::from_str(&serde_json::to_string(&raw).unwrap()).unwrap();
    assert_eq!(cfg, TripConfig::from_raw(raw));
    assert_eq!(cfg.block_log2(), 5);
    assert_eq!(cfg.persistence_n(), 1);
}

#[test]
fn monitor_config_round_trips_and_reads_a_zero_persistence_as_one() {
    let scale = SenseScale::new(4.028e-3, 100.0, 10, 4085).unwrap();
    let cfg = MonitorConfig::new(
        scale,
        &MonitorParams {
            abs_tol_a: 0.05,
            rel_tol: 0.2,
            open_min_estimate_a: 0.1,
            open_max_a: 0.02,
            persistence: 3,
            stuck_samples: 20,
            stuck_min_change_a: 0.1,
        },
    )
    .unwrap();
    let json = serde_json::to_string(&cfg).unwrap();
    assert_eq!(serde_json::from_str::<MonitorConfig>(&json).unwrap(), cfg);
    let raw = MonitorRaw {
        persistence: 0,
        ..cfg.raw()
    };
    let back: MonitorConfig = serde_json::from_str(&serde_json::to_string(&raw).unwrap()).unwrap();
    assert_eq!(back.persistence(), 1);
}
