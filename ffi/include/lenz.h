#ifndef LENZ_H
#define LENZ_H

/* Generated from the lenz-ffi crate by cbindgen: do not edit. Regenerate with
   LENZ_FFI_WRITE_HEADER=1 cargo test -p lenz-ffi --test header */

#include <stdbool.h>
#include <stdint.h>

// Words of `LenzBoostLoopConfig`.
#define LENZ_BOOST_LOOP_CONFIG_WORDS 106

// Words of `LenzBoostLoopState`.
#define LENZ_BOOST_LOOP_STATE_WORDS 6

// The same storage in 64-bit words (the state holds a 64-bit integrator, so its storage is
// aligned for one).
#define LENZ_BOOST_LOOP_STATE_DWORDS 3

// Words of `LenzBridgeGuardConfig`.
#define LENZ_BRIDGE_GUARD_CONFIG_WORDS 6

// Words of `LenzBridgeGuardState`.
#define LENZ_BRIDGE_GUARD_STATE_WORDS 2

// Words of `LenzCoilDriverConfig`.
#define LENZ_COIL_DRIVER_CONFIG_WORDS 220

// Words of `LenzCoilDriver` (its own copy of the configuration and its state).
#define LENZ_COIL_DRIVER_WORDS 256

// `LenzCoilDriver` in 8-byte units (the driver holds 64-bit values: 8-byte alignment).
#define LENZ_COIL_DRIVER_DWORDS 128

// Words of `LenzDutyLimiterConfig`.
#define LENZ_DUTY_LIMITER_CONFIG_WORDS 103

// Words of `LenzDutyLimiterState`.
#define LENZ_DUTY_LIMITER_STATE_WORDS 2

// Nodes of each duty-limit table.
#define LENZ_DUTY_TABLE_LEN 32

// Words of `LenzEstimatorConfig`.
#define LENZ_ESTIMATOR_CONFIG_WORDS 7

// Words of `LenzEstimatorState`.
#define LENZ_ESTIMATOR_STATE_WORDS 2

// Words of `LenzJamConfig`.
#define LENZ_JAM_CONFIG_WORDS 8

// Words of `LenzJamState`.
#define LENZ_JAM_STATE_WORDS 5

// Words of `LenzMonitorConfig`.
#define LENZ_MONITOR_CONFIG_WORDS 9

// Words of `LenzMonitorState`.
#define LENZ_MONITOR_STATE_WORDS 4

// Words of `LenzMovementConfig`.
#define LENZ_MOVEMENT_CONFIG_WORDS 6

// Words of `LenzMovementState`.
#define LENZ_MOVEMENT_STATE_WORDS 4

// Words of `LenzTrackingOffTimerConfig`.
#define LENZ_TRACKING_OFFTIMER_CONFIG_WORDS 10

// Words of `LenzPlannedOffTimerConfig`.
#define LENZ_PLANNED_OFFTIMER_CONFIG_WORDS 32

// Words of `LenzOffTimerState`.
#define LENZ_OFFTIMER_STATE_WORDS 5

// Breakpoints of a planned off-timer table.
#define LENZ_PLANNED_TABLE_LEN 16

// Words of `LenzSpeedEstimatorConfig`.
#define LENZ_SPEED_ESTIMATOR_CONFIG_WORDS 4

// Words of `LenzSpeedEstimatorState`.
#define LENZ_SPEED_ESTIMATOR_STATE_WORDS 3

// Words of `LenzTripConfig`.
#define LENZ_TRIP_CONFIG_WORDS 176

// Words of `LenzTripState`.
#define LENZ_TRIP_STATE_WORDS 8

// Entries of the inverse-time table.
#define LENZ_INVERSE_TABLE_LEN 161

// `1.0` of the thermal state in Q24: the thermal element trips at this value.
#define LENZ_THETA_ONE_Q24 16777216

// What a call did: `LENZ_STATUS_OK`, or why it did nothing.
enum LenzStatus
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : int32_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // Done; the out values are written.
  LENZ_STATUS_OK = 0,
  // A pointer argument was null; nothing was read or written.
  LENZ_STATUS_NULL_POINTER = 1,
  // A pointer argument was not aligned for its type; nothing was read or written.
  LENZ_STATUS_MISALIGNED = 2,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzStatus LenzStatus;
#else
typedef int32_t LenzStatus;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// The bridge's switch pattern (Rust: `lenz::kernel::BridgeMode`).
enum LenzBridgeMode
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // All switches off.
  LENZ_BRIDGE_MODE_COAST = 0,
  // Leg A switching at the duty, leg B low side on.
  LENZ_BRIDGE_MODE_FORWARD = 1,
  // Leg B switching at the duty, leg A low side on.
  LENZ_BRIDGE_MODE_REVERSE = 2,
  // Both low sides on.
  LENZ_BRIDGE_MODE_BRAKE = 3,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzBridgeMode LenzBridgeMode;
#else
typedef uint8_t LenzBridgeMode;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// The driver's phase (Rust: `lenz::drive::CoilPhase`).
enum LenzCoilPhase
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // Off, released: a demand energizes the coil.
  LENZ_COIL_PHASE_IDLE = 0,
  // Full drive until the pull-in current and the minimum pull-in time.
  LENZ_COIL_PHASE_PULL_IN = 1,
  // Held by the PWM duty.
  LENZ_COIL_PHASE_HOLD = 2,
  // Off, the current still decaying: a demand waits.
  LENZ_COIL_PHASE_RELEASING = 3,
  // Latched off by a fault until `lenz_coil_driver_clear_fault`.
  LENZ_COIL_PHASE_FAULTED = 4,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzCoilPhase LenzCoilPhase;
#else
typedef uint8_t LenzCoilPhase;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// Why the driver latched off (Rust: `lenz::drive::CoilFault`).
enum LenzCoilFault
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // No fault.
  LENZ_COIL_FAULT_NONE = 0,
  // The trip detector latched (cause in `trip_cause`).
  LENZ_COIL_FAULT_TRIP = 1,
  // The plausibility monitor raised a fault (which in `plausibility`).
  LENZ_COIL_FAULT_PLAUSIBILITY = 2,
  // The switch output reported an error (not possible through this API).
  LENZ_COIL_FAULT_OUTPUT = 3,
  // The armature did not move by the movement detector's deadline (not possible through
  // this API, which plans no movement detector).
  LENZ_COIL_FAULT_STUCK = 4,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzCoilFault LenzCoilFault;
#else
typedef uint8_t LenzCoilFault;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// Why the detector tripped (Rust: `lenz::kernel::Cause`).
enum LenzCause
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // No trip (the verdict is not `LENZ_VERDICT_KIND_TRIP`).
  LENZ_CAUSE_NONE = 0,
  // `N` of the last `M` samples at or above the threshold (or at full scale).
  LENZ_CAUSE_INSTANTANEOUS = 1,
  // The inverse-time accumulator reached one.
  LENZ_CAUSE_INVERSE_TIME = 2,
  // The thermal state reached one.
  LENZ_CAUSE_THERMAL = 3,
  // The reading stayed exactly constant with the switch on (stuck sensor).
  LENZ_CAUSE_SENSOR_FAULT = 4,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzCause LenzCause;
#else
typedef uint8_t LenzCause;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// The monitor's finding (Rust: `Option<lenz::kernel::Fault>`).
enum LenzFault
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // Plausible: no fault.
  LENZ_FAULT_NONE = 0,
  // Current expected but none measured.
  LENZ_FAULT_OPEN_COIL = 1,
  // More current than the healthy coil can draw: shorted turns or a shorted coil.
  LENZ_FAULT_LOW_RESISTANCE = 2,
  // The reading does not change while the current should.
  LENZ_FAULT_SENSOR_STUCK = 3,
  // The reading lies outside the valid ADC window.
  LENZ_FAULT_SENSOR_OUT_OF_RANGE = 4,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzFault LenzFault;
