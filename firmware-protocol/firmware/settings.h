/*
 * settings.h - settings and calibration, kept in EEPROM with a CRC.
 */
#ifndef CAPCYCLE_SETTINGS_H
#define CAPCYCLE_SETTINGS_H

#include <stdint.h>

#include "config.h"

struct settings {
	uint16_t magic;
	uint8_t layout;
	uint8_t nch;        /* 1..MAX_CH */
	uint8_t ref;        /* REF_AVCC, REF_INT, REF_EXT */
	uint16_t slow_hz;   /* 1..fast_hz, divides fast_hz */
	uint16_t fast_hz;   /* 1..adc_max_hz(nch) */
	uint16_t thr;       /* burst threshold, counts at EBITS; 0 = no bursts */
	uint8_t pre;        /* pre-trigger ring length */
	uint16_t post;      /* quiet length that ends a burst, >= 1 */
	uint32_t ref_uv[3]; /* calibrated reference per source, microvolts */
	int32_t div[MAX_CH];    /* divider ratio, millionths */
	int32_t gain[MAX_CH];   /* gain, millionths */
	int32_t off_uv[MAX_CH]; /* offset, microvolts */
	uint16_t crc;       /* CRC-16/XMODEM of the bytes before it */
};

extern struct settings cfg;

/* Load from EEPROM; on a bad magic, layout or CRC load the defaults and return 0. */
uint8_t settings_load(void);
/* Store to EEPROM and read back; 1 when the copy verifies. */
uint8_t settings_save(void);
void settings_defaults(void);

#endif
