/*
 * settings.c - EEPROM copy of the settings, protected by CRC-16/XMODEM (the frame CRC,
 * reused). eeprom_update_block writes only the bytes that changed, which spares the
 * EEPROM's write endurance (100,000 cycles per cell, ATmega328P datasheet, "Features";
 * from memory).
 */
#include "settings.h"
#include "adc.h"

#include <avr/eeprom.h>
#include <avr/pgmspace.h>
#include <avr/wdt.h>
#include <stddef.h>
#include <string.h>

#include "frame.h"

#define MAGIC 0xCC5Eu
#define LAYOUT 1

struct settings cfg;
static struct settings EEMEM ee_cfg;

static uint16_t crc_of(const struct settings *s)
{
	return frame_crc16(0, (const char *)s, offsetof(struct settings, crc));
}

/* The defaults of PROTOCOL.md (the ID and CH examples). */
static const struct settings defaults PROGMEM = {
	.magic = MAGIC,
	.layout = LAYOUT,
	.nch = 1,
	.ref = REF_AVCC,
	.slow_hz = 10,
	.fast_hz = DEFAULT_FAST_HZ,
	.thr = 8,
	.pre = 32,
	.post = 32,
	/* AVcc and AREF as 5 V, the band-gap nominal 1.1 V: calibrate with >ref. */
	.ref_uv = {5000000UL, 1100000UL, 5000000UL},
	.div = {333333, 333333, 333333, 333333},
	.gain = {1000000, 1000000, 1000000, 1000000},
};

void settings_defaults(void)
{
	memcpy_P(&cfg, &defaults, sizeof cfg);
}

uint8_t settings_load(void)
{
	eeprom_read_block(&cfg, &ee_cfg, sizeof cfg);
	if (cfg.magic == MAGIC && cfg.layout == LAYOUT && cfg.crc == crc_of(&cfg) &&
	    cfg.nch >= 1 && cfg.nch <= MAX_CH && cfg.ref <= REF_EXT && cfg.slow_hz &&
	    cfg.fast_hz <= adc_max_hz(cfg.nch)) /* a build at a lower baud rate */
		return 1;
	settings_defaults();
	return 0;
}

uint8_t settings_save(void)
{
	cfg.crc = crc_of(&cfg);
	wdt_reset();
	eeprom_update_block(&cfg, &ee_cfg, sizeof cfg); /* about 3.3 ms a changed byte */
	wdt_reset();
	const uint8_t *p = (const uint8_t *)&cfg;
	for (uint8_t i = 0; i < sizeof cfg; i++)
		if (eeprom_read_byte((const uint8_t *)&ee_cfg + i) != p[i])
			return 0;
	return 1;
}
