/*
 * cmd.c - command lines ">tag key=value ... [*CRC]" and their replies.
 *
 * Every command gets exactly one reply, OK or ER, before any frame it causes. A command
 * that changes settings ends a running burst with E, drops the partial slow interval,
 * and is followed by ID (boot=0) and CH frames.
 */
#include <avr/pgmspace.h>

#include "cmd.h"
#include "adc.h"
#include "capture.h"
#include "out.h"
#include "settings.h"
#include "uart.h"

#include <string.h>
#include <util/crc16.h>

uint8_t running;
PGM_P reset_cause;

enum { E_UNKNOWN = 1, E_RANGE = 2, E_SYNTAX = 3, E_BUSY = 4, E_EEPROM = 5, E_CRC = 6 };

static char line[CMD_MAX + 1];
static uint8_t len;
static uint8_t in_frame, too_long;

#define MAX_FIELDS 6
static char *fkey[MAX_FIELDS];
static char *fval[MAX_FIELDS];
static uint8_t nfields;

static const char str_q[] PROGMEM = "?";

/* ---- replies ---- */

static void reply_ok(const char *tag)
{
	out_begin(FRAME_P("OK"));
	frame_key_str(&out_f, PSTR("cmd"), tag);
	out_end_wait();
}

static void reply_er(const char *tag, uint8_t code)
{
	static const char m1[] PROGMEM = "unknown";
	static const char m2[] PROGMEM = "range";
	static const char m3[] PROGMEM = "syntax";
	static const char m4[] PROGMEM = "busy";
	static const char m5[] PROGMEM = "eeprom";
	static const char m6[] PROGMEM = "crc";
	static PGM_P const msgs[] PROGMEM = {m1, m2, m3, m4, m5, m6};
	out_begin(FRAME_P("ER"));
	if (tag)
		frame_key_str(&out_f, PSTR("cmd"), tag);
	else
		frame_key_pstr(&out_f, PSTR("cmd"), str_q);
	frame_key_u32(&out_f, PSTR("code"), code);
	frame_key_pstr(&out_f, PSTR("msg"), (PGM_P)pgm_read_word(&msgs[code - 1]));
	out_end_wait();
}

static PGM_P ref_name(uint8_t r)
{
	if (r == REF_INT)
		return PSTR("int");
	if (r == REF_EXT)
		return PSTR("ext");
	return PSTR("avcc");
}

void send_id(uint8_t boot)
{
	out_begin(FRAME_P("ID"));
	frame_key_u32(&out_f, PSTR("proto"), PROTO_VERSION);
	frame_key_pstr(&out_f, PSTR("fw"), PSTR(FW_VERSION));
	frame_key_pstr(&out_f, PSTR("board"), PSTR(BOARD_NAME));
	frame_key_u32(&out_f, PSTR("bits"), ADC_BITS);
	frame_key_u32(&out_f, PSTR("ebits"), EBITS);
	frame_key_pstr(&out_f, PSTR("ref"), ref_name(cfg.ref));
	frame_key_u32(&out_f, PSTR("ref_uv"), cfg.ref_uv[cfg.ref]);
	frame_key_u32(&out_f, PSTR("nch"), cfg.nch);
	frame_key_u32(&out_f, PSTR("clk_hz"), F_CPU);
	frame_key_u32(&out_f, PSTR("max_hz"), adc_max_hz(cfg.nch));
	frame_key_u32(&out_f, PSTR("slow_hz"), cfg.slow_hz);
	frame_key_u32(&out_f, PSTR("fast_hz"), cfg.fast_hz);
	frame_key_u32(&out_f, PSTR("thr"), cfg.thr);
	frame_key_u32(&out_f, PSTR("pre"), cfg.pre);
	frame_key_u32(&out_f, PSTR("post"), cfg.post);
	frame_key_u32(&out_f, PSTR("boot"), boot);
	out_end_wait();
	for (uint8_t k = 0; k < cfg.nch; k++) {
		out_begin(FRAME_P("CH"));
		frame_key_u32(&out_f, PSTR("ch"), k);
		frame_key_micro(&out_f, PSTR("div"), cfg.div[k]);
		frame_key_micro(&out_f, PSTR("gain"), cfg.gain[k]);
		frame_key_i32(&out_f, PSTR("off_uv"), cfg.off_uv[k]);
		out_end_wait();
	}
}

