/*
 * adc.h - timer-paced, oversampled conversions on ADC0..ADC(nch-1).
 */
#ifndef CAPCYCLE_ADC_H
#define CAPCYCLE_ADC_H

#include <stdint.h>

#include "config.h"

enum { REF_AVCC = 0, REF_INT = 1, REF_EXT = 2 };

/* One fast sample: the time of its timer tick and one count per channel at EBITS. */
struct sample {
	uint32_t t_us;
	uint16_t c[MAX_CH];
};

/* Start Timer1 (the sample clock) and the ADC. */
void adc_init(void);
/* Configure: fast_hz sample rate, nch channels, reference. Stops and restarts the
 * sample clock phase-free: the device clock keeps counting. */
void adc_configure(uint16_t fast_hz, uint8_t nch, uint8_t ref);
/* Enable or disable conversions (the clock keeps running either way). */
void adc_run(uint8_t on);
/* Pop the oldest finished sample; returns 0 when none is waiting. */
uint8_t adc_pop(struct sample *s);
/* 1 when a finished sample is waiting. */
uint8_t adc_ready(void);
/* The device clock in microseconds (wraps at 2^32). */
uint32_t adc_now_us(void);
/* Samples missed because the previous block was not finished or the queue was full. */
uint32_t adc_overruns(void);
/* Highest fast rate for nch channels, from the conversion time and the link. */
uint16_t adc_max_hz(uint8_t nch);

#endif