#else
typedef uint8_t LenzFault;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// The verdict of one tick (Rust: `lenz::kernel::JamStatus`, the fault's cause flattened in).
enum LenzJamStatus
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // Not driven: nothing judged.
  LENZ_JAM_STATUS_IDLE = 0,
  // Within the start blanking.
  LENZ_JAM_STATUS_BLANKING = 1,
  // Driven and judged healthy this tick.
  LENZ_JAM_STATUS_RUNNING = 2,
  // Latched: current high and rotor (nearly) still.
  LENZ_JAM_STATUS_FAULT_JAM = 3,
  // Latched: current above the overload level for longer than allowed.
  LENZ_JAM_STATUS_FAULT_OVERLOAD = 4,
  // Latched: no current although the bridge drives.
  LENZ_JAM_STATUS_FAULT_OPEN_WINDING = 5,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzJamStatus LenzJamStatus;
#else
typedef uint8_t LenzJamStatus;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// What the detector says (Rust: the variants of `lenz::kernel::Motion`).
enum LenzMotionKind
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // Not watching.
  LENZ_MOTION_KIND_IDLE = 0,
  // Pull-in: no motion seen yet.
  LENZ_MOTION_KIND_WAITING = 1,
  // Pull-in: the current fell from its peak (the armature moves).
  LENZ_MOTION_KIND_MOVING = 2,
  // Pull-in: the armature seated at `tick` (the valley of the dip).
  LENZ_MOTION_KIND_SEATED = 3,
  // Pull-in: no seating by the deadline (stuck, already closed, or too slow): a fault.
  LENZ_MOTION_KIND_NO_MOTION = 4,
  // Release: the current decays, no drop-out seen yet.
  LENZ_MOTION_KIND_DECAYING = 5,
  // Release: the armature left the closed stop at `tick` (the minimum before the rise).
  LENZ_MOTION_KIND_DROPPED_OUT = 6,
  // Release: no drop-out seen by the release deadline.
  LENZ_MOTION_KIND_NO_DROP_OUT = 7,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzMotionKind LenzMotionKind;
#else
typedef uint8_t LenzMotionKind;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// What an off-timer says this tick (Rust: `lenz::kernel::OffStatus`).
enum LenzOffStatus
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // The current may still be above the threshold (or the timer is unsure, or not started).
  LENZ_OFF_STATUS_NOT_YET = 0,
  // The current is below the threshold.
  LENZ_OFF_STATUS_RELEASED = 1,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzOffStatus LenzOffStatus;
#else
typedef uint8_t LenzOffStatus;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// What the firmware may do after a sample (Rust: `lenz::kernel::Verdict`).
enum LenzVerdictKind
#if defined(__cplusplus) || __STDC_VERSION__ >= 202311L
  : uint8_t
#endif // defined(__cplusplus) || __STDC_VERSION__ >= 202311L
 {
  // No trip: the switch may be on.
  LENZ_VERDICT_KIND_ALLOW = 0,
  // Tripped at this sample: switch off now (the event says why).
  LENZ_VERDICT_KIND_TRIP = 1,
  // Off, waiting for the timed retry.
  LENZ_VERDICT_KIND_WAITING = 2,
  // Off until `lenz_trip_state_reset`.
  LENZ_VERDICT_KIND_LATCHED = 3,
};
#ifndef __cplusplus
#if __STDC_VERSION__ >= 202311L
typedef enum LenzVerdictKind LenzVerdictKind;
#else
typedef uint8_t LenzVerdictKind;
#endif // __STDC_VERSION__ >= 202311L
#endif // __cplusplus

// Boost loop settings (opaque; fill with `lenz_boost_loop_init`). Read-only after init.
typedef struct {
  uint32_t opaque[LENZ_BOOST_LOOP_CONFIG_WORDS];
} LenzBoostLoopConfig;

// The raw coefficients of the duty limiter, as a constant can hold them (Rust:
// `lenz::kernel::DutyLimiterRaw`).
typedef struct {
  // Lowest valid input reading and first table node, counts.
  uint16_t vin_lo_counts;
  // Highest valid input reading, counts.
  uint16_t vin_hi_counts;
  // Node spacing `2^shift` counts (at most 16 is used).
  uint8_t shift;
  // Saturation limit at the nodes, duty counts Q8.
  int32_t saturation_q8[LENZ_DUTY_TABLE_LEN];
  // Gain-peak limit at the nodes, duty counts Q8.
  int32_t gain_peak_q8[LENZ_DUTY_TABLE_LEN];
  // Light-load overvoltage limit at the nodes, duty counts Q8.
  int32_t light_load_q8[LENZ_DUTY_TABLE_LEN];
  // Minimum-off-time limit, duty counts Q8.
  int32_t min_off_q8;
  // Duties below this are output as 0, counts.
  uint16_t min_on_counts;
  // Duty register value for duty 1.
  uint16_t full_scale;
  // Soft-start rise per tick, duty counts Q8.
  int32_t slew_q8;
  // Lowest valid output reading, counts.
  uint16_t vout_lo_counts;
  // Highest valid output reading, counts.
  uint16_t vout_hi_counts;
  // Output reading that cuts switching, counts.
  uint16_t ov_trip_counts;
  // Output reading at or below which switching resumes, counts.
  uint16_t ov_resume_counts;
} LenzDutyLimiterRaw;

// The raw settings of the boost loop, as a constant can hold them (Rust:
// `lenz::drive::BoostLoopRaw`).
typedef struct {
  // The duty limiter behind the loop.
  LenzDutyLimiterRaw limiter;
  // The output reading of the wanted voltage, counts.
  uint16_t target_counts;
  // Proportional gain, duty counts per output count, Q16.
  int32_t kp_q16;
  // Integral gain, duty counts per output count per tick, Q16.
  int32_t ki_q16;
} LenzBoostLoopRaw;

// One channel's boost loop state (opaque; fill with `lenz_boost_loop_state_init`).
typedef struct {
  uint64_t opaque[LENZ_BOOST_LOOP_STATE_DWORDS];
} LenzBoostLoopState;

// Bridge guard limits (opaque; fill with `lenz_bridge_guard_init`). Read-only after init.
typedef struct {
  uint32_t opaque[LENZ_BRIDGE_GUARD_CONFIG_WORDS];
} LenzBridgeGuardConfig;

// The raw limits of the bridge guard, as a constant can hold them (Rust:
// `lenz::kernel::BridgeGuardRaw`).
typedef struct {
  // Largest duty rise per tick, Q16 (65536 or more: no soft start).
  int32_t slew_q16;
  // Brake allowed at or below this speed magnitude, mrad/s.
  int32_t brake_speed_mrad_s;
  // Reversal allowed at or below this speed magnitude, mrad/s.
  int32_t reverse_speed_mrad_s;
  // Ticks in coast between two driven modes.
  uint16_t dead_ticks;
  // Coasting ticks between one-tick brake probes; 0 for none.
  uint16_t probe_ticks;
  // Resume duty per speed `k/V` of a restart in the rotation's direction: duty Q16 per
  // mrad/s, Q24 (0 or negative: every start ramps from zero).
  int32_t resume_duty_q24;
  // Speed margin taken off the estimate before the resume duty, mrad/s.
  int32_t resume_margin_mrad_s;
} LenzBridgeGuardRaw;

// One channel's bridge guard state (opaque; fill with `lenz_bridge_guard_state_init`).
typedef struct {
  uint32_t opaque[LENZ_BRIDGE_GUARD_STATE_WORDS];
} LenzBridgeGuardState;

// What the bridge does during the next tick (Rust: `lenz::kernel::BridgeCommand`).
typedef struct {
  // Switch pattern.
  LenzBridgeMode mode;
  // Duty of the switching leg in forward and reverse, `0 ..= 65536` (Q16); 0 otherwise.
  int32_t duty_q16;
} LenzBridgeCommand;

// Coil driver settings (opaque; fill with `lenz_coil_driver_init`).
typedef struct {
  uint32_t opaque[LENZ_COIL_DRIVER_CONFIG_WORDS];
} LenzCoilDriverConfig;

// The freewheel (switch-off) path of the estimator (Rust: `lenz::kernel::OffPath`).
typedef struct {
  // `1 − exp(−T·R_off/L)`, Q31.
  int32_t step_q31;
  // `1/R_off`, µA per mV, Q16.
  int32_t conductance_q16;
  // Constant voltage of the clamp opposing the current, mV.
  int32_t clamp_mv;
  // Nonzero for a clamp across the switch: the supply keeps driving the coil while off.
  uint8_t supply_coupled;
} LenzOffPath;

