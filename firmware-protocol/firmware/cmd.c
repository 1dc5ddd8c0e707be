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

#include <stddef.h>
#include <string.h>

uint8_t running;
uint32_t uptime_s;
PGM_P reset_cause;

enum { E_UNKNOWN = 1, E_RANGE = 2, E_SYNTAX = 3, E_BUSY = 4, E_EEPROM = 5, E_CRC = 6 };

static char line[CMD_MAX + 1];
static uint8_t len;
static uint8_t in_frame, too_long;

#define MAX_FIELDS 6
static char *fkey[MAX_FIELDS];
static char *fval[MAX_FIELDS];
static uint8_t nfields;


/* ---- replies ---- */

static void reply_ok(const char *tag)
{
	out_begin(FRAME_P("OK"));
	frame_key_str(&out_f, PSTR("cmd"), tag);
	out_end_wait();
}

/* The nth entry of a list of "\0"-separated program-memory strings. */
static PGM_P nth(PGM_P list, uint8_t n)
{
	while (n--)
		list += strlen_P(list) + 1;
	return list;
}

static void reply_er(const char *tag, uint8_t code)
{
	out_begin(FRAME_P("ER"));
	frame_key_str(&out_f, PSTR("cmd"), tag ? tag : "?");
	frame_key_u32(&out_f, PSTR("code"), code);
	frame_key_pstr(&out_f, PSTR("msg"),
		       nth(PSTR("unknown\0range\0syntax\0busy\0eeprom\0crc"), code - 1));
	out_end_wait();
}

