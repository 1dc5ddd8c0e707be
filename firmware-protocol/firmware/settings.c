/*
 * settings.c - EEPROM copy of the settings, protected by CRC-16/XMODEM (the frame CRC,
 * reused). eeprom_update_block writes only the bytes that changed, which spares the
 * EEPROM's write endurance (100,000 cycles per cell, ATmega328P datasheet, "Features";
 * from memory).
 */
#include "settings.h"
#include "adc.h"

#include <avr/eeprom.h>
#include <avr/wdt.h>
#include <stddef.h>
#include <string.h>
#include <util/crc16.h>

#define MAGIC 0xCC5Eu
#define LAYOUT 1

struct settings cfg;
static struct settings EEMEM ee_cfg;

static uint16_t crc_of(const struct settings *s)
{
	const uint8_t *p = (const uint8_t *)s;
	uint16_t c = 0;
	for (uint8_t i = 0; i < offsetof(struct settings, crc); i++)
		c = _crc_xmodem_update(c, p[i]);
	return c;
}

void settings_defaults(void)
{
	memset(&cfg, 0, sizeof cfg);
	cfg.magic = MAGIC;
	cfg.layout = LAYOUT;
	cfg.nch = 1;
	cfg.ref = REF_AVCC;
	cfg.slow_hz = 10;
	cfg.fast_hz = 500;
	cfg.thr = 8;
	cfg.pre = 32;
	cfg.post = 32;
	cfg.ref_uv[REF_AVCC] = 5000000UL;
	cfg.ref_uv[REF_INT] = 1100000UL; /* band-gap, nominal 1.1 V */
	cfg.ref_uv[REF_EXT] = 5000000UL;
	for (uint8_t k = 0; k < MAX_CH; k++) {
		cfg.div[k] = 333333;
		cfg.gain[k] = 1000000;
	}
}

uint8_t settings_load(void)
{
	eeprom_read_block(&cfg, &ee_cfg, sizeof cfg);
	if (cfg.magic == MAGIC && cfg.layout == LAYOUT && cfg.crc == crc_of(&cfg) &&
	    cfg.nch >= 1 && cfg.nch <= MAX_CH && cfg.ref <= REF_EXT)
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
