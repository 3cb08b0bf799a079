/* C firmware example of the lenz C API: runs every kernel on the host-generated vectors
   through lenz.h and compares every result with the Rust kernels' on the host, bit for bit.
   Every function of the API is called. Each kernel configuration is loaded from its raw
   constant, read back with lenz_xxx_raw and loaded again, and the vectors run on that
   second configuration (so the round trip is checked on the target too).

   Output (semihosting): one line per kernel, `kernel=NAME vectors=N failures=F
   state_bytes=B`, a `FAIL …` line for each of the first differences, and `DONE failures=F`.
   Exit status 0 only if nothing differed. */
#include <stdbool.h>
#include <stdint.h>

#include "lenz.h"
#include "semihosting.h"
#include "vectors.h"

static const char *kernel = "";
static uint32_t case_index, step_index, failures, printed;

static void fail(const char *what) {
    failures++;
    if (printed < 20) {
        printed++;
        sh_puts("FAIL kernel=");
        sh_puts(kernel);
        sh_puts(" case=");
        sh_put_u32(case_index);
        sh_puts(" step=");
        sh_put_u32(step_index);
        sh_puts(" what=");
        sh_puts(what);
    }
}

static void check_i32(const char *what, int32_t got, int32_t want) {
    if (got != want) {
        fail(what);
        if (printed <= 20) {
            sh_puts(" got=");
            sh_put_i32(got);
            sh_puts(" expected=");
            sh_put_i32(want);
            sh_puts("\n");
        }
    }
}

static void check_u32(const char *what, uint32_t got, uint32_t want) {
    if (got != want) {
        fail(what);
        if (printed <= 20) {
            sh_puts(" got=");
            sh_put_u32(got);
            sh_puts(" expected=");
            sh_put_u32(want);
            sh_puts("\n");
        }
    }
}

static void ok(LenzStatus s) {
    check_i32("status", s, LENZ_STATUS_OK);
}

static void report(uint32_t vectors, uint32_t failures_before, uint32_t state_bytes) {
    sh_puts("kernel=");
    sh_puts(kernel);
    sh_puts(" vectors=");
    sh_put_u32(vectors);
    sh_puts(" failures=");
    sh_put_u32(failures - failures_before);
    sh_puts(" state_bytes=");
    sh_put_u32(state_bytes);
    sh_puts("\n");
}

static void run_estimator(void) {
    uint32_t n = 0, before = failures;
    kernel = "estimator";
    for (case_index = 0; case_index < ESTIMATOR_CASE_COUNT; case_index++) {
        const EstimatorCase *c = &ESTIMATOR_CASES[case_index];
        LenzEstimatorConfig first, cfg;
        LenzEstimatorRaw back;
        LenzEstimatorState state;
        step_index = 0;
        ok(lenz_estimator_init(&first, &c->raw));
        ok(lenz_estimator_raw(&first, &back));
        ok(lenz_estimator_init(&cfg, &back));
        ok(lenz_estimator_state_init(&state, c->start_ua));
        for (step_index = 0; step_index < c->len; step_index++) {
            const EstimatorStep *s = &c->steps[step_index];
            int32_t got = -1, now = -1;
            ok(lenz_estimator_update(&cfg, &state, s->on != 0, s->supply_mv, &got));
            ok(lenz_estimator_state_current_ua(&state, &now));
            check_i32("current_ua", got, s->current_ua);
            check_i32("state_current_ua", now, s->current_ua);
            n++;
        }
        int32_t zero = -1;
        ok(lenz_estimator_state_reset(&state));
        ok(lenz_estimator_state_current_ua(&state, &zero));
        check_i32("reset", zero, 0);
    }
    report(n, before, sizeof(LenzEstimatorState));
}