// The raw coefficients of the estimator, as a constant can hold them (Rust: `lenz::kernel::EstimatorRaw`).
typedef struct {
  // `1 − exp(−T·R_on/L)` of the on path, Q31 (`0 ..= 2³¹ − 1` from a plan).
  int32_t on_step_q31;
  // `1/R_on`, µA per mV, Q16.
  int32_t on_conductance_q16;
  // Voltage across the closed switch, mV.
  int32_t switch_drop_mv;
  // The freewheel path.
  LenzOffPath off;
} LenzEstimatorRaw;

// The raw values of a tracking off-timer, as a constant can hold them (Rust:
// `lenz::kernel::TrackingOffTimerRaw`).
typedef struct {
  // The estimator coefficients (only the off path is used).
  LenzEstimatorRaw estimator;
  // Release threshold, µA.
  int32_t threshold_ua;
  // Constant part of the margin below the threshold, µA.
  int32_t base_margin_ua;
  // The margin adds the current at switch-off shifted right by this many bits.
  uint32_t margin_shift;
} LenzTrackingOffTimerRaw;

// The raw values of the hold estimator (Rust: `lenz::drive::HoldEstimatorRaw`).
typedef struct {
  // `1 − exp(−T·R_ref/L)`, Q31.
  int32_t step_q31;
  // `1/R_ref`, µA per mV, Q16.
  int32_t conductance_q16;
  // The reference duty, Q16 fraction (65536 = 1).
  uint32_t reference_duty_q16;
  // `R_on − R_off`, mV per µA, Q24 (signed).
  int32_t delta_r_q24;
  // Bound of the estimate's error in hold, µA.
  int32_t error_bound_ua;
} LenzHoldEstimatorRaw;

// Conversion of ADC counts to microamps, and the valid window of readings (Rust:
// `lenz::kernel::SenseScale`).
typedef struct {
  // Reading at zero current, counts.
  int32_t offset_counts;
  // Current per count, µA, Q16.
  int32_t ua_per_count_q16;
  // Lowest valid reading, counts.
  uint16_t min_valid_counts;
  // Highest valid reading, counts.
  uint16_t max_valid_counts;
} LenzSenseScale;

// The raw thresholds of the monitor, as a constant can hold them (Rust:
// `lenz::kernel::MonitorRaw`).
typedef struct {
  // Sense scaling and valid window.
  LenzSenseScale scale;
  // Absolute part of the tolerance band, µA.
  int32_t abs_tol_ua;
  // Relative part of the tolerance band, Q16 (65536 = 100 %).
  int32_t rel_tol_q16;
  // Estimates at or above this expect a measurable current, µA.
  int32_t open_min_estimate_ua;
  // Measured currents at or below this count as none, µA.
  int32_t open_max_ua;
  // Consecutive samples before a fault is raised.
  uint16_t persistence;
  // Consecutive unchanged readings before the sensor counts as stuck.
  uint16_t stuck_samples;
  // Change of the estimate during a frozen reading that proves it stuck, µA.
  int32_t stuck_min_change_ua;
} LenzMonitorRaw;

// The inverse-time element's table (Rust: `lenz::kernel::InverseTable`). A disabled
// element has every field 0 and `instant_reset` 1.
typedef struct {
  // `2³²/pickup_counts`: `M` in Q16 is `reading · m_scale_q32 >> 16`. Zero disables.
  uint32_t m_scale_q32;
  // `2³²·T_s/t(M)` at `M = 2^o·(1 + s/32)` for entry `32·o + s`.
  uint32_t rate_q32[LENZ_INVERSE_TABLE_LEN];
  // `2³²·T_s/(TD·t_r)` of an inverse reset below pickup; ignored if `instant_reset`.
  uint32_t reset_q32;
  // Nonzero: reset to zero at once below pickup (IEC curves).
  uint8_t instant_reset;
} LenzInverseTable;

// The raw settings of the trip detector, as a constant can hold them (Rust:
// `lenz::kernel::TripRaw`).
typedef struct {
  // Instantaneous threshold: a reading at or above it is over, counts.
  uint16_t instantaneous_counts;
  // A reading at or above this is over too (a saturated ADC), counts.
  uint16_t full_scale_counts;
  // Blanking after each switch-on, samples.
  uint16_t blank_samples;
  // `N` of the `N`-of-`M` persistence filter (0 is taken as 1).
  uint8_t persistence_n;
  // `M` of the `N`-of-`M` persistence filter (clamped to `1 ..= 32`).
  uint8_t persistence_m;
  // Samples of an exactly constant reading with the switch on that count as a stuck
  // sensor (0: off).
  uint16_t stuck_samples;
  // Timed retries before the latch.
  uint8_t retries;
  // Delay before each retry, samples.
  uint16_t retry_samples;
  // `k` of the block of `K = 2^k` samples (clamped to 5).
  uint8_t block_log2;
  // The inverse-time element (disabled: see `LenzInverseTable`).
  LenzInverseTable inverse_table;
  // `2^(24 + x2_shift)/(k·I_B in counts)²`: `x²` in Q24 is `mean r² · x2_mul >> x2_shift`.
  // Zero disables the thermal element.
  uint32_t x2_mul;
  // Shift of the thermal input scale.
  uint8_t x2_shift;
  // `1 − exp(−K·T_s/τ)` of one block, Q32 (below `2³¹`).
  uint32_t thermal_step_q32;
  // Measured relative error of the inverse-time table, parts per million (information
  // only; 0 when not measured).
  uint32_t table_error_ppm;
} LenzTripRaw;

// The raw values of a coil driver configuration, as a constant can hold them (Rust:
// `lenz::drive::CoilDriverRaw`; `lenz emit` or `lenz sim --firmware` produce them from a
// plan).
typedef struct {
  // The off-timer, with the coil's estimator.
  LenzTrackingOffTimerRaw off_timer;
  // The hold estimator.
  LenzHoldEstimatorRaw hold;
  // The plausibility monitor, with the current sense scale.
  LenzMonitorRaw monitor;
  // The trip detector.
  LenzTripRaw trip;
  // Supply reading at 0 V, counts.
  uint16_t supply_zero_counts;
  // Supply per count, mV, Q16.
  int32_t supply_mv_per_count_q16;
  // Pull-in current, µA.
  int32_t pull_in_ua;
  // What must reach the pull-in current: 0 the estimate, anything else the measurement.
  uint8_t pull_in_measured;
  // Shortest pull-in, ticks.
  uint32_t pull_in_min_ticks;
  // Longest pull-in, ticks.
  uint32_t pull_in_max_ticks;
  // Hold: 0 fixed duty, anything else the regulated current.
  uint8_t hold_regulated;
  // Hold current of the regulation, µA.
  int32_t hold_current_ua;
  // Proportional gain of the regulation, Q32 duty per µA.
  int32_t hold_kp_q32;
  // Integral gain of the regulation, Q32 duty per µA per tick.
  int32_t hold_ki_q32;
} LenzCoilDriverRaw;

// One coil driver (opaque; fill with `lenz_coil_driver_start`). Holds its own copy of the
// configuration.
typedef struct {
  uint64_t opaque[LENZ_COIL_DRIVER_DWORDS];
} LenzCoilDriver;

// What a tick of the driver gives back.
typedef struct {
  // Duty for the next tick, counts of the `max_duty` given at start.
  uint16_t duty;
  // Phase after the tick.
  LenzCoilPhase phase;
  // Latched fault.
  LenzCoilFault fault;
  // The trip's cause when `fault` is `LENZ_COIL_FAULT_TRIP`.
  LenzCause trip_cause;
  // The monitor's fault when `fault` is `LENZ_COIL_FAULT_PLAUSIBILITY`.
  LenzFault plausibility;
  // 1 once the off-timer has confirmed the release after the last switch-off.
  uint8_t released;
  // 1 if the last pull-in ended at its maximum time.
  uint8_t pull_in_timed_out;
  // Estimated coil current, µA.
  int32_t estimate_ua;
} LenzCoilDriverOutput;

