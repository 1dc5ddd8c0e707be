/*
 * adc.c - the sample clock (Timer1) and the oversampled conversion blocks.
 *
 * Timing. Timer1 runs in CTC mode; each compare match A is one fast sample tick. Its
 * interrupt stamps the tick with the device clock and starts a block of conversions; the
 * ADC interrupt starts each following conversion of the block, so no conversion waits for
 * the main loop. The sample's time is the tick, which is exact to the crystal; the tick
 * is a whole number of microseconds.
 *
 * ADC clock. The prescaler is 128: 16 MHz / 128 = 125 kHz, inside the 50..200 kHz the
 * datasheet asks for full 10-bit resolution (ATmega328P datasheet, ADC chapter, section
 * "Prescaling and Conversion Timing"; from memory). A normal conversion takes 13 ADC
 * clocks (104 us), the first after enabling the ADC 25 (same section, table "ADC
 * Conversion Time"; from memory). A single conversion started by setting ADSC begins at
 * the next ADC clock edge, so back-to-back conversions started from the ADC interrupt cost
 * at most 14 ADC clocks = 112 us; adc_max_hz() budgets with that.
 *
 * Oversampling and decimation (Atmel application note AVR121, "Enhancing ADC resolution by
 * oversampling"): for n extra bits, sum 4^n conversions and shift the sum right by n.
 *
 * Noise practice. DIDR0 disables the digital input buffers of ADC0..ADC3 (datasheet,
 * "Digital Input Disable Register 0"). After every mux change the first conversion is
 * discarded; after a reference change the ADC makes and discards a few conversions while
 * the reference settles (the band-gap needs some tens of microseconds to start; datasheet,
 * "Internal Voltage Reference"; from memory). The ADC noise reduction sleep mode is not
 * used: it stops the I/O clock, and with it Timer1 and the USART that this design needs
 * (datasheet, "Sleep Modes" table of active clock domains; from memory). The main loop
 * sleeps in idle mode, which stops only the CPU clock.
 */
#include "adc.h"

#include <avr/interrupt.h>
#include <avr/io.h>
#include <avr/pgmspace.h>
#include <string.h>
#include <util/atomic.h>

#define ADC_PRESCALER_BITS (_BV(ADPS2) | _BV(ADPS1) | _BV(ADPS0)) /* /128 */
#define CONV_US_MAX 112u /* 14 ADC clocks at 125 kHz */

#define QLEN 4 /* finished samples waiting for the main loop (power of two) */

static volatile struct sample queue[QLEN];
static volatile uint8_t q_head, q_tail;

/* Device clock in microseconds; a tick is tick_us long. */
static volatile uint32_t clock_us;
static uint32_t tick_us;

static volatile uint32_t overruns;

/* Block state, owned by the interrupts. */
static volatile uint8_t running;
static volatile uint8_t busy;
static uint8_t n_ch;
static uint8_t admux_ref = 0xff; /* none yet: the first configure settles */
static uint8_t slow_timer;        /* Timer1 at 16 us a count instead of 0.5 us */
static uint8_t cur_ch;
static uint8_t cur_n;
static uint8_t discard;
static uint16_t acc;
static struct sample cur;

static uint8_t refs_bits(uint8_t ref)
{
	switch (ref) {
	case REF_INT:
		return _BV(REFS1) | _BV(REFS0); /* internal 1.1 V band-gap */
	case REF_EXT:
		return 0; /* AREF pin */
	default:
		return _BV(REFS0); /* AVcc, with the capacitor at AREF */
	}
}

void adc_init(void)
{
	DIDR0 = _BV(ADC0D) | _BV(ADC1D) | _BV(ADC2D) | _BV(ADC3D);
	ADCSRA = _BV(ADEN) | ADC_PRESCALER_BITS;
	ADCSRB = 0;
}

/* Conversions per sample: 4^OVS_BITS per channel, plus one discarded after each mux
 * change when more than one channel is on. A block costs that many conversions of at
 * most CONV_US_MAX plus 64 us for the interrupts around it. The link carries a sample
 * frame of at most 31 + 5 * nch bytes in 10 bit times a byte; 20 % is kept for the other
 * frames. max_hz is the lower of the two. */
#define CONVS(n) ((n) * OVS_N + ((n) > 1 ? (n) : 0))
#define ADC_HZ(n) (1000000UL / (CONVS(n) * CONV_US_MAX + 64UL))
#define LINK_HZ(n) ((BAUD / 10UL) * 4UL / 5UL / (31UL + 5UL * (n)))
#define MAX_HZ(n) (ADC_HZ(n) < LINK_HZ(n) ? ADC_HZ(n) : LINK_HZ(n))
static const uint16_t max_hz_tab[MAX_CH] PROGMEM = {MAX_HZ(1), MAX_HZ(2), MAX_HZ(3), MAX_HZ(4)};

uint16_t adc_max_hz(uint8_t nch)
{
	return pgm_read_word(&max_hz_tab[nch - 1]);
}