static void run_monitor(void) {
    uint32_t n = 0, before = failures;
    kernel = "monitor";
    for (case_index = 0; case_index < MONITOR_CASE_COUNT; case_index++) {
        const MonitorCase *c = &MONITOR_CASES[case_index];
        LenzMonitorConfig first, cfg;
        LenzMonitorRaw back;
        LenzMonitorState state;
        step_index = 0;
        ok(lenz_monitor_init(&first, &c->raw));
        ok(lenz_monitor_raw(&first, &back));
        ok(lenz_monitor_init(&cfg, &back));
        ok(lenz_monitor_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const MonitorStep *s = &c->steps[step_index];
            LenzFault got = 0xFF, latched = 0xFF;
            int32_t measured = -1;
            ok(lenz_monitor_update(&cfg, &state, s->estimate_ua, s->counts, &got));
            ok(lenz_monitor_state_fault(&state, &latched));
            ok(lenz_monitor_measured_ua(&cfg, s->counts, &measured));
            check_u32("fault", got, s->fault);
            check_u32("state_fault", latched, s->fault);
            check_i32("measured_ua", measured, s->measured_ua);
            n++;
        }
        LenzFault cleared = 0xFF;
        ok(lenz_monitor_state_reset(&state));
        ok(lenz_monitor_state_fault(&state, &cleared));
        check_u32("reset", cleared, LENZ_FAULT_NONE);
    }
    report(n, before, sizeof(LenzMonitorState));
}

static void run_duty(void) {
    uint32_t n = 0, before = failures;
    kernel = "duty";
    for (case_index = 0; case_index < DUTY_CASE_COUNT; case_index++) {
        const DutyCase *c = &DUTY_CASES[case_index];
        LenzDutyLimiterConfig first, cfg;
        LenzDutyLimiterRaw back;
        LenzDutyLimiterState state;
        step_index = 0;
        ok(lenz_duty_limiter_init(&first, &c->raw));
        ok(lenz_duty_limiter_raw(&first, &back));
        ok(lenz_duty_limiter_init(&cfg, &back));
        ok(lenz_duty_limiter_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const DutyStep *s = &c->steps[step_index];
            uint16_t duty = 0xFFFF;
            bool ov = false;
            int32_t last = -1, limit = -1;
            ok(lenz_duty_limiter_update(&cfg, &state, s->request, s->vin_counts, s->vout_counts,
                                        &duty));
            ok(lenz_duty_limiter_state_overvoltage(&state, &ov));
            ok(lenz_duty_limiter_state_last_q8(&state, &last));
            ok(lenz_duty_limiter_limit_q8(&cfg, s->vin_counts, &limit));
            check_u32("duty", duty, s->duty);
            check_u32("overvoltage", ov, s->overvoltage);
            check_i32("last_q8", last, s->last_q8);
            check_i32("limit_q8", limit, s->limit_q8);
            n++;
        }
        int32_t last = -1;
        ok(lenz_duty_limiter_state_reset(&state));
        ok(lenz_duty_limiter_state_last_q8(&state, &last));
        check_i32("reset", last, 0);
    }
    report(n, before, sizeof(LenzDutyLimiterState));
}

static void run_tracking(void) {
    uint32_t n = 0, before = failures;
    kernel = "offtimer";
    for (case_index = 0; case_index < TRACKING_CASE_COUNT; case_index++) {
        const TrackingCase *c = &TRACKING_CASES[case_index];
        LenzTrackingOffTimerConfig first, cfg;
        LenzTrackingOffTimerRaw back;
        LenzOffTimerState state;
        step_index = 0;
        ok(lenz_tracking_offtimer_init(&first, &c->raw));
        ok(lenz_tracking_offtimer_raw(&first, &back));
        ok(lenz_tracking_offtimer_init(&cfg, &back));
        ok(lenz_offtimer_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const TrackingStep *s = &c->steps[step_index];
            LenzOffStatus got = 0xFF;
            int32_t estimate = -1;
            if (s->started) {
                int32_t margin = -1;
                ok(lenz_tracking_offtimer_start(&cfg, &state, s->start_ua));
                ok(lenz_tracking_offtimer_margin_ua(&cfg, s->start_ua, &margin));
                check_i32("margin_ua", margin, s->margin_ua);
            }
            ok(lenz_tracking_offtimer_update(&cfg, &state, s->supply_mv, &got));
            ok(lenz_offtimer_state_estimate_ua(&state, &estimate));
            check_u32("status", got, s->status);
            check_i32("estimate_ua", estimate, s->estimate_ua);
            n++;
        }
        LenzOffStatus idle = 0xFF;
        ok(lenz_offtimer_state_reset(&state));
        ok(lenz_tracking_offtimer_update(&cfg, &state, 0, &idle));
        check_u32("reset", idle, LENZ_OFF_STATUS_NOT_YET);
    }
    report(n, before, sizeof(LenzOffTimerState));
}