// Duty limiter coefficients (opaque; fill with `lenz_duty_limiter_init`).
typedef struct {
  uint32_t opaque[LENZ_DUTY_LIMITER_CONFIG_WORDS];
} LenzDutyLimiterConfig;

// One channel's duty limiter state (opaque; fill with `lenz_duty_limiter_state_init`).
typedef struct {
  uint32_t opaque[LENZ_DUTY_LIMITER_STATE_WORDS];
} LenzDutyLimiterState;

// Estimator coefficients (opaque; fill with `lenz_estimator_init`). Read-only after init; one
// serves every channel with the same coil, temperature and tick.
typedef struct {
  uint32_t opaque[LENZ_ESTIMATOR_CONFIG_WORDS];
} LenzEstimatorConfig;

// One channel's estimator state (opaque; fill with `lenz_estimator_state_init`).
typedef struct {
  uint32_t opaque[LENZ_ESTIMATOR_STATE_WORDS];
} LenzEstimatorState;

// Jam detector thresholds (opaque; fill with `lenz_jam_init`). Read-only after init.
typedef struct {
  uint32_t opaque[LENZ_JAM_CONFIG_WORDS];
} LenzJamConfig;

// The raw thresholds of the jam detector, as a constant can hold them (Rust:
// `lenz::kernel::JamRaw`).
typedef struct {
  // Jam current threshold, µA.
  int32_t jam_current_ua;
  // Jam speed threshold, mrad/s.
  int32_t jam_speed_mrad_s;
  // Consecutive ticks for a jam or an open winding.
  uint32_t persist_ticks;
  // Ticks blanked after each start.
  uint32_t blank_ticks;
  // Overload current threshold, µA; `INT32_MAX` for none.
  int32_t overload_current_ua;
  // Consecutive ticks for an overload.
  uint32_t overload_ticks;
  // Open-winding current threshold, µA; negative for none.
  int32_t open_current_ua;
  // Smallest duty magnitude judged for an open winding, Q16.
  int32_t open_duty_q16;
} LenzJamRaw;

// One channel's jam detector state (opaque; fill with `lenz_jam_state_init`).
typedef struct {
  uint32_t opaque[LENZ_JAM_STATE_WORDS];
} LenzJamState;

// Monitor thresholds (opaque; fill with `lenz_monitor_init`). Read-only after init.
typedef struct {
  uint32_t opaque[LENZ_MONITOR_CONFIG_WORDS];
} LenzMonitorConfig;

// One channel's monitor state (opaque; fill with `lenz_monitor_state_init`).
typedef struct {
  uint32_t opaque[LENZ_MONITOR_STATE_WORDS];
} LenzMonitorState;

// Movement detector thresholds (opaque; fill with `lenz_movement_init`). Read-only after init.
typedef struct {
  uint32_t opaque[LENZ_MOVEMENT_CONFIG_WORDS];
} LenzMovementConfig;

// The raw thresholds of the movement detector, as a constant can hold them (Rust:
// `lenz::kernel::MovementRaw`).
typedef struct {
  // A fall below the peak, or a rise above a minimum, counts only beyond this, µA.
  int32_t hysteresis_ua;
  // Consecutive samples beyond the hysteresis needed to decide (0 acts as 1).
  uint16_t persistence;
  // A pull-in peak below this is not the start of motion, µA.
  int32_t min_peak_ua;
  // A release minimum below this is not a drop-out, µA.
  int32_t min_release_ua;
  // Updates after start without seating before `LENZ_MOTION_KIND_NO_MOTION`, ticks.
  uint32_t deadline_ticks;
  // Updates after release without drop-out before `LENZ_MOTION_KIND_NO_DROP_OUT`, ticks.
  uint32_t release_deadline_ticks;
} LenzMovementRaw;

// One channel's movement detector state (opaque; fill with `lenz_movement_state_init`).
typedef struct {
  uint32_t opaque[LENZ_MOVEMENT_STATE_WORDS];
} LenzMovementState;

// The detector's verdict (Rust: `lenz::kernel::Motion`).
typedef struct {
  // The verdict.
  LenzMotionKind kind;
  // For `SEATED` and `DROPPED_OUT`: the tick of the event, counted from 0 at the first
  // update after start or release; 0 otherwise.
  uint32_t tick;
} LenzMotion;

// One channel's off-timer state, either mode (opaque; fill with `lenz_offtimer_state_init`).
typedef struct {
  uint32_t opaque[LENZ_OFFTIMER_STATE_WORDS];
} LenzOffTimerState;

// Tracking off-timer values (opaque; fill with `lenz_tracking_offtimer_init`).
typedef struct {
  uint32_t opaque[LENZ_TRACKING_OFFTIMER_CONFIG_WORDS];
} LenzTrackingOffTimerConfig;

// Planned off-timer table (opaque; fill with `lenz_planned_offtimer_init`).
typedef struct {
  uint32_t opaque[LENZ_PLANNED_OFFTIMER_CONFIG_WORDS];
} LenzPlannedOffTimerConfig;

// The raw table of a planned off-timer, as a constant can hold it (Rust:
// `lenz::kernel::PlannedOffTimerRaw`).
typedef struct {
  // Breakpoint currents, ascending, µA.
  int32_t breakpoints_ua[LENZ_PLANNED_TABLE_LEN];
  // Ticks from switch-off to release for a current at or below each breakpoint.
  uint32_t ticks[LENZ_PLANNED_TABLE_LEN];
} LenzPlannedOffTimerRaw;

// Speed estimator coefficients (opaque; fill with `lenz_speed_estimator_init`).
typedef struct {
  uint32_t opaque[LENZ_SPEED_ESTIMATOR_CONFIG_WORDS];
} LenzSpeedEstimatorConfig;

// The raw coefficients of the speed estimator, as a constant can hold them (Rust:
// `lenz::kernel::SpeedEstimatorRaw`).
typedef struct {
  // `G₁ = R/(1 − a)`, weight of the current at the tick's end, mV per µA, Q24.
  int32_t gain_end_q24;
  // `G₀ = R·a/(1 − a)`, weight of the current at the tick's start, mV per µA, Q24.
  int32_t gain_start_q24;
  // `1/k`, mrad/s per mV, Q16.
  int32_t inv_k_q16;
  // Low-pass step `1 − e^(−T/τ)`, Q31; `INT32_MAX` for no filter.
  int32_t filter_q31;
} LenzSpeedEstimatorRaw;

// One channel's speed estimator state (opaque; fill with `lenz_speed_estimator_state_init`).
typedef struct {
  uint32_t opaque[LENZ_SPEED_ESTIMATOR_STATE_WORDS];
} LenzSpeedEstimatorState;

// Trip detector settings (opaque; fill with `lenz_trip_init`).
typedef struct {
  uint32_t opaque[LENZ_TRIP_CONFIG_WORDS];
} LenzTripConfig;

// One channel's trip detector state (opaque; fill with `lenz_trip_state_init`).
typedef struct {
  uint32_t opaque[LENZ_TRIP_STATE_WORDS];
} LenzTripState;

// A channel's state as the firmware may read it (Rust: the getters of
// `lenz::kernel::TripState`).
typedef struct {
  // Samples seen (wraps).
  uint32_t tick;
  // Thermal state, Q24 (`LENZ_THETA_ONE_Q24` trips); updated at the end of each block.
  uint32_t theta_q24;
  // Inverse-time accumulator, Q32 fraction of one (trips when it would reach `2³²`);
  // updated at the end of each block.
  uint32_t inverse_q32;
  // Retries used since the last reset.
  uint8_t retries;
  // Latched off until reset.
  bool latched;
  // Off and waiting for a retry.
  bool waiting;
} LenzTripStateInfo;

// One trip (Rust: `lenz::kernel::TripEvent`); all zero when the verdict is not a trip.
typedef struct {
  // Sample count since the state was created (wraps), at the tripping sample.
  uint32_t tick;
  // The reading that caused the trip, ADC counts.
  uint16_t reading_counts;
  // Retries used before this trip.
  uint8_t retry;
  // Why it tripped.
  LenzCause cause;
} LenzTripEvent;

