/*
 * capture.c - adaptive capture over the stream of fast samples (PROTOCOL.md, "The
 * adaptive capture").
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
static uint16_t s_len; /* fast_hz / slow_hz */
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
	uint8_t k = (uint8_t)(r_tail + i);
	if (k >= n_slots)
		k -= n_slots;
	return ring + k * slot_size;
}

static void drop_tail(void)
{
	if (++r_tail == n_slots)
		r_tail = 0;
	r_count--;
}

/* Append a sample; when the ring holds `limit` samples the oldest goes first. */
static void ring_push(const struct sample *s, uint8_t limit)
{
	if (r_count >= limit) {
		drop_tail();
		if (state != SLOW) { /* a burst frame that never went out */
			tail_seq++;
			out_drops++;
		}
	}
	memcpy(slot(r_count++), s, slot_size); /* t_us, then the counts */
}

static void slow_restart(void)
{
	s_n = 0;
	memset(s_sum, 0, sizeof s_sum);
	memset(s_lo, 0xff, sizeof s_lo);
	memset(s_hi, 0, sizeof s_hi);
}

void cap_reset(void)
{
	slot_size = (uint8_t)(4u + 2u * cfg.nch);
	n_slots = cap_slots(cfg.nch);
	s_len = cfg.fast_hz / cfg.slow_hz;
	r_tail = 0;
	r_count = 0;
	state = SLOW;
	have_ref = 0;
	slow_restart();
}

/* Encode the ring's oldest sample as an S frame in out_line; returns its length. */
static uint8_t encode_tail(void)
{
	struct sample s;
	memcpy(&s, slot(0), slot_size);
	out_begin(FRAME_P("S"));
	frame_u32(&out_f, tail_seq);
	frame_u32(&out_f, s.t_us);
	for (uint8_t k = 0; k < cfg.nch; k++)
		frame_u32(&out_f, s.c[k]);
	return frame_end(&out_f);
}

static void pop_tail(void)
{
	tail_seq++;
	drop_tail();
}

static void send_e(void)
{
	out_begin(FRAME_P("E"));
	frame_u32(&out_f, seq);
	frame_u32(&out_f, end_t);
	out_end_wait();
	state = SLOW;
	r_count = 0;
}

uint8_t cap_pending(void)
{
	return state == ENDING || (state == BURST && r_count);
}

void cap_poll(void)
{
	/* One frame a call: the main loop handles new samples in between, so a long
	 * pre-trigger ring never holds up the sample queue. */
	if (state != SLOW && r_count && out_try(encode_tail()))
		pop_tail();
	if (state == ENDING && r_count == 0)
		send_e();
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

/* Close the slow interval: its A frame. */
static void slow_close(void)
{
	uint16_t n = s_n;
	out_begin(FRAME_P("A"));
	frame_u32(&out_f, seq++);
	frame_u32(&out_f, s_t0);
	frame_u32(&out_f, n);
	for (uint8_t k = 0; k < cfg.nch; k++) {
		uint16_t mean = (uint16_t)((s_sum[k] + n / 2u) / n); /* rounded half up */
		if (k == 0)
			ref = mean;
		frame_u32(&out_f, mean);
		frame_u32(&out_f, s_lo[k]);
		frame_u32(&out_f, s_hi[k]);
	}
	out_defer(frame_end(&out_f));
	have_ref = 1;
	slow_restart();
}

static void slow_add(const struct sample *s)
{
	if (s_n == 0)
		s_t0 = s->t_us;
	for (uint8_t k = 0; k < cfg.nch; k++) {
		uint16_t c = s->c[k];
		s_sum[k] += c;
		if (c < s_lo[k])
			s_lo[k] = c;
		if (c > s_hi[k])
			s_hi[k] = c;
	}
	/* While a burst still drains (slow link) the interval runs on, so its A frame
	 * follows E (with a larger n). */
	if (++s_n >= s_len && state == SLOW)
		slow_close();
}

/* Quiet-window bookkeeping; returns 1 when the burst has been quiet for `post`. */
static uint8_t quiet(uint16_t c)
{
	uint16_t lo = c < w_lo ? c : w_lo;
	uint16_t hi = c > w_hi ? c : w_hi;
	if ((uint16_t)(hi - lo) > cfg.thr) {
		lo = hi = c;
		w_n = 0;
	}
	w_lo = lo;
	w_hi = hi;
	return ++w_n >= cfg.post;
}

static void burst_add(const struct sample *s)
{
	ring_push(s, n_slots);
	seq++;
	end_t = s->t_us; /* E carries the time of the burst's last S */
	if (quiet(s->c[0])) {
		state = ENDING;
		ref = s->c[0];
		have_ref = 1;
		slow_restart();
	}
}

void cap_sample(const struct sample *s)
{
	if (state == BURST) {
		burst_add(s);
		return;
	}
	if (state == ENDING) { /* the burst drains; the new slow interval has begun */
		slow_add(s);
		return;
	}
	uint16_t c = s->c[0];
	if (!have_ref) {
		ref = c;
		have_ref = 1;
	}
	uint16_t d = c > ref ? (uint16_t)(c - ref) : (uint16_t)(ref - c);
	if (cfg.thr && d > cfg.thr) {
		/* Trigger: drop the partial slow interval, send B, then the ring. */
		slow_restart();
		out_begin(FRAME_P("B"));
		frame_u32(&out_f, seq);
		frame_u32(&out_f, s->t_us);
		frame_u32(&out_f, r_count);
		out_end_wait();
		tail_seq = seq;
		seq += r_count;
		state = BURST;
		w_lo = w_hi = c;
		w_n = 0;
		burst_add(s);
		return;
	}
	slow_add(s);
	if (cfg.pre)
		ring_push(s, cfg.pre);
}
