/*
 * vectors_check - encode the frames of ../../testdata/vectors.txt with frame.c on the
 * host and print them, so a Go test (wire.TestVectorsC) can compare them byte for byte
 * with the vectors.
 *
 *     gcc -std=c99 -I.. -o vectors_check vectors_check.c ../frame.c
 *     ./vectors_check ../../testdata/vectors.txt
 *
 * For each "check TEXT HEX" line it prints "check TEXT <CRC it computes>". For each "ok"
 * vector it reads the values out of the frame, builds the frame again with the frame.c
 * function for its tag (the generic builder for the others), and prints
 * "ok NAME | BYTES" with the file's escapes. For each ok, also and bad-crc vector it
 * prints "verify NAME good|no-crc|bad-crc|no-start" from frame_verify.
 *
 * Host-only code: it uses stdio and the C library; frame.c itself does not.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "frame.h"

#define MAXF 64

static void print_escaped(const char *b, size_t n)
{
	size_t i;
	for (i = 0; i < n; i++) {
		unsigned char c = (unsigned char)b[i];
		if (c == '\n')
			fputs("\\n", stdout);
		else if (c == '\r')
			fputs("\\r", stdout);
		else if (c == '\\')
			fputs("\\\\", stdout);
		else if (c < 0x20 || c > 0x7e)
			printf("\\x%02X", c);
		else
			putchar(c);
	}
}

static int hexdigit(int c)
{
	if (c >= '0' && c <= '9')
		return c - '0';
	if (c >= 'A' && c <= 'F')
		return c - 'A' + 10;
	if (c >= 'a' && c <= 'f')
		return c - 'a' + 10;
	return -1;
}

/* unescape decodes the vector file's escapes in place and returns the length. */
static size_t unescape(char *s)
{
	char *r = s, *w = s;
	while (*r) {
		if (*r != '\\') {
			*w++ = *r++;
			continue;
		}
		r++;
		switch (*r) {
		case 'n': *w++ = '\n'; r++; break;
		case 'r': *w++ = '\r'; r++; break;
		case '\\': *w++ = '\\'; r++; break;
		case 'x':
			*w++ = (char)(hexdigit(r[1]) << 4 | hexdigit(r[2]));
			r += 3;
			break;
		default:
			fprintf(stderr, "vectors_check: bad escape \\%c\n", *r);
			exit(2);
		}
	}
	return (size_t)(w - s);
}

static int in_list(const char *k, const char *const *list)
{
	for (; *list; list++)
		if (strcmp(k, *list) == 0)
			return 1;
	return 0;
}

static const char *const micro_keys[] = {"div", "gain", NULL};
static const char *const signed_keys[] = {"off_uv", NULL};
static const char *const text_keys[] = {"fw", "board", "ref", "reset", "cmd", "msg", "src", NULL};

static int all_digits(const char *s)
{
	if (!*s)
		return 0;
	for (; *s; s++)
		if (*s < '0' || *s > '9')
			return 0;
	return 1;
}

static int32_t parse_micro(const char *s)
{
	long long whole = 0, frac = 0;
	int neg = 0, places = 0;
	if (*s == '-') {
		neg = 1;
		s++;
	}
	while (*s >= '0' && *s <= '9')
		whole = whole * 10 + (*s++ - '0');
	if (*s == '.') {
		s++;
		while (*s >= '0' && *s <= '9' && places < 6) {
			frac = frac * 10 + (*s++ - '0');
			places++;
		}
	}
	for (; places < 6; places++)
		frac *= 10;
	whole = whole * 1000000 + frac;
	return (int32_t)(neg ? -whole : whole);
}

/* field returns the value after "key=" among fields, or "" if absent. */
static const char *value_of(char **fields, int nf, const char *key)
{
	int i;
	size_t n = strlen(key);
	for (i = 0; i < nf; i++)
		if (strncmp(fields[i], key, n) == 0 && fields[i][n] == '=')
			return fields[i] + n + 1;
	return "";
}

