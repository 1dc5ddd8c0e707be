/*
 * cmd.h - host commands (PROTOCOL.md, "Host commands") and the ID, CH and ST frames.
 */
#ifndef CAPCYCLE_CMD_H
#define CAPCYCLE_CMD_H

#include <stdint.h>

/* Feed one received byte; a complete line is handled at once. */
void cmd_byte(uint8_t b);
/* Send ID (boot=1 or 0) followed by one CH per enabled channel. */
void send_id(uint8_t boot);
/* Send ST. */
void send_status(void);
/* Apply cfg to the ADC and the capture (after boot or a settings change). */
void apply_settings(void);

/* Whole seconds of device time since reset. */
extern uint32_t uptime_s;
/* 1 while sampling. */
extern uint8_t running;
/* Cause of the last reset, a program-memory string ("por", "ext", "bod", "wdt"). */
extern PGM_P reset_cause;

#endif
