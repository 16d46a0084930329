/*
 * proc: facts and hooks of the whole process that both front ends (the
 * commands in src/cli/ and the explorer in src/tui/) share: the command
 * line and peak memory recorded in run.json, whether the locale speaks
 * UTF-8, the signals that ask for a saved stop, and the hook that restores
 * the terminal before a fatal message.
 *
 * Nothing here exits, prints or touches the terminal; the state is
 * process-wide by nature (there is one command line, one set of signal
 * handlers), set once by the command layer and read by everyone.
 */
#ifndef COTERIE_PROC_H
#define COTERIE_PROC_H

#include <pthread.h>
#include <stdint.h>

/* The exit status after SIGINT, SIGTERM or SIGHUP (results saved first):
 * 128 + SIGINT, as shells report an interrupted command. */
#define EXIT_INTERRUPTED 130

/* Remember the command line, joined with spaces (cut at 4095 bytes).
 * argv is borrowed only during the call. */
void proc_set_command_line(int argc, char **argv);
/* The command line set before ("" if none); static storage. */
const char *proc_command_line(void);

/* Peak resident memory of this process in KiB (0 if unknown). */
uint64_t proc_peak_rss_kb(void);

/* 1 when the locale's codeset is UTF-8 (after setlocale()), else 0. */
int proc_utf8(void);

/* A pipe with both ends non-blocking and close-on-exec, for waking a
 * poll() loop. Returns 0, or -1 with a message (fd untouched then). */
int proc_pipe(int fd[2]);

/* Start a thread running fn(arg) with every signal blocked in it, so that
 * signals are delivered to the thread that polls proc_signal_fd().
 * Returns 0, or the pthread_create() error number (nothing reported). */
int proc_thread_start(pthread_t *t, void *(*fn)(void *), void *arg);

/* Signals: SIGINT, SIGTERM and SIGHUP set a flag and write a byte to a
 * pipe (proc_signal_fd()) so a poll() loop notices; nothing else happens
 * in the handler. SIGPIPE is ignored. Returns 0, or -1 with a message. */
int proc_signals_install(void);
/* The read end of the signal pipe (-1 before proc_signals_install()). */
int proc_signal_fd(void);
/* The number of the last signal caught, or 0. */
int proc_signal_caught(void);
/* How many signals have come (counts to 1000). */
int proc_signal_count(void);

/* The exit hook: a function the command layer's die() runs, once, before
 * it prints its message and exits (the explorer ends curses there). NULL
 * removes it. proc_run_exit_hook() runs and removes it, if set. */
void proc_set_exit_hook(void (*hook)(void));
void proc_run_exit_hook(void);

#endif