static void run_planned(void) {
    uint32_t n = 0, before = failures;
    kernel = "offtimer_planned";
    for (case_index = 0; case_index < PLANNED_CASE_COUNT; case_index++) {
        const PlannedCase *c = &PLANNED_CASES[case_index];
        LenzPlannedOffTimerConfig first, cfg;
        LenzPlannedOffTimerRaw back;
        LenzOffTimerState state;
        step_index = 0;
        ok(lenz_planned_offtimer_init(&first, &c->raw));
        ok(lenz_planned_offtimer_raw(&first, &back));
        ok(lenz_planned_offtimer_init(&cfg, &back));
        ok(lenz_offtimer_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const PlannedStep *s = &c->steps[step_index];
            LenzOffStatus got = 0xFF;
            uint32_t left = 0;
            if (s->started) {
                ok(lenz_planned_offtimer_start(&cfg, &state, s->start_ua));
            }
            ok(lenz_planned_offtimer_update(&cfg, &state, &got));
            ok(lenz_offtimer_state_remaining_ticks(&state, &left));
            check_u32("status", got, s->status);
            check_u32("remaining_ticks", left, s->remaining_ticks);
            n++;
        }
    }
    report(n, before, sizeof(LenzOffTimerState));
}

static void run_trip(void) {
    uint32_t n = 0, before = failures;
    kernel = "trip";
    for (case_index = 0; case_index < TRIP_CASE_COUNT; case_index++) {
        const TripCase *c = &TRIP_CASES[case_index];
        LenzTripConfig first, cfg;
        LenzTripRaw back;
        LenzTripState state;
        LenzTripStateInfo info;
        uint32_t block = 0;
        step_index = 0;
        ok(lenz_trip_init(&first, &c->raw));
        ok(lenz_trip_raw(&first, &back));
        ok(lenz_trip_init(&cfg, &back));
        ok(lenz_trip_state_init(&state, 0));
        ok(lenz_trip_block_samples(&cfg, &block));
        check_u32("block_samples", block, 1u << (c->raw.block_log2 < 5 ? c->raw.block_log2 : 5));
        for (step_index = 0; step_index < c->len; step_index++) {
            const TripStep *s = &c->steps[step_index];
            LenzVerdict v;
            ok(lenz_trip_update(&cfg, &state, s->reading_counts, s->on != 0, &v));
            check_u32("kind", v.kind, s->kind);
            check_u32("event_tick", v.event.tick, s->event_tick);
            check_u32("event_reading_counts", v.event.reading_counts, s->event_reading_counts);
            check_u32("event_retry", v.event.retry, s->event_retry);
            check_u32("event_cause", v.event.cause, s->event_cause);
            n++;
        }
        ok(lenz_trip_state_info(&state, &info));
        check_u32("end_tick", info.tick, c->end.tick);
        check_u32("end_theta_q24", info.theta_q24, c->end.theta_q24);
        check_u32("end_inverse_q32", info.inverse_q32, c->end.inverse_q32);
        check_u32("end_retries", info.retries, c->end.retries);
        check_u32("end_latched", info.latched, c->end.latched);
        check_u32("end_waiting", info.waiting, c->end.waiting);
        ok(lenz_trip_state_reset(&state));
        ok(lenz_trip_state_info(&state, &info));
        check_u32("reset_latched", info.latched, false);
        check_u32("reset_waiting", info.waiting, false);
        check_u32("reset_keeps_theta", info.theta_q24, c->end.theta_q24);
    }
    report(n, before, sizeof(LenzTripState));
}

