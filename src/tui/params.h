/*
 * params.h - the one way the front end reads and changes a value of the
 * session: by key.  The keys are the core's parameter keys (paramref.h):
 * "vs", "rs", "is", "rp", a device model's parameter key, and
 * "source.network.<part>"; the solver's settings use their dotted keys in
 * the session file ("solver.method", "solver.order",
 * "solver.start_voltage", "solver.relaxation").
 *
 * A change is checked the way the loader checks a file (the source, the
 * device's ranges, the solver's ranges, and that a problem can be built);
 * a refused change leaves the session as it was.  Nothing here calls
 * curses or solves anything.
 */
#ifndef BIASLINE_PARAMS_H
#define BIASLINE_PARAMS_H

#include <stdbool.h>
#include <stddef.h>

#include "core/paramref.h"
#include "session/session.h"

/* Keys of the solver's rows. */
#define PARAMS_METHOD "solver.method"
#define PARAMS_ORDER "solver.order"
#define PARAMS_START "solver.start_voltage"
#define PARAMS_RELAXATION "solver.relaxation"

/* Most rows params_list writes: source (2), device, network parts, solver (4). */
#define PARAMS_MAX (2 + MODEL_MAX_PARAMS + PARAMREF_MAX_PARTS + 4)

/* One editable (or shown) value of a session. */
struct param {
	char key[PARAMREF_KEY_MAX];   /* the key (see above) */
	char label[PARAMREF_KEY_MAX]; /* as shown: "VS", "saturation I", a part */
	enum qty_kind unit;
	bool choice;       /* a choice cycled with + and - (method, order) */
	bool log_step;     /* nudged multiplicatively */
	double fine, coarse; /* additive nudges (0: relative to the value) */
	bool readonly;     /* a network source's equivalent: shown, not edited */
	bool resistor;     /* RS, RP or a network resistor (E-series steps) */
};

/*
 * The rows of S in the order the side pane lists them: a network's parts,
 * the source, the device's parameters, the solver.  Writes at most MAX to
 * OUT and returns how many.
 */
size_t params_list(const struct session *s, struct param *out, size_t max);

/* Find KEY among S's rows into *OUT; returns 0, or -1 when S has no such row. */
int params_find(const struct session *s, const char *key, struct param *out);

/*
 * The value of P in S: a number in P's unit; for a choice the index of the
 * chosen entry (enum solve_method, enum projection_order); NaN for an
 * automatic start voltage; 0 for an automatic relaxation factor.
 */
double params_get(const struct session *s, const struct param *p);

/*
 * Set P to VALUE in S after the checks above.  Returns 0, or -1 with a
 * message naming the row in ERR (S unchanged).
 */
int params_set(struct session *s, const struct param *p, double value,
               char *err, size_t errlen);

/* The value of P as shown ("2.2 kohm", "V from line", "auto (0 V)"). */
void params_format(const struct session *s, const struct param *p, bool ascii,
                   char *buf, size_t n);

/*
 * The tolerance S gives the row of KEY, as typed ("5%", "0.1 V",
 * "22 V..26 V", with " normal" for a normal distribution) into BUF;
 * returns false (BUF "") when it has none.  SHOWN: as the side pane shows
 * it ("+-5%", or with the Unicode plus-minus sign unless ASCII).
 */
bool params_tolerance(const struct session *s, const char *key, bool shown,
                      bool ascii, char *buf, size_t n);

/*
 * The session file's form (session_set.h) of a tolerance typed as TYPED:
 * "5%", "0.1k", "A..B", each optionally followed by "normal" or "uniform",
 * "none", or the file's own "{...}" form as it is.  Writes OUT.
 */
void params_tolerance_typed(const char *typed, char *out, size_t n);

/* The number of entries of choice P (0 for a value). */
int params_choices(const struct param *p);

#endif
