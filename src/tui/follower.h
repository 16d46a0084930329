/*
 * tui/follower: the explorer following a fit that runs in another
 * process (`coterie explore DIR` on the folder of a running fit), through
 * the folder only (follow.h): the trace and the state from the progress
 * file, the panes from the newest checkpoint, and the keys X, P and W as
 * requests. The explorer never writes the result while it follows.
 */
#ifndef COTERIE_TUI_FOLLOWER_H
#define COTERIE_TUI_FOLLOWER_H

struct view;

/* Start following the fit writing dir (borrowed, outlives v->follow);
 * v shows the checkpoint already opened (v->fit, not started). Returns 0
 * or -1 (reported). */
int follower_start(struct view *v, const char *dir);
/* Call every pass: reads the progress file and a new checkpoint when
 * they changed (at most twice a second) and shows them; when the fit has
 * ended, its final result, reloaded. */
void follower_poll(struct view *v);
/* 1 while the followed fit runs (v->follow set and not ended). */
int follower_live(const struct view *v);
/* Seconds until follower_poll() has something to do (for poll()). */
int follower_timeout_ms(const struct view *v);
/* For the keys that would act on a fit of this session (s, p, e, +, t,
 * w): 1 (and a message saying which key to use) when v follows a fit or
 * followed one, else 0. */
int follower_refuses(struct view *v);
void follower_free(struct view *v);

/* The key actions (keys.c's table): ask the followed fit to stop, to
 * pause or continue, to write its checkpoint. */
void follower_act_stop(struct view *v, int arg);
void follower_act_pause(struct view *v, int arg);
void follower_act_save(struct view *v, int arg);

#endif
