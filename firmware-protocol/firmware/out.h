/*
 * out.h - writes protocol frames (PROTOCOL.md, "Frame syntax") straight into the
 * transmit queue, computing the CRC-16/XMODEM on the way.
 *
 * Tags and keys are program-memory strings (PSTR), so they cost no RAM.
 */
#ifndef CAPCYCLE_OUT_H
#define CAPCYCLE_OUT_H

#include <stdint.h>
#include <avr/pgmspace.h>

/* Begin a device frame "!TAG". With room > 0 the frame is a data frame: it is begun
 * only when `room` bytes (an upper bound of its length) are free in the transmit queue
 * now, and out_begin returns 0 otherwise (the caller decides: retry later, or count a
 * drop in out_drops). With room == 0
 * the frame waits for space byte by byte and out_begin returns 1. */
uint8_t out_begin(PGM_P tag, uint8_t room);
/* " 123" (positional unsigned field). */
void out_u32(uint32_t v);
/* " key=123". */
void out_kv_u32(PGM_P key, uint32_t v);
/* " key=-12". */
void out_kv_i32(PGM_P key, int32_t v);
/* " key=text" (text from program memory). */
void out_kv_str_P(PGM_P key, PGM_P text);
/* " key=text" (text from RAM, printable without spaces). */
void out_kv_str(PGM_P key, const char *text);
/* " key=1.0012": a decimal given as a count of millionths, shortest form. */
void out_kv_micro(PGM_P key, int32_t micro);
/* " *CRC\n". */
void out_end(void);

/* Frames dropped because the transmit queue was full. */
extern uint32_t out_drops;

#endif
