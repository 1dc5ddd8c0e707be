/* frame.c - capcycle wire frames in plain C99; see frame.h. */
#include "frame.h"

#ifdef __AVR__
#include <util/crc16.h>
#define rd_p(p) ((char)pgm_read_byte(p))
/* avr-libc's _crc_xmodem_update is exactly CRC-16/XMODEM, in a few instructions. */
uint16_t frame_crc16_byte(uint16_t crc, uint8_t b) { return _crc_xmodem_update(crc, b); }
#else
#define rd_p(p) (*(p))
uint16_t frame_crc16_byte(uint16_t crc, uint8_t b)
{
	uint8_t i;
	crc ^= (uint16_t)b << 8;
	for (i = 0; i < 8; i++)
		crc = (crc & 0x8000u) ? (uint16_t)((crc << 1) ^ 0x1021u) : (uint16_t)(crc << 1);
	return crc;
}
#endif

uint16_t frame_crc16(uint16_t crc, const char *p, uint8_t n)
{
	while (n--)
		crc = frame_crc16_byte(crc, (uint8_t)*p++);
	return crc;
}

/* put appends one byte, counting it into the CRC. */
static void put(frame_t *f, char c)
{
	if (f->len >= f->cap) {
		f->overflow = 1;
		return;
	}
	f->buf[f->len++] = c;
	f->crc = frame_crc16_byte(f->crc, (uint8_t)c);
}

static void put_p(frame_t *f, frame_pstr s)
{
	char c;
	while ((c = rd_p(s)) != 0) {
		put(f, c);
		s++;
	}
}

