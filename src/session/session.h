/*
 * session.h - the session: everything one case holds, the single source of
 * truth for the CLI and the TUI, and its YAML form (load/save via libyaml).
 *
 * Ownership: a session is embedded (session_init / session_fini); strings
 * inside it are owned by it and freed by session_fini.
 */
#ifndef BIASLINE_SESSION_H
#define BIASLINE_SESSION_H

#include <stdbool.h>
#include <stddef.h>

#include "core/model.h"
#include "core/network.h"
#include "core/problem.h"
#include "core/source.h"
#include "core/stability.h"
#include "core/stepper.h"
#include "session/analysis.h"

#define SESSION_FORMAT_VERSION 1

/* The plot view: automatic or fixed axis ranges, and a zoom factor. */
struct session_view {
	bool autoscale;            /* true: ranges follow the problem */
	double v_min, v_max;       /* fixed ranges when !autoscale */
	double i_min, i_max;
	double zoom;               /* 1 = the automatic frame */
};

/*
 * Operating conditions.  A condition the device model has as a parameter
 * (temperature) is folded into the device on load and is NaN here; one the
 * model lacks is kept here and written back.
 */
struct session_conditions {
	double temperature;        /* ambient temperature, degrees C; NaN = none */
};

/* One case. */
struct session {
	struct source_spec source;
	struct network *network;   /* the source as a network, or NULL; then
	                              source is its reduction (section_network.h) */
	struct device device;
	struct curve_data *curve;  /* a measured device's points, owned; NULL
	                              when none (device.curve borrows it) */
	struct session_conditions conditions;
	struct solve_options solver;
	struct session_view view;
	struct reactive_parts reactive; /* C across the device, L in series
	                                   (NaN when not given) */
	struct session_analysis analysis; /* target, ratings, tolerances */
	char *notes;               /* free text, may be NULL */
	char *fitted_to;           /* device.fitted_to: the points file the
	                              device's parameters were fitted to, as
	                              written (relative to the session file's
	                              folder unless absolute), or NULL */
};

/* Exit-code style status of loading and saving (sysexits.h values). */
enum session_status {
	SESSION_OK = 0,
	SESSION_BAD_DATA = 65,     /* EX_DATAERR: the file is not a valid session */
	SESSION_NO_INPUT = 66,     /* EX_NOINPUT: cannot open or read the file */
	SESSION_CANT_WRITE = 73,   /* EX_CANTCREAT: cannot write the file */
	SESSION_IO_ERROR = 74,     /* EX_IOERR */
};

/* An error with its place: "FILE:LINE:COL: key: message". */
struct session_error {
	char file[256];
	unsigned line, col;        /* 1-based; 0 = no position */
	char key[64];              /* dotted key path, "" when none */
	char message[512];
};

/* Fill S with the built-in defaults (a valid session). */
void session_init(struct session *s);

/* Free what S owns; S may be re-initialised afterwards. */
void session_fini(struct session *s);

/* Deep-copy SRC into DST (DST must be initialised or finied). */
int session_copy(struct session *dst, const struct session *src);

/*
 * Give S the measured points (V[k], I[k]), K < N, as its own table and
 * point S's device at it (any table S held before is freed).  Returns 0,
 * or -1 with the core's message naming the row in ERR (S unchanged).
 */
int session_set_curve(struct session *s, const double *v, const double *i,
                      size_t n, char *err, size_t errlen);

/* Format ERR as one line "FILE:LINE:COL: KEY: MESSAGE" into BUF. */
void session_error_format(const struct session_error *err, char *buf, size_t n);

/*
 * Read the session file PATH (a regular file of at most the session size
 * limit) into a new NUL-terminated buffer *BUF of *LEN bytes (the caller
 * frees it).  Returns SESSION_OK, SESSION_NO_INPUT (cannot be read),
 * SESSION_BAD_DATA (too large) or SESSION_IO_ERROR, with ERR.
 */
enum session_status session_read_file(const char *path, char **buf,
                                      size_t *len, struct session_error *err);

/* Load PATH into S (initialised by the call).  On error S is finied. */
enum session_status session_load_file(struct session *s, const char *path,
                                      struct session_error *err);

/* Load from a memory buffer; NAME is used in messages. */
enum session_status session_load_buffer(struct session *s, const char *name,
                                        const char *buf, size_t len,
                                        struct session_error *err);

/*
 * Write S as YAML (canonical key order, a one-line comment header, every
 * number exact) into a new buffer *OUT of *LEN bytes (NUL-terminated; the
 * caller frees it).  Returns SESSION_OK or an error status with ERR.
 */
enum session_status session_save_buffer(const struct session *s, char **out,
                                        size_t *len, struct session_error *err);

/*
 * Like session_save_buffer with the comment text EXTRA (may be NULL)
 * written after the header line: each line of EXTRA that starts with '#'
 * is written as it is, an empty line stays empty, any other line gets "# "
 * in front.
 */
enum session_status session_save_buffer_with(const struct session *s,
                                             const char *extra, char **out,
                                             size_t *len,
                                             struct session_error *err);

/*
 * Save S to PATH atomically (temporary file, fsync, rename): on any failure
 * the old file is untouched.  Returns SESSION_OK or an error status.
 */
enum session_status session_save_file(const struct session *s, const char *path,
                                      struct session_error *err);

/*
 * The comment block at the top of the session file PATH (every line up to
 * the first that is neither a comment nor blank; the header line biasline
 * writes is left out), as a new string the caller frees, or NULL when
 * there is none or the file cannot be read.  tidy keeps it this way.
 */
char *session_file_comments(const char *path);

/* session_file_comments of the LEN bytes of text BUF. */
char *session_buffer_comments(const char *buf, size_t len);

/*
 * True when A and B hold the same session: every number bit for bit, the
 * same model and the same notes.
 */
bool session_equal(const struct session *a, const struct session *b);

/* The built-in demo session. */
void session_demo(struct session *s);

/*
 * Build the core problem from S; returns 0 or -1 with a message.  For a
 * network source PB->net borrows S's network, so S must outlive PB.
 */
int session_problem(const struct session *s, struct problem *pb,
                    char *err, size_t errlen);

#endif
