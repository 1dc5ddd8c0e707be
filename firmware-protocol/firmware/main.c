/*
 * main.c - capcycle board firmware for ATmega328P boards at 16 MHz.
 *
 * The board samples ADC0..ADC(nch-1) on a timer, oversampled to EBITS bits, and sends the
 * adaptive capture of PROTOCOL.md over the USART: slow averaged A frames while the
 * voltage creeps, bursts of S frames around every fast change. See README.md.
 *
 * Interrupts do the timing (Timer1 compare A starts each conversion block, the ADC
 * interrupt chains the conversions, the USART interrupts move the bytes); the main loop
 * turns finished samples into frames, handles commands, and sleeps in idle mode.
 */
#include "config.h"

#include <avr/interrupt.h>
#include <avr/io.h>
#include <avr/pgmspace.h>
#include <avr/sleep.h>
#include <avr/wdt.h>

#include "adc.h"
#include "capture.h"
#include "cmd.h"
#include "out.h"
#include "settings.h"
#include "uart.h"

/* MCUSR is read and cleared before main, and the watchdog stopped, so that a watchdog
 * reset does not repeat while the program starts (ATmega328P datasheet, "Watchdog
 * Timer": WDRF must be cleared before WDE can be; from memory). */
static uint8_t mcusr_copy __attribute__((section(".noinit")));

void early_reset_cause(void) __attribute__((naked, used, section(".init3")));
void early_reset_cause(void)
{
	mcusr_copy = MCUSR;
	MCUSR = 0;
	wdt_disable();
}

/* The MCUSR flags in bit order: PORF, EXTRF, BORF, WDRF. */
static PGM_P cause_of(uint8_t m)
{
	PGM_P name = PSTR("por\0ext\0bod\0wdt\0unk");
	for (uint8_t i = 0; i < 4 && !(m & 1); i++, m >>= 1)
		name += 4;
	/* No flag: a boot loader cleared MCUSR before starting us (some do): "unk". */
	return name;
}

int main(void)
{
	reset_cause = cause_of(mcusr_copy);
	settings_load();
	uart_init();
	adc_init();
	wdt_enable(WDTO_1S);
	sei();

	/* The clock starts now; sampling starts after the boot frames, which at low baud
	 * rates take longer than the sample queue lasts. */
	apply_settings();
	running = 1;
	send_id(1);
	send_status();
	adc_run(1);

	uint32_t next_sec_us = 1000000UL;
	uint8_t st_count = 0;
	struct sample s;
	for (;;) {
		wdt_reset();
		while (uart_rx_ready()) {
			int16_t b = uart_get();
			if (b >= 0)
				cmd_byte((uint8_t)b);
		}
		/* A block converted before >stop took effect is dropped, not begun as a
		 * burst after the E. */
		while (adc_pop(&s))
			if (running)
				cap_sample(&s);
		out_poll();
		cap_poll();
		/* Uptime in whole seconds of the device clock; ST every ST_PERIOD_S. */
		if ((int32_t)(adc_now_us() - next_sec_us) >= 0) {
			next_sec_us += 1000000UL;
			uptime_s++;
			if (++st_count == ST_PERIOD_S) {
				st_count = 0;
				send_status();
			}
		}
		/* Sleep until the next interrupt unless work is waiting. */
		cli();
		if (!uart_rx_ready() && !adc_ready() && !cap_pending()) {
			set_sleep_mode(SLEEP_MODE_IDLE);
			sleep_enable();
			sei();
			sleep_cpu();
			sleep_disable();
		}
		sei();
	}
}
