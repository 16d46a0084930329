/*
 * cli: the command layer. One file per subcommand; each returns an exit
 * status. Only this layer (and main.c) may exit, through die().
 *
 * Exit status: 0 success, 1 failure, 2 bad usage, 130 interrupted (with
 * the results saved first).
 */
#ifndef COTERIE_CLI_H
#define COTERIE_CLI_H

#include <stdint.h>

#include "coterie/util.h"

#define EXIT_USAGE 2
#define EXIT_INTERRUPTED 130

#define COTERIE_VERSION "0.1.0"

/* Print "coterie: MSG" and exit with status. Runs the die hook first (the
 * explorer restores the terminal there). */
COTERIE_NORETURN void die(int status, const char *fmt, ...) COTERIE_PRINTF(2, 3);
void cli_set_die_hook(void (*hook)(void));

/* Number parsing for options: the whole string must be a number in range,
 * else a usage message naming the option, and exit 2. */
uint32_t cli_u32(const char *opt, const char *s, uint32_t lo, uint32_t hi);
uint64_t cli_u64(const char *opt, const char *s);
double cli_double(const char *opt, const char *s, double lo, double hi);

/* getopt's own messages print the argument raw: commands set opterr = 0,
 * pass a leading ':' in the option string, and on '?' or ':' call this,
 * which reports the offending option escaped. */
void cli_option_error(int c, char **argv);

/* Signals: SIGINT, SIGTERM and SIGHUP set a flag and wake cli_signal_fd()
 * (a pipe) so a poll() loop notices; nothing else happens in the handler. */
int cli_signals_install(void);
int cli_signal_fd(void);
int cli_signal_caught(void); /* the signal number, or 0 */

/* Peak resident memory of this process in KiB (0 if unknown). */
uint64_t cli_peak_rss_kb(void);

/* The command line joined with spaces, for run.json (static storage). */
void cli_set_command_line(int argc, char **argv);
const char *cli_command_line(void);

/* 1 when the terminal's codeset is UTF-8 (after setlocale). */
int cli_utf8(void);

int cmd_fit(int argc, char **argv);
int cmd_show(int argc, char **argv);
int cmd_explore(int argc, char **argv);

#endif
