/*
 * out.h - device frames, built with the shared encoder (frame.h) in one line buffer and
 * queued for the USART.
 *
 *     out_begin(FRAME_P("ST"));
 *     frame_key_u32(&out_f, FRAME_P("up_s"), 12);
 *     out_end_wait();
 */
#ifndef CAPCYCLE_OUT_H
#define CAPCYCLE_OUT_H

#include <stdint.h>

#include "frame.h"

/* The longest frame the firmware sends is ID, under 180 bytes. */
#define OUT_LINE 184

extern char out_line[OUT_LINE];
extern frame_t out_f;

/* Begin a device frame with tag (a FRAME_P string) in out_line; a deferred frame
 * still in out_line is queued first (waiting for room). */
void out_begin(frame_pstr tag);
/* Finish the frame begun with out_begin and queue it, waiting for room. */
void out_end_wait(void);
/* Queue out_line[0..n) only if it fits in the transmit queue now; 1 if queued. */
uint8_t out_try(uint8_t n);
/* Queue out_line[0..n) if it fits now, else keep it in out_line until out_poll finds
 * room or the next out_begin (so frames keep their order). */
void out_defer(uint8_t n);
/* Queue a deferred frame once there is room for it. */
void out_poll(void);
/* Queue out_line[0..n), waiting for room. */
void out_wait(uint8_t n);

/* Frames dropped because the transmit queue was full. */
extern uint32_t out_drops;

#endif