/* Powers of ten for digits(); subtraction instead of division suits 8-bit cores. */
#ifdef __AVR__
static const uint32_t dec_pow[10] PROGMEM = {
#else
static const uint32_t dec_pow[10] = {
#endif
	1000000000ul, 100000000ul, 10000000ul, 1000000ul, 100000ul,
	10000ul, 1000ul, 100ul, 10ul, 1ul,
};

/* digits writes v as exactly 10 decimal digits, leading zeros included. */
static void digits(uint32_t v, char d[10])
{
	uint8_t i;
	for (i = 0; i < 10; i++) {
#ifdef __AVR__
		uint32_t p = pgm_read_dword(&dec_pow[i]);
#else
		uint32_t p = dec_pow[i];
#endif
		char c = '0';
		while (v >= p) {
			v -= p;
			c++;
		}
		d[i] = c;
	}
}

/* put_u32 writes v without leading zeros. */
static void put_u32(frame_t *f, uint32_t v)
{
	char d[10];
	uint8_t i = 0;
	digits(v, d);
	while (i < 9 && d[i] == '0')
		i++;
	for (; i < 10; i++)
		put(f, d[i]);
}

/* abs32 returns |v| as unsigned, correct for INT32_MIN. */
static uint32_t abs32(int32_t v) { return v < 0 ? (uint32_t)0 - (uint32_t)v : (uint32_t)v; }

void frame_begin(frame_t *f, char *buf, uint8_t cap, char start, frame_pstr tag)
{
	f->buf = buf;
	f->cap = cap;
	f->len = 0;
	f->overflow = 0;
	put(f, start);
	f->crc = 0; /* the CRC starts after the start character */
	put_p(f, tag);
}

void frame_u32(frame_t *f, uint32_t v)
{
	put(f, ' ');
	put_u32(f, v);
}

void frame_text(frame_t *f, const char *s)
{
	put(f, ' ');
	while (*s)
		put(f, *s++);
}

static void key(frame_t *f, frame_pstr k)
{
	put(f, ' ');
	put_p(f, k);
	put(f, '=');
}

void frame_key_u32(frame_t *f, frame_pstr k, uint32_t v)
{
	key(f, k);
	put_u32(f, v);
}

void frame_key_i32(frame_t *f, frame_pstr k, int32_t v)
{
	key(f, k);
	if (v < 0)
		put(f, '-');
	put_u32(f, abs32(v));
}

void frame_key_micro(frame_t *f, frame_pstr k, int32_t v)
{
	char d[10];
	uint8_t i = 0, end = 10;
	key(f, k);
	if (v < 0)
		put(f, '-');
	digits(abs32(v), d);
	/* whole part: d[0..4), at least one digit */
	while (i < 3 && d[i] == '0')
		i++;
	for (; i < 4; i++)
		put(f, d[i]);
	/* fraction: d[4..10) without trailing zeros */
	while (end > 4 && d[end - 1] == '0')
		end--;
	if (end > 4) {
		put(f, '.');
		for (i = 4; i < end; i++)
			put(f, d[i]);
	}
}

void frame_key_str(frame_t *f, frame_pstr k, const char *s)
{
	key(f, k);
	while (*s)
		put(f, *s++);
}

void frame_key_pstr(frame_t *f, frame_pstr k, frame_pstr s)
{
	key(f, k);
	put_p(f, s);
}

uint8_t frame_end(frame_t *f)
{
	uint16_t crc = f->crc;
	int8_t shift;
	put(f, ' ');
	put(f, '*');
	for (shift = 12; shift >= 0; shift -= 4) {
		uint8_t h = (uint8_t)((crc >> shift) & 15u);
		put(f, (char)(h < 10 ? '0' + h : 'A' + h - 10));
	}
	put(f, '\n');
	return f->overflow ? 0 : f->len;
}

uint8_t frame_sample(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us,
		     uint8_t nch, const uint16_t *counts)
{
	frame_t f;
	uint8_t k;
	if (nch < 1 || nch > FRAME_MAX_CH)
		return 0;
	frame_begin(&f, buf, cap, FRAME_DEVICE, FRAME_P("S"));
	frame_u32(&f, seq);
	frame_u32(&f, t_us);
	for (k = 0; k < nch; k++)
		frame_u32(&f, counts[k]);
	return frame_end(&f);
}

uint8_t frame_average(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us, uint32_t n,
		      uint8_t nch, const uint16_t *mean, const uint16_t *lo, const uint16_t *hi)
{
	frame_t f;
	uint8_t k;
	if (nch < 1 || nch > FRAME_MAX_CH)
		return 0;
	frame_begin(&f, buf, cap, FRAME_DEVICE, FRAME_P("A"));
	frame_u32(&f, seq);
	frame_u32(&f, t_us);
	frame_u32(&f, n);
	for (k = 0; k < nch; k++) {
		frame_u32(&f, mean[k]);
		frame_u32(&f, lo[k]);
		frame_u32(&f, hi[k]);
	}
	return frame_end(&f);
}

uint8_t frame_burst_begin(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us, uint32_t pre)
{
	frame_t f;
	frame_begin(&f, buf, cap, FRAME_DEVICE, FRAME_P("B"));
	frame_u32(&f, seq);
	frame_u32(&f, t_us);
	frame_u32(&f, pre);
	return frame_end(&f);
}

uint8_t frame_burst_end(char *buf, uint8_t cap, uint32_t seq, uint32_t t_us)
{
	frame_t f;
	frame_begin(&f, buf, cap, FRAME_DEVICE, FRAME_P("E"));
	frame_u32(&f, seq);
	frame_u32(&f, t_us);
	return frame_end(&f);
}

uint8_t frame_ok(char *buf, uint8_t cap, const char *cmd)
{
	frame_t f;
	frame_begin(&f, buf, cap, FRAME_DEVICE, FRAME_P("OK"));
	frame_key_str(&f, FRAME_P("cmd"), cmd);
	return frame_end(&f);
}

uint8_t frame_er(char *buf, uint8_t cap, const char *cmd, uint8_t code, frame_pstr msg)
{
	frame_t f;
	frame_begin(&f, buf, cap, FRAME_DEVICE, FRAME_P("ER"));
	frame_key_str(&f, FRAME_P("cmd"), cmd);
	frame_key_u32(&f, FRAME_P("code"), code);
	frame_key_pstr(&f, FRAME_P("msg"), msg);
	return frame_end(&f);
}

static int8_t hexval(char c)
{
	if (c >= '0' && c <= '9')
		return (int8_t)(c - '0');
	if (c >= 'A' && c <= 'F')
		return (int8_t)(c - 'A' + 10);
	return -1;
}

uint8_t frame_verify(const char *line, uint8_t len, uint8_t *body_len)
{
	uint16_t want = 0;
	uint8_t i;
	if (len == 0 || (line[0] != FRAME_DEVICE && line[0] != FRAME_COMMAND))
		return FRAME_NO_START;
	if (len > 1 && line[len - 1] == '\n')
		len--;
	if (len > 1 && line[len - 1] == '\r')
		len--;
	/* line[1..len) is now the body, perhaps followed by " *XXXX" */
	if (len >= 7 && line[len - 6] == ' ' && line[len - 5] == '*') {
		for (i = len - 4; i < len; i++) {
			int8_t h = hexval(line[i]);
			if (h < 0)
				return FRAME_BAD_CRC; /* " *" then no hex: corrupted */
			want = (uint16_t)(want << 4 | (uint8_t)h);
		}
		*body_len = (uint8_t)(len - 7);
		return frame_crc16(0, line + 1, *body_len) == want ? FRAME_GOOD : FRAME_BAD_CRC;
	}
	*body_len = (uint8_t)(len - 1);
	return FRAME_NO_CRC;
}