// The verdict of one sample. The switch may stay on only on `LENZ_VERDICT_KIND_ALLOW`.
typedef struct {
  // What the firmware may do.
  LenzVerdictKind kind;
  // The trip, for `LENZ_VERDICT_KIND_TRIP`; all zero otherwise.
  LenzTripEvent event;
} LenzVerdict;

#ifdef __cplusplus
extern "C" {
#endif // __cplusplus

// Fills `cfg_out` from raw settings (Rust: `BoostLoopConfig::from_raw`). Any values are
// accepted.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_boost_loop_init(LenzBoostLoopConfig *cfg_out, const LenzBoostLoopRaw *raw);

// Writes the raw settings of `cfg` to `raw_out` (Rust: `BoostLoopConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_boost_loop_init`, `raw_out`
// writable; they do not overlap.
LenzStatus lenz_boost_loop_raw(const LenzBoostLoopConfig *cfg, LenzBoostLoopRaw *raw_out);

// A channel at duty 0, integrator empty, soft start from 0 (Rust: `BoostLoopState::new`, the
// state `BoostLoop::new` starts with).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_boost_loop_state_init(LenzBoostLoopState *state_out);

// One control tick (Rust: `BoostLoop::update`): `enable`, the input and output readings,
// counts; writes the duty for the next tick, counts of the limiter's full scale (0 when
// disabled, cut on overvoltage or a reading outside its window).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `duty_out` writable; they do
// not overlap.
LenzStatus lenz_boost_loop_update(const LenzBoostLoopConfig *cfg,
                                  LenzBoostLoopState *state,
                                  bool enable,
                                  uint16_t vin_counts,
                                  uint16_t vout_counts,
                                  uint16_t *duty_out);

// Whether the overvoltage cut is active (Rust: `BoostLoop::overvoltage`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `overvoltage_out` writable.
LenzStatus lenz_boost_loop_state_overvoltage(const LenzBoostLoopConfig *cfg,
                                             const LenzBoostLoopState *state,
                                             bool *overvoltage_out);

// Fills `cfg_out` from raw limits (Rust: `BridgeGuardConfig::from_raw`). Any values are
// accepted.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_bridge_guard_init(LenzBridgeGuardConfig *cfg_out, const LenzBridgeGuardRaw *raw);

// Writes the raw limits of `cfg` to `raw_out` (Rust: `BridgeGuardConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_bridge_guard_init`, `raw_out`
// writable; they do not overlap.
LenzStatus lenz_bridge_guard_raw(const LenzBridgeGuardConfig *cfg, LenzBridgeGuardRaw *raw_out);

// A channel coasting for long enough (Rust: `BridgeGuardState::new`). Only for a bridge that
// has really been off for at least the dead time.
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_bridge_guard_state_init(LenzBridgeGuardState *state_out);

// One tick (Rust: `BridgeGuardConfig::update`): the wanted duty, Q16 signed by direction (0:
// stop), and the speed estimate, mrad/s; writes the command for the next tick.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `command_out` writable; they
// do not overlap.
LenzStatus lenz_bridge_guard_update(const LenzBridgeGuardConfig *cfg,
                                    LenzBridgeGuardState *state,
                                    int32_t request_q16,
                                    int32_t speed_mrad_s,
                                    LenzBridgeCommand *command_out);

// Loads a configuration from raw values (`CoilDriverConfig::from_raw`: any values are safe to
// run).
//
// # Safety
//
// Each pointer is null or valid: `cfg_out` writable, `raw` readable.
LenzStatus lenz_coil_driver_init(LenzCoilDriverConfig *cfg_out, const LenzCoilDriverRaw *raw);

// The raw values of a configuration.
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_coil_driver_init`, `raw_out`
// writable.
LenzStatus lenz_coil_driver_raw(const LenzCoilDriverConfig *cfg, LenzCoilDriverRaw *raw_out);

// Starts a driver with a copy of `cfg` on a PWM of `max_duty` counts, at duty 0 (off).
//
// Writes `ok_out` = 1, or 0 when the PWM's resolution cannot set the hold duty within 1 % of
// full scale (`max_duty` 0 or too small); then the driver is not started and must not be
// used.
//
// # Safety
//
// Each pointer is null or valid: `drv_out` and `ok_out` writable, `cfg` initialised by
// `lenz_coil_driver_init`.
LenzStatus lenz_coil_driver_start(LenzCoilDriver *drv_out,
                                  const LenzCoilDriverConfig *cfg,
                                  uint16_t max_duty,
                                  uint8_t *ok_out);

// One control tick ([`CoilDriver::update`]): the application's demand and the tick's
// current and supply readings in, the duty for the next tick and the driver's status out.
//
// # Safety
//
// Each pointer is null or valid: `drv` started by `lenz_coil_driver_start`, `out` writable.
LenzStatus lenz_coil_driver_update(LenzCoilDriver *drv,
                                   bool demand,
                                   uint16_t current_counts,
                                   uint16_t supply_counts,
                                   LenzCoilDriverOutput *out);

// Clears a latched fault (`CoilDriver::clear_fault`): the coil is energized again only on
// demand and after the release.
//
// # Safety
//
// `drv` is null or started by `lenz_coil_driver_start`.
LenzStatus lenz_coil_driver_clear_fault(LenzCoilDriver *drv);

// Fills `cfg_out` from raw coefficients (Rust: `DutyLimiterConfig::from_raw`). Any values
// are accepted; a table index outside the tables reads as limit 0.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_duty_limiter_init(LenzDutyLimiterConfig *cfg_out, const LenzDutyLimiterRaw *raw);

// Writes the raw coefficients of `cfg` to `raw_out` (Rust: `DutyLimiterConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_duty_limiter_init`, `raw_out`
// writable; they do not overlap.
LenzStatus lenz_duty_limiter_raw(const LenzDutyLimiterConfig *cfg, LenzDutyLimiterRaw *raw_out);

// The duty limit at input reading `vin_counts`, duty counts Q8, 0 outside the window (Rust:
// `DutyLimiterConfig::limit_q8`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised, `limit_q8_out` writable.
LenzStatus lenz_duty_limiter_limit_q8(const LenzDutyLimiterConfig *cfg,
                                      uint16_t vin_counts,
                                      int32_t *limit_q8_out);

// Not switching, soft start from zero, no overvoltage latched (Rust:
// `DutyLimiterState::new`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_duty_limiter_state_init(LenzDutyLimiterState *state_out);

// Back to not switching, soft start from zero, no overvoltage latched (Rust:
// `DutyLimiterState::reset`).
//
// # Safety
//
// `state` is null or initialised by `lenz_duty_limiter_state_init`.
LenzStatus lenz_duty_limiter_state_reset(LenzDutyLimiterState *state);

// `true` while an overvoltage cut holds the duty at zero (Rust:
// `DutyLimiterState::overvoltage`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `overvoltage_out` writable.
LenzStatus lenz_duty_limiter_state_overvoltage(const LenzDutyLimiterState *state,
                                               bool *overvoltage_out);

// The last allowed duty before the minimum-on-time skip, duty counts Q8 (Rust:
// `DutyLimiterState::last_q8`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `duty_q8_out` writable.
LenzStatus lenz_duty_limiter_state_last_q8(const LenzDutyLimiterState *state, int32_t *duty_q8_out);

// One tick (Rust: `DutyLimiterConfig::update`): the controller's duty request, counts
// (saturated to `0 ..= full_scale`), and the input and output ADC readings, counts. Writes
// the duty to apply, counts: 0 on out-of-range readings and during an overvoltage cut,
// otherwise at most the request, the limit at `vin_counts` and the soft-start ramp, and
// either 0 or at least `min_on_counts`.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `duty_out` writable; they do
// not overlap.
LenzStatus lenz_duty_limiter_update(const LenzDutyLimiterConfig *cfg,
                                    LenzDutyLimiterState *state,
                                    int32_t request,
                                    uint16_t vin_counts,
                                    uint16_t vout_counts,
                                    uint16_t *duty_out);

// Fills `cfg_out` from raw coefficients (Rust: `EstimatorConfig::from_raw`). Any values are
// accepted: raw values outside a plan's ranges may make the estimate wrong, never overflow.
//
// # Safety
//
// Each pointer is null (the call returns `LENZ_STATUS_NULL_POINTER`) or valid for its type:
// `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_estimator_init(LenzEstimatorConfig *cfg_out, const LenzEstimatorRaw *raw);

// Writes the raw coefficients of `cfg` to `raw_out` (Rust: `EstimatorConfig::raw`): exactly
// those given to `lenz_estimator_init`, with booleans as 0 or 1.
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_estimator_init`, `raw_out`
// writable; they do not overlap.
LenzStatus lenz_estimator_raw(const LenzEstimatorConfig *cfg, LenzEstimatorRaw *raw_out);

// Starts a channel at `current_ua` (0 for a coil at rest; a measured current otherwise),
// saturated to `0 ..= 2³⁰` µA (Rust: `EstimatorState::with_current_ua`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_estimator_state_init(LenzEstimatorState *state_out, int32_t current_ua);

// Back to zero current (Rust: `EstimatorState::reset`).
//
// # Safety
//
// `state` is null or initialised by `lenz_estimator_state_init`.
LenzStatus lenz_estimator_state_reset(LenzEstimatorState *state);

// The channel's present estimate, µA (Rust: `EstimatorState::current_ua`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `current_ua_out` writable.
LenzStatus lenz_estimator_state_current_ua(const LenzEstimatorState *state,
                                           int32_t *current_ua_out);

// One tick (Rust: `EstimatorConfig::update`): the switch state held during the tick that
// ends now and the supply then, mV (negative readings count as 0 V); writes the estimate at
// the end of the tick to `current_ua_out`, µA, in `0 ..= 2³⁰`.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `current_ua_out` writable;
// they do not overlap.
LenzStatus lenz_estimator_update(const LenzEstimatorConfig *cfg,
                                 LenzEstimatorState *state,
                                 bool switch_on,
                                 int32_t supply_mv,
                                 int32_t *current_ua_out);

// Fills `cfg_out` from raw thresholds (Rust: `JamConfig::from_raw`). Any values are accepted.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_jam_init(LenzJamConfig *cfg_out, const LenzJamRaw *raw);

// Writes the raw thresholds of `cfg` to `raw_out` (Rust: `JamConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_jam_init`, `raw_out` writable;
// they do not overlap.
LenzStatus lenz_jam_raw(const LenzJamConfig *cfg, LenzJamRaw *raw_out);

// A channel not driven, no fault (Rust: `JamState::new`; also the reset after a fault).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_jam_state_init(LenzJamState *state_out);

// One tick (Rust: `JamConfig::update`): the bridge duty during the tick, Q16 signed by
// direction (0: not driven), the winding current, µA, and the speed estimate, mrad/s; writes
// the verdict (a fault repeats until `lenz_jam_state_init`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `status_out` writable; they
// do not overlap.
LenzStatus lenz_jam_update(const LenzJamConfig *cfg,
                           LenzJamState *state,
                           int32_t duty_q16,
                           int32_t current_ua,
                           int32_t speed_mrad_s,
                           LenzJamStatus *status_out);

// Fills `cfg_out` from raw thresholds (Rust: `MonitorConfig::from_raw`).
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_monitor_init(LenzMonitorConfig *cfg_out, const LenzMonitorRaw *raw);

// Writes the raw thresholds of `cfg` to `raw_out` (Rust: `MonitorConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_monitor_init`, `raw_out`
// writable; they do not overlap.
LenzStatus lenz_monitor_raw(const LenzMonitorConfig *cfg, LenzMonitorRaw *raw_out);

// The current a reading stands for, µA, saturating (Rust: `SenseScale::to_ua` of the
// configuration's scale).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised, `current_ua_out` writable.
LenzStatus lenz_monitor_measured_ua(const LenzMonitorConfig *cfg,
                                    uint16_t counts,
                                    int32_t *current_ua_out);

// A channel with no fault and no history (Rust: `MonitorState::new`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_monitor_state_init(LenzMonitorState *state_out);

// Clears the latched fault and the history (Rust: `MonitorState::reset`).
//
// # Safety
//
// `state` is null or initialised by `lenz_monitor_state_init`.
LenzStatus lenz_monitor_state_reset(LenzMonitorState *state);

// The latched fault, `LENZ_FAULT_NONE` while plausible (Rust: `MonitorState::fault`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `fault_out` writable.
LenzStatus lenz_monitor_state_fault(const LenzMonitorState *state, LenzFault *fault_out);

// One sample (Rust: `MonitorConfig::update`): the estimator's current for the sampling
// instant, µA, and the raw current reading, counts. Writes `LENZ_FAULT_NONE` while
// plausible, else the first fault raised, from then on until `lenz_monitor_state_reset`.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `fault_out` writable; they
// do not overlap.
LenzStatus lenz_monitor_update(const LenzMonitorConfig *cfg,
                               LenzMonitorState *state,
                               int32_t estimate_ua,
                               uint16_t counts,
                               LenzFault *fault_out);

// Fills `cfg_out` from raw thresholds (Rust: `MovementConfig::from_raw`). Any values are
// accepted: wrong ones make the detector wrong, never overflow.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_movement_init(LenzMovementConfig *cfg_out, const LenzMovementRaw *raw);

// Writes the raw thresholds of `cfg` to `raw_out` (Rust: `MovementConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_movement_init`, `raw_out`
// writable; they do not overlap.
LenzStatus lenz_movement_raw(const LenzMovementConfig *cfg, LenzMovementRaw *raw_out);

// An idle channel (Rust: `MovementState::new`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_movement_state_init(LenzMovementState *state_out);

// Starts watching a pull-in: call at switch-on, before the first update (Rust:
// `MovementConfig::start`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
LenzStatus lenz_movement_start(const LenzMovementConfig *cfg, LenzMovementState *state);

// Starts watching a release: call at switch-off, before the first update (Rust:
// `MovementConfig::release`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
LenzStatus lenz_movement_release(const LenzMovementConfig *cfg, LenzMovementState *state);

// One tick (Rust: `MovementConfig::update`): the coil current sampled this tick, µA; writes
// the verdict (a decided verdict repeats until the next start, release or init).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `motion_out` writable; they
// do not overlap.
LenzStatus lenz_movement_update(const LenzMovementConfig *cfg,
                                LenzMovementState *state,
                                int32_t current_ua,
                                LenzMotion *motion_out);

// An idle timer: reports `LENZ_OFF_STATUS_NOT_YET` until started (Rust:
// `OffTimerState::new`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_offtimer_state_init(LenzOffTimerState *state_out);

// Stops the timer; it reports `LENZ_OFF_STATUS_NOT_YET` until started again (Rust:
// `OffTimerState::reset`).
//
// # Safety
//
// `state` is null or initialised by `lenz_offtimer_state_init`.
LenzStatus lenz_offtimer_state_reset(LenzOffTimerState *state);

// The tracking estimate of the current, µA (tracking mode; Rust:
// `OffTimerState::estimate_ua`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `current_ua_out` writable.
LenzStatus lenz_offtimer_state_estimate_ua(const LenzOffTimerState *state, int32_t *current_ua_out);

// Ticks left before release (planned mode), `UINT32_MAX` for never (Rust:
// `OffTimerState::remaining_ticks`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `ticks_out` writable.
LenzStatus lenz_offtimer_state_remaining_ticks(const LenzOffTimerState *state, uint32_t *ticks_out);

// Fills `cfg_out` from raw values (Rust: `TrackingOffTimerConfig::from_raw`).
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_tracking_offtimer_init(LenzTrackingOffTimerConfig *cfg_out,
                                       const LenzTrackingOffTimerRaw *raw);

// Writes the raw values of `cfg` to `raw_out` (Rust: `TrackingOffTimerConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_tracking_offtimer_init`,
// `raw_out` writable; they do not overlap.
LenzStatus lenz_tracking_offtimer_raw(const LenzTrackingOffTimerConfig *cfg,
                                      LenzTrackingOffTimerRaw *raw_out);

// The margin below the threshold the estimate must reach after a switch-off from
// `start_ua`: `base_margin_ua + (start_ua >> margin_shift)`, µA (Rust:
// `TrackingOffTimerConfig::margin_ua`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised, `margin_ua_out` writable.
LenzStatus lenz_tracking_offtimer_margin_ua(const LenzTrackingOffTimerConfig *cfg,
                                            int32_t start_ua,
                                            int32_t *margin_ua_out);

// Arms the timer at switch-off with the current then, µA, from the running estimator or a
// measurement (Rust: `TrackingOffTimerConfig::start`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
LenzStatus lenz_tracking_offtimer_start(const LenzTrackingOffTimerConfig *cfg,
                                        LenzOffTimerState *state,
                                        int32_t current_ua);

// One tick with the switch open (Rust: `TrackingOffTimerConfig::update`): the supply during
// the tick, mV (used by a clamp across the switch). Writes `LENZ_OFF_STATUS_RELEASED` when
// the estimate lies at least the margin below the threshold, else
// `LENZ_OFF_STATUS_NOT_YET` (always before `lenz_tracking_offtimer_start`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `status_out` writable; they
// do not overlap.
LenzStatus lenz_tracking_offtimer_update(const LenzTrackingOffTimerConfig *cfg,
                                         LenzOffTimerState *state,
                                         int32_t supply_mv,
                                         LenzOffStatus *status_out);

// Fills `cfg_out` from a raw table (Rust: `PlannedOffTimerConfig::from_raw`).
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_planned_offtimer_init(LenzPlannedOffTimerConfig *cfg_out,
                                      const LenzPlannedOffTimerRaw *raw);

// Writes the raw table of `cfg` to `raw_out` (Rust: `PlannedOffTimerConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_planned_offtimer_init`,
// `raw_out` writable; they do not overlap.
LenzStatus lenz_planned_offtimer_raw(const LenzPlannedOffTimerConfig *cfg,
                                     LenzPlannedOffTimerRaw *raw_out);

// Arms the timer at switch-off with the current then, µA: counts down the ticks of the
// smallest breakpoint at or above it; never releases above the highest breakpoint (Rust:
// `PlannedOffTimerConfig::start`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
LenzStatus lenz_planned_offtimer_start(const LenzPlannedOffTimerConfig *cfg,
                                       LenzOffTimerState *state,
                                       int32_t current_ua);

// One tick with the switch open (Rust: `PlannedOffTimerConfig::update`). Writes
// `LENZ_OFF_STATUS_RELEASED` once the planned count has elapsed (this tick included), else
// `LENZ_OFF_STATUS_NOT_YET` (always before `lenz_planned_offtimer_start`, and forever for a
// current above the planned range).
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `status_out` writable; they
// do not overlap.
LenzStatus lenz_planned_offtimer_update(const LenzPlannedOffTimerConfig *cfg,
                                        LenzOffTimerState *state,
                                        LenzOffStatus *status_out);

// Fills `cfg_out` from raw coefficients (Rust: `SpeedEstimatorConfig::from_raw`). Any values
// are accepted: the update saturates.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_speed_estimator_init(LenzSpeedEstimatorConfig *cfg_out,
                                     const LenzSpeedEstimatorRaw *raw);

// Writes the raw coefficients of `cfg` to `raw_out` (Rust: `SpeedEstimatorConfig::raw`).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_speed_estimator_init`,
// `raw_out` writable; they do not overlap.
LenzStatus lenz_speed_estimator_raw(const LenzSpeedEstimatorConfig *cfg,
                                    LenzSpeedEstimatorRaw *raw_out);

// Starts a channel at a known current, µA, and speed, mrad/s (0 and 0 for a motor at rest;
// Rust: `SpeedEstimatorState::with_current_ua`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_speed_estimator_state_init(LenzSpeedEstimatorState *state_out,
                                           int32_t current_ua,
                                           int32_t speed_mrad_s);

