/*
 * emulator.c - runs the capcycle board firmware in simavr (Debian's libsimavr), drives the
 * ADC pins from a waveform file and bridges the USART to a pseudo-terminal, so that a host
 * program opens the emulated board exactly as it opens a USB board.
 *
 *   capcycle-emulator [options] FIRMWARE.elf
 *     -w FILE     waveform (default: standard input). Lines "time_s v0 [v1 v2 v3]", blanks,
 *                 tabs or commas between; lines starting with '#' or a letter are skipped.
 *                 Volts at the inputs are interpolated linearly in device time.
 *     -d R0,R1..  divider ratio per channel (pin volts / input volts, default 1): the pins
 *                 see v_k * R_k, as with a resistor divider in front of the board.
 *     -m MCU      simavr core (default atmega328p)   -f HZ  clock (default 16000000)
 *     -a MV       AVcc in millivolts (default 5000)  -r MV  AREF pin (default = AVcc)
 *     -n          start at once instead of waiting for the first host to open the port
 *     -e FILE     EEPROM image: loaded at start if the file exists, written back at exit,
 *                 so settings stored with >save survive a restart as on a real board
 *     -l FILE     make FILE a symbolic link to the pseudo-terminal and print it instead of
 *                 the terminal's own path; it is removed at exit before the terminal
 *                 closes, so a host that reopens it later finds nothing rather than
 *                 another program's terminal that the kernel gave the same number
 *
 * It prints the pseudo-terminal's path (or -l's link) as the first line on standard
 * output, then runs.
 * It exits 0 when device time passes the last waveform point after end of file, and 0 on
 * SIGINT or SIGTERM.
 *
 * Time. simavr counts CPU cycles; device time is cycles / clock. Sleep is a no-op here
 * (simavr's own sleep callback would pace the run to the wall clock), so the firmware runs
 * as fast as the host machine allows while its timers, ADC and USART keep their cycle
 * timing.
 *
 * The serial link. Bytes the USART sends are queued here and written to the pty master.
 * While no host has the port open they are dropped, as a USB-serial bridge drops them
 * with no program reading; while a host is connected but slow, the simulation waits for it
 * (device time stands still meanwhile), so the emulator's speed never loses bytes.
 *
 * The ADC. simavr converts integer millivolts as mv * 1023 / vref (truncated), where the
 * datasheet transfer function is Vin * 1024 / Vref (ATmega328P datasheet, section "ADC
 * Conversion Result"; from memory). The harness hands simavr ceil(mV * 1024 / 1023), the
 * smallest integer input for which simavr's result is not below the datasheet's, so the
 * emulated result is the datasheet's code or, within 0.21 LSB of a code edge (5 V
 * reference), one above it.
 */
#define _GNU_SOURCE
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <poll.h>
#include <pty.h>
#include <signal.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <termios.h>
#include <time.h>
#include <unistd.h>

#include "avr_adc.h"
#include "avr_eeprom.h"
#include "avr_uart.h"
#include "sim_avr.h"
#include "sim_elf.h"
#include "sim_irq.h"

#define MAXCH 4

static volatile sig_atomic_t stop_flag;

/* ---- waveform ---- */

struct wave {
	FILE *f;
	const char *name;
	long line;
	int eof;
	int have; /* points read: 0, 1 or 2 */
	double t0, t1;
	double v0[MAXCH], v1[MAXCH];
	int nch;
};

