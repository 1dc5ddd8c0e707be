/*
 * capture.h - the adaptive capture (PROTOCOL.md, "The adaptive capture"): slow averaged
 * A frames with their lowest and highest sample, and bursts of S frames with a
 * pre-trigger ring, ended by E.
 */
#ifndef CAPCYCLE_CAPTURE_H
#define CAPCYCLE_CAPTURE_H

#include <stdint.h>

#include "adc.h"

/* Sample frames made since reset (S and A share it). */
extern uint32_t seq;

/* Start afresh: empty ring, new slow interval, reference taken from the next sample.
 * Call after settings changed. */
void cap_reset(void);
/* Handle one fast sample. */
void cap_sample(const struct sample *s);
/* Send waiting burst frames as the transmit queue allows; call from the main loop. */
void cap_poll(void);
/* 1 while burst frames wait to be sent (E included). */
uint8_t cap_pending(void);
/* Send every waiting burst S frame, waiting for room. */
void cap_flush(void);
/* If a burst is running, send its E (after cap_flush) and return to slow capture. */
void cap_end(void);
/* Ring slots for nch channels; the largest accepted pre is this minus 2. */
uint8_t cap_slots(uint8_t nch);

#endif