// The channel's present speed estimate, mrad/s (Rust: `SpeedEstimatorState::speed_mrad_s`).
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `speed_mrad_s_out` writable.
LenzStatus lenz_speed_estimator_state_speed_mrad_s(const LenzSpeedEstimatorState *state,
                                                   int32_t *speed_mrad_s_out);

// One driven or braked tick (Rust: `SpeedEstimatorConfig::update`): the duty held during the
// tick that ends now, Q16 signed by direction (0 for a brake tick), the supply then, mV, and
// the winding current at the end of the tick, µA; writes the speed estimate, mrad/s.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `speed_mrad_s_out`
// writable; they do not overlap.
LenzStatus lenz_speed_estimator_update(const LenzSpeedEstimatorConfig *cfg,
                                       LenzSpeedEstimatorState *state,
                                       int32_t duty_q16,
                                       int32_t supply_mv,
                                       int32_t current_ua,
                                       int32_t *speed_mrad_s_out);

// A coasting tick, the applied voltage unknown (Rust: `SpeedEstimatorConfig::hold`): keeps
// the estimate, records the current, µA; writes the kept estimate, mrad/s.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `speed_mrad_s_out`
// writable; they do not overlap.
LenzStatus lenz_speed_estimator_hold(const LenzSpeedEstimatorConfig *cfg,
                                     LenzSpeedEstimatorState *state,
                                     int32_t current_ua,
                                     int32_t *speed_mrad_s_out);

