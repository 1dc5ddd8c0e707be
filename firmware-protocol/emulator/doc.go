// Package emulator runs the capcycle board firmware in the simavr AVR emulator, with the
// ADC pins driven from a waveform file and the USART bridged to a pseudo-terminal, so a
// host program (or a test) opens the emulated board with go.bug.st/serial exactly as it
// opens a USB board.
//
// # Pieces
//
//   - harness/emulator.c (built by harness/Makefile) links Debian's static libsimavr,
//     loads the firmware ELF for an atmega328p at 16 MHz, prints the pty path on its
//     standard output and runs until the waveform ends or it gets SIGTERM.
//   - ../firmware/Makefile builds the firmware ELF with avr-gcc.
//   - Build runs both makes into one directory; Start runs the harness and returns the
//     pty path: a link to the pty that the harness removes before the pty closes, so a
//     host retrying it after the harness exits finds nothing, not another board's pty
//     that the kernel gave the same /dev/pts number.
//
// A test reads the board as slowly as it likes: the harness runs ahead by at most its
// queue and the pty's buffer (about 36 KB), then waits. Give the waveform more device
// time than the test reads, or the harness ends with the waveform and the bytes not yet
// read go with its pty.
//
// # Waveform files
//
// One point per line: the time in seconds of device time, then the volts at each
// channel's input (ADC0 first), separated by blanks, tabs or commas. Lines starting
// with '#' or a letter (a header) are skipped. Between points the volts are interpolated
// linearly; before the first point the first value holds. Config.Div puts a resistor
// divider between the inputs and the pins. For example a steady 7.5 V that drops to
// 2 V in 20 ms at one second:
//
//	time_s vcap_v
//	0    7.5
//	1.0  7.5
//	1.02 2.0
//	3    2.0
//
// # Time
//
// Device time is simavr's cycle count over the clock. The harness makes sleep a no-op,
// so device time runs faster than the wall clock while the board idles; when a host
// reads slowly, the harness waits for it instead of dropping bytes. While no host has the
// port open, the board's output is dropped, as with a USB-serial bridge that nobody
// reads. The harness starts the firmware when the first host opens the port.
//
// Unlike a real board, the emulated one does not reset when the port is opened (a real
// bridge pulses the reset pin through DTR).
//
// # EEPROM
//
// Each run starts with a blank EEPROM (so the firmware's defaults apply) unless
// Config.EEPROM names an image file: it is loaded at start when it exists and written
// back when the harness stops, so settings stored with >save survive a restart.
//
// # Requirements
//
// avr-gcc and avr-libc (Debian gcc-avr, avr-libc), libsimavr-dev, a C compiler and make.
// Available reports what is missing; tests skip with its message.
package emulator