void send_status(void)
{
	out_begin(FRAME_P("ST"));
	frame_key_u32(&out_f, PSTR("up_s"), adc_uptime_s());
	frame_key_u32(&out_f, PSTR("ovr"), adc_overruns());
	frame_key_u32(&out_f, PSTR("drop"), out_drops);
	frame_key_pstr(&out_f, PSTR("reset"), reset_cause);
	frame_key_u32(&out_f, PSTR("run"), running);
	out_end_wait();
}

void apply_settings(void)
{
	adc_run(0);
	adc_configure(cfg.fast_hz, cfg.nch, cfg.ref);
	cap_reset();
	adc_run(running);
}

/* ---- numbers (PROTOCOL.md, "Numbers") ---- */

static uint8_t parse_u32(const char *s, uint32_t *out)
{
	uint32_t v = 0;
	if (!*s || (s[0] == '0' && s[1]))
		return 0;
	for (; *s; s++) {
		if (*s < '0' || *s > '9')
			return 0;
		uint8_t d = (uint8_t)(*s - '0');
		if (v > (0xFFFFFFFFUL - d) / 10u)
			return 0;
		v = v * 10u + d;
	}
	*out = v;
	return 1;
}

static uint8_t parse_i32(const char *s, int32_t *out)
{
	uint8_t neg = (*s == '-');
	uint32_t v;
	if (!parse_u32(s + neg, &v) || v > 0x7FFFFFFFUL)
		return 0;
	*out = neg ? -(int32_t)v : (int32_t)v;
	return 1;
}

/* Decimal to millionths: "-1.0012" -> -1001200. */
static uint8_t parse_micro(const char *s, int32_t *out)
{
	uint8_t neg = (*s == '-');
	s += neg;
	uint32_t ip = 0, fp = 0;
	uint8_t nd = 0, nf = 0;
	for (; *s >= '0' && *s <= '9'; s++, nd++) {
		ip = ip * 10u + (uint8_t)(*s - '0');
		if (ip > 2000u)
			return 0;
	}
	if (!nd)
		return 0;
	if (*s == '.') {
		s++;
		for (; *s >= '0' && *s <= '9'; s++, nf++) {
			if (nf == 6)
				return 0;
			fp = fp * 10u + (uint8_t)(*s - '0');
		}
		if (!nf)
			return 0;
	}
	if (*s)
		return 0;
	while (nf++ < 6)
		fp *= 10u;
	int32_t v = (int32_t)(ip * 1000000UL + fp);
	*out = neg ? -v : v;
	return 1;
}

/* ---- fields ---- */

static const char *field(PGM_P key)
{
	for (uint8_t i = 0; i < nfields; i++)
		if (strcmp_P(fkey[i], key) == 0)
			return fval[i];
	return 0;
}

/* Look up an unsigned field: 1 found and valid, 0 absent, -1 bad. */
static int8_t get_u32(PGM_P key, uint32_t *v)
{
	const char *s = field(key);
	if (!s)
		return 0;
	return parse_u32(s, v) ? 1 : -1;
}

static int8_t get_micro(PGM_P key, int32_t *v)
{
	const char *s = field(key);
	if (!s)
		return 0;
	return parse_micro(s, v) ? 1 : -1;
}

static int8_t get_i32(PGM_P key, int32_t *v)
{
	const char *s = field(key);
	if (!s)
		return 0;
	return parse_i32(s, v) ? 1 : -1;
}

/* ---- commands ---- */

/* Returns 0 when accepted, else an error code. `changed` is set for settings. */
static uint8_t do_rate(struct settings *n)
{
	uint32_t slow = n->slow_hz, fast = n->fast_hz;
	int8_t a = get_u32(PSTR("slow_hz"), &slow);
	int8_t b = get_u32(PSTR("fast_hz"), &fast);
	if (a < 0 || b < 0 || (a == 0 && b == 0))
		return E_SYNTAX;
	if (fast < 1 || fast > adc_max_hz(n->nch) || slow < 1 || slow > fast || fast % slow)
		return E_RANGE;
	n->slow_hz = (uint16_t)slow;
	n->fast_hz = (uint16_t)fast;
	return 0;
}