// Fills `cfg_out` from raw settings (Rust: `TripConfig::from_raw`). Any values are
// accepted: out-of-range persistence is clamped to `1 ..= 32`, the block to at most 5.
//
// # Safety
//
// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
LenzStatus lenz_trip_init(LenzTripConfig *cfg_out, const LenzTripRaw *raw);

// Writes the raw settings of `cfg` to `raw_out` (Rust: `TripConfig::raw`; a persistence
// `N` of 0 reads back as 1, a block above 5 as 5).
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised by `lenz_trip_init`, `raw_out` writable;
// they do not overlap.
LenzStatus lenz_trip_raw(const LenzTripConfig *cfg, LenzTripRaw *raw_out);

// Samples per block `K = 2^k` over which the inverse-time and thermal elements are updated
// (Rust: `TripConfig::block_samples`); the sample that ends a block is the slowest.
//
// # Safety
//
// Each pointer is null or valid: `cfg` initialised, `samples_out` writable.
LenzStatus lenz_trip_block_samples(const LenzTripConfig *cfg, uint32_t *samples_out);

// A channel whose winding starts at thermal state `theta_q24` (0 for a cold winding; Q24,
// `LENZ_THETA_ONE_Q24` trips), untripped (Rust: `TripState::with_theta_q24`).
//
// # Safety
//
// `state_out` is null or writable.
LenzStatus lenz_trip_state_init(LenzTripState *state_out, uint32_t theta_q24);

// Clears a latch or a pending retry and the retry count; keeps the thermal state, the tick
// and the block sums (the winding does not cool by a reset; Rust: `TripState::reset`).
//
// # Safety
//
// `state` is null or initialised by `lenz_trip_state_init`.
LenzStatus lenz_trip_state_reset(LenzTripState *state);

// Reads the channel's tick, accumulators, retries and phase.
//
// # Safety
//
// Each pointer is null or valid: `state` initialised, `info_out` writable.
LenzStatus lenz_trip_state_info(const LenzTripState *state, LenzTripStateInfo *info_out);

// One sample (Rust: `TripConfig::update`): the ADC reading, counts (zero current at 0), and
// the switch state the firmware commands for this sample (a rising edge starts the blanking
// time). Writes the verdict.
//
// # Safety
//
// Each pointer is null or valid: `cfg` and `state` initialised, `verdict_out` writable; they
// do not overlap.
LenzStatus lenz_trip_update(const LenzTripConfig *cfg,
                            LenzTripState *state,
                            uint16_t reading_counts,
                            bool switch_on,
                            LenzVerdict *verdict_out);

#ifdef __cplusplus
}  // extern "C"
#endif  // __cplusplus

/* Layout checks: the size of every type as the library was built. A failure here means
   the C compiler lays out structs differently (packing or enum-size options). */
