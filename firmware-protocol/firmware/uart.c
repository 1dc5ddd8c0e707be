/*
 * uart.c - USART0 at BAUD with U2X, 8N1, interrupt-driven rings.
 *
 * With U2X the baud rate is F_CPU / (8 * (UBRR + 1)) (ATmega328P datasheet, USART0
 * chapter, "Equations for Calculating Baud Rate Register Setting"; from memory), so
 * 16 MHz gives 1 Mbaud exactly with UBRR = 1, 500 kbaud with 3, 250 kbaud with 7.
 */
#include "config.h"
#include "uart.h"

#include <avr/interrupt.h>
#include <avr/io.h>
#include <avr/wdt.h>

#define UBRR_VALUE ((F_CPU + 4UL * BAUD) / (8UL * BAUD) - 1UL)

/* One slot stays empty, so head == tail means empty and no flag is shared: each index
 * has one writer and a byte is read and written atomically. */
static volatile uint8_t tx_buf[TX_SIZE];
static volatile uint8_t tx_head; /* written by the main loop */
static volatile uint8_t tx_tail; /* advanced by the UDRE interrupt */

static volatile uint8_t rx_buf[RX_SIZE];
static volatile uint8_t rx_head, rx_tail;

#if TX_SIZE > 128 || (TX_SIZE & (TX_SIZE - 1))
#error "TX_SIZE must be a power of two up to 128"
#endif
#define TX_MASK (TX_SIZE - 1)

void uart_init(void)
{
	UBRR0H = (uint8_t)(UBRR_VALUE >> 8);
	UBRR0L = (uint8_t)UBRR_VALUE;
	UCSR0A = _BV(U2X0);
	UCSR0C = _BV(UCSZ01) | _BV(UCSZ00); /* 8 data bits, no parity, 1 stop bit */
	UCSR0B = _BV(RXEN0) | _BV(TXEN0) | _BV(RXCIE0);
}

uint8_t uart_tx_free(void)
{
	return (uint8_t)((tx_tail - tx_head - 1) & TX_MASK);
}

void uart_write(const char *p, uint8_t n)
{
	uint8_t h = tx_head;
	while (n--) {
		uint8_t nh = (uint8_t)((h + 1) & TX_MASK);
		while (nh == tx_tail) /* full: the UDRE interrupt makes room */
			wdt_reset();
		tx_buf[h] = (uint8_t)*p++;
		tx_head = h = nh;
		/* A race with the interrupt clearing UDRIE0 is harmless: at worst it runs
		 * once more and finds the queue empty. */
		UCSR0B |= _BV(UDRIE0);
	}
}

ISR(USART_UDRE_vect)
{
	uint8_t t = tx_tail;
	if (t == tx_head) {
		UCSR0B &= (uint8_t)~_BV(UDRIE0);
		return;
	}
	UDR0 = tx_buf[t];
	tx_tail = (uint8_t)((t + 1) & TX_MASK);
}

ISR(USART_RX_vect)
{
	uint8_t b = UDR0;
	uint8_t h = rx_head;
	uint8_t n = (uint8_t)((h + 1) & (RX_SIZE - 1));
	if (n != rx_tail) { /* a full ring drops the byte; the command then fails its CRC */
		rx_buf[h] = b;
		rx_head = n;
	}
}

uint8_t uart_rx_ready(void)
{
	return rx_head != rx_tail;
}

int16_t uart_get(void)
{
	uint8_t t = rx_tail;
	if (t == rx_head)
		return -1;
	uint8_t b = rx_buf[t];
	rx_tail = (uint8_t)((t + 1) & (RX_SIZE - 1));
	return b;
}
