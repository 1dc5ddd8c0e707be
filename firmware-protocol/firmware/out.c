/*
 * out.c - queue encoded frames on the USART. Data frames (S, A) are queued whole or not
 * at all, so a full queue never cuts a line; control frames wait for room.
 */
#include "out.h"
#include "uart.h"

char out_line[OUT_LINE];
frame_t out_f;
uint32_t out_drops;

uint8_t out_try(uint8_t n)
{
	if (n == 0 || uart_tx_free() < n)
		return 0;
	for (uint8_t i = 0; i < n; i++)
		uart_put_nowait((uint8_t)out_line[i]);
	return 1;
}

void out_wait(uint8_t n)
{
	for (uint8_t i = 0; i < n; i++)
		uart_put_wait((uint8_t)out_line[i]);
}

void out_end_wait(void)
{
	out_wait(frame_end(&out_f));
}