static uint8_t do_chan(struct settings *n)
{
	uint32_t v;
	if (get_u32(PSTR("n"), &v) != 1)
		return E_SYNTAX;
	if (v < 1 || v > MAX_CH || n->fast_hz > adc_max_hz((uint8_t)v) ||
	    n->pre + 2u > cap_slots((uint8_t)v))
		return E_RANGE;
	n->nch = (uint8_t)v;
	return 0;
}

static uint8_t do_burst(struct settings *n)
{
	uint32_t thr = n->thr, pre = n->pre, post = n->post;
	int8_t a = get_u32(PSTR("thr"), &thr);
	int8_t b = get_u32(PSTR("pre"), &pre);
	int8_t c = get_u32(PSTR("post"), &post);
	if (a < 0 || b < 0 || c < 0 || (a == 0 && b == 0 && c == 0))
		return E_SYNTAX;
	if (thr > 65535u || pre + 2u > cap_slots(n->nch) || post < 1 || post > 65535u)
		return E_RANGE;
	n->thr = (uint16_t)thr;
	n->pre = (uint8_t)pre;
	n->post = (uint16_t)post;
	return 0;
}

static uint8_t do_ref(struct settings *n)
{
	const char *src = field(PSTR("src"));
	uint32_t uv = 0;
	uint8_t r;
	if (!src || get_u32(PSTR("ref_uv"), &uv) < 0)
		return E_SYNTAX;
	if (strcmp_P(src, PSTR("avcc")) == 0)
		r = REF_AVCC;
	else if (strcmp_P(src, PSTR("int")) == 0)
		r = REF_INT;
	else if (strcmp_P(src, PSTR("ext")) == 0)
		r = REF_EXT;
	else
		return E_RANGE;
	if (uv > 6000000UL)
		return E_RANGE;
	n->ref = r;
	if (uv)
		n->ref_uv[r] = uv;
	return 0;
}

static uint8_t do_cal(struct settings *n)
{
	uint32_t ch;
	int32_t div, gain, off;
	if (get_u32(PSTR("ch"), &ch) != 1)
		return E_SYNTAX;
	if (ch >= MAX_CH)
		return E_RANGE;
	div = n->div[ch];
	gain = n->gain[ch];
	off = n->off_uv[ch];
	int8_t a = get_micro(PSTR("div"), &div);
	int8_t b = get_micro(PSTR("gain"), &gain);
	int8_t c = get_i32(PSTR("off_uv"), &off);
	if (a < 0 || b < 0 || c < 0 || (a == 0 && b == 0 && c == 0))
		return E_SYNTAX;
	if (div <= 0 || div > 1000000L || gain <= 0 || gain > 10000000L ||
	    off < -100000000L || off > 100000000L)
		return E_RANGE;
	n->div[ch] = div;
	n->gain[ch] = gain;
	n->off_uv[ch] = off;
	return 0;
}

