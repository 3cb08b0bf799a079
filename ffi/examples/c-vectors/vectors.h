/* The on-target vectors of every kernel, as the C example reads them. The tables are
   generated on the host (vectors.c, written by `cargo xtask test` from the same generators
   as the Rust target images); the expected values are the host build's results. */
#ifndef LENZ_EXAMPLE_VECTORS_H
#define LENZ_EXAMPLE_VECTORS_H

#include <stdint.h>
#include "lenz.h"

typedef struct {
    int32_t supply_mv;
    int32_t current_ua; /* expected */
    uint8_t on;
} EstimatorStep;

typedef struct {
    LenzEstimatorRaw raw;
    int32_t start_ua;
    uint32_t len;
    const EstimatorStep *steps;
} EstimatorCase;

typedef struct {
    int32_t estimate_ua;
    int32_t measured_ua; /* expected */
    uint16_t counts;
    uint8_t fault; /* expected, LENZ_FAULT_* */
} MonitorStep;

typedef struct {
    LenzMonitorRaw raw;
    uint32_t len;
    const MonitorStep *steps;
} MonitorCase;

typedef struct {
    int32_t request;
    uint16_t vin_counts;
    uint16_t vout_counts;
    int32_t last_q8;  /* expected state after the tick */
    int32_t limit_q8; /* expected limit at vin_counts */
    uint16_t duty;    /* expected */
    uint8_t overvoltage; /* expected state after the tick */
} DutyStep;

typedef struct {
    LenzDutyLimiterRaw raw;
    uint32_t len;
    const DutyStep *steps;
} DutyCase;

typedef struct {
    int32_t start_ua;    /* switch-off current, if started */
    int32_t supply_mv;
    int32_t estimate_ua; /* expected after the tick */
    int32_t margin_ua;   /* expected margin for start_ua, if started */
    uint8_t started;     /* start before this tick */
    uint8_t status;      /* expected, LENZ_OFF_STATUS_* */
} TrackingStep;

typedef struct {
    LenzTrackingOffTimerRaw raw;
    uint32_t len;
    const TrackingStep *steps;
} TrackingCase;

typedef struct {
    int32_t start_ua;
    uint32_t remaining_ticks; /* expected after the tick */
    uint8_t started;
    uint8_t status;
} PlannedStep;

typedef struct {
    LenzPlannedOffTimerRaw raw;
    uint32_t len;
    const PlannedStep *steps;
} PlannedCase;

typedef struct {
    uint32_t event_tick; /* expected verdict: kind and event */
    uint16_t reading_counts;
    uint16_t event_reading_counts;
    uint8_t on;
    uint8_t kind;
    uint8_t event_retry;
    uint8_t event_cause;
} TripStep;

typedef struct {
    LenzTripRaw raw;
    uint32_t len;
    const TripStep *steps;
    LenzTripStateInfo end; /* expected state after the last step */
} TripCase;

typedef struct {
    int32_t current_ua;
    uint32_t tick; /* expected */
    uint8_t cmd;   /* before the update: 0 none, 1 start, 2 release */
    uint8_t kind;  /* expected, LENZ_MOTION_KIND_* */
} MovementStep;

typedef struct {
    LenzMovementRaw raw;
    uint32_t len;
    const MovementStep *steps;
} MovementCase;

typedef struct {
    int32_t duty_q16;
    int32_t supply_mv;
    int32_t current_ua;
    int32_t speed_mrad_s; /* expected */
    uint8_t coast;        /* a coasting tick (hold) */
} SpeedStep;

typedef struct {
    LenzSpeedEstimatorRaw raw;
    int32_t start_current_ua;
    int32_t start_speed_mrad_s;
    uint32_t len;
    const SpeedStep *steps;
} SpeedCase;

typedef struct {
    int32_t duty_q16;
    int32_t current_ua;
    int32_t speed_mrad_s;
    uint8_t status; /* expected, LENZ_JAM_STATUS_* */
} JamStep;

typedef struct {
    LenzJamRaw raw;
    uint32_t len;
    const JamStep *steps;
} JamCase;

typedef struct {
    int32_t request_q16;
    int32_t speed_mrad_s;
    int32_t duty_q16; /* expected */
    uint8_t mode;     /* expected, LENZ_BRIDGE_MODE_* */
} BridgeStep;

typedef struct {
    LenzBridgeGuardRaw raw;
    uint32_t len;
    const BridgeStep *steps;
} BridgeCase;

typedef struct {
    uint16_t vin_counts;
    uint16_t vout_counts;
    uint16_t duty;        /* expected */
    uint8_t enable;
    uint8_t overvoltage;  /* expected after the tick */
} BoostStep;

typedef struct {
    LenzBoostLoopRaw raw;
    uint32_t len;
    const BoostStep *steps;
} BoostCase;

extern const EstimatorCase ESTIMATOR_CASES[];
extern const uint32_t ESTIMATOR_CASE_COUNT;
extern const MonitorCase MONITOR_CASES[];
extern const uint32_t MONITOR_CASE_COUNT;
extern const DutyCase DUTY_CASES[];
extern const uint32_t DUTY_CASE_COUNT;
extern const TrackingCase TRACKING_CASES[];
extern const uint32_t TRACKING_CASE_COUNT;
extern const PlannedCase PLANNED_CASES[];
extern const uint32_t PLANNED_CASE_COUNT;
extern const TripCase TRIP_CASES[];
extern const uint32_t TRIP_CASE_COUNT;
extern const MovementCase MOVEMENT_CASES[];
extern const uint32_t MOVEMENT_CASE_COUNT;
extern const SpeedCase SPEED_CASES[];
extern const uint32_t SPEED_CASE_COUNT;
extern const JamCase JAM_CASES[];
extern const uint32_t JAM_CASE_COUNT;
extern const BridgeCase BRIDGE_CASES[];
extern const uint32_t BRIDGE_CASE_COUNT;
extern const BoostCase BOOST_CASES[];
extern const uint32_t BOOST_CASE_COUNT;

#endif
