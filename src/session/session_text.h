/*
 * session_text.h - saving a session into the text it was read from.
 *
 * A session file is the user's design record: comments, blank lines, key
 * order, the spelling of values ("1.5k", "12 V", "4k7", "10 %"), preset
 * names and the sections left out all mean something.  libyaml keeps none
 * of that, so the text itself is kept beside the session (struct
 * session_text) and a save rewrites only what changed in it:
 *
 *   - a changed value is rewritten where it stands, in the old value's
 *     style where that reads back exactly (SI prefix, unit, blank, exponent
 *     or "4k7" form kept: rs: 1.5k -> rs: 1.6k, vs: 12 V -> vs: 13 V);
 *   - a value the file did not hold (a default, a preset's value) becomes a
 *     new key in its section, placed in canonical order; a missing section
 *     is added with only the changed keys;
 *   - a key the session no longer has is removed with its line(s);
 *   - everything else stays byte for byte: an unchanged session is saved
 *     as the identical text.
 *
 * The patched text is read back and compared with the session before it
 * is written.  When the text cannot be patched (a flow mapping to insert
 * into, a list that changed length in block form, a read-back that
 * differs), the session is written in canonical form behind the file's
 * leading comment block, and the report says why, so the caller can tell
 * the user.  biasline tidy and the recovery file use the canonical form
 * on purpose (session.h).
 *
 * Ownership: a struct session_text owns its name and bytes
 * (session_text_fini frees them).
 */
#ifndef BIASLINE_SESSION_TEXT_H
#define BIASLINE_SESSION_TEXT_H

#include <stdbool.h>
#include <stddef.h>

#include "session/session.h"

/* The text a session was read from (or last saved as). */
struct session_text {
	char *name;     /* the file it belongs to; NULL when none */
	char *buf;      /* its bytes, NUL-terminated; NULL when none */
	size_t len;
};

/* How a save went. */
enum session_save_how {
	SESSION_SAVED_NEW,        /* no text to keep: canonical form */
	SESSION_SAVED_UNCHANGED,  /* nothing changed: the text as it was */
	SESSION_SAVED_PATCHED,    /* only the changes were written into the text */
	SESSION_SAVED_CANONICAL,  /* the text could not be patched: canonical
	                             form behind its leading comments; see WHY */
};

/* What a save did to the text. */
struct session_save_report {
	enum session_save_how how;
	size_t changed;           /* values rewritten where they stood */
	size_t inserted;          /* keys added */
	size_t removed;           /* keys removed */
	char why[384];            /* SESSION_SAVED_CANONICAL: the reason */
};

/* An empty text (no file yet). */
void session_text_init(struct session_text *t);

/* Free what T owns; T is empty afterwards. */
void session_text_fini(struct session_text *t);

/*
 * Make T a copy of LEN bytes of BUF belonging to the file NAME (may be
 * NULL).  Returns 0, or -1 when out of memory (T is then empty).
 */
int session_text_set(struct session_text *t, const char *name, const char *buf,
                     size_t len);

/*
 * Load PATH into S (as session_load_file) and keep its bytes in TEXT
 * (initialised by the call; empty on error).
 */
enum session_status session_load_file_text(struct session *s, const char *path,
                                           struct session_text *text,
                                           struct session_error *err);

/*
 * Whether the file PATH still holds TEXT's bytes: 1 yes, 0 it differs
 * (changed on disk since it was read), -1 it cannot be read (gone).
 */
int session_text_matches_file(const struct session_text *text, const char *path);

/*
 * Write S into BASE's text (see the top of this file) as the contents of
 * the file DEST (used to resolve points_file: and in messages; may be
 * NULL for BASE's own name).  BASE may be NULL or empty: canonical form.
 * On success *OUT holds *LEN bytes (NUL-terminated, the caller frees) and
 * REP (may be NULL) says how.  Returns SESSION_OK or an error status.
 */
enum session_status session_patch_text(const struct session *s,
                                       const struct session_text *base,
                                       const char *dest, char **out,
                                       size_t *len,
                                       struct session_save_report *rep,
                                       struct session_error *err);

/*
 * Save S to PATH keeping TEXT (session_patch_text, then an atomic write
 * that keeps the replaced file's owner, group and mode and refuses a
 * read-only file).  On success TEXT becomes what was written (name PATH),
 * so the next save patches from there.  TEXT may be NULL (canonical
 * form).  Returns SESSION_OK, or an error status with ERR (TEXT
 * unchanged); SESSION_CANT_WRITE when the file cannot be written.
 */
enum session_status session_save_keeping_text(const struct session *s,
                                              struct session_text *text,
                                              const char *path,
                                              struct session_save_report *rep,
                                              struct session_error *err);

#endif