/* The movement detector: start and release where the host's sequence has them. */
static void run_movement(void) {
    uint32_t n = 0, before = failures;
    kernel = "movement";
    for (case_index = 0; case_index < MOVEMENT_CASE_COUNT; case_index++) {
        const MovementCase *c = &MOVEMENT_CASES[case_index];
        LenzMovementConfig first, cfg;
        LenzMovementRaw back;
        LenzMovementState state;
        step_index = 0;
        ok(lenz_movement_init(&first, &c->raw));
        ok(lenz_movement_raw(&first, &back));
        ok(lenz_movement_init(&cfg, &back));
        ok(lenz_movement_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const MovementStep *s = &c->steps[step_index];
            LenzMotion got = {0xFF, 0xFFFFFFFFu};
            if (s->cmd == 1) {
                ok(lenz_movement_start(&cfg, &state));
            } else if (s->cmd == 2) {
                ok(lenz_movement_release(&cfg, &state));
            }
            ok(lenz_movement_update(&cfg, &state, s->current_ua, &got));
            check_u32("kind", got.kind, s->kind);
            check_u32("tick", got.tick, s->tick);
            n++;
        }
    }
    report(n, before, sizeof(LenzMovementState));
}

static void run_speed(void) {
    uint32_t n = 0, before = failures;
    kernel = "speed";
    for (case_index = 0; case_index < SPEED_CASE_COUNT; case_index++) {
        const SpeedCase *c = &SPEED_CASES[case_index];
        LenzSpeedEstimatorConfig first, cfg;
        LenzSpeedEstimatorRaw back;
        LenzSpeedEstimatorState state;
        step_index = 0;
        ok(lenz_speed_estimator_init(&first, &c->raw));
        ok(lenz_speed_estimator_raw(&first, &back));
        ok(lenz_speed_estimator_init(&cfg, &back));
        ok(lenz_speed_estimator_state_init(&state, c->start_current_ua, c->start_speed_mrad_s));
        for (step_index = 0; step_index < c->len; step_index++) {
            const SpeedStep *s = &c->steps[step_index];
            int32_t got = -1, now = -2;
            if (s->coast) {
                ok(lenz_speed_estimator_hold(&cfg, &state, s->current_ua, &got));
            } else {
                ok(lenz_speed_estimator_update(&cfg, &state, s->duty_q16, s->supply_mv,
                                               s->current_ua, &got));
            }
            ok(lenz_speed_estimator_state_speed_mrad_s(&state, &now));
            check_i32("speed", got, s->speed_mrad_s);
            check_i32("state_speed", now, s->speed_mrad_s);
            n++;
        }
    }
    report(n, before, sizeof(LenzSpeedEstimatorState));
}

static void run_jam(void) {
    uint32_t n = 0, before = failures;
    kernel = "jam";
    for (case_index = 0; case_index < JAM_CASE_COUNT; case_index++) {
        const JamCase *c = &JAM_CASES[case_index];
        LenzJamConfig first, cfg;
        LenzJamRaw back;
        LenzJamState state;
        step_index = 0;
        ok(lenz_jam_init(&first, &c->raw));
        ok(lenz_jam_raw(&first, &back));
        ok(lenz_jam_init(&cfg, &back));
        ok(lenz_jam_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const JamStep *s = &c->steps[step_index];
            LenzJamStatus got = 0xFF;
            ok(lenz_jam_update(&cfg, &state, s->duty_q16, s->current_ua, s->speed_mrad_s, &got));
            check_u32("status", got, s->status);
            n++;
        }
    }
    report(n, before, sizeof(LenzJamState));
}

static void run_bridge(void) {
    uint32_t n = 0, before = failures;
    kernel = "bridge";
    for (case_index = 0; case_index < BRIDGE_CASE_COUNT; case_index++) {
        const BridgeCase *c = &BRIDGE_CASES[case_index];
        LenzBridgeGuardConfig first, cfg;
        LenzBridgeGuardRaw back;
        LenzBridgeGuardState state;
        step_index = 0;
        ok(lenz_bridge_guard_init(&first, &c->raw));
        ok(lenz_bridge_guard_raw(&first, &back));
        ok(lenz_bridge_guard_init(&cfg, &back));
        ok(lenz_bridge_guard_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const BridgeStep *s = &c->steps[step_index];
            LenzBridgeCommand got = {0xFF, -1};
            ok(lenz_bridge_guard_update(&cfg, &state, s->request_q16, s->speed_mrad_s, &got));
            check_u32("mode", got.mode, s->mode);
            check_i32("duty_q16", got.duty_q16, s->duty_q16);
            n++;
        }
    }
    report(n, before, sizeof(LenzBridgeGuardState));
}

