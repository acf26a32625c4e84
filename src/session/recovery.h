/*
 * recovery.h - recovery files: the TUI writes the session it holds to
 * $XDG_STATE_HOME/biasline/ (default ~/.local/state/biasline/) so that work
 * survives a lost terminal or a crash, and offers it back when the same
 * file (or the demo) is opened again.  One recovery file per origin: its
 * name comes from the origin's absolute path (a readable stem plus a hash),
 * "demo.yaml" for the built-in demo.  Writes are atomic (atomic.h).
 *
 * ORIGIN below is the path of the session file the work came from, or
 * NULL for the built-in demo.
 */
#ifndef BIASLINE_RECOVERY_H
#define BIASLINE_RECOVERY_H

#include <stddef.h>
#include <time.h>

#include "session/session.h"

#define RECOVERY_PATH_MAX 4096

/* One recovery file found by recovery_list. */
struct recovery_entry {
	char path[RECOVERY_PATH_MAX];   /* the recovery file */
	char origin[RECOVERY_PATH_MAX]; /* its origin, "" for the demo */
	time_t mtime;                   /* when it was written */
};

/*
 * The recovery folder into BUF ($XDG_STATE_HOME/biasline when that is an
 * absolute path, else $HOME/.local/state/biasline).  Returns 0, or -1 with
 * a message in ERR when neither variable is usable.
 */
int recovery_dir(char *buf, size_t n, char *err, size_t errlen);

/* The recovery file for ORIGIN into BUF; returns 0 or -1 with ERR. */
int recovery_path(const char *origin, char *buf, size_t n, char *err,
                  size_t errlen);

/*
 * Write S as the recovery file for ORIGIN (creating the folders with mode
 * 0700).  Returns SESSION_OK or an error status with ERR.
 */
enum session_status recovery_save(const struct session *s, const char *origin,
                                  struct session_error *err);

/*
 * Look for the recovery file of ORIGIN: returns 1 and its path in BUF when
 * there is one, 0 when there is none, -1 when the folder is unknown.
 */
int recovery_find(const char *origin, char *buf, size_t n);

/*
 * Look for the recovery file of ORIGIN and compare it with ORIGIN itself:
 * RECOVERY_NONE (none), RECOVERY_NEWER (newer than ORIGIN, or ORIGIN is
 * the demo or gone: it holds work the file lacks), RECOVERY_OLDER (ORIGIN
 * was written after it: stale), RECOVERY_UNKNOWN (no recovery folder).
 * The recovery file's path goes to BUF and its time to *MTIME (may be
 * NULL) when there is one.
 */
enum recovery_state {
	RECOVERY_UNKNOWN = -1,
	RECOVERY_NONE = 0,
	RECOVERY_NEWER = 1,
	RECOVERY_OLDER = 2,
};
enum recovery_state recovery_check(const char *origin, char *buf, size_t n,
                                   time_t *mtime);

/*
 * Set the recovery file of ORIGIN aside: rename it, in the same folder, to
 * "<its name without .yaml>.aside-YYYYMMDD-HHMMSS.yaml" (its own time; a
 * number is added when that name is taken), so it is no longer offered but
 * nothing is lost.  The new path goes to NEWPATH.  Returns 0, or -1 with a
 * message in ERR.
 */
int recovery_set_aside(const char *origin, char *newpath, size_t n, char *err,
                       size_t errlen);

/*
 * List every recovery file, newest first, into a new array *OUT of *N
 * entries (free with recovery_list_free).  A missing folder is an empty
 * list.  Returns 0, or -1 with a message in ERR.
 */
int recovery_list(struct recovery_entry **out, size_t *n, char *err,
                  size_t errlen);

/* Free a list from recovery_list (NULL is fine). */
void recovery_list_free(struct recovery_entry *list);

/*
 * Remove the recovery file of ORIGIN (after a clean save or exit); having
 * none is fine.  Returns 0, or -1 with a message in ERR.
 */
int recovery_remove(const char *origin, char *err, size_t errlen);

#endif
