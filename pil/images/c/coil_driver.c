/* Example C firmware image in the loop: the coil driver of lenz through the C API, on a PWM
   of 1000 counts (a 20 kHz PWM from a 20 MHz timer clock; invented for the demo), configured
   from the parameter block the harness sends. The same driver as the Rust image
   (pil/images/src/bin/coil_driver.rs): `cargo xtask pil` compares both with the host run. */
#include <stdbool.h>
#include <stdint.h>

#include "lenz.h"
#include "lenz_pil.h"

#define MAX_DUTY 1000u

static LenzCoilDriver driver;

uint16_t lenz_pil_image_init(const uint8_t *block, uint32_t len) {
    LenzCoilDriverRaw raw;
    LenzCoilDriverConfig cfg;
    uint8_t ok = 0;
    if (lenz_pil_coil_driver_raw(block, len, &raw, &ok) != LENZ_STATUS_OK || !ok) {
        return 1;
    }
    if (lenz_coil_driver_init(&cfg, &raw) != LENZ_STATUS_OK) {
        return 1;
    }
    if (lenz_coil_driver_start(&driver, &cfg, MAX_DUTY, &ok) != LENZ_STATUS_OK || !ok) {
        return 2;
    }
    return 0;
}

void lenz_pil_image_tick(const LenzPilSensed *sensed, LenzPilActuation *out) {
    LenzCoilDriverOutput o;
    out->duty_full_scale = MAX_DUTY;
    out->reverse = 0;
    if (lenz_coil_driver_update(&driver, sensed->demand != 0, sensed->current_counts,
                                sensed->supply_counts, &o) != LENZ_STATUS_OK) {
        out->duty = 0;
        out->has_estimate = 0;
        out->tripped = 1;
        return;
    }
    out->duty = o.duty;
    out->estimate_ua = o.estimate_ua;
    out->has_estimate = 1;
    out->tripped = o.fault != LENZ_COIL_FAULT_NONE;
}
