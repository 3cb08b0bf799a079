/* A C firmware image in the loop of `lenz sim --firmware` (the lenz-pil runtime, linked from
   liblenz_ffi.a built with its `pil` feature). The image defines the two functions below;
   the runtime brings the vector table, the exchange with the harness, the instruction count
   of every tick and the exit. Layouts as `ffi/src/pil.rs` (the C image in the loop, compared
   tick for tick with the Rust driver on the host, checks them). */
#ifndef LENZ_PIL_H
#define LENZ_PIL_H

#include <stdint.h>

#include "lenz.h"

/* One tick's readings. */
typedef struct {
    uint32_t tick;           /* tick number (wraps) */
    uint16_t current_counts; /* coil current reading */
    uint16_t supply_counts;  /* supply reading */
    uint16_t output_counts;  /* output reading */
    uint8_t demand;          /* the application's demand: 0 off, 1 on */
} LenzPilSensed;

/* The image's answer to a tick. */
typedef struct {
    uint16_t duty;            /* duty for the next tick, counts of duty_full_scale */
    uint16_t duty_full_scale; /* the PWM's top count (0 is an error) */
    int32_t estimate_ua;      /* estimated coil current, when has_estimate */
    uint8_t has_estimate;
    uint8_t tripped;          /* 1: latched off for protection */
    uint8_t reverse;          /* 1: reversed bridge polarity */
} LenzPilActuation;

/* Defined by the image: 0, or its code for a parameter block it cannot use (the harness
   reports the code and the run does not start). */
uint16_t lenz_pil_image_init(const uint8_t *block, uint32_t len);
/* Defined by the image: one control tick (its instructions are counted). */
void lenz_pil_image_tick(const LenzPilSensed *sensed, LenzPilActuation *out);

/* From the runtime: the coil driver's raw configuration from the parameter block `lenz sim
   --firmware` sends; *ok_out = 1, or 0 for a block that does not decode. */
LenzStatus lenz_pil_coil_driver_raw(const uint8_t *block, uint32_t len,
                                    LenzCoilDriverRaw *raw_out, uint8_t *ok_out);

#endif
