/*
 * uart.h - interrupt-driven USART0 with receive and transmit rings.
 */
#ifndef CAPCYCLE_UART_H
#define CAPCYCLE_UART_H

#include <stdint.h>

void uart_init(void);

/* Free bytes in the transmit queue (it holds TX_SIZE - 1). */
uint8_t uart_tx_free(void);
/* Queue n bytes, waiting (with the watchdog fed) while the queue is full. */
void uart_write(const char *p, uint8_t n);

/* Next received byte, or -1 when none is waiting. */
int16_t uart_get(void);
/* 1 when a received byte is waiting. */
uint8_t uart_rx_ready(void);

#endif
