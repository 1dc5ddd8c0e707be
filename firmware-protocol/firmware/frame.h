/*
 * frame.h - build and check capcycle wire frames (../PROTOCOL.md), in plain C99.
 *
 * No malloc, no printf, no division: integers are written by subtracting powers of ten,
 * which costs a few hundred cycles on an 8-bit AVR. The same file compiles for the host
 * (gcc) and for the board (avr-gcc); only the string and CRC helpers differ, behind
 * __AVR__. Checked byte for byte against ../testdata/vectors.txt by host/vectors_check.c.
 *
 * A frame is built in a caller-owned buffer:
 *
 *     char buf[FRAME_MAX];
 *     frame_t f;
 *     frame_begin(&f, buf, sizeof buf, FRAME_DEVICE, FRAME_P("OK"));
 *     frame_key_str(&f, FRAME_P("cmd"), "rate");
 *     uint8_t n = frame_end(&f);      // buf[0..n) is "!OK cmd=rate *XXXX\n", or n == 0
 *
 * Tags, keys and frame_key_pstr values are FRAME_P strings: in program memory on AVR
 * (PSTR), plain string literals on the host. frame_key_str values are in RAM.
 *
 * Size: all of frame.c takes about 2.4 KB of flash and no RAM on the ATmega328P with
 * avr-gcc -Os (measured by wire.TestFrameBuildsForAVR); build with -ffunction-sections
 * and link with -Wl,--gc-sections to keep only the functions the firmware calls.
 */
#ifndef CAPCYCLE_FRAME_H
#define CAPCYCLE_FRAME_H

#include <stdint.h>

#ifdef __AVR__
#include <avr/pgmspace.h>
#define FRAME_P(s) PSTR(s)
typedef const char *frame_pstr; /* points into program memory */
#else
#define FRAME_P(s) (s)
typedef const char *frame_pstr;
#endif

/* Longest frame, start character and "\n" included (PROTOCOL.md "Frame syntax"). */
#define FRAME_MAX 255u
/* Most channels in a sample frame. */
#define FRAME_MAX_CH 4u

#define FRAME_DEVICE '!'  /* start of a device frame */
#define FRAME_COMMAND '>' /* start of a host command */

/* A frame under construction. Treat the fields as private. */
typedef struct {
	char *buf;
	uint8_t cap;      /* size of buf, at most FRAME_MAX */
	uint8_t len;      /* bytes written */
	uint8_t overflow; /* set when something did not fit */
	uint16_t crc;     /* CRC-16/XMODEM of the bytes after the start character */
} frame_t;

/* CRC-16/XMODEM (poly 0x1021, init 0, no reflection, xorout 0; check value 0x31C3 on
 * "123456789", catalogue of parametrised CRC algorithms). Start with crc = 0. */
uint16_t frame_crc16_byte(uint16_t crc, uint8_t b);
uint16_t frame_crc16(uint16_t crc, const char *p, uint8_t n);

/* Start a frame: start is FRAME_DEVICE or FRAME_COMMAND, tag a FRAME_P string. */
void frame_begin(frame_t *f, char *buf, uint8_t cap, char start, frame_pstr tag);
/* " 123": a positional unsigned field (S, A, B, E frames). */
void frame_u32(frame_t *f, uint32_t v);
/* " text": a positional field written as is (RAM string). */
void frame_text(frame_t *f, const char *ram_text);
/* " key=123", " key=-45", " key=0.333333" (millionths, shortest form), " key=text". */
void frame_key_u32(frame_t *f, frame_pstr key, uint32_t v);
void frame_key_i32(frame_t *f, frame_pstr key, int32_t v);
void frame_key_micro(frame_t *f, frame_pstr key, int32_t millionths);
void frame_key_str(frame_t *f, frame_pstr key, const char *ram_text);
void frame_key_pstr(frame_t *f, frame_pstr key, frame_pstr text);
/* Append " *XXXX\n" and return the frame's length, or 0 if it did not fit. */
uint8_t frame_end(frame_t *f);

/* Whole frames. Each returns the length written to buf (0 if cap is too small). */
uint8_t frame_sample(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us,
		     uint8_t nch, const uint16_t *counts);
uint8_t frame_average(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us, uint32_t n,
		      uint8_t nch, const uint16_t *mean, const uint16_t *lo, const uint16_t *hi);
uint8_t frame_burst_begin(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us, uint32_t pre);
uint8_t frame_burst_end(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us);
uint8_t frame_ok(char *buf, uint8_t cap, const char *cmd);
uint8_t frame_er(char *buf, uint8_t cap, const char *cmd, uint8_t code, frame_pstr msg);

/* Results of frame_verify. */
#define FRAME_GOOD 0      /* the CRC matches */
#define FRAME_NO_CRC 1    /* no " *XXXX" suffix (allowed for typed commands) */
#define FRAME_BAD_CRC 2   /* the CRC does not match */
#define FRAME_NO_START 3  /* does not begin with '!' or '>' */

/*
 * Check a received line (start character first; a trailing "\n" and "\r" may be
 * included or not). On FRAME_GOOD and FRAME_NO_CRC, *body_len is the length of the
 * tag and fields after the start character, without the CRC suffix and line end.
 */
uint8_t frame_verify(const char *line, uint8_t len, uint8_t *body_len);

#endif
