/*
 * uart.h - interrupt-driven USART0 with receive and transmit rings.
 */
#ifndef CAPCYCLE_UART_H
#define CAPCYCLE_UART_H

#include <stdint.h>

void uart_init(void);

/* Free bytes in the transmit queue. */
uint8_t uart_tx_free(void);
/* Bytes waiting in the transmit queue. */
uint8_t uart_tx_used(void);
/* Queue one byte; the caller has checked uart_tx_free(). */
void uart_put_nowait(uint8_t b);
/* Queue one byte, waiting (with the watchdog fed) while the queue is full. */
void uart_put_wait(uint8_t b);
/* Wait until every queued byte has left the shift register. */
void uart_flush(void);

/* Next received byte, or -1 when none is waiting. */
int16_t uart_get(void);
/* 1 when a received byte is waiting. */
uint8_t uart_rx_ready(void);

#endif
