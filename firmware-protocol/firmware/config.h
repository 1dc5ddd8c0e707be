/*
 * config.h - build-time settings of the capcycle board firmware.
 *
 * Target: ATmega328P at 16 MHz (the common USB boards with a USB-serial bridge).
 * Override on the make command line, e.g. `make BAUD=115200`.
 */
#ifndef CAPCYCLE_CONFIG_H
#define CAPCYCLE_CONFIG_H

#ifndef F_CPU
#define F_CPU 16000000UL
#endif

/* Serial rate. 1000000, 500000 and 250000 divide 16 MHz exactly with U2X
 * (UBRR = F_CPU / (8 * BAUD) - 1 = 1, 3, 7); 115200 is 2.1 % off with UBRR = 16
 * (ATmega328P datasheet, USART chapter, "Examples of Baud Rate Setting" table;
 * from memory). */
#ifndef BAUD
#define BAUD 1000000UL
#endif

#define FW_VERSION "0.1.0"
#define BOARD_NAME "328p16"
#define PROTO_VERSION 1

/* ADC: 10-bit converter, oversampled by 4^OVS_BITS conversions per sample and
 * shifted right by OVS_BITS (oversampling and decimation, Atmel application note
 * AVR121), giving EBITS = 10 + OVS_BITS bits per count. */
#define ADC_BITS 10
#ifndef OVS_BITS
#define OVS_BITS 2
#endif
#define EBITS (ADC_BITS + OVS_BITS)
#define OVS_N (1u << (2 * OVS_BITS))

#define MAX_CH 4

/* Transmit queue (bytes, power of two, at least the longest A frame). */
#define TX_SIZE 128
/* Receive queue (bytes, power of two) and the longest command line accepted. The
 * queue holds a whole command (up to 63 bytes with its "\n"), so a command sent as soon
 * as the previous reply arrives survives while the firmware is still queueing the ID
 * and CH frames that follow that reply. */
#define RX_SIZE 64
#define CMD_MAX 63

/* Pre-trigger ring: bytes of storage, shared between the channels. One slot is a
 * 32-bit time stamp plus one 16-bit count per enabled channel, so the ring holds 45
 * samples with one channel, 34 with two, 27 with three and 22 with four; `pre` can be
 * at most two less. */
#define RING_BYTES 272

/* Default fast rate: 500 Hz, or 250 Hz where the link cannot carry 500 S frames a
 * second (below 250 kbaud; see adc_max_hz). */
#if BAUD >= 250000UL
#define DEFAULT_FAST_HZ 500
#else
#define DEFAULT_FAST_HZ 250
#endif

/* Status frame period, seconds. */
#define ST_PERIOD_S 10

#endif