static void handle(void)
{
	char *tag;
	uint8_t code = 0;

	/* CRC suffix " *XXXX": optional for commands. */
	if (len >= 7 && line[len - 6] == ' ' && line[len - 5] == '*') {
		uint16_t want = 0;
		for (uint8_t i = len - 4; i < len; i++) {
			char c = line[i];
			uint8_t d;
			if (c >= '0' && c <= '9')
				d = (uint8_t)(c - '0');
			else if (c >= 'A' && c <= 'F')
				d = (uint8_t)(c - 'A' + 10);
			else {
				reply_er(0, E_SYNTAX);
				return;
			}
			want = (uint16_t)(want << 4 | d);
		}
		uint16_t crc = 0;
		for (uint8_t i = 1; i < len - 6; i++)
			crc = _crc_xmodem_update(crc, (uint8_t)line[i]);
		len -= 6;
		line[len] = 0;
		if (crc != want) {
			/* The tag may be damaged too: echo it only if it reads as one. */
			char *sp = strchr(line + 1, ' ');
			if (sp)
				*sp = 0;
			uint8_t ok = line[1] != 0 && strlen(line + 1) <= 8;
			for (char *p = line + 1; *p; p++)
				if (*p < 'a' || *p > 'z')
					ok = 0;
			reply_er(ok ? line + 1 : 0, E_CRC);
			return;
		}
	}

	/* Split: tag, then key=value fields. */
	tag = line + 1;
	nfields = 0;
	char *p = tag;
	while (*p && *p != ' ')
		p++;
	uint8_t tlen = (uint8_t)(p - tag);
	uint8_t tag_ok = tlen >= 1 && tlen <= 8;
	for (uint8_t i = 0; i < tlen; i++)
		if (tag[i] < 'a' || tag[i] > 'z')
			tag_ok = 0;
	while (*p == ' ') {
		*p++ = 0;
		if (nfields == MAX_FIELDS || !*p) {
			code = E_SYNTAX;
			break;
		}
		fkey[nfields] = p;
		while (*p && *p != ' ' && *p != '=')
			p++;
		if (*p != '=' || p == fkey[nfields]) {
			code = E_SYNTAX;
			break;
		}
		*p++ = 0;
		fval[nfields] = p;
		while (*p && *p != ' ')
			p++;
		if (p == fval[nfields]) {
			code = E_SYNTAX;
			break;
		}
		nfields++;
	}
	if (!tag_ok) {
		reply_er(0, E_SYNTAX);
		return;
	}
	tag[tlen] = 0;
	if (code) {
		reply_er(tag, code);
		return;
	}

	struct settings n = cfg;
	uint8_t settings = 1;
	if (strcmp_P(tag, PSTR("rate")) == 0)
		code = do_rate(&n);
	else if (strcmp_P(tag, PSTR("chan")) == 0)
		code = do_chan(&n);
	else if (strcmp_P(tag, PSTR("burst")) == 0)
		code = do_burst(&n);
	else if (strcmp_P(tag, PSTR("ref")) == 0)
		code = do_ref(&n);
	else if (strcmp_P(tag, PSTR("cal")) == 0)
		code = do_cal(&n);
	else
		settings = 0;

	if (settings) {
		if (code) {
			reply_er(tag, code);
			return;
		}
		cap_flush();
		reply_ok(tag);
		cap_end();
		cfg = n;
		apply_settings();
		send_id(0);
		return;
	}

	if (strcmp_P(tag, PSTR("id")) == 0) {
		reply_ok(tag);
		send_id(0);
	} else if (strcmp_P(tag, PSTR("status")) == 0) {
		reply_ok(tag);
		send_status();
	} else if (strcmp_P(tag, PSTR("start")) == 0) {
		reply_ok(tag);
		if (!running) {
			running = 1;
			apply_settings();
		}
	} else if (strcmp_P(tag, PSTR("stop")) == 0) {
		cap_flush();
		reply_ok(tag);
		cap_end();
		running = 0;
		adc_run(0);
	} else if (strcmp_P(tag, PSTR("save")) == 0) {
		if (settings_save())
			reply_ok(tag);
		else
			reply_er(tag, E_EEPROM);
	} else {
		reply_er(tag, E_UNKNOWN);
	}
}

void cmd_byte(uint8_t b)
{
	if (b == '>') { /* a start character always begins a new line */
		in_frame = 1;
		too_long = 0;
		len = 0;
		line[len++] = '>';
		return;
	}
	if (!in_frame)
		return; /* bytes outside frames are skipped */
	if (b == '\r')
		return;
	if (b == '\n') {
		in_frame = 0;
		if (too_long) {
			reply_er(0, E_SYNTAX);
			return;
		}
		line[len] = 0;
		handle();
		return;
	}
	if (b == '!' || b < 0x20 || b > 0x7E) { /* not allowed in a command */
		in_frame = 0;
		return;
	}
	if (len < CMD_MAX)
		line[len++] = (char)b;
	else
		too_long = 1;
}