/* The boost loop: the firmware writes the returned duty to its PWM. */
static void run_boost_loop(void) {
    uint32_t n = 0, before = failures;
    kernel = "boost_loop";
    for (case_index = 0; case_index < BOOST_CASE_COUNT; case_index++) {
        const BoostCase *c = &BOOST_CASES[case_index];
        LenzBoostLoopConfig first, cfg;
        LenzBoostLoopRaw back;
        LenzBoostLoopState state;
        step_index = 0;
        ok(lenz_boost_loop_init(&first, &c->raw));
        ok(lenz_boost_loop_raw(&first, &back));
        ok(lenz_boost_loop_init(&cfg, &back));
        ok(lenz_boost_loop_state_init(&state));
        for (step_index = 0; step_index < c->len; step_index++) {
            const BoostStep *s = &c->steps[step_index];
            uint16_t duty = 0xFFFF;
            bool ov = !s->overvoltage;
            ok(lenz_boost_loop_update(&cfg, &state, s->enable != 0, s->vin_counts,
                                      s->vout_counts, &duty));
            ok(lenz_boost_loop_state_overvoltage(&cfg, &state, &ov));
            check_u32("duty", duty, s->duty);
            check_u32("overvoltage", ov, s->overvoltage);
            n++;
        }
    }
    report(n, before, sizeof(LenzBoostLoopState));
}

/* Null pointers are refused with a status on the target as well. */
static void run_null_pointers(void) {
    uint32_t before = failures;
    int32_t i = 0;
    LenzFault f;
    LenzOffStatus st;
    uint16_t d;
    LenzVerdict v;
    kernel = "null_pointers";
    case_index = step_index = 0;
    check_i32("estimator", lenz_estimator_update(0, 0, true, 0, &i), LENZ_STATUS_NULL_POINTER);
    check_i32("monitor", lenz_monitor_update(0, 0, 0, 0, &f), LENZ_STATUS_NULL_POINTER);
    check_i32("duty", lenz_duty_limiter_update(0, 0, 0, 0, 0, &d), LENZ_STATUS_NULL_POINTER);
    check_i32("tracking", lenz_tracking_offtimer_update(0, 0, 0, &st), LENZ_STATUS_NULL_POINTER);
    check_i32("planned", lenz_planned_offtimer_update(0, 0, &st), LENZ_STATUS_NULL_POINTER);
    check_i32("trip", lenz_trip_update(0, 0, 0, true, &v), LENZ_STATUS_NULL_POINTER);
    check_i32("out", lenz_estimator_raw(0, 0), LENZ_STATUS_NULL_POINTER);
    check_i32("movement", lenz_movement_update(0, 0, 0, 0), LENZ_STATUS_NULL_POINTER);
    check_i32("speed", lenz_speed_estimator_update(0, 0, 0, 0, 0, &i), LENZ_STATUS_NULL_POINTER);
    check_i32("jam", lenz_jam_update(0, 0, 0, 0, 0, 0), LENZ_STATUS_NULL_POINTER);
    check_i32("bridge", lenz_bridge_guard_update(0, 0, 0, 0, 0), LENZ_STATUS_NULL_POINTER);
    check_i32("boost_loop", lenz_boost_loop_update(0, 0, true, 0, 0, &d), LENZ_STATUS_NULL_POINTER);
    report(12, before, 0);
}

int main(void) {
    run_estimator();
    run_monitor();
    run_duty();
    run_tracking();
    run_planned();
    run_trip();
    run_movement();
    run_speed();
    run_jam();
    run_bridge();
    run_boost_loop();
    run_null_pointers();
    sh_puts("DONE failures=");
    sh_put_u32(failures);
    sh_puts("\n");
    return failures == 0 ? 0 : 1;
}