#if defined(__cplusplus) && __cplusplus >= 201103L
#define LENZ_STATIC_ASSERT(cond, name) static_assert(cond, #name)
#elif defined(__STDC_VERSION__) && __STDC_VERSION__ >= 201112L
#define LENZ_STATIC_ASSERT(cond, name) _Static_assert(cond, #name)
#else
#define LENZ_STATIC_ASSERT(cond, name) typedef char name[(cond) ? 1 : -1]
#endif
LENZ_STATIC_ASSERT(sizeof(LenzStatus) == 4, lenz_size_of_LenzStatus);
LENZ_STATIC_ASSERT(sizeof(LenzOffPath) == 16, lenz_size_of_LenzOffPath);
LENZ_STATIC_ASSERT(sizeof(LenzEstimatorRaw) == 28, lenz_size_of_LenzEstimatorRaw);
LENZ_STATIC_ASSERT(sizeof(LenzEstimatorConfig) == 28, lenz_size_of_LenzEstimatorConfig);
LENZ_STATIC_ASSERT(sizeof(LenzEstimatorState) == 8, lenz_size_of_LenzEstimatorState);
LENZ_STATIC_ASSERT(sizeof(LenzSenseScale) == 12, lenz_size_of_LenzSenseScale);
LENZ_STATIC_ASSERT(sizeof(LenzMonitorRaw) == 36, lenz_size_of_LenzMonitorRaw);
LENZ_STATIC_ASSERT(sizeof(LenzMonitorConfig) == 36, lenz_size_of_LenzMonitorConfig);
LENZ_STATIC_ASSERT(sizeof(LenzMonitorState) == 16, lenz_size_of_LenzMonitorState);
LENZ_STATIC_ASSERT(sizeof(LenzFault) == 1, lenz_size_of_LenzFault);
LENZ_STATIC_ASSERT(sizeof(LenzTrackingOffTimerRaw) == 40, lenz_size_of_LenzTrackingOffTimerRaw);
LENZ_STATIC_ASSERT(sizeof(LenzPlannedOffTimerRaw) == 128, lenz_size_of_LenzPlannedOffTimerRaw);
LENZ_STATIC_ASSERT(sizeof(LenzTrackingOffTimerConfig) == 40, lenz_size_of_LenzTrackingOffTimerConfig);
LENZ_STATIC_ASSERT(sizeof(LenzPlannedOffTimerConfig) == 128, lenz_size_of_LenzPlannedOffTimerConfig);
LENZ_STATIC_ASSERT(sizeof(LenzOffTimerState) == 20, lenz_size_of_LenzOffTimerState);
LENZ_STATIC_ASSERT(sizeof(LenzOffStatus) == 1, lenz_size_of_LenzOffStatus);
LENZ_STATIC_ASSERT(sizeof(LenzDutyLimiterRaw) == 412, lenz_size_of_LenzDutyLimiterRaw);
LENZ_STATIC_ASSERT(sizeof(LenzDutyLimiterConfig) == 412, lenz_size_of_LenzDutyLimiterConfig);
LENZ_STATIC_ASSERT(sizeof(LenzDutyLimiterState) == 8, lenz_size_of_LenzDutyLimiterState);
LENZ_STATIC_ASSERT(sizeof(LenzInverseTable) == 656, lenz_size_of_LenzInverseTable);
LENZ_STATIC_ASSERT(sizeof(LenzTripRaw) == 688, lenz_size_of_LenzTripRaw);
LENZ_STATIC_ASSERT(sizeof(LenzTripConfig) == 704, lenz_size_of_LenzTripConfig);
LENZ_STATIC_ASSERT(sizeof(LenzTripState) == 32, lenz_size_of_LenzTripState);
LENZ_STATIC_ASSERT(sizeof(LenzCause) == 1, lenz_size_of_LenzCause);
LENZ_STATIC_ASSERT(sizeof(LenzVerdictKind) == 1, lenz_size_of_LenzVerdictKind);
LENZ_STATIC_ASSERT(sizeof(LenzTripEvent) == 8, lenz_size_of_LenzTripEvent);
LENZ_STATIC_ASSERT(sizeof(LenzVerdict) == 12, lenz_size_of_LenzVerdict);
LENZ_STATIC_ASSERT(sizeof(LenzTripStateInfo) == 16, lenz_size_of_LenzTripStateInfo);
LENZ_STATIC_ASSERT(sizeof(LenzMovementRaw) == 24, lenz_size_of_LenzMovementRaw);
LENZ_STATIC_ASSERT(sizeof(LenzMovementConfig) == 24, lenz_size_of_LenzMovementConfig);
LENZ_STATIC_ASSERT(sizeof(LenzMovementState) == 16, lenz_size_of_LenzMovementState);
LENZ_STATIC_ASSERT(sizeof(LenzMotionKind) == 1, lenz_size_of_LenzMotionKind);
LENZ_STATIC_ASSERT(sizeof(LenzMotion) == 8, lenz_size_of_LenzMotion);
LENZ_STATIC_ASSERT(sizeof(LenzSpeedEstimatorRaw) == 16, lenz_size_of_LenzSpeedEstimatorRaw);
LENZ_STATIC_ASSERT(sizeof(LenzSpeedEstimatorConfig) == 16, lenz_size_of_LenzSpeedEstimatorConfig);
LENZ_STATIC_ASSERT(sizeof(LenzSpeedEstimatorState) == 12, lenz_size_of_LenzSpeedEstimatorState);
LENZ_STATIC_ASSERT(sizeof(LenzJamRaw) == 32, lenz_size_of_LenzJamRaw);
LENZ_STATIC_ASSERT(sizeof(LenzJamConfig) == 32, lenz_size_of_LenzJamConfig);
LENZ_STATIC_ASSERT(sizeof(LenzJamState) == 20, lenz_size_of_LenzJamState);
LENZ_STATIC_ASSERT(sizeof(LenzJamStatus) == 1, lenz_size_of_LenzJamStatus);
LENZ_STATIC_ASSERT(sizeof(LenzBridgeGuardRaw) == 24, lenz_size_of_LenzBridgeGuardRaw);
LENZ_STATIC_ASSERT(sizeof(LenzBridgeGuardConfig) == 24, lenz_size_of_LenzBridgeGuardConfig);
LENZ_STATIC_ASSERT(sizeof(LenzBridgeGuardState) == 8, lenz_size_of_LenzBridgeGuardState);
LENZ_STATIC_ASSERT(sizeof(LenzBridgeMode) == 1, lenz_size_of_LenzBridgeMode);
LENZ_STATIC_ASSERT(sizeof(LenzBridgeCommand) == 8, lenz_size_of_LenzBridgeCommand);
LENZ_STATIC_ASSERT(sizeof(LenzBoostLoopRaw) == 424, lenz_size_of_LenzBoostLoopRaw);
LENZ_STATIC_ASSERT(sizeof(LenzBoostLoopConfig) == 424, lenz_size_of_LenzBoostLoopConfig);
LENZ_STATIC_ASSERT(sizeof(LenzBoostLoopState) == 24, lenz_size_of_LenzBoostLoopState);
LENZ_STATIC_ASSERT(sizeof(LenzHoldEstimatorRaw) == 20, lenz_size_of_LenzHoldEstimatorRaw);
LENZ_STATIC_ASSERT(sizeof(LenzCoilDriverRaw) == 824, lenz_size_of_LenzCoilDriverRaw);
LENZ_STATIC_ASSERT(sizeof(LenzCoilDriverConfig) == 880, lenz_size_of_LenzCoilDriverConfig);
LENZ_STATIC_ASSERT(sizeof(LenzCoilDriver) == 1024, lenz_size_of_LenzCoilDriver);
LENZ_STATIC_ASSERT(sizeof(LenzCoilPhase) == 1, lenz_size_of_LenzCoilPhase);
LENZ_STATIC_ASSERT(sizeof(LenzCoilFault) == 1, lenz_size_of_LenzCoilFault);
LENZ_STATIC_ASSERT(sizeof(LenzCoilDriverOutput) == 12, lenz_size_of_LenzCoilDriverOutput);

#endif /* LENZ_H */