/* reencode builds the frame in line (start character first, "\n" last) again. */
static uint8_t reencode(char *line, size_t len, char *out)
{
	char start = line[0];
	char *body = line + 1, *tag, *fields[MAXF];
	uint32_t v[MAXF];
	uint16_t c[3][FRAME_MAX_CH];
	int nf = 0, i;
	frame_t f;

	line[len - 1] = 0;                   /* drop "\n" */
	*strrchr(body, '*') = 0;              /* drop "*XXXX" */
	body[strlen(body) - 1] = 0;           /* and the space before it */
	tag = strtok(body, " ");
	while (nf < MAXF && (fields[nf] = strtok(NULL, " ")) != NULL)
		nf++;
	for (i = 0; i < nf; i++)
		v[i] = (uint32_t)strtoul(fields[i], NULL, 10);

	if (start == FRAME_DEVICE && strcmp(tag, "S") == 0) {
		for (i = 0; i < nf - 2; i++)
			c[0][i] = (uint16_t)v[2 + i];
		return frame_sample(out, FRAME_MAX, v[0], v[1], (uint8_t)(nf - 2), c[0]);
	}
	if (start == FRAME_DEVICE && strcmp(tag, "A") == 0) {
		for (i = 0; i < (nf - 3) / 3; i++) {
			c[0][i] = (uint16_t)v[3 + 3 * i];
			c[1][i] = (uint16_t)v[4 + 3 * i];
			c[2][i] = (uint16_t)v[5 + 3 * i];
		}
		return frame_average(out, FRAME_MAX, v[0], v[1], v[2], (uint8_t)((nf - 3) / 3),
				     c[0], c[1], c[2]);
	}
	if (start == FRAME_DEVICE && strcmp(tag, "B") == 0)
		return frame_burst_begin(out, FRAME_MAX, v[0], v[1], v[2]);
	if (start == FRAME_DEVICE && strcmp(tag, "E") == 0)
		return frame_burst_end(out, FRAME_MAX, v[0], v[1]);
	if (start == FRAME_DEVICE && strcmp(tag, "OK") == 0)
		return frame_ok(out, FRAME_MAX, value_of(fields, nf, "cmd"));
	if (start == FRAME_DEVICE && strcmp(tag, "ER") == 0)
		return frame_er(out, FRAME_MAX, value_of(fields, nf, "cmd"),
				(uint8_t)strtoul(value_of(fields, nf, "code"), NULL, 10),
				value_of(fields, nf, "msg"));

	frame_begin(&f, out, FRAME_MAX, start, tag);
	for (i = 0; i < nf; i++) {
		char *eq = strchr(fields[i], '=');
		if (!eq) {
			if (all_digits(fields[i]))
				frame_u32(&f, v[i]);
			else
				frame_text(&f, fields[i]);
			continue;
		}
		*eq = 0;
		if (in_list(fields[i], micro_keys))
			frame_key_micro(&f, fields[i], parse_micro(eq + 1));
		else if (in_list(fields[i], signed_keys))
			frame_key_i32(&f, fields[i], (int32_t)strtol(eq + 1, NULL, 10));
		else if (!in_list(fields[i], text_keys) && all_digits(eq + 1))
			frame_key_u32(&f, fields[i], (uint32_t)strtoul(eq + 1, NULL, 10));
		else
			frame_key_str(&f, fields[i], eq + 1);
	}
	return frame_end(&f);
}

static const char *verify_word(const char *b, size_t n)
{
	uint8_t body;
	switch (frame_verify(b, (uint8_t)(n > 255 ? 255 : n), &body)) {
	case FRAME_GOOD: return "good";
	case FRAME_NO_CRC: return "no-crc";
	case FRAME_BAD_CRC: return "bad-crc";
	default: return "no-start";
	}
}

int main(int argc, char **argv)
{
	static char buf[4096], work[4096];
	char out[FRAME_MAX];
	FILE *in;
	if (argc != 2) {
		fprintf(stderr, "usage: vectors_check VECTORS_FILE\n");
		return 2;
	}
	in = fopen(argv[1], "r");
	if (!in) {
		perror(argv[1]);
		return 2;
	}
	while (fgets(buf, sizeof buf, in)) {
		char *bar, name[128] = "", kind[16] = "", err[16] = "";
		size_t n;
		buf[strcspn(buf, "\n")] = 0;
		if (buf[0] == '#' || buf[0] == 0)
			continue;
		if (strncmp(buf, "check ", 6) == 0) {
			char text[256];
			if (sscanf(buf, "check %255s", text) == 1)
				printf("check %s %04X\n", text,
				       frame_crc16(0, text, (uint8_t)strlen(text)));
			continue;
		}
		bar = strstr(buf, " | ");
		if (!bar) {
			fprintf(stderr, "vectors_check: no \" | \" in %s\n", buf);
			return 2;
		}
		*bar = 0;
		sscanf(buf, "%15s %127s %15s", kind, name, err);
		strcpy(work, bar + 3);
		n = unescape(work);
		if (strcmp(kind, "ok") == 0) {
			char copy[4096];
			uint8_t m;
			memcpy(copy, work, n);
			m = reencode(copy, n, out);
			printf("ok %s | ", name);
			print_escaped(out, m);
			putchar('\n');
		}
		if (strcmp(kind, "ok") == 0 || strcmp(kind, "also") == 0 ||
		    (strcmp(kind, "bad") == 0 && strcmp(err, "crc") == 0))
			printf("verify %s %s\n", name, verify_word(work, n));
	}
	fclose(in);
	return 0;
}