/* Busy-wait conversions on the current ADMUX, results discarded (no ADC interrupt). */
static void settle(uint8_t n)
{
	while (n--) {
		ADCSRA = _BV(ADEN) | _BV(ADSC) | _BV(ADIF) | ADC_PRESCALER_BITS;
		while (ADCSRA & _BV(ADSC))
			;
	}
	ADCSRA = _BV(ADEN) | _BV(ADIF) | ADC_PRESCALER_BITS;
}

void adc_configure(uint16_t fast_hz, uint8_t nch, uint8_t ref)
{
	/* The tick is a whole number of microseconds, the nearest to 1/fast_hz (at most
	 * 0.5 us off: 0.03 % at 1 kHz). Timer1 counts 0.5 us (prescaler 8) for ticks up to
	 * 32.768 ms, else 16 us (prescaler 256; the tick then rounds to 16 us, 0.05 % at
	 * 30 Hz). */
	uint32_t us = (1000000UL + fast_hz / 2) / fast_hz;
	uint8_t slow = us > 32768UL;
	uint16_t top = slow ? (uint16_t)((us + 8) >> 4) - 1 : (uint16_t)(us * 2 - 1);

	/* Stop any block (the caller has stopped new ones with adc_run(0)); the clock
	 * keeps running. */
	ATOMIC_BLOCK(ATOMIC_FORCEON)
	{
		ADCSRA = _BV(ADEN) | _BV(ADIF) | ADC_PRESCALER_BITS;
		busy = 0;
		q_head = q_tail = 0;
	}
	uint8_t rb = refs_bits(ref);
	if (rb != admux_ref) {
		/* New reference: let it settle, discarding the conversions. Interrupts stay
		 * on, so the USART loses no byte meanwhile. */
		admux_ref = rb;
		ADMUX = rb;
		settle(4);
	}
	ATOMIC_BLOCK(ATOMIC_FORCEON)
	{
		TIMSK1 = 0;
		TCCR1B = 0;
		/* Carry the elapsed part of the old period into the clock, so the clock
		 * keeps time across a rate change. */
		clock_us += slow_timer ? (uint32_t)TCNT1 << 4 : TCNT1 >> 1;
		slow_timer = slow;
		tick_us = slow ? ((uint32_t)top + 1) << 4 : us;
		n_ch = nch;
		TCCR1A = 0;
		TCNT1 = 0;
		TCCR1B = _BV(WGM12) | (slow ? _BV(CS12) : _BV(CS11)); /* CTC on OCR1A */
		OCR1A = top; /* a few counts after the start, far from the compare */
		TIFR1 = _BV(OCF1A);
		TIMSK1 = _BV(OCIE1A);
	}
}

void adc_run(uint8_t on)
{
	running = on;
}

/* Sample tick: advance the clock and start a conversion block. */
ISR(TIMER1_COMPA_vect)
{
	uint32_t c = clock_us + tick_us;
	clock_us = c;
	if (!running)
		return;
	if (busy) {
		overruns++;
		return;
	}
	busy = 1;
	cur.t_us = c;
	cur_ch = 0;
	cur_n = 0;
	acc = 0;
	/* With one channel the mux never changes, so nothing is discarded. */
	discard = (n_ch > 1) ? 1 : 0;
	ADMUX = admux_ref; /* channel 0 */
	ADCSRA = _BV(ADEN) | _BV(ADSC) | _BV(ADIF) | _BV(ADIE) | ADC_PRESCALER_BITS;
}

ISR(ADC_vect)
{
	uint16_t v = ADC;
	if (discard) {
		discard = 0;
	} else {
		acc += v; /* at most 16 * 1023 for OVS_BITS = 2: fits 16 bits up to OVS_BITS 3 */
		if (++cur_n == OVS_N) {
			cur.c[cur_ch] = (uint16_t)(acc >> OVS_BITS);
			acc = 0;
			cur_n = 0;
			if (++cur_ch == n_ch) {
				uint8_t h = q_head;
				uint8_t nh = (uint8_t)((h + 1) & (QLEN - 1));
				if (nh == q_tail) {
					overruns++;
				} else {
					memcpy((void *)&queue[h], &cur, sizeof cur);
					q_head = nh;
				}
				busy = 0;
				ADCSRA = _BV(ADEN) | _BV(ADIF) | ADC_PRESCALER_BITS;
				return;
			}
			ADMUX = admux_ref | cur_ch;
			discard = 1;
		}
	}
	ADCSRA = _BV(ADEN) | _BV(ADSC) | _BV(ADIF) | _BV(ADIE) | ADC_PRESCALER_BITS;
}

uint8_t adc_ready(void)
{
	return q_head != q_tail;
}

uint8_t adc_pop(struct sample *s)
{
	uint8_t t = q_tail;
	if (t == q_head)
		return 0;
	memcpy(s, (const void *)&queue[t], sizeof *s);
	q_tail = (uint8_t)((t + 1) & (QLEN - 1));
	return 1;
}

uint32_t adc_now_us(void)
{
	uint32_t v;
	ATOMIC_BLOCK(ATOMIC_RESTORESTATE) { v = clock_us; }
	return v;
}

uint32_t adc_overruns(void)
{
	uint32_t v;
	ATOMIC_BLOCK(ATOMIC_RESTORESTATE) { v = overruns; }
	return v;
}