static int wave_read_point(struct wave *w, double *t, double *v)
{
	char buf[512];
	while (fgets(buf, sizeof buf, w->f)) {
		w->line++;
		char *p = buf;
		while (*p == ' ' || *p == '\t')
			p++;
		if (*p == '#' || *p == '\n' || *p == '\r' || *p == 0 ||
		    (*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z'))
			continue;
		for (char *q = p; *q; q++)
			if (*q == ',')
				*q = ' ';
		char *end;
		*t = strtod(p, &end);
		if (end == p) {
			fprintf(stderr, "emulator: %s:%ld: expected a time in seconds\n", w->name,
				w->line);
			exit(2);
		}
		int n = 0;
		for (p = end; n < MAXCH; n++) {
			double x = strtod(p, &end);
			if (end == p)
				break;
			v[n] = x;
			p = end;
		}
		if (n == 0) {
			fprintf(stderr, "emulator: %s:%ld: expected volts after the time\n", w->name,
				w->line);
			exit(2);
		}
		for (int k = n; k < MAXCH; k++) /* missing channels repeat the last one */
			v[k] = v[n - 1];
		if (n > w->nch)
			w->nch = n;
		return 1;
	}
	w->eof = 1;
	return 0;
}

/* Volts at time t into v; returns 0 once t is past the last point after end of file. */
static int wave_at(struct wave *w, double t, double *v)
{
	while (w->have < 2 || t > w->t1) {
		double nt, nv[MAXCH];
		if (w->eof || !wave_read_point(w, &nt, nv)) {
			if (w->have == 0) {
				fprintf(stderr, "emulator: %s: no waveform points\n", w->name);
				exit(2);
			}
			if (w->have == 1 || t > w->t1) {
				memcpy(v, w->have == 1 ? w->v0 : w->v1, sizeof w->v0);
				return t <= (w->have == 1 ? w->t0 : w->t1);
			}
			break;
		}
		if (w->have > 0 && nt < (w->have == 1 ? w->t0 : w->t1)) {
			fprintf(stderr, "emulator: %s:%ld: time goes backwards\n", w->name, w->line);
			exit(2);
		}
		if (w->have == 0) {
			w->t0 = nt;
			memcpy(w->v0, nv, sizeof nv);
			w->have = 1;
		} else if (w->have == 1) {
			w->t1 = nt;
			memcpy(w->v1, nv, sizeof nv);
			w->have = 2;
		} else {
			w->t0 = w->t1;
			memcpy(w->v0, w->v1, sizeof nv);
			w->t1 = nt;
			memcpy(w->v1, nv, sizeof nv);
		}
	}
	if (t <= w->t0 || w->t1 <= w->t0) {
		memcpy(v, t <= w->t0 ? w->v0 : w->v1, sizeof w->v0);
		return 1;
	}
	double a = (t - w->t0) / (w->t1 - w->t0);
	for (int k = 0; k < MAXCH; k++)
		v[k] = w->v0[k] + a * (w->v1[k] - w->v0[k]);
	return 1;
}

/* ---- the emulated board ---- */

static avr_t *avr;
static struct wave wave;
static double divr[MAXCH] = {1, 1, 1, 1};
static avr_irq_t *adc_irq;
static avr_irq_t *uart_in_irq;
static int wave_done;

static void adc_trigger(struct avr_irq_t *irq, uint32_t value, void *param)
{
	double t = (double)avr->cycle / (double)avr->frequency;
	double v[MAXCH];
	if (!wave_at(&wave, t, v))
		wave_done = 1;
	for (int k = 0; k < MAXCH; k++) {
		double mv = v[k] * divr[k] * 1000.0;
		/* See the header: ceil(mV * 1024 / 1023) reproduces the datasheet code. */
		double x = ceil(mv * 1024.0 / 1023.0 - 1e-9);
		if (x < 0)
			x = 0;
		if (x > 65535)
			x = 65535;
		avr_raise_irq(adc_irq + ADC_IRQ_ADC0 + k, (uint32_t)x);
	}
}

/* Sleep without waiting: device time still advances by the cycles slept. */
static void no_sleep(avr_t *a, avr_cycle_count_t how_long)
{
	(void)a;
	(void)how_long;
}

/* ---- the serial link ---- */

static int master = -1;
static char slave_name[128];
static const char *link_path; /* -l */

/* At exit, before the kernel closes the master and frees the terminal's number. */
static void remove_link(void)
{
	unlink(link_path);
}

static uint8_t *outq;
static size_t out_len, out_cap;
static uint8_t inq[4096];
static size_t in_len, in_off;
static int uart_xoff;
static unsigned long dropped_bytes;

static void uart_out(struct avr_irq_t *irq, uint32_t value, void *param)
{
	if (out_len == out_cap) {
		out_cap = out_cap ? out_cap * 2 : 65536;
		outq = realloc(outq, out_cap);
		if (!outq) {
			perror("emulator: realloc");
			exit(1);
		}
	}
	outq[out_len++] = (uint8_t)value;
}

static void feed_uart(void)
{
	while (!uart_xoff && in_off < in_len)
		avr_raise_irq(uart_in_irq, inq[in_off++]);
	if (in_off == in_len)
		in_off = in_len = 0;
}

static void uart_xon_cb(struct avr_irq_t *irq, uint32_t value, void *param)
{
	uart_xoff = 0;
	feed_uart();
}

static void uart_xoff_cb(struct avr_irq_t *irq, uint32_t value, void *param)
{
	uart_xoff = 1;
}

/* 1 while a host has the slave side open. */
static int connected(void)
{
	struct pollfd p = {.fd = master, .events = 0};
	if (poll(&p, 1, 0) < 0)
		return 0;
	return !(p.revents & POLLHUP);
}

/* Move bytes both ways; with `block` wait (at most timeout_ms) until the output drains. */
static void bridge(int timeout_ms)
{
	for (;;) {
		struct pollfd p = {.fd = master, .events = POLLIN | (out_len ? POLLOUT : 0)};
		int r = poll(&p, 1, timeout_ms);
		if (r < 0) {
			if (errno == EINTR)
				return;
			perror("emulator: poll");
			exit(1);
		}
		if (p.revents & POLLHUP) {
			/* No host: the bridge has nobody to give the bytes to. */
			dropped_bytes += out_len;
			out_len = 0;
			return;
		}
		if (p.revents & POLLIN) {
			if (in_off == in_len)
				in_off = in_len = 0;
			ssize_t n = read(master, inq + in_len, sizeof inq - in_len);
			if (n > 0) {
				in_len += (size_t)n;
				feed_uart();
			}
		}
		if ((p.revents & POLLOUT) && out_len) {
			ssize_t n = write(master, outq, out_len);
			if (n > 0) {
				memmove(outq, outq + n, out_len - (size_t)n);
				out_len -= (size_t)n;
			}
		}
		/* Wait for a slow host only when much is queued. */
		if (timeout_ms == 0 || out_len < 16384 || stop_flag)
			return;
	}
}

/* simavr's messages go to standard error: standard output carries only the pty path. */
static int log_level = LOG_WARNING;
static void logger(struct avr_t *a, const int level, const char *fmt, va_list ap)
{
	(void)a;
	if (level <= log_level)
		vfprintf(stderr, fmt, ap);
}

static void on_signal(int sig)
{
	(void)sig;
	stop_flag = 1;
}

/* ---- EEPROM image ---- */

#define EE_SIZE 1024 /* ATmega328P */

static void eeprom_load(const char *path)
{
	uint8_t buf[EE_SIZE];
	FILE *f = fopen(path, "rb");
	if (!f)
		return; /* none yet: the ELF's .eeprom section (blank) stays */
	size_t n = fread(buf, 1, sizeof buf, f);
	fclose(f);
	avr_eeprom_desc_t d = {.ee = buf, .offset = 0, .size = (uint32_t)n};
	avr_ioctl(avr, AVR_IOCTL_EEPROM_SET, &d);
}

static void eeprom_save(const char *path)
{
	uint8_t buf[EE_SIZE];
	avr_eeprom_desc_t d = {.ee = buf, .offset = 0, .size = sizeof buf};
	avr_ioctl(avr, AVR_IOCTL_EEPROM_GET, &d);
	if (d.ee != buf) /* this simavr hands out a pointer instead of copying */
		memcpy(buf, d.ee, sizeof buf);
	FILE *f = fopen(path, "wb");
	if (!f || fwrite(buf, 1, sizeof buf, f) != sizeof buf || fclose(f) != 0)
		fprintf(stderr, "emulator: %s: cannot write the EEPROM image\n", path);
}

static void usage(void)
{
	fprintf(stderr, "usage: capcycle-emulator [-w wave] [-d r0,r1,..] [-m mcu] [-f hz] "
			"[-a avcc_mv] [-r aref_mv] [-e eeprom] [-l link] [-n] firmware.elf\n");
	exit(2);
}

int main(int argc, char **argv)
{
	const char *wave_path = NULL, *mcu = "atmega328p", *ee_path = NULL;
	unsigned long freq = 16000000UL, avcc = 5000, aref = 0;
	int nowait = 0, c;
	while ((c = getopt(argc, argv, "w:d:m:f:a:r:e:l:n")) != -1) {
		switch (c) {
		case 'w':
			wave_path = optarg;
			break;
		case 'd': {
			char *p = optarg;
			for (int k = 0; k < MAXCH && *p; k++) {
				char *end;
				divr[k] = strtod(p, &end);
				if (end == p || divr[k] <= 0 || divr[k] > 1) {
					fprintf(stderr, "emulator: -d: expected ratios in (0, 1]\n");
					return 2;
				}
				for (int j = k + 1; j < MAXCH; j++)
					divr[j] = divr[k];
				p = *end == ',' ? end + 1 : end;
			}
			break;
		}
		case 'm':
			mcu = optarg;
			break;
		case 'f':
			freq = strtoul(optarg, NULL, 10);
			break;
		case 'a':
			avcc = strtoul(optarg, NULL, 10);
			break;
		case 'r':
			aref = strtoul(optarg, NULL, 10);
			break;
		case 'n':
			nowait = 1;
			break;
		case 'e':
			ee_path = optarg;
			break;
		case 'l':
			link_path = optarg;
			break;
		default:
			usage();
		}
	}
	if (optind != argc - 1)
		usage();
	if (!aref)
		aref = avcc;

	wave.name = wave_path ? wave_path : "stdin";
	wave.f = wave_path ? fopen(wave_path, "r") : stdin;
	if (!wave.f) {
		fprintf(stderr, "emulator: %s: %s\n", wave_path, strerror(errno));
		return 2;
	}

	avr_global_logger_set(logger);
	elf_firmware_t fw;
	memset(&fw, 0, sizeof fw);
	if (elf_read_firmware(argv[optind], &fw) != 0) {
		fprintf(stderr, "emulator: %s: cannot read the ELF file\n", argv[optind]);
		return 2;
	}
	avr = avr_make_mcu_by_name(mcu);
	if (!avr) {
		fprintf(stderr, "emulator: unknown MCU %s\n", mcu);
		return 2;
	}
	avr_init(avr);
	fw.frequency = (uint32_t)freq;
	fw.avcc = (uint32_t)avcc;
	fw.vcc = (uint32_t)avcc;
	fw.aref = (uint32_t)aref;
	avr_load_firmware(avr, &fw);
	avr->frequency = (uint32_t)freq;
	avr->avcc = (uint32_t)avcc;
	avr->vcc = (uint32_t)avcc;
	avr->aref = (uint32_t)aref;
	avr->sleep = no_sleep;
	avr->log = 0;
	if (ee_path)
		eeprom_load(ee_path);

	adc_irq = avr_io_getirq(avr, AVR_IOCTL_ADC_GETIRQ, 0);
	avr_irq_register_notify(adc_irq + ADC_IRQ_OUT_TRIGGER, adc_trigger, NULL);

	uint32_t flags = 0;
	avr_ioctl(avr, AVR_IOCTL_UART_GET_FLAGS('0'), &flags);
	flags &= ~(AVR_UART_FLAG_STDIO | AVR_UART_FLAG_POLL_SLEEP);
	avr_ioctl(avr, AVR_IOCTL_UART_SET_FLAGS('0'), &flags);
	uart_in_irq = avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_INPUT);
	avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUTPUT),
				uart_out, NULL);
	avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUT_XON),
				uart_xon_cb, NULL);
	avr_irq_register_notify(avr_io_getirq(avr, AVR_IOCTL_UART_GETIRQ('0'), UART_IRQ_OUT_XOFF),
				uart_xoff_cb, NULL);

	int slave;
	struct termios tio;
	if (openpty(&master, &slave, slave_name, NULL, NULL) != 0) {
		perror("emulator: openpty");
		return 1;
	}
	tcgetattr(slave, &tio);
	cfmakeraw(&tio);
	tcsetattr(slave, TCSANOW, &tio);
	close(slave); /* from now on POLLHUP on the master means "no host" */
	fcntl(master, F_SETFL, fcntl(master, F_GETFL) | O_NONBLOCK);

	struct sigaction sa;
	memset(&sa, 0, sizeof sa);
	sa.sa_handler = on_signal;
	sigaction(SIGINT, &sa, NULL);
	sigaction(SIGTERM, &sa, NULL);
	signal(SIGPIPE, SIG_IGN);

	if (link_path) {
		unlink(link_path);
		if (symlink(slave_name, link_path) != 0) {
			fprintf(stderr, "emulator: -l %s: %s\n", link_path, strerror(errno));
			return 1;
		}
		atexit(remove_link);
	}
	printf("%s\n", link_path ? link_path : slave_name);
	fflush(stdout);

	if (!nowait) {
		/* Like a board powered through its USB cable: it starts when a host opens it. */
		while (!stop_flag && !connected()) {
			struct timespec ts = {0, 2000000};
			nanosleep(&ts, NULL);
		}
	}

	avr_cycle_count_t next_io = 0;
	avr_cycle_count_t io_step = avr->frequency / 2000; /* every 0.5 ms of device time */
	int state = cpu_Running;
	while (!stop_flag && !wave_done) {
		while (avr->cycle < next_io) {
			state = avr_run(avr);
			if (state == cpu_Done || state == cpu_Crashed)
				goto done;
		}
		next_io = avr->cycle + io_step;
		bridge(out_len >= 16384 ? 100 : 0);
	}
done:
	/* Give a connected host the last bytes. */
	for (int i = 0; i < 50 && out_len && connected(); i++)
		bridge(20);
	if (ee_path)
		eeprom_save(ee_path);
	if (state == cpu_Crashed)
		fprintf(stderr, "emulator: the firmware crashed at %.6f s\n",
			(double)avr->cycle / avr->frequency);
	fprintf(stderr, "emulator: stopped at %.6f s device time, %lu bytes dropped with no host\n",
		(double)avr->cycle / avr->frequency, dropped_bytes);
	return state == cpu_Crashed ? 1 : 0;
}
