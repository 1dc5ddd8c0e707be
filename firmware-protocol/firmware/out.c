/*
 * out.c - frame writer over the transmit queue. CRC-16/XMODEM (poly 0x1021, init 0,
 * no reflection; check value 0x31C3 on "123456789", catalogue of parametrised CRC
 * algorithms) over the bytes after "!" up to the " *", by avr-libc's
 * _crc_xmodem_update.
 */
#include "out.h"
#include "uart.h"

#include <stdlib.h>
#include <util/crc16.h>

uint32_t out_drops;

static uint16_t crc;
static uint8_t waiting;

static void put(uint8_t b)
{
	crc = _crc_xmodem_update(crc, b);
	if (waiting)
		uart_put_wait(b);
	else
		uart_put_nowait(b);
}

static void put_raw(uint8_t b)
{
	if (waiting)
		uart_put_wait(b);
	else
		uart_put_nowait(b);
}

static void put_P(PGM_P s)
{
	char c;
	while ((c = (char)pgm_read_byte(s++)) != 0)
		put((uint8_t)c);
}

/* avr-libc's ultoa converts base 10 without 32-bit division (a few hundred cycles where
 * a loop of divisions by ten takes thousands): a burst of S frames must keep up with
 * the sample clock. */
static void put_dec(uint32_t v)
{
	char d[11];
	ultoa(v, d, 10);
	for (char *p = d; *p; p++)
		put((uint8_t)*p);
}

uint8_t out_begin(PGM_P tag, uint8_t room)
{
	if (room) {
		if (uart_tx_free() < room)
			return 0;
		waiting = 0;
	} else {
		waiting = 1;
	}
	put_raw('!');
	crc = 0;
	put_P(tag);
	return 1;
}

void out_u32(uint32_t v)
{
	put(' ');
	put_dec(v);
}

static void key(PGM_P k)
{
	put(' ');
	put_P(k);
	put('=');
}

void out_kv_u32(PGM_P k, uint32_t v)
{
	key(k);
	put_dec(v);
}

void out_kv_i32(PGM_P k, int32_t v)
{
	key(k);
	if (v < 0) {
		put('-');
		put_dec((uint32_t)(-(v + 1)) + 1u);
	} else {
		put_dec((uint32_t)v);
	}
}

void out_kv_str_P(PGM_P k, PGM_P text)
{
	key(k);
	put_P(text);
}

void out_kv_str(PGM_P k, const char *text)
{
	key(k);
	while (*text)
		put((uint8_t)*text++);
}

void out_kv_micro(PGM_P k, int32_t micro)
{
	key(k);
	uint32_t m;
	if (micro < 0) {
		put('-');
		m = (uint32_t)(-(micro + 1)) + 1u;
	} else {
		m = (uint32_t)micro;
	}
	put_dec(m / 1000000UL);
	uint32_t frac = m % 1000000UL;
	if (frac) {
		put('.');
		uint32_t div = 100000UL;
		while (frac) {
			put((uint8_t)('0' + frac / div));
			frac %= div;
			div /= 10u;
		}
	}
}

static const char hex[] PROGMEM = "0123456789ABCDEF";

void out_end(void)
{
	uint16_t c = crc;
	put_raw(' ');
	put_raw('*');
	put_raw(pgm_read_byte(&hex[(c >> 12) & 15]));
	put_raw(pgm_read_byte(&hex[(c >> 8) & 15]));
	put_raw(pgm_read_byte(&hex[(c >> 4) & 15]));
	put_raw(pgm_read_byte(&hex[c & 15]));
	put_raw('\n');
}
