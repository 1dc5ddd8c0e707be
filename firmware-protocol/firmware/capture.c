/*
 * capture.c - adaptive capture over the stream of fast samples.
 *
 * The ring keeps the last `pre` fast samples outside a burst. During a burst the same
 * ring is the queue of S frames waiting for room in the transmit queue: samples enter at
 * the head and leave from the tail as frames. If the link cannot keep up, the oldest
 * waiting frame is dropped and its seq is skipped, so the host sees the loss.
 */
#include "capture.h"
#include "out.h"
#include "settings.h"

#include <string.h>

uint32_t seq;

enum { SLOW, BURST, ENDING };

static uint8_t ring[RING_BYTES];
static uint8_t slot_size, n_slots;
static uint8_t r_tail, r_count;
static uint32_t tail_seq; /* seq of the ring's oldest sample during a burst */

static uint8_t state;
static uint8_t have_ref;
static uint16_t ref;

/* Slow interval. */
static uint16_t s_n;
static uint32_t s_t0;
static uint32_t s_sum[MAX_CH];
static uint16_t s_lo[MAX_CH], s_hi[MAX_CH];

/* Burst quiet window on channel 0. */
static uint16_t w_lo, w_hi, w_n;
static uint32_t end_t;


uint8_t cap_slots(uint8_t nch)
{
	return (uint8_t)(RING_BYTES / (4u + 2u * nch));
}

static uint8_t *slot(uint8_t i)
{
	uint16_t k = (uint16_t)(r_tail + i);
	if (k >= n_slots)
		k -= n_slots;
	return ring + k * (uint16_t)slot_size;
}

static void ring_push(const struct sample *s)
{
	if (r_count == n_slots) { /* full: the oldest goes */
		if (++r_tail == n_slots)
			r_tail = 0;
		r_count--;
		if (state != SLOW) {
			tail_seq++;
			out_drops++;
		}
	}
	uint8_t *p = slot(r_count);
	memcpy(p, &s->t_us, 4);
	memcpy(p + 4, s->c, 2u * cfg.nch);
	r_count++;
}

static void slow_restart(void)
{
	s_n = 0;
	for (uint8_t k = 0; k < MAX_CH; k++)
		s_sum[k] = 0;
}

void cap_reset(void)
{
	slot_size = (uint8_t)(4u + 2u * cfg.nch);
	n_slots = cap_slots(cfg.nch);
	r_tail = 0;
	r_count = 0;
	state = SLOW;
	have_ref = 0;
	slow_restart();
}

/* Encode the ring's oldest sample as an S frame in out_line; returns its length. */
static uint8_t encode_tail(void)
{
	uint8_t *p = slot(0);
	uint32_t t;
	uint16_t c[MAX_CH];
	memcpy(&t, p, 4);
	memcpy(c, p + 4, 2u * cfg.nch);
	return frame_sample(out_line, OUT_LINE, tail_seq, t, cfg.nch, c);
}

static void pop_tail(void)
{
	tail_seq++;
	if (++r_tail == n_slots)
		r_tail = 0;
	r_count--;
}

static void send_e(void)
{
	out_begin(FRAME_P("E"));
	frame_u32(&out_f, seq);
	frame_u32(&out_f, end_t);
	out_end_wait();
	state = SLOW;
	r_tail = 0;
	r_count = 0;
}

void cap_poll(void)
{
	if (state == SLOW)
		return;
	/* One frame a call: the main loop handles new samples in between, so a long
	 * pre-trigger ring never holds up the sample queue. */
	if (r_count && out_try(encode_tail()))
		pop_tail();
	if (state == ENDING && r_count == 0)
		send_e();
}

uint8_t cap_pending(void)
{
	return state == ENDING || (state == BURST && r_count);
}

void cap_flush(void)
{
	while (state != SLOW && r_count) {
		out_wait(encode_tail());
		pop_tail();
	}
}

void cap_end(void)
{
	if (state == SLOW)
		return;
	cap_flush();
	send_e();
	have_ref = 0;
	slow_restart();
}

static void send_a(void)
{
	uint16_t mean[MAX_CH];
	uint16_t n = s_n;
	for (uint8_t k = 0; k < cfg.nch; k++)
		mean[k] = (uint16_t)((s_sum[k] + n / 2u) / n); /* rounded half up */
	uint8_t len = frame_average(out_line, OUT_LINE, seq++, s_t0, n, cfg.nch, mean, s_lo, s_hi);
	if (!out_try(len))
		out_drops++; /* the seq gap shows it too */
}

static void slow_add(const struct sample *s)
{
	if (s_n == 0)
		s_t0 = s->t_us;
	for (uint8_t k = 0; k < cfg.nch; k++) {
		uint16_t c = s->c[k];
		s_sum[k] += c;
		if (s_n == 0 || c < s_lo[k])
			s_lo[k] = c;
		if (s_n == 0 || c > s_hi[k])
			s_hi[k] = c;
	}
	s_n++;
	if (s_n >= cfg.fast_hz / cfg.slow_hz) {
		uint16_t n = s_n;
		if (state == SLOW) {
			send_a();
		} else {
			seq++; /* the burst is still draining: this A cannot go out before E */
			out_drops++;
		}
		ref = (uint16_t)((s_sum[0] + n / 2u) / n);
		have_ref = 1;
		slow_restart();
	}
}

static void start_burst(const struct sample *s)
{
	slow_restart(); /* the partial slow interval is dropped */
	uint8_t pre = r_count;
	out_begin(FRAME_P("B"));
	frame_u32(&out_f, seq);
	frame_u32(&out_f, s->t_us);
	frame_u32(&out_f, pre);
	out_end_wait();
	tail_seq = seq;
	seq += pre;
	state = BURST;
	ring_push(s);
	seq++;
	w_lo = w_hi = s->c[0];
	w_n = 1;
	if (w_n >= cfg.post) {
		state = ENDING;
		end_t = s->t_us;
		ref = s->c[0];
	}
}

static void burst_add(const struct sample *s)
{
	ring_push(s);
	seq++;
	uint16_t c = s->c[0];
	uint16_t lo = c < w_lo ? c : w_lo;
	uint16_t hi = c > w_hi ? c : w_hi;
	if ((uint16_t)(hi - lo) > cfg.thr) {
		w_lo = w_hi = c;
		w_n = 1;
	} else {
		w_lo = lo;
		w_hi = hi;
		w_n++;
	}
	if (w_n >= cfg.post) {
		state = ENDING;
		end_t = s->t_us;
		ref = c;
		have_ref = 1;
		slow_restart();
	}
}

void cap_sample(const struct sample *s)
{
	switch (state) {
	case BURST:
		burst_add(s);
		return;
	case ENDING:
		/* The burst is draining; the new slow interval has begun. */
		slow_add(s);
		return;
	}
	if (!have_ref) {
		ref = s->c[0];
		have_ref = 1;
	}
	uint16_t c = s->c[0];
	uint16_t d = c > ref ? (uint16_t)(c - ref) : (uint16_t)(ref - c);
	if (cfg.thr && d > cfg.thr) {
		start_burst(s);
		return;
	}
	slow_add(s);
	if (cfg.pre) {
		if (r_count >= cfg.pre) { /* keep only the last `pre` */
			if (++r_tail == n_slots)
				r_tail = 0;
			r_count--;
		}
		ring_push(s);
	}
}
