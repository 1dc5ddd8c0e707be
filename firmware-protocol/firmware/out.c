/*
 * out.c - queue encoded frames on the USART. Data frames (S, A) are queued whole or not
 * at all, so a full queue never cuts a line; control frames wait for room.
 */
#include "out.h"
#include "uart.h"

char out_line[OUT_LINE];
frame_t out_f;
uint32_t out_drops;
static uint8_t pending; /* length of a deferred frame in out_line, or 0 */

void out_begin(frame_pstr tag)
{
	if (pending) {
		uart_write(out_line, pending);
		pending = 0;
	}
	frame_begin(&out_f, out_line, OUT_LINE, FRAME_DEVICE, tag);
}

void out_defer(uint8_t n)
{
	if (!out_try(n))
		pending = n;
}

void out_poll(void)
{
	if (pending && out_try(pending))
		pending = 0;
}

uint8_t out_try(uint8_t n)
{
	if (n == 0 || uart_tx_free() < n)
		return 0;
	uart_write(out_line, n);
	return 1;
}

void out_wait(uint8_t n)
{
	uart_write(out_line, n);
}

void out_end_wait(void)
{
	out_wait(frame_end(&out_f));
}