static PGM_P ref_name(uint8_t r)
{
	return nth(PSTR("avcc\0int\0ext"), r);
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
	frame_key_u32(&out_f, PSTR("up_s"), uptime_s);
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

/* Parse a number into *out (which must stay below 2^31 in size): an integer, with a
 * leading "-" if neg, or with frac = 6 a decimal to millionths (up to 6 fraction
 * digits). */
static uint8_t parse_num(const char *s, uint8_t frac, uint8_t neg, int32_t *out)
{
	uint8_t minus = 0, nd = 0, nf = 0, dot = 0;
	uint32_t v = 0;
	if (neg && *s == '-') {
		minus = 1;
		s++;
	}
	if (s[0] == '0' && s[1] >= '0' && s[1] <= '9')
		return 0; /* no leading zeros */
	for (; *s; s++) {
		if (*s == '.' && frac && !dot && nd) {
			dot = 1;
			continue;
		}
		if (*s < '0' || *s > '9' || (dot && ++nf > frac))
			return 0;
		nd++;
		v = v * 10u + (uint8_t)(*s - '0');
		if (v > 0x7FFFFFFUL)
			return 0;
	}
	if (!nd || (dot && !nf))
		return 0;
	for (; nf < frac; nf++) {
		if (v > 0x7FFFFFFFUL / 10u)
			return 0;
		v *= 10u;
	}
	*out = minus ? -(int32_t)v : (int32_t)v;
	return 1;
}

/* ---- settings commands, table-driven ---- */

enum { C_RATE, C_CHAN, C_BURST, C_REF, C_CAL };
struct param {
	char key[8];
	uint8_t cmd;
	uint8_t size;    /* bytes of the setting: 1, 2 or 4 */
	uint8_t frac;    /* 6 for a decimal in millionths, else 0 */
	uint8_t neg;     /* a "-" is allowed */
	uint8_t off;     /* offset in struct settings; per-channel arrays add 4 * ch */
	uint8_t per_ch;
	int32_t min, max;
};

#define OFF(f) ((uint8_t)offsetof(struct settings, f))

static const struct param params[] PROGMEM = {
	{"slow_hz", C_RATE, 2, 0, 0, OFF(slow_hz), 0, 1, 65535},
	{"fast_hz", C_RATE, 2, 0, 0, OFF(fast_hz), 0, 1, 65535},
	{"n", C_CHAN, 1, 0, 0, OFF(nch), 0, 1, MAX_CH},
	{"thr", C_BURST, 2, 0, 0, OFF(thr), 0, 0, 65535},
	{"pre", C_BURST, 1, 0, 0, OFF(pre), 0, 0, 255},
	{"post", C_BURST, 2, 0, 0, OFF(post), 0, 1, 65535},
	{"ref_uv", C_REF, 4, 0, 0, OFF(ref_uv), 0, 0, 6000000L},
	{"div", C_CAL, 4, 6, 1, OFF(div), 1, 1, 1000000L},
	{"gain", C_CAL, 4, 6, 1, OFF(gain), 1, 1, 10000000L},
	{"off_uv", C_CAL, 4, 0, 1, OFF(off_uv), 1, -100000000L, 100000000L},
};

static const char cmd_names[] PROGMEM = "rate\0chan\0burst\0ref\0cal\0";

/* Index of tag in a "\0"-separated program-memory list, or -1. */
static int8_t lookup(PGM_P list, const char *tag)
{
	for (int8_t i = 0; pgm_read_byte(list); i++) {
		if (strcmp_P(tag, list) == 0)
			return i;
		list += strlen_P(list) + 1;
	}
	return -1;
}

/* Apply the fields of settings command c to n (a copy of cfg, dropped if refused);
 * 0 or an error code. Keys this firmware does not know are ignored. */
static uint8_t set_fields(uint8_t c, struct settings *n)
{
	uint8_t ch = 0, have = (c == C_CAL || c == C_REF) ? 0 : 1;
	/* ch and src first: the other keys of the command depend on them. */
	for (uint8_t i = 0; i < nfields; i++) {
		int32_t v;
		if (c == C_CAL && strcmp_P(fkey[i], PSTR("ch")) == 0) {
			if (!parse_num(fval[i], 0, 0, &v))
				return E_SYNTAX;
			if (v >= MAX_CH)
				return E_RANGE;
			ch = (uint8_t)v;
			have = 1;
		}
		if (c == C_REF && strcmp_P(fkey[i], PSTR("src")) == 0) {
			int8_t r = lookup(PSTR("avcc\0int\0ext\0"), fval[i]);
			if (r < 0)
				return E_RANGE;
			n->ref = (uint8_t)r;
			have = 1;
		}
	}
	if (!have)
		return E_SYNTAX;
	for (uint8_t i = 0; i < nfields; i++) {
		const struct param *pp = params;
		for (uint8_t k = 0; k < sizeof params / sizeof params[0]; k++, pp++) {
			struct param p;
			int32_t v;
			memcpy_P(&p, pp, sizeof p);
			if (p.cmd != c || strcmp(fkey[i], p.key) != 0)
				continue;
			if (!parse_num(fval[i], p.frac, p.neg, &v))
				return E_SYNTAX;
			if (v < p.min || v > p.max)
				return E_RANGE;
			uint8_t *dst = (uint8_t *)n + p.off;
			if (p.per_ch)
				dst += 4u * ch;
			if (c == C_REF) {
				if (v == 0)
					continue; /* ref_uv=0 keeps the stored calibration */
				dst += 4u * n->ref;
			}
			memcpy(dst, &v, p.size); /* little-endian: the low bytes */
		}
	}
	/* The rules between settings (PROTOCOL.md, "Host commands"). */
	uint8_t slots = cap_slots(n->nch);
	if (c == C_CHAN && n->pre + 2u > slots)
		n->pre = (uint8_t)(slots - 2u); /* fewer ring slots with more channels */
	if (n->fast_hz > adc_max_hz(n->nch) || n->slow_hz > n->fast_hz ||
	    n->fast_hz % n->slow_hz || n->pre + 2u > slots)
		return E_RANGE;
	return 0;
}

static void handle(void)
{
	uint8_t code = 0, body = (uint8_t)(len - 1);
	uint8_t v = frame_verify(line, len, &body);
	line[1 + body] = 0;

	/* Split: tag, then key=value fields. */
	char *tag = line + 1;
	char *p = tag;
	nfields = 0;
	while (*p >= 'a' && *p <= 'z')
		p++;
	uint8_t tlen = (uint8_t)(p - tag);
	if (tlen < 1 || tlen > 8 || (*p && *p != ' '))
		tag = 0;
	while (*p == ' ') {
		*p++ = 0;
		if (nfields == MAX_FIELDS) {
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
	if (v == FRAME_BAD_CRC)
		code = E_CRC;
	if (!tag)
		code = code ? code : E_SYNTAX;
	if (code) {
		reply_er(tag, code);
		return;
	}

	int8_t c = lookup(cmd_names, tag);
	if (c >= 0) {
		struct settings n = cfg;
		code = set_fields((uint8_t)c, &n);
		if (code) {
			reply_er(tag, code);
			return;
		}
		cap_flush();
		reply_ok(tag);
		cap_end();
		cfg = n;
		adc_run(0); /* the ID first: sampling restarts with the new settings after it */
		send_id(0);
		apply_settings();
		return;
	}

	switch (lookup(PSTR("id\0status\0start\0stop\0save\0"), tag)) {
	case 0:
		reply_ok(tag);
		send_id(0);
		break;
	case 1:
		reply_ok(tag);
		send_status();
		break;
	case 2:
		reply_ok(tag);
		if (!running) {
			running = 1;
			apply_settings();
		}
		break;
	case 3:
		running = 0; /* no new block starts while the ring drains */
		adc_run(0);
		cap_flush();
		reply_ok(tag);
		cap_end();
		break;
	case 4:
		if (settings_save())
			reply_ok(tag);
		else
			reply_er(tag, E_EEPROM);
		break;
	default:
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
